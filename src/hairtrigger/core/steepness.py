"""Inverse map, readout ceiling and steepness measures (closed forms, vectorised).

The input is the kinase amount E1 (turnover fixed), reported as the activity ratio
r = V1/V2. For a target readout the steady state is known in closed form, so thresholds,
response coefficients and whole steepness maps need no root finding.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .params import MODELS, READOUTS, check_choice
from .steady import FloatArray, _get, positive_root

LN81: Final[float] = math.log(81.0)

#: Fractions of the readout that define the thresholds reported everywhere.
THRESHOLD_FRACTIONS: Final[tuple[float, float, float]] = (0.1, 0.5, 0.9)


@dataclass(frozen=True)
class InversePoint:
    """Steady state reached at a target readout, with the activity ratio that gives it.

    Attributes
    ----------
    log_ratio : ndarray
        ln r, computed as ``log1p(r − 1)`` with r − 1 in closed form; NaN where unreachable.
    reachable : ndarray of bool
        False where no kinase amount gives the target (it lies above the ceiling).
    unmodified, modified, kinase_complex, phosphatase_complex, flux : ndarray
        Species at that steady state (µM, µM/s).
    kinase_total : ndarray
        The kinase amount E1 that gives the target (µM); NaN where unreachable.
    """

    log_ratio: FloatArray
    reachable: NDArray[np.bool_]
    unmodified: FloatArray
    modified: FloatArray
    kinase_complex: FloatArray
    phosphatase_complex: FloatArray
    flux: FloatArray
    kinase_total: FloatArray

    @property
    def ratio(self) -> FloatArray:
        """Activity ratio r = V1/V2 (NaN where unreachable)."""
        return np.exp(self.log_ratio)


def inverse_state(
    target: ArrayLike,
    params: Mapping[str, ArrayLike],
    model: str = "mass_action",
    readout: str = "total_modified",
    complement: ArrayLike | None = None,
) -> InversePoint:
    """Steady state and activity ratio at which the readout equals `target`.

    Parameters
    ----------
    target : array_like
        Readout as a fraction of total substrate, in (0, 1).
    params : mapping
        Cycle parameter arrays (``kinase_total`` is not used: it is the unknown).
    model, readout : str
        As in `hairtrigger.core.steady.steady_state`.
    complement : array_like, optional
        ``1 − target`` computed accurately by the caller; pass it near full modification,
        where forming ``1 − target`` here would lose digits.

    Returns
    -------
    InversePoint
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    t = np.asarray(target, dtype=float)
    c = 1.0 - t if complement is None else np.asarray(complement, dtype=float)
    a, b, c1, c2, flux = _species_at_target(t, c, params, model, readout)
    m1 = _get(params, "kinase_km")
    reachable = np.asarray(a > 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        a_ok = np.where(reachable, a, np.nan)
        log_ratio = _log_activity_ratio(a_ok, b, m1, _get(params, "phosphatase_km"))
        if model == "quasi_steady":
            v2 = _get(params, "phosphatase_kcat") * _get(params, "phosphatase_total")
            kinase_total = np.exp(log_ratio) * v2 / _get(params, "kinase_kcat")
        else:
            kinase_total = c1 * (m1 + a_ok) / a_ok
    shape = np.broadcast(log_ratio, b).shape
    return InversePoint(
        log_ratio=np.broadcast_to(log_ratio, shape).astype(float),
        reachable=np.broadcast_to(reachable, shape).copy(),
        unmodified=np.broadcast_to(a, shape).astype(float),
        modified=np.broadcast_to(b, shape).astype(float),
        kinase_complex=np.broadcast_to(c1, shape).astype(float),
        phosphatase_complex=np.broadcast_to(c2, shape).astype(float),
        flux=np.broadcast_to(flux, shape).astype(float),
        kinase_total=np.broadcast_to(kinase_total, shape).astype(float),
    )


def _species_at_target(
    target: ArrayLike, complement: ArrayLike, params: Mapping[str, ArrayLike], model: str, readout: str
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, FloatArray]:
    """(A, B, C1, C2, v) at the steady state whose readout is t (complement c = 1 − t)."""
    t = np.asarray(target, dtype=float)
    c = np.asarray(complement, dtype=float)
    w = _get(params, "substrate_total")
    kc1 = _get(params, "kinase_kcat")
    e2 = _get(params, "phosphatase_total")
    kc2 = _get(params, "phosphatase_kcat")
    m2 = _get(params, "phosphatase_km")
    if model == "quasi_steady":
        b = t * w
        a = c * w
        flux = kc2 * e2 * b / (m2 + b)
        c1 = np.zeros(np.broadcast(a, flux).shape)
        return a, b, c1, c1, flux
    if readout == "free_modified":
        b = t * w
        c2 = e2 * b / (m2 + b)
    else:
        # B + E2·B/(M2 + B) = t·W  ->  B² + (M2 + E2 − tW)·B − tW·M2 = 0
        tw = t * w
        b = positive_root(m2 + e2 - tw, tw * m2)
        c2 = e2 * b / (m2 + b)
    flux = kc2 * c2
    c1 = flux / kc1
    a = c * w - c1 - (c2 if readout == "free_modified" else 0.0)
    return a, b, c1, c2, flux


def _log_activity_ratio(a: FloatArray, b: FloatArray, m1: FloatArray, m2: FloatArray) -> FloatArray:
    """Log activity ratio ln r, r = B·(M1 + A)/(A·(M2 + B)), accurate near r = 1 and far from it.

    r − 1 = (B·M1 − A·M2)/(A·(M2 + B)) exactly, and log1p of it keeps ln r accurate near
    r = 1 (steep switches, pitfall 4); far from 1 the plain logarithm of r is the accurate one
    (log1p(r − 1) fails as r → 0).
    """
    denominator = a * (m2 + b)
    ratio_m1 = (b * m1 - a * m2) / denominator
    ratio = b * (m1 + a) / denominator
    return np.where(np.abs(ratio_m1) < 0.5, np.log1p(ratio_m1), np.log(ratio))


def readout_ceiling(
    params: Mapping[str, ArrayLike], model: str = "mass_action", readout: str = "total_modified"
) -> FloatArray:
    """Largest readout reachable as the kinase amount grows without bound (fraction of W).

    In the quasi-steady model it is 1. With complexes kept, free unmodified substrate vanishes
    in the limit and ``B + v·(1/k1 + 1/k2) = W`` with ``v = V2·B/(M2 + B)`` fixes B.
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    w = _get(params, "substrate_total")
    if model == "quasi_steady":
        shape = np.broadcast(*(np.asarray(p) for p in params.values())).shape
        return np.ones(shape)
    e2 = _get(params, "phosphatase_total")
    m2 = _get(params, "phosphatase_km")
    b = _free_modified_limit(params, model)
    if readout == "free_modified":
        return np.asarray(b / w, dtype=float)
    return np.asarray((b + e2 * b / (m2 + b)) / w, dtype=float)


def _inverse_turnover_sum(params: Mapping[str, ArrayLike], model: str) -> FloatArray:
    """1/k1 + 1/k2 (time per turnover spent in complexes); zero when complexes are neglected."""
    inv_k = 1.0 / _get(params, "kinase_kcat") + 1.0 / _get(params, "phosphatase_kcat")
    return inv_k * 0.0 if model == "quasi_steady" else inv_k


def _free_modified_limit(params: Mapping[str, ArrayLike], model: str) -> FloatArray:
    """Free modified substrate B as the kinase amount grows without bound (µM).

    Free unmodified substrate vanishes in the limit and ``B + v·(1/k1 + 1/k2) = W`` with
    ``v = V2·B/(M2 + B)``, i.e. ``B² + (M2 + V2/k1 + V2/k2 − W)·B − W·M2 = 0``.
    """
    w = _get(params, "substrate_total")
    if model == "quasi_steady":
        return w
    m2 = _get(params, "phosphatase_km")
    v2 = _get(params, "phosphatase_kcat") * _get(params, "phosphatase_total")
    return positive_root(m2 + v2 * _inverse_turnover_sum(params, model) - w, w * m2)


def _targets(
    fraction: float, ceiling: FloatArray | None
) -> tuple[FloatArray | float, FloatArray | float]:
    """Target readout and its accurate complement for a threshold fraction."""
    if ceiling is None:
        return fraction, 1.0 - fraction
    t = fraction * ceiling
    return t, 1.0 - t


def thresholds(
    params: Mapping[str, ArrayLike],
    model: str = "mass_action",
    readout: str = "total_modified",
    relative: bool = False,
) -> dict[str, FloatArray]:
    """Activity ratios at 10/50/90 % and the steepness they imply.

    Parameters
    ----------
    params : mapping
        Cycle parameter arrays.
    model, readout : str
        Model and readout.
    relative : bool
        If True the targets are fractions of the readout ceiling (EC values against the
        attainable maximum); otherwise fractions of total substrate.

    Returns
    -------
    dict
        ``activity_ratio_10``, ``activity_ratio_50``, ``activity_ratio_90``,
        ``response_coefficient`` (r90/r10), ``hill_coefficient`` (ln 81 / ln Rv) and
        ``log_response_coefficient``; NaN where a target is unreachable.
    """
    logs = threshold_log_ratios(params, model, readout, THRESHOLD_FRACTIONS, relative)
    log_rv = logs[2] - logs[0]
    with np.errstate(divide="ignore", invalid="ignore"):
        hill = LN81 / log_rv
    return {
        "activity_ratio_10": np.exp(logs[0]),
        "activity_ratio_50": np.exp(logs[1]),
        "activity_ratio_90": np.exp(logs[2]),
        "response_coefficient": np.exp(log_rv),
        "hill_coefficient": hill,
        "log_response_coefficient": log_rv,
    }


def threshold_log_ratios(
    params: Mapping[str, ArrayLike],
    model: str,
    readout: str,
    fractions: tuple[float, ...],
    relative: bool = False,
) -> list[FloatArray]:
    """Log activity ratio ln r at each readout fraction (of W, or of the ceiling when `relative`); NaN if unreachable."""
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    ceiling = (
        readout_ceiling(params, model, readout) if relative and model == "mass_action" else None
    )
    m1 = _get(params, "kinase_km")
    m2 = _get(params, "phosphatase_km")
    logs = []
    with np.errstate(divide="ignore", invalid="ignore"):
        for frac in fractions:
            t, c = _targets(frac, ceiling)
            a, b, _, _, _ = _species_at_target(t, c, params, model, readout)
            logs.append(_log_activity_ratio(np.where(a > 0.0, a, np.nan), b, m1, m2))
    return logs


def quasi_steady_response_coefficient(k1: ArrayLike, k2: ArrayLike) -> FloatArray:
    """Closed-form Rv of the quasi-steady cycle, 81(K1+0.1)(K2+0.1)/((K1+0.9)(K2+0.9)).

    (Goldbeter & Koshland 1981.) Provided as an independent check of `thresholds`.
    """
    k1 = np.asarray(k1, dtype=float)
    k2 = np.asarray(k2, dtype=float)
    return 81.0 * (k1 + 0.1) * (k2 + 0.1) / ((k1 + 0.9) * (k2 + 0.9))


def quasi_steady_hill_coefficient(k1: ArrayLike, k2: ArrayLike) -> FloatArray:
    """Hill coefficient ln 81 / ln Rv with Rv − 1 = (80·K1·K2 + 7.2·(K1 + K2)) / ((K1 + 0.9)(K2 + 0.9)).

    Writing Rv − 1 without subtraction keeps nH accurate as Rv → 1 (both Km tiny).
    """
    k1 = np.asarray(k1, dtype=float)
    k2 = np.asarray(k2, dtype=float)
    rv_m1 = (80.0 * k1 * k2 + 7.2 * (k1 + k2)) / ((k1 + 0.9) * (k2 + 0.9))
    return np.asarray(LN81 / np.log1p(rv_m1), dtype=float)


# --- local sensitivity -----------------------------------------------------------------------


def _log_slopes(
    s: FloatArray, params: Mapping[str, ArrayLike], model: str, readout: str
) -> FloatArray:
    """Slope d ln y / d ln r along the response curve, parametrised by s = B / B_max ∈ (0, 1)."""
    w = _get(params, "substrate_total")
    m1 = _get(params, "kinase_km")
    e2 = _get(params, "phosphatase_total")
    kc2 = _get(params, "phosphatase_kcat")
    m2 = _get(params, "phosphatase_km")
    v2 = kc2 * e2
    inv_k = _inverse_turnover_sum(params, model)
    b = s * _free_modified_limit(params, model)
    v = v2 * b / (m2 + b)
    dv = v2 * m2 / (m2 + b) ** 2
    a = w - b - v * inv_k
    da = -1.0 - inv_k * dv
    # ln r = ln v + ln(M1 + A) − ln A − ln V2
    dlnr = dv / v + da / (m1 + a) - da / a
    if model == "quasi_steady" or readout == "free_modified":
        dlny = 1.0 / b
    else:
        dlny = (1.0 + dv / kc2) / (b + v / kc2)
    return np.asarray(dlny / dlnr, dtype=float)


def local_sensitivity(
    readout_fraction: ArrayLike,
    params: Mapping[str, ArrayLike],
    model: str = "mass_action",
    readout: str = "total_modified",
) -> FloatArray:
    """Local response coefficient d ln y / d ln r at a given readout level (fraction of W)."""
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    point = inverse_state(readout_fraction, params, model, readout)
    s = np.where(point.reachable, point.modified / _free_modified_limit(params, model), np.nan)
    return _log_slopes(s, params, model, readout)


def peak_sensitivity(
    params: Mapping[str, ArrayLike],
    model: str = "mass_action",
    readout: str = "total_modified",
    grid_points: int = 41,
    refinements: int = 40,
) -> FloatArray:
    """Largest local response coefficient max d ln y / d ln r over the whole response curve.

    A coarse grid in logit(B/B_max) brackets the maximum for every parameter point at once;
    golden-section steps (vectorised) then refine it.
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    shape = np.broadcast(*(np.asarray(p) for p in params.values())).shape
    logit = np.linspace(-18.0, 18.0, grid_points)
    grid_s = 1.0 / (1.0 + np.exp(-logit))
    expanded = {k: np.asarray(v, dtype=float)[..., None] for k, v in params.items()}
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        values = _log_slopes(
            np.broadcast_to(grid_s, (*shape, grid_points)), expanded, model, readout
        )
        values = np.where(np.isfinite(values), values, -np.inf)
        best = np.argmax(values, axis=-1)
        lo = logit[np.clip(best - 1, 0, grid_points - 1)]
        hi = logit[np.clip(best + 1, 0, grid_points - 1)]
        arrays = {k: np.asarray(v, dtype=float) for k, v in params.items()}
        golden = (math.sqrt(5.0) - 1.0) / 2.0

        def f(x: FloatArray) -> FloatArray:
            out = _log_slopes(1.0 / (1.0 + np.exp(-x)), arrays, model, readout)
            return np.where(np.isfinite(out), out, -np.inf)

        x1 = hi - golden * (hi - lo)
        x2 = lo + golden * (hi - lo)
        f1, f2 = f(x1), f(x2)
        for _ in range(refinements):
            left = f1 >= f2
            hi = np.where(left, x2, hi)
            lo = np.where(left, lo, x1)
            x2n = np.where(left, x1, lo + golden * (hi - lo))
            x1n = np.where(left, hi - golden * (hi - lo), x2)
            fnew = f(np.where(left, x1n, x2n))
            f1, f2 = np.where(left, fnew, f2), np.where(left, f1, fnew)
            x1, x2 = x1n, x2n
        peak = np.maximum(np.maximum(f1, f2), np.max(values, axis=-1))
    return np.asarray(np.where(np.isfinite(peak), peak, np.nan), dtype=float)
