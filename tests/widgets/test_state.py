"""The shared state: tagged, bounded parameters; one recompute per change and per batch."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger.core import Cycle, evaluate
from hairtrigger.widgets import PARAMETERS, ExplorerState, ParameterError
from hairtrigger.widgets.panels import ControlsPanel

BAD_VALUES = [True, float("nan"), float("inf"), -1.0, 0.0, "0.1", None, 1e12]


def test_parameters_are_tagged_with_units_and_bounds(state: ExplorerState) -> None:
    tagged = state.traits(param=True)
    assert set(tagged) == {spec.name for spec in PARAMETERS}
    for spec in PARAMETERS:
        meta = tagged[spec.name].metadata
        assert meta["unit"] == spec.unit
        assert (meta["low"], meta["high"]) == (spec.low, spec.high)
    assert state.trait_metadata("substrate_total", "unit") == "µM"
    assert state.trait_metadata("kinase_kcat", "unit") == "1/s"


def test_slider_bounds_equal_trait_bounds(state: ExplorerState) -> None:
    panel = ControlsPanel(state)
    for spec in PARAMETERS:
        slider = panel.controls[spec.name].slider
        assert slider.base**slider.min == pytest.approx(spec.low, rel=1e-15)
        assert slider.base**slider.max == pytest.approx(spec.high, rel=1e-15)
        assert slider.base**slider.min >= spec.low and slider.base**slider.max <= spec.high


@pytest.mark.parametrize("value", BAD_VALUES)
@pytest.mark.parametrize("name", ["activity_ratio", "K1", "substrate_total"])
def test_bad_values_raise_and_change_nothing(
    state: ExplorerState, name: str, value: object
) -> None:
    before = (getattr(state, name), state.revision, dict(state.results))
    with pytest.raises(ParameterError, match=name):
        setattr(state, name, value)
    assert (getattr(state, name), state.revision, dict(state.results)) == before
    assert isinstance(ParameterError("x"), ValueError)


def test_numpy_floats_are_accepted(state: ExplorerState) -> None:
    state.K1 = np.float32(0.25)
    assert state.K1 == pytest.approx(0.25) and type(state.K1) is float


def test_one_recompute_per_change(state: ExplorerState) -> None:
    start = state.revision
    state.K1 = 0.2
    state.K1 = 0.2  # unchanged: no recompute
    state.model = "quasi_steady"
    assert state.revision == start + 2


def test_one_recompute_per_batch(state: ExplorerState) -> None:
    start = state.revision
    with state.batch():
        for k in np.geomspace(0.01, 1.0, 50):
            state.K1 = float(k)
            state.K2 = float(k) / 2
        state.model = "quasi_steady"
        with state.batch():  # nested batches recompute once, at the outer end
            state.substrate_total = 3.0
    assert state.revision == start + 1
    assert state.results["K1"] == pytest.approx(1.0)
    assert state.results["K2"] == pytest.approx(0.5)


def test_batch_rolls_back_on_a_bad_value(state: ExplorerState) -> None:
    before = state.inputs
    start = state.revision
    with pytest.raises(ParameterError):
        with state.batch():
            state.K1 = 0.3
            state.substrate_total = 7.0
            state.K2 = -1.0
    assert state.inputs == before
    assert state.revision == start


def test_results_are_the_core_evaluate_results(state: ExplorerState) -> None:
    state.model = "mass_action"
    assert state.results == evaluate(state.to_cycle(), "mass_action", state.readout)
    assert state.cycle == state.to_cycle()


def test_coordinates_round_trip() -> None:
    cycle = Cycle(
        substrate_total=4.0,
        kinase_total=0.038,
        kinase_kcat=2.5,
        kinase_km=0.12,
        kinase_kon=80.0,
        phosphatase_total=0.05,
        phosphatase_kcat=2.0,
        phosphatase_km=0.16,
        phosphatase_kon=60.0,
    )
    state = ExplorerState()
    state.set_cycle(cycle, model="quasi_steady")
    back = state.to_cycle()
    for key, value in cycle.as_dict().items():
        assert getattr(back, key) == pytest.approx(value, rel=1e-13)
    assert state.K1 == pytest.approx(0.03) and state.activity_ratio == pytest.approx(0.95)


def test_out_of_range_cycle_is_refused_whole() -> None:
    state = ExplorerState()
    before = state.inputs
    cycle = state.to_cycle().replace(kinase_km=1e-9)
    with pytest.raises(ParameterError, match="K1 = M1/W"):
        state.set_cycle(cycle)
    assert state.inputs == before


def test_kinase_ratio_moves_the_activity_ratio(state: ExplorerState) -> None:
    # E1/W = r k2 (E2/W) / k1
    state.set_kinase_ratio(0.03)
    expected = 0.03 * state.kinase_kcat / (state.phosphatase_kcat * state.phosphatase_ratio)
    assert state.activity_ratio == pytest.approx(expected)
    assert state.kinase_ratio == pytest.approx(0.03)
    assert state.to_cycle().kinase_total == pytest.approx(0.03 * state.substrate_total)
    low, high = state.kinase_ratio_bounds()
    with pytest.raises(ParameterError):
        state.set_kinase_ratio(high * 1.01)


def test_phosphatase_level_keeps_activity_ratio(state: ExplorerState) -> None:
    r = state.activity_ratio
    state.phosphatase_ratio = 0.5
    assert state.activity_ratio == r
    assert state.to_cycle().activity_ratio == pytest.approx(r, rel=1e-14)


def test_unknown_setting_is_refused() -> None:
    with pytest.raises(ValueError, match="unknown or read-only"):
        ExplorerState(Km=0.1)
    with pytest.raises(ValueError, match="read-only"):
        ExplorerState(results={})


def test_derived_traits_are_read_only(state: ExplorerState) -> None:
    with pytest.raises(Exception, match="read-only"):
        state.results = {}


def test_a_failed_recompute_is_reported_not_raised(state: ExplorerState, monkeypatch) -> None:
    import hairtrigger.widgets.state as module

    def broken(*args: object, **kwargs: object) -> None:
        raise ArithmeticError("solver broke")

    monkeypatch.setattr(module, "evaluate", broken)
    before = dict(state.results)
    state.K1 = 0.5
    assert "solver broke" in state.problem
    assert state.results == before
    monkeypatch.undo()
    state.K1 = 0.4
    assert state.problem == ""


def test_examples_in_docstring() -> None:
    state = ExplorerState(K1=0.01, K2=0.01, model="quasi_steady")
    # Goldbeter & Koshland (1981) PNAS 78:6840, Rv = 81(K1+0.1)(K2+0.1)/((K1+0.9)(K2+0.9)) [F]
    rv = 81 * (0.01 + 0.1) ** 2 / (0.01 + 0.9) ** 2
    assert state.results["response_coefficient"] == pytest.approx(rv, rel=1e-12)
    assert state.results["hill_coefficient"] == pytest.approx(
        math.log(81) / math.log(rv), rel=1e-12
    )
