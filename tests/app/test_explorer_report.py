"""The explorer's report: its current point and pins, written as one HTML file."""

from __future__ import annotations

from pathlib import Path

import pytest

from hairtrigger.io.examples import load_example
from hairtrigger.io.report import extract_snapshots
from hairtrigger.io.snapshot import dumps_snapshot
from hairtrigger.widgets import Explorer
from hairtrigger.widgets.app import add_stable_classes, explorer_app, write_explorer_report


def test_report_of_the_explorer_embeds_current_point_and_pins(tmp_path: Path) -> None:
    explorer = Explorer(load_example("scarce_enzyme_switch"))
    explorer.snapshots.pin()
    explorer.state.K1 = 0.2
    out = write_explorer_report(explorer, tmp_path / "report.html")
    loaded = extract_snapshots(out.read_text(encoding="utf-8"))
    assert len(loaded) == 2
    assert loaded[0].cycle.K1 == 0.2
    assert dumps_snapshot(loaded[1]) == dumps_snapshot(explorer.state.pinned[0])


def test_explorer_write_report_method_without_pins_and_refusing_to_overwrite(
    tmp_path: Path,
) -> None:
    explorer = Explorer(load_example("scarce_enzyme_switch"))
    explorer.snapshots.pin()
    explorer.state.K2 = 0.3
    out = explorer.write_report(tmp_path / "r.html", include_pinned=False)
    loaded = extract_snapshots(out.read_text(encoding="utf-8"))
    assert [s.cycle.K2 for s in loaded] == [pytest.approx(0.3)]
    with pytest.raises(FileExistsError):
        explorer.write_report(out)
    assert len(extract_snapshots(explorer.write_report(out, overwrite=True).read_text())) == 2


def test_app_starts_from_the_environment_snapshot(tmp_path: Path, monkeypatch) -> None:
    start = load_example("sequestration_limited")
    path = tmp_path / "s.json"
    path.write_text(dumps_snapshot(start), encoding="utf-8")
    monkeypatch.setenv("HAIRTRIGGER_SNAPSHOT", str(path))
    app = explorer_app()
    shown = app.explorer.state.to_cycle().as_dict()
    # the explorer keeps ratios (E1/W, K1 = M1/W, ...), so a value may come back 1 ulp off
    assert shown == pytest.approx(start.cycle.as_dict(), rel=1e-14)
    assert app.errors.value == ""
    assert (
        "hairtrigger-control-activity_ratio"
        in app.explorer.controls.controls["activity_ratio"]._dom_classes
    )


def test_app_with_an_unusable_snapshot_says_so_and_starts_from_the_default(
    tmp_path: Path, monkeypatch
) -> None:
    bad = tmp_path / "bad.json"
    bad.write_text("{", encoding="utf-8")
    monkeypatch.setenv("HAIRTRIGGER_SNAPSHOT", str(bad))
    app = explorer_app()
    assert "could not start from" in app.errors.value
    assert app.explorer.state.results["K1"] > 0


def test_error_panel_shows_exceptions_logged_by_widget_message_handling() -> None:
    import logging

    app = explorer_app()
    try:
        raise RuntimeError("boom in a comm handler")
    except RuntimeError:
        logging.getLogger("Comm").error("Exception in comm_msg for x", exc_info=True)
    assert "RuntimeError: boom in a comm handler" in app.errors.value
    add_stable_classes(app.explorer)  # idempotent enough to call again
