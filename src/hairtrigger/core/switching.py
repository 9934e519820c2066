"""How fast a cycle switches: step-response times and linear relaxation times.

After a step at t = 0 from a steady state, the readout moves from its old steady value r0 to
its new one r∞. The *progress* ``p(t) = (r(t) − r0)/(r∞ − r0)`` runs from 0 to 1 in either
direction; the metrics are the first times p reaches 10 %, 50 % (half-time), 90 % and 99 %
(settling), and the 10→90 % time between the first two.

The *relaxation time* τ is 1/(slowest decay rate) of the equations linearised at a steady
state: for the quasi-steady model
``1/τ = V1·M1/(M1 + A*)² + V2·M2/(M2 + B*)²`` (the linearised rate of the
Goldbeter–Koshland cycle); for the mass-action model the smallest |Re λ| of the Jacobian in
(B, C1, C2). τ grows near the threshold when the enzymes are saturated (critical slowing), so
`relaxation_profile` gives τ along the activity ratio. τ alone understates switching times
after a large step: a zero-order cycle first crosses most of the range at a nearly constant
rate (V1 − V2), and only then relaxes, which is why the settling time here is the first
crossing of 99 % of the actual course, never a multiple of τ.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike

from .params import MODELS, READOUTS, Cycle, check_choice, check_positive
from .schedule import Schedule, Step, StepsLike, check_step_key
from .steady import FloatArray, _get, steady_state
from .steepness import inverse_state
from .timecourse import QuasiSteadyTransit, _both_forms, check_dissociation_rates, time_course

#: Progress levels reported (fractions of the swing).
LEVELS: Final[tuple[float, float, float, float]] = (0.1, 0.5, 0.9, 0.99)

#: Samples of the mass-action course used to locate the crossings (cubic Hermite between them).
CROSSING_SAMPLES: Final[int] = 2001

#: Default step of `evaluate`'s ``dynamics`` block: the kinase amount, halved and restored.
DEFAULT_STEP_KEY: Final[str] = "kinase_total"
DEFAULT_STEP_FACTOR: Final[float] = 0.5


# --- linear relaxation ------------------------------------------------------------------------
def _mass_action_jacobian(params: Mapping[str, ArrayLike]) -> FloatArray:
    """Jacobian of the (B, C1, C2) equations at the mass-action steady state, shape (..., 3, 3)."""
    state = steady_state(params, "mass_action")
    a1 = _get(params, "kinase_kon")
    a2 = _get(params, "phosphatase_kon")
    k1 = _get(params, "kinase_kcat")
    k2 = _get(params, "phosphatase_kcat")
    m1 = _get(params, "kinase_km")
    m2 = _get(params, "phosphatase_km")
    free1 = _get(params, "kinase_total") - state.kinase_complex
    free2 = _get(params, "phosphatase_total") - state.phosphatase_complex
    a, b = state.unmodified, state.modified
    d2 = a2 * m2 - k2
    entries: list[list[FloatArray | float]] = [
        [-a2 * free2, k1, a2 * b + d2],
        [-a1 * free1, -a1 * (free1 + a + m1), -a1 * free1],
        [a2 * free2, 0.0, -a2 * (b + m2)],
    ]
    shape = np.broadcast(*(np.asarray(e) for row in entries for e in row)).shape
    jac = np.empty((*shape, 3, 3))
    for i, row in enumerate(entries):
        for j, value in enumerate(row):
            jac[..., i, j] = value
    return jac


def relaxation_time(params: Mapping[str, ArrayLike], model: str = "quasi_steady") -> FloatArray:
    """Linear relaxation time τ at the steady state, vectorised over parameter arrays (s).

    Parameters
    ----------
    params : mapping
        Cycle parameter arrays (keys of `CYCLE_KEYS`), broadcast against each other.
    model : {"quasi_steady", "mass_action"}
        Model.

    Returns
    -------
    ndarray
        τ = 1/λ with λ the slowest decay rate: the closed form
        ``V1·M1/(M1 + A*)² + V2·M2/(M2 + B*)²`` (quasi-steady), or the smallest |Re| among
        the eigenvalues of the Jacobian in (B, C1, C2) (mass-action).
    """
    check_choice("model", model, MODELS)
    if model == "quasi_steady":
        state = steady_state(params, model)
        v1 = _get(params, "kinase_kcat") * _get(params, "kinase_total")
        v2 = _get(params, "phosphatase_kcat") * _get(params, "phosphatase_total")
        m1 = _get(params, "kinase_km")
        m2 = _get(params, "phosphatase_km")
        rate = v1 * m1 / (m1 + state.unmodified) ** 2 + v2 * m2 / (m2 + state.modified) ** 2
        return np.asarray(1.0 / rate, dtype=float)
    eigenvalues = np.linalg.eigvals(_mass_action_jacobian(params))
    return np.asarray(1.0 / np.min(np.abs(eigenvalues.real), axis=-1), dtype=float)


def relaxation_profile(
    cycle: Cycle, activity_ratio: ArrayLike, model: str = "quasi_steady"
) -> FloatArray:
    """Relaxation time (s) along the activity ratio, the kinase amount being the input.

    Near the threshold of a zero-order cycle τ peaks (critical slowing): plan sampling and
    experiment durations around the peak, not around τ far from it.

    Parameters
    ----------
    cycle : Cycle
        Other parameters.
    activity_ratio : array_like
        V1/V2 values (> 0); the kinase amount is set to ``r·V2/k1``.
    model : {"quasi_steady", "mass_action"}
        Model.

    Returns
    -------
    ndarray
        τ, same shape as `activity_ratio`.
    """
    ratio = np.asarray(activity_ratio, dtype=float)
    if not (np.all(np.isfinite(ratio)) and np.all(ratio > 0.0)):
        msg = "`activity_ratio` must be finite and > 0"
        raise ValueError(msg)
    params: dict[str, ArrayLike] = dict(cycle.as_dict())
    params["kinase_total"] = ratio * cycle.phosphatase_vmax / cycle.kinase_kcat
    return np.broadcast_to(relaxation_time(params, model), ratio.shape).astype(float)


# --- step responses ---------------------------------------------------------------------------
@dataclass(frozen=True)
class SwitchingMetrics:
    """Response of the readout to a step at t = 0 from a steady state.

    Attributes
    ----------
    direction : str
        ``"up"`` (readout rises), ``"down"`` or ``"none"`` (no change of steady readout).
    readout_start, readout_end : float
        Steady readout before and after the step (fraction of W).
    time_to_10, half_time, time_to_90, settling_time : float
        First times the progress reaches 10 %, 50 %, 90 % and 99 % of the swing, s.
    time_10_90 : float
        ``time_to_90 − time_to_10``, s.
    relaxation_time : float
        Linear relaxation time at the new steady state, s.
    success : bool
        False if the times could not be determined (they are then NaN).
    status : int
        0 on success.
    message : str
        What happened.
    """

    direction: str
    readout_start: float
    readout_end: float
    time_to_10: float
    half_time: float
    time_to_90: float
    settling_time: float
    time_10_90: float
    relaxation_time: float
    success: bool = True
    status: int = 0
    message: str = "finished"

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready dict (NaN as None)."""
        out: dict[str, Any] = {}
        for key in (
            "direction",
            "readout_start",
            "readout_end",
            "half_time",
            "time_10_90",
            "time_to_10",
            "time_to_90",
            "settling_time",
            "relaxation_time",
            "success",
            "message",
        ):
            value = getattr(self, key)
            if isinstance(value, float):
                value = value if math.isfinite(value) else None
            out[key] = value
        return out


