"""Shareable, self-contained HTML reports of one or several snapshots.

A report is ONE HTML file that a collaborator can open anywhere, offline: parameter tables,
the `hairtrigger.evaluate` results, response curves, time courses and steepness maps drawn as
inline SVG (matplotlib, Agg), a side-by-side comparison when several snapshots are given, the
caution that predictions need experimental confirmation, and every snapshot's JSON embedded in
a ``<script type="application/json" class="hairtrigger-snapshot">`` block so that
`extract_snapshots` (or any JSON reader) gets the exact snapshots back.

The page loads nothing: no scripts, no fonts (text in the figures is drawn as paths), images
only as ``data:`` URIs, and a Content-Security-Policy that forbids every other fetch.

matplotlib is an optional dependency (the ``report`` extra); it is imported only when a report
is drawn, and its absence raises `ReportDependencyError` with the install command.
"""

from __future__ import annotations

import datetime as _dt
import html
import io
import json
import math
import os
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from html.parser import HTMLParser
from pathlib import Path
from typing import TYPE_CHECKING, Any, Final

import numpy as np

from ..core.evaluate import MAP_MEASURES, THRESHOLD_KEYS, evaluate, steepness_map
from ..core.params import CYCLE_DESCRIPTIONS, CYCLE_KEYS, CYCLE_UNITS, Cycle, check_positive
from ..core.steady import steady_state
from ..core.timecourse import time_course
from .files import atomic_write
from .snapshot import Snapshot, dumps_snapshot, loads_snapshot

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

#: CSS class of the embedded snapshot blocks (what `extract_snapshots` looks for).
SNAPSHOT_BLOCK_CLASS: Final[str] = "hairtrigger-snapshot"

#: CSS class of every inline figure.
FIGURE_CLASS: Final[str] = "hairtrigger-figure"

#: The caution printed at the top of every report.
CAUTION: Final[str] = (
    "Everything in this report is a model prediction computed from the parameters listed. "
    "Predictions depend on the model, the readout and the parameter values, and need "
    "experimental confirmation before they guide work at the bench."
)

#: Forbids every fetch: no scripts, fonts, frames or connections; images only as data: URIs.
CONTENT_SECURITY_POLICY: Final[str] = (
    "default-src 'none'; img-src data:; style-src 'unsafe-inline'; "
    "base-uri 'none'; form-action 'none'"
)

MODEL_LABELS: Final[dict[str, str]] = {
    "quasi_steady": "quasi-steady (complexes neglected)",
    "mass_action": "mass action (complexes kept)",
}
READOUT_LABELS: Final[dict[str, str]] = {
    "free_modified": "free modified substrate B/W",
    "total_modified": "total modified substrate (B + C2)/W",
}
MEASURE_LABELS: Final[dict[str, str]] = {
    "hill_coefficient": "effective Hill coefficient nH",
    "response_coefficient": "response coefficient Rv = r90/r10",
    "peak_sensitivity": "peak local sensitivity max d ln y / d ln r",
    "relative_hill_coefficient": "effective Hill coefficient nH (targets relative to ceiling)",
}
RESULT_LABELS: Final[dict[str, str]] = {
    "K1": "K1 = M1/W",
    "K2": "K2 = M2/W",
    "activity_ratio": "activity ratio r = V1/V2",
    "readout_value": "steady readout at r (fraction of W)",
    "activity_ratio_10": "r giving 10 % readout",
    "activity_ratio_50": "r giving 50 % readout",
    "activity_ratio_90": "r giving 90 % readout",
    "response_coefficient": "response coefficient Rv = r90/r10",
    "hill_coefficient": "effective Hill coefficient nH",
    "readout_ceiling": "readout ceiling (fraction of W)",
}

#: Line colours for snapshots (cycled), chosen for contrast on white and for colour-blind readers.
PALETTE: Final[tuple[str, ...]] = (
    "#1b6ca8",
    "#d1495b",
    "#2e8b57",
    "#e09f3e",
    "#6a4c93",
    "#3d3d3d",
    "#0fa3b1",
    "#9c6644",
)


class ReportDependencyError(ImportError):
    """matplotlib (the ``report`` extra) is needed to draw a report but is not installed."""


