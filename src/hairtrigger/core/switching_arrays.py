"""Step-response times over whole parameter arrays (the vectorised side of `switching`).

`hairtrigger.core.switching.switching_metrics` times one cycle after one step. Sweeps and
sensitivity analyses need the same number for 10⁴–10⁶ parameter sets, so this module computes
it over arrays:

``quasi_steady``
    Exact and closed form: the time to cover a fraction f of the way to the new steady state
    is the exact t(y) of `hairtrigger.core.timecourse.QuasiSteadyTransit` at
    y = −ln(1 − f), written here with array operations (no root finding, no loop): about a
    microsecond per parameter set.
``mass_action``
    No closed form. Each set is integrated by the compiled Radau IIA integrator exactly as
    `switching_metrics` does it (same grid, horizon and crossing rule), with the loop over
    sets inside one compiled call. The cost is the integration itself, around half a
    millisecond per set (see ``benchmarks/bench_sweep.py``).

The default step is the one of `hairtrigger.evaluate`'s ``dynamics`` block: the kinase amount
halved and restored (`DEFAULT_STEP_FACTOR`), so ``step_half_time(params, direction="up")``
equals ``evaluate(cycle)["dynamics"]["up"]["half_time"]`` for every set.
"""

from __future__ import annotations

import math  # noqa: F401 - used by the doctest of `quasi_steady_transit_time`
from collections.abc import Mapping
from typing import Final

import numpy as np
from numpy.typing import ArrayLike

from .params import MODELS, READOUTS, check_choice
from .steady import FloatArray, _get, goldbeter_koshland
from .switching import CROSSING_SAMPLES, DEFAULT_STEP_FACTOR, DEFAULT_STEP_KEY, relaxation_time
from .timecourse import ATOL_FACTOR, DEFAULT_RTOL, MAX_STEPS, _phi_psi

#: Directions of the default step: ``up`` restores the kinase amount from the lowered level to
#: the cycle's own; ``down`` lowers it from the cycle's own.
DIRECTIONS: Final[tuple[str, str]] = ("up", "down")

#: Parameters a step time depends on.
_KEYS: Final[tuple[str, ...]] = (
    "substrate_total",
    "kinase_total",
    "kinase_kcat",
    "kinase_km",
    "phosphatase_total",
    "phosphatase_kcat",
    "phosphatase_km",
)


def _positive_arrays(params: Mapping[str, ArrayLike], keys: tuple[str, ...]) -> list[FloatArray]:
    arrays = [_get(params, key) for key in keys]
    for key, array in zip(keys, arrays, strict=True):
        if not (np.all(np.isfinite(array)) and np.all(array > 0.0)):
            msg = f"`{key}` must be finite and > 0"
            raise ValueError(msg)
    return list(np.broadcast_arrays(*arrays))


def _both_forms(
    w: FloatArray, v1: FloatArray, v2: FloatArray, m1: FloatArray, m2: FloatArray
) -> tuple[FloatArray, FloatArray]:
    """Steady modified and unmodified substrate (µM), each from its own accurate formula."""
    modified = goldbeter_koshland(v1, v2, m1 / w, m2 / w) * w
    unmodified = goldbeter_koshland(v2, v1, m2 / w, m1 / w) * w
    return modified, unmodified


