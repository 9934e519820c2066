"""Controls: slider and entry per parameter; invalid entries are refused in place."""

from __future__ import annotations

import pytest

from hairtrigger.widgets import ExplorerState
from hairtrigger.widgets.panels import ControlsPanel
from hairtrigger.widgets.panels.controls import parse_entry


@pytest.fixture
def panel(state: ExplorerState) -> ControlsPanel:
    return ControlsPanel(state)


BAD_ENTRIES = ["abc", "", "   ", "nan", "inf", "-inf", "-0.1", "0", "1e9", "0,5", "1/2", "1e-300"]


@pytest.mark.parametrize("text", BAD_ENTRIES)
@pytest.mark.parametrize(
    "name",
    [
        "activity_ratio",
        "K1",
        "K2",
        "phosphatase_ratio",
        "substrate_total",
        "kinase_kcat",
        "kinase_kon",
        "kinase_ratio",
    ],
)
def test_bad_entry_is_refused_with_a_message(
    panel: ControlsPanel, state: ExplorerState, name: str, text: str
) -> None:
    control = panel.controls[name]
    before, revision = state.inputs, state.revision
    control.entry.value = text
    assert state.inputs == before
    assert state.revision == revision
    assert control.message.text, "a refused entry must say why"
    assert "Error" in control.message.value
    assert control.spec.symbol in control.message.text


def test_good_entry_sets_state_and_clears_the_message(
    panel: ControlsPanel, state: ExplorerState
) -> None:
    control = panel.controls["K1"]
    control.entry.value = "abc"
    assert control.message.text
    control.entry.value = " 2.5e-2 "
    assert state.K1 == 0.025
    assert control.message.text == ""
    assert control.slider.value == 0.025
    assert control.entry.value == "0.025"


def test_minus_sign_and_exponent_forms(panel: ControlsPanel) -> None:
    assert parse_entry("1E-2", "K1", 1e-4, 100) == 0.01
    assert parse_entry("1e2", "K1", 1e-4, 100) == 100.0


def test_slider_moves_state_and_entry(panel: ControlsPanel, state: ExplorerState) -> None:
    control = panel.controls["activity_ratio"]
    control.slider.value = 1.2
    assert state.activity_ratio == 1.2
    assert control.entry.value == "1.2"
    assert state.results["activity_ratio"] == pytest.approx(1.2)


def test_state_change_updates_controls(panel: ControlsPanel, state: ExplorerState) -> None:
    with state.batch():
        state.K2 = 0.3
        state.model = "quasi_steady"
    assert panel.controls["K2"].slider.value == 0.3
    assert panel.controls["K2"].entry.value == "0.3"
    assert panel.model_control.dropdown.value == "quasi_steady"


def test_kinase_ratio_control_follows_and_sets(panel: ControlsPanel, state: ExplorerState) -> None:
    control = panel.controls["kinase_ratio"]
    assert control.slider.value == pytest.approx(state.kinase_ratio)
    state.phosphatase_ratio = 0.1
    # Range and value move together: E1/W follows E2/W at fixed activity ratio.
    low, high = state.kinase_ratio_bounds()
    assert control.slider.base**control.slider.min == pytest.approx(low)
    assert control.slider.base**control.slider.max == pytest.approx(high)
    assert control.slider.value == pytest.approx(state.kinase_ratio)
    control.entry.value = "0.2"
    assert state.kinase_ratio == pytest.approx(0.2)
    assert panel.controls["activity_ratio"].slider.value == pytest.approx(state.activity_ratio)


def test_model_and_readout_dropdowns(panel: ControlsPanel, state: ExplorerState) -> None:
    panel.model_control.dropdown.value = "quasi_steady"
    panel.readout_control.dropdown.value = "free_modified"
    assert (state.model, state.readout) == ("quasi_steady", "free_modified")


def test_binding_rates_only_for_mass_action(panel: ControlsPanel, state: ExplorerState) -> None:
    state.model = "quasi_steady"
    assert panel.controls["kinase_kon"].slider.disabled
    assert panel.controls["phosphatase_kon"].entry.disabled
    assert not panel.controls["K1"].slider.disabled
    state.model = "mass_action"
    assert not panel.controls["kinase_kon"].slider.disabled


def test_units_are_shown(panel: ControlsPanel) -> None:
    assert "µM" in panel.controls["substrate_total"].slider.description
    assert "1/s" in panel.controls["kinase_kcat"].slider.description
    assert "1/(µM·s)" in panel.controls["kinase_kon"].slider.description


def test_every_control_is_keyboard_reachable(panel: ControlsPanel) -> None:
    # ipywidgets sliders, text boxes and dropdowns take focus and keys; none may opt out.
    for control in panel.controls.values():
        assert control.slider.tabbable is not False and control.entry.tabbable is not False
        assert control.slider.readout is False  # the slider's own readout would clamp silently


@pytest.mark.parametrize("name", ["activity_ratio", "K2", "phosphatase_ratio", "kinase_ratio"])
def test_browser_snapping_echo_does_not_change_the_state(
    panel: ControlsPanel, state: ExplorerState, name: str
) -> None:
    # The browser's log slider snaps an off-grid value to its step grid and sends the snapped
    # value back although nobody moved it; the state must keep the value that was set.
    import math

    control = panel.controls[name]
    low, high = control.bounds()
    target = math.sqrt(low * high) * 1.0123  # off the slider grid
    control.entry.value = f"{target:.6g}"
    kept = control.current()
    slider = control.slider
    grid = slider.min + round((math.log10(kept) - slider.min) / slider.step) * slider.step
    slider.set_state({"value": 10.0 ** (grid + 1e-13)})  # as the front end sends it
    assert control.current() == kept
    # A real move (one arrow-key step) does reach the state.
    slider.set_state({"value": 10.0 ** (grid + slider.step)})
    assert math.log10(control.current()) == pytest.approx(grid + slider.step, abs=1e-12)
