"""Moving a slider makes every mark equal the core's numbers (no kernel, no browser)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger.core import readout_ceiling, steady_state, steepness_map, thresholds
from hairtrigger.core.timecourse import time_course
from hairtrigger.widgets import Explorer
from hairtrigger.widgets.state import cycle_arrays


def _gk(r: np.ndarray, k1: float, k2: float) -> np.ndarray:
    """Goldbeter & Koshland (1981) PNAS 78:6840: modified fraction, written out here [F].

    G = 2 r K2 / (B + sqrt(B^2 - 4 (1 - r) r K2)), B = 1 - r + K1 + r K2 (V2 = 1).
    """
    b = 1.0 - r + k1 + r * k2
    return 2.0 * r * k2 / (b + np.sqrt(b * b - 4.0 * (1.0 - r) * r * k2))


def _move(explorer: Explorer, name: str, value: float) -> None:
    explorer.controls.controls[name].slider.value = value
    explorer.flush()


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
@pytest.mark.parametrize(
    "slider, value",
    [("activity_ratio", 1.3), ("K1", 0.02), ("phosphatase_ratio", 0.1), ("K2", 0.5)],
)
def test_every_mark_equals_the_core(
    explorer: Explorer, model: str, slider: str, value: float
) -> None:
    state = explorer.state
    state.model = model
    _move(explorer, slider, value)
    assert getattr(state, slider) == value
    cycle = state.cycle
    readout = state.readout
    params = cycle_arrays(cycle)

    # Response curve: steady readout along the activity-ratio axis.
    curve = explorer.curve
    r = np.asarray(curve.readout_line.x)
    params_r = dict(params, kinase_total=r * cycle.phosphatase_vmax / cycle.kinase_kcat)
    ss = steady_state(params_r, model)
    np.testing.assert_allclose(curve.readout_line.y, ss.readout(readout), rtol=1e-12)
    np.testing.assert_allclose(
        curve.unmodified_line.y, ss.unmodified_readout(readout), rtol=1e-12, atol=1e-300
    )
    if model == "mass_action":
        assert curve.quasi_line.visible
        quasi = steady_state(params_r, "quasi_steady").readout(readout)
        np.testing.assert_allclose(curve.quasi_line.y, quasi, rtol=1e-12)
    else:
        assert not curve.quasi_line.visible
        np.testing.assert_allclose(curve.readout_line.y, _gk(r, state.K1, state.K2), rtol=1e-9)
    here = steady_state(params, model).readout(readout)
    assert curve.operating_point.x[0] == pytest.approx(cycle.activity_ratio, rel=1e-14)
    assert curve.operating_point.y[0] == pytest.approx(float(here), rel=1e-13)
    ceiling = float(readout_ceiling(params, model, readout))
    np.testing.assert_allclose(curve.ceiling_line.y, [ceiling, ceiling], rtol=1e-13)
    th = thresholds(params, model, readout)
    expected = [
        (float(th[f"activity_ratio_{p}"]), p / 100)
        for p in (10, 50, 90)
        if math.isfinite(float(th[f"activity_ratio_{p}"]))
    ]
    if expected:
        np.testing.assert_allclose(curve.thresholds.x, [x for x, _ in expected], rtol=1e-12)
        np.testing.assert_allclose(curve.thresholds.y, [y for _, y in expected], rtol=1e-12)
    for line in (curve.readout_line, curve.unmodified_line, curve.thresholds, curve.band):
        assert np.isfinite(np.asarray(line.y, dtype=float)).all()

    # Steepness map: values from the core at the current enzyme levels; crosshair at (K1, K2).
    steep = explorer.steepness
    image = steep.current
    km1 = image.k1 * cycle.substrate_total
    km2 = image.k2 * cycle.substrate_total
    values = steepness_map(cycle, km1[None, :], km2[:, None], model, readout, state.map_measure)
    np.testing.assert_array_equal(np.isnan(values), ~image.defined)
    np.testing.assert_allclose(image.values[image.defined], values[image.defined], rtol=1e-12)
    np.testing.assert_allclose(steep.crosshair.x[0], [state.K1, state.K1])
    np.testing.assert_allclose(steep.crosshair.y[1], [state.K2, state.K2])
    assert steep.point.x[0] == state.K1 and steep.point.y[0] == state.K2

    # Time course: the core's course for this step, drawn as fractions of W.
    course = state.time_course
    after = cycle.with_activity_ratio(state.step_activity_ratio)
    reference = time_course(
        cycle,
        {"kinase_total": after.kinase_total},
        float(course.t[-1]),
        len(course.t),
        model=model,
        readout=readout,
    )
    panel = explorer.time_course
    np.testing.assert_allclose(panel.readout_line.y, reference["readout"], rtol=1e-12)
    np.testing.assert_allclose(
        panel.species_lines.y[1], reference["modified"] / cycle.substrate_total, rtol=1e-12
    )
    np.testing.assert_allclose(panel.readout_line.x, reference["t"], rtol=1e-15)
    if course.half_time is not None:
        assert panel.half_time_marker.visible
        assert panel.half_time_marker.x[0] == course.half_time

    # Table: the numbers shown are the results.
    text = explorer.table.table.value
    assert f"{state.results['readout_value']:.4g}" in text
    if state.results["hill_coefficient"] is not None:
        assert f"{state.results['hill_coefficient']:.4g}" in text


def test_marks_never_receive_nan(explorer: Explorer) -> None:
    state = explorer.state
    # Enzymes as abundant as substrate: absolute 90 % unreachable, thresholds undefined.
    with state.batch():
        state.model = "mass_action"
        state.phosphatase_ratio = 1.0
    explorer.flush()
    assert state.results["activity_ratio_90"] is None
    for mark in explorer.curve.figure.marks + explorer.time_course.figure.marks:
        for trait in ("x", "y"):
            data = np.asarray(getattr(mark, trait), dtype=float)
            assert np.isfinite(data).all(), (type(mark).__name__, trait)
    assert not explorer.curve.band.visible


def test_pinned_curves_are_drawn(explorer: Explorer) -> None:
    explorer.snapshots.pin()
    explorer.state.K1 = 0.5
    curve = explorer.curve
    assert curve.pinned_lines.visible
    pinned = explorer.state.pinned[0]
    r = np.asarray(curve.pinned_lines.x[0])
    c = pinned.cycle
    params = dict(cycle_arrays(c), kinase_total=r * c.phosphatase_vmax / c.kinase_kcat)
    np.testing.assert_allclose(
        curve.pinned_lines.y[0],
        steady_state(params, pinned.model).readout(pinned.readout),
        rtol=1e-12,
    )
    assert "pinned" in curve.legend.value


def test_relative_basis_moves_the_markers(explorer: Explorer) -> None:
    state = explorer.state
    with state.batch():
        state.model = "mass_action"
        state.phosphatase_ratio = 0.5
    explorer.curve.basis.value = "relative"
    assert state.threshold_basis == "relative"
    ceiling = state.results["readout_ceiling"]
    np.testing.assert_allclose(
        explorer.curve.thresholds.y, [0.1 * ceiling, 0.5 * ceiling, 0.9 * ceiling]
    )
    np.testing.assert_allclose(
        explorer.curve.thresholds.x,
        [state.results["relative"][f"activity_ratio_{p}"] for p in (10, 50, 90)],
    )


def test_window_choices(explorer: Explorer) -> None:
    curve = explorer.curve
    curve.span.value = "whole r range"
    assert (curve.x_scale.min, curve.x_scale.max) == (1e-3, 1e3)
    curve.span.value = "1 decade"
    ec50 = explorer.state.results["activity_ratio_50"]
    assert math.log10(curve.x_scale.max / curve.x_scale.min) == pytest.approx(1.0)
    centre = math.sqrt(curve.x_scale.min * curve.x_scale.max)
    assert abs(math.log10(centre / ec50)) <= 1.0 / 40 + 1e-12  # centred to 1/20 of the window


def test_switching_times_through_the_widgets_match_published_limits() -> None:
    from hairtrigger.widgets import ExplorerState

    # Zero-order limit: the readout crosses the range at the constant rate V1 - V2, so the
    # 10 -> 90 % time is 0.8 W / (V1 - V2) [F] (REFERENCES.md, Dynamics).
    state = ExplorerState(
        model="quasi_steady", K1=1e-4, K2=1e-4, activity_ratio=0.5, step_activity_ratio=2.0
    )
    cycle = state.cycle
    v2 = cycle.phosphatase_vmax
    expected = 0.8 * cycle.substrate_total / (2.0 * v2 - v2)
    assert state.time_course.switching_time == pytest.approx(expected, rel=2e-3)
    # Linearised relaxation at the symmetric point (K1 = K2 = K, V1 = V2 = V):
    # tau = W (K + 0.5)^2 / (2 V K) [F].
    k = 0.2
    with state.batch():
        state.K1, state.K2 = k, k
        state.activity_ratio, state.step_activity_ratio = 0.5, 1.0
    tau = state.substrate_total * (k + 0.5) ** 2 / (2.0 * v2 * k)
    assert state.time_course.relaxation_time == pytest.approx(tau, rel=1e-12)
    panel_half = state.time_course.half_time
    assert panel_half is not None and 0 < panel_half < state.time_course.t[-1]