@dataclass(frozen=True)
class ReportOptions:
    """Settings of a report (all optional; the defaults suit a first look).

    Parameters
    ----------
    title : str, optional
        Page title; defaults to the snapshot's title, or "Comparison of N snapshots".
    curve_points : int
        Points on each response curve.
    map_points : int
        Grid points per axis of the steepness map.
    map_measure : str, optional
        One of `hairtrigger.core.evaluate.MAP_MEASURES`; by default the measure saved in the
        snapshot's view settings (the explorer saves it), else ``"hill_coefficient"``.
    map_decades : tuple of float
        log10 range of K1 = M1/W and K2 = M2/W on the map (widened to include the snapshot).
    steps : mapping, optional
        Time course step, cycle key -> new value (as ``hairtrigger timecourse --step``), the
        same for every snapshot. By default each snapshot's kinase amount is stepped to the
        value of the activity ratio saved in its view settings (``step_activity_ratio``, the
        explorer's time-course step), else to the value that gives 90 % of the readout ceiling
        when its readout is below half the ceiling, or 10 % otherwise (switching on or off
        across the threshold).
    t_end : float, optional
        Time course end (s); by default long enough to see the switch settle.
    time_points : int
        Points of each time course.
    generated : datetime, optional
        Timestamp printed in the report (UTC now by default; fix it for reproducible files).
    """

    title: str | None = None
    curve_points: int = 400
    map_points: int = 96
    map_measure: str | None = None
    map_decades: tuple[float, float] = (-3.0, 2.0)
    steps: Mapping[str, float] | None = None
    t_end: float | None = None
    time_points: int = 240
    generated: _dt.datetime | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        for name in ("curve_points", "map_points", "time_points"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or not 8 <= value <= 2048:
                msg = f"`{name}` must be an integer between 8 and 2048; got {value!r}"
                raise ValueError(msg)
        if self.map_measure is not None and self.map_measure not in MAP_MEASURES:
            choices = ", ".join(map(repr, MAP_MEASURES))
            msg = f"`map_measure` must be one of {choices}; got {self.map_measure!r}"
            raise ValueError(msg)
        lo, hi = self.map_decades
        if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
            msg = f"`map_decades` must be two finite numbers, low < high; got {self.map_decades!r}"
            raise ValueError(msg)
        if self.steps is not None:
            if not self.steps:
                msg = "`steps` must name at least one cycle parameter"
                raise ValueError(msg)
            for key, value in self.steps.items():
                if key not in CYCLE_KEYS:
                    msg = f"unknown step parameter `{key}` (known: {', '.join(CYCLE_KEYS)})"
                    raise ValueError(msg)
                check_positive(key, value)
        if self.t_end is not None:
            check_positive("t_end", self.t_end)


# --- public API ------------------------------------------------------------------------------


def render_report(
    snapshots: Sequence[Snapshot] | Snapshot, options: ReportOptions | None = None
) -> str:
    """Return the report of one or several snapshots as one self-contained HTML string.

    Parameters
    ----------
    snapshots : Snapshot or sequence of Snapshot
        The snapshots to report; several give a comparison section as well.
    options : ReportOptions, optional
        Figure and time-course settings.

    Returns
    -------
    str
        The HTML document (UTF-8 text; makes no network request when opened).

    Raises
    ------
    ValueError
        If no snapshot is given or an option is invalid.
    ReportDependencyError
        If matplotlib is not installed.
    """
    items = _as_list(snapshots)
    options = options or ReportOptions()
    _require_matplotlib()
    entries = [
        _Entry.build(i, snap, label, options)
        for i, (snap, label) in enumerate(zip(items, _labels(items), strict=True))
    ]
    return _Page(entries, options).html()


def write_report(
    snapshots: Sequence[Snapshot] | Snapshot,
    path: str | os.PathLike[str],
    *,
    overwrite: bool = False,
    options: ReportOptions | None = None,
) -> Path:
    """Render the report and write it to `path` atomically.

    Parameters
    ----------
    snapshots : Snapshot or sequence of Snapshot
        As in `render_report`.
    path : path-like
        Output file (``.html``).
    overwrite : bool
        Replace an existing file; otherwise an existing `path` raises `FileExistsError`.
    options : ReportOptions, optional
        As in `render_report`.

    Returns
    -------
    pathlib.Path
        The path written.

    Notes
    -----
    The document is rendered completely before anything is written, then written with
    `hairtrigger.io.files.atomic_write`, so a failure never leaves a partial report (nor
    damages an existing one).
    """
    target = Path(path)
    # Refuse before the (slow) drawing; atomic_write checks again when it publishes the file.
    if not overwrite and (target.exists() or target.is_symlink()):
        msg = f"{target}: file exists; pass overwrite=True (--force) to replace it"
        raise FileExistsError(msg)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        msg = f"cannot write {target}: folder {folder} does not exist"
        raise FileNotFoundError(msg)
    document = render_report(snapshots, options)
    atomic_write(target, document, overwrite=overwrite)
    return target


def extract_snapshot_texts(document: str) -> list[str]:
    """Return the JSON text of every snapshot embedded in a report, in page order."""
    parser = _SnapshotBlockParser()
    parser.feed(document)
    parser.close()
    return parser.blocks


def extract_snapshots(document: str) -> list[Snapshot]:
    """Load back the snapshots embedded in a report.

    Parameters
    ----------
    document : str
        The report's HTML text (for a file: ``Path(p).read_text("utf-8")``).

    Returns
    -------
    list of Snapshot
        In the order of the report; equal to the snapshots it was made from.

    Raises
    ------
    ValueError
        If the document holds no embedded snapshot, or a block is not a valid snapshot
        (the message names the block and the first bad field).
    """
    texts = extract_snapshot_texts(document)
    if not texts:
        msg = "no embedded hairtrigger snapshot found (is this a hairtrigger report?)"
        raise ValueError(msg)
    out = []
    for number, text in enumerate(texts, start=1):
        try:
            out.append(loads_snapshot(text))
        except ValueError as exc:
            msg = f"embedded snapshot {number}: {exc}"
            raise ValueError(msg) from exc
    return out


# --- helpers: inputs --------------------------------------------------------------------------


def _as_list(snapshots: Sequence[Snapshot] | Snapshot) -> list[Snapshot]:
    items = [snapshots] if isinstance(snapshots, Snapshot) else list(snapshots)
    if not items:
        msg = "`snapshots` must hold at least one snapshot"
        raise ValueError(msg)
    for i, item in enumerate(items):
        if not isinstance(item, Snapshot):
            msg = f"`snapshots[{i}]` must be a hairtrigger Snapshot; got {type(item).__name__}"
            raise TypeError(msg)
    return items


def _labels(snapshots: Sequence[Snapshot]) -> list[str]:
    """Display names: the titles, made unique, or "Snapshot i" when untitled."""
    labels: list[str] = []
    for i, snap in enumerate(snapshots, start=1):
        base = (snap.title or "").strip() or f"Snapshot {i}"
        label, n = base, 2
        while label in labels:
            label, n = f"{base} ({n})", n + 1
        labels.append(label)
    return labels


def _require_matplotlib() -> None:
    try:
        import matplotlib  # noqa: F401
    except ImportError as exc:
        msg = (
            "reports need matplotlib, which is not installed; install it with "
            "`pip install 'hairtrigger[report]'` (or `pip install matplotlib`)"
        )
        raise ReportDependencyError(msg) from exc


# --- computation (numbers first, drawing after) -------------------------------------------------


@dataclass(frozen=True)
class _TimeCourse:
    steps: dict[str, float]
    t: np.ndarray
    readout: np.ndarray
    before: float  # steady readout before the step
    after: float  # steady readout after the step
    half_time: float | None
    switch_time: float | None  # 10 -> 90 % of the change
    message: str = ""

    @property
    def drawn(self) -> bool:
        """True if there is a course to draw (False when it could not be computed)."""
        return self.t.size > 1


@dataclass(frozen=True)
class _Entry:
    """One snapshot with everything the page shows about it."""

    index: int
    snapshot: Snapshot
    label: str
    colour: str
    results: dict[str, Any]
    ratios: np.ndarray
    curve: np.ndarray
    km_axis: np.ndarray  # K = Km/W on both map axes
    steepness: np.ndarray  # shape (K2, K1)
    measure: str  # the steepness measure of the map
    course: _TimeCourse

    @classmethod
    def build(cls, index: int, snap: Snapshot, label: str, options: ReportOptions) -> _Entry:
        cycle, model, readout = snap.cycle, snap.model, snap.readout
        results = evaluate(cycle, model, readout)
        ratios = _ratio_axis([results], [cycle.activity_ratio], options.curve_points)
        curve = _response_curve(cycle, model, readout, ratios)
        lo, hi = options.map_decades
        lo = min(lo, math.floor(math.log10(min(cycle.K1, cycle.K2))) - 0.5)
        hi = max(hi, math.ceil(math.log10(max(cycle.K1, cycle.K2))) + 0.5)
        k_axis = np.logspace(lo, hi, options.map_points)
        w = cycle.substrate_total
        view = _view_settings(snap)
        measure = options.map_measure or view.get("map_measure")
        if measure not in MAP_MEASURES:
            measure = "hill_coefficient"
        steepness = steepness_map(
            cycle, k_axis[None, :] * w, k_axis[:, None] * w, model, readout, measure
        )
        if options.steps:
            steps = dict(options.steps)
        else:
            steps = _view_steps(cycle, view) or _default_steps(cycle, results)
        course = _time_course(cycle, model, readout, steps, options)
        return cls(
            index,
            snap,
            label,
            PALETTE[index % len(PALETTE)],
            results,
            ratios,
            curve,
            k_axis,
            steepness,
            measure,
            course,
        )


def _ratio_axis(
    results: Sequence[Mapping[str, Any]], current: Sequence[float], points: int
) -> np.ndarray:
    """Activity ratios spanning every curve's switch (r10 to r90) and operating point, ×/÷ 10."""
    lows, highs = [], []
    for res, r in zip(results, current, strict=True):
        r10 = res["activity_ratio_10"] or res["relative"]["activity_ratio_10"] or r
        r90 = res["activity_ratio_90"] or res["relative"]["activity_ratio_90"] or r
        lows.append(min(r10, r))
        highs.append(max(r90, r))
    return np.logspace(math.log10(min(lows)) - 1.0, math.log10(max(highs)) + 1.0, points)


def _response_curve(cycle: Cycle, model: str, readout: str, ratios: np.ndarray) -> np.ndarray:
    """Steady readout against the activity ratio, the kinase amount being the input."""
    params: dict[str, Any] = cycle.arrays()
    params["kinase_total"] = ratios * cycle.phosphatase_vmax / cycle.kinase_kcat
    return np.asarray(steady_state(params, model).readout(readout), dtype=float)


def _default_steps(cycle: Cycle, results: Mapping[str, Any]) -> dict[str, float]:
    """Kinase step across the threshold: to 90 % of the ceiling if now below half, else 10 %."""
    relative = results["relative"]
    ceiling = results["readout_ceiling"] or 1.0
    switching_on = results["readout_value"] < 0.5 * ceiling
    ratio = relative["activity_ratio_90" if switching_on else "activity_ratio_10"]
    if ratio is None:  # no threshold (should not happen for relative targets): a tenfold step
        ratio = cycle.activity_ratio * (10.0 if switching_on else 0.1)
    return {"kinase_total": ratio * cycle.phosphatase_vmax / cycle.kinase_kcat}


def _default_t_end(cycle: Cycle, after: Cycle) -> float:
    """A window long enough to see the switch settle.

    The slowest part of a zero-order switch is the near-linear transit, which moves the pool
    W at roughly the net rate |V1 − V2|, followed by relaxation at the enzymes' first-order
    rates; both scales are added and doubled (settling is not reached after a few relaxation
    times alone).
    """
    v1, v2 = after.kinase_vmax, after.phosphatase_vmax
    w = cycle.substrate_total
    transit = w / max(abs(v1 - v2), 1e-12 * max(v1, v2))
    relax = (after.kinase_km + w) / v1 + (after.phosphatase_km + w) / v2
    return 2.0 * (min(transit, 50.0 * relax) + relax)


def _crossing(t: np.ndarray, y: np.ndarray, level: float) -> float | None:
    """First time the (monotone-ish) curve y(t) passes `level`, by linear interpolation."""
    above = (y - level) * np.sign(y[-1] - y[0]) >= 0.0
    hits = np.flatnonzero(above)
    if hits.size == 0:
        return None
    i = int(hits[0])
    if i == 0:
        return float(t[0])
    y0, y1 = y[i - 1], y[i]
    frac = 0.0 if y1 == y0 else (level - y0) / (y1 - y0)
    return float(t[i - 1] + frac * (t[i] - t[i - 1]))


def _view_settings(snapshot: Snapshot) -> Mapping[str, Any]:
    """The explorer's view settings saved in a snapshot (empty if none or malformed)."""
    view = snapshot.extras.get("view")
    return view if isinstance(view, Mapping) else {}


def _view_steps(cycle: Cycle, view: Mapping[str, Any]) -> dict[str, float] | None:
    """The time-course step saved by the explorer: the kinase amount giving its target r."""
    ratio = view.get("step_activity_ratio")
    if isinstance(ratio, bool) or not isinstance(ratio, int | float):
        return None
    if not (math.isfinite(ratio) and ratio > 0):
        return None
    return {"kinase_total": float(ratio) * cycle.phosphatase_vmax / cycle.kinase_kcat}


def _time_course(
    cycle: Cycle, model: str, readout: str, steps: Mapping[str, float], options: ReportOptions
) -> _TimeCourse:
    steps = dict(steps)
    after_cycle = cycle.replace(**steps)
    t_end = options.t_end or _default_t_end(cycle, after_cycle)
    before = float(steady_state(cycle.arrays(), model).readout(readout))
    after = float(steady_state(after_cycle.arrays(), model).readout(readout))
    try:
        course = time_course(cycle, steps, t_end, options.time_points, model=model, readout=readout)
    except ValueError as exc:  # e.g. a binding rate too small for a mass-action course
        return _TimeCourse(
            steps, np.zeros(0), np.zeros(0), before, after, None, None, f"no time course: {exc}"
        )
    if not course.success:
        return _TimeCourse(
            steps,
            np.zeros(0),
            np.zeros(0),
            before,
            after,
            None,
            None,
            f"the time course failed: {course.message}",
        )
    t = np.asarray(course["t"], dtype=float)
    y = np.asarray(course["readout"], dtype=float)
    change = after - before
    half = switch = None
    message = ""
    if abs(change) > 1e-9:
        half_at = _crossing(t, y, before + 0.5 * change)
        t10 = _crossing(t, y, before + 0.1 * change)
        t90 = _crossing(t, y, before + 0.9 * change)
        half = half_at
        switch = None if t10 is None or t90 is None else t90 - t10
        if t90 is None:
            message = "the readout had not reached 90 % of its change by the end of the window"
    else:
        message = "the step does not change the steady readout"
    return _TimeCourse(steps, t, y, before, after, half, switch, message)


# --- drawing ----------------------------------------------------------------------------------

_SVG_ID = re.compile(r'\bid="([^"]+)"')


def _svg(fig: Figure, name: str, description: str) -> str:
    """Serialise a matplotlib figure to inline SVG with ids unique to `name`.

    Text is drawn as glyph paths so the figure looks the same without any font, and ids are
    prefixed so several figures can share one HTML document.
    """
    import matplotlib

    buffer = io.StringIO()
    with matplotlib.rc_context({"svg.fonttype": "path", "svg.hashsalt": name}):
        fig.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    text = buffer.getvalue()
    text = text[text.index("<svg") :]
    ids = set(_SVG_ID.findall(text))
    if ids:
        pattern = re.compile(
            r'(\bid="|#)('
            + "|".join(re.escape(i) for i in sorted(ids, key=len, reverse=True))
            + r')(?=["\)])'
        )
        text = pattern.sub(lambda m: f"{m.group(1)}{name}-{m.group(2)}", text)
    label = html.escape(description, quote=True)
    text = text.replace(
        "<svg ",
        f'<svg class="{FIGURE_CLASS}" data-figure="{name}" role="img" aria-label="{label}" ',
        1,
    )
    return text


def _new_figure(width: float = 6.4, height: float = 3.8) -> Figure:
    from matplotlib.figure import Figure

    # Fixed margins, not a layout engine: the figures have a fixed structure, and measuring
    # every tick label for a constrained layout doubled the drawing time.
    return Figure(figsize=(width, height), dpi=100)


def _plot_axes(fig: Figure) -> Axes:
    """Axes of a curve figure, with room for the axis labels and a left-aligned title."""
    return fig.add_axes((0.11, 0.14, 0.86, 0.78))


def _log_axes(ax: Axes) -> None:
    ax.grid(True, which="major", color="#d9d9d9", linewidth=0.6)
    ax.set_axisbelow(True)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)