def _step_schedule(steps: StepsLike) -> Schedule:
    schedule = Schedule.coerce(steps)
    if not schedule.changes or any(
        not isinstance(c, Step) or c.time != 0.0 for c in schedule.changes
    ):
        msg = "switching metrics need one or more steps at t = 0 (no timed steps or ramps)"
        raise ValueError(msg)
    return schedule


def _metrics(
    direction: str,
    r0: float,
    r1: float,
    times: FloatArray,
    tau: float,
    success: bool = True,
    status: int = 0,
    message: str = "finished",
) -> SwitchingMetrics:
    t10, t50, t90, t99 = (float(x) for x in times)
    return SwitchingMetrics(
        direction, r0, r1, t10, t50, t90, t99, t90 - t10, tau, success, status, message
    )


def _hermite_crossings(
    t: FloatArray, p: FloatArray, dp: FloatArray, levels: FloatArray
) -> FloatArray:
    """First times the sampled progress p (slopes dp) reaches each level; NaN if never."""
    reached = p[None, :] >= levels[:, None]
    first = np.argmax(reached, axis=1)
    found = reached[np.arange(len(levels)), first]
    i = np.clip(first, 1, len(t) - 1)
    ta, tb = t[i - 1], t[i]
    pa, pb, ma, mb = p[i - 1], p[i], dp[i - 1], dp[i]
    h = tb - ta
    lo = np.zeros(len(levels))
    hi = np.ones(len(levels))
    for _ in range(60):  # bisection on the cubic Hermite interpolant (bracket [0, 1])
        s = 0.5 * (lo + hi)
        s2, s3 = s * s, s * s * s
        value = (
            (2 * s3 - 3 * s2 + 1) * pa
            + (s3 - 2 * s2 + s) * h * ma
            + (-2 * s3 + 3 * s2) * pb
            + (s3 - s2) * h * mb
        )
        below = value < levels
        lo = np.where(below, s, lo)
        hi = np.where(below, hi, s)
    times = ta + 0.5 * (lo + hi) * h
    times = np.where(first == 0, t[0], times)
    return np.where(found, times, np.nan)


