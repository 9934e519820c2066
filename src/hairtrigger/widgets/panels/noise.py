"""Noise panel: the switch at a finite copy number of substrate molecules.

Three views of one compartment (a cell of given volume, or a given substrate count):

* the exact stationary distribution p(n) of the modified count n of the quasi-steady
  birth–death chain (`hairtrigger.core.noise`), with mean ± sd and the Fano factor, updated
  live (debounced at large copy numbers);
* the population-mean response against the activity ratio at this copy number beside the
  deterministic (N → ∞) curve, with both effective Hill coefficients;
* on demand, an ensemble of stochastic trajectories (Gillespie, `hairtrigger.core.ssa`) of the
  explorer's step in activity, drawn as mean ± sd over the deterministic time course of the
  same step (`hairtrigger.core.timecourse.time_course`). The ensemble runs in a worker thread
  with a progress bar and a Cancel button.

The copy number belongs to this panel (the shared state has no such setting); everything else
comes from the shared `ExplorerState`. Every number comes from `hairtrigger.core`.
"""

from __future__ import annotations

import html
import math
import threading
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from ...core.copynumber import CopyNumbers, check_volume
from ...core.noise import (
    BirthDeathChain,
    PopulationThresholds,
    StationaryDistribution,
    population_response,
    population_thresholds,
    stationary_distribution,
)
from ...core.params import Cycle
from ...core.ssa import EnsembleResult, simulate_ensemble
from ...core.timecourse import time_course
from .._support import BusyIndicator, Debouncer, MessageLine, reporting
from ..colors import OKABE_ITO
from ..state import PARAMETER_SPECS, READOUT_LABELS, ExplorerState
from ._figure import axis, figure, log_ticks

#: How the copy number is given: a compartment volume, or the substrate count itself.
COPY_MODES: Final[dict[str, str]] = {"volume": "cell volume (fL)", "molecules": "molecules N"}

#: Largest substrate count the panel accepts (the core accepts 10⁷; the population curve
#: then costs seconds, which the explorer cannot afford).
PANEL_MAX_MOLECULES: Final[int] = 1_000_000

#: Up to this N the distribution is recomputed at once on every change (≲ 1.5 ms measured).
DISTRIBUTION_LIVE_LIMIT: Final[int] = 5_000

#: Up to this N the population curve and thresholds are recomputed at once (≈ 2 ms measured
#: at N = 602, the default 1 fL at 1 µM); above, they follow after a quiet period (see
#: `NoisePanel(debounce=...)`), which keeps a slider move within the explorer's 16 ms budget.
POPULATION_LIVE_LIMIT: Final[int] = 800

#: Most bins drawn for p(n) (the chain may have a million states).
MAX_BINS: Final[int] = 300

#: States whose probability is below max·exp(−LOG_WINDOW) are left out of the drawn window.
LOG_WINDOW: Final[float] = 16.0

#: Ratios on the population curve at small N, and the matrix size kept at large N.
POPULATION_POINTS: Final[int] = 121
POPULATION_CELLS: Final[int] = 1_000_000
MIN_POPULATION_POINTS: Final[int] = 41

#: Limits of the trajectory controls.
MAX_PANEL_TRAJECTORIES: Final[int] = 20_000
TRAJECTORY_POINTS: Final[int] = 201
#: Ensembles expected to need more reaction events are refused (about a minute of simulation).
PANEL_EVENT_BUDGET: Final[float] = 3e9
#: Individual trajectories drawn faintly under the band.
SAMPLE_TRAJECTORIES: Final[int] = 3

EXACT_COLOUR = OKABE_ITO[0]
DETERMINISTIC_COLOUR = "#444444"
BAND_COLOUR = OKABE_ITO[5]
MEAN_COLOUR = OKABE_ITO[0]
SAMPLE_COLOUR = "#9a9a9a"


# --- pure helpers (tested directly) ------------------------------------------------------


@dataclass(frozen=True)
class CopySetting:
    """How the compartment is sized: ``mode`` ``"volume"`` (fL) or ``"molecules"`` (count)."""

    mode: str
    value: float

    def copies(self, cycle: Cycle) -> CopyNumbers:
        """Copy numbers of `cycle` in this compartment (ValueError naming the problem)."""
        if self.mode == "volume":
            copies = CopyNumbers.from_volume(cycle, self.value)
        else:
            copies = CopyNumbers.from_molecules(cycle, int(self.value))
        if copies.substrate > PANEL_MAX_MOLECULES:
            msg = (
                f"{copies.substrate} substrate molecules is more than the panel's limit of "
                f"{PANEL_MAX_MOLECULES}; use a smaller volume (the `hairtrigger noise` command "
                "goes further)"
            )
            raise ValueError(msg)
        return copies

    def keywords(self) -> dict[str, Any]:
        """``molecules=`` or ``volume=`` for the core functions."""
        if self.mode == "volume":
            return {"volume": self.value}
        return {"molecules": int(self.value)}

    def describe(self, copies: CopyNumbers) -> str:
        """One line: N and the volume (given or implied), enzyme molecules."""
        if self.mode == "volume":
            size = f"N = {copies.substrate} substrate molecules in {copies.volume:.4g} fL"
        else:
            size = f"N = {copies.substrate} (volume {copies.volume:.4g} fL at this W)"
        return f"{size}; kinase {copies.kinase:.4g}, phosphatase {copies.phosphatase:.4g} molecules"


