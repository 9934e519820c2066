"""The one shared state of the explorer: parameters in, derived results out.

`ExplorerState` is a plain traitlets ``HasTraits`` (not a widget, so it sends nothing to the
browser). Every panel observes it and writes to it; panels never talk to each other. The state
holds the cycle in the coordinates a switch designer thinks in — activity ratio, K1 and K2
(Michaelis constants over total substrate), the phosphatase-to-substrate ratio, total
substrate, turnover numbers and binding rates — each as a trait tagged ``param=True`` with the
unit and the bounds that the controls' sliders use. From them it derives the `Cycle`, the
``hairtrigger evaluate`` results and the time course of a step in activity, recomputed once per
change and once per `batch`.

Moving the phosphatase level or a turnover number keeps the activity ratio fixed (the kinase
amount follows); the kinase amount is always shown as well (`kinase_ratio`).
"""

from __future__ import annotations

import math
import numbers
import time
from collections.abc import Callable, Iterator, Mapping
from contextlib import AbstractContextManager, contextmanager, nullcontext
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from traitlets import (
    Dict,
    Enum,
    HasTraits,
    Instance,
    Int,
    TraitError,
    TraitType,
    Tuple,
    Unicode,
    observe,
)

from ..core import (
    CYCLE_KEYS,
    MAP_MEASURES,
    MODELS,
    READOUTS,
    Cycle,
    evaluate,
)

#: Model names as shown to users.
MODEL_LABELS: Final[dict[str, str]] = {
    "quasi_steady": "quasi-steady (complexes neglected)",
    "mass_action": "mass action (complexes kept)",
}

#: Readout names as shown to users.
READOUT_LABELS: Final[dict[str, str]] = {
    "free_modified": "free modified substrate B/W",
    "total_modified": "total modified B + C2 (as after lysis) /W",
}

#: Steepness measures as shown to users (the map's colour-bar label).
MEASURE_LABELS: Final[dict[str, str]] = {
    "hill_coefficient": "effective Hill coefficient nH",
    "response_coefficient": "response coefficient Rv = r90/r10",
    "peak_sensitivity": "peak local sensitivity max dlny/dlnr",
    "relative_hill_coefficient": "relative nH (targets of the ceiling)",
}

#: Threshold bases: fractions of total substrate (Goldbeter–Koshland) or of the ceiling.
THRESHOLD_BASES: Final[tuple[str, ...]] = ("absolute", "relative")

#: Steepness-map resolutions offered (cells per side).
MAP_RESOLUTIONS: Final[tuple[int, ...]] = (64, 128, 256)


class ParameterError(TraitError, ValueError):
    """A parameter value outside what the explorer accepts (a `ValueError` and a `TraitError`)."""


@dataclass(frozen=True)
class ParameterSpec:
    """How one explorer parameter is named, bounded and shown.

    Attributes
    ----------
    name : str
        Trait name on `ExplorerState`.
    symbol : str
        Short label shown beside the control (with the definition where useful).
    description : str
        One-line description (tooltips, tables).
    unit : str
        Unit as shown to users ("" when dimensionless).
    low, high : float
        Bounds (inclusive); powers of ten, so the log sliders' exponents are integers.
    default : float
        Value of the built-in invented scenario.
    mass_action_only : bool
        True for quantities that only the mass-action model uses.
    """

    name: str
    symbol: str
    description: str
    unit: str
    low: float
    high: float
    default: float
    mass_action_only: bool = False

    def check(self, value: Any) -> float:
        """Return `value` as a float if it is a finite number within bounds, else raise."""
        return _check_bounded(self.name, value, self.low, self.high, self.unit)


def _check_bounded(name: str, value: Any, low: float, high: float, unit: str) -> float:
    allowed = f"a number between {low:g} and {high:g}{(' ' + unit) if unit else ''}"
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be {allowed}; got {value!r}"
        raise ParameterError(msg)
    number = float(value)
    if not math.isfinite(number) or not low <= number <= high:
        msg = f"`{name}` must be {allowed}; got {number:g}"
        raise ParameterError(msg)
    return number


