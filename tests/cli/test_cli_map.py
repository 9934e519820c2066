"""``hairtrigger map``: the CSV holds exactly `steepness_map` over the log-spaced Km grid."""

from __future__ import annotations

import csv
import io
import math
import pathlib

import numpy as np
import pytest
from cli_running import run_cli

import hairtrigger.commands.map as map_command
from hairtrigger import load_snapshot, steepness_map
from hairtrigger.cli import main
from hairtrigger.core import MAP_MEASURES
from hairtrigger.io import example_path, list_examples


def read_csv(text: str) -> tuple[list[str], list[list[str]]]:
    rows = list(csv.reader(io.StringIO(text)))
    return rows[0], rows[1:]


def run_map(args: list[str], capsys: pytest.CaptureFixture[str]) -> str:
    assert main(["map", *args]) == 0
    captured = capsys.readouterr()
    assert captured.err == ""
    return captured.out


def expected_grid(path: pathlib.Path, n: int, low: float, high: float) -> np.ndarray:
    w = load_snapshot(path).cycle.substrate_total
    k = np.logspace(math.log10(low), math.log10(high), n)
    k[0], k[-1] = low, high
    return k * w


def test_grid_of_4_through_the_entry_point() -> None:
    path = example_path("scarce_enzyme_switch")
    done = run_cli(["map", str(path), "--grid", "4"])
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
    header, rows = read_csv(done.stdout)
    assert header == ["kinase_km", "phosphatase_km", "K1", "K2", "hill_coefficient"]
    assert len(rows) == 16
    snapshot = load_snapshot(path)
    km = expected_grid(path, 4, 1e-3, 1e2)
    expected = steepness_map(
        snapshot.cycle, km[:, None], km[None, :], snapshot.model, snapshot.readout
    )
    got = np.array([[float(x) for x in row] for row in rows])
    # Rows run with the kinase Km slowest; numbers are exact (repr floats).
    assert np.array_equal(got[:, 0], np.repeat(km, 4))
    assert np.array_equal(got[:, 1], np.tile(km, 4))
    assert np.array_equal(got[:, 2], got[:, 0] / snapshot.cycle.substrate_total)
    assert np.array_equal(got[:, 3], got[:, 1] / snapshot.cycle.substrate_total)
    assert np.array_equal(got[:, 4], expected.ravel())
    # The axis ends are the range ends exactly: K from 1e-3 to 1e2.
    assert (got[0, 2], got[-1, 3]) == (1e-3, 1e2)


@pytest.mark.parametrize("name", list_examples())
@pytest.mark.parametrize("measure", MAP_MEASURES)
def test_every_measure_matches_the_core(
    name: str, measure: str, capsys: pytest.CaptureFixture[str]
) -> None:
    path = example_path(name)
    out = run_map([str(path), "--grid", "5", "--km-range", "0.01:10", "--measure", measure], capsys)
    header, rows = read_csv(out)
    assert header[-1] == measure
    snapshot = load_snapshot(path)
    km = expected_grid(path, 5, 0.01, 10.0)
    expected = steepness_map(
        snapshot.cycle, km[:, None], km[None, :], snapshot.model, snapshot.readout, measure
    ).ravel()
    cells = [row[-1] for row in rows]
    # NaN (undefined) is written as an empty cell, and only NaN is.
    assert [c == "" for c in cells] == list(np.isnan(expected))
    assert [float(c) for c in cells if c] == list(expected[~np.isnan(expected)])


def test_undefined_cells_are_empty_under_sequestration(capsys: pytest.CaptureFixture[str]) -> None:
    out = run_map(["example:sequestration_limited", "--grid", "6"], capsys)
    _, rows = read_csv(out)
    empty = sum(row[-1] == "" for row in rows)
    assert 0 < empty < len(rows)  # the ceiling removes the absolute 90 % target in part
    assert "nan" not in out.lower()


def test_model_and_readout_override_the_file(capsys: pytest.CaptureFixture[str]) -> None:
    path = example_path("scarce_enzyme_switch")
    out = run_map(
        [str(path), "--grid", "3", "--model", "mass_action", "--readout", "free_modified"], capsys
    )
    km = expected_grid(path, 3, 1e-3, 1e2)
    expected = steepness_map(
        load_snapshot(path).cycle, km[:, None], km[None, :], "mass_action", "free_modified"
    )
    _, rows = read_csv(out)
    got = [float(r[-1]) if r[-1] else math.nan for r in rows]
    np.testing.assert_array_equal(got, expected.ravel())


def test_out_writes_the_same_text_and_force_replaces(
    tmp_path: pathlib.Path, capsys: pytest.CaptureFixture[str]
) -> None:
    args = ["example:michaelian_relay", "--grid", "4"]
    printed = run_map(args, capsys)
    target = tmp_path / "map.csv"
    assert run_map([*args, "--out", str(target)], capsys) == ""
    assert target.read_text(encoding="utf-8") == printed
    assert sorted(p.name for p in tmp_path.iterdir()) == ["map.csv"]
    # Refused without --force (file unchanged), replaced with it.
    target.write_text("old", encoding="utf-8")
    assert main(["map", *args, "--out", str(target)]) == 2
    assert "pass --force" in capsys.readouterr().err
    assert target.read_text(encoding="utf-8") == "old"
    assert run_map([*args, "--out", str(target), "--force"], capsys) == ""
    assert target.read_text(encoding="utf-8") == printed
    assert sorted(p.name for p in tmp_path.iterdir()) == ["map.csv"]


def test_blocks_give_the_same_map_as_one_pass(monkeypatch: pytest.MonkeyPatch) -> None:
    snapshot = load_snapshot(example_path("sequestration_limited"))
    args = (snapshot.cycle, 7, (1e-2, 1e1), "mass_action", "total_modified", "peak_sensitivity")
    whole = map_command.steepness_table(*args)
    monkeypatch.setattr(map_command, "BLOCK_POINTS", 10)  # one kinase row per block
    blocked = map_command.steepness_table(*args)
    for key in whole:
        np.testing.assert_array_equal(whole[key], blocked[key])


def test_largest_grid_is_allowed_and_one_more_is_not() -> None:
    assert map_command.check_grid(map_command.MAX_GRID) == map_command.MAX_GRID
    with pytest.raises(map_command.UserError):
        map_command.check_grid(map_command.MAX_GRID + 1)


@pytest.mark.parametrize(
    ("text", "expected"),
    [("1e-3:1e2", (1e-3, 1e2)), ("0.5:2", (0.5, 2.0)), (" 1 : 3 ", (1.0, 3.0))],
)
def test_km_range_parsing(text: str, expected: tuple[float, float]) -> None:
    assert map_command.parse_km_range(text) == expected