def quasi_steady_transit_time(
    before: Mapping[str, ArrayLike], after: Mapping[str, ArrayLike], fraction: ArrayLike = 0.5
) -> FloatArray:
    """Exact time for the quasi-steady cycle to cover `fraction` of its way to the new steady state.

    Vectorised twin of ``QuasiSteadyTransit(...).time_at_fraction(fraction)``: the cycle
    starts from the quasi-steady steady state of `before` and runs under `after` (the same
    substrate total). Same formula, same accuracy (no term carries 1/(V1 − V2)).

    Parameters
    ----------
    before, after : mapping of array_like
        Cycle parameters (`substrate_total`, the enzyme amounts, turnover numbers and
        Michaelis constants) before and after the step; broadcast against each other.
    fraction : array_like
        Fraction of the swing, in (0, 1) (0.5: the half-time).

    Returns
    -------
    ndarray
        Times, s; NaN where the step leaves the steady state unchanged.

    Examples
    --------
    >>> p = {"substrate_total": 1.0, "kinase_total": 0.01, "kinase_kcat": 1.0,
    ...      "kinase_km": 100.0, "phosphatase_total": 0.01, "phosphatase_kcat": 1.0,
    ...      "phosphatase_km": 100.0}
    >>> t = quasi_steady_transit_time(dict(p, kinase_total=0.005), p)
    >>> bool(abs(t - math.log(2) / (0.01 / 100 + 0.01 / 100)) < 0.02 * t)  # near-linear cycle
    True
    """
    f = np.asarray(fraction, dtype=float)
    if not (np.all(f > 0.0) and np.all(f < 1.0)):
        msg = f"`fraction` must lie in (0, 1); got {fraction!r}"
        raise ValueError(msg)
    w0, e1b, k1b, m1b, e2b, k2b, m2b = _positive_arrays(before, _KEYS)
    w, e1, k1, m1, e2, k2, m2 = _positive_arrays(after, _KEYS)
    if not np.all(np.broadcast_to(w0 == w, np.broadcast(w0, w).shape)):
        msg = "a step cannot change `substrate_total`"
        raise ValueError(msg)
    b0, a0 = _both_forms(w0, k1b * e1b, k2b * e2b, m1b, m2b)
    v1, v2 = k1 * e1, k2 * e2
    b_star, a_star = _both_forms(w, v1, v2, m1, m2)
    tau = 1.0 / (v1 * m1 / (m1 + a_star) ** 2 + v2 * m2 / (m2 + b_star) ** 2)
    delta = v2 - v1
    # Distance from steady state, from whichever pair of values is the more accurate.
    d0 = np.where(np.maximum(b0, b_star) <= np.maximum(a0, a_star), b0 - b_star, a_star - a0)
    # L(B0) = N(B0)/(B0 − B*), a sum of non-positive terms (either form by the sign of δ).
    with np.errstate(divide="ignore", invalid="ignore"):
        l0 = np.where(
            delta <= 0.0,
            -v1 * w * m2 / b_star + delta * b0,
            -v2 * w * m1 / a_star - delta * a0,
        )
        rho_minus_b0 = (m1 + a_star) - (m2 + b0) + tau * delta
        y = -np.log1p(-f)
        delta_b = np.expm1(-y) * d0
        ratio = delta_b / l0
        z = np.asarray(delta * ratio, dtype=float)
        phi, psi = _phi_psi(np.atleast_1d(z))
        phi, psi = phi.reshape(z.shape), psi.reshape(z.shape)
        t = tau * y + (rho_minus_b0 * phi - delta_b * psi) * ratio
    return np.asarray(np.where(d0 == 0.0, np.nan, t), dtype=float)


def _check_factor(factor: float) -> float:
    if isinstance(factor, bool) or not isinstance(factor, int | float | np.floating):
        msg = f"`factor` must be a number in (0, 1); got {factor!r}"
        raise ValueError(msg)
    value = float(factor)
    if not 0.0 < value < 1.0:
        msg = f"`factor` must be a number in (0, 1); got {factor!r}"
        raise ValueError(msg)
    return value