def response_curves_figure(entries: Sequence[_Entry], name: str) -> str:
    """Response curves (readout against activity ratio) of the entries, overlaid."""
    fig = _new_figure()
    ax = _plot_axes(fig)
    _log_axes(ax)
    for e in entries:
        ax.plot(e.ratios, e.curve, color=e.colour, linewidth=1.8, label=e.label)
        r = e.snapshot.cycle.activity_ratio
        ax.plot(
            [r],
            [e.results["readout_value"]],
            marker="o",
            color=e.colour,
            markersize=6,
            markeredgecolor="white",
            zorder=5,
        )
        ceiling = e.results["readout_ceiling"]
        if ceiling is not None and ceiling < 0.999:
            ax.axhline(ceiling, color=e.colour, linestyle=":", linewidth=1.0)
        for key in ("activity_ratio_10", "activity_ratio_50", "activity_ratio_90"):
            if e.results[key] is not None:
                ax.axvline(e.results[key], color=e.colour, linestyle="--", linewidth=0.6, alpha=0.6)
    ax.set_xscale("log")
    ax.set_ylim(-0.02, 1.02)
    ax.set_xlabel("activity ratio r = V1/V2 (kinase amount varied)")
    readouts = {e.snapshot.readout for e in entries}
    ax.set_ylabel(
        READOUT_LABELS[readouts.pop()] if len(readouts) == 1 else "readout (fraction of W)"
    )
    if len(entries) > 1:
        ax.legend(frameon=False, fontsize=8, loc="upper left")
    title = "Steady-state response" + (" (compared)" if len(entries) > 1 else "")
    ax.set_title(title, fontsize=10, loc="left")
    return _svg(
        fig,
        name,
        f"{title}: readout against activity ratio; dot = operating point, "
        "dashed = r10, r50, r90, dotted = readout ceiling",
    )


