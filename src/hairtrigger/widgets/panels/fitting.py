"""Fitting panel: measured dose–response data in, fitted models, intervals and a cycle out.

Data come from a CSV upload or pasted text (the format of `hairtrigger.io.data`; a bundled
*invented* titration can be loaded as an example). Chosen models are fitted by
`hairtrigger.core.fitting.fit_model` — the mass-action model with the known totals and turnover
numbers of the explorer's current cycle — in a worker thread, so the kernel stays responsive;
only the newest job's result is shown, and a cancelled or superseded job is ignored. The panel
draws the data (with sd error bars) and the fitted curves on a log input axis, the residuals
below, the parameter table with 95 % profile-likelihood intervals ("not bounded" where the data
do not bound an end), the warnings and the model comparison (AICc and the nested F-test). A
fitted quasi-steady or mass-action cycle can be adopted into the shared state (and so into a
snapshot); a fitted value outside the explorer's ranges is refused and nothing changes.

Data that cannot be read are reported with the row and column of the first problem; the data
and fits already shown stay as they were.
"""

from __future__ import annotations

import html
import math
import threading
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from ...core import Cycle
from ...core.dataset import DoseResponseData
from ...core.fit_models import KNOWN_CYCLE_KEYS
from ...core.fit_results import FitResult
from ...core.fitting import compare_fits, fit_model
from ...io.data import DataError, example_data_path, parse_data
from .._support import LOG, BusyIndicator, MessageLine, reporting, running_loop
from ..colors import OKABE_ITO
from ..state import READOUT_LABELS, ExplorerState, ParameterError
from ._figure import axis, figure, log_ticks
from .table import format_number

#: Models offered, in order: (name, label shown beside the check box).
MODEL_CHOICES: Final[tuple[tuple[str, str], ...]] = (
    ("michaelian", "Michaelian (nH = 1)"),
    ("hill", "Hill (ec50, nH)"),
    ("quasi_steady", "quasi-steady (K1, K2)"),
    ("mass_action", "mass action (explorer's totals)"),
)
MODEL_NAMES: Final[dict[str, str]] = {
    "michaelian": "Michaelian",
    "hill": "Hill",
    "quasi_steady": "quasi-steady cycle",
    "mass_action": "mass-action cycle",
}
#: Models whose fit gives a cycle that can be adopted.
CYCLE_MODELS: Final[tuple[str, ...]] = ("quasi_steady", "mass_action")
#: Models ticked when the panel opens (mass action uses the explorer's totals: opt in).
DEFAULT_MODELS: Final[tuple[str, ...]] = ("michaelian", "hill", "quasi_steady")

#: Colour, line style and residual marker per model (colour and dash both differ, so the
#: curves stay distinguishable without colour vision).
MODEL_STYLES: Final[dict[str, tuple[str, str, str]]] = {
    "michaelian": (OKABE_ITO[4], "dotted", "triangle-down"),
    "hill": (OKABE_ITO[3], "dashed", "diamond"),
    "quasi_steady": (OKABE_ITO[0], "solid", "circle"),
    "mass_action": (OKABE_ITO[1], "dash_dotted", "square"),
}
DATA_COLOUR: Final[str] = "#222222"

#: The bundled example (invented data, never a check value).
EXAMPLE_NAME: Final[str] = "invented_kinase_titration"

#: Points per fitted curve.
CURVE_POINTS: Final[int] = 240

#: Zero inputs have no place on a log axis: they are drawn this many decades below the
#: smallest positive input (and said so in the legend), as dose–response plots usually do.
ZERO_OFFSET_DECADES: Final[float] = 1.0

#: Pasted or uploaded text larger than this is not copied into the text box.
MAX_ECHO_CHARS: Final[int] = 200_000

#: Derived quantities shown under a model's table: (key, label).
DERIVED_SHOWN: Final[tuple[tuple[str, str], ...]] = (
    ("hill_coefficient", "nH"),
    ("response_coefficient", "Rv"),
    ("ec10", "EC10"),
    ("ec90", "EC90"),
    ("activity_ratio_50", "r50"),
    ("input_50", "input50"),
    ("K1", "K1"),
    ("K2", "K2"),
)

_NOT_BOUNDED = (
    '<span style="color:#b2182b;font-style:italic" title="the data do not bound '
    'this end of the interval">not bounded</span>'
)


# --- the work (plain Python, no widgets) -------------------------------------------------------


@dataclass(frozen=True)
class FitRequest:
    """One batch of fits to run: what the Fit button captured when it was pressed.

    Attributes
    ----------
    data : DoseResponseData
        The data set.
    models : tuple of str
        Models to fit, in order.
    input_kind : str
        ``"ratio"`` or ``"amount"`` (passed to `fit_model`).
    cycle : Cycle
        The explorer's cycle at the time (known totals for the mass-action model).
    readout : str
        The explorer's readout at the time (what the mass-action model predicts).
    source : str
        Where the data came from (for notes).
    """

    data: DoseResponseData
    models: tuple[str, ...]
    input_kind: str
    cycle: Cycle
    readout: str
    source: str = "data"


@dataclass(frozen=True)
class FitOutcome:
    """Fits of one request.

    Attributes
    ----------
    request : FitRequest
        What was fitted.
    fits : dict
        Model name → `FitResult`, for the models that could be fitted.
    skipped : dict
        Model name → reason, for models refused (too few points, conflicting input kind ...).
    comparison : dict or None
        `compare_fits` of the fits when there are at least two.
    seconds : float
        Wall time of the whole batch.
    cancelled : bool
        True when the batch stopped early because it was cancelled.
    """

    request: FitRequest
    fits: dict[str, FitResult] = field(default_factory=dict)
    skipped: dict[str, str] = field(default_factory=dict)
    comparison: dict[str, Any] | None = None
    seconds: float = 0.0
    cancelled: bool = False


