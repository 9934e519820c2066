"""Mass-action courses against a six-species scipy reference; conservation; stiff extremes."""

from __future__ import annotations

import numpy as np
import pytest
from _tc_helpers import make_cycle
from _tc_references import mass_action_reference

from hairtrigger.core import _radau
from hairtrigger.core.schedule import Ramp, Step
from hairtrigger.core.steady import mass_action_state
from hairtrigger.core.timecourse import time_course


def assert_conserved(course, rel: float = 1e-9) -> None:
    """Substrate and both enzymes conserved at every sample, all species non-negative."""
    w = course.substrate_total
    total = (
        course["unmodified"]
        + course["modified"]
        + course["kinase_complex"]
        + course["phosphatase_complex"]
    )
    np.testing.assert_allclose(total, w, rtol=rel, atol=0)
    np.testing.assert_allclose(
        course.free_kinase + course["kinase_complex"], course.kinase_total, rtol=rel
    )
    np.testing.assert_allclose(
        course.free_phosphatase + course["phosphatase_complex"], course.phosphatase_total, rtol=rel
    )
    for key in ("unmodified", "modified", "kinase_complex", "phosphatase_complex"):
        assert np.all(course[key] >= -rel * w), key
    assert np.all(course.free_kinase >= -rel * course.kinase_total)
    assert np.all(course.free_phosphatase >= -rel * course.phosphatase_total)


CASES = [
    pytest.param({}, {"kinase_total": 0.02}, 300.0, id="scarce-enzymes-up"),
    pytest.param(
        {"kinase_total": 0.5, "phosphatase_total": 0.3},
        {"kinase_total": 0.2},
        60.0,
        id="abundant-down",
    ),
    pytest.param(
        {
            "kinase_km": 0.01,
            "phosphatase_km": 0.01,
            "kinase_kon": 1000.0,
            "phosphatase_kon": 1000.0,
        },
        {"phosphatase_total": 0.004},
        500.0,
        id="saturated-phosphatase-down",
    ),
    pytest.param({}, {"kinase_kcat": 3.0, "phosphatase_km": 0.2}, 200.0, id="turnover-and-km"),
]


@pytest.mark.parametrize(("changes", "steps", "t_end"), CASES)
def test_mass_action_matches_scipy_six_species(changes, steps, t_end) -> None:
    before = make_cycle(**changes)
    after = before.replace(**steps)
    course = time_course(before, steps, t_end, 200, model="mass_action")
    assert course.success and course.method == "ode"
    ref = mass_action_reference(before, after, course.t)
    w = before.substrate_total
    for key in ("unmodified", "modified", "kinase_complex", "phosphatase_complex"):
        assert np.max(np.abs(course[key] - ref[key])) < 1e-7 * w, key
    np.testing.assert_allclose(course.free_kinase, ref["free_kinase"], atol=1e-7 * w)
    assert_conserved(course)


def test_settles_to_mass_action_steady_state(cycle) -> None:
    course = time_course(cycle, {"kinase_total": 0.03}, 3000.0, 50, model="mass_action")
    final = mass_action_state(cycle.replace(kinase_total=0.03).arrays())
    assert course["modified"][-1] == pytest.approx(float(final.modified), rel=1e-7)
    assert course["phosphatase_complex"][-1] == pytest.approx(
        float(final.phosphatase_complex), rel=1e-7
    )


def test_starts_from_steady_state_without_drift(cycle) -> None:
    course = time_course(
        cycle, {"phosphatase_total": cycle.phosphatase_total}, 500.0, 20, model="mass_action"
    )
    assert np.ptp(course["modified"]) < 1e-10


