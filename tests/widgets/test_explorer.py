"""The composite explorer: panels on one state, errors shown in place, slow work announced."""

from __future__ import annotations

import time

import ipywidgets as w
import pytest

from hairtrigger.io import example_path, load_example
from hairtrigger.widgets import (
    ControlsPanel,
    Explorer,
    ExplorerState,
    ReadoutTable,
    ResponseCurvePanel,
    SnapshotPanel,
    SteepnessMapPanel,
    TimeCoursePanel,
)


def _walk(widget: w.Widget):
    yield widget
    for child in getattr(widget, "children", ()):
        yield from _walk(child)


def test_explorer_lays_out_every_panel(explorer: Explorer) -> None:
    found = {type(x) for x in _walk(explorer)}
    for panel in (
        ControlsPanel,
        ResponseCurvePanel,
        TimeCoursePanel,
        SteepnessMapPanel,
        ReadoutTable,
        SnapshotPanel,
    ):
        assert panel in found
    assert isinstance(explorer.state, ExplorerState)
    for panel in (
        explorer.controls,
        explorer.curve,
        explorer.time_course,
        explorer.steepness,
        explorer.table,
        explorer.snapshots,
    ):
        assert panel.state is explorer.state
    assert "experimental confirmation" in explorer.children[0].children[0].value


def test_layout_fits_1280_wide(explorer: Explorer) -> None:
    body = explorer.children[1]
    widths = [int(col.layout.width.removesuffix("px")) for col in body.children]
    assert sum(widths) <= 1280


def test_explorer_from_an_example_snapshot() -> None:
    explorer = Explorer(example_path("scarce_enzyme_switch"))
    snap = load_example("scarce_enzyme_switch")
    assert explorer.state.title == snap.title
    assert explorer.state.to_cycle().kinase_total == pytest.approx(snap.cycle.kinase_total)
    assert explorer.state.model == snap.model


def test_panels_work_alone_on_a_shared_state() -> None:
    state = ExplorerState()
    curve = ResponseCurvePanel(state)
    table = ReadoutTable(state)
    state.K1 = 0.2
    assert f"{state.results['readout_value']:.4g}" in table.table.value
    assert curve.operating_point.y[0] == pytest.approx(state.results["readout_value"])


def test_a_failing_panel_shows_its_error_and_the_others_go_on(
    explorer: Explorer, monkeypatch
) -> None:
    import hairtrigger.widgets.panels.curve as curve_module

    def broken(*args, **kwargs):
        raise FloatingPointError("curve sampling failed")

    monkeypatch.setattr(curve_module, "response_curves", broken)
    explorer.state.K1 = 0.5  # changes the curve's shape, so it is resampled
    assert "curve sampling failed" in explorer.curve.message.text
    assert "Error" in explorer.curve.message.value
    assert f"{explorer.state.results['readout_value']:.4g}" in explorer.table.table.value
    monkeypatch.undo()
    explorer.state.K1 = 0.4
    assert explorer.curve.message.text == ""


def test_slow_recompute_shows_the_busy_indicator(explorer: Explorer, monkeypatch) -> None:
    import hairtrigger.widgets.state as state_module

    seen = []
    real = state_module.evaluate

    def slow(*args, **kwargs):
        time.sleep(4 * explorer.busy.delay)
        seen.append(explorer.busy.shown)
        return real(*args, **kwargs)

    monkeypatch.setattr(state_module, "evaluate", slow)
    explorer.state.K1 = 0.3
    assert seen == [True]
    assert not explorer.busy.shown
    monkeypatch.undo()
    explorer.state.K1 = 0.2
    assert not explorer.busy.shown  # quick updates never show it


def test_explorer_refuses_an_out_of_range_snapshot() -> None:
    snap = load_example("scarce_enzyme_switch")
    far = snap.replace(cycle=snap.cycle.replace(kinase_km=1e-7))
    with pytest.raises(ValueError, match="outside the explorer's range"):
        Explorer(far)


def test_a_refused_time_course_does_not_block_the_steady_state(explorer: Explorer) -> None:
    state = explorer.state
    with state.batch():
        state.model = "mass_action"
        state.kinase_kon = 100.0  # a1·M1 = 100 × 0.05 µM < k1 = 10/s: no valid binding scheme
    assert state.problem == ""
    assert state.results["K1"] == pytest.approx(state.K1)
    course = state.time_course
    assert not course.success and "a1 >= k/M = 200" in course.message
    panel = explorer.time_course
    assert not panel.readout_line.visible
    assert "raise a1" in panel.message.text
    assert "raise a1" in explorer.table.table.value
    state.kinase_kon = 1000.0
    assert state.time_course.success and panel.readout_line.visible
    assert panel.message.text == ""


def test_add_tab_extends_the_tab_area(explorer: Explorer) -> None:
    built_in = explorer.tabs.titles
    assert built_in[:2] == ("Readout", "Snapshots")
    extra = ReadoutTable(explorer.state)
    index = explorer.add_tab("Extra", extra, select=True)
    assert index == len(built_in)
    assert explorer.tabs.titles == (*built_in, "Extra")
    assert explorer.tabs.children[index] is extra
    assert explorer.tabs.selected_index == index
    with pytest.raises(ValueError, match="already a tab"):
        explorer.add_tab("Again", extra)
    with pytest.raises(ValueError, match="title"):
        explorer.add_tab(" ", w.HTML())
    with pytest.raises(ValueError, match="widget"):
        explorer.add_tab("Not a widget", object())  # type: ignore[arg-type]
    assert explorer.tabs.titles == (*built_in, "Extra")
