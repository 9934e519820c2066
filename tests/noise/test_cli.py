"""``hairtrigger noise``: the DESIGN.md §4 contract, ensembles, CSV and bad-input paths."""

from __future__ import annotations

import csv
import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from noise_reference import make_cycle

from hairtrigger.cli import main
from hairtrigger.core.noise import BirthDeathChain, stationary_distribution

CONTRACT_KEYS = [
    "molecules",
    "mean_modified",
    "variance_modified",
    "fano_factor",
    "distribution",
    "population_hill_coefficient",
]


def write_snapshot(
    folder: Path, name: str = "cycle.json", model: str = "quasi_steady", **cycle_changes: float
) -> Path:
    """A snapshot written by hand from the DESIGN.md §4 file contract."""
    cycle = make_cycle(substrate=1.0, enzyme=0.01, km=0.02, kcat=1.0, kon=100.0).as_dict()
    cycle.update(cycle_changes)
    document = {
        "format": "hairtrigger.snapshot",
        "version": 1,
        "title": "invented scarce-enzyme switch",
        "notes": "test data",
        "created": "2026-01-01T00:00:00+00:00",
        "model": model,
        "readout": "total_modified",
        "units": {"concentration": "uM", "time": "s"},
        "cycle": cycle,
    }
    path = folder / name
    path.write_text(json.dumps(document), encoding="utf-8")
    return path


def run_cli(args: list[str], env: dict[str, str]) -> subprocess.CompletedProcess[str]:
    """``python -m hairtrigger noise ARGS`` in a fresh interpreter."""
    return subprocess.run(
        [sys.executable, "-m", "hairtrigger", "noise", *args],
        capture_output=True,
        text=True,
        env=env,
        timeout=120,
    )


def run_main(
    args: list[str], capsys: pytest.CaptureFixture[str]
) -> subprocess.CompletedProcess[str]:
    """The same through `hairtrigger.cli.main` in this process (no interpreter start-up)."""
    code = main(["noise", *args])
    captured = capsys.readouterr()
    return subprocess.CompletedProcess(args, code, captured.out, captured.err)


def test_contract_keys_and_values(tmp_path: Path, cli_env: dict[str, str]) -> None:
    path = write_snapshot(tmp_path)
    done = run_cli([str(path), "--molecules", "300"], cli_env)
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    assert list(out)[:6] == CONTRACT_KEYS
    assert out["molecules"] == 300
    exact = stationary_distribution(BirthDeathChain(300, 1.0, 0.02, 0.02))
    np.testing.assert_allclose(out["distribution"], exact.probabilities, rtol=1e-12, atol=1e-300)
    assert len(out["distribution"]) == 301
    assert out["mean_modified"] == pytest.approx(exact.mean, rel=1e-12)
    assert out["variance_modified"] == pytest.approx(exact.variance, rel=1e-12)
    assert out["fano_factor"] == pytest.approx(exact.variance / exact.mean, rel=1e-12)
    assert 1.0 < out["population_hill_coefficient"] < out["deterministic_hill_coefficient"]
    assert out["warnings"] == []
    assert "ensemble" not in out


def test_volume_gives_the_same_as_its_molecule_count(tmp_path: Path) -> None:
    """1 µM in 0.5 fL is round(0.5 · 602.214076) = 301 molecules."""
    path = write_snapshot(tmp_path)
    outputs = []
    for option in (["--volume", "0.5"], ["--molecules", "301"]):
        buffer = _capture(lambda opts=option: main(["noise", str(path), *opts]))
        outputs.append(json.loads(buffer))
    assert outputs[0]["molecules"] == 301
    assert outputs[0]["volume"] == 0.5
    assert outputs[0]["distribution"] == outputs[1]["distribution"]


def _capture(call) -> str:
    import contextlib
    import io

    stream = io.StringIO()
    with contextlib.redirect_stdout(stream):
        assert call() == 0
    return stream.getvalue()


