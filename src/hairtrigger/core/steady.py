"""Steady states of the covalent-modification cycle, vectorised over parameter arrays.

Two models:

``quasi_steady``
    Enzyme–substrate complexes neglected (A + B = W); the modified fraction is the
    Goldbeter–Koshland function, evaluated in cancellation-free form.
``mass_action``
    Complexes kept (A + B + C1 + C2 = W); solved exactly for the cycle flux v, which makes the
    substrate balance a strictly increasing function of one unknown.

Every function takes plain floats or numpy arrays that broadcast against each other, keyed like
`hairtrigger.core.params.CYCLE_KEYS` (µM, 1/s), and never loops over points in Python.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .params import MODELS, READOUTS, check_choice

FloatArray = NDArray[np.float64]

#: Newton iterations allowed for the mass-action flux; measured need is at most 17 (tests).
MAX_NEWTON_STEPS: Final[int] = 80


def goldbeter_koshland(
    up: ArrayLike, down: ArrayLike, j_up: ArrayLike, j_down: ArrayLike
) -> FloatArray:
    """Modified fraction of a quasi-steady cycle (the Goldbeter–Koshland function).

    Solves ``up·(1 − y)/(j_up + 1 − y) = down·y/(j_down + y)`` for the physical root
    y ∈ (0, 1) (Goldbeter & Koshland 1981, PNAS 78:6840).

    Parameters
    ----------
    up, down : array_like
        Maximal rates of the modifying and demodifying enzyme (any common unit).
    j_up, j_down : array_like
        Their Michaelis constants divided by total substrate.

    Returns
    -------
    ndarray
        Modified fraction, broadcast shape of the inputs.

    Notes
    -----
    The discriminant is written as a sum of non-negative terms and the root is taken in the
    form that avoids cancellation for either sign of ``b``; at ``up == down`` the result is
    exactly ``j_down / (j_up + j_down)``. The unmodified fraction is
    ``goldbeter_koshland(down, up, j_down, j_up)``, accurate where ``1 − y`` would not be.
    """
    u1, u2, j1, j2 = np.broadcast_arrays(
        *(np.asarray(a, dtype=float) for a in (up, down, j_up, j_down))
    )
    diff = u2 - u1
    b = diff + j1 * u2 + j2 * u1
    root = np.sqrt((diff + (j1 * u2 - j2 * u1)) ** 2 + 4.0 * u1 * u2 * j1 * j2)
    with np.errstate(divide="ignore", invalid="ignore"):
        plus = 2.0 * u1 * j2 / (b + root)
        minus = (b - root) / (2.0 * diff)
        balanced = j2 / (j1 + j2)  # up == down: the root is exact, the general form is not
    return np.asarray(np.where(diff == 0.0, balanced, np.where(b >= 0.0, plus, minus)), dtype=float)


@dataclass(frozen=True)
class SteadyState:
    """Steady-state species of a cycle (arrays of one broadcast shape, µM).

    Attributes
    ----------
    unmodified, modified : ndarray
        Free unmodified (A) and free modified (B) substrate.
    kinase_complex, phosphatase_complex : ndarray
        Kinase·A (C1) and phosphatase·B (C2) complexes; zero in the quasi-steady model.
    flux : ndarray
        Cycle flux v (µM/s).
    substrate_total : ndarray
        W, for normalising readouts.
    iterations : int
        Newton steps used (0 for closed forms).
    """

    unmodified: FloatArray
    modified: FloatArray
    kinase_complex: FloatArray
    phosphatase_complex: FloatArray
    flux: FloatArray
    substrate_total: FloatArray
    iterations: int = 0

    def readout(self, readout: str) -> FloatArray:
        """Return the readout (``free_modified`` or ``total_modified``) as a fraction of W."""
        check_choice("readout", readout, READOUTS)
        if readout == "free_modified":
            return self.modified / self.substrate_total
        return (self.modified + self.phosphatase_complex) / self.substrate_total

    def unmodified_readout(self, readout: str) -> FloatArray:
        """Return the unmodified counterpart of `readout` (free A, or A + C1) over W."""
        check_choice("readout", readout, READOUTS)
        if readout == "free_modified":
            return self.unmodified / self.substrate_total
        return (self.unmodified + self.kinase_complex) / self.substrate_total


def _get(params: Mapping[str, ArrayLike], key: str) -> FloatArray:
    try:
        return np.asarray(params[key], dtype=float)
    except KeyError:
        msg = f"missing cycle parameter `{key}`"
        raise ValueError(msg) from None


def quasi_steady_state(params: Mapping[str, ArrayLike]) -> SteadyState:
    """Quasi-steady steady state (complexes neglected) for broadcastable parameter arrays."""
    w = _get(params, "substrate_total")
    v1 = _get(params, "kinase_kcat") * _get(params, "kinase_total")
    v2 = _get(params, "phosphatase_kcat") * _get(params, "phosphatase_total")
    k1 = _get(params, "kinase_km") / w
    k2 = _get(params, "phosphatase_km") / w
    modified = goldbeter_koshland(v1, v2, k1, k2)
    unmodified = goldbeter_koshland(v2, v1, k2, k1)
    b = w * modified
    a = w * unmodified
    flux = v2 * b / (_get(params, "phosphatase_km") + b)
    zero = np.zeros_like(b)
    return SteadyState(a, b, zero, zero.copy(), flux, np.broadcast_to(w, b.shape).astype(float))


def mass_action_state(params: Mapping[str, ArrayLike]) -> SteadyState:
    """Exact steady state with enzyme–substrate complexes kept.

    With the flux v as unknown, ``A = M1·v/(V1 − v)``, ``B = M2·v/(V2 − v)``, ``C1 = v/k1``,
    ``C2 = v/k2``, and ``W = A + B + C1 + C2`` is strictly increasing in v on
    (0, min(V1, V2)), so there is one root.

    The unknown is the gap ``g = min(V1, V2) − v``, so ``V − v`` never cancels when an enzyme is
    saturated. The balance is multiplied by ``(V1 − v)(V2 − v)``, which removes both poles and
    leaves a cubic in g whose sign matches the balance on the bracket; safeguarded Newton
    (bisection in log space whenever a step leaves the bracket) converges from an upper bound
    on v. Where v ends below ``min(V1, V2)/2`` (linear regime, where ``Vmin − g`` would lose
    digits) two Newton steps in v itself polish the flux.
    """
    w, e1, kc1, m1, e2, kc2, m2 = np.broadcast_arrays(
        *(
            _get(params, k)
            for k in (
                "substrate_total",
                "kinase_total",
                "kinase_kcat",
                "kinase_km",
                "phosphatase_total",
                "phosphatase_kcat",
                "phosphatase_km",
            )
        )
    )
    v1 = kc1 * e1
    v2 = kc2 * e2
    vmin = np.minimum(v1, v2)
    d1 = v1 - vmin  # exactly zero for the enzyme with the smaller Vmax
    d2 = v2 - vmin
    inv_k = 1.0 / kc1 + 1.0 / kc2

    def cubic(gap: FloatArray) -> tuple[FloatArray, FloatArray]:
        v = vmin - gap
        r1 = d1 + gap
        r2 = d2 + gap
        rest = inv_k * v - w
        value = m1 * v * r2 + m2 * v * r1 + rest * r1 * r2
        slope = m1 * (v - r2) + m2 * (v - r1) - inv_k * r1 * r2 + rest * (r1 + r2)
        return value, slope

    # Upper bound on v: there one term of the balance alone equals W, so the balance is >= 0.
    gap_lo = np.maximum.reduce(
        [-d1 + v1 * m1 / (m1 + w), -d2 + v2 * m2 / (m2 + w), vmin - w / inv_k]
    )
    gap_lo = np.clip(gap_lo, vmin * 1e-300, vmin)
    gap_hi = vmin.copy()  # v = 0: balance −W < 0
    gap = gap_lo.copy()
    active = np.ones(gap.shape, dtype=bool)
    steps = 0
    for steps in range(1, MAX_NEWTON_STEPS + 1):  # noqa: B007 - count kept for the result
        value, slope = cubic(gap)
        positive = value >= 0.0
        gap_lo = np.where(positive, gap, gap_lo)
        gap_hi = np.where(positive, gap_hi, gap)
        with np.errstate(divide="ignore", invalid="ignore"):
            new = gap - value / slope
        outside = ~((new >= gap_lo) & (new <= gap_hi))  # also catches NaN
        if np.any(outside):
            new = np.where(outside, np.sqrt(gap_lo * gap_hi), new)
        change = np.abs(new - gap)
        gap = np.where(active, new, gap)
        # Quadratic convergence: once a step is this small the next error is far below it.
        tolerance = 16.0 * np.finfo(float).eps * gap
        # Rounding noise can make the last steps alternate sides: a tight bracket ends it too.
        active &= (change > tolerance) & (gap_hi - gap_lo > 4.0 * tolerance) & (value != 0.0)
        if not np.any(active):
            break
    v = vmin - gap
    free_a = m1 * v / (d1 + gap)
    free_b = m2 * v / (d2 + gap)
    linear = v < 0.5 * vmin
    if np.any(linear):
        vl = np.where(linear, v, 0.25 * vmin)
        for _ in range(2):
            r1 = v1 - vl
            r2 = v2 - vl
            f = m1 * vl / r1 + m2 * vl / r2 + inv_k * vl - w
            vl = vl - f / (m1 * v1 / r1**2 + m2 * v2 / r2**2 + inv_k)
        v = np.where(linear, vl, v)
        free_a = np.where(linear, m1 * vl / (v1 - vl), free_a)
        free_b = np.where(linear, m2 * vl / (v2 - vl), free_b)
    return SteadyState(free_a, free_b, v / kc1, v / kc2, v, w.astype(float), steps)


def steady_state(params: Mapping[str, ArrayLike], model: str = "mass_action") -> SteadyState:
    """Steady state of `model` (``quasi_steady`` or ``mass_action``) for parameter arrays."""
    check_choice("model", model, MODELS)
    if model == "quasi_steady":
        return quasi_steady_state(params)
    return mass_action_state(params)


def positive_root(p: ArrayLike, q: ArrayLike) -> FloatArray:
    """Positive root of ``x² + p·x − q = 0`` for q > 0, without cancellation."""
    p = np.asarray(p, dtype=float)
    q = np.asarray(q, dtype=float)
    s = np.sqrt(p * p + 4.0 * q)
    with np.errstate(divide="ignore", invalid="ignore"):
        small = 2.0 * q / (p + s)
    return np.asarray(np.where(p >= 0.0, small, 0.5 * (s - p)), dtype=float)