def step_time(
    params: Mapping[str, ArrayLike],
    fraction: float = 0.5,
    model: str = "quasi_steady",
    readout: str = "total_modified",
    direction: str = "up",
    factor: float = DEFAULT_STEP_FACTOR,
) -> FloatArray:
    """Time to `fraction` of the readout's swing after the default step, per parameter set.

    The step is that of `hairtrigger.evaluate`'s ``dynamics`` block: ``up`` starts from the
    steady state with the kinase amount lowered to ``factor·kinase_total`` and restores it;
    ``down`` starts from the steady state of the parameters and lowers the kinase amount to
    ``factor·kinase_total``.

    Parameters
    ----------
    params : mapping of array_like
        Cycle parameters (keys of `CYCLE_KEYS`; the binding rates only matter for mass
        action), broadcast against each other.
    fraction : float
        Fraction of the swing, in (0, 1); 0.5 gives the half-time.
    model : {"quasi_steady", "mass_action"}
        Quasi-steady times are exact (closed form, vectorised); mass-action times come from
        the compiled integrator (one compiled loop over the sets, ~0.5 ms per set).
    readout : {"free_modified", "total_modified"}
        Readout whose progress is timed (the same in the quasi-steady model).
    direction : {"up", "down"}
        Which half of the default step.
    factor : float
        Lowered kinase amount as a fraction of the parameters' own, in (0, 1).

    Returns
    -------
    ndarray
        Times (s), broadcast shape of the parameters. NaN where the time does not exist: the
        step leaves the readout unchanged, a mass-action dissociation rate ``kon·Km − kcat``
        is negative, or the integration failed or did not settle.
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    check_choice("direction", direction, DIRECTIONS)
    if not 0.0 < float(fraction) < 1.0:
        msg = f"`fraction` must lie in (0, 1); got {fraction!r}"
        raise ValueError(msg)
    factor = _check_factor(factor)
    kinase = _get(params, DEFAULT_STEP_KEY)
    lowered = factor * kinase
    before_kinase, after_kinase = (lowered, kinase) if direction == "up" else (kinase, lowered)
    before = dict(params, **{DEFAULT_STEP_KEY: before_kinase})
    after = dict(params, **{DEFAULT_STEP_KEY: after_kinase})
    if model == "quasi_steady":
        return quasi_steady_transit_time(before, after, float(fraction))
    return _mass_action_step_time(before, after, float(fraction), readout)


def step_half_time(
    params: Mapping[str, ArrayLike],
    model: str = "quasi_steady",
    readout: str = "total_modified",
    direction: str = "up",
    factor: float = DEFAULT_STEP_FACTOR,
) -> FloatArray:
    """Half-time after the default step, per parameter set (`step_time` at 50 %).

    Equals ``evaluate(cycle, model, readout)["dynamics"][direction]["half_time"]`` for the
    cycle of each parameter set.

    Examples
    --------
    >>> p = {"substrate_total": 1.0, "kinase_total": 0.015, "kinase_kcat": 1.0,
    ...      "kinase_km": 0.01, "phosphatase_total": 0.01, "phosphatase_kcat": 1.0,
    ...      "phosphatase_km": 0.01}
    >>> float(step_half_time(p)) > 0
    True
    """
    return step_time(params, 0.5, model, readout, direction, factor)


def _mass_action_step_time(
    before: Mapping[str, ArrayLike], after: Mapping[str, ArrayLike], fraction: float, readout: str
) -> FloatArray:
    """Compiled per-set integration (the rule of `switching._mass_action_metrics`)."""
    from . import _switching_kernels as kernels  # compiled lazily

    keys = (*_KEYS, "kinase_kon", "phosphatase_kon")
    w, e1b, k1, m1, e2, k2, m2, a1, a2 = _positive_arrays(before, keys)
    e1a = _positive_arrays(after, ("kinase_total",))[0]
    shape = np.broadcast(w, e1a).shape
    flat = [
        np.ascontiguousarray(np.broadcast_to(x, shape), dtype=float).ravel()
        for x in (w, e1b, e1a, k1, m1, a1, e2, k2, m2, a2)
    ]
    w, e1b, e1a, k1, m1, a1, e2, k2, m2, a2 = flat
    # Horizon: the quasi-steady transit to 99.99 % (it includes the near-linear zero-order
    # phase) plus ten mass-action relaxation times; the kernel extends it while unsettled.
    before_flat = {
        "substrate_total": w,
        "kinase_total": e1b,
        "kinase_kcat": k1,
        "kinase_km": m1,
        "phosphatase_total": e2,
        "phosphatase_kcat": k2,
        "phosphatase_km": m2,
    }
    after_flat = dict(before_flat, kinase_total=e1a)
    transit = quasi_steady_transit_time(before_flat, after_flat, 0.9999)
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = relaxation_time(dict(after_flat, kinase_kon=a1, phosphatase_kon=a2), "mass_action")
    horizon = np.maximum(np.nan_to_num(transit, nan=0.0), 0.0) + 10.0 * tau
    horizon = np.where(np.isfinite(horizon) & (horizon > 0.0), horizon, 1.0)
    out = np.empty(w.size)
    status = np.empty(w.size, dtype=np.int64)
    code = kernels.TOTAL_MODIFIED if readout == "total_modified" else kernels.FREE_MODIFIED
    kernels.mass_action_step_times(
        w,
        e1b,
        e1a,
        k1,
        m1,
        a1,
        e2,
        k2,
        m2,
        a2,
        horizon,
        code,
        fraction,
        CROSSING_SAMPLES,
        DEFAULT_RTOL,
        ATOL_FACTOR,
        MAX_STEPS,
        out,
        status,
    )
    return out.reshape(shape)


__all__ = [
    "DIRECTIONS",
    "quasi_steady_transit_time",
    "step_half_time",
    "step_time",
]
