"""``hairtrigger sweep``: the CSV contract of DESIGN.md §4, determinism, bad input."""

from __future__ import annotations

import csv
import math
import subprocess

import numpy as np
import pytest

from hairtrigger.cli import main
from hairtrigger.core import evaluate_arrays
from hairtrigger.core.sweep import EVALUATE_QUANTITIES
from hairtrigger.io import load_example

EXAMPLE = "example:scarce_enzyme_switch"


def sweep(tmp_path, capsys, *extra, name="s.csv"):
    out = tmp_path / name
    status = main(
        [
            "sweep",
            EXAMPLE,
            "--vary",
            "kinase_km=0.01:1:log",
            "--vary",
            "phosphatase_total=0.01:0.1",
            "--samples",
            "40",
            "--out",
            str(out),
            *extra,
        ]
    )
    return status, out, capsys.readouterr()


def test_contract_header_and_rows(tmp_path, capsys):
    status, out, captured = sweep(tmp_path, capsys, "--model", "mass_action")
    assert status == 0, captured.err
    with open(out, newline="") as handle:
        rows = list(csv.reader(handle))
    assert rows[0] == ["kinase_km", "phosphatase_total", *EVALUATE_QUANTITIES]
    assert len(rows) == 41
    # Every row is what evaluate computes at that row's parameters.
    snapshot = load_example("scarce_enzyme_switch")
    table = np.array([[float(x) if x else math.nan for x in row] for row in rows[1:]])
    params = {
        **snapshot.cycle.as_dict(),
        "kinase_km": table[:, 0],
        "phosphatase_total": table[:, 1],
    }
    direct = evaluate_arrays(params, "mass_action", snapshot.readout)
    for k, name in enumerate(EVALUATE_QUANTITIES):
        np.testing.assert_array_equal(table[:, 2 + k], direct[name])
    assert 0.01 <= table[:, 0].min() and table[:, 0].max() <= 1


def test_same_seed_byte_identical_and_seed_default_zero(tmp_path, capsys):
    _, one, _ = sweep(tmp_path, capsys, name="a.csv")
    _, two, _ = sweep(tmp_path, capsys, "--seed", "0", name="b.csv")
    _, three, _ = sweep(tmp_path, capsys, "--seed", "1", name="c.csv")
    assert one.read_bytes() == two.read_bytes() != three.read_bytes()


def test_unreachable_values_are_empty_fields(tmp_path, capsys):
    out = tmp_path / "s.csv"
    main(
        [
            "sweep",
            EXAMPLE,
            "--vary",
            "kinase_total=1:10:log",
            "--vary",
            "phosphatase_total=1:20",
            "--samples",
            "8",
            "--model",
            "mass_action",
            "--out",
            str(out),
        ]
    )
    with open(out, newline="") as handle:
        rows = list(csv.DictReader(handle))
    assert any(row["activity_ratio_90"] == "" for row in rows)
    assert all(row["relative_hill_coefficient"] != "" for row in rows)


def test_on_a_local_cluster_byte_identical(tmp_path, capsys, dask_client):
    _, local, _ = sweep(tmp_path, capsys, name="local.csv")
    status, remote, captured = sweep(
        tmp_path, capsys, "--scheduler", dask_client.scheduler.address, name="remote.csv"
    )
    assert status == 0, captured.err
    assert local.read_bytes() == remote.read_bytes()


def test_progress_bar_on_request(tmp_path, capsys):
    _, _, captured = sweep(tmp_path, capsys, "--progress")
    assert "sweep: [" in captured.err and "100.0%" in captured.err


def test_subprocess_run(tmp_path, cli_env, python):
    out = tmp_path / "s.csv"
    done = subprocess.run(
        [
            python,
            "-m",
            "hairtrigger",
            "sweep",
            EXAMPLE,
            "--vary",
            "kinase_km=0.01:1:log",
            "--samples",
            "5",
            "--design",
            "lhs",
            "--out",
            str(out),
        ],
        capture_output=True,
        text=True,
        env={**cli_env, "PYTHONWARNINGS": "error"},
        timeout=120,
    )
    assert done.returncode == 0, done.stderr
    assert done.stderr == "" and len(out.read_text().splitlines()) == 6


@pytest.mark.parametrize(
    "args,match",
    [
        (["--vary", "km=0.1:1"], "unknown cycle parameter `km`"),
        (["--vary", "kinase_km=1:0.1"], "must be below high"),
        (["--vary", "kinase_km=0.1:1", "--vary", "kinase_km=0.2:2"], "given twice"),
        (["--vary", "kinase_km=0.1:1", "--samples", "0"], "--samples"),
        (["--vary", "kinase_km=0.1:1", "--seed", "-3"], "--seed"),
        (["--vary", "kinase_km=0.1:1", "--model", "hill"], "invalid choice"),
    ],
)
def test_bad_arguments_leave_nothing(args, match, tmp_path, capsys):
    out = tmp_path / "s.csv"
    argv = ["sweep", EXAMPLE, "--out", str(out), *args]
    if "--samples" not in args:
        argv += ["--samples", "4"]
    try:
        status = main(argv)
    except SystemExit as exc:
        status = exc.code
    err = capsys.readouterr().err
    assert status == 2 and match in err and "Traceback" not in err
    assert not out.exists()


def test_existing_output_is_refused_unless_forced(tmp_path, capsys):
    out = tmp_path / "s.csv"
    out.write_text("keep me")
    status, _, captured = sweep(tmp_path, capsys)
    assert status == 2 and "file exists; pass --force" in captured.err
    assert out.read_text() == "keep me"
    status, _, _ = sweep(tmp_path, capsys, "--force")
    assert status == 0 and out.read_text().startswith("kinase_km,")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.csv"]


def test_missing_folder_and_snapshot(tmp_path, capsys):
    status = main(
        [
            "sweep",
            EXAMPLE,
            "--vary",
            "kinase_km=0.1:1",
            "--samples",
            "3",
            "--out",
            str(tmp_path / "nope" / "s.csv"),
        ]
    )
    assert status == 2 and "does not exist" in capsys.readouterr().err
    status = main(
        [
            "sweep",
            str(tmp_path / "x.json"),
            "--vary",
            "kinase_km=0.1:1",
            "--samples",
            "3",
            "--out",
            str(tmp_path / "s.csv"),
        ]
    )
    assert status == 2 and "no such file" in capsys.readouterr().err


def test_unreachable_scheduler(tmp_path, capsys, monkeypatch):
    pytest.importorskip("distributed")
    monkeypatch.setattr("hairtrigger.core.sweep.SCHEDULER_TIMEOUT", 1.0)
    status, out, captured = sweep(tmp_path, capsys, "--scheduler", "tcp://127.0.0.1:9")
    assert status == 2 and "cannot reach the Dask scheduler" in captured.err
    assert not out.exists()