def run_fits(request: FitRequest, cancelled: Callable[[], bool] = lambda: False) -> FitOutcome:
    """Fit every model of `request` with profile-likelihood intervals, then compare them.

    A model the data cannot support (a `ValueError` from the core) is skipped with its reason;
    `cancelled` is checked between models.
    """
    start = time.perf_counter()
    fits: dict[str, FitResult] = {}
    skipped: dict[str, str] = {}
    for name in request.models:
        if cancelled():
            return FitOutcome(request, fits, skipped, None, time.perf_counter() - start, True)
        try:
            fits[name] = fit_model(
                request.data,
                name,
                cycle=request.cycle,
                readout=request.readout,
                input_kind=request.input_kind,
                intervals="profile",
            )
        except ValueError as exc:
            skipped[name] = str(exc)
    comparison = compare_fits(fits) if len(fits) > 1 else None
    return FitOutcome(request, fits, skipped, comparison, time.perf_counter() - start)


class FitWorker:
    """Runs fit batches inline or in a daemon thread; only the newest batch is delivered.

    Parameters
    ----------
    background : bool, optional
        True: a thread per batch; False: run inline (scripts, tests); None (default): a thread
        when an asyncio loop is running (inside a kernel), inline otherwise.

    Notes
    -----
    In a kernel the result is handed back to the kernel's event loop
    (``call_soon_threadsafe``), so every widget update happens on the main thread. Without a
    running loop a background batch delivers from its own thread. A batch cannot be stopped in
    the middle of one model's fit (the core has no hook for it); cancelling stops it before the
    next model and, in any case, its result is dropped.
    """

    def __init__(self, background: bool | None = None) -> None:
        self.background = background
        self._lock = threading.Lock()
        self._job = 0
        self._cancel = threading.Event()
        self._thread: threading.Thread | None = None
        #: Number of batches whose result was dropped as stale or cancelled.
        self.dropped = 0

    @property
    def running(self) -> bool:
        """True while the newest batch has neither been delivered nor cancelled."""
        with self._lock:
            return self._thread is not None and not self._cancel.is_set()

    def submit(
        self,
        work: Callable[[Callable[[], bool]], Any],
        on_done: Callable[[Any], None],
    ) -> int:
        """Run ``work(cancelled)`` and pass its result (or the exception raised) to `on_done`.

        Supersedes any batch still running. Returns the job number.
        """
        with self._lock:
            self._cancel.set()  # the previous batch, if any, stops at its next check
            self._job += 1
            job = self._job
            cancel = threading.Event()
            self._cancel = cancel
        background = (
            self.background if self.background is not None else (running_loop() is not None)
        )
        if not background:
            with self._lock:
                self._thread = None
            self._deliver(job, cancel, self._execute(work, cancel), on_done)
            return job
        loop = running_loop()

        def target() -> None:
            outcome = self._execute(work, cancel)
            if loop is not None and not loop.is_closed():
                loop.call_soon_threadsafe(self._deliver, job, cancel, outcome, on_done)
            else:
                self._deliver(job, cancel, outcome, on_done)

        thread = threading.Thread(target=target, daemon=True, name=f"hairtrigger-fit-{job}")
        with self._lock:
            self._thread = thread
        thread.start()
        return job

    def cancel(self) -> bool:
        """Drop the running batch (True if one was running)."""
        with self._lock:
            was = self._thread is not None and not self._cancel.is_set()
            self._cancel.set()
            self._thread = None
            return was

    def wait(self, timeout: float | None = None) -> bool:
        """Wait for the newest thread to finish (True when none is left running)."""
        with self._lock:
            thread = self._thread
        if thread is not None:
            thread.join(timeout)
            return not thread.is_alive()
        return True

    @staticmethod
    def _execute(work: Callable[[Callable[[], bool]], Any], cancel: threading.Event) -> Any:
        try:
            return work(cancel.is_set)
        except Exception as exc:  # noqa: BLE001 - handed to the panel, which shows it
            LOG.exception("fit batch failed")
            return exc

    def _deliver(
        self, job: int, cancel: threading.Event, outcome: Any, on_done: Callable[[Any], None]
    ) -> None:
        with self._lock:
            stale = job != self._job or cancel.is_set()
            if not stale:
                self._thread = None
                cancel.set()  # delivered: nothing is running any more
        if stale:
            self.dropped += 1
            return
        on_done(outcome)


# --- helpers for drawing -----------------------------------------------------------------------


def plot_positions(x: np.ndarray) -> tuple[np.ndarray, float | None, tuple[float, float]]:
    """Positions of inputs on a log axis, the stand-in position of input 0, and the domain.

    Zero inputs are drawn `ZERO_OFFSET_DECADES` below the smallest positive input.
    """
    x = np.asarray(x, dtype=float)
    positive = x[x > 0]
    if positive.size == 0:
        low, high = 0.1, 10.0
        zero = 1.0
    else:
        low, high = float(positive.min()), float(positive.max())
        if high <= low:
            low, high = low / 10.0, high * 10.0
        zero = low * 10.0 ** (-ZERO_OFFSET_DECADES)
    has_zero = bool(np.any(x <= 0))
    left = (zero if has_zero else low) / 1.6
    right = high * 1.6
    xs = np.where(x > 0, x, zero)
    return xs, (zero if has_zero else None), (left, right)


