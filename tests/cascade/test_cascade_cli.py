"""``hairtrigger cascade``: the JSON contract of DESIGN.md §4 and bad-input paths."""

from __future__ import annotations

import json
import subprocess

import pytest

from hairtrigger.cli import main
from hairtrigger.io.cascade_file import cascade_example_path, save_cascade

CONTRACT_KEYS = {"ec10", "ec50", "ec90", "hill_coefficient", "plateau"}


def run(args, capsys):
    status = main(args)
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_contract(huang_ferrell, tmp_path, capsys):
    path = save_cascade(huang_ferrell, tmp_path / "hf.json")
    status, out, err = run(["cascade", str(path), "--scan", "1e-7:1e-1", "--points", "120"], capsys)
    assert status == 0, err
    result = json.loads(out)
    assert [lv["name"] for lv in result["levels"]] == ["MAPKKK", "MAPKK", "MAPK"]
    for level in result["levels"]:
        for definition in ("free", "total"):
            assert set(level[definition]) == CONTRACT_KEYS
            entry = level[definition]
            assert entry["ec10"] < entry["ec50"] < entry["ec90"]
            assert 0.0 < entry["plateau"] <= 1.0
    assert result["levels"][2]["free"]["hill_coefficient"] == pytest.approx(4.9, rel=0.05)
    assert result["overall"]["free"] == result["levels"][-1]["free"]
    assert result["scan"] == {**result["scan"], "low": 1e-7, "high": 0.1, "points": 120}
    assert result["success"] is True and result["warnings"] == []


def test_subprocess_and_example(cli_env, python):
    out = subprocess.run(
        [python, "-m", "hairtrigger", "cascade", "example:tidepool_relay", "--scan", "1e-6:0.1"],
        capture_output=True,
        text=True,
        env={**cli_env, "PYTHONWARNINGS": "error"},
        check=False,
        timeout=120,
    )
    assert out.returncode == 0, out.stderr
    assert out.stderr == ""
    assert len(json.loads(out.stdout)["levels"]) == 3


def test_nulls_and_warnings_outside_the_scan(capsys):
    status, out, _ = run(
        [
            "cascade",
            str(cascade_example_path("tidepool_relay")),
            "--scan",
            "1e-6:2e-5",
            "--points",
            "10",
        ],
        capsys,
    )
    assert status == 0
    result = json.loads(out)
    assert result["levels"][0]["free"]["ec90"] is None
    assert any("lies above the scanned range" in w for w in result["warnings"])


@pytest.mark.parametrize(
    "args,match",
    [
        (["--scan", "1:0.1"], "0 < LOW < HIGH"),
        (["--scan", "0:1"], "0 < LOW < HIGH"),
        (["--scan", "abc"], "LOW:HIGH"),
        (["--scan", "1e-6:1", "--points", "2"], "--points"),
        ([], "--scan"),
    ],
)
def test_bad_arguments(args, match, capsys, tmp_path):
    with pytest.raises(SystemExit) as info:
        main(["cascade", str(cascade_example_path("tidepool_relay")), *args])
    assert info.value.code == 2
    err = capsys.readouterr().err
    assert match in err and "Traceback" not in err


@pytest.mark.parametrize(
    "content,match",
    [
        (None, "no such file"),
        ("{}", "format: is missing"),
        ('{"format": "hairtrigger.snapshot"}', "this is a snapshot"),
    ],
)
def test_bad_files(content, match, capsys, tmp_path):
    path = tmp_path / "c.json"
    if content is not None:
        path.write_text(content)
    status, out, err = run(["cascade", str(path), "--scan", "1e-6:1"], capsys)
    assert status == 2 and out == ""
    assert match in err and len(err.strip().splitlines()) == 1


def test_help(capsys):
    with pytest.raises(SystemExit) as info:
        main(["cascade", "--help"])
    assert info.value.code == 0
    assert "plateau" in capsys.readouterr().out


def test_python_api_is_the_same(huang_ferrell, tmp_path, capsys):
    from hairtrigger.core.cascade import cascade_response

    path = save_cascade(huang_ferrell, tmp_path / "hf.json")
    _, out, _ = run(["cascade", str(path), "--scan", "1e-7:1e-1", "--points", "50"], capsys)
    api = cascade_response(huang_ferrell, 1e-7, 1e-1, 50).as_dict()
    assert json.loads(out) == json.loads(json.dumps(api))