def time_courses_figure(entries: Sequence[_Entry], name: str) -> str:
    """Readout after the step in enzyme amount, from the steady state before it."""
    fig = _new_figure()
    ax = _plot_axes(fig)
    _log_axes(ax)
    for e in entries:
        c = e.course
        ax.plot(c.t, c.readout, color=e.colour, linewidth=1.8, label=e.label)
        ax.axhline(c.after, color=e.colour, linestyle=":", linewidth=1.0)
        if c.half_time is not None:
            ax.plot(
                [c.half_time],
                [0.5 * (c.before + c.after)],
                marker="o",
                color=e.colour,
                markersize=5,
                markeredgecolor="white",
                zorder=5,
            )
    ax.set_ylim(-0.02, 1.02)
    ends = [float(e.course.t[-1]) for e in entries]
    if max(ends) > 10.0 * min(ends):
        # Time scales differ by more than tenfold: a log axis keeps every switch visible.
        ax.set_xscale("log")
        ax.set_xlim(min(float(e.course.t[1]) for e in entries), max(ends))
        ax.set_xlabel("time after the step (s, log scale)")
    else:
        ax.set_xlim(0.0, max(ends))
        ax.set_xlabel("time after the step (s)")
    readouts = {e.snapshot.readout for e in entries}
    ax.set_ylabel(
        READOUT_LABELS[readouts.pop()] if len(readouts) == 1 else "readout (fraction of W)"
    )
    if len(entries) > 1:
        ax.legend(frameon=False, fontsize=8, loc="best")
    title = "Time course after the step" + (" (compared)" if len(entries) > 1 else "")
    ax.set_title(title, fontsize=10, loc="left")
    return _svg(
        fig, name, f"{title}: readout against time; dot = half-time, dotted = new steady state"
    )


