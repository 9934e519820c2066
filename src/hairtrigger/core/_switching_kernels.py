"""Compiled loop over many parameter sets: mass-action half-times after a kinase step.

Each parameter set is timed exactly as `hairtrigger.core.switching.switching_metrics` times
one (same compiled Radau integrator, same 2001-sample grid, same horizon rule, same cubic
Hermite location of the crossing), but the loop over sets runs inside one compiled call, so a
set costs the integration alone instead of the per-call Python and numpy overhead around it.

Loaded lazily (numba compiles on first use; the cache keeps later imports fast).
"""

from __future__ import annotations

import math

import numpy as np

from ._radau import integrate, mass_action_start, njit

#: Code of the readouts in the compiled loop.
FREE_MODIFIED = 0
TOTAL_MODIFIED = 1

#: Status per parameter set (returned beside the times).
OK = 0
NO_CHANGE = 1  # the step leaves the steady readout unchanged: no half-time
INTEGRATION_FAILED = 2
NOT_SETTLED = 3
NEGATIVE_DISSOCIATION = 4


@njit(cache=True)
def _readout(code, w, y):  # type: ignore[no-untyped-def]
    if code == TOTAL_MODIFIED:
        return (y[0] + y[2]) / w
    return y[0] / w


@njit(cache=True)
def _first_crossing(t, p, dp, level):  # type: ignore[no-untyped-def]
    """First time the sampled progress reaches `level` (cubic Hermite, bisection); NaN if never.

    The scalar twin of `switching._hermite_crossings` for one level.
    """
    n = t.shape[0]
    first = -1
    for k in range(n):
        if p[k] >= level:
            first = k
            break
    if first < 0:
        return math.nan
    if first == 0:
        return t[0]
    ta, tb = t[first - 1], t[first]
    pa, pb, ma, mb = p[first - 1], p[first], dp[first - 1], dp[first]
    h = tb - ta
    lo, hi = 0.0, 1.0
    for _ in range(60):
        s = 0.5 * (lo + hi)
        s2 = s * s
        s3 = s2 * s
        value = (
            (2 * s3 - 3 * s2 + 1) * pa
            + (s3 - 2 * s2 + s) * h * ma
            + (-2 * s3 + 3 * s2) * pb
            + (s3 - s2) * h * mb
        )
        if value < level:
            lo = s
        else:
            hi = s
    return ta + 0.5 * (lo + hi) * h


@njit(cache=True)
def mass_action_step_times(  # type: ignore[no-untyped-def]  # noqa: PLR0913, PLR0915
    w,
    e1_before,
    e1_after,
    k1,
    m1,
    a1,
    e2,
    k2,
    m2,
    a2,
    horizon,
    readout_code,
    level,
    points,
    rtol,
    atol_factor,
    max_steps,
    out,
    status,
):
    """Time to `level` of the readout's swing after a step of the kinase amount, per set.

    Every argument but the scalars `readout_code`, `level`, `points`, `rtol`, `atol_factor`
    and `max_steps` is a 1-D array of one length (µM, 1/s, 1/(µM·s)); `horizon` is the first
    simulated time span tried (s), multiplied by 4 while the course has not settled (up to
    10 times). Writes times (s) into `out` and a status code into `status`.
    """
    n = w.shape[0]
    y0 = np.empty(3)
    y1 = np.empty(3)
    consts = np.empty(3)
    seg_t0 = np.zeros(1)
    seg_t1 = np.empty(1)
    seg_p0 = np.empty((1, 6))
    seg_dp = np.zeros((1, 6))
    seg_prev = np.empty((1, 6))
    atol = np.empty(3)
    states = np.empty((points, 3))
    stats = np.zeros(4, dtype=np.int64)
    progress = np.empty(points)
    slope = np.empty(points)
    for i in range(n):
        out[i] = math.nan
        d1 = a1[i] * m1[i] - k1[i]
        d2 = a2[i] * m2[i] - k2[i]
        if d1 < 0.0 or d2 < 0.0:
            status[i] = NEGATIVE_DISSOCIATION
            continue
        mass_action_start(w[i], e1_before[i], k1[i], m1[i], e2[i], k2[i], m2[i], y0)
        mass_action_start(w[i], e1_after[i], k1[i], m1[i], e2[i], k2[i], m2[i], y1)
        r0 = _readout(readout_code, w[i], y0)
        r1 = _readout(readout_code, w[i], y1)
        if r1 == r0:
            status[i] = NO_CHANGE
            continue
        consts[0] = w[i]
        consts[1] = a1[i]
        consts[2] = a2[i]
        seg_p0[0, 0] = e1_after[i]
        seg_prev[0, 0] = e1_before[i]
        seg_p0[0, 1] = k1[i]
        seg_p0[0, 2] = m1[i]
        seg_p0[0, 3] = e2[i]
        seg_p0[0, 4] = k2[i]
        seg_p0[0, 5] = m2[i]
        for j in range(1, 6):
            seg_prev[0, j] = seg_p0[0, j]
        atol[0] = atol_factor * w[i]
        atol[1] = atol_factor * min(w[i], e1_after[i])
        atol[2] = atol_factor * min(w[i], e2[i])
        span = horizon[i]
        t = np.linspace(0.0, span, points)
        settled = False
        failed = False
        for _ in range(10):
            seg_t1[0] = span
            t = np.linspace(0.0, span, points)
            for k in range(points):
                for j in range(3):
                    states[k, j] = math.nan
            for j in range(4):
                stats[j] = 0  # the integrator's step budget counts these
            code = integrate(
                1,
                y0,
                consts,
                seg_t0,
                seg_t1,
                seg_p0,
                seg_dp,
                seg_prev,
                t,
                rtol,
                atol,
                max_steps,
                states,
                stats,
            )
            if code != 0:
                failed = True
                break
            for k in range(points):
                progress[k] = (_readout(readout_code, w[i], states[k]) - r0) / (r1 - r0)
            settled = abs(progress[points - 1] - 1.0) <= 1e-3
            if settled:
                for k in range(points - 20, points):
                    if not progress[k] >= 0.99:
                        settled = False
                        break
            if settled:
                break
            span *= 4.0
        if failed:
            status[i] = INTEGRATION_FAILED
            continue
        if not settled:
            status[i] = NOT_SETTLED
            continue
        # d(readout)/dt from the rate equations under the new parameters.
        for k in range(points):
            b, c1, c2 = states[k, 0], states[k, 1], states[k, 2]
            if readout_code == TOTAL_MODIFIED:
                rate = k1[i] * c1 - k2[i] * c2
            else:
                rate = k1[i] * c1 - a2[i] * b * (e2[i] - c2) + d2 * c2
            slope[k] = rate / w[i] / (r1 - r0)
        out[i] = _first_crossing(t, progress, slope, level)
        status[i] = OK