#: The explorer's parameters, in the order the controls show them.
PARAMETERS: Final[tuple[ParameterSpec, ...]] = (
    ParameterSpec(
        "activity_ratio",
        "r = V1/V2",
        "activity ratio, kinase over phosphatase "
        "maximal rate (the input; set through the kinase amount)",
        "",
        1e-3,
        1e3,
        1.0,
    ),
    ParameterSpec(
        "K1", "K1 = M1/W", "kinase Michaelis constant over total substrate", "", 1e-4, 1e2, 0.05
    ),
    ParameterSpec(
        "K2",
        "K2 = M2/W",
        "phosphatase Michaelis constant over total substrate",
        "",
        1e-4,
        1e2,
        0.05,
    ),
    ParameterSpec(
        "phosphatase_ratio", "E2/W", "total phosphatase over total substrate", "", 1e-4, 1e1, 0.02
    ),
    ParameterSpec("substrate_total", "W", "total substrate", "µM", 1e-3, 1e3, 1.0),
    ParameterSpec("kinase_kcat", "k1", "kinase turnover number", "1/s", 1e-3, 1e3, 10.0),
    ParameterSpec("phosphatase_kcat", "k2", "phosphatase turnover number", "1/s", 1e-3, 1e3, 10.0),
    ParameterSpec(
        "kinase_kon",
        "a1",
        "kinase–substrate binding rate constant",
        "1/(µM·s)",
        1e-1,
        1e5,
        1000.0,
        mass_action_only=True,
    ),
    ParameterSpec(
        "phosphatase_kon",
        "a2",
        "phosphatase–substrate binding rate constant",
        "1/(µM·s)",
        1e-1,
        1e5,
        1000.0,
        mass_action_only=True,
    ),
)

#: Specs by trait name.
PARAMETER_SPECS: Final[dict[str, ParameterSpec]] = {spec.name: spec for spec in PARAMETERS}

#: The time-course target (activity ratio after the step) has the activity ratio's bounds.
STEP_SPEC: Final[ParameterSpec] = ParameterSpec(
    "step_activity_ratio",
    "r after step",
    "activity ratio after the step at t = 0 (the kinase amount changes)",
    "",
    1e-3,
    1e3,
    1.5,
)

#: The steepness level outlined on the map (in the units of the measure shown).
TARGET_SPEC: Final[ParameterSpec] = ParameterSpec(
    "map_target",
    "outline at",
    "steepness level outlined on the map",
    "",
    1e-3,
    1e6,
    4.0,
)

#: The kinase-to-substrate ratio, derived from the activity ratio (see `kinase_ratio`).
KINASE_RATIO_SYMBOL: Final[str] = "E1/W"


class BoundedFloat(TraitType[float, Any]):
    """A finite float within [low, high] (bool, NaN, ±inf and out-of-range values raise).

    Unlike ``traitlets.Float`` this accepts numpy floats and never clamps: the model raises,
    the sliders clamp (so the sliders' bounds must equal these).
    """

    default_value = 1.0
    info_text = "a finite number within bounds"

    def __init__(self, spec: ParameterSpec, **kwargs: Any) -> None:
        self.spec = spec
        super().__init__(default_value=spec.default, help=spec.description, **kwargs)

    def validate(self, obj: Any, value: Any) -> float:
        """Return the value as a float or raise `ParameterError`."""
        return self.spec.check(value)


def _param(spec: ParameterSpec) -> BoundedFloat:
    return BoundedFloat(spec).tag(
        param=True,
        unit=spec.unit,
        symbol=spec.symbol,
        low=spec.low,
        high=spec.high,
        scale="log",
        mass_action_only=spec.mass_action_only,
    )