def steepness_map_figure(entry: _Entry, measure: str, name: str) -> str:
    """Steepness over K1 = M1/W and K2 = M2/W, other parameters from the snapshot."""
    from matplotlib import colormaps
    from matplotlib.patches import Patch

    fig = _new_figure(6.4, 4.8)
    ax = fig.add_axes((0.12, 0.11, 0.64, 0.82))
    colour_axes = fig.add_axes((0.79, 0.11, 0.03, 0.82))
    k = entry.km_axis
    values = np.ma.masked_invalid(entry.steepness)
    cmap = colormaps["viridis"].with_extremes(bad="#c8c8c8")
    finite = entry.steepness[np.isfinite(entry.steepness)]
    if finite.size:
        vmin, vmax = float(finite.min()), float(finite.max())
    else:
        vmin, vmax = 1.0, 10.0
    # Steepness spans orders of magnitude across the map: colour it on a log scale.
    if vmin > 0:
        from matplotlib.colors import LogNorm

        norm: Any = LogNorm(vmin=vmin, vmax=max(vmax, vmin * 1.001))
    else:
        from matplotlib.colors import Normalize

        norm = Normalize(vmin=vmin, vmax=max(vmax, vmin + 1e-9))
    mesh = ax.pcolormesh(k, k, values, cmap=cmap, norm=norm, shading="nearest", rasterized=True)
    if finite.size and vmax > vmin:
        levels = [v for v in (1.5, 2, 3, 5, 10, 20, 50, 100, 200) if vmin < v < vmax]
        if measure == "response_coefficient":
            levels = [v for v in (1.1, 1.5, 2, 3, 5, 9, 20, 40, 81) if vmin < v < vmax]
        if levels:
            filled = np.where(np.isfinite(entry.steepness), entry.steepness, vmin)
            contours = ax.contour(k, k, filled, levels=levels, colors="white", linewidths=0.7)
            ax.clabel(contours, fontsize=8, fmt="%g")
    cycle = entry.snapshot.cycle
    ax.axvline(cycle.K1, color="#ff4d4d", linewidth=1.0)
    ax.axhline(cycle.K2, color="#ff4d4d", linewidth=1.0)
    ax.plot([cycle.K1], [cycle.K2], marker="+", color="#ff4d4d", markersize=12, mew=2)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("K1 = M1/W (kinase Michaelis constant / substrate)")
    ax.set_ylabel("K2 = M2/W (phosphatase)")
    bar = fig.colorbar(mesh, cax=colour_axes)
    bar.set_label(MEASURE_LABELS[measure], fontsize=8)
    if not np.all(np.isfinite(entry.steepness)):
        ax.legend(
            handles=[Patch(color="#c8c8c8", label="undefined (target above ceiling)")],
            loc="lower left",
            fontsize=7,
            framealpha=0.85,
        )
    ax.set_title(f"Steepness map: {entry.label}", fontsize=10, loc="left")
    grey = (
        "" if np.all(np.isfinite(entry.steepness)) else "; grey = undefined (target above ceiling)"
    )
    return _svg(
        fig,
        name,
        f"Steepness map of {entry.label}: {MEASURE_LABELS[measure]} over "
        f"K1 and K2; red cross = this snapshot{grey}",
    )