def _padded(low: float, high: float, fraction: float = 0.06) -> tuple[float, float]:
    if not (math.isfinite(low) and math.isfinite(high)):
        return 0.0, 1.0
    if high <= low:
        span = abs(high) if high else 1.0
        return low - 0.5 * span, high + 0.5 * span
    pad = fraction * (high - low)
    return low - pad, high + pad


def linear_ticks(low: float, high: float, target: int = 5) -> list[float]:
    """Round tick values (1, 2 or 5 times a power of ten apart) inside [low, high].

    bqplot's ``num_ticks`` spaces ticks evenly between the ends, which gives labels such as
    342.053; panels pass explicit round values instead.
    """
    if not (math.isfinite(low) and math.isfinite(high) and high > low):
        return []
    raw = (high - low) / max(target, 1)
    power = 10.0 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1.0, 2.0, 5.0, 10.0) if m * power >= raw)
    first = math.ceil(low / step - 1e-9)
    last = math.floor(high / step + 1e-9)
    # Round away binary noise (0.30000000000000004) so labels read cleanly.
    return [float(f"{k * step:.12g}") for k in range(first, last + 1)]


def _unit_text(unit: str) -> str:
    if unit in ("1", ""):
        return ""
    return unit.replace("uM", "µM")


def interval_html(low: float | None, high: float | None, fixed: bool) -> str:
    """The interval cell: ``low – high``, with "not bounded" for an open end."""
    if fixed:
        return '<span style="color:#4d4d4d">fixed</span>'
    lo = _NOT_BOUNDED if low is None else html.escape(format_number(low))
    hi = _NOT_BOUNDED if high is None else html.escape(format_number(high))
    return f"{lo} – {hi}"


def parameter_table_html(fits: Mapping[str, FitResult]) -> str:
    """HTML table of every fit's parameters with their intervals, one block per model."""
    if not fits:
        return ""
    cell = 'style="padding:1px 6px;text-align:right;font-variant-numeric:tabular-nums"'
    left = 'style="padding:1px 6px;text-align:left"'
    any_open = False
    rows = [
        '<table style="border-collapse:collapse;font-size:85%;width:100%">',
        f"<tr><th {left}>parameter</th><th {cell}>estimate</th>"
        f"<th {cell}>{_level(fits)} interval</th><th {left}>unit</th></tr>",
    ]
    for name, fit in fits.items():
        colour, style, _ = MODEL_STYLES[name]
        status = ""
        if not fit.success:
            reason = html.escape(fit.message)
            status = f' <span style="color:#b2182b">— did not converge: {reason}</span>'
        aicc = format_number(fit.aicc if fit.aicc is not None else fit.aic)
        rows.append(
            f'<tr style="border-top:1px solid #ccc"><td colspan="4" {left}>'
            f'<span style="display:inline-block;width:18px;border-top:3px {_css_dash(style)} '
            f'{colour};vertical-align:middle"></span> <b>{MODEL_NAMES[name]}</b> '
            f'<span style="color:#4d4d4d">AICc {aicc}, residual sd '
            f"{format_number(fit.residual_sd)}, {fit.n_points} points</span>{status}</td></tr>"
        )
        for p in fit.parameters:
            any_open = any_open or (not p.fixed and (p.low is None or p.high is None))
            rows.append(
                f"<tr><td {left}>{html.escape(p.name)}</td>"
                f"<td {cell}>{html.escape(format_number(p.value))}</td>"
                f"<td {cell}>{interval_html(p.low, p.high, p.fixed)}</td>"
                f"<td {left}>{html.escape(_unit_text(p.unit))}</td></tr>"
            )
        derived = [
            f"{label} {format_number(fit.derived[key], 3)}"
            for key, label in DERIVED_SHOWN
            if key in fit.derived and key not in fit.values and fit.derived[key] is not None
        ]
        if derived:
            rows.append(
                f'<tr><td colspan="4" {left}><span style="color:#4d4d4d">derived '
                f"(point estimates): {html.escape(', '.join(derived))}</span></td></tr>"
            )
    rows.append("</table>")
    if any_open:
        rows.append(
            '<div style="font-size:80%;color:#4d4d4d">' + _NOT_BOUNDED + ": the profile "
            "likelihood stays within the threshold up to the search bound, so the data set no "
            "limit on that side.</div>"
        )
    return "".join(rows)


def _level(fits: Mapping[str, FitResult]) -> str:
    fit = next(iter(fits.values()))
    return f"{100 * fit.confidence:g} %"


def _css_dash(line_style: str) -> str:
    return {"solid": "solid", "dashed": "dashed", "dotted": "dotted"}.get(line_style, "dashed")


def warnings_html(outcome: FitOutcome) -> str:
    """The warnings of every fit and the reasons models were skipped, as an HTML list."""
    items: list[str] = []
    for name, reason in outcome.skipped.items():
        items.append(f"<li><b>{MODEL_NAMES[name]}</b> not fitted: {html.escape(reason)}</li>")
    for name, fit in outcome.fits.items():
        items += [
            f"<li><b>{MODEL_NAMES[name]}</b>: {html.escape(text)}</li>" for text in fit.warnings
        ]
    if not items:
        return ""
    return (
        '<div style="font-size:85%"><b>Warnings</b><ul style="margin:2px 0 2px 18px;'
        'padding:0">' + "".join(items) + "</ul></div>"
    )


