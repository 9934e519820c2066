"""Time courses of a cycle after steps, timed steps or ramps of its parameters.

Every course starts from the steady state of the given cycle (before t = 0) and applies a
`~hairtrigger.core.schedule.Schedule`.

``quasi_steady``
    One equation, dB/dt = V1·A/(M1 + A) − V2·B/(M2 + B) with A = W − B. While parameters are
    piecewise constant (steps) the solution is exact: t is a closed-form function of B
    (`QuasiSteadyTransit`), inverted for B on the sample times. Ramps use the compiled
    integrator.
``mass_action``
    Three equations in (B, C1, C2) with binding rate constants a1, a2 and dissociation rates
    d = a·M − k, integrated by a compiled implicit Runge–Kutta method (Radau IIA, order 5)
    with the analytic Jacobian. Free unmodified substrate and free enzymes follow from the
    conservation laws, so substrate and each enzyme are conserved to rounding.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike

from .params import MODELS, READOUTS, Cycle, check_choice
from .schedule import STEP_KEYS, Schedule, Segments, StepsLike
from .steady import FloatArray, goldbeter_koshland

#: Keys of a `TimeCourse` mapping, in CSV column order.
COURSE_KEYS: Final[tuple[str, ...]] = (
    "t",
    "unmodified",
    "modified",
    "kinase_complex",
    "phosphatase_complex",
    "readout",
)

#: Solver methods accepted by `time_course`.
METHODS: Final[tuple[str, ...]] = ("auto", "exact", "ode")

#: Default relative tolerance of the compiled integrator.
DEFAULT_RTOL: Final[float] = 1e-8

#: Absolute tolerance of the integrator relative to each component's scale (W or enzyme).
ATOL_FACTOR: Final[float] = 1e-12

#: Step budget of one course.
MAX_STEPS: Final[int] = 2_000_000


# --- result ----------------------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class TimeCourse(Mapping[str, FloatArray]):
    """Sampled time course of a cycle; a read-only mapping of the arrays in `COURSE_KEYS`.

    Attributes
    ----------
    t : ndarray
        Sample times, s.
    unmodified, modified : ndarray
        Free unmodified (A) and free modified (B) substrate, µM.
    kinase_complex, phosphatase_complex : ndarray
        Kinase·A (C1) and phosphatase·B (C2), µM (zero in the quasi-steady model).
    readout : ndarray
        The readout as a fraction of total substrate.
    kinase_total, phosphatase_total : ndarray
        Enzyme amounts in force at each sample, µM (free enzyme = total − complex).
    substrate_total : float
        W, µM.
    model, readout_name : str
        The model and the readout definition.
    method : str
        ``"exact"`` (closed-form quasi-steady solution) or ``"ode"`` (compiled integrator).
    success : bool
        False if the integrator stopped early (samples after that point are NaN).
    status : int
        0 on success, negative on failure.
    message : str
        What happened, in words.
    statistics : dict
        Work done (steps, right-hand-side calls, ...), for benchmarks.
    """

    t: FloatArray
    unmodified: FloatArray
    modified: FloatArray
    kinase_complex: FloatArray
    phosphatase_complex: FloatArray
    readout: FloatArray
    kinase_total: FloatArray
    phosphatase_total: FloatArray
    substrate_total: float
    model: str
    readout_name: str
    method: str
    success: bool = True
    status: int = 0
    message: str = "finished"
    statistics: dict[str, int] = field(default_factory=dict)

    def __getitem__(self, key: str) -> FloatArray:
        if key not in COURSE_KEYS:
            raise KeyError(key)
        value: FloatArray = getattr(self, key)
        return value

    def __iter__(self) -> Iterator[str]:
        return iter(COURSE_KEYS)

    def __len__(self) -> int:
        return len(COURSE_KEYS)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, TimeCourse):
            return NotImplemented
        return all(np.array_equal(self[k], other[k], equal_nan=True) for k in COURSE_KEYS)

    __hash__ = None  # type: ignore[assignment]

    @property
    def free_kinase(self) -> FloatArray:
        """Free kinase E1 − C1, µM."""
        return self.kinase_total - self.kinase_complex

    @property
    def free_phosphatase(self) -> FloatArray:
        """Free phosphatase E2 − C2, µM."""
        return self.phosphatase_total - self.phosphatase_complex

    def as_array(self) -> FloatArray:
        """All columns of `COURSE_KEYS` as one array, shape (points, 6)."""
        return np.column_stack([self[k] for k in COURSE_KEYS])


# --- exact quasi-steady solution ---------------------------------------------------------------
def _phi_psi(z: FloatArray) -> tuple[FloatArray, FloatArray]:
    """φ(z) = log1p(z)/z and ψ(z) = (z − log1p z)/z² (1 and 1/2 at z = 0).

    ψ comes from its power series Σ (−z)^k/(k + 2) where the difference cancels.
    """
    nonzero = z != 0.0
    log = np.log1p(z)
    phi = np.divide(log, z, out=np.ones_like(z), where=nonzero)
    psi = np.divide(z - log, z * z, out=np.full_like(z, 0.5), where=nonzero)
    small = np.abs(z) < 0.02
    if np.any(small):
        zs = z[small]
        acc = np.full_like(zs, _PSI_SERIES[-1])
        for coefficient in _PSI_SERIES[-2::-1]:
            acc = acc * zs + coefficient
        psi[small] = acc
    return phi, psi


#: Taylor coefficients of ψ; 11 terms reach rounding for |z| < 0.02.
_PSI_SERIES: Final[tuple[float, ...]] = tuple((-1.0) ** k / (k + 2) for k in range(11))


def _both_forms(w: float, v1: float, v2: float, m1: float, m2: float) -> tuple[float, float]:
    """Steady modified and unmodified substrate (µM), each from its own accurate formula."""
    both = goldbeter_koshland(
        np.array([v1, v2]),
        np.array([v2, v1]),
        np.array([m1 / w, m2 / w]),
        np.array([m2 / w, m1 / w]),
    )
    return float(both[0]) * w, float(both[1]) * w


# Interpolation table of t(y): y = 0, then 95 points geometric from 1e-6 to y_top.
_TABLE_LOG_LOW: Final[float] = math.log(1e-6)
_TABLE_LOG_SPAN: Final[np.ndarray] = np.concatenate(([0.0], np.linspace(0.0, 1.0, 95)))


class QuasiSteadyTransit:
    """Exact solution of the quasi-steady equation from any start under fixed parameters.

    With N(B) = V1·(W − B)(M2 + B) − V2·B·(M1 + W − B) and D(B) = (M1 + A)(M2 + B),
    dB/dt = N/D. Factoring ``N(B) = (B − B*)·L(B)`` with L linear and negative on [0, W]
    (B* the steady state) and splitting D/N into partial fractions gives, for the
    progress variable ``y = −ln((B − B*)/(B0 − B*))`` (0 at the start, → ∞ at steady state),

        t(y) = τ·y + (ρ − B0)·(Δ/L0)·φ(z) − (Δ²/L0)·ψ(z),

    where Δ = B − B0, L0 = L(B0), z = δΔ/L0, δ = V2 − V1, ρ = M1 + A* − M2 + τδ,
    φ(z) = log1p(z)/z, ψ(z) = (z − log1p z)/z², and τ = 1/λ is the linear relaxation time at
    B*. No term carries 1/(V1 − V2), so the solution is smooth through V1 = V2; L is evaluated
    as a sum of terms of one sign. dt/dy = D(B)/|L(B)| > 0, so t(y) is invertible.

    Parameters
    ----------
    substrate_total, v1, v2, m1, m2 : float
        W, maximal rates V1, V2 (µM/s) and Michaelis constants M1, M2 (µM) in force.
    modified0, unmodified0 : float
        Start B0 and A0 = W − B0 (pass both, computed accurately).
    """

    def __init__(
        self,
        substrate_total: float,
        v1: float,
        v2: float,
        m1: float,
        m2: float,
        modified0: float,
        unmodified0: float,
    ) -> None:
        w = substrate_total
        self.w, self.v1, self.v2, self.m1, self.m2 = w, v1, v2, m1, m2
        self.b0, self.a0 = modified0, unmodified0
        self.b_star, self.a_star = _both_forms(w, v1, v2, m1, m2)
        self.rate = v1 * m1 / (m1 + self.a_star) ** 2 + v2 * m2 / (m2 + self.b_star) ** 2
        self.tau = 1.0 / self.rate
        self.delta = v2 - v1
        # Distance from steady state, from whichever pair of values is the more accurate.
        if max(modified0, self.b_star) <= max(unmodified0, self.a_star):
            self.d0 = modified0 - self.b_star
        else:
            self.d0 = self.a_star - unmodified0
        self.l0 = float(self._linear_factor(np.asarray(modified0), np.asarray(unmodified0)))
        self.rho_minus_b0 = (m1 + self.a_star) - (m2 + modified0) + self.tau * self.delta

    def _linear_factor(self, b: FloatArray, a: FloatArray) -> FloatArray:
        """L(B) = N(B)/(B − B*), as a sum of non-positive terms."""
        if self.delta <= 0.0:
            return -self.v1 * self.w * self.m2 / self.b_star + self.delta * b
        return -self.v2 * self.w * self.m1 / self.a_star - self.delta * a

    def state(self, y: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Modified and unmodified substrate (µM) at progress `y`."""
        offset = self.d0 * np.exp(-y)
        return self.b_star + offset, self.a_star - offset

    def time(self, y: FloatArray) -> FloatArray:
        """Time (s) at which the progress variable reaches `y` (≥ 0)."""
        return self._time_and_slope(np.asarray(y, dtype=float), slope=False)[0]

    def slope(self, y: FloatArray) -> FloatArray:
        """dt/dy = D(B)/|L(B)| (s), positive."""
        return self._time_and_slope(np.asarray(y, dtype=float), slope=True)[1]

    def _time_and_slope(self, y: FloatArray, slope: bool = True) -> tuple[FloatArray, FloatArray]:
        em1 = np.expm1(-y)
        delta_b = em1 * self.d0
        ratio = delta_b / self.l0
        phi, psi = _phi_psi(self.delta * ratio)
        t = self.tau * y + (self.rho_minus_b0 * phi - delta_b * psi) * ratio
        if not slope:
            return t, t
        # B − B* = d0·e^(−y); e^(−y) = 1 + expm1 is accurate enough for the slope.
        offset = self.d0 * (em1 + 1.0)
        b = self.b_star + offset
        a = self.a_star - offset
        return t, (self.m1 + a) * (self.m2 + b) / -self._linear_factor(b, a)

    def time_at_fraction(self, fraction: ArrayLike) -> FloatArray:
        """Time to cover `fraction` (in [0, 1)) of the way from B0 to B*, s."""
        f = np.asarray(fraction, dtype=float)
        return self.time(-np.log1p(-f))

    def progress_at(self, t: FloatArray, max_iterations: int = 60) -> FloatArray:
        """Invert t(y) for sample times `t` (vectorised safeguarded Newton/bisection).

        A 96-point table of t(y) gives starting points by interpolation; each sample then
        keeps a bracket [lo, hi] with t(lo) <= t_i <= t(hi) and takes Newton steps, falling
        back to bisection when a step would leave the bracket.
        """
        t = np.asarray(t, dtype=float)
        if self.d0 == 0.0:
            return np.zeros_like(t)
        # Table: y from 0 to where the remaining distance is below rounding.
        y_top = max(math.log(abs(self.d0) / (1e-17 * self.w)), 1.0)
        table_y = np.exp(_TABLE_LOG_SPAN * (math.log(y_top) - _TABLE_LOG_LOW) + _TABLE_LOG_LOW)
        table_y[0] = 0.0
        table_t = self.time(table_y)
        beyond = t > table_t[-1]
        y = np.interp(t, table_t, table_y)
        # t ≈ τ·y + const for large y; extend the table linearly beyond its end.
        y = np.where(beyond, y_top + (t - table_t[-1]) / self.slope(np.asarray(y_top)), y)
        index = np.clip(np.searchsorted(table_t, t), 1, len(table_t) - 1)
        lo = np.where(beyond, y_top, table_y[index - 1])
        hi = np.where(beyond, np.inf, table_y[index])
        for _ in range(max_iterations):
            value, slope = self._time_and_slope(y)
            residual = value - t
            lo = np.where(residual <= 0.0, y, lo)
            hi = np.where(residual >= 0.0, y, hi)
            new = y - residual / slope
            outside = ~((new >= lo) & (new <= hi))
            if np.any(outside):
                mid = np.where(np.isfinite(hi), 0.5 * (lo + hi), lo + np.maximum(lo, 1.0))
                new = np.where(outside, mid, new)
            # Quadratic convergence: after a step this small the error is ~ step², negligible.
            done = np.abs(new - y) <= 1e-12 * np.maximum(y, 1.0)
            y = new
            if np.all(done):
                break
        return np.where(t <= 0.0, 0.0, y)

    def solve(self, t: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Modified and unmodified substrate (µM) at times `t` (s, ≥ 0)."""
        return self.state(self.progress_at(t))


# --- validation -------------------------------------------------------------------------------
def _check_t_end(t_end: Any) -> float:
    if isinstance(t_end, bool) or not isinstance(t_end, int | float | np.integer | np.floating):
        msg = f"`t_end` must be a finite number > 0 s; got {t_end!r}"
        raise ValueError(msg)
    value = float(t_end)
    if not math.isfinite(value) or value <= 0.0:
        msg = f"`t_end` must be a finite number > 0 s; got {value!r}"
        raise ValueError(msg)
    return value


def _check_points(points: Any) -> int:
    if isinstance(points, bool) or not isinstance(points, int | np.integer) or points < 2:
        msg = f"`points` must be an integer >= 2; got {points!r}"
        raise ValueError(msg)
    if points > 10_000_000:
        msg = f"`points` must be at most 10000000; got {points!r}"
        raise ValueError(msg)
    return int(points)


def check_dissociation_rates(segments: Segments, cycle: Cycle) -> None:
    """Raise `ValueError` if kon·Km − kcat < 0 anywhere in the course (mass-action only).

    The parameters are linear within a segment, so the rate is checked at segment ends.
    """
    ends = segments.p0 + segments.dp * (segments.t1 - segments.t0)[:, None]
    for name, kon, km_index, kcat_index in (
        ("kinase", cycle.kinase_kon, 2, 1),
        ("phosphatase", cycle.phosphatase_kon, 5, 4),
    ):
        for values, when in (
            (segments.prev, "before"),
            (segments.p0, "at"),
            (ends, "at the end of"),
        ):
            koff = kon * values[:, km_index] - values[:, kcat_index]
            bad = np.flatnonzero(koff < 0.0)
            if bad.size:
                i = int(bad[0])
                msg = (
                    f"the {name} dissociation rate {name}_kon*{name}_km - {name}_kcat would be "
                    f"negative ({koff[i]:.6g} 1/s) {when} the segment starting at "
                    f"t = {segments.t0[i]:g} s; the mass-action model needs "
                    f"{name}_kon >= {name}_kcat/{name}_km"
                )
                raise ValueError(msg)


# --- solvers ----------------------------------------------------------------------------------
def _exact_quasi_steady(
    cycle: Cycle, segments: Segments, t: FloatArray
) -> tuple[FloatArray, FloatArray]:
    w = cycle.substrate_total
    b, a = _both_forms(
        w, cycle.kinase_vmax, cycle.phosphatase_vmax, cycle.kinase_km, cycle.phosphatase_km
    )
    modified = np.empty_like(t)
    unmodified = np.empty_like(t)
    index = np.searchsorted(segments.t0, t, side="right") - 1
    for s in range(len(segments.t0)):
        p = dict(zip(STEP_KEYS, segments.p0[s], strict=True))
        transit = QuasiSteadyTransit(
            w,
            p["kinase_total"] * p["kinase_kcat"],
            p["phosphatase_total"] * p["phosphatase_kcat"],
            p["kinase_km"],
            p["phosphatase_km"],
            b,
            a,
        )
        mask = index == s
        if np.any(mask):
            modified[mask], unmodified[mask] = transit.solve(t[mask] - segments.t0[s])
        if s + 1 < len(segments.t0):
            end = np.asarray([segments.t1[s] - segments.t0[s]])
            b_end, a_end = transit.solve(end)
            b, a = float(b_end[0]), float(a_end[0])
    return modified, unmodified


def _integrate(
    model: str, cycle: Cycle, segments: Segments, t: FloatArray, rtol: float
) -> tuple[FloatArray, int, dict[str, int]]:
    from . import _radau  # compiled lazily: importing hairtrigger stays light

    w = cycle.substrate_total
    consts = np.array([w, cycle.kinase_kon, cycle.phosphatase_kon])
    if model == "quasi_steady":
        b0 = float(
            goldbeter_koshland(cycle.kinase_vmax, cycle.phosphatase_vmax, cycle.K1, cycle.K2)
        )
        y0 = np.array([b0 * w])
        atol = np.array([ATOL_FACTOR * w])
        code = _radau.QUASI_STEADY
    else:
        y0 = np.empty(3)
        _radau.mass_action_start(
            w,
            cycle.kinase_total,
            cycle.kinase_kcat,
            cycle.kinase_km,
            cycle.phosphatase_total,
            cycle.phosphatase_kcat,
            cycle.phosphatase_km,
            y0,
        )
        e1 = min(w, float(np.max(segments.p0[:, 0])))
        e2 = min(w, float(np.max(segments.p0[:, 3])))
        atol = ATOL_FACTOR * np.array([w, e1, e2])
        code = _radau.MASS_ACTION
    out = np.full((len(t), len(y0)), np.nan)
    stats = np.zeros(4, dtype=np.int64)
    status = int(
        _radau.integrate(
            code,
            y0,
            consts,
            segments.t0,
            segments.t1,
            segments.p0,
            segments.dp,
            segments.prev,
            t,
            float(rtol),
            atol,
            MAX_STEPS,
            out,
            stats,
        )
    )
    names = ("steps", "rhs_calls", "jacobians", "factorisations")
    return out, status, {k: int(v) for k, v in zip(names, stats, strict=True)}


def time_course(
    cycle: Cycle,
    steps: StepsLike,
    t_end: float,
    points: int,
    model: str = "quasi_steady",
    readout: str = "total_modified",
    *,
    method: str = "auto",
    rtol: float = DEFAULT_RTOL,
) -> TimeCourse:
    """Time course of a cycle from its steady state after parameter changes.

    Parameters
    ----------
    cycle : Cycle
        Parameters before t = 0; the course starts from their steady state.
    steps : mapping, Step, Ramp, Schedule or list of Step/Ramp
        The changes. A mapping such as ``{"kinase_total": 0.02}`` sets those parameters at
        t = 0. Keys: `STEP_KEYS` (enzyme amounts, turnover numbers, Michaelis constants). A
        change keeps the other parameters, so in the mass-action model a new kcat or Km
        changes the dissociation rate kon·Km − kcat. An enzyme added arrives free; an enzyme
        removed leaves free and bound forms in proportion, releasing the bound substrate.
    t_end : float
        End of the course, s (> 0).
    points : int
        Number of samples, evenly spaced on [0, t_end] (>= 2).
    model : {"quasi_steady", "mass_action"}
        Complexes neglected or kept.
    readout : {"free_modified", "total_modified"}
        Definition of the ``readout`` column (fraction of total substrate).
    method : {"auto", "exact", "ode"}
        ``auto`` uses the exact solution for quasi-steady courses without ramps and the
        compiled integrator otherwise; ``exact`` insists on the former, ``ode`` forces the
        latter (useful as a cross-check).
    rtol : float
        Relative tolerance of the integrator (absolute tolerances are `ATOL_FACTOR` times
        the scale of each species).

    Returns
    -------
    TimeCourse
        Mapping of the arrays ``t, unmodified, modified, kinase_complex,
        phosphatase_complex, readout`` (µM, s; readout a fraction), with ``success``,
        ``status`` and ``message``. Values at a step time are those just after the step.

    Raises
    ------
    ValueError
        For an unknown step key, a non-positive value, ``t_end <= 0``, ``points < 2``,
        overlapping changes, or (mass-action) a negative dissociation rate.

    Examples
    --------
    >>> from hairtrigger.core.params import Cycle
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.05,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.05, phosphatase_kon=100.0)
    >>> course = time_course(c, {"kinase_total": 0.02}, t_end=200.0, points=5)
    >>> list(course)
    ['t', 'unmodified', 'modified', 'kinase_complex', 'phosphatase_complex', 'readout']
    >>> round(float(course["readout"][0]), 6), round(float(course["readout"][-1]), 4)
    (0.5, 0.9547)
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise ValueError(msg)
    schedule = Schedule.coerce(steps)
    t_end = _check_t_end(t_end)
    points = _check_points(points)
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    check_choice("method", method, METHODS)
    if not (isinstance(rtol, int | float) and 1e-14 <= float(rtol) <= 1e-2):
        msg = f"`rtol` must be a number between 1e-14 and 1e-2; got {rtol!r}"
        raise ValueError(msg)
    segments = schedule.segments(cycle, t_end)
    if model == "mass_action":
        if method == "exact":
            msg = "`method='exact'` exists only for the quasi-steady model"
            raise ValueError(msg)
        check_dissociation_rates(segments, cycle)
    elif method == "exact" and segments.has_ramps:
        msg = "`method='exact'` needs piecewise-constant parameters (no ramps)"
        raise ValueError(msg)

    t = np.linspace(0.0, t_end, points)
    w = cycle.substrate_total
    zeros = np.zeros_like(t)
    status, message = 0, "finished"
    stats: dict[str, int] = {}
    use_exact = model == "quasi_steady" and (
        method == "exact" or (method == "auto" and not segments.has_ramps)
    )
    if use_exact:
        modified, unmodified = _exact_quasi_steady(cycle, segments, t)
        c1, c2 = zeros, zeros.copy()
        used = "exact"
    else:
        from ._radau import STATUS_MESSAGES

        states, status, stats = _integrate(model, cycle, segments, t, rtol)
        modified = states[:, 0]
        if model == "quasi_steady":
            c1, c2 = zeros, zeros.copy()
            unmodified = w - modified
        else:
            c1, c2 = states[:, 1], states[:, 2]
            unmodified = w - modified - c1 - c2
        message = STATUS_MESSAGES.get(status, f"integrator status {status}")
        used = "ode"
    values = segments.values_at(t)
    value = modified / w if readout == "free_modified" else (modified + c2) / w
    return TimeCourse(
        t=t,
        unmodified=np.asarray(unmodified, dtype=float),
        modified=np.asarray(modified, dtype=float),
        kinase_complex=np.asarray(c1, dtype=float),
        phosphatase_complex=np.asarray(c2, dtype=float),
        readout=np.asarray(value, dtype=float),
        kinase_total=values["kinase_total"],
        phosphatase_total=values["phosphatase_total"],
        substrate_total=w,
        model=model,
        readout_name=readout,
        method=used,
        success=status == 0,
        status=status,
        message=message,
        statistics=stats,
    )