# --- HTML ---------------------------------------------------------------------------------------


def _fmt(value: Any) -> str:
    if value is None:
        return '<span class="na" title="does not exist (see warnings)">—</span>'
    if isinstance(value, float):
        return f"{value:.4g}"
    return html.escape(str(value))


def _embedded_json(snapshot: Snapshot) -> str:
    """The snapshot's JSON with <, > and & escaped so the text cannot end the script block."""
    text = dumps_snapshot(snapshot)
    return text.replace("&", "\\u0026").replace("<", "\\u003c").replace(">", "\\u003e")


class _Page:
    """Assemble the HTML document from computed entries."""

    def __init__(self, entries: list[_Entry], options: ReportOptions) -> None:
        self.entries = entries
        self.options = options

    def html(self) -> str:
        from .. import __version__

        entries, options = self.entries, self.options
        if options.title:
            title = options.title
        elif len(entries) == 1:
            title = entries[0].label
        else:
            title = f"Comparison of {len(entries)} snapshots"
        generated = options.generated or _dt.datetime.now(_dt.UTC)
        parts = [
            "<!DOCTYPE html>",
            '<html lang="en">',
            "<head>",
            '<meta charset="utf-8">',
            f'<meta http-equiv="Content-Security-Policy" content="{CONTENT_SECURITY_POLICY}">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f'<meta name="generator" content="hairtrigger {html.escape(__version__)}">',
            f"<title>{html.escape(title)} · hairtrigger report</title>",
            f"<style>{_CSS}</style>",
            "</head>",
            "<body>",
            '<header class="report-header">',
            f"<h1>{html.escape(title)}</h1>",
            f'<p class="meta">hairtrigger {html.escape(__version__)} report, generated '
            f"{generated.strftime('%Y-%m-%d %H:%M UTC')} from {len(entries)} snapshot"
            f"{'s' if len(entries) != 1 else ''}.</p>",
            f'<p class="caution" role="note"><strong>Caution.</strong> {html.escape(CAUTION)}</p>',
            "</header>",
        ]
        if len(entries) > 1:
            parts.append(self._comparison())
        for e in entries:
            parts.append(self._snapshot_section(e, single=len(entries) == 1))
        parts.append(_HOW_TO_LOAD)
        parts += ["</body>", "</html>", ""]
        return "\n".join(parts)

    # sections
    def _comparison(self) -> str:
        entries = self.entries
        rows = []
        head = "".join(
            f'<th scope="col"><span class="swatch" style="background:{e.colour}">'
            f"</span>{html.escape(e.label)}</th>"
            for e in entries
        )
        rows.append(f"<tr><th scope='col'>quantity</th>{head}</tr>")

        def row(label: str, values: list[Any], unit: str = "") -> None:
            differs = len({json.dumps(v) for v in values}) > 1
            cls = ' class="differs"' if differs else ""
            unit_html = f' <span class="unit">{html.escape(unit)}</span>' if unit else ""
            cells = "".join(f"<td>{_fmt(v)}</td>" for v in values)
            rows.append(
                f"<tr{cls}><th scope='row'>{html.escape(label)}{unit_html}</th>{cells}</tr>"
            )

        row("model", [e.snapshot.model for e in entries])
        row("readout", [e.snapshot.readout for e in entries])
        for key in CYCLE_KEYS:
            row(
                CYCLE_DESCRIPTIONS[key],
                [e.snapshot.cycle.as_dict()[key] for e in entries],
                CYCLE_UNITS[key],
            )
        for key, label in RESULT_LABELS.items():
            row(label, [e.results[key] for e in entries])
        for key in THRESHOLD_KEYS:
            row(f"relative: {RESULT_LABELS[key]}", [e.results["relative"][key] for e in entries])
        row("time course: half-time", [e.course.half_time for e in entries], "s")
        row("time course: 10→90 % switching time", [e.course.switch_time for e in entries], "s")
        table = "\n".join(rows)
        curves = response_curves_figure(entries, "compare-curves")
        drawn = [e for e in entries if e.course.drawn]
        courses = (
            f"<figure>{time_courses_figure(drawn, 'compare-timecourses')}<figcaption>Readout "
            "after each snapshot's step (dot: half-time; dotted: steady state after the step)."
            "</figcaption></figure>\n"
            if drawn
            else ""
        )
        return (
            '<section class="comparison" id="comparison">\n<h2>Comparison</h2>\n'
            "<p>Rows whose values differ between snapshots are highlighted. Each time course "
            "starts from its own snapshot's steady state; the steps are listed in the snapshot "
            "sections below.</p>\n"
            f'<div class="table-wrap"><table class="compare-table">\n{table}\n</table></div>\n'
            f"<figure>{curves}<figcaption>Steady-state response of every snapshot (dot: "
            "operating point; dashed: r10, r50, r90; dotted: readout ceiling).</figcaption>"
            "</figure>\n"
            f"{courses}</section>"
        )

    def _snapshot_section(self, e: _Entry, single: bool) -> str:
        snap = e.snapshot
        n = e.index + 1
        notes = (snap.notes or "").strip()
        params = "\n".join(
            f"<tr><th scope='row'>{html.escape(CYCLE_DESCRIPTIONS[k])}</th>"
            f"<td><code>{k}</code></td><td>{_fmt(v)}</td>"
            f"<td class='unit'>{html.escape(CYCLE_UNITS[k])}</td></tr>"
            for k, v in snap.cycle.as_dict().items()
        )
        res = e.results
        results_rows = "\n".join(
            f"<tr><th scope='row'>{html.escape(label)}</th><td><code>{key}</code></td>"
            f"<td>{_fmt(res[key])}</td>"
            f"<td>{_fmt(res['relative'][key]) if key in THRESHOLD_KEYS else ''}</td></tr>"
            for key, label in RESULT_LABELS.items()
        )
        warnings = "".join(f"<li>{html.escape(w)}</li>" for w in res["warnings"])
        warnings_html = f'<ul class="warnings">{warnings}</ul>' if warnings else ""
        c = e.course
        steps = ", ".join(
            f"<code>{k}</code> → {_fmt(v)} {html.escape(CYCLE_UNITS[k])}"
            for k, v in c.steps.items()
        )
        course_facts = (
            f"<p>Step at t = 0: {steps}, starting from the steady state of this snapshot "
            f"(readout {_fmt(c.before)}; after the step it settles at {_fmt(c.after)}). "
            f"Half-time {_fmt(c.half_time)} s; 10→90 % switching time {_fmt(c.switch_time)} s."
            + (f" Note: {html.escape(c.message)}." if c.message else "")
            + "</p>"
        )
        figures = []
        if single:
            figures.append(
                f"<figure>{response_curves_figure([e], f's{n}-curve')}<figcaption>"
                "Steady-state response (dot: operating point; dashed: r10, r50, r90; "
                "dotted: readout ceiling).</figcaption></figure>"
            )
        if single and c.drawn:
            figures.append(
                f"<figure>{time_courses_figure([e], f's{n}-timecourse')}"
                "<figcaption>Readout after the step (dot: half-time; dotted: new "
                "steady state).</figcaption></figure>"
            )
        figures.append(
            f"<figure>{steepness_map_figure(e, e.measure, f's{n}-map')}"
            f"<figcaption>{html.escape(MEASURE_LABELS[e.measure])} over the two "
            "Michaelis constants (relative to total substrate), every other parameter as in this "
            f"snapshot, model {html.escape(snap.model)}, readout {html.escape(snap.readout)}. "
            "The red cross marks this snapshot.</figcaption></figure>"
        )
        json_text = dumps_snapshot(snap)
        filename = re.sub(r"[^A-Za-z0-9_.-]+", "-", e.label).strip("-") or f"snapshot-{n}"
        import base64

        data_uri = "data:application/json;base64," + base64.b64encode(
            json_text.encode("utf-8")
        ).decode("ascii")
        return "\n".join(
            [
                f'<section class="snapshot" id="snapshot-{n}">',
                f'<h2><span class="swatch" style="background:{e.colour}"></span>'
                f"{html.escape(e.label)}</h2>",
                f'<p class="notes">{html.escape(notes)}</p>' if notes else "",
                f"<p>Model: {html.escape(MODEL_LABELS.get(snap.model, snap.model))}. Readout: "
                f"{html.escape(READOUT_LABELS.get(snap.readout, snap.readout))}. "
                f"Created {html.escape(str(getattr(snap, 'created', '') or 'unknown'))}.</p>",
                '<div class="tables">',
                '<table class="params"><caption>Parameters</caption>',
                "<tr><th scope='col'>parameter</th><th scope='col'>key</th>"
                "<th scope='col'>value</th><th scope='col'>unit</th></tr>",
                params,
                "</table>",
                '<table class="results"><caption>Results (steady state)</caption>',
                "<tr><th scope='col'>quantity</th><th scope='col'>key</th>"
                "<th scope='col'>absolute</th><th scope='col'>relative to ceiling</th></tr>",
                results_rows,
                "</table>",
                "</div>",
                "<p class='explain'>Absolute thresholds take the readout as a fraction of total "
                "substrate; relative ones as a fraction of the readout ceiling (the most any "
                "kinase amount can reach). The input is the kinase amount, reported as "
                "r = V1/V2.</p>",
                warnings_html,
                "<h3>Time course</h3>",
                course_facts,
                *figures,
                f'<p class="download"><a href="{data_uri}" download="{html.escape(filename)}.json">'
                "Download this snapshot (JSON)</a> — open it in hairtrigger to continue from "
                "here.</p>",
                f'<script type="application/json" class="{SNAPSHOT_BLOCK_CLASS}" '
                f'id="snapshot-{n}-json" data-label="{html.escape(e.label, quote=True)}">'
                f"{_embedded_json(snap)}</script>",
                "</section>",
            ]
        )