def comparison_html(comparison: Mapping[str, Any] | None) -> str:
    """Model comparison: the verdict and a small AICc table."""
    if not comparison:
        return ""
    cell = 'style="padding:1px 6px;text-align:right;font-variant-numeric:tabular-nums"'
    left = 'style="padding:1px 6px;text-align:left"'
    rows = [
        f"<tr><th {left}>model</th><th {cell}>AICc</th><th {cell}>ΔAICc</th>"
        f"<th {cell}>Akaike weight</th></tr>"
    ]
    order = sorted(
        comparison["models"].items(),
        key=lambda kv: math.inf if kv[1]["delta_aicc"] is None else kv[1]["delta_aicc"],
    )
    for name, entry in order:
        aicc = entry["aicc"] if entry["aicc"] is not None else entry["aic"]
        rows.append(
            f"<tr><td {left}>{MODEL_NAMES.get(name, name)}</td><td {cell}>{format_number(aicc)}"
            f"</td><td {cell}>{format_number(entry['delta_aicc'], 3)}</td>"
            f"<td {cell}>{format_number(entry['akaike_weight'], 3)}</td></tr>"
        )
    verdict = comparison.get("verdict") or ""
    return (
        '<div style="font-size:85%"><b>Model comparison</b>'
        f'<div style="margin:2px 0">{html.escape(verdict)}</div>'
        '<table style="border-collapse:collapse">' + "".join(rows) + "</table></div>"
    )


# --- the panel ---------------------------------------------------------------------------------