def test_ensemble_json_and_csv(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = write_snapshot(tmp_path)
    out_csv = tmp_path / "runs.csv"
    args = [
        str(path),
        "--molecules",
        "100",
        "--trajectories",
        "7",
        "--t-end",
        "5",
        "--points",
        "6",
        "--seed",
        "3",
        "--csv",
        str(out_csv),
        "--step",
        "kinase_total=0.012",
    ]
    done = run_main(args, capsys)
    assert done.returncode == 0, done.stderr
    ensemble = json.loads(done.stdout)["ensemble"]
    assert ensemble["trajectories"] == 7 and ensemble["seed"] == 3
    assert ensemble["status"] == "completed" and ensemble["csv"] == str(out_csv)
    assert ensemble["t"] == [0.0, 1.0, 2.0, 3.0, 4.0, 5.0]
    with out_csv.open(newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert list(rows[0]) == [
        "trajectory",
        "t",
        "unmodified",
        "modified",
        "kinase_complex",
        "phosphatase_complex",
    ]
    assert len(rows) == 7 * 6
    assert all(int(r["unmodified"]) + int(r["modified"]) == 100 for r in rows)
    finals = [int(r["modified"]) for r in rows if float(r["t"]) == 5.0]
    assert np.mean(finals) == pytest.approx(ensemble["mean_modified"][-1])
    # Same seed, same bytes; refusing to overwrite without --force.
    again = run_main(args, capsys)
    assert again.returncode == 2 and "--force" in again.stderr
    forced = run_main([*args, "--force"], capsys)
    assert forced.returncode == 0
    assert json.loads(forced.stdout)["ensemble"]["mean_modified"] == ensemble["mean_modified"]


def test_mass_action_ensemble_with_initial_state(tmp_path: Path) -> None:
    path = write_snapshot(tmp_path, model="mass_action")
    text = _capture(
        lambda: main(
            [
                "noise",
                str(path),
                "--molecules",
                "500",
                "--trajectories",
                "3",
                "--t-end",
                "2",
                "--points",
                "3",
                "--initial",
                "modified=0",
                "--quiet",
            ]
        )
    )
    out = json.loads(text)
    assert out["ensemble"]["model"] == "mass_action"
    assert out["ensemble"]["mean_modified"][0] == 0.0
    assert len(out["ensemble"]["mean_readout"]) == 3


def test_progress_goes_to_stderr(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = write_snapshot(tmp_path)
    done = run_main([str(path), "--molecules", "50", "--trajectories", "3", "--t-end", "1"], capsys)
    assert done.returncode == 0
    assert "traj" in done.stderr
    json.loads(done.stdout)  # standard output stays pure JSON


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--molecules", "0"], "at least 1"),
        (["--molecules", "12.5"], "whole number"),
        (["--volume", "0"], "volume"),
        (["--volume", "-3"], "volume"),
        (["--volume", "1e-9"], "at least 1"),
        (["--molecules", "10", "--volume", "1"], "not allowed with"),
        ([], "required"),
        (["--molecules", "100", "--t-end", "5"], "needs --trajectories"),
        (["--molecules", "100", "--trajectories", "5"], "needs --t-end"),
        (["--molecules", "100", "--trajectories", "0", "--t-end", "1"], "trajectories"),
        (["--molecules", "100", "--trajectories", "100000000", "--t-end", "1"], "trajectories"),
        (["--molecules", "100", "--trajectories", "1000", "--t-end", "1e12"], "reaction events"),
        (
            ["--molecules", "100", "--trajectories", "2", "--t-end", "1", "--step", "kinase_total"],
            "KEY=VALUE",
        ),
        (
            ["--molecules", "100", "--trajectories", "2", "--t-end", "1", "--step", "speed=2"],
            "unknown key",
        ),
        (
            [
                "--molecules",
                "100",
                "--trajectories",
                "2",
                "--t-end",
                "1",
                "--step",
                "substrate_total=2",
            ],
            "unknown key",
        ),
        (
            [
                "--molecules",
                "100",
                "--trajectories",
                "2",
                "--t-end",
                "1",
                "--step",
                "kinase_total=-1",
            ],
            "kinase_total",
        ),
        (
            [
                "--molecules",
                "100",
                "--trajectories",
                "2",
                "--t-end",
                "1",
                "--initial",
                "modified=500",
            ],
            "between 0 and 100",
        ),
        (
            [
                "--molecules",
                "100",
                "--trajectories",
                "2",
                "--t-end",
                "1",
                "--initial",
                "modified=x",
            ],
            "not a number",
        ),
        (
            ["--volume", "0.002", "--trajectories", "2", "--t-end", "1", "--model", "mass_action"],
            "enzyme molecule",
        ),
    ],
)
def test_bad_input_is_one_line_without_traceback(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], args: list[str], message: str
) -> None:
    path = write_snapshot(tmp_path)
    out_csv = tmp_path / "never.csv"
    full = (
        [str(path), *args, "--csv", str(out_csv)]
        if "--trajectories" in args
        else [str(path), *args]
    )
    try:
        done = run_main(full, capsys)
    except SystemExit as exc:  # argparse usage errors exit from inside the parser
        captured = capsys.readouterr()
        done = subprocess.CompletedProcess(full, exc.code, captured.out, captured.err)
    assert done.returncode != 0
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1, done.stderr
    assert "Traceback" not in done.stderr
    assert message in lines[0]
    assert done.stdout == ""
    assert not out_csv.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cycle.json"]