def _mass_action_metrics(
    before: Cycle,
    after: Cycle,
    schedule: Schedule,
    readout: str,
    direction: str,
    r0: float,
    r1: float,
    tau: float,
) -> SwitchingMetrics:
    levels = np.asarray(LEVELS)
    # Horizon: the quasi-steady transit to 99.99 % (includes the near-linear zero-order phase)
    # plus ten mass-action relaxation times; extended while the course has not settled.
    w = before.substrate_total
    b0, a0 = _both_forms(
        w, before.kinase_vmax, before.phosphatase_vmax, before.kinase_km, before.phosphatase_km
    )
    transit = QuasiSteadyTransit(
        w, after.kinase_vmax, after.phosphatase_vmax, after.kinase_km, after.phosphatase_km, b0, a0
    )
    horizon = float(transit.time_at_fraction(0.9999)) if transit.d0 != 0.0 else 0.0
    horizon = max(horizon, 0.0) + 10.0 * tau
    for _ in range(10):
        course = time_course(
            before, schedule, horizon, CROSSING_SAMPLES, model="mass_action", readout=readout
        )
        if not course.success:
            nan = np.full(4, np.nan)
            return _metrics(direction, r0, r1, nan, tau, False, course.status, course.message)
        progress = (course.readout - r0) / (r1 - r0)
        if abs(progress[-1] - 1.0) <= 1e-3 and np.all(progress[-20:] >= 0.99):
            break
        horizon *= 4.0
    else:
        nan = np.full(4, np.nan)
        return _metrics(
            direction, r0, r1, nan, tau, False, 1, "the course did not settle within the horizon"
        )
    # d(readout)/dt from the rate equations under the new parameters.
    c1, c2, b = course.kinase_complex, course.phosphatase_complex, course.modified
    if readout == "total_modified":
        rate = after.kinase_kcat * c1 - after.phosphatase_kcat * c2
    else:
        free2 = after.phosphatase_total - c2
        rate = (
            after.kinase_kcat * c1 - after.phosphatase_kon * b * free2 + after.phosphatase_koff * c2
        )
    slope = rate / w / (r1 - r0)
    times = _hermite_crossings(course.t, progress, slope, levels)
    return _metrics(direction, r0, r1, times, tau)


