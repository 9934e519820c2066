"""Independent reference solutions with scipy (full species sets, no conservation built in)."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from scipy.integrate import solve_ivp

from hairtrigger.core.params import Cycle
from hairtrigger.core.steady import goldbeter_koshland, mass_action_state


def quasi_steady_reference(
    before: Cycle,
    v1_of_t: Callable[[float], float],
    v2: float,
    m1: float,
    m2: float,
    t: np.ndarray,
    b0: float | None = None,
) -> np.ndarray:
    """B(t) of dB/dt = V1(t)·A/(M1 + A) − V2·B/(M2 + B) by LSODA at tight tolerance."""
    w = before.substrate_total
    if b0 is None:
        b0 = (
            float(
                goldbeter_koshland(
                    before.kinase_vmax, before.phosphatase_vmax, before.K1, before.K2
                )
            )
            * w
        )

    def rhs(time: float, y: np.ndarray) -> list[float]:
        a = w - y[0]
        return [v1_of_t(time) * a / (m1 + a) - v2 * y[0] / (m2 + y[0])]

    sol = solve_ivp(rhs, (0.0, t[-1]), [b0], method="LSODA", t_eval=t, rtol=1e-12, atol=1e-15 * w)
    assert sol.success
    return sol.y[0]


def mass_action_reference(
    before: Cycle,
    after: Cycle,
    t: np.ndarray,
    enzyme_slopes: Callable[[float], tuple[float, float]] | None = None,
) -> dict[str, np.ndarray]:
    """Six-species mass-action network (A, B, C1, C2, free E1, free E2) by scipy Radau.

    The state right after t = 0 follows the stated convention: added enzyme arrives free;
    removed enzyme leaves free and bound forms in proportion, releasing its substrate.
    `enzyme_slopes(t)` gives dE1/dt and dE2/dt of the enzyme totals during ramps: a rising
    total adds free enzyme, a falling one removes free and bound enzyme in proportion.
    """
    st = mass_action_state(before.arrays())
    a, b = float(st.unmodified), float(st.modified)
    c1, c2 = float(st.kinase_complex), float(st.phosphatase_complex)
    f1, f2 = before.kinase_total - c1, before.phosphatase_total - c2
    for total_before, total_after, index in (
        (before.kinase_total, after.kinase_total, 1),
        (before.phosphatase_total, after.phosphatase_total, 2),
    ):
        ratio = total_after / total_before
        if index == 1:
            if ratio < 1:
                a += c1 * (1 - ratio)
                c1 *= ratio
            f1 = total_after - c1
        else:
            if ratio < 1:
                b += c2 * (1 - ratio)
                c2 *= ratio
            f2 = total_after - c2
    a1, a2 = after.kinase_kon, after.phosphatase_kon

    def rhs(time: float, y: np.ndarray) -> list[float]:
        a_, b_, c1_, c2_, e1_, e2_ = y
        k1, k2 = after.kinase_kcat, after.phosphatase_kcat
        d1 = a1 * after.kinase_km - k1
        d2 = a2 * after.phosphatase_km - k2
        bind1 = a1 * a_ * e1_ - d1 * c1_
        bind2 = a2 * b_ * e2_ - d2 * c2_
        s1, s2 = enzyme_slopes(time) if enzyme_slopes else (0.0, 0.0)
        r1 = min(s1, 0.0) / (e1_ + c1_)  # relative removal rate of all kinase forms
        r2 = min(s2, 0.0) / (e2_ + c2_)
        return [
            -bind1 + k2 * c2_ - r1 * c1_,
            -bind2 + k1 * c1_ - r2 * c2_,
            bind1 - k1 * c1_ + r1 * c1_,
            bind2 - k2 * c2_ + r2 * c2_,
            -bind1 + k1 * c1_ + r1 * e1_ + max(s1, 0.0),
            -bind2 + k2 * c2_ + r2 * e2_ + max(s2, 0.0),
        ]

    sol = solve_ivp(
        rhs,
        (0.0, t[-1]),
        [a, b, c1, c2, f1, f2],
        method="Radau",
        t_eval=t,
        rtol=1e-11,
        atol=1e-15,
        jac=None,
    )
    assert sol.success, sol.message
    keys = (
        "unmodified",
        "modified",
        "kinase_complex",
        "phosphatase_complex",
        "free_kinase",
        "free_phosphatase",
    )
    return dict(zip(keys, sol.y, strict=True))