def test_bad_snapshot_and_paths(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    missing = run_main([str(tmp_path / "nope.json"), "--molecules", "10"], capsys)
    assert missing.returncode == 2 and "no such file" in missing.stderr
    broken = tmp_path / "broken.json"
    broken.write_text("{not json", encoding="utf-8")
    bad = run_main([str(broken), "--molecules", "10"], capsys)
    assert bad.returncode == 2 and len(bad.stderr.strip().splitlines()) == 1
    path = write_snapshot(tmp_path)
    nowhere = run_main(
        [
            str(path),
            "--molecules",
            "10",
            "--trajectories",
            "2",
            "--t-end",
            "1",
            "--csv",
            str(tmp_path / "no" / "such" / "folder.csv"),
        ],
        capsys,
    )
    assert nowhere.returncode == 2 and "does not exist" in nowhere.stderr
    into_input = run_main(
        [
            str(path),
            "--molecules",
            "10",
            "--trajectories",
            "2",
            "--t-end",
            "1",
            "--csv",
            str(path),
            "--force",
        ],
        capsys,
    )
    assert into_input.returncode == 2 and "input" in into_input.stderr
    assert json.loads(path.read_text(encoding="utf-8"))["format"] == "hairtrigger.snapshot"


def test_existing_csv_untouched_on_refusal(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = write_snapshot(tmp_path)
    target = tmp_path / "keep.csv"
    target.write_text("precious\n", encoding="utf-8")
    done = run_main(
        [
            str(path),
            "--molecules",
            "10",
            "--trajectories",
            "2",
            "--t-end",
            "1",
            "--csv",
            str(target),
        ],
        capsys,
    )
    assert done.returncode == 2
    assert target.read_text(encoding="utf-8") == "precious\n"


def test_mass_action_warning_for_abundant_enzymes(tmp_path: Path) -> None:
    path = write_snapshot(tmp_path, model="mass_action", kinase_total=0.3, phosphatase_total=0.3)
    out = json.loads(_capture(lambda: main(["noise", str(path), "--molecules", "40"])))
    assert any("not scarce" in w for w in out["warnings"])
    assert math.isfinite(out["mean_modified"])


def test_help_describes_the_command(cli_env: dict[str, str]) -> None:
    done = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "noise", "--help"],
        capture_output=True,
        text=True,
        env=cli_env,
        timeout=60,
    )
    assert done.returncode == 0
    for word in (
        "--molecules",
        "--volume",
        "--trajectories",
        "--t-end",
        "--seed",
        "--csv",
        "--step",
        "population_hill_coefficient",
    ):
        assert word in done.stdout


@pytest.mark.parametrize(
    "args",
    [["--molecules", "-4"], ["--molecules", "100", "--trajectories", "10000000", "--t-end", "1"]],
)
def test_bad_input_in_a_fresh_process(
    tmp_path: Path, cli_env: dict[str, str], args: list[str]
) -> None:
    """The real entry point: exit status 2, one line on stderr, no traceback, nothing written."""
    path = write_snapshot(tmp_path)
    done = run_cli([str(path), *args], cli_env)
    assert done.returncode == 2
    assert len(done.stderr.strip().splitlines()) == 1 and "Traceback" not in done.stderr
    assert done.stdout == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cycle.json"]


def test_progress_lines_without_tqdm(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    """Without tqdm installed, progress is plain lines on stderr."""
    import hairtrigger.core.ssa as ssa

    monkeypatch.setitem(sys.modules, "tqdm", None)  # makes `import tqdm` fail
    monkeypatch.setattr(ssa, "_EVENTS_PER_CHUNK", 1.0)
    path = write_snapshot(tmp_path)
    done = run_main([str(path), "--molecules", "30", "--trajectories", "4", "--t-end", "1"], capsys)
    assert done.returncode == 0
    assert "hairtrigger noise: 4/4 trajectories" in done.stderr.splitlines()


def test_interrupt_cancels_between_chunks_and_writes_nothing(
    tmp_path: Path, cli_env: dict[str, str]
) -> None:
    """Ctrl-C (SIGINT) during a long ensemble: exit 130, one line, no CSV left behind."""
    import signal
    import time

    path = write_snapshot(tmp_path)
    out_csv = tmp_path / "runs.csv"
    process = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "hairtrigger",
            "noise",
            str(path),
            "--molecules",
            "2000",
            "--trajectories",
            "20000",
            "--t-end",
            "2000",
            "--points",
            "3",
            "--csv",
            str(out_csv),
            "--event-budget",
            "1e11",
        ],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=cli_env,
    )
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:  # wait for the first progress output
        time.sleep(0.5)
        if process.poll() is not None:
            break
        if "traj" in _peek_stderr(process):
            break
    process.send_signal(signal.SIGINT)
    stdout, stderr = process.communicate(timeout=60)
    assert process.returncode == 130, stderr
    assert "interrupted after" in stderr and "nothing written" in stderr
    assert "Traceback" not in stderr
    assert stdout == ""
    assert not out_csv.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cycle.json"]


def _peek_stderr(process: subprocess.Popen[str]) -> str:
    """Read what the child has written to stderr so far without blocking."""
    import os
    import select

    assert process.stderr is not None
    fd = process.stderr.fileno()
    chunks = []
    while select.select([fd], [], [], 0)[0]:
        data = os.read(fd, 4096)
        if not data:
            break
        chunks.append(data.decode(errors="replace"))
    return "".join(chunks)
