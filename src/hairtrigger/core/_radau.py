"""Compiled implicit integrator for the cycle's rate equations (Radau IIA, order 5).

Why our own integrator: the mass-action equations are stiff (binding is fast), and with a
general-purpose solver driven from Python the per-step callbacks dominate the cost. Here the
right-hand side, its analytic Jacobian, the 3×3 linear algebra and the step control all run in
one compiled call, so a 200-point course costs about as much as in a compiled SBML simulator.

The method and its step-size control follow scipy's ``Radau`` solver (Hairer & Wanner,
*Solving Ordinary Differential Equations II*, Sec. IV.8), with the same constants, Newton
iteration, error estimate and collocation-polynomial dense output.

Without numba the same code runs as plain Python (correct, but slow).

State vectors
-------------
quasi-steady (model 0)
    ``[B]``, with A = W − B.
mass-action (model 1)
    ``[B, C1, C2]``, with A = W − B − C1 − C2 and free enzymes E1 − C1, E2 − C2, so substrate
    and both enzymes are conserved by construction.

Parameters in force are piecewise linear in time: segment ``s`` runs from ``seg_t0[s]`` to
``seg_t1[s]`` with ``p(t) = seg_p0[s] + seg_dp[s]·(t − seg_t0[s])``, where p holds
``[E1, k1, M1, E2, k2, M2]`` (`PARAM_ORDER`). At a segment start an enzyme amount may jump; a
decrease removes enzyme from free and bound forms in proportion and the substrate held by the
removed complexes is released in the form it was bound in (kinase complex → unmodified,
phosphatase complex → modified). An added enzyme arrives free. A falling ramp removes enzyme
the same way, continuously.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any, Final

import numpy as np

from .schedule import STEP_KEYS

try:  # numba is an accelerator, not a requirement
    from numba import njit

    HAVE_NUMBA = True
except ImportError:  # pragma: no cover - exercised only where numba is missing
    HAVE_NUMBA = False

    def njit(*args: Any, **kwargs: Any) -> Any:  # type: ignore[no-redef]
        """Stand-in decorator: return the function unchanged."""
        if args and callable(args[0]):
            return args[0]

        def wrap(func: Callable[..., Any]) -> Callable[..., Any]:
            return func

        return wrap


#: Order of the time-dependent parameters in the schedule arrays (numba stays out of
#: `schedule`, so importing hairtrigger never loads it).
PARAM_ORDER: Final[tuple[str, ...]] = STEP_KEYS

QUASI_STEADY: Final[int] = 0
MASS_ACTION: Final[int] = 1

#: Status codes returned by `integrate`.
STATUS_SUCCESS: Final[int] = 0
STATUS_STEP_TOO_SMALL: Final[int] = -1
STATUS_TOO_MANY_STEPS: Final[int] = -2

STATUS_MESSAGES: Final[dict[int, str]] = {
    STATUS_SUCCESS: "integration finished",
    STATUS_STEP_TOO_SMALL: "step size fell below the resolution of the time axis",
    STATUS_TOO_MANY_STEPS: "step budget exhausted before reaching the end time",
}

# --- Radau IIA constants (as in scipy.integrate.Radau) ---------------------------------------
_S6 = 6.0**0.5
_C = np.array([(4.0 - _S6) / 10.0, (4.0 + _S6) / 10.0, 1.0])
_E = np.array([-13.0 - 7.0 * _S6, -13.0 + 7.0 * _S6, -1.0]) / 3.0
_MU_REAL = 3.0 + 3.0 ** (2.0 / 3.0) - 3.0 ** (1.0 / 3.0)
_MU_COMPLEX = complex(
    3.0 + 0.5 * (3.0 ** (1.0 / 3.0) - 3.0 ** (2.0 / 3.0)),
    -0.5 * (3.0 ** (5.0 / 6.0) + 3.0 ** (7.0 / 6.0)),
)
_T = np.array(
    [
        [0.09443876248897524, -0.14125529502095421, 0.03002919410514742],
        [0.25021312296533332, 0.20412935229379994, -0.38294211275726192],
        [1.0, 1.0, 0.0],
    ]
)
_TI = np.array(
    [
        [4.17871859155190428, 0.32768282076106237, 0.52337644549944951],
        [-4.17871859155190428, -0.32768282076106237, 0.47662355450055044],
        [0.50287263494578682, -2.57192694985560522, 0.59603920482822492],
    ]
)
_TI_REAL = _TI[0].copy()
_TI_COMPLEX = _TI[1] + 1j * _TI[2]
_P = np.array(
    [
        [13.0 / 3.0 + 7.0 * _S6 / 3.0, -23.0 / 3.0 - 22.0 * _S6 / 3.0, 10.0 / 3.0 + 5.0 * _S6],
        [13.0 / 3.0 - 7.0 * _S6 / 3.0, -23.0 / 3.0 + 22.0 * _S6 / 3.0, 10.0 / 3.0 - 5.0 * _S6],
        [1.0 / 3.0, -8.0 / 3.0, 10.0 / 3.0],
    ]
)
_NEWTON_MAXITER = 6
_MIN_FACTOR = 0.2
_MAX_FACTOR = 10.0
_EPS = float(np.finfo(float).eps)


# --- model ------------------------------------------------------------------------------------
@njit(cache=True)
def _params_at(t, t0, p0, dp, out):  # type: ignore[no-untyped-def]
    for j in range(6):
        out[j] = p0[j] + dp[j] * (t - t0)


@njit(cache=True)
def rhs(model, y, p, dp, consts, f):  # type: ignore[no-untyped-def]
    """Time derivative of the state `y` under parameters `p` (slopes `dp`), into `f`."""
    w = consts[0]
    e1 = p[0]
    k1 = p[1]
    m1 = p[2]
    e2 = p[3]
    k2 = p[4]
    m2 = p[5]
    if model == 0:
        b = y[0]
        a = w - b
        f[0] = k1 * e1 * a / (m1 + a) - k2 * e2 * b / (m2 + b)
    else:
        a1 = consts[1]
        a2 = consts[2]
        b = y[0]
        c1 = y[1]
        c2 = y[2]
        a = w - b - c1 - c2
        free1 = e1 - c1
        free2 = e2 - c2
        d2 = a2 * m2 - k2
        # Proportional removal while an enzyme amount falls (rate = d ln E / dt < 0).
        r1 = dp[0] / e1 if dp[0] < 0.0 else 0.0
        r2 = dp[3] / e2 if dp[3] < 0.0 else 0.0
        f[0] = k1 * c1 - a2 * b * free2 + d2 * c2 - r2 * c2
        f[1] = a1 * (a * free1 - m1 * c1) + r1 * c1
        f[2] = a2 * (b * free2 - m2 * c2) + r2 * c2


@njit(cache=True)
def jacobian(model, y, p, dp, consts, jac):  # type: ignore[no-untyped-def]
    """Analytic Jacobian ∂f/∂y of `rhs`, into `jac`."""
    w = consts[0]
    e1 = p[0]
    k1 = p[1]
    m1 = p[2]
    e2 = p[3]
    k2 = p[4]
    m2 = p[5]
    if model == 0:
        b = y[0]
        a = w - b
        jac[0, 0] = -k1 * e1 * m1 / (m1 + a) ** 2 - k2 * e2 * m2 / (m2 + b) ** 2
    else:
        a1 = consts[1]
        a2 = consts[2]
        b = y[0]
        c1 = y[1]
        c2 = y[2]
        a = w - b - c1 - c2
        free1 = e1 - c1
        free2 = e2 - c2
        d2 = a2 * m2 - k2
        r1 = min(dp[0], 0.0) / e1
        r2 = min(dp[3], 0.0) / e2
        jac[0, 0] = -a2 * free2
        jac[0, 1] = k1
        jac[0, 2] = a2 * b + d2 - r2
        jac[1, 0] = -a1 * free1
        jac[1, 1] = -a1 * (free1 + a + m1) + r1
        jac[1, 2] = -a1 * free1
        jac[2, 0] = a2 * free2
        jac[2, 1] = 0.0
        jac[2, 2] = -a2 * (b + m2) + r2


# --- small dense linear algebra (n ≤ 3), real or complex ---------------------------------------
@njit(cache=True)
def _lu_factor(a, piv):  # type: ignore[no-untyped-def]
    n = a.shape[0]
    for k in range(n):
        p = k
        amax = abs(a[k, k])
        for i in range(k + 1, n):
            if abs(a[i, k]) > amax:
                amax = abs(a[i, k])
                p = i
        piv[k] = p
        if p != k:
            for j in range(n):
                tmp = a[k, j]
                a[k, j] = a[p, j]
                a[p, j] = tmp
        if a[k, k] == 0:
            return False
        # The diagonal keeps its reciprocal: solves then multiply instead of divide.
        inverse = 1.0 / a[k, k]
        a[k, k] = inverse
        for i in range(k + 1, n):
            a[i, k] = a[i, k] * inverse
            for j in range(k + 1, n):
                a[i, j] = a[i, j] - a[i, k] * a[k, j]
    return True


@njit(cache=True)
def _lu_solve(a, piv, b):  # type: ignore[no-untyped-def]
    n = a.shape[0]
    for k in range(n):
        p = piv[k]
        if p != k:
            tmp = b[k]
            b[k] = b[p]
            b[p] = tmp
    for i in range(n):
        for j in range(i):
            b[i] = b[i] - a[i, j] * b[j]
    for i in range(n - 1, -1, -1):
        for j in range(i + 1, n):
            b[i] = b[i] - a[i, j] * b[j]
        b[i] = b[i] * a[i, i]


@njit(cache=True)
def _rms(x, scale):  # type: ignore[no-untyped-def]
    total = 0.0
    for j in range(x.shape[0]):
        v = x[j] / scale[j]
        total += v * v
    return math.sqrt(total / x.shape[0])


# --- one segment with constant-or-linear parameters -------------------------------------------
@njit(cache=True)
def _segment(  # type: ignore[no-untyped-def]  # noqa: C901 - one integrator loop, kept whole
    model, y, t0, t1, p0, dp, consts, t_out, i_out, last, rtol, atol, max_steps, out, stats
):
    """Integrate from t0 to t1 in place on `y`; fill samples; return (status, i_out)."""
    n = y.shape[0]
    nout = t_out.shape[0]
    p = np.empty(6)
    f = np.empty(n)
    f_new = np.empty(n)
    jac = np.empty((n, n))
    lu_r = np.empty((n, n))
    lu_c = np.empty((n, n), dtype=np.complex128)
    piv_r = np.empty(n, dtype=np.int64)
    piv_c = np.empty(n, dtype=np.int64)
    z = np.zeros((3, n))
    z0 = np.zeros((3, n))
    wmat = np.zeros((3, n))
    dw = np.zeros((3, n))
    fst = np.zeros((3, n))
    ytmp = np.empty(n)
    f_real = np.empty(n)
    f_cplx = np.empty(n, dtype=np.complex128)
    scale = np.empty(n)
    err = np.empty(n)
    ze = np.empty(n)
    q = np.zeros((n, 3))
    q_prev = np.zeros((n, 3))
    y_old = y.copy()
    y_prev_old = y.copy()
    y_new = np.empty(n)
    dw_flat = np.empty(3 * n)
    scale3 = np.empty(3 * n)

    t = t0
    _params_at(t, t0, p0, dp, p)
    rhs(model, y, p, dp, consts, f)
    stats[1] += 1
    jacobian(model, y, p, dp, consts, jac)
    stats[2] += 1

    # Initial step (Hairer, Nørsett & Wanner, Sec. II.4), error order 3 as in scipy.
    for j in range(n):
        scale[j] = atol[j] + abs(y[j]) * rtol
    d0 = _rms(y, scale)
    d1 = _rms(f, scale)
    interval = t1 - t0
    h0 = 1e-6 if (d0 < 1e-5 or d1 < 1e-5) else 0.01 * d0 / d1
    h0 = min(h0, interval)
    for j in range(n):
        ytmp[j] = y[j] + h0 * f[j]
    _params_at(t0 + h0, t0, p0, dp, p)
    rhs(model, ytmp, p, dp, consts, f_new)
    stats[1] += 1
    for j in range(n):
        err[j] = f_new[j] - f[j]
    d2 = _rms(err, scale) / h0
    if d1 <= 1e-15 and d2 <= 1e-15:
        h1 = max(1e-6, h0 * 1e-3)
    else:
        h1 = (0.01 / max(d1, d2)) ** (1.0 / 4.0)
    h_abs = min(100.0 * h0, h1, interval)

    newton_tol = max(10.0 * _EPS / rtol, min(0.03, rtol**0.5))
    h_abs_old = -1.0
    error_norm_old = -1.0
    have_lu = False
    current_jac = True
    have_sol = False
    t_prev_old = t0
    h_prev = 1.0
    status = 0

    while t < t1:
        if stats[0] >= max_steps:
            return -2, i_out
        min_step = 10.0 * abs(np.nextafter(t, np.inf) - t)
        if h_abs < min_step:
            h_abs = min_step
            h_abs_old = -1.0
            error_norm_old = -1.0
        rejected = False
        accepted = False
        n_iter = 0
        rate = -1.0
        error_norm = 0.0
        safety = 0.9
        t_new = t
        h = 0.0
        while not accepted:
            if h_abs < min_step:
                return -1, i_out
            t_new = t + h_abs
            if t_new > t1:
                t_new = t1
            h = t_new - t
            h_abs = abs(h)
            # Initial guess from the previous collocation polynomial.
            for i in range(3):
                if have_sol:
                    x = (t + h * _C[i] - t_prev_old) / h_prev
                    for j in range(n):
                        z0[i, j] = (
                            y_prev_old[j]
                            + q_prev[j, 0] * x
                            + q_prev[j, 1] * x * x
                            + q_prev[j, 2] * x * x * x
                            - y[j]
                        )
                else:
                    for j in range(n):
                        z0[i, j] = 0.0
            for j in range(n):
                scale[j] = atol[j] + abs(y[j]) * rtol
            converged = False
            while not converged:
                if not have_lu:
                    mr = _MU_REAL / h
                    mc = _MU_COMPLEX / h
                    for a_i in range(n):
                        for b_j in range(n):
                            lu_r[a_i, b_j] = -jac[a_i, b_j]
                            lu_c[a_i, b_j] = -jac[a_i, b_j]
                        lu_r[a_i, a_i] += mr
                        lu_c[a_i, a_i] += mc
                    _lu_factor(lu_r, piv_r)
                    _lu_factor(lu_c, piv_c)
                    stats[3] += 1
                    have_lu = True
                # --- simplified Newton iteration on the collocation system
                m_real = _MU_REAL / h
                m_cplx = _MU_COMPLEX / h
                for i in range(3):
                    for j in range(n):
                        wmat[i, j] = (
                            _TI[i, 0] * z0[0, j] + _TI[i, 1] * z0[1, j] + _TI[i, 2] * z0[2, j]
                        )
                        z[i, j] = z0[i, j]
                for j in range(n):
                    scale3[j] = scale[j]
                    scale3[n + j] = scale[j]
                    scale3[2 * n + j] = scale[j]
                dw_norm_old = -1.0
                rate = -1.0
                converged = False
                k = 0
                for k in range(_NEWTON_MAXITER):
                    finite = True
                    for i in range(3):
                        ti = t + h * _C[i]
                        _params_at(ti, t0, p0, dp, p)
                        for j in range(n):
                            ytmp[j] = y[j] + z[i, j]
                        rhs(model, ytmp, p, dp, consts, f_new)
                        stats[1] += 1
                        for j in range(n):
                            fst[i, j] = f_new[j]
                            if not math.isfinite(f_new[j]):
                                finite = False
                    if not finite:
                        break
                    for j in range(n):
                        f_real[j] = (
                            fst[0, j] * _TI_REAL[0]
                            + fst[1, j] * _TI_REAL[1]
                            + fst[2, j] * _TI_REAL[2]
                            - m_real * wmat[0, j]
                        )
                        f_cplx[j] = (
                            fst[0, j] * _TI_COMPLEX[0]
                            + fst[1, j] * _TI_COMPLEX[1]
                            + fst[2, j] * _TI_COMPLEX[2]
                            - m_cplx * (wmat[1, j] + 1j * wmat[2, j])
                        )
                    _lu_solve(lu_r, piv_r, f_real)
                    _lu_solve(lu_c, piv_c, f_cplx)
                    for j in range(n):
                        dw[0, j] = f_real[j]
                        dw[1, j] = f_cplx[j].real
                        dw[2, j] = f_cplx[j].imag
                        dw_flat[j] = dw[0, j]
                        dw_flat[n + j] = dw[1, j]
                        dw_flat[2 * n + j] = dw[2, j]
                    dw_norm = _rms(dw_flat, scale3)
                    if dw_norm_old >= 0.0:
                        rate = dw_norm / dw_norm_old
                    if rate >= 0.0 and (
                        rate >= 1.0
                        or rate ** (_NEWTON_MAXITER - k) / (1.0 - rate) * dw_norm > newton_tol
                    ):
                        break
                    for i in range(3):
                        for j in range(n):
                            wmat[i, j] += dw[i, j]
                    for i in range(3):
                        for j in range(n):
                            z[i, j] = (
                                _T[i, 0] * wmat[0, j]
                                + _T[i, 1] * wmat[1, j]
                                + _T[i, 2] * wmat[2, j]
                            )
                    if dw_norm == 0.0 or (
                        rate >= 0.0 and rate / (1.0 - rate) * dw_norm < newton_tol
                    ):
                        converged = True
                        break
                    dw_norm_old = dw_norm
                n_iter = k + 1
                if not converged:
                    if current_jac:
                        break
                    _params_at(t, t0, p0, dp, p)
                    jacobian(model, y, p, dp, consts, jac)
                    stats[2] += 1
                    current_jac = True
                    have_lu = False
            if not converged:
                h_abs *= 0.5
                have_lu = False
                continue

            for j in range(n):
                y_new[j] = y[j] + z[2, j]
                ze[j] = (z[0, j] * _E[0] + z[1, j] * _E[1] + z[2, j] * _E[2]) / h
                err[j] = f[j] + ze[j]
            _lu_solve(lu_r, piv_r, err)
            for j in range(n):
                scale[j] = atol[j] + max(abs(y[j]), abs(y_new[j])) * rtol
            error_norm = _rms(err, scale)
            safety = 0.9 * (2 * _NEWTON_MAXITER + 1) / (2 * _NEWTON_MAXITER + n_iter)
            if rejected and error_norm > 1.0:
                for j in range(n):
                    ytmp[j] = y[j] + err[j]
                _params_at(t, t0, p0, dp, p)
                rhs(model, ytmp, p, dp, consts, f_new)
                stats[1] += 1
                for j in range(n):
                    err[j] = f_new[j] + ze[j]
                _lu_solve(lu_r, piv_r, err)
                error_norm = _rms(err, scale)
            if error_norm > 1.0:
                factor = _predict_factor(h_abs, h_abs_old, error_norm, error_norm_old)
                h_abs *= max(_MIN_FACTOR, safety * factor)
                have_lu = False
                rejected = True
            else:
                accepted = True

        stats[0] += 1
        recompute_jac = n_iter > 2 and rate > 1e-3
        factor = _predict_factor(h_abs, h_abs_old, error_norm, error_norm_old)
        factor = min(_MAX_FACTOR, safety * factor)
        if not recompute_jac and factor < 1.2:
            factor = 1.0
        else:
            have_lu = False
        _params_at(t_new, t0, p0, dp, p)
        rhs(model, y_new, p, dp, consts, f)
        stats[1] += 1
        if recompute_jac:
            jacobian(model, y_new, p, dp, consts, jac)
            stats[2] += 1
            current_jac = True
        else:
            current_jac = False
        h_abs_old = h_abs
        error_norm_old = error_norm
        # Dense output on [t, t_new]: y_old + Q·(x, x², x³), Q = Zᵀ·P.
        for j in range(n):
            y_old[j] = y[j]
            for c in range(3):
                q[j, c] = z[0, j] * _P[0, c] + z[1, j] * _P[1, c] + z[2, j] * _P[2, c]
        while i_out < nout and (t_out[i_out] < t_new or (last and t_out[i_out] <= t_new)):
            x = (t_out[i_out] - t) / h
            for j in range(n):
                out[i_out, j] = y_old[j] + x * (q[j, 0] + x * (q[j, 1] + x * q[j, 2]))
            i_out += 1
        for j in range(n):
            y_prev_old[j] = y_old[j]
            for c in range(3):
                q_prev[j, c] = q[j, c]
            y[j] = y_new[j]
        t_prev_old = t
        h_prev = h
        have_sol = True
        t = t_new
        h_abs = h_abs * factor
    return status, i_out


@njit(cache=True)
def _predict_factor(h_abs, h_abs_old, error_norm, error_norm_old):  # type: ignore[no-untyped-def]
    if error_norm_old < 0.0 or h_abs_old < 0.0 or error_norm == 0.0:
        multiplier = 1.0
    else:
        multiplier = h_abs / h_abs_old * (error_norm_old / error_norm) ** 0.25
    if error_norm == 0.0:
        return _MAX_FACTOR
    return min(1.0, multiplier) * error_norm**-0.25


@njit(cache=True)
def integrate(  # type: ignore[no-untyped-def]
    model,
    y0,
    consts,
    seg_t0,
    seg_t1,
    seg_p0,
    seg_dp,
    seg_prev,
    t_out,
    rtol,
    atol,
    max_steps,
    out,
    stats,
):
    """Integrate over all schedule segments, writing one state row per sample into `out`.

    Parameters
    ----------
    model : int
        `QUASI_STEADY` (state ``[B]``) or `MASS_ACTION` (state ``[B, C1, C2]``).
    y0 : ndarray, shape (n,)
        State just before the first segment starts (before any jump at its start).
    consts : ndarray, shape (3,)
        ``[W, a1, a2]``.
    seg_t0, seg_t1 : ndarray, shape (s,)
        Segment start and end times (contiguous, increasing).
    seg_p0, seg_dp : ndarray, shape (s, 6)
        Parameters at each segment start and their slopes (order `PARAM_ORDER`).
    seg_prev : ndarray, shape (s, 6)
        Parameters in force just before each segment start (to detect enzyme removal).
    t_out : ndarray, shape (m,)
        Sorted sample times within ``[seg_t0[0], seg_t1[-1]]``; a sample at a step time gets
        the state just after the step.
    rtol : float
        Relative tolerance.
    atol : ndarray, shape (n,)
        Absolute tolerance per state component.
    max_steps : int
        Step budget over the whole course.
    out : ndarray, shape (m, n)
        Filled with the sampled states.
    stats : ndarray of int64, shape (4,)
        Incremented: accepted steps, right-hand-side calls, Jacobians, LU factorisations.

    Returns
    -------
    int
        Status (0 success, negative on failure; see `STATUS_MESSAGES`).
    """
    y = y0.copy()
    i_out = 0
    nseg = seg_t0.shape[0]
    for s in range(nseg):
        if model == 1:
            ratio1 = seg_p0[s, 0] / seg_prev[s, 0]
            if ratio1 < 1.0:
                y[1] = y[1] * ratio1
            ratio2 = seg_p0[s, 3] / seg_prev[s, 3]
            if ratio2 < 1.0:
                kept = y[2] * ratio2
                y[0] = y[0] + (y[2] - kept)
                y[2] = kept
        t0 = seg_t0[s]
        while i_out < t_out.shape[0] and t_out[i_out] <= t0:
            for j in range(y.shape[0]):
                out[i_out, j] = y[j]
            i_out += 1
        last = s == nseg - 1
        if seg_t1[s] > t0:
            status, i_out = _segment(
                model,
                y,
                t0,
                seg_t1[s],
                seg_p0[s],
                seg_dp[s],
                consts,
                t_out,
                i_out,
                last,
                rtol,
                atol,
                max_steps,
                out,
                stats,
            )
            if status != 0:
                return status
    return 0


@njit(cache=True)
def mass_action_start(w, e1, kc1, m1, e2, kc2, m2, out):  # type: ignore[no-untyped-def]
    """Mass-action steady state ``[B, C1, C2]`` for scalar parameters, into `out`.

    The scalar twin of `hairtrigger.core.steady.mass_action_state` (same unknown, the gap
    g = min(V1, V2) − v, same start right of the root and bisection guard), compiled so that
    a time course does not pay numpy's per-call overhead for one point. Tests check that both
    agree to rounding.
    """
    v1 = kc1 * e1
    v2 = kc2 * e2
    vmin = min(v1, v2)
    d1 = v1 - vmin
    d2 = v2 - vmin
    inv_k = 1.0 / kc1 + 1.0 / kc2
    tiny = 2.2250738585072014e-308
    gap_lo = max(-d1 + v1 * m1 / (m1 + w), -d2 + v2 * m2 / (m2 + w), vmin - w / inv_k)
    gap_lo = min(max(gap_lo, tiny), vmin)
    gap_hi = vmin
    gap = gap_lo
    for _ in range(200):
        v = vmin - gap
        r1 = d1 + gap
        r2 = d2 + gap
        f = m1 * v / r1 + m2 * v / r2 + v * inv_k - w
        slope = m1 * v1 / (r1 * r1) + m2 * v2 / (r2 * r2) + inv_k
        if f >= 0.0:
            gap_lo = gap
        else:
            gap_hi = gap
        new = gap + f / slope
        if not (gap_lo < new < gap_hi):
            new = math.sqrt(gap_lo * gap_hi)
        change = abs(new - gap)
        gap = new
        if change <= 4.0 * _EPS * gap:
            break
    v = vmin - gap
    out[0] = m2 * v / (d2 + gap)
    out[1] = v / kc1
    out[2] = v / kc2