class FittingPanel(w.VBox):
    """Fit dose–response data, inspect the fits, adopt a fitted cycle into the shared state.

    Parameters
    ----------
    state : ExplorerState
        The shared state (read for the mass-action model's known totals and readout; written
        only by "Adopt fitted cycle").
    width : str
        CSS width of the figures.
    height : str
        CSS height of the data figure (the residual figure is about half as tall).
    background : bool, optional
        Run fits in a worker thread (True), inline (False) or — by default — in a thread
        exactly when inside a kernel.

    Attributes
    ----------
    data : DoseResponseData or None
        The data shown and fitted.
    outcome : FitOutcome or None
        The fits shown (None before the first fit and after new data).
    data_points, zero_points, error_bars, curves, residual_points, zero_line : bqplot marks
        Exposed for tests and for users who style them (`curves` and `residual_points` are
        keyed by model).
    """

    state = Instance(ExplorerState)

    def __init__(
        self,
        state: ExplorerState,
        width: str = "400px",
        height: str = "250px",
        background: bool | None = None,
    ) -> None:
        self.worker = FitWorker(background)
        self.data: DoseResponseData | None = None
        self.outcome: FitOutcome | None = None
        self._source = ""
        self._invented = False
        self._holding = False

        # Data in.
        self.upload = w.FileUpload(
            accept=".csv,.tsv,.txt,text/csv,text/plain",
            multiple=False,
            description="Upload CSV",
            icon="upload",
            tooltip="read a dose-response CSV file from this computer",
            layout=w.Layout(width="130px"),
        )
        self.example_button = w.Button(
            description="Invented example",
            icon="flask",
            tooltip="load a bundled titration (invented data for demonstration, not a measurement)",
            layout=w.Layout(width="150px"),
        )
        self.paste = w.Textarea(
            placeholder="paste CSV: a header with input,readout (optional sd, replicate),\n"
            "then one row per measurement; '# input_kind: amount' declares doses",
            layout=w.Layout(width="400px", height="84px"),
        )
        self.paste_button = w.Button(
            description="Use pasted data",
            icon="paste",
            tooltip="read the text box as CSV",
            layout=w.Layout(width="140px"),
        )
        self.data_summary = w.HTML()

        # Fit settings.
        self.model_boxes = {
            name: w.Checkbox(
                value=name in DEFAULT_MODELS,
                description=label,
                indent=False,
                layout=w.Layout(width="auto"),
            )
            for name, label in MODEL_CHOICES
        }
        self.input_kind = w.ToggleButtons(
            options=[("activity ratio", "ratio"), ("amount (fit a scale)", "amount")],
            value="ratio",
            tooltip="what the input column holds: the activity ratio V1/V2, or a dose in any "
            "unit proportional to kinase activity (the cycle models then fit input_scale)",
            style={"button_width": "140px"},
        )
        self.known = w.HTML()
        self.fit_button = w.Button(
            description="Fit",
            icon="play",
            button_style="primary",
            tooltip="fit the ticked models to the data",
            layout=w.Layout(width="90px"),
        )
        self.cancel_button = w.Button(
            description="Cancel",
            icon="stop",
            disabled=True,
            tooltip="stop waiting for the running fit (its result is ignored)",
            layout=w.Layout(width="90px"),
        )
        self.busy = BusyIndicator()

        # Figures: one log input scale shared by the data and the residual figure.
        self.x_scale = bq.LogScale(min=0.1, max=10.0)
        self.y_scale = bq.LinearScale(min=0.0, max=1.0)
        self.residual_scale = bq.LinearScale(min=-1.0, max=1.0)
        scales = {"x": self.x_scale, "y": self.y_scale}
        rscales = {"x": self.x_scale, "y": self.residual_scale}
        one = np.ones(1)
        self.error_bars = bq.Lines(
            x=np.ones((1, 2)),
            y=np.zeros((1, 2)),
            scales=scales,
            colors=["#777777"],
            stroke_width=1.0,
            visible=False,
        )
        self.curves = {
            name: bq.Lines(
                x=np.ones(2),
                y=np.zeros(2),
                scales=scales,
                colors=[colour],
                line_style=style,
                stroke_width=2.2,
                visible=False,
            )
            for name, (colour, style, _) in MODEL_STYLES.items()
        }
        self.data_points = bq.Scatter(
            x=one,
            y=np.zeros(1),
            scales=scales,
            marker="circle",
            default_size=22,
            colors=[DATA_COLOUR],
            visible=False,
        )
        self.zero_points = bq.Scatter(
            x=one,
            y=np.zeros(1),
            scales=scales,
            marker="square",
            default_size=22,
            colors=["white"],
            stroke=DATA_COLOUR,
            visible=False,
        )
        self.zero_line = bq.Lines(
            x=np.array([0.1, 10.0]),
            y=np.zeros(2),
            scales=rscales,
            colors=["#777777"],
            stroke_width=1.0,
        )
        self.residual_points = {
            name: bq.Scatter(
                x=one,
                y=np.zeros(1),
                scales=rscales,
                marker=marker,
                default_size=20,
                colors=[colour],
                visible=False,
            )
            for name, (colour, _, marker) in MODEL_STYLES.items()
        }
        self.x_axis = axis(self.x_scale, "input", "bottom", tick_format="~g")
        self.y_axis = axis(self.y_scale, "readout", "left", tick_format="~g")
        self.residual_x_axis = axis(self.x_scale, "input", "bottom", tick_format="~g")
        self.residual_y_axis = axis(self.residual_scale, "residual", "left", tick_format="~g")
        self.figure = figure(
            [self.error_bars, *self.curves.values(), self.data_points, self.zero_points],
            [self.x_axis, self.y_axis],
            width,
            height,
        )
        residual_height = (
            f"{max(120, int(float(height.removesuffix('px')) * 0.6))}px"
            if (height.endswith("px"))
            else height
        )
        self.residual_figure = figure(
            [self.zero_line, *self.residual_points.values()],
            [self.residual_x_axis, self.residual_y_axis],
            width,
            residual_height,
        )
        self.legend = w.HTML()

        # Results and adoption.
        self.table = w.HTML()
        self.warnings = w.HTML()
        self.comparison = w.HTML()
        self.adopt_choice = w.Dropdown(
            options=[],
            description="cycle from",
            style={"description_width": "70px"},
            layout=w.Layout(width="250px"),
            disabled=True,
        )
        self.adopt_button = w.Button(
            description="Adopt fitted cycle",
            icon="check",
            disabled=True,
            tooltip="write the fitted Michaelis constants (and the model) into the explorer",
            layout=w.Layout(width="160px"),
        )
        self.message = MessageLine()

        boxes = list(self.model_boxes.values())
        super().__init__(
            children=[
                w.HTML("<b>Fit measured dose–response data</b>"),
                w.HBox([self.upload, self.example_button], layout=w.Layout(align_items="center")),
                self.paste,
                self.paste_button,
                self.data_summary,
                w.HTML('<span style="font-size:90%">models</span>'),
                w.GridBox(
                    boxes,
                    layout=w.Layout(
                        grid_template_columns="165px 235px", padding="0 0 0 8px", width="400px"
                    ),
                ),
                self.known,
                w.HBox(
                    [
                        w.HTML(
                            '<span style="font-size:90%">input is</span>',
                            layout=w.Layout(width="60px"),
                        ),
                        self.input_kind,
                    ]
                ),
                w.HBox(
                    [self.fit_button, self.cancel_button, self.busy],
                    layout=w.Layout(align_items="center"),
                ),
                self.message,
                self.figure,
                self.residual_figure,
                self.legend,
                self.table,
                self.warnings,
                self.comparison,
                w.HBox(
                    [self.adopt_choice, self.adopt_button], layout=w.Layout(align_items="center")
                ),
            ],
            state=state,
        )
        self.add_class("hairtrigger-fitting")
        self.upload.observe(self._on_upload, "value")
        self.example_button.on_click(self._on_example)
        self.paste_button.on_click(self._on_paste)
        self.fit_button.on_click(self._on_fit)
        self.cancel_button.on_click(self._on_cancel)
        self.adopt_button.on_click(self._on_adopt)
        state.observe(self._on_state, "revision")
        self._refresh_known()
        self._refresh_summary()
        self._refresh_legend()

    # --- data in (callable from Python) ----------------------------------------------------
    def load_text(
        self, text: str | bytes, source: str = "pasted data", invented: bool = False
    ) -> bool:
        """Read CSV content; on success it replaces the data (and clears the fits).

        Returns False, with the row and column of the first problem shown in the panel, when
        the content cannot be read; the data and fits shown before stay.
        """
        try:
            data = parse_data(text, source=source)
        except DataError as exc:
            where = [
                f"row {exc.row}" if exc.row is not None else "",
                f"column '{exc.column}'" if exc.column is not None else "",
            ]
            located = ", ".join(p for p in where if p)
            detail = str(exc)
            if located and located not in detail:
                detail = f"{located}: {detail}"
            self.message.show_error(f"could not read the data (nothing changed): {detail}")
            return False
        self._take_data(data, source, invented)
        if isinstance(text, str):
            echo = text
        else:
            echo = bytes(text).decode("utf-8-sig", errors="replace")
        if len(echo) <= MAX_ECHO_CHARS and self.paste.value != echo:
            self.paste.value = echo
        kind = "invented example data (not a measurement)" if invented else source
        self.message.show_note(f"read {data.n_points} points from {kind}; press Fit")
        return True

    def load_bytes(self, content: bytes | memoryview, name: str = "upload") -> bool:
        """Read an uploaded file's content (bytes or a memoryview); see `load_text`."""
        return self.load_text(bytes(content), source=name)

    def load_example(self) -> bool:
        """Load the bundled invented titration (invented data for demonstration)."""
        path = example_data_path(EXAMPLE_NAME)
        return self.load_text(path.read_text(encoding="utf-8"), source=path.name, invented=True)

    # --- fitting ---------------------------------------------------------------------------
    @property
    def selected_models(self) -> tuple[str, ...]:
        """Ticked models, in the order offered."""
        return tuple(name for name, box in self.model_boxes.items() if box.value)

    def request(self) -> FitRequest | None:
        """The fit request the Fit button would submit now (None, with a message, if none)."""
        if self.data is None:
            self.message.show_error(
                "load data first (upload a CSV, paste it, or load the invented example)"
            )
            return None
        models = self.selected_models
        if not models:
            self.message.show_error("tick at least one model to fit")
            return None
        cycle = self.state.cycle
        if cycle is None:
            self.message.show_error("the explorer has no valid cycle to take known values from")
            return None
        return FitRequest(
            self.data, models, self.input_kind.value, cycle, self.state.readout, self._source
        )

    def fit(self) -> int | None:
        """Submit the ticked models for fitting; returns the job number (None if refused).

        Inline execution (see `FitWorker`) has shown the result when this returns.
        """
        request = self.request()
        if request is None:
            return None
        self._set_running(True)
        self.message.show_note(
            f"fitting {len(request.models)} model{'s' if len(request.models) > 1 else ''}…"
        )
        progress = self.state.progress

        def work(cancelled: Callable[[], bool]) -> FitOutcome:
            with progress("fitting"):
                return run_fits(request, cancelled)

        return self.worker.submit(work, self._on_outcome)

    def cancel(self) -> bool:
        """Stop waiting for the running fit; the results shown before stay."""
        was = self.worker.cancel()
        self._set_running(False)
        if was:
            self.message.show_note("fit cancelled; the results shown before are kept")
        return was

    def wait(self, timeout: float | None = None) -> bool:
        """Wait for a background fit to finish (scripts and tests)."""
        return self.worker.wait(timeout)

    # --- adopting a fitted cycle -----------------------------------------------------------
    def adoptable(self) -> list[str]:
        """Cycle models with a successful fit, in display order."""
        if self.outcome is None:
            return []
        return [m for m in CYCLE_MODELS if m in self.outcome.fits and self.outcome.fits[m].success]

    def fitted_cycle(self, model: str) -> Cycle:
        """The explorer's current cycle with the Michaelis constants fitted by `model`.

        For the mass-action model the known totals and turnover numbers used by the fit are
        restored (the fit is only valid with them), keeping the current activity ratio.
        """
        if self.outcome is None or model not in self.outcome.fits:
            msg = f"there is no {model} fit to adopt; fit it first"
            raise ValueError(msg)
        fit = self.outcome.fits[model]
        base = self.state.cycle
        if base is None:
            msg = "the explorer has no valid cycle"
            raise ValueError(msg)
        if model == "mass_action":
            known = {k: getattr(self.outcome.request.cycle, k) for k in KNOWN_CYCLE_KEYS}
            base = base.replace(**known).with_activity_ratio(base.activity_ratio)
        return fit.fitted_cycle(base)

    def adopt(self, model: str | None = None) -> bool:
        """Write the fitted cycle of `model` (default: the one chosen) into the shared state.

        The explorer's own bounds apply: a fitted value outside them is refused with a message
        and nothing changes. On success the model switches to the fitted one (and, for mass
        action, the readout to the one fitted), and a provenance line is added to the notes,
        all in one recompute.
        """
        name = model if model is not None else self.adopt_choice.value
        if name not in self.adoptable():
            self.message.show_error(
                "no converged quasi-steady or mass-action fit to adopt; "
                "tick one of those models and press Fit"
            )
            return False
        assert self.outcome is not None
        fit = self.outcome.fits[name]
        try:
            cycle = self.fitted_cycle(name)
            self.state.check_cycle(cycle)
        except (ParameterError, ValueError) as exc:
            self.message.show_error(f"not adopted (nothing changed): {exc}")
            return False
        values = ", ".join(
            f"{p.name} = {p.value:.4g}"
            for p in fit.parameters
            if p.name in ("K1", "K2", "kinase_km", "phosphatase_km")
        )
        line = (
            f"Adopted {values} from a {MODEL_NAMES[name]} fit to "
            f"{self.outcome.request.source}" + (" (invented data)" if self._invented else "") + "."
        )
        readout = self.outcome.request.readout if name == "mass_action" else None
        try:
            with self.state.batch():
                self.state.set_cycle(cycle, model=name, readout=readout)
                self.state.notes = (self.state.notes.rstrip() + "\n" + line).lstrip()
        except (ParameterError, ValueError) as exc:  # rolled back by batch()
            self.message.show_error(f"not adopted (nothing changed): {exc}")
            return False
        open_ends = [
            (
                "no limits on "
                if p.low is None and p.high is None
                else "no lower limit on "
                if p.low is None
                else "no upper limit on "
            )
            + p.name
            for p in fit.parameters
            if not p.identifiable
        ]
        caveat = (
            f" The data set {', '.join(open_ends)}: the adopted value is one of many "
            "consistent with them."
            if open_ends
            else ""
        )
        self.message.show_note(
            f"{line} The explorer now uses the {MODEL_NAMES[name]} model; "
            f"save a snapshot to keep it.{caveat}"
        )
        return True

    # --- events ----------------------------------------------------------------------------
    def _on_upload(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            files = change["new"]
            if not files:
                return
            item = files[0]
            self.load_bytes(item["content"], name=item.get("name") or "upload")
            # Clear, so uploading the same (corrected) file again fires again.
            self.upload.value = ()

        run()

    def _on_example(self, button: Any) -> None:
        reporting(lambda: self.message)(self.load_example)()

    def _on_paste(self, button: Any) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            if not self.paste.value.strip():
                self.message.show_error("the text box is empty; paste CSV data first")
                return
            self.load_text(self.paste.value, source="pasted data")

        run()

    def _on_fit(self, button: Any) -> None:
        reporting(lambda: self.message)(self.fit)()

    def _on_cancel(self, button: Any) -> None:
        reporting(lambda: self.message)(self.cancel)()

    def _on_adopt(self, button: Any) -> None:
        reporting(lambda: self.message)(self.adopt)()

    def _on_state(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self._refresh_known)()

    def _on_outcome(self, outcome: Any) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            self._set_running(False)
            if isinstance(outcome, Exception):
                self.message.show_error(
                    f"the fit failed (results shown before are kept): "
                    f"{type(outcome).__name__}: {outcome}"
                )
                return
            if not outcome.fits:
                reasons = "; ".join(f"{MODEL_NAMES[m]}: {r}" for m, r in outcome.skipped.items())
                self.message.show_error(f"no model could be fitted (nothing changed): {reasons}")
                return
            self.outcome = outcome
            self._draw()
            self._refresh_results()
            failed = [MODEL_NAMES[m] for m, f in outcome.fits.items() if not f.success]
            text = (
                f"fitted {len(outcome.fits)} model{'s' if len(outcome.fits) > 1 else ''} "
                f"to {outcome.request.data.n_points} points in {outcome.seconds:.2f} s"
            )
            if outcome.skipped:
                text += f"; {len(outcome.skipped)} skipped (see warnings)"
            if failed:
                text += f"; did not converge: {', '.join(failed)}"
            self.message.show_note(text)

        run()

    # --- internals -------------------------------------------------------------------------
    def _set_running(self, running: bool) -> None:
        if running and not self._holding:
            self.busy.hold("fit")
            self._holding = True
        elif not running and self._holding:
            self.busy.release("fit")
            self._holding = False
        self.cancel_button.disabled = not running

    def _take_data(self, data: DoseResponseData, source: str, invented: bool) -> None:
        # New data make running and shown fits meaningless.
        if self.worker.cancel():
            self._set_running(False)
        self.data = data
        self._source = source
        self._invented = invented
        self.outcome = None
        if self.input_kind.value != data.input_kind:
            self.input_kind.value = data.input_kind
        self._refresh_summary()
        self._draw()
        self._refresh_results()

    def _refresh_summary(self) -> None:
        d = self.data
        if d is None:
            value = (
                '<span style="color:#4d4d4d;font-size:85%">No data yet: upload or paste a '
                "CSV with columns input, readout (optional sd, replicate).</span>"
            )
        else:
            reps = len(set(d.replicate)) if d.replicate is not None else 0
            parts = [f"<b>{d.n_points} points</b> from {html.escape(self._source)}"]
            if reps > 1:
                parts.append(f"{reps} replicates")
            declared = "declared" if d.input_kind_declared else "not declared; taken as"
            unit = _unit_text(d.input_unit)
            parts.append(
                f"input {declared} {d.input_kind}" + (f" in {html.escape(unit)}" if unit else "")
            )
            parts.append(f"readout in {html.escape(d.readout_unit)}")
            parts.append("weighted by 1/sd²" if d.sd is not None else "unweighted (no sd)")
            title = d.metadata.get("title")
            invented = (
                (' <b style="color:#b2182b">INVENTED DATA for demonstration, not a measurement</b>')
                if self._invented
                else ""
            )
            value = (
                '<div style="font-size:85%">'
                + "; ".join(parts)
                + "."
                + (f" <i>{html.escape(title)}</i>" if title else "")
                + invented
                + "</div>"
            )
        if self.data_summary.value != value:
            self.data_summary.value = value

    def _refresh_known(self) -> None:
        cycle = self.state.cycle
        if cycle is None:
            value = ""
        else:
            value = (
                '<div style="font-size:80%;color:#4d4d4d">mass action uses the explorer\'s '
                f"W = {format_number(cycle.substrate_total)} µM, "
                f"E2 = {format_number(cycle.phosphatase_total)} µM, "
                f"k1 = {format_number(cycle.kinase_kcat)} 1/s, "
                f"k2 = {format_number(cycle.phosphatase_kcat)} 1/s, readout "
                f"{html.escape(READOUT_LABELS[self.state.readout])}</div>"
            )
        if self.known.value != value:
            self.known.value = value

    def _axis_labels(self, d: DoseResponseData | None) -> tuple[str, str]:
        if d is None:
            return "input", "readout"
        if d.input_kind == "ratio":
            x = "activity ratio r = V1/V2"
        else:
            unit = _unit_text(d.input_unit)
            x = f"input ({unit})" if unit else "input (amount)"
        return x, f"readout ({d.readout_unit})"

    def _draw(self) -> None:
        """Redraw data, curves and residuals (every mark's arrays new and finite)."""
        outcome = self.outcome
        d = outcome.request.data if outcome is not None else self.data
        if d is None:
            return
        xs, zero, (left, right) = plot_positions(d.input)
        x_label, y_label = self._axis_labels(d)
        for ax, label in (
            (self.x_axis, x_label),
            (self.residual_x_axis, x_label),
            (self.y_axis, y_label),
        ):
            if ax.label != label:
                ax.label = label
        self.residual_y_axis.label = f"residual ({d.readout_unit})"
        with self.x_scale.hold_sync():
            self.x_scale.min = float(left)
            self.x_scale.max = float(right)
        ticks = np.asarray(log_ticks(left, right), dtype=float)
        self.x_axis.tick_values = ticks
        self.residual_x_axis.tick_values = ticks.copy()

        y = np.asarray(d.readout, dtype=float)
        at_zero = d.input <= 0
        with self.data_points.hold_sync():
            if np.any(~at_zero):
                self.data_points.x = np.array(xs[~at_zero])
                self.data_points.y = np.array(y[~at_zero])
            self.data_points.visible = bool(np.any(~at_zero))
        with self.zero_points.hold_sync():
            if np.any(at_zero):
                self.zero_points.x = np.array(xs[at_zero])
                self.zero_points.y = np.array(y[at_zero])
            self.zero_points.visible = bool(np.any(at_zero))
        low, high = float(np.min(y)), float(np.max(y))
        with self.error_bars.hold_sync():
            if d.sd is not None:
                sd = np.asarray(d.sd, dtype=float)
                self.error_bars.x = np.column_stack([xs, xs])
                self.error_bars.y = np.column_stack([y - sd, y + sd])
                low, high = min(low, float(np.min(y - sd))), max(high, float(np.max(y + sd)))
            self.error_bars.visible = d.sd is not None

        grid = np.logspace(math.log10(left), math.log10(right), CURVE_POINTS)
        fits = outcome.fits if outcome is not None else {}
        biggest = 0.0
        for name, line in self.curves.items():
            fit = fits.get(name)
            curve = fit.predict(grid) if fit is not None and fit.success else None
            ok = curve is not None and bool(np.all(np.isfinite(curve)))
            with line.hold_sync():
                if ok:
                    assert curve is not None
                    line.x = grid.copy()
                    line.y = np.asarray(curve, dtype=float)
                    low, high = min(low, float(np.min(curve))), max(high, float(np.max(curve)))
                line.visible = ok
            marks = self.residual_points[name]
            residuals = fit.residuals if fit is not None and fit.success else None
            finite = np.isfinite(residuals) if residuals is not None else np.zeros(0, dtype=bool)
            shown = ok and bool(finite.any())
            with marks.hold_sync():
                if shown:
                    assert residuals is not None
                    marks.x = np.array(xs[finite])
                    marks.y = np.array(residuals[finite])
                    biggest = max(biggest, float(np.max(np.abs(residuals[finite]))))
                marks.visible = shown
        y_low, y_high = _padded(low, high)
        with self.y_scale.hold_sync():
            self.y_scale.min = y_low
            self.y_scale.max = y_high
        self.y_axis.tick_values = np.asarray(linear_ticks(y_low, y_high, 5), dtype=float)
        r_max = 1.15 * biggest if biggest > 0 else max(1e-3 * (high - low), 1e-12)
        with self.residual_scale.hold_sync():
            self.residual_scale.min = -r_max
            self.residual_scale.max = r_max
        self.residual_y_axis.tick_values = np.asarray(linear_ticks(-r_max, r_max, 5), dtype=float)
        with self.zero_line.hold_sync():
            self.zero_line.x = np.array([left, right])
            self.zero_line.y = np.zeros(2)
        self._refresh_legend(zero)

    def _refresh_legend(self, zero: float | None = None) -> None:
        items = [(DATA_COLOUR, "●", "data")]
        if self.data is not None and self.data.sd is not None:
            items.append(("#777777", "│", "± sd"))
        fits = self.outcome.fits if self.outcome is not None else {}
        parts = [
            f'<span style="white-space:nowrap;margin-right:10px;color:{c}">{s}</span>'
            f"<span style='margin-right:10px'>{html.escape(t)}</span>"
            for c, s, t in items
        ]
        for name, fit in fits.items():
            if not fit.success:
                continue
            colour, style, _ = MODEL_STYLES[name]
            parts.append(
                f'<span style="white-space:nowrap;margin-right:10px"><span style="display:'
                f"inline-block;width:18px;border-top:3px {_css_dash(style)} {colour};"
                f'vertical-align:middle"></span> {MODEL_NAMES[name]}</span>'
            )
        if zero is not None:
            parts.append(
                f'<span style="white-space:nowrap">□ input 0, drawn at '
                f"{format_number(zero, 3)} (log axis)</span>"
            )
        value = '<div style="font-size:85%;line-height:1.5">' + " ".join(parts) + "</div>"
        if self.legend.value != value:
            self.legend.value = value

    def _refresh_results(self) -> None:
        outcome = self.outcome
        table = parameter_table_html(outcome.fits) if outcome is not None else ""
        warnings = warnings_html(outcome) if outcome is not None else ""
        comparison = comparison_html(outcome.comparison) if outcome is not None else ""
        for widget, value in (
            (self.table, table),
            (self.warnings, warnings),
            (self.comparison, comparison),
        ):
            if widget.value != value:
                widget.value = value
        options = [(MODEL_NAMES[m], m) for m in self.adoptable()]
        if list(self.adopt_choice.options) != options:
            self.adopt_choice.options = options
            if options:
                self.adopt_choice.value = options[0][1]
        self.adopt_choice.disabled = not options
        self.adopt_button.disabled = not options