class _SnapshotBlockParser(HTMLParser):
    """Collect the text of ``<script type="application/json" class="hairtrigger-snapshot">``."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.blocks: list[str] = []
        self._inside = False
        self._buffer: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if tag != "script":
            return
        a = dict(attrs)
        classes = (a.get("class") or "").split()
        if a.get("type") == "application/json" and SNAPSHOT_BLOCK_CLASS in classes:
            self._inside = True
            self._buffer = []

    def handle_data(self, data: str) -> None:
        if self._inside:
            self._buffer.append(data)

    def handle_endtag(self, tag: str) -> None:
        if tag == "script" and self._inside:
            self.blocks.append("".join(self._buffer))
            self._inside = False


_HOW_TO_LOAD = (
    '<footer class="report-footer"><p>Each snapshot above is embedded in this file as JSON '
    f'(<code>&lt;script type="application/json" class="{SNAPSHOT_BLOCK_CLASS}"&gt;</code>). '
    "Load them back in Python with <code>hairtrigger.io.report.extract_snapshots(text)</code>, "
    "or save one with its download link.</p></footer>"
)

_CSS = """
:root { color-scheme: light; }
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial,
  sans-serif; margin: 0 auto; max-width: 1100px; padding: 1.5rem; color: #1d1d1f;
  line-height: 1.45; }
