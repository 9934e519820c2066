"""Independent cross-checks: a scipy root finder per point, and long ODE integration.

These use general-purpose tools (scipy.optimize.brentq, scipy.integrate.solve_ivp) on the
textbook equations, written out here from scratch, and compare with the vectorised core.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from hairtrigger.core.steady import mass_action_state, quasi_steady_state
from hairtrigger.core.steepness import inverse_state, readout_ceiling

KEYS = (
    "substrate_total",
    "kinase_total",
    "kinase_kcat",
    "kinase_km",
    "phosphatase_total",
    "phosphatase_kcat",
    "phosphatase_km",
)


def random_params(n: int, seed: int, km_low: float = -4.0) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(seed)
    return {
        "substrate_total": 10 ** rng.uniform(-1, 1, n),
        "kinase_total": 10 ** rng.uniform(-4, 0.5, n),
        "kinase_kcat": 10 ** rng.uniform(-1, 2, n),
        "kinase_km": 10 ** rng.uniform(km_low, 1.5, n),
        "phosphatase_total": 10 ** rng.uniform(-4, 0.5, n),
        "phosphatase_kcat": 10 ** rng.uniform(-1, 2, n),
        "phosphatase_km": 10 ** rng.uniform(km_low, 1.5, n),
    }


def point(params: dict[str, np.ndarray], i: int) -> dict[str, float]:
    return {k: float(params[k][i]) for k in KEYS}


def test_quasi_steady_against_brentq() -> None:
    params = random_params(300, seed=11)
    y = quasi_steady_state(params).modified / params["substrate_total"]
    for i in range(300):
        p = point(params, i)
        v1 = p["kinase_kcat"] * p["kinase_total"]
        v2 = p["phosphatase_kcat"] * p["phosphatase_total"]
        k1 = p["kinase_km"] / p["substrate_total"]
        k2 = p["phosphatase_km"] / p["substrate_total"]

        def balance(x: float) -> float:
            return v1 * (1 - x) / (k1 + 1 - x) - v2 * x / (k2 + x)

        ref = brentq(balance, 0.0, 1.0, xtol=1e-300, rtol=1e-15, maxiter=500)
        assert y[i] == pytest.approx(ref, rel=1e-12, abs=1e-15)


def test_mass_action_against_brentq() -> None:
    """brentq on the substrate balance in the flux v, per point, with plain float arithmetic."""
    params = random_params(400, seed=12)
    s = mass_action_state(params)
    for i in range(400):
        p = point(params, i)
        w, k1, m1 = p["substrate_total"], p["kinase_kcat"], p["kinase_km"]
        k2, m2 = p["phosphatase_kcat"], p["phosphatase_km"]
        v1, v2 = k1 * p["kinase_total"], k2 * p["phosphatase_total"]

        def balance(v: float) -> float:
            return m1 * v / (v1 - v) + m2 * v / (v2 - v) + v / k1 + v / k2 - w

        top = min(v1, v2)
        hi = top * (1 - 1e-15)
        v = brentq(balance, 0.0, hi, xtol=1e-300, rtol=1e-15, maxiter=2000)
        assert s.flux[i] == pytest.approx(v, rel=1e-12)
        assert s.kinase_complex[i] == pytest.approx(v / k1, rel=1e-12)
        assert s.phosphatase_complex[i] == pytest.approx(v / k2, rel=1e-12)
        # free species through V − v: the float reference is only good where it does not cancel
        for vmax, km, got in ((v1, m1, s.unmodified[i]), (v2, m2, s.modified[i])):
            if (vmax - v) / vmax > 1e-4:
                assert got == pytest.approx(km * v / (vmax - v), rel=1e-9)


def test_mass_action_residuals_at_machine_precision() -> None:
    """Every conservation law and both Michaelis relations hold to ~1e-13 relative."""
    params = random_params(20000, seed=13, km_low=-6.0)
    # near-balanced cases: V1 = V2·(1 + δ) with δ down to 1e-12
    n = 4000
    delta = 10 ** np.random.default_rng(5).uniform(-12, -2, n)
    params["kinase_total"][:n] = (
        params["phosphatase_total"][:n]
        * params["phosphatase_kcat"][:n]
        / params["kinase_kcat"][:n]
        * (1 + delta)
    )
    s = mass_action_state(params)
    w = params["substrate_total"]
    total = s.unmodified + s.modified + s.kinase_complex + s.phosphatase_complex
    np.testing.assert_allclose(total, w, rtol=1e-13)
    c1 = params["kinase_total"] * s.unmodified / (params["kinase_km"] + s.unmodified)
    c2 = params["phosphatase_total"] * s.modified / (params["phosphatase_km"] + s.modified)
    np.testing.assert_allclose(s.kinase_complex, c1, rtol=1e-12)
    np.testing.assert_allclose(s.phosphatase_complex, c2, rtol=1e-12)
    assert s.iterations <= 20


def mass_action_rhs(t: float, x: np.ndarray, p: dict[str, float]) -> np.ndarray:
    """Elementary reactions: A + E1 <-> C1 -> B + E1, B + E2 <-> C2 -> A + E2."""
    b, c1, c2 = x
    a = p["substrate_total"] - b - c1 - c2
    f1 = p["kinase_total"] - c1
    f2 = p["phosphatase_total"] - c2
    d1 = p["a1"] * p["kinase_km"] - p["kinase_kcat"]
    d2 = p["a2"] * p["phosphatase_km"] - p["phosphatase_kcat"]
    bind1 = p["a1"] * a * f1 - d1 * c1
    bind2 = p["a2"] * b * f2 - d2 * c2
    return np.array(
        [
            p["kinase_kcat"] * c1 - bind2,
            bind1 - p["kinase_kcat"] * c1,
            bind2 - p["phosphatase_kcat"] * c2,
        ]
    )


@pytest.mark.parametrize("seed", range(6))
def test_mass_action_against_long_integration(seed: int) -> None:
    """Integrate the elementary reactions from all-unmodified until stationary."""
    params = random_params(1, seed=100 + seed, km_low=-2.0)
    p = point(params, 0)
    p["a1"] = 10 * p["kinase_kcat"] / p["kinase_km"]  # koff = 9·kcat >= 0
    p["a2"] = 10 * p["phosphatase_kcat"] / p["phosphatase_km"]
    s = mass_action_state(params)
    x = np.zeros(3)
    t_end = 1.0
    for _ in range(40):  # extend until the state stops moving (pitfall 8: include the transit)
        sol = solve_ivp(
            mass_action_rhs,
            (0, t_end),
            x,
            method="LSODA",
            args=(p,),
            rtol=1e-12,
            atol=1e-15 * p["substrate_total"],
        )
        x_new = sol.y[:, -1]
        if np.max(np.abs(mass_action_rhs(0, x_new, p))) < 1e-13 * p["substrate_total"] * max(
            p["kinase_kcat"], p["phosphatase_kcat"]
        ):
            x = x_new
            break
        x, t_end = x_new, t_end * 2
    else:
        pytest.fail("integration did not become stationary")
    np.testing.assert_allclose(
        x,
        [s.modified[0], s.kinase_complex[0], s.phosphatase_complex[0]],
        rtol=1e-6,
        atol=1e-11 * p["substrate_total"],
    )


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
@pytest.mark.parametrize("readout", ["free_modified", "total_modified"])
def test_inverse_then_forward_is_identity(model: str, readout: str) -> None:
    params = random_params(2000, seed=21)
    ceiling = readout_ceiling(params, model, readout)
    target = np.random.default_rng(3).uniform(0.01, 0.99, 2000) * ceiling
    inv = inverse_state(target, params, model, readout)
    assert inv.reachable.all()
    forward_params = dict(params, kinase_total=inv.kinase_total)
    from hairtrigger.core.steady import steady_state

    y = steady_state(forward_params, model).readout(readout)
    np.testing.assert_allclose(y, target, rtol=1e-9)


def test_ceiling_is_the_large_kinase_limit() -> None:
    params = random_params(500, seed=31)
    for readout in ("free_modified", "total_modified"):
        ceiling = readout_ceiling(params, "mass_action", readout)
        huge = dict(params, kinase_total=params["kinase_total"] * 1e14)
        y = mass_action_state(huge).readout(readout)
        np.testing.assert_allclose(y, ceiling, rtol=1e-6)
        assert (mass_action_state(params).readout(readout) < ceiling).all()
        above = inverse_state(np.minimum(ceiling * 1.001, 0.9999), params, "mass_action", readout)
        assert not above.reachable[ceiling * 1.001 < 0.9999].any()