def test_ramps_and_timed_steps_match_reference() -> None:
    before = make_cycle(
        kinase_total=0.02, phosphatase_total=0.05, kinase_km=0.1, phosphatase_km=0.08
    )
    schedule = [Ramp("kinase_total", 0.06, 5.0, 45.0), Ramp("phosphatase_total", 0.02, 20.0, 60.0)]
    course = time_course(before, schedule, 120.0, 121, model="mass_action")
    assert course.success

    def slopes(t: float) -> tuple[float, float]:
        return (0.001 if 5.0 <= t < 45.0 else 0.0, -0.00075 if 20.0 <= t < 60.0 else 0.0)

    ref = mass_action_reference(before, before, course.t, enzyme_slopes=slopes)
    for key in ("modified", "kinase_complex", "phosphatase_complex"):
        assert np.max(np.abs(course[key] - ref[key])) < 1e-6, key
    assert_conserved(course)
    np.testing.assert_allclose(course.kinase_total[course.t == 25.0], 0.04)


def test_enzyme_removal_is_proportional_and_releases_substrate() -> None:
    before = make_cycle(kinase_total=0.4, phosphatase_total=0.4)
    start = mass_action_state(before.arrays())
    course = time_course(
        before,
        [Step("kinase_total", 0.1, 0.0), Step("phosphatase_total", 0.2, 0.0)],
        1.0,
        2,
        model="mass_action",
    )
    assert course["kinase_complex"][0] == pytest.approx(
        0.25 * float(start.kinase_complex), rel=1e-14
    )
    assert course["phosphatase_complex"][0] == pytest.approx(
        0.5 * float(start.phosphatase_complex), rel=1e-14
    )
    released = 0.5 * float(start.phosphatase_complex)
    assert course["modified"][0] == pytest.approx(float(start.modified) + released, rel=1e-14)
    assert_conserved(course)


def test_compiled_start_equals_core_steady_state() -> None:
    for changes in (
        {},
        {"kinase_km": 1e-4, "phosphatase_km": 1e-4},
        {"kinase_total": 2.0, "phosphatase_total": 0.3},
    ):
        c = make_cycle(**changes)
        out = np.empty(3)
        _radau.mass_action_start(
            c.substrate_total,
            c.kinase_total,
            c.kinase_kcat,
            c.kinase_km,
            c.phosphatase_total,
            c.phosphatase_kcat,
            c.phosphatase_km,
            out,
        )
        core = mass_action_state(c.arrays())
        np.testing.assert_allclose(
            out,
            [float(core.modified), float(core.kinase_complex), float(core.phosphatase_complex)],
            rtol=1e-13,
        )


STIFF = [
    pytest.param(kon, ratio, id=f"kon{kon:.0e}-K{ratio:.0e}")
    for kon in (1e4, 1e5, 1e6)
    for ratio in (1e-4, 1e-2)
]


@pytest.mark.parametrize(("kon", "km_ratio"), STIFF)
def test_stiff_extremes_finish_and_conserve(kon: float, km_ratio: float) -> None:
    """Fast binding (kon up to 1e6 per uM per s) and Km/substrate down to 1e-4."""
    before = make_cycle(
        kinase_km=km_ratio,
        phosphatase_km=km_ratio,
        kinase_kon=kon,
        phosphatase_kon=kon,
        kinase_total=0.009,
    )
    course = time_course(before, {"kinase_total": 0.011}, 3000.0, 200, model="mass_action")
    assert course.success, course.message
    assert np.all(np.isfinite(course.as_array()))
    assert_conserved(course)
    final = mass_action_state(before.replace(kinase_total=0.011).arrays())
    assert course["modified"][-1] == pytest.approx(float(final.modified), rel=1e-6)


def test_failure_is_data_not_exception(cycle) -> None:
    """A step budget too small for the course is reported through success/status/message."""
    from hairtrigger.core import timecourse as module

    original = module.MAX_STEPS
    module.MAX_STEPS = 5
    try:
        course = time_course(cycle, {"kinase_total": 0.02}, 300.0, 50, model="mass_action")
    finally:
        module.MAX_STEPS = original
    assert not course.success and course.status == _radau.STATUS_TOO_MANY_STEPS
    assert "budget" in course.message
    assert np.isnan(course["modified"][-1]) and np.isfinite(course["modified"][0])