h1 { margin: 0 0 .3rem; font-size: 1.6rem; }
h2 { border-bottom: 2px solid #e4e4e7; padding-bottom: .2rem; margin-top: 2.2rem; }
h3 { margin-bottom: .3rem; }
.meta { color: #555; margin: 0 0 .8rem; }
.caution { background: #fff6e0; border-left: 4px solid #e09f3e; padding: .6rem .8rem; }
.notes { font-style: italic; white-space: pre-wrap; }
table { border-collapse: collapse; font-size: .9rem; margin: .4rem 0 1rem; }
caption { text-align: left; font-weight: 600; padding-bottom: .2rem; }
th, td { border-bottom: 1px solid #e4e4e7; padding: .2rem .6rem; text-align: left;
  vertical-align: top; }
td { font-variant-numeric: tabular-nums; }
th[scope=row] { font-weight: normal; }
.tables { display: flex; flex-wrap: wrap; gap: 1.5rem; }
.table-wrap { overflow-x: auto; }
tr.differs { background: #eef5fb; }
.unit { color: #666; }
.na { color: #999; }
.warnings { color: #8a4b00; font-size: .9rem; }
.explain { color: #555; font-size: .85rem; }
figure { margin: 1rem 0; }
figcaption { color: #555; font-size: .85rem; max-width: 46rem; }
svg.hairtrigger-figure { max-width: 100%; height: auto; display: block; }
.swatch { display: inline-block; width: .8em; height: .8em; border-radius: 2px;
  margin-right: .4em; vertical-align: baseline; }
code { font-size: .85em; background: #f4f4f5; padding: 0 .2em; border-radius: 3px; }
.report-footer { margin-top: 3rem; color: #555; font-size: .85rem; }
@media print { h2 { break-before: auto; } figure { break-inside: avoid; } }
""".strip()