@dataclass(frozen=True)
class TimeCourseView:
    """The step response the panels draw (arrays in µM and s; readout as a fraction of W).

    Attributes
    ----------
    t : ndarray
        Times (s), starting at 0 (the step).
    species : dict of ndarray
        ``unmodified``, ``modified``, ``kinase_complex``, ``phosphatase_complex`` (µM).
    readout : ndarray
        The chosen readout as a fraction of total substrate.
    ratio_before, ratio_after : float
        Activity ratio before and after the step.
    half_time, relaxation_time, switching_time : float or None
        Time to half of the readout change, linear relaxation time at the final state, and
        10→90 % switching time (s); None where they do not exist.
    success : bool
        False when the integration failed; `message` says why.
    message : str
        Solver message or problem found.
    """

    t: np.ndarray
    species: dict[str, np.ndarray]
    readout: np.ndarray
    ratio_before: float
    ratio_after: float
    half_time: float | None = None
    relaxation_time: float | None = None
    switching_time: float | None = None
    success: bool = True
    message: str = ""
    extra: dict[str, Any] = field(default_factory=dict)


class ExplorerState(HasTraits):
    """Parameters, model, readout and view settings of one exploration, with derived results.

    Observe ``revision`` to redraw after every recompute; read `cycle`, `results` and
    `time_course` then. Set parameters directly (``state.K1 = 0.01``, validated: a bad value
    raises `ParameterError` and changes nothing) or several at once inside ``with
    state.batch():`` (one recompute at the end; everything rolls back if one value is bad).

    Parameters
    ----------
    **values
        Initial trait values (for example ``K1=0.01, model="quasi_steady"``).

    Examples
    --------
    >>> state = ExplorerState(K1=0.01, K2=0.01, model="quasi_steady")
    >>> round(state.results["hill_coefficient"], 4)
    26.0766
    >>> with state.batch():
    ...     state.K1 = 0.1
    ...     state.K2 = 0.1
    >>> round(state.results["response_coefficient"], 6)
    3.24
    """

    activity_ratio = _param(PARAMETER_SPECS["activity_ratio"])
    K1 = _param(PARAMETER_SPECS["K1"])
    K2 = _param(PARAMETER_SPECS["K2"])
    phosphatase_ratio = _param(PARAMETER_SPECS["phosphatase_ratio"])
    substrate_total = _param(PARAMETER_SPECS["substrate_total"])
    kinase_kcat = _param(PARAMETER_SPECS["kinase_kcat"])
    phosphatase_kcat = _param(PARAMETER_SPECS["phosphatase_kcat"])
    kinase_kon = _param(PARAMETER_SPECS["kinase_kon"])
    phosphatase_kon = _param(PARAMETER_SPECS["phosphatase_kon"])

    model = Enum(MODELS, default_value="mass_action", help="steady-state model").tag(choice=True)
    readout = Enum(READOUTS, default_value="total_modified", help="what is measured").tag(
        choice=True
    )

    # View settings (saved with snapshots under "view").
    step_activity_ratio = BoundedFloat(STEP_SPEC).tag(view=True, unit="", scale="log")
    threshold_basis = Enum(
        THRESHOLD_BASES,
        default_value="absolute",
        help="EC markers as fractions of total substrate (absolute) or of the ceiling (relative)",
    ).tag(view=True)
    map_measure = Enum(
        MAP_MEASURES, default_value="hill_coefficient", help="steepness measure drawn on the map"
    ).tag(view=True)
    map_target = BoundedFloat(TARGET_SPEC).tag(view=True, unit="")
    map_resolution = Enum(MAP_RESOLUTIONS, default_value=128, help="map cells per side").tag(
        view=True
    )

    title = Unicode("", help="snapshot title")
    notes = Unicode("", help="snapshot notes")
    pinned = Tuple(help="pinned snapshots (hairtrigger.io.snapshot.Snapshot) for comparison")

    # Derived (read-only from outside; set by `recompute`).
    cycle = Instance(Cycle, read_only=True, allow_none=True, help="the cycle in core units")
    results = Dict(read_only=True, help="`hairtrigger evaluate` results at the current point")
    time_course = Instance(
        TimeCourseView,
        read_only=True,
        allow_none=True,
        help="step response from the current to the step activity ratio",
    )
    problem = Unicode("", read_only=True, help="why the last recompute failed ('' if it did not)")
    revision = Int(0, read_only=True, help="incremented after every recompute")

    def __init__(self, **values: Any) -> None:
        self._batch_depth = 0
        self._dirty = False
        #: Wall time of the last recompute in seconds (benchmarks read it).
        self.last_recompute_seconds = 0.0
        #: Context-manager factory wrapped around each recompute, called with a label; the
        #: explorer sets it to its busy indicator's ``working`` so slow recomputes show.
        self.progress: Callable[[str], AbstractContextManager[Any]] = lambda label: nullcontext()
        super().__init__()
        with self.batch():
            for name, value in values.items():
                if not self.has_trait(name) or self.traits()[name].read_only:
                    msg = f"unknown or read-only explorer setting `{name}`"
                    raise ValueError(msg)
                setattr(self, name, value)
        if self.revision == 0:
            self.recompute()

    # --- names ----------------------------------------------------------------------------
    @classmethod
    def parameter_names(cls) -> tuple[str, ...]:
        """Names of the numeric parameters (tagged ``param=True``), in control order."""
        return tuple(spec.name for spec in PARAMETERS)

    @classmethod
    def view_names(cls) -> tuple[str, ...]:
        """Names of the view settings saved with snapshots."""
        return tuple(sorted(cls.class_trait_names(view=True)))

    @property
    def inputs(self) -> dict[str, Any]:
        """Current parameters, model and readout as a plain dict."""
        values: dict[str, Any] = {name: getattr(self, name) for name in self.parameter_names()}
        values["model"] = self.model
        values["readout"] = self.readout
        return values

    # --- batching -------------------------------------------------------------------------
    @contextmanager
    def batch(self) -> Iterator[ExplorerState]:
        """Change several traits with one recompute at the end.

        Notifications are held until the block ends (``hold_trait_notifications``), so if one
        assignment raises, every trait set in the block is restored and nothing is recomputed.
        """
        self._batch_depth += 1
        try:
            with self.hold_trait_notifications():
                yield self
        finally:
            self._batch_depth -= 1
            if self._batch_depth == 0 and self._dirty:
                self.recompute()

    @observe(*(spec.name for spec in PARAMETERS), "model", "readout", "step_activity_ratio")
    def _on_input_change(self, change: Mapping[str, Any]) -> None:
        if self._batch_depth:
            self._dirty = True
        else:
            self.recompute()

    # --- conversions ----------------------------------------------------------------------
    def to_cycle(self) -> Cycle:
        """The `Cycle` (core units, µM and 1/s) at the current parameters."""
        w = self.substrate_total
        e2 = self.phosphatase_ratio * w
        e1 = self.activity_ratio * self.phosphatase_kcat * e2 / self.kinase_kcat
        return Cycle(
            substrate_total=w,
            kinase_total=e1,
            kinase_kcat=self.kinase_kcat,
            kinase_km=self.K1 * w,
            kinase_kon=self.kinase_kon,
            phosphatase_total=e2,
            phosphatase_kcat=self.phosphatase_kcat,
            phosphatase_km=self.K2 * w,
            phosphatase_kon=self.phosphatase_kon,
        )

    @staticmethod
    def coordinates_of(cycle: Cycle) -> dict[str, float]:
        """The explorer's coordinates of `cycle` (the inverse of `to_cycle`)."""
        return {
            "activity_ratio": cycle.activity_ratio,
            "K1": cycle.K1,
            "K2": cycle.K2,
            "phosphatase_ratio": cycle.phosphatase_total / cycle.substrate_total,
            "substrate_total": cycle.substrate_total,
            "kinase_kcat": cycle.kinase_kcat,
            "phosphatase_kcat": cycle.phosphatase_kcat,
            "kinase_kon": cycle.kinase_kon,
            "phosphatase_kon": cycle.phosphatase_kon,
        }

    def check_cycle(self, cycle: Cycle) -> dict[str, float]:
        """Coordinates of `cycle`, or `ParameterError` naming the first one out of range."""
        coordinates = self.coordinates_of(cycle)
        for name, value in coordinates.items():
            spec = PARAMETER_SPECS[name]
            try:
                spec.check(value)
            except ParameterError:
                msg = (
                    f"{spec.symbol} = {value:.6g} is outside the explorer's range "
                    f"[{spec.low:g}, {spec.high:g}] ({spec.description})"
                )
                raise ParameterError(msg) from None
        return coordinates

    def set_cycle(self, cycle: Cycle, model: str | None = None, readout: str | None = None) -> None:
        """Set every parameter from `cycle` (and optionally model, readout) with one recompute."""
        coordinates = self.check_cycle(cycle)
        with self.batch():
            for name, value in coordinates.items():
                setattr(self, name, value)
            if model is not None:
                self.model = model
            if readout is not None:
                self.readout = readout

    # --- the kinase amount, derived ---------------------------------------------------------
    def _kinase_factor(self) -> float:
        # E1/W = r · k2 · (E2/W) / k1
        return self.phosphatase_kcat * self.phosphatase_ratio / self.kinase_kcat

    @property
    def kinase_ratio(self) -> float:
        """Total kinase over total substrate, E1/W (follows from the activity ratio)."""
        return self.activity_ratio * self._kinase_factor()

    def kinase_ratio_bounds(self) -> tuple[float, float]:
        """Range of E1/W that keeps the activity ratio within its bounds (at current E2, k1, k2)."""
        spec = PARAMETER_SPECS["activity_ratio"]
        factor = self._kinase_factor()
        return spec.low * factor, spec.high * factor

    def set_kinase_ratio(self, value: Any) -> None:
        """Set the kinase amount as E1/W (moves the activity ratio; raises if out of range)."""
        low, high = self.kinase_ratio_bounds()
        number = _check_bounded("kinase_ratio", value, low * (1 - 1e-12), high * (1 + 1e-12), "")
        ratio = number / self._kinase_factor()
        spec = PARAMETER_SPECS["activity_ratio"]
        self.activity_ratio = min(max(ratio, spec.low), spec.high)

    # --- derived results ------------------------------------------------------------------
    def recompute(self) -> None:
        """Recompute the cycle, results and time course, then bump `revision` (once)."""
        self._dirty = False
        start = time.perf_counter()
        try:
            with self.progress("results"):
                cycle = self.to_cycle()
                results = evaluate(cycle, self.model, self.readout)
                course = compute_time_course(
                    cycle, self.model, self.readout, self.step_activity_ratio
                )
            problem = ""
        except Exception as exc:  # noqa: BLE001 - a failed recompute is reported, not raised
            cycle, results, course = self.cycle, dict(self.results), self.time_course
            problem = f"{type(exc).__name__}: {exc}"
        with self.hold_trait_notifications():
            self.set_trait("cycle", cycle)
            self.set_trait("results", results)
            self.set_trait("time_course", course)
            self.set_trait("problem", problem)
            self.last_recompute_seconds = time.perf_counter() - start
            self.set_trait("revision", self.revision + 1)

    # --- snapshots --------------------------------------------------------------------------
    def view_settings(self) -> dict[str, Any]:
        """The view settings saved with a snapshot (JSON-ready)."""
        return {name: getattr(self, name) for name in self.view_names()}

    def to_snapshot(self, created: str | None = None) -> Any:
        """The current exploration as a `hairtrigger.io.snapshot.Snapshot`.

        The cycle, model, readout, title and notes go in the format's own fields; view
        settings under ``"view"`` and pinned snapshots (without their own extras) under
        ``"pinned"``.
        """
        from ..io.snapshot import Snapshot, snapshot_to_dict

        extras: dict[str, Any] = {"view": self.view_settings()}
        if self.pinned:
            extras["pinned"] = [snapshot_to_dict(p.replace(extras={})) for p in self.pinned]
        options: dict[str, Any] = {} if created is None else {"created": created}
        return Snapshot(
            self.to_cycle(),
            self.model,
            self.readout,
            self.title,
            self.notes,
            extras=extras,
            **options,
        )

    def check_snapshot(self, snapshot: Any) -> tuple[dict[str, Any], tuple[Any, ...], list[str]]:
        """Validate a snapshot for this explorer without changing anything.

        Returns
        -------
        settings : dict
            Trait values to set (parameters, model, readout, title, notes, view settings).
        pinned : tuple of Snapshot
            Pinned snapshots stored in the file.
        notes : list of str
            Things the user should know (ignored unknown view settings).

        Raises
        ------
        ValueError
            Naming the first field the explorer cannot take (out of its range, bad view
            setting, bad pinned entry).
        """
        from ..io.snapshot import Snapshot, SnapshotError, snapshot_from_dict

        if not isinstance(snapshot, Snapshot):
            msg = f"`snapshot` must be a hairtrigger Snapshot; got {type(snapshot).__name__}"
            raise TypeError(msg)
        settings: dict[str, Any] = dict(self.check_cycle(snapshot.cycle))
        settings.update(
            model=snapshot.model,
            readout=snapshot.readout,
            title=snapshot.title,
            notes=snapshot.notes,
        )
        remarks: list[str] = []
        view = snapshot.extras.get("view", {})
        if not isinstance(view, Mapping):
            msg = f"view: must be an object of view settings; got {type(view).__name__}"
            raise ParameterError(msg)
        known = set(self.view_names())
        for name, value in view.items():
            if name not in known:
                remarks.append(f"ignored unknown view setting `view.{name}`")
                continue
            try:
                # Validate against the trait without touching this state.
                self.traits()[name].validate(self, value)
            except (TraitError, ValueError) as exc:
                msg = f"view.{name}: {exc}"
                raise ParameterError(msg) from None
            settings[name] = value
        entries = snapshot.extras.get("pinned", [])
        if not isinstance(entries, list | tuple):
            msg = f"pinned: must be a list of snapshots; got {type(entries).__name__}"
            raise ParameterError(msg)
        pinned = []
        for index, entry in enumerate(entries):
            try:
                pinned.append(snapshot_from_dict(entry).replace(extras={}))
            except SnapshotError as exc:
                msg = f"pinned[{index}]: {exc}"
                raise ParameterError(msg) from None
        return settings, tuple(pinned), remarks

    def apply_snapshot(self, snapshot: Any, keep_pinned: bool = False) -> list[str]:
        """Load `snapshot` into the state with one recompute; nothing changes if it is refused.

        Parameters
        ----------
        snapshot : Snapshot
            As returned by `hairtrigger.io.snapshot.load_snapshot`.
        keep_pinned : bool
            Keep the current pins (and add the file's) instead of replacing them.

        Returns
        -------
        list of str
            Remarks for the user (ignored settings).
        """
        settings, pinned, remarks = self.check_snapshot(snapshot)
        with self.batch():
            for name, value in settings.items():
                setattr(self, name, value)
            self.pinned = (tuple(self.pinned) + pinned) if keep_pinned else pinned
        return remarks


