"""The sweep's half-time is the real half-time after the default step of `evaluate`.

Checks, each independent of the code under test:
- equality with the scalar `evaluate(...)["dynamics"]` for every set (same definition);
- the quasi-steady ODE integrated by scipy (LSODA, event location) — the equation of
  Goldbeter & Koshland (1981, PNAS 78:6840) with Michaelis–Menten rates;
- the full six-species mass-action network integrated by scipy (Radau, event location);
- the two textbook limits of REFERENCES.md "Dynamics" [F]: zero-order (dy/dt = (V1 − V2)/W)
  and first-order enzymes (a linear ODE, half-time ln 2/λ exactly).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from hairtrigger.core import Cycle, evaluate
from hairtrigger.core.steady import goldbeter_koshland, mass_action_state
from hairtrigger.core.sweep import (
    HALF_TIME,
    HALF_TIME_DOWN,
    QUASI_STEADY_HALF_TIME,
    RELAXATION_HALF_TIME,
    evaluate_sample,
    relaxation_half_time,
    run_sweep,
    sample_ranges,
)
from hairtrigger.core.switching_arrays import (
    quasi_steady_transit_time,
    step_half_time,
    step_time,
)

RANGES = ["kinase_km=0.05:2:log", "phosphatase_km=0.05:2:log", "kinase_total=0.01:0.2:log"]


def _params(cycle: Cycle, samples: int = 6, seed: int = 3) -> tuple[dict, dict]:
    sample = sample_ranges(RANGES, samples, seed=seed)
    params = dict(cycle.as_dict())
    params.update(sample)
    return params, sample


def _cycle_at(cycle: Cycle, sample: dict, k: int) -> Cycle:
    return cycle.replace(**{key: float(v[k]) for key, v in sample.items()})


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
@pytest.mark.parametrize("readout", ["total_modified", "free_modified"])
@pytest.mark.parametrize("direction", ["up", "down"])
def test_equals_the_dynamics_block_of_evaluate(cycle, model, readout, direction):
    params, sample = _params(cycle)
    values = step_half_time(params, model, readout, direction)
    for k in range(len(values)):
        block = evaluate(_cycle_at(cycle, sample, k), model, readout)["dynamics"]
        assert values[k] == pytest.approx(block[direction]["half_time"], rel=1e-12, abs=0.0)


def _quasi_steady_half_time_by_scipy(c: Cycle, after_kinase: float) -> float:
    """Integrate dB/dt = V1·A/(M1 + A) − V2·B/(M2 + B) from the old steady state; find B½."""
    w = c.substrate_total
    b0 = float(goldbeter_koshland(c.kinase_vmax, c.phosphatase_vmax, c.K1, c.K2)) * w
    new = c.replace(kinase_total=after_kinase)
    b1 = float(goldbeter_koshland(new.kinase_vmax, new.phosphatase_vmax, new.K1, new.K2)) * w
    v1, v2 = new.kinase_vmax, new.phosphatase_vmax

    def rhs(_t, y):
        a = w - y[0]
        return [v1 * a / (c.kinase_km + a) - v2 * y[0] / (c.phosphatase_km + y[0])]

    def half(_t, y):
        return y[0] - 0.5 * (b0 + b1)

    half.terminal = True
    sol = solve_ivp(rhs, (0.0, 1e7), [b0], method="LSODA", events=half, rtol=1e-12, atol=1e-16 * w)
    return float(sol.t_events[0][0])


@pytest.mark.parametrize("direction", ["up", "down"])
def test_quasi_steady_closed_form_matches_scipy(cycle, direction):
    params, sample = _params(cycle, 4, seed=5)
    values = step_half_time(params, "quasi_steady", direction=direction)
    for k in range(4):
        c = _cycle_at(cycle, sample, k)
        start, to = (
            (c.replace(kinase_total=0.5 * c.kinase_total), c.kinase_total)
            if direction == "up"
            else (c, 0.5 * c.kinase_total)
        )
        assert values[k] == pytest.approx(_quasi_steady_half_time_by_scipy(start, to), rel=1e-7)


def _mass_action_half_time_by_scipy(c: Cycle, after_kinase: float, readout: str) -> float:
    """Six species (A, B, C1, C2, E1, E2) by scipy Radau from the old steady state."""
    st = mass_action_state(c.arrays())
    a, b = float(st.unmodified), float(st.modified)
    c1, c2 = float(st.kinase_complex), float(st.phosphatase_complex)
    e1 = c.kinase_total - c1 + (after_kinase - c.kinase_total)  # added kinase arrives free
    e2 = c.phosphatase_total - c2
    if after_kinase < c.kinase_total:  # removed kinase leaves free and bound forms alike
        keep = after_kinase / c.kinase_total
        a += c1 * (1.0 - keep)
        c1 *= keep
        e1 = (c.kinase_total - float(st.kinase_complex)) * keep
    new = c.replace(kinase_total=after_kinase)
    st1 = mass_action_state(new.arrays())
    w = c.substrate_total

    def out(y):
        return (y[1] + y[3]) / w if readout == "total_modified" else y[1] / w

    r0 = (
        float(st.modified) + (float(st.phosphatase_complex) if readout == "total_modified" else 0.0)
    ) / w
    r1 = (
        float(st1.modified)
        + (float(st1.phosphatase_complex) if readout == "total_modified" else 0.0)
    ) / w
    a1, d1, k1 = c.kinase_kon, c.kinase_koff, c.kinase_kcat
    a2, d2, k2 = c.phosphatase_kon, c.phosphatase_koff, c.phosphatase_kcat

    def rhs(_t, y):
        aa, bb, cc1, cc2, ee1, ee2 = y
        bind1, bind2 = a1 * ee1 * aa, a2 * ee2 * bb
        return [
            -bind1 + d1 * cc1 + k2 * cc2,
            -bind2 + d2 * cc2 + k1 * cc1,
            bind1 - (d1 + k1) * cc1,
            bind2 - (d2 + k2) * cc2,
            -bind1 + (d1 + k1) * cc1,
            -bind2 + (d2 + k2) * cc2,
        ]

    def half(_t, y):
        return out(y) - 0.5 * (r0 + r1)

    half.terminal = True
    sol = solve_ivp(
        rhs,
        (0.0, 1e6),
        [a, b, c1, c2, e1, e2],
        method="Radau",
        events=half,
        rtol=1e-10,
        atol=1e-15 * w,
    )
    return float(sol.t_events[0][0])


@pytest.mark.parametrize("readout", ["total_modified", "free_modified"])
@pytest.mark.parametrize("direction", ["up", "down"])
def test_mass_action_matches_scipy_radau_on_the_full_network(cycle, readout, direction):
    params, sample = _params(cycle, 3, seed=7)
    values = step_half_time(params, "mass_action", readout, direction)
    for k in range(3):
        c = _cycle_at(cycle, sample, k)
        start, to = (
            (c.replace(kinase_total=0.5 * c.kinase_total), c.kinase_total)
            if direction == "up"
            else (c, 0.5 * c.kinase_total)
        )
        reference = _mass_action_half_time_by_scipy(start, to, readout)
        assert values[k] == pytest.approx(reference, rel=1e-6)


def test_zero_order_limit():
    """K1 = K2 → 0: y crosses (0, 1) at the constant rate (V1 − V2)/W (REFERENCES.md [F]).

    With V1 = 1.5·V2 after the step and y starting near 0 (V1 = 0.75·V2 before), the
    half-time is 0.5·W/(V1 − V2) = W/V2.
    """
    w, v2 = 2.0, 0.1
    p = {
        "substrate_total": w,
        "kinase_total": 0.15,
        "kinase_kcat": 1.0,
        "kinase_km": 1e-5 * w,
        "phosphatase_total": 0.1,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": 1e-5 * w,
    }
    assert float(step_half_time(p)) == pytest.approx(w / v2, rel=1e-3)


def test_first_order_limit_is_the_linear_half_time():
    """Km ≫ W: dB/dt = (V1/M1)·A − (V2/M2)·B is linear, so t½ = ln 2/λ for any step [F]."""
    m = 1e5
    p = {
        "substrate_total": 1.0,
        "kinase_total": 0.03,
        "kinase_kcat": 2.0,
        "kinase_km": m,
        "phosphatase_total": 0.05,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": m,
    }
    linear = math.log(2.0) / (0.06 / m + 0.05 / m)
    assert float(step_half_time(p)) == pytest.approx(linear, rel=1e-4)
    assert float(relaxation_half_time(p)) == pytest.approx(linear, rel=1e-4)


def test_real_half_time_differs_from_the_linear_measure_near_a_saturated_threshold():
    """Why the stand-in had to go: just above the threshold of a zero-order switch the
    restored kinase drives the pool across at the small net rate V1 − V2, which takes far
    longer than ln 2·τ of the linearised equations suggests (DESIGN.md pitfall 8)."""
    p = {
        "substrate_total": 1.0,
        "kinase_total": 0.0101,
        "kinase_kcat": 1.0,
        "kinase_km": 0.001,
        "phosphatase_total": 0.01,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": 0.001,
    }
    real = float(step_half_time(p))
    linear = float(relaxation_half_time(p))
    assert real > 5.0 * linear


def test_no_change_gives_nan_and_shapes_broadcast():
    p = {
        "substrate_total": 1.0,
        "kinase_total": np.array([[0.01], [0.02]]),
        "kinase_kcat": 1.0,
        "kinase_km": np.array([0.1, 0.2, 0.3]),
        "phosphatase_total": 0.01,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": 0.1,
    }
    assert step_half_time(p).shape == (2, 3)
    assert np.isnan(quasi_steady_transit_time(p, p)).all()
    assert step_time(p, 0.9).shape == (2, 3)
    assert np.all(step_time(p, 0.9) > step_time(p, 0.5))


def test_mass_action_without_a_dissociation_rate_is_nan(cycle):
    params = dict(cycle.as_dict(), kinase_kon=np.array([cycle.kinase_kon, 1.0]))
    values = step_half_time(params, "mass_action")
    assert math.isfinite(values[0]) and math.isnan(values[1])


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"direction": "sideways"}, "direction"),
        ({"factor": 1.0}, "factor"),
        ({"factor": True}, "factor"),
        ({"model": "stochastic"}, "model"),
        ({"fraction": 1.0}, "fraction"),
    ],
)
def test_bad_arguments(cycle, kwargs, match):
    with pytest.raises(ValueError, match=match):
        step_time(cycle.as_dict(), **kwargs)


def test_bad_parameters_and_substrate_steps(cycle):
    with pytest.raises(ValueError, match="kinase_km"):
        step_half_time(dict(cycle.as_dict(), kinase_km=-1.0))
    with pytest.raises(ValueError, match="substrate_total"):
        quasi_steady_transit_time(cycle.as_dict(), dict(cycle.as_dict(), substrate_total=9.0))


# --- through the sweep ------------------------------------------------------------------------


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
def test_sweep_quantities(cycle, model):
    params, sample = _params(cycle, 16)
    names = [HALF_TIME, HALF_TIME_DOWN, QUASI_STEADY_HALF_TIME, RELAXATION_HALF_TIME]
    out = evaluate_sample(cycle, sample, model, outputs=names)
    np.testing.assert_array_equal(out[HALF_TIME], step_half_time(params, model))
    np.testing.assert_array_equal(
        out[HALF_TIME_DOWN], step_half_time(params, model, direction="down")
    )
    np.testing.assert_array_equal(out[QUASI_STEADY_HALF_TIME], step_half_time(params))
    if model == "quasi_steady":
        np.testing.assert_array_equal(out[RELAXATION_HALF_TIME], relaxation_half_time(params))
    for k in (0, 7):
        block = evaluate(_cycle_at(cycle, sample, k), model)["dynamics"]
        assert out[RELAXATION_HALF_TIME][k] == pytest.approx(
            math.log(2.0) * block["relaxation_time"], rel=1e-10
        )


def test_mass_action_half_times_do_not_depend_on_chunks(cycle):
    a = run_sweep(cycle, RANGES, 40, model="mass_action", outputs=[HALF_TIME], chunk_size=7)
    b = run_sweep(cycle, RANGES, 40, model="mass_action", outputs=[HALF_TIME])
    assert a.table().tobytes() == b.table().tobytes()
    # NaN exactly where a dissociation rate kon·Km − kcat would be negative.
    possible = (cycle.kinase_kon * a.samples["kinase_km"] >= cycle.kinase_kcat) & (
        cycle.phosphatase_kon * a.samples["phosphatase_km"] >= cycle.phosphatase_kcat
    )
    assert 0 < possible.sum() < possible.size
    np.testing.assert_array_equal(np.isfinite(a.outputs[HALF_TIME]), possible)


@pytest.mark.slow  # the workers load the compiled loop (~10 s on a shared 2-core machine)
def test_cluster_half_times_equal_local(cycle, dask_client):
    """The compiled loop runs in the workers too, with the same numbers to the bit."""
    names = [HALF_TIME, HALF_TIME_DOWN, RELAXATION_HALF_TIME]
    local = run_sweep(cycle, RANGES, 48, model="mass_action", outputs=names, chunk_size=16)
    remote = run_sweep(
        cycle, RANGES, 48, model="mass_action", outputs=names, chunk_size=16, client=dask_client
    )
    assert remote.table().tobytes() == local.table().tobytes()
