"""``hairtrigger fit``: the JSON contract of DESIGN.md section 4 and the bad-input paths."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest
from fit_reference import gk_modified_fraction, hill_curve

from hairtrigger.cli import main

CONTRACT_KEYS = ("model", "parameters", "aic", "residual_sd", "n_points", "warnings")


def _csv(x, y, sd=None, header_comments=""):
    lines = [header_comments + ("input,readout,sd" if sd is not None else "input,readout")]
    for i, (a, b) in enumerate(zip(x, y, strict=True)):
        lines.append(
            f"{float(a)!r},{float(b)!r}" + (f",{float(sd[i])!r}" if sd is not None else "")
        )
    return "\n".join(lines) + "\n"


@pytest.fixture
def hill_csv(write_csv):
    rng = np.random.default_rng(0)
    x = np.repeat(np.geomspace(0.2, 20.0, 8), 3)
    y = hill_curve(x, 2.0, 2.5, 0.1, 1.0) + rng.normal(0, 0.03, x.size)
    return write_csv(_csv(x, y), "hill.csv")


@pytest.fixture
def dose_csv(write_csv):
    rng = np.random.default_rng(1)
    dose = np.repeat(np.geomspace(1.0, 100.0, 10), 2)
    y = 0.05 + 0.9 * gk_modified_fraction(0.05 * dose, 0.05, 0.1) + rng.normal(0, 0.02, dose.size)
    head = "# input_kind: amount\n# input_unit: nM\n"
    return write_csv(_csv(dose, y, sd=np.full(dose.size, 0.02), header_comments=head), "dose.csv")


def run_cli(args, capsys):
    status = main(args)
    captured = capsys.readouterr()
    return status, captured.out, captured.err


def test_subprocess_contract(hill_csv, cli_env):
    proc = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "fit", str(hill_csv), "--model", "hill"],
        capture_output=True,
        text=True,
        env=cli_env,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    out = json.loads(proc.stdout)
    assert list(out)[: len(CONTRACT_KEYS)] == list(CONTRACT_KEYS)
    assert out["model"] == "hill"
    assert list(out["parameters"]) == ["ec50", "hill_coefficient", "bottom", "top"]
    for entry in out["parameters"].values():
        assert {"value", "low", "high"} <= set(entry)
        assert entry["low"] < entry["value"] < entry["high"]
    assert out["n_points"] == 24
    assert isinstance(out["aic"], float) and out["residual_sd"] > 0
    assert isinstance(out["warnings"], list)
    assert out["comparison"]["verdict"].startswith("steeper than Michaelian at 95 %")
    assert proc.stderr == ""


def test_subprocess_bad_input_is_one_line_without_traceback(write_csv, cli_env):
    path = write_csv("input,readout\n0,0.1\n1,oops\n2,0.9\n")
    proc = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "fit", str(path)],
        capture_output=True,
        text=True,
        env=cli_env,
        timeout=120,
    )
    assert proc.returncode == 2
    assert proc.stdout == ""
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in proc.stderr
    assert "row 3, column 'readout'" in lines[0]


@pytest.mark.parametrize("model", ["michaelian", "hill", "quasi_steady"])
def test_every_model_runs(model, dose_csv, capsys):
    status, out, err = run_cli(["fit", str(dose_csv), "--model", model], capsys)
    assert status == 0, err
    result = json.loads(out)
    assert result["model"] == model and result["weighted"] and result["success"]
    assert result["data"]["input_kind"] == "amount"
    if model == "quasi_steady":
        assert result["parameters"]["input_scale"]["unit"] == "1/nM"


def test_mass_action_with_explicit_totals(write_csv, capsys):
    from hairtrigger.core.fit_models import MassActionModel

    known = {
        "substrate_total": 2.0,
        "phosphatase_total": 0.3,
        "kinase_kcat": 5.0,
        "phosphatase_kcat": 3.0,
    }
    r = np.geomspace(0.2, 3.0, 14)
    rng = np.random.default_rng(3)
    y = MassActionModel(known).predict(np.array([0.1, 0.3, 0.02, 0.95]), r) + rng.normal(
        0, 0.01, r.size
    )
    path = write_csv(_csv(r, y))
    status, out, err = run_cli(
        [
            "fit",
            str(path),
            "--model",
            "mass_action",
            "--substrate-total",
            "2",
            "--phosphatase-total",
            "0.3",
            "--kinase-kcat",
            "5",
            "--phosphatase-kcat",
            "3",
            "--readout",
            "total_modified",
        ],
        capsys,
    )
    assert status == 0, err
    result = json.loads(out)
    assert list(result["parameters"]) == ["kinase_km", "phosphatase_km", "bottom", "top"]
    assert result["context"]["known"] == known
    assert result["derived"]["K1"] == pytest.approx(result["parameters"]["kinase_km"]["value"] / 2)


def test_bootstrap_option_is_reproducible(hill_csv, capsys):
    args = ["fit", str(hill_csv), "--bootstrap", "60", "--seed", "4", "--no-compare"]
    _, first, _ = run_cli(args, capsys)
    _, second, _ = run_cli(args, capsys)
    assert first == second
    result = json.loads(first)
    assert result["interval_method"] == "bootstrap"
    assert result["bootstrap"] == {"replicates": 60, "seed": 4, "failed": 0}
    assert result["comparison"] is None


def test_fix_and_compare_options(hill_csv, capsys):
    status, out, err = run_cli(
        ["fit", str(hill_csv), "--fix", "bottom=0.1", "--compare", "michaelian,hill,quasi_steady"],
        capsys,
    )
    assert status == 0, err
    result = json.loads(out)
    assert result["parameters"]["bottom"]["fixed"] is True
    assert set(result["comparison"]["models"]) == {"hill", "michaelian", "quasi_steady"}


def test_help_describes_the_command(capsys):
    with pytest.raises(SystemExit) as info:
        main(["fit", "--help"])
    assert info.value.code == 0
    text = capsys.readouterr().out
    assert "--model" in text and "--bootstrap" in text and "experimental" in text


@pytest.mark.parametrize(
    ("extra", "content", "words"),
    [
        ([], "input,readout\n0.5,0.1\n1,0.5\n2,0.9\n", "column 'input': 3 points"),
        ([], "input,signal\n1,2\n", "missing column 'readout'"),
        ([], "input,readout\n0,0.4\n1,0.4\n2,0.4\n", "all 3 readouts are equal"),
        (["--model", "mass_action"], None, "needs the known totals"),
        (["--model", "mass_action", "--substrate-total", "1"], None, "--phosphatase-total"),
        (
            [
                "--substrate-total",
                "-1",
                "--model",
                "mass_action",
                "--phosphatase-total",
                "1",
                "--kinase-kcat",
                "1",
                "--phosphatase-kcat",
                "1",
            ],
            None,
            "substrate_total",
        ),
        (["--fix", "bottom"], None, "NAME=VALUE"),
        (["--fix", "bottom=low"], None, "not a number"),
        (["--fix", "slope=1"], None, "cannot fix `slope`"),
        (["--bootstrap", "5"], None, "at least 20"),
        (["--seed", "-1"], None, "--seed"),
        (["--confidence", "1.5"], None, "--confidence"),
        (["--compare", "hill,logistic"], None, "unknown model 'logistic'"),
        (["--absolute-sd"], None, "sd"),
        (
            ["--input-kind", "ratio"],
            "# input_kind: amount\ninput,readout\n0,0.1\n1,0.5\n2,0.8\n3,0.9\n4,0.95\n",
            "conflicting input_kind",
        ),
        (
            ["--input-kind", "ratio", "--input-unit", "nM"],
            "input,readout\n0,0.1\n1,0.5\n",
            "dimensionless",
        ),
    ],
)
def test_bad_input_exits_2_with_one_line(hill_csv, write_csv, capsys, extra, content, words):
    path = hill_csv if content is None else write_csv(content, "bad.csv")
    status, out, err = run_cli(["fit", str(path), *extra], capsys)
    assert status == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("hairtrigger fit: error: ")
    assert words in lines[0]


def test_missing_file_is_one_line(tmp_path, capsys):
    status, out, err = run_cli(["fit", str(tmp_path / "absent.csv")], capsys)
    assert status == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and "absent.csv" in err


def test_unknown_model_is_refused_by_the_parser(hill_csv, capsys):
    with pytest.raises(SystemExit) as info:
        main(["fit", str(hill_csv), "--model", "logistic"])
    assert info.value.code == 2
    assert "invalid choice" in capsys.readouterr().err


def test_cycle_snapshot_supplies_known_values_and_the_fitted_cycle(tmp_path, capsys):
    from hairtrigger import load_snapshot
    from hairtrigger.core.fit_models import MassActionModel
    from hairtrigger.io import example_path

    snapshot = load_snapshot(example_path("scarce_enzyme_switch"))
    model = MassActionModel(snapshot.cycle, snapshot.readout)
    w = snapshot.cycle.substrate_total
    r = np.geomspace(0.3, 3.0, 12)
    y = model.predict(np.array([0.05 * w, 0.1 * w, 0.02, 0.9]), r)
    path = tmp_path / "exact.csv"
    path.write_text(_csv(r, y), encoding="utf-8")
    status, out, err = run_cli(
        [
            "fit",
            str(path),
            "--model",
            "mass_action",
            "--cycle",
            "example:scarce_enzyme_switch",
            "--no-compare",
        ],
        capsys,
    )
    assert status == 0, err
    result = json.loads(out)
    assert result["parameters"]["kinase_km"]["value"] == pytest.approx(0.05 * w, rel=1e-5)
    assert result["context"]["readout"] == snapshot.readout
    assert result["cycle"]["kinase_km"] == pytest.approx(0.05 * w, rel=1e-5)
    assert result["cycle"]["substrate_total"] == w


def test_example_data_and_out_file(tmp_path, capsys):
    target = tmp_path / "fit.json"
    args = ["fit", "example:invented_kinase_titration", "--no-compare", "--out", str(target)]
    status, out, err = run_cli(args, capsys)
    assert status == 0 and out == "", err
    assert json.loads(target.read_text(encoding="utf-8"))["n_points"] == 36
    status, out, err = run_cli(args, capsys)  # refuses to replace without --force
    assert status == 2 and "--force" in err and len(err.strip().splitlines()) == 1
    status, _, err = run_cli([*args, "--force"], capsys)
    assert status == 0, err


def test_unknown_example_data_is_one_line(capsys):
    status, out, err = run_cli(["fit", "example:nothing"], capsys)
    assert status == 2 and out == ""
    assert "invented_kinase_titration" in err and len(err.strip().splitlines()) == 1