def parse_copy_entry(text: str, mode: str) -> CopySetting:
    """Parse a typed copy number, or raise ValueError saying what to enter.

    A volume must be a finite number > 0 fL; a count a whole number 1…`PANEL_MAX_MOLECULES`.
    """
    if mode not in COPY_MODES:
        msg = f"`mode` must be one of {sorted(COPY_MODES)}; got {mode!r}"
        raise ValueError(msg)
    cleaned = text.strip().replace("\u2212", "-").replace(",", "").replace("_", "")
    try:
        number = float(cleaned)
    except ValueError:
        what = "a volume in fL (> 0)" if mode == "volume" else "a whole number of molecules"
        msg = f"{text.strip()!r} is not a number; enter {what}"
        raise ValueError(msg) from None
    if mode == "volume":
        return CopySetting("volume", check_volume(number))
    if not math.isfinite(number) or number != math.floor(number) or number < 1:
        msg = f"molecules must be a whole number >= 1; got {cleaned}"
        raise ValueError(msg)
    if number > PANEL_MAX_MOLECULES:
        msg = f"molecules must be at most {PANEL_MAX_MOLECULES}; got {cleaned}"
        raise ValueError(msg)
    return CopySetting("molecules", int(number))


def binned_distribution(
    dist: StationaryDistribution, max_bins: int = MAX_BINS
) -> tuple[np.ndarray, np.ndarray]:
    """Step outline of p(n) over the states that matter, at most `max_bins` bins.

    The window keeps the states with ln p(n) within `LOG_WINDOW` of the mode (p below about
    1e-7 of the peak is invisible anyway). Each bin of width b starting at n₀ gets the mean of
    p over its states, so the drawn height stays p(n) whatever the binning.

    Returns
    -------
    x, y : ndarray
        Left edges of the bins plus the right edge of the last one, and the heights (the last
        repeated), ready for a ``step-after`` line.
    """
    logp = dist.log_probabilities
    keep = np.flatnonzero(logp >= logp[dist.mode] - LOG_WINDOW)
    lo, hi = int(keep[0]), int(keep[-1])
    span = hi - lo + 1
    width = max(1, math.ceil(span / max_bins))
    starts = np.arange(lo, hi + 1, width)
    sums = np.add.reduceat(dist.probabilities[lo : hi + 1], starts - lo)
    counts = np.minimum(starts + width, hi + 1) - starts
    heights = sums / counts
    x = np.append(starts, min(starts[-1] + width, hi + 1)).astype(float)
    y = np.append(heights, heights[-1])
    return x, y


def population_window(cycle: Cycle, thresholds: PopulationThresholds, points: int) -> np.ndarray:
    """Activity ratios spanning both transitions and the operating point.

    Centred on the deterministic and population thresholds, three times the wider 10–90 %
    span on each side (at least 0.3 decade), clipped to the explorer's activity-ratio range.
    """
    spec = PARAMETER_SPECS["activity_ratio"]
    det = population_deterministic_thresholds(cycle)
    marks = [*det, thresholds.activity_ratio_10, thresholds.activity_ratio_90]
    finite = [math.log10(v) for v in marks if math.isfinite(v) and v > 0]
    lo_t, hi_t = (min(finite), max(finite)) if finite else (0.0, 0.0)
    pad = max(0.3, 3.0 * (hi_t - lo_t))
    here = math.log10(cycle.activity_ratio)
    low = max(math.log10(spec.low), min(lo_t - pad, here - 0.1))
    high = min(math.log10(spec.high), max(hi_t + pad, here + 0.1))
    return np.logspace(low, high, points)


def population_deterministic_thresholds(cycle: Cycle) -> tuple[float, float]:
    """Deterministic r10 and r90 of the quasi-steady (Goldbeter–Koshland) curve, closed form."""
    k1, k2 = cycle.K1, cycle.K2
    out = []
    for y in (0.1, 0.9):
        out.append(y * (k1 + 1.0 - y) / ((1.0 - y) * (k2 + y)))
    return out[0], out[1]


