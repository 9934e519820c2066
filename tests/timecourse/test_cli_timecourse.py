"""``hairtrigger timecourse`` and ``hairtrigger sbml`` on snapshot files (DESIGN.md §4)."""

from __future__ import annotations

import csv
import io
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from _tc_helpers import make_cycle

from hairtrigger import time_course
from hairtrigger.cli import main
from hairtrigger.io.sbml import consistency_problems, read_sbml_parameters

SRC = Path(__file__).resolve().parents[2] / "src"
HEADER = ["t", "unmodified", "modified", "kinase_complex", "phosphatase_complex", "readout"]


def run_cli(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess[str]:
    env = {"PYTHONPATH": str(SRC), "PATH": "/usr/bin:/bin"}
    return subprocess.run(
        [sys.executable, "-m", "hairtrigger", *args],
        capture_output=True,
        text=True,
        env=env,
        cwd=cwd,
        check=False,
    )


def parse(text: str) -> tuple[list[str], np.ndarray]:
    rows = list(csv.reader(io.StringIO(text)))
    return rows[0], np.array([[float(x) for x in row] for row in rows[1:]])


def test_stdout_csv_matches_api(snapshot_file, capsys) -> None:
    path = snapshot_file(make_cycle(kinase_km=0.02), model="quasi_steady")
    assert (
        main(
            [
                "timecourse",
                str(path),
                "--step",
                "kinase_total=0.02",
                "--t-end",
                "300",
                "--points",
                "7",
            ]
        )
        == 0
    )
    header, data = parse(capsys.readouterr().out)
    assert header == HEADER and data.shape == (7, 6)
    course = time_course(make_cycle(kinase_km=0.02), {"kinase_total": 0.02}, 300.0, 7)
    np.testing.assert_array_equal(data, course.as_array())  # shortest round-trip decimals: exact


def test_csv_file_mass_action_with_timed_step_and_ramp(
    snapshot_file, tmp_path: Path, capsys
) -> None:
    path = snapshot_file(make_cycle(), model="mass_action", readout="free_modified")
    out = tmp_path / "course.csv"
    status = main(
        [
            "timecourse",
            str(path),
            "--step",
            "kinase_total=0.02",
            "--step",
            "phosphatase_kcat=2@100",
            "--ramp",
            "kinase_total=0.005@150:250",
            "--t-end",
            "400",
            "--points",
            "41",
            "--csv",
            str(out),
        ]
    )
    assert status == 0 and capsys.readouterr().out == ""
    header, data = parse(out.read_text(encoding="utf-8"))
    assert header == HEADER and data.shape == (41, 6)
    np.testing.assert_allclose(data[:, 1:5].sum(axis=1), 1.0, rtol=1e-9)
    np.testing.assert_allclose(data[:, 5], data[:, 2], rtol=1e-15)  # free_modified readout = B/W


def test_refuses_to_overwrite_unless_forced(snapshot_file, tmp_path: Path) -> None:
    path = snapshot_file()
    out = tmp_path / "course.csv"
    out.write_text("keep me\n", encoding="utf-8")
    result = run_cli(
        "timecourse", str(path), "--step", "kinase_total=0.02", "--t-end", "10", "--csv", str(out)
    )
    assert result.returncode != 0 and "file exists" in result.stderr
    assert out.read_text(encoding="utf-8") == "keep me\n"
    result = run_cli(
        "timecourse",
        str(path),
        "--step",
        "kinase_total=0.02",
        "--t-end",
        "10",
        "--points",
        "3",
        "--csv",
        str(out),
        "--force",
    )
    assert result.returncode == 0, result.stderr
    assert out.read_text(encoding="utf-8").splitlines()[0] == ",".join(HEADER)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--step", "kinase_amount=0.02", "--t-end", "10"], "unknown step key"),
        (["--step", "kinase_total=-0.02", "--t-end", "10"], "must be a finite number > 0"),
        (["--step", "kinase_total=abc", "--t-end", "10"], "VALUE must be a number"),
        (["--step", "kinase_total", "--t-end", "10"], "expected KEY=VALUE"),
        (["--step", "kinase_total=0.02", "--t-end", "0"], "`t_end` must be a finite number > 0"),
        (["--step", "kinase_total=0.02", "--t-end", "-3"], "`t_end`"),
        (
            ["--step", "kinase_total=0.02", "--t-end", "10", "--points", "1"],
            "`points` must be an integer >= 2",
        ),
        (["--t-end", "10"], "at least one --step"),
        (["--ramp", "kinase_total=0.02@5", "--t-end", "10"], "expected KEY=VALUE@START:END"),
    ],
)
def test_bad_steps_give_one_line_error_and_no_file(
    snapshot_file, tmp_path: Path, capsys, args, message
) -> None:
    path = snapshot_file()
    out = tmp_path / "never.csv"
    status = main(["timecourse", str(path), *args, "--csv", str(out)])
    captured = capsys.readouterr()
    assert status != 0
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and message in lines[0], captured.err
    assert captured.out == ""
    assert not out.exists() and sorted(p.name for p in tmp_path.iterdir()) == ["cycle.json"]


def test_bad_step_in_a_real_process_has_no_traceback(snapshot_file, tmp_path: Path) -> None:
    path = snapshot_file()
    out = tmp_path / "never.csv"
    result = run_cli(
        "timecourse", str(path), "--step", "kinase_total=-1", "--t-end", "5", "--csv", str(out)
    )
    assert result.returncode == 2 and result.stdout == ""
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.stderr
    assert not out.exists()


def test_missing_snapshot_is_one_line(tmp_path: Path) -> None:
    result = run_cli(
        "timecourse", str(tmp_path / "absent.json"), "--step", "kinase_total=0.02", "--t-end", "1"
    )
    assert result.returncode != 0 and len(result.stderr.strip().splitlines()) == 1


def test_help_lists_both_commands() -> None:
    result = run_cli("--help")
    assert "timecourse" in result.stdout and "sbml" in result.stdout
    for command in ("timecourse", "sbml"):
        assert run_cli(command, "--help").returncode == 0


@pytest.mark.parametrize("model", ["mass_action", "quasi_steady"])
def test_sbml_command_writes_consistent_model(snapshot_file, tmp_path: Path, model: str) -> None:
    cycle = make_cycle(kinase_total=1 / 3)
    path = snapshot_file(cycle, model=model)
    out = tmp_path / "cycle.xml"
    result = run_cli("sbml", str(path), "-o", str(out))
    assert result.returncode == 0, result.stderr
    text = out.read_text(encoding="utf-8")
    assert consistency_problems(text) == []
    assert read_sbml_parameters(text) == cycle
    assert ("kinase_binding" in text) == (model == "mass_action")
    again = run_cli("sbml", str(path), "-o", str(out))
    assert again.returncode != 0 and "file exists" in again.stderr
    assert len(again.stderr.strip().splitlines()) == 1
    assert run_cli("sbml", str(path), "-o", str(out), "--force").returncode == 0


def test_sbml_command_refuses_inconsistent_mass_action(snapshot_file, tmp_path: Path) -> None:
    path = snapshot_file(make_cycle(kinase_kon=1.0), model="mass_action")
    out = tmp_path / "cycle.xml"
    result = run_cli("sbml", str(path), "-o", str(out))
    assert result.returncode != 0 and "dissociation rate" in result.stderr
    assert not out.exists()
