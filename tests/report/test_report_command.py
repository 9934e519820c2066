"""``hairtrigger report`` on the command line (in-process and as a subprocess)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from hairtrigger.cli import main
from hairtrigger.io.report import extract_snapshots
from hairtrigger.io.snapshot import Snapshot, dumps_snapshot, save_snapshot

SRC = Path(__file__).resolve().parents[2] / "src"


@pytest.fixture
def files(tmp_path: Path, sharp_snapshot: Snapshot, crowded_snapshot: Snapshot) -> list[Path]:
    paths = [tmp_path / "sharp.json", tmp_path / "crowded.json"]
    save_snapshot(sharp_snapshot, paths[0])
    save_snapshot(crowded_snapshot, paths[1])
    return paths


def test_report_of_two_files_embeds_both(
    files: list[Path], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "report.html"
    status = main(["report", *map(str, files), "-o", str(out), "--map-points", "24"])
    assert status == 0
    printed = capsys.readouterr().out
    assert f"wrote {out}" in printed and "2 snapshots embedded" in printed
    size = int(printed.split("(")[1].split(" bytes")[0].replace(",", ""))
    assert size == out.stat().st_size
    loaded = extract_snapshots(out.read_text(encoding="utf-8"))
    assert [dumps_snapshot(s) for s in loaded] == [f.read_text(encoding="utf-8") for f in files]


def test_existing_output_needs_force(
    files: list[Path], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "report.html"
    out.write_text("older report", encoding="utf-8")
    assert main(["report", str(files[0]), "-o", str(out), "--map-points", "16"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "exists" in err and "--force" in err
    assert out.read_text(encoding="utf-8") == "older report"
    assert main(["report", str(files[0]), "-o", str(out), "--map-points", "16", "--force"]) == 0
    assert extract_snapshots(out.read_text(encoding="utf-8"))


def test_bad_snapshot_is_one_line_naming_the_file_and_writes_nothing(
    files: list[Path], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "hairtrigger.snapshot", "version": 1}', encoding="utf-8")
    out = tmp_path / "report.html"
    assert main(["report", str(files[0]), str(bad), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("hairtrigger report: error: ") and "bad.json" in err
    assert err.count("\n") == 1
    assert not out.exists()


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--step", "kinase_amount=2"], "--step must be KEY=VALUE"),
        (["--step", "kinase_total=lots"], "is not a number"),
        (["--map-measure", "steepest"], "invalid choice"),
    ],
)
def test_bad_options_are_refused(
    files: list[Path],
    tmp_path: Path,
    extra: list[str],
    message: str,
    capsys: pytest.CaptureFixture[str],
) -> None:
    with pytest.raises(SystemExit) as exc:
        main(["report", str(files[0]), "-o", str(tmp_path / "r.html"), *extra])
    assert exc.value.code == 2
    assert message in capsys.readouterr().err


def test_step_option_reaches_the_report(files: list[Path], tmp_path: Path) -> None:
    out = tmp_path / "r.html"
    assert (
        main(
            [
                "report",
                str(files[0]),
                "-o",
                str(out),
                "--map-points",
                "16",
                "--step",
                "kinase_total=0.06",
                "--t-end",
                "30",
            ]
        )
        == 0
    )
    assert "<code>kinase_total</code> → 0.06 uM" in out.read_text(encoding="utf-8")


def test_help_and_subprocess_run(files: list[Path], tmp_path: Path) -> None:
    env = {
        **os.environ,
        "PYTHONPATH": os.pathsep.join([str(SRC), os.environ.get("PYTHONPATH", "")]),
    }
    done = subprocess.run(
        [sys.executable, "-m", "hairtrigger", "report", "--help"],
        capture_output=True,
        text=True,
        env=env,
        check=True,
    )
    assert "self-contained" in done.stdout and "--force" in done.stdout
    out = tmp_path / "r.html"
    done = subprocess.run(
        [
            sys.executable,
            "-m",
            "hairtrigger",
            "report",
            str(files[0]),
            "-o",
            str(out),
            "--map-points",
            "16",
        ],
        capture_output=True,
        text=True,
        env=env,
    )
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
