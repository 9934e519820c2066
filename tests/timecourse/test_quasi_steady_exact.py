"""The exact quasi-steady solution against scipy's ODE solvers (B(t) compared, never t(B))."""

from __future__ import annotations

import numpy as np
import pytest
from _tc_helpers import make_cycle
from _tc_references import quasi_steady_reference

from hairtrigger.core.schedule import Ramp, Step
from hairtrigger.core.timecourse import COURSE_KEYS, QuasiSteadyTransit, time_course

CASES = [
    # (changes to the base cycle, kinase amount after the step, t_end)
    pytest.param({}, 0.02, 300.0, id="michaelian-up"),
    pytest.param({"kinase_km": 1e-4, "phosphatase_km": 1e-4}, 0.011, 2000.0, id="zero-order-up"),
    pytest.param(
        {"kinase_km": 1e-4, "phosphatase_km": 1e-4, "kinase_total": 0.011},
        0.009,
        2000.0,
        id="zero-order-down",
    ),
    pytest.param({"kinase_km": 10.0, "phosphatase_km": 3.0}, 0.03, 5000.0, id="first-order"),
    pytest.param(
        {"kinase_km": 0.01, "phosphatase_km": 0.2, "substrate_total": 5.0},
        0.004,
        3000.0,
        id="asymmetric",
    ),
    pytest.param({"kinase_total": 0.005}, 0.01, 400.0, id="to-V1-equal-V2"),
    pytest.param({}, 0.010000001, 400.0, id="tiny-step-near-V1-equal-V2"),
]


@pytest.mark.parametrize(("changes", "kinase_after", "t_end"), CASES)
def test_exact_solution_matches_lsoda(
    changes: dict[str, float], kinase_after: float, t_end: float
) -> None:
    before = make_cycle(**changes)
    after = before.replace(kinase_total=kinase_after)
    course = time_course(before, {"kinase_total": kinase_after}, t_end, 200)
    assert course.method == "exact" and course.success
    reference = quasi_steady_reference(
        before,
        lambda _t: after.kinase_vmax,
        after.phosphatase_vmax,
        after.kinase_km,
        after.phosphatase_km,
        course.t,
    )
    w = before.substrate_total
    assert np.max(np.abs(course["modified"] - reference)) <= 1e-9 * w
    np.testing.assert_allclose(course["unmodified"] + course["modified"], w, rtol=1e-12)


def test_mapping_interface(cycle) -> None:
    course = time_course(cycle, {"kinase_total": 0.02}, 100.0, 11)
    assert list(course) == list(COURSE_KEYS) and len(course) == 6
    assert dict(course)["t"][-1] == 100.0
    np.testing.assert_array_equal(course["t"], np.linspace(0, 100, 11))
    np.testing.assert_array_equal(course["kinase_complex"], 0.0)
    assert course["readout"][0] == pytest.approx(0.5, abs=1e-15)
    with pytest.raises(KeyError):
        course["flux"]
    assert course == time_course(cycle, {"kinase_total": 0.02}, 100.0, 11)


def test_smooth_through_equal_rates() -> None:
    """t(B) has no 1/(V1 − V2): steps just either side of V1 = V2 give neighbouring courses."""
    before = make_cycle(kinase_total=0.004, kinase_km=0.02, phosphatase_km=0.03)
    courses = [
        time_course(before, {"kinase_total": 0.01 * (1 + eps)}, 500.0, 101)["modified"]
        for eps in (-1e-9, 0.0, 1e-9)
    ]
    # dB/dE1 is of order W/E1 ~ 100 here, so 1e-9 relative in E1 moves B by ~1e-9.
    assert np.max(np.abs(courses[0] - courses[1])) < 5e-9
    assert np.max(np.abs(courses[2] - courses[1])) < 5e-9
    assert np.all(np.diff(courses[1]) > 0)


def test_exact_equals_compiled_ode_path() -> None:
    before = make_cycle(kinase_km=0.003, phosphatase_km=0.004, kinase_total=0.008)
    exact = time_course(before, {"kinase_total": 0.013}, 800.0, 200, method="exact")
    ode = time_course(before, {"kinase_total": 0.013}, 800.0, 200, method="ode", rtol=1e-11)
    assert ode.method == "ode" and ode.success
    assert np.max(np.abs(exact["modified"] - ode["modified"])) < 1e-8


def test_timed_steps_chain_exact_segments() -> None:
    before = make_cycle(kinase_km=0.02, phosphatase_km=0.02)
    steps = [
        Step("kinase_total", 0.02, 0.0),
        Step("kinase_total", 0.006, 150.0),
        Step("phosphatase_kcat", 2.0, 400.0),
    ]
    course = time_course(before, steps, 900.0, 181)
    assert course.method == "exact"

    def v1(t: float) -> float:
        return 0.02 if t < 150.0 else 0.006

    # Reference: integrate piecewise (restart at each step time so LSODA never steps across one).
    pieces, b0 = [], None
    for start, end, v1_value, v2_value in (
        (0.0, 150.0, 0.02, 0.01),
        (150.0, 400.0, 0.006, 0.01),
        (400.0, 900.0, 0.006, 0.02),
    ):
        local = course.t[(course.t >= start) & ((course.t < end) | (end == 900.0))] - start
        grid = np.union1d(local, [end - start])
        ref = quasi_steady_reference(
            before, lambda _t, v=v1_value: v, v2_value, 0.02, 0.02, grid, b0=b0
        )
        pieces.append(ref[np.isin(grid, local)])
        b0 = float(ref[-1])
    assert v1(0.0) == 0.02
    assert np.max(np.abs(course["modified"] - np.concatenate(pieces))) < 1e-9
    # Sample exactly at a step time shows the state just after the step (continuous in B).
    np.testing.assert_allclose(course.kinase_total[course.t == 150.0], 0.006)


def test_ramp_uses_integrator_and_matches_lsoda() -> None:
    before = make_cycle(kinase_km=0.01, phosphatase_km=0.01, kinase_total=0.005)
    course = time_course(before, Ramp("kinase_total", 0.015, 10.0, 210.0), 400.0, 201)
    assert course.method == "ode" and course.success

    def v1(t: float) -> float:
        return 0.005 + 0.01 * min(max(t - 10.0, 0.0), 200.0) / 200.0

    reference = quasi_steady_reference(before, v1, 0.01, 0.01, 0.01, course.t)
    assert np.max(np.abs(course["modified"] - reference)) < 1e-7
    np.testing.assert_allclose(course.kinase_total[course.t == 110.0], 0.01)


def test_transit_time_is_inverse_of_solution() -> None:
    transit = QuasiSteadyTransit(1.0, 0.012, 0.01, 1e-3, 2e-3, 0.05, 0.95)
    t = transit.time_at_fraction(np.array([0.1, 0.5, 0.9, 0.999]))
    b, _a = transit.solve(t)
    progress = (b - 0.05) / (transit.b_star - 0.05)
    np.testing.assert_allclose(progress, [0.1, 0.5, 0.9, 0.999], rtol=1e-10)


def test_no_change_is_flat(cycle) -> None:
    course = time_course(cycle, {"kinase_total": cycle.kinase_total}, 10.0, 5)
    np.testing.assert_array_equal(course["modified"], course["modified"][0])