#: Samples per time course.
COURSE_POINTS: Final[int] = 200

#: The drawn window extends this far past the 99 % settling time.
WINDOW_PAST_SETTLING: Final[float] = 1.25


def cycle_arrays(cycle: Cycle) -> dict[str, float]:
    """The cycle's parameters as a plain mapping (cheaper than ``Cycle.arrays``'s deep copy)."""
    return {key: getattr(cycle, key) for key in CYCLE_KEYS}


def _finite_or_none(value: float) -> float | None:
    return float(value) if math.isfinite(value) else None


def compute_time_course(
    cycle: Cycle, model: str, readout: str, ratio_after: float
) -> TimeCourseView | None:
    """Step response from the steady state of `cycle` to the activity ratio `ratio_after`.

    The kinase amount steps at t = 0 (``hairtrigger.core.timecourse.time_course``); the window
    is chosen to cover the transit and the settling, and doubled while the end is still more
    than 1 % of the change away from the new steady state. A step the core refuses (in the
    mass-action model, binding rates too small for the Michaelis constants) gives a course
    with ``success=False`` and a message saying what to change.
    """
    from ..core.timecourse import time_course

    after = cycle.with_activity_ratio(ratio_after)
    if model == "mass_action":
        for who, symbol, kcat, km, kon in (
            ("kinase", "a1", cycle.kinase_kcat, cycle.kinase_km, cycle.kinase_kon),
            (
                "phosphatase",
                "a2",
                cycle.phosphatase_kcat,
                cycle.phosphatase_km,
                cycle.phosphatase_kon,
            ),
        ):
            if kon * km < kcat:
                message = (
                    f"the mass-action time course needs {symbol} >= k/M = {kcat / km:.4g} "
                    f"1/(µM·s) for the {who} (dissociation rate a·M − k = {kon * km - kcat:.3g}"
                    f"/s is negative); raise {symbol} or the {who} Km"
                )
                return _failed_course(cycle, ratio_after, message)
    try:
        return _step_response(cycle, after, model, readout, ratio_after, time_course)
    except ValueError as exc:  # the core refused the step: data for the panel, not a crash
        return _failed_course(cycle, ratio_after, str(exc))


