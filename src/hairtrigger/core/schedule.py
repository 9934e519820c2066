"""Changes of cycle parameters over time: steps, timed steps and linear ramps.

A time course starts from the steady state of a cycle and applies a *schedule*: a set of
`Step` and `Ramp` changes of the parameters that an experimenter can move (enzyme amounts,
turnover numbers, Michaelis constants). `Schedule.segments` cuts the course into pieces over
which every parameter is constant or linear in time, which is what the solvers consume.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any, Final, TypeAlias

import numpy as np

from .params import CYCLE_DESCRIPTIONS, CYCLE_KEYS, Cycle, check_positive
from .steady import FloatArray

#: Cycle keys a schedule may change, in the order of the solvers' parameter arrays. Substrate
#: total is fixed (the course conserves it) and binding rates are properties of the enzymes,
#: not of the intervention.
STEP_KEYS: Final[tuple[str, ...]] = (
    "kinase_total",
    "kinase_kcat",
    "kinase_km",
    "phosphatase_total",
    "phosphatase_kcat",
    "phosphatase_km",
)


def check_step_key(key: Any) -> str:
    """Return `key` if a schedule may change it, else raise a `ValueError` listing the keys."""
    if not isinstance(key, str) or key not in STEP_KEYS:
        if isinstance(key, str) and key in CYCLE_KEYS:
            why = f"`{key}` is held fixed during a time course"
        else:
            why = f"unknown step key {key!r}"
        msg = f"{why}; a step may change one of: {', '.join(STEP_KEYS)}"
        raise ValueError(msg)
    return key


def _check_time(name: str, value: Any) -> float:
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be a finite number >= 0 s; got {value!r}"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number < 0.0:
        msg = f"`{name}` must be a finite number >= 0 s; got {number!r}"
        raise ValueError(msg)
    return number


@dataclass(frozen=True)
class Step:
    """Set the parameter `key` to `value` at `time` and hold it there.

    Parameters
    ----------
    key : str
        One of `STEP_KEYS`.
    value : float
        New value, in the unit of the key (µM, 1/s), > 0.
    time : float, default 0
        When the step happens, s.
    """

    key: str
    value: float
    time: float = 0.0

    def __post_init__(self) -> None:
        object.__setattr__(self, "key", check_step_key(self.key))
        object.__setattr__(self, "value", check_positive(self.key, self.value))
        object.__setattr__(self, "time", _check_time("time", self.time))


@dataclass(frozen=True)
class Ramp:
    """Move the parameter `key` linearly to `value` between `start` and `end`, then hold it.

    The ramp starts from whatever value is in force at `start` (after any step at that
    instant).

    Parameters
    ----------
    key : str
        One of `STEP_KEYS`.
    value : float
        Value reached at `end`, > 0.
    start, end : float
        Times, s, with ``0 <= start < end``.
    """

    key: str
    value: float
    start: float
    end: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "key", check_step_key(self.key))
        object.__setattr__(self, "value", check_positive(self.key, self.value))
        start = _check_time("start", self.start)
        end = _check_time("end", self.end)
        if not end > start:
            msg = f"a ramp must end after it starts; got start={start!r} s, end={end!r} s"
            raise ValueError(msg)
        object.__setattr__(self, "start", start)
        object.__setattr__(self, "end", end)


Change: TypeAlias = Step | Ramp
#: What `time_course` accepts as `steps`.
StepsLike: TypeAlias = "Mapping[str, float] | Change | Schedule | Iterable[Change]"


@dataclass(frozen=True)
class Segments:
    """A course cut into pieces with constant-or-linear parameters (arrays for the solvers).

    Attributes
    ----------
    t0, t1 : ndarray, shape (s,)
        Start and end of each segment, s.
    p0, dp : ndarray, shape (s, 6)
        Parameters (order `STEP_KEYS`) at each segment start and their slopes per second.
    prev : ndarray, shape (s, 6)
        Parameters in force just before each segment start.
    """

    t0: FloatArray
    t1: FloatArray
    p0: FloatArray
    dp: FloatArray
    prev: FloatArray

    @property
    def has_ramps(self) -> bool:
        """True if any parameter changes continuously somewhere."""
        return bool(np.any(self.dp != 0.0))

    def values_at(self, t: FloatArray) -> dict[str, FloatArray]:
        """Parameters in force at the times `t` (right-continuous at steps)."""
        index = np.clip(np.searchsorted(self.t0, t, side="right") - 1, 0, len(self.t0) - 1)
        local = (t - self.t0[index])[:, None]
        values = self.p0[index] + self.dp[index] * local
        return {key: values[:, j] for j, key in enumerate(STEP_KEYS)}


@dataclass(frozen=True)
class Schedule:
    """An ordered set of parameter changes applied to a cycle from its steady state.

    Build it from `Step` and `Ramp` objects, or with `Schedule.coerce` from anything
    `time_course` accepts. Two changes of one key may not overlap in time (a step inside a
    ramp of the same key, two ramps of one key that overlap, or two steps of one key at the
    same instant are refused as ambiguous).
    """

    changes: tuple[Change, ...]

    def __post_init__(self) -> None:
        changes = tuple(self.changes)
        for change in changes:
            if not isinstance(change, Step | Ramp):
                msg = f"a schedule holds Step and Ramp objects; got {type(change).__name__}"
                raise ValueError(msg)
        object.__setattr__(self, "changes", changes)
        for key in STEP_KEYS:
            self._check_overlaps(key)

    def _check_overlaps(self, key: str) -> None:
        steps = sorted(c.time for c in self.changes if isinstance(c, Step) and c.key == key)
        ramps = sorted(
            (c.start, c.end) for c in self.changes if isinstance(c, Ramp) and c.key == key
        )
        for first, second in zip(steps, steps[1:], strict=False):
            if first == second:
                msg = f"two steps of `{key}` at the same time {first!r} s"
                raise ValueError(msg)
        for (s1, e1), (s2, _e2) in zip(ramps, ramps[1:], strict=False):
            if s2 < e1:
                msg = f"ramps of `{key}` overlap ({s1!r}–{e1!r} s and from {s2!r} s)"
                raise ValueError(msg)
        for time in steps:
            for start, end in ramps:
                if start < time < end:
                    msg = (
                        f"a step of `{key}` at {time!r} s falls inside its ramp "
                        f"({start!r}–{end!r} s)"
                    )
                    raise ValueError(msg)

    @classmethod
    def coerce(cls, steps: Any) -> Schedule:
        """Build a schedule from a mapping ``{key: value}`` (steps at t = 0), a `Step`, a
        `Ramp`, a `Schedule`, or an iterable of `Step`/`Ramp` objects.
        """  # noqa: D205
        if isinstance(steps, Schedule):
            return steps
        if isinstance(steps, Step | Ramp):
            return cls((steps,))
        if isinstance(steps, Mapping):
            return cls(tuple(Step(key, value) for key, value in steps.items()))
        if isinstance(steps, str | bytes) or not isinstance(steps, Iterable):
            msg = (
                "`steps` must be a mapping such as {'kinase_total': 0.02}, a Step or Ramp, "
                f"or a list of them; got {type(steps).__name__}"
            )
            raise ValueError(msg)
        return cls(tuple(steps))

    @property
    def has_ramps(self) -> bool:
        """True if the schedule contains a ramp."""
        return any(isinstance(c, Ramp) for c in self.changes)

    def segments(self, cycle: Cycle, t_end: float) -> Segments:
        """Cut ``[0, t_end]`` into pieces with constant or linear parameters.

        Parameters
        ----------
        cycle : Cycle
            Parameters in force before t = 0.
        t_end : float
            End of the course, s (> 0).

        Returns
        -------
        Segments
        """
        times = {0.0, float(t_end)}
        for c in self.changes:
            times.update((c.time,) if isinstance(c, Step) else (c.start, c.end))
        breaks = np.array(sorted(t for t in times if t <= t_end))
        n = len(breaks) - 1
        p0 = np.empty((n, len(STEP_KEYS)))
        dp = np.zeros_like(p0)
        prev = np.empty_like(p0)
        base = {key: getattr(cycle, key) for key in STEP_KEYS}
        for j, key in enumerate(STEP_KEYS):
            steps = {c.time: c.value for c in self.changes if isinstance(c, Step) and c.key == key}
            ramps = sorted(
                (c for c in self.changes if isinstance(c, Ramp) and c.key == key),
                key=lambda r: r.start,
            )
            value = base[key]
            ramp: Ramp | None = None
            ramp_from = 0.0
            slope = 0.0
            for i in range(n):
                tau = breaks[i]
                prev[i, j] = ramp_from + slope * (tau - ramp.start) if ramp else value
                if ramp is not None and tau >= ramp.end:
                    value, ramp, slope = ramp.value, None, 0.0
                if tau in steps:
                    value = steps[tau]
                for r in ramps:
                    if r.start == tau:
                        ramp, ramp_from = r, value
                        slope = (r.value - value) / (r.end - r.start)
                p0[i, j] = ramp_from + slope * (tau - ramp.start) if ramp else value
                dp[i, j] = slope
        return Segments(breaks[:-1].copy(), breaks[1:].copy(), p0, dp, prev)

    def describe(self) -> list[str]:
        """One human-readable line per change (for reports and CLI messages)."""
        lines = []
        for c in self.changes:
            what = CYCLE_DESCRIPTIONS[c.key]
            if isinstance(c, Step):
                lines.append(f"t = {c.time:g} s: {what} ({c.key}) -> {c.value:g}")
            else:
                lines.append(f"t = {c.start:g}-{c.end:g} s: {what} ({c.key}) ramps to {c.value:g}")
        return lines