def switching_metrics(
    cycle: Cycle,
    steps: StepsLike,
    model: str = "quasi_steady",
    readout: str = "total_modified",
) -> SwitchingMetrics:
    """Half-time, 10→90 % time, settling and relaxation time after a step at t = 0.

    Parameters
    ----------
    cycle : Cycle
        Parameters before the step; the course starts from their steady state.
    steps : mapping or list of Step
        Changes applied at t = 0, e.g. ``{"kinase_total": 0.02}``.
    model : {"quasi_steady", "mass_action"}
        Model. Quasi-steady times are exact (closed-form t(B)); mass-action times come from
        the compiled integrator with cubic Hermite interpolation between 2001 samples.
    readout : {"free_modified", "total_modified"}
        Readout whose progress is timed.

    Returns
    -------
    SwitchingMetrics
        ``direction == "none"`` with NaN times if the step leaves the steady readout
        unchanged.
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise ValueError(msg)
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    schedule = _step_schedule(steps)
    after = cycle.replace(**{c.key: c.value for c in schedule.changes if isinstance(c, Step)})
    if model == "mass_action":
        check_dissociation_rates(schedule.segments(cycle, 1.0), cycle)
    r0 = float(steady_state(cycle.arrays(), model).readout(readout))
    r1 = float(steady_state(after.arrays(), model).readout(readout))
    tau = float(relaxation_time(after.arrays(), model))
    nan = np.full(4, np.nan)
    if r1 == r0:
        return _metrics(
            "none", r0, r1, nan, tau, True, 0, "the step leaves the steady readout unchanged"
        )
    direction = "up" if r1 > r0 else "down"
    if model == "quasi_steady":
        w = cycle.substrate_total
        b0, a0 = _both_forms(
            w, cycle.kinase_vmax, cycle.phosphatase_vmax, cycle.kinase_km, cycle.phosphatase_km
        )
        transit = QuasiSteadyTransit(
            w,
            after.kinase_vmax,
            after.phosphatase_vmax,
            after.kinase_km,
            after.phosphatase_km,
            b0,
            a0,
        )
        return _metrics(direction, r0, r1, transit.time_at_fraction(np.asarray(LEVELS)), tau)
    return _mass_action_metrics(cycle, after, schedule, readout, direction, r0, r1, tau)


def switching_round_trip(
    cycle: Cycle,
    key: str,
    low: float,
    high: float,
    model: str = "quasi_steady",
    readout: str = "total_modified",
) -> dict[str, SwitchingMetrics]:
    """Metrics for a step of `key` from `low` to `high` and back.

    Returns
    -------
    dict
        ``"up"``: start at the steady state with ``key = low``, step to `high`;
        ``"down"``: start with ``key = high``, step to `low`. (For the kinase these are
        the rising and falling responses; for the phosphatase the names still follow the
        parameter, not the readout, and each result's ``direction`` says which way the
        readout moved.)
    """
    key = check_step_key(key)
    low = check_positive(key, low)
    high = check_positive(key, high)
    if not low < high:
        msg = f"`low` must be below `high`; got {low!r} and {high!r}"
        raise ValueError(msg)
    return {
        "up": switching_metrics(cycle.replace(**{key: low}), {key: high}, model, readout),
        "down": switching_metrics(cycle.replace(**{key: high}), {key: low}, model, readout),
    }


def default_dynamics(
    cycle: Cycle, model: str = "quasi_steady", readout: str = "total_modified"
) -> dict[str, Any]:
    """The ``dynamics`` block of `hairtrigger.evaluate` (JSON-ready).

    The default step halves and restores the kinase amount: ``up`` starts from the steady
    state at half the cycle's kinase amount and steps it to the cycle's value; ``down`` starts
    from the cycle's steady state and halves the kinase. Halving an enzyme's activity is the
    scale of a typical perturbation (partial inhibition, halved expression), it refers to the
    cycle's own operating point, and it needs no other input. The block also gives the
    relaxation time at the cycle's steady state and at the threshold (the kinase amount
    giving half the readout), where it is largest for a saturated cycle.
    """
    high = cycle.kinase_total
    low = DEFAULT_STEP_FACTOR * high
    pair = switching_round_trip(cycle, DEFAULT_STEP_KEY, low, high, model, readout)
    tau_here = float(relaxation_time(cycle.arrays(), model))
    threshold = inverse_state(0.5, cycle.arrays(), model, readout)
    tau_threshold: float | None = None
    if bool(threshold.reachable):
        at_threshold = cycle.replace(kinase_total=float(threshold.kinase_total))
        tau_threshold = float(relaxation_time(at_threshold.arrays(), model))
    return {
        "step": {
            "key": DEFAULT_STEP_KEY,
            "low": low,
            "high": high,
            "description": "kinase amount halved (down) and restored (up), from steady state",
        },
        "up": pair["up"].as_dict(),
        "down": pair["down"].as_dict(),
        "relaxation_time": tau_here if math.isfinite(tau_here) else None,
        "relaxation_time_at_threshold": tau_threshold,
    }