def _failed_course(cycle: Cycle, ratio_after: float, message: str) -> TimeCourseView:
    empty = np.zeros(0)
    species = {
        k: empty for k in ("unmodified", "modified", "kinase_complex", "phosphatase_complex")
    }
    return TimeCourseView(
        t=empty,
        species=species,
        readout=empty,
        ratio_before=cycle.activity_ratio,
        ratio_after=ratio_after,
        success=False,
        message=message,
    )


def _step_response(
    cycle: Cycle,
    after: Cycle,
    model: str,
    readout: str,
    ratio_after: float,
    time_course: Callable[..., Any],
) -> TimeCourseView:
    """Run the step in the core and reduce it to what the panels show.

    The switching times come from `hairtrigger.core.switching.switching_metrics` (exact for the
    quasi-steady model); its 99 % settling time sets the drawn window, so the transit and the
    final approach are both on screen.
    """
    from ..core.switching import relaxation_time, switching_metrics

    steps = {"kinase_total": after.kinase_total}
    metrics = switching_metrics(cycle, steps, model, readout)
    settling = metrics.settling_time
    if metrics.direction != "none" and math.isfinite(settling) and settling > 0:
        t_end = WINDOW_PAST_SETTLING * settling
    else:
        tau = float(relaxation_time(cycle_arrays(after), model))
        t_end = 5.0 * tau if math.isfinite(tau) and tau > 0 else 1.0
    course = time_course(cycle, steps, t_end, COURSE_POINTS, model=model, readout=readout)
    message = (
        course.message
        if not course.success
        else (metrics.message if not metrics.success or metrics.direction == "none" else "")
    )
    return TimeCourseView(
        t=np.asarray(course["t"], dtype=float),
        species={
            key: np.asarray(course[key], dtype=float)
            for key in ("unmodified", "modified", "kinase_complex", "phosphatase_complex")
        },
        readout=np.asarray(course["readout"], dtype=float),
        ratio_before=cycle.activity_ratio,
        ratio_after=ratio_after,
        half_time=_finite_or_none(metrics.half_time),
        relaxation_time=_finite_or_none(metrics.relaxation_time),
        switching_time=_finite_or_none(metrics.time_10_90),
        success=bool(course.success and metrics.success),
        message=message,
        extra={"settling_time": _finite_or_none(settling), "direction": metrics.direction},
    )