def population_points(molecules: int) -> int:
    """Ratios sampled on the population curve: fewer at large N to bound the cost."""
    return int(min(POPULATION_POINTS, max(MIN_POPULATION_POINTS, POPULATION_CELLS // molecules)))


def finite_positive(values: np.ndarray, floor: float = 0.0) -> np.ndarray:
    """`values` with NaN/inf replaced by `floor` (marks must never receive NaN)."""
    values = np.asarray(values, dtype=float)
    return np.where(np.isfinite(values), values, floor)


@dataclass(frozen=True)
class TrajectoryRequest:
    """Everything one ensemble run needs, fixed when the run is asked for."""

    cycle: Cycle
    steps: dict[str, float]
    copy: CopySetting
    model: str
    readout: str
    trajectories: int
    t_end: float
    seed: int
    ratio_after: float
    key: tuple[Any, ...]


@dataclass(frozen=True)
class TrajectoryOutcome:
    """A finished (or cancelled) ensemble with the deterministic course of the same step."""

    request: TrajectoryRequest
    ensemble: EnsembleResult
    t: np.ndarray
    mean: np.ndarray
    sd: np.ndarray
    samples: np.ndarray
    deterministic: np.ndarray | None
    deterministic_message: str


def run_trajectories(
    request: TrajectoryRequest,
    progress: Callable[[int, int], None] | None = None,
    cancel: threading.Event | None = None,
) -> TrajectoryOutcome:
    """Simulate the ensemble of `request` and the deterministic course of the same step.

    The readout is the state's (fraction of W); the deterministic course uses the same model,
    so with mass action both include the complexes.
    """
    ensemble = simulate_ensemble(
        request.cycle,
        request.t_end,
        request.trajectories,
        model=request.model,
        points=TRAJECTORY_POINTS,
        seed=request.seed,
        steps=request.steps,
        event_budget=PANEL_EVENT_BUDGET,
        progress=progress,
        cancel=cancel,
        **request.copy.keywords(),
    )
    t = np.asarray(ensemble.t, dtype=float)
    values = ensemble.readout(request.readout)
    if values.shape[0]:
        mean = values.mean(axis=0)
        sd = values.std(axis=0, ddof=1) if values.shape[0] > 1 else np.zeros_like(mean)
    else:
        mean = sd = np.zeros_like(t)
    samples = values[:SAMPLE_TRAJECTORIES].copy()
    try:
        course = time_course(
            request.cycle,
            request.steps,
            request.t_end,
            TRAJECTORY_POINTS,
            model=request.model,
            readout=request.readout,
        )
        deterministic = np.asarray(course["readout"], dtype=float)
        det_message = "" if course.success else course.message
        if not np.array_equal(np.asarray(course["t"], dtype=float), t):
            deterministic = np.interp(t, np.asarray(course["t"], dtype=float), deterministic)
    except ValueError as exc:  # the core refused the step: shown, not raised
        deterministic, det_message = None, str(exc)
    return TrajectoryOutcome(request, ensemble, t, mean, sd, samples, deterministic, det_message)


def _legend(items: list[tuple[str, str, str]]) -> str:
    parts = [
        '<span style="white-space:nowrap;margin-right:10px"><span style="display:inline-block;'
        f'width:18px;border-top:3px {style} {colour};vertical-align:middle"></span> '
        f"{html.escape(text)}</span>"
        for colour, style, text in items
    ]
    return '<div style="font-size:85%;line-height:1.5">' + " ".join(parts) + "</div>"


def _set_html(widget: w.HTML, value: str) -> None:
    if widget.value != value:
        widget.value = value


# --- the panel ----------------------------------------------------------------------------


class NoisePanel(w.VBox):
    """Copy-number noise of the current cycle: p(n), population response, trajectories.

    Parameters
    ----------
    state : ExplorerState
        The shared state (observed: ``revision``).
    width : str
        CSS width of the figures.
    volume : float
        Initial cell volume, fL.
    debounce : float
        Quiet period (s) before the large-N recomputes run (`DISTRIBUTION_LIVE_LIMIT`,
        `POPULATION_LIVE_LIMIT`).
    background : bool
        Run ensembles in a worker thread (the default). With False, `simulate` runs them to
        the end before returning (scripts and tests).

    Attributes
    ----------
    distribution_line, mean_marker, deterministic_marker : bqplot marks
        p(n) as a step outline, the mean and the deterministic N·y*.
    population_line, deterministic_line, operating_point : bqplot marks
        Population-mean and deterministic response against the activity ratio.
    band, mean_line, course_line, sample_lines : bqplot marks
        Ensemble mean ± sd band, its mean, the deterministic time course, a few trajectories.
    distribution, thresholds, outcome
        The last core results drawn (None before the first).
    """

    state = Instance(ExplorerState)

    def __init__(
        self,
        state: ExplorerState,
        width: str = "410px",
        volume: float = 1.0,
        debounce: float = 0.25,
        background: bool = True,
    ) -> None:
        self._state = state
        self.background = bool(background)
        self.setting = CopySetting("volume", check_volume(volume))
        self.copies: CopyNumbers | None = None
        self.chain: BirthDeathChain | None = None
        self.distribution: StationaryDistribution | None = None
        self.thresholds: PopulationThresholds | None = None
        self.outcome: TrajectoryOutcome | None = None
        #: Seconds spent in the last synchronous update, split by part (benchmarks read it).
        self.timings: dict[str, float] = {}
        self._worker: threading.Thread | None = None
        self._cancel = threading.Event()
        self._lock = threading.Lock()

        self.busy = BusyIndicator()
        self.message = MessageLine()
        self._build_copy_controls()
        self._build_distribution(width)
        self._build_population(width)
        self._build_trajectories(width)
        self._debouncer = Debouncer(debounce, self._update_large, on_pending=self._on_pending)

        super().__init__(
            children=[
                w.HBox(
                    [w.HTML("<b>Copy-number noise</b>"), self.busy],
                    layout=w.Layout(align_items="center"),
                ),
                self.copy_box,
                self.message,
                self.distribution_figure,
                self.distribution_legend,
                self.summary,
                self.population_figure,
                self.population_legend,
                self.hill_text,
                w.HTML("<b>Trajectories of the step</b>"),
                self.trajectory_box,
                self.trajectory_figure,
                self.trajectory_legend,
                self.trajectory_text,
                self.trajectory_stale,
                self.trajectory_message,
                w.HTML(
                    '<div style="font-size:80%;color:#4d4d4d">The distribution and the '
                    "population curve are those of the quasi-steady chain (complexes neglected). "
                    "Predictions need experimental confirmation.</div>"
                ),
            ],
            state=state,
        )
        self.add_class("hairtrigger-noise")
        state.observe(self._on_state, "revision")
        self.refresh()

    # --- construction -------------------------------------------------------------------
    def _build_copy_controls(self) -> None:
        self.mode_buttons = w.ToggleButtons(
            options=[(label, key) for key, label in COPY_MODES.items()],
            value=self.setting.mode,
            tooltips=[
                "concentrations × volume: 1 µM in 1 fL ≈ 602 molecules",
                "give the substrate count; the volume follows from W",
            ],
            style={"button_width": "118px"},
        )
        self.copy_entry = w.Text(
            value=f"{self.setting.value:g}",
            continuous_update=False,
            description="size",
            tooltip="type a volume in fL or a molecule count and press Enter",
            style={"description_width": "36px"},
            layout=w.Layout(width="150px"),
        )
        self.copy_entry.add_class("hairtrigger-entry")
        self.copy_message = MessageLine(layout=w.Layout(margin="0 0 0 6px"))
        self.copy_info = w.HTML()
        self.copy_box = w.VBox(
            [
                w.HBox([self.mode_buttons]),
                w.HBox([self.copy_entry, self.copy_message], layout=w.Layout(align_items="center")),
                self.copy_info,
            ]
        )
        self.mode_buttons.observe(self._on_mode, "value")
        self.copy_entry.observe(self._on_entry, "value")

    def _build_distribution(self, width: str) -> None:
        self.n_scale = bq.LinearScale(min=0.0, max=1.0)
        self.p_scale = bq.LinearScale(min=0.0, max=1.0)
        scales = {"x": self.n_scale, "y": self.p_scale}
        self.distribution_line = bq.Lines(
            x=np.array([0.0, 1.0]),
            y=np.zeros(2),
            scales=scales,
            colors=[EXACT_COLOUR],
            fill="bottom",
            fill_colors=[EXACT_COLOUR],
            fill_opacities=[0.25],
            interpolation="step-after",
            stroke_width=1.5,
        )
        self.mean_marker = bq.Lines(
            x=np.zeros(2),
            y=np.array([0.0, 1.0]),
            scales=scales,
            colors=["#111111"],
            stroke_width=1.5,
        )
        self.deterministic_marker = bq.Lines(
            x=np.zeros(2),
            y=np.array([0.0, 1.0]),
            scales=scales,
            colors=[OKABE_ITO[1]],
            line_style="dashed",
            stroke_width=1.5,
        )
        self.distribution_figure = figure(
            [self.distribution_line, self.mean_marker, self.deterministic_marker],
            [
                axis(self.n_scale, "modified molecules n", "bottom", tick_format="~g"),
                axis(self.p_scale, "probability p(n)", "left", tick_format=".2~g"),
            ],
            width,
            "210px",
        )
        self.distribution_legend = w.HTML(
            _legend(
                [
                    (EXACT_COLOUR, "solid", "exact p(n), quasi-steady chain"),
                    ("#111111", "solid", "mean"),
                    (OKABE_ITO[1], "dashed", "deterministic N·y*"),
                ]
            )
        )
        self.summary = w.HTML()

    def _build_population(self, width: str) -> None:
        spec = PARAMETER_SPECS["activity_ratio"]
        self.r_scale = bq.LogScale(min=spec.low, max=spec.high)
        self.y_scale = bq.LinearScale(min=0.0, max=1.0)
        scales = {"x": self.r_scale, "y": self.y_scale}
        ones = np.ones(2)  # placeholders must be positive on a log scale
        self.deterministic_line = bq.Lines(
            x=ones,
            y=ones,
            scales=scales,
            colors=[DETERMINISTIC_COLOUR],
            line_style="dashed",
            stroke_width=1.5,
        )
        self.population_line = bq.Lines(
            x=ones, y=ones, scales=scales, colors=[EXACT_COLOUR], stroke_width=2.5
        )
        self.operating_point = bq.Scatter(
            x=np.ones(1), y=np.zeros(1), scales=scales, colors=["#111111"], default_size=48
        )
        self.r_axis = axis(self.r_scale, "activity ratio r = V1/V2", "bottom", tick_format="~g")
        self.population_figure = figure(
            [self.deterministic_line, self.population_line, self.operating_point],
            [self.r_axis, axis(self.y_scale, "modified fraction n/N", "left", tick_format=".1f")],
            width,
            "220px",
        )
        self.population_legend = w.HTML(
            _legend(
                [
                    (EXACT_COLOUR, "solid", "population mean at this N"),
                    (DETERMINISTIC_COLOUR, "dashed", "deterministic (N → ∞)"),
                ]
            )
        )
        self.hill_text = w.HTML()

    def _build_trajectories(self, width: str) -> None:
        self.trajectories_entry = w.BoundedIntText(
            value=200,
            min=1,
            max=MAX_PANEL_TRAJECTORIES,
            description="trajectories",
            style={"description_width": "74px"},
            layout=w.Layout(width="160px"),
        )
        self.t_end_entry = w.BoundedFloatText(
            value=1.0,
            min=1e-6,
            max=1e6,
            description="t_end (s)",
            style={"description_width": "58px"},
            layout=w.Layout(width="150px"),
        )
        self.seed_entry = w.BoundedIntText(
            value=1,
            min=0,
            max=2**53,
            description="seed",
            style={"description_width": "36px"},
            layout=w.Layout(width="130px"),
        )
        self.window_button = w.Button(
            description="use step window",
            tooltip="set t_end to the window of the time-course panel",
            layout=w.Layout(width="130px"),
        )
        self.run_button = w.Button(
            description="Simulate",
            button_style="primary",
            icon="play",
            tooltip="simulate the ensemble of the step (Gillespie direct method)",
            layout=w.Layout(width="110px"),
        )
        self.cancel_button = w.Button(
            description="Cancel",
            icon="stop",
            disabled=True,
            layout=w.Layout(width="90px"),
            tooltip="stop the ensemble; finished trajectories are kept",
        )
        self.progress_bar = w.IntProgress(
            value=0, min=0, max=1, description="", layout=w.Layout(width="150px")
        )
        self.trajectory_box = w.VBox(
            [
                w.HBox([self.trajectories_entry, self.t_end_entry]),
                w.HBox([self.seed_entry, self.window_button]),
                w.HBox(
                    [self.run_button, self.cancel_button, self.progress_bar],
                    layout=w.Layout(align_items="center"),
                ),
            ]
        )
        self.t_scale = bq.LinearScale(min=0.0, max=1.0)
        self.f_scale = bq.LinearScale(min=0.0, max=1.0)
        scales = {"x": self.t_scale, "y": self.f_scale}
        zeros = np.zeros(2)
        self.band = bq.Lines(
            x=np.array([0.0, 1.0]),
            y=np.zeros((2, 2)),
            scales=scales,
            fill="between",
            colors=[BAND_COLOUR, BAND_COLOUR],
            fill_colors=[BAND_COLOUR],
            fill_opacities=[0.35],
            stroke_width=0.5,
            visible=False,
        )
        self.sample_lines = bq.Lines(
            x=np.array([0.0, 1.0]),
            y=np.zeros((1, 2)),
            scales=scales,
            colors=[SAMPLE_COLOUR],
            stroke_width=0.8,
            visible=False,
        )
        self.mean_line = bq.Lines(
            x=np.array([0.0, 1.0]),
            y=zeros,
            scales=scales,
            colors=[MEAN_COLOUR],
            stroke_width=2.5,
            visible=False,
        )
        self.course_line = bq.Lines(
            x=np.array([0.0, 1.0]),
            y=zeros,
            scales=scales,
            colors=[OKABE_ITO[1]],
            line_style="dashed",
            stroke_width=2.0,
            visible=False,
        )
        self.trajectory_figure = figure(
            [self.band, self.sample_lines, self.mean_line, self.course_line],
            [
                axis(self.t_scale, "time after the step (s)", "bottom", tick_format="~g"),
                axis(self.f_scale, "readout, fraction of W", "left", tick_format=".2~g"),
            ],
            width,
            "220px",
        )
        self.trajectory_legend = w.HTML(
            _legend(
                [
                    (MEAN_COLOUR, "solid", "ensemble mean"),
                    (BAND_COLOUR, "solid", "mean ± sd"),
                    (SAMPLE_COLOUR, "solid", "single trajectories"),
                    (OKABE_ITO[1], "dashed", "deterministic time course"),
                ]
            )
        )
        self.trajectory_text = w.HTML()
        self.trajectory_stale = w.HTML()
        self.trajectory_message = MessageLine()
        self.run_button.on_click(
            lambda _: reporting(lambda: self.trajectory_message)(self.simulate)()
        )
        self.cancel_button.on_click(lambda _: self.cancel())
        self.window_button.on_click(
            lambda _: reporting(lambda: self.trajectory_message)(self.use_step_window)()
        )
        self.use_step_window()

    # --- copy number ----------------------------------------------------------------------
    def set_copy_number(self, mode: str, value: Any) -> None:
        """Size the compartment: ``mode`` ``"volume"`` (fL) or ``"molecules"`` (count).

        Raises
        ------
        ValueError
            The value is not acceptable at the current parameters; nothing changes.
        """
        setting = parse_copy_entry(str(value), mode)
        cycle = self._state.cycle
        if cycle is not None:
            setting.copies(cycle)  # raises before anything changes
        self.setting = setting
        with self.mode_buttons.hold_sync():
            if self.mode_buttons.value != mode:
                self._mode_echo = True
                self.mode_buttons.value = mode
        text = f"{setting.value:g}" if mode == "volume" else f"{int(setting.value)}"
        if self.copy_entry.value != text:
            self._entry_echo = True
            self.copy_entry.value = text
        self.copy_message.clear()
        self.refresh()

    _mode_echo = False
    _entry_echo = False

    def _on_mode(self, change: Mapping[str, Any]) -> None:
        if self._mode_echo:
            self._mode_echo = False
            return
        # Keep the compartment: switching the way it is given converts the current value.
        mode = change["new"]
        if self.copies is None:
            return
        value = self.copies.substrate if mode == "molecules" else self.copies.volume
        try:
            self.set_copy_number(mode, f"{value:.6g}" if mode == "volume" else value)
        except ValueError as exc:
            self.copy_message.show_error(str(exc))

    def _on_entry(self, change: Mapping[str, Any]) -> None:
        if self._entry_echo:
            self._entry_echo = False
            return
        try:
            self.set_copy_number(self.mode_buttons.value, change["new"])
        except ValueError as exc:
            self.copy_message.show_error(str(exc))

    # --- live updates ---------------------------------------------------------------------
    def _on_state(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.refresh)()

    def _on_pending(self, pending: bool) -> None:
        (self.busy.hold if pending else self.busy.release)("noise")

    def refresh(self) -> None:
        """Redraw from the state: small N at once, large N after the debounce period."""
        cycle = self._state.cycle
        if cycle is None:
            self.message.show_note("no parameters yet")
            return
        try:
            copies = self.setting.copies(cycle)
        except ValueError as exc:
            # The state moved (W) so that the compartment no longer fits: keep the last view.
            self.message.show_error(f"copy number: {exc}")
            return
        self.copies = copies
        self.chain = BirthDeathChain.from_copies(cycle, copies)
        _set_html(
            self.copy_info,
            f'<div style="font-size:85%;color:#4d4d4d">{html.escape(self.setting.describe(copies))}'
            "</div>",
        )
        self._note_model(cycle)
        self._update_stale_note()
        n = copies.substrate
        self.timings = {}
        if n <= DISTRIBUTION_LIVE_LIMIT:
            self._update_distribution()
        if n <= POPULATION_LIVE_LIMIT:
            self._update_population()
        if n > POPULATION_LIVE_LIMIT:
            self._debouncer.request()
        else:
            self._debouncer.cancel()

    def flush(self) -> None:
        """Run the pending large-N recompute now."""
        self._debouncer.flush()

    def _update_large(self) -> None:
        reporting(lambda: self.message)(self._update_large_now)()

    def _update_large_now(self) -> None:
        if self.chain is None:
            return
        with self.busy.working("noise"):
            if self.chain.molecules > DISTRIBUTION_LIVE_LIMIT:
                self._update_distribution()
            self._update_population()

    def _note_model(self, cycle: Cycle) -> None:
        notes = []
        if self._state.model == "mass_action":
            scarce = max(cycle.kinase_total, cycle.phosphatase_total) / cycle.substrate_total
            if scarce > 0.05:
                notes.append(
                    f"enzymes are not scarce (largest enzyme/W = {scarce:.3g}): the chain "
                    "neglects substrate in complexes; trajectories use the full network"
                )
        if notes:
            self.message.show_note("; ".join(notes))
        else:
            self.message.clear()

    def _update_distribution(self) -> None:
        start = time.perf_counter()
        chain = self.chain
        assert chain is not None
        dist = stationary_distribution(chain)
        x, y = binned_distribution(dist)
        top = float(np.max(y)) * 1.08
        with self.n_scale.hold_sync():
            self.n_scale.min = float(x[0])
            self.n_scale.max = float(max(x[-1], x[0] + 1.0))
        self.p_scale.max = top
        with self.distribution_line.hold_sync():
            self.distribution_line.x = x
            self.distribution_line.y = y
        with self.mean_marker.hold_sync():
            self.mean_marker.x = np.array([dist.mean, dist.mean])
            self.mean_marker.y = np.array([0.0, top])
        det = float(self._deterministic_fraction(chain) * chain.molecules)
        with self.deterministic_marker.hold_sync():
            self.deterministic_marker.x = np.array([det, det])
            self.deterministic_marker.y = np.array([0.0, top])
            self.deterministic_marker.visible = bool(x[0] <= det <= x[-1])
        self.distribution = dist
        n_total = chain.molecules
        _set_html(
            self.summary,
            '<div style="font-size:85%">'
            f"mean n = {dist.mean:.4g} ± {dist.standard_deviation:.3g} (sd) of {n_total} "
            f"(fraction {dist.mean / n_total:.3f} ± {dist.standard_deviation / n_total:.3f}); "
            f"Fano factor {dist.fano_factor:.3g}; most likely n = {dist.mode}; "
            f"deterministic N·y* = {det:.4g}.</div>",
        )
        self.timings["distribution"] = time.perf_counter() - start

    @staticmethod
    def _deterministic_fraction(chain: BirthDeathChain) -> float:
        from ...core.steady import goldbeter_koshland

        return float(goldbeter_koshland(chain.activity_ratio, 1.0, chain.K1, chain.K2))

    def _update_population(self) -> None:
        start = time.perf_counter()
        chain = self.chain
        cycle = self._state.cycle
        assert chain is not None and cycle is not None
        thresholds = population_thresholds(chain)
        ratios = population_window(cycle, thresholds, population_points(chain.molecules))
        response = population_response(chain, ratios)
        here = population_response(chain, np.array([cycle.activity_ratio]))
        with self.r_scale.hold_sync():
            self.r_scale.min = float(ratios[0])
            self.r_scale.max = float(ratios[-1])
        self.r_axis.tick_values = np.asarray(log_ticks(float(ratios[0]), float(ratios[-1])))
        with self.population_line.hold_sync():
            self.population_line.x = ratios.copy()
            self.population_line.y = finite_positive(response.mean_fraction)
        with self.deterministic_line.hold_sync():
            self.deterministic_line.x = ratios.copy()
            self.deterministic_line.y = finite_positive(response.deterministic_fraction)
        with self.operating_point.hold_sync():
            self.operating_point.x = np.array([cycle.activity_ratio])
            self.operating_point.y = finite_positive(here.mean_fraction)
        self.thresholds = thresholds

        def fmt(value: float) -> str:
            return f"{value:.3g}" if math.isfinite(value) else "—"

        status = "" if thresholds.success else f" ({html.escape(thresholds.message)})"
        _set_html(
            self.hill_text,
            '<div style="font-size:85%">'
            f"effective Hill coefficient nH: population {fmt(thresholds.hill_coefficient)}, "
            f"deterministic {fmt(thresholds.deterministic_hill_coefficient)}; population "
            f"r10 = {fmt(thresholds.activity_ratio_10)}, r50 = "
            f"{fmt(thresholds.activity_ratio_50)}, r90 = {fmt(thresholds.activity_ratio_90)}"
            f"{status}.</div>",
        )
        self.timings["population"] = time.perf_counter() - start

    # --- trajectories ---------------------------------------------------------------------
    @property
    def running(self) -> bool:
        """True while an ensemble is running in the worker thread."""
        worker = self._worker
        return worker is not None and worker.is_alive()

    def use_step_window(self) -> None:
        """Set t_end to the window of the state's time course (the step's settling window)."""
        course = self._state.time_course
        if course is not None and course.success and len(course.t) > 1:
            self.t_end_entry.value = float(f"{float(course.t[-1]):.3g}")

    def _request(self) -> TrajectoryRequest:
        state = self._state
        cycle = state.cycle
        if cycle is None:
            msg = "no parameters to simulate"
            raise ValueError(msg)
        self.setting.copies(cycle)  # refuse a compartment that no longer fits
        after = cycle.with_activity_ratio(state.step_activity_ratio)
        steps = {"kinase_total": after.kinase_total}
        return TrajectoryRequest(
            cycle=cycle,
            steps=steps,
            copy=self.setting,
            model=state.model,
            readout=state.readout,
            trajectories=int(self.trajectories_entry.value),
            t_end=float(self.t_end_entry.value),
            seed=int(self.seed_entry.value),
            ratio_after=state.step_activity_ratio,
            key=self._current_key(),
        )

    def _current_key(self) -> tuple[Any, ...]:
        # What a run depends on: a change of any of these makes the drawn ensemble stale.
        state = self._state
        return (state.cycle, state.model, state.readout, state.step_activity_ratio, self.setting)

    def simulate(self) -> None:
        """Run the ensemble of the explorer's step.

        In a worker thread unless `background` is False (then it returns when the run is
        over). A run already going is left alone.
        """
        if self.running:
            self.trajectory_message.show_note("an ensemble is already running")
            return
        try:
            request = self._request()
        except ValueError as exc:
            self.trajectory_message.show_error(str(exc))
            return
        self._cancel = threading.Event()
        self.progress_bar.max = request.trajectories
        self.progress_bar.value = 0
        self.run_button.disabled = True
        self.cancel_button.disabled = False
        self.busy.hold("trajectories")
        self.trajectory_message.show_note(
            f"simulating {request.trajectories} trajectories ({request.model})…"
        )
        if self.background:
            self._worker = threading.Thread(
                target=self._work,
                args=(request, self._cancel),
                daemon=True,
                name="hairtrigger-noise-ssa",
            )
            self._worker.start()
        else:
            self._work(request, self._cancel)

    def cancel(self) -> None:
        """Ask the running ensemble to stop (finished trajectories are kept and drawn)."""
        self._cancel.set()
        self.cancel_button.disabled = True

    def wait(self, timeout: float | None = None) -> bool:
        """Wait for the worker thread; True when no run is left going."""
        worker = self._worker
        if worker is not None:
            worker.join(timeout)
        return not self.running

    def _progress(self, done: int, total: int) -> None:
        self.progress_bar.value = done

    def _work(self, request: TrajectoryRequest, cancel: threading.Event) -> None:
        try:
            outcome = run_trajectories(request, progress=self._progress, cancel=cancel)
        except Exception as exc:  # noqa: BLE001 - shown to the user in the panel
            self.trajectory_message.show_error(f"{type(exc).__name__}: {exc}")
        else:
            self._show_outcome(outcome)
        finally:
            self.busy.release("trajectories")
            self.run_button.disabled = False
            self.cancel_button.disabled = True

    def _show_outcome(self, outcome: TrajectoryOutcome) -> None:
        ensemble = outcome.ensemble
        if ensemble.trajectories == 0:
            self.outcome = outcome
            for mark in (self.band, self.mean_line, self.sample_lines):
                mark.visible = False
            self.trajectory_message.show_note(ensemble.message)
            return
        t = outcome.t
        lower = finite_positive(outcome.mean - outcome.sd)
        upper = finite_positive(outcome.mean + outcome.sd)
        mean = finite_positive(outcome.mean)
        curves = [upper, outcome.samples.max(initial=0.0)]
        if outcome.deterministic is not None:
            curves.append(np.nanmax(finite_positive(outcome.deterministic)))
        top = max(1e-9, float(max(np.max(c) for c in curves))) * 1.05
        bottom = max(0.0, min(float(np.min(lower)), float(outcome.samples.min(initial=1.0))))
        with self.t_scale.hold_sync():
            self.t_scale.min = 0.0
            self.t_scale.max = float(t[-1])
        with self.f_scale.hold_sync():
            self.f_scale.min = bottom * 0.95
            self.f_scale.max = top
        with self.band.hold_sync():
            self.band.x = t.copy()
            self.band.y = np.vstack([lower, upper])
            self.band.visible = True
        with self.mean_line.hold_sync():
            self.mean_line.x = t.copy()
            self.mean_line.y = mean
            self.mean_line.visible = True
        with self.sample_lines.hold_sync():
            self.sample_lines.x = np.tile(t, (outcome.samples.shape[0], 1))
            self.sample_lines.y = finite_positive(outcome.samples)
            self.sample_lines.colors = [SAMPLE_COLOUR] * outcome.samples.shape[0]
            self.sample_lines.visible = True
        with self.course_line.hold_sync():
            if outcome.deterministic is not None:
                self.course_line.x = t.copy()
                self.course_line.y = finite_positive(outcome.deterministic)
            self.course_line.visible = outcome.deterministic is not None
        self.outcome = outcome
        request = outcome.request
        final_sd = float(outcome.sd[-1]) if ensemble.trajectories > 1 else math.nan
        sd_text = f" ± {final_sd:.3g}" if math.isfinite(final_sd) else ""
        det_text = (
            f"; deterministic {outcome.deterministic[-1]:.3f}"
            if outcome.deterministic is not None
            else ""
        )
        _set_html(
            self.trajectory_text,
            '<div style="font-size:85%">'
            f"Step r = {request.cycle.activity_ratio:.4g} → {request.ratio_after:.4g}, "
            f"{ensemble.trajectories} trajectories ({ensemble.model}, N = {ensemble.molecules}, "
            f"seed {ensemble.seed}): {html.escape(READOUT_LABELS[request.readout])} at t_end "
            f"{mean[-1]:.3f}{sd_text} (mean ± sd){det_text}; "
            f"{ensemble.total_events} events in {ensemble.wall_time:.2g} s "
            f"({ensemble.events_per_second:.3g}/s).</div>",
        )
        notes = [] if ensemble.success else [ensemble.message]
        notes += list(ensemble.warnings)
        if outcome.deterministic_message:
            notes.append(f"deterministic course: {outcome.deterministic_message}")
        if ensemble.trajectories == 1:
            notes.append("one trajectory: no spread to show")
        if notes:
            self.trajectory_message.show_note("; ".join(notes))
        else:
            self.trajectory_message.clear()
        self._update_stale_note()

    def _update_stale_note(self) -> None:
        outcome = self.outcome
        if outcome is None or self.running:
            return
        stale = outcome.request.key != self._current_key()
        label = (
            '<div style="font-size:85%;color:#b2182b">Parameters changed since this run: '
            "press Simulate to update the trajectories.</div>"
            if stale
            else ""
        )
        _set_html(self.trajectory_stale, label)


__all__ = [
    "COPY_MODES",
    "CopySetting",
    "NoisePanel",
    "TrajectoryOutcome",
    "TrajectoryRequest",
    "binned_distribution",
    "parse_copy_entry",
    "population_window",
    "run_trajectories",
]
