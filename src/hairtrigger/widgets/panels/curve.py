"""Response-curve panel: readout and unmodified fraction against the activity ratio.

Draws, on a log activity-ratio axis, the steady readout and its unmodified counterpart for the
current model; with mass action also the quasi-steady curve (dashed), so the effect of
substrate held in enzyme complexes is visible; the operating point; EC10/EC50/EC90 markers with
the 10–90 % band; the readout ceiling; and the curves of pinned snapshots for comparison.
Every number comes from `hairtrigger.core`; the panel only samples and draws.
"""

from __future__ import annotations

import html
import math
from collections.abc import Mapping
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from ...core import Cycle, steady_state
from .._support import MessageLine, reporting
from ..colors import OKABE_ITO
from ..state import PARAMETER_SPECS, READOUT_LABELS, ExplorerState, cycle_arrays
from ._figure import axis, figure, log_ticks

#: Points per curve (the core computes 400 mass-action points in well under a millisecond).
CURVE_POINTS: Final[int] = 400

#: Width of the activity-ratio window, in decades, keyed by the label shown.
SPANS: Final[dict[str, float | None]] = {
    "whole r range": None,
    "4 decades": 4.0,
    "2 decades": 2.0,
    "1 decade": 1.0,
    "0.2 decade": 0.2,
}

READOUT_COLOUR = OKABE_ITO[0]
UNMODIFIED_COLOUR = OKABE_ITO[1]
QUASI_COLOUR = "#555555"
PINNED_COLOURS = OKABE_ITO[2:6] + ("#777777", "#AA4499")


def response_curves(
    cycle: Cycle, model: str, readout: str, ratios: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Steady readout and unmodified counterpart at activity ratios `ratios` (kinase varied).

    Returns
    -------
    readout, unmodified : ndarray
        Fractions of total substrate, one per ratio.
    """
    params: dict[str, Any] = cycle_arrays(cycle)
    params["kinase_total"] = ratios * cycle.phosphatase_vmax / cycle.kinase_kcat
    state = steady_state(params, model)
    return state.readout(readout), state.unmodified_readout(readout)


def _finite(*values: Any) -> bool:
    return all(v is not None and math.isfinite(v) for v in values)


class ResponseCurvePanel(w.VBox):
    """Steady-state response against the activity ratio, linked to a shared state.

    Parameters
    ----------
    state : ExplorerState
        The shared state.
    width, height : str
        CSS size of the figure.

    Attributes
    ----------
    readout_line, unmodified_line, quasi_line, ceiling_line, band, thresholds, operating_point,
    pinned_lines : bqplot marks
        Exposed for tests and for users who style them.
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState, width: str = "470px", height: str = "330px") -> None:
        spec = PARAMETER_SPECS["activity_ratio"]
        self.x_scale = bq.LogScale(min=spec.low, max=spec.high)
        self.y_scale = bq.LinearScale(min=0.0, max=1.0)
        scales = {"x": self.x_scale, "y": self.y_scale}
        # Placeholders must be positive: zero on a log scale is NaN in the browser.
        empty = np.ones(2)
        self.band = bq.Lines(
            x=empty,
            y=empty,
            scales=scales,
            fill="inside",
            # With fill="inside" bqplot applies `opacities` to the filled path as a whole, so
            # the outline is hidden by a matching colour and width, not by opacity 0.
            colors=["#9aa9b8"],
            fill_colors=["#9aa9b8"],
            fill_opacities=[0.3],
            stroke_width=0.5,
            visible=False,
        )
        self.ceiling_line = bq.Lines(
            x=empty,
            y=empty,
            scales=scales,
            colors=["#222222"],
            line_style="dashed",
            stroke_width=1.0,
        )
        self.quasi_line = bq.Lines(
            x=empty,
            y=empty,
            scales=scales,
            colors=[QUASI_COLOUR],
            line_style="dashed",
            stroke_width=1.5,
            visible=False,
        )
        self.pinned_lines = bq.Lines(
            x=np.ones((1, 2)),
            y=np.zeros((1, 2)),
            scales=scales,
            colors=list(PINNED_COLOURS),
            stroke_width=1.5,
            line_style="dash_dotted",
            visible=False,
        )
        self.unmodified_line = bq.Lines(
            x=empty,
            y=empty,
            scales=scales,
            colors=[UNMODIFIED_COLOUR],
            stroke_width=2.0,
        )
        self.readout_line = bq.Lines(
            x=empty,
            y=empty,
            scales=scales,
            colors=[READOUT_COLOUR],
            stroke_width=2.5,
        )
        self.thresholds = bq.Scatter(
            x=np.ones(1),
            y=np.zeros(1),
            scales=scales,
            marker="diamond",
            default_size=48,
            colors=["#111111"],
            stroke="white",
            visible=False,
        )
        self.operating_point = bq.Scatter(
            x=np.ones(1),
            y=np.zeros(1),
            scales=scales,
            marker="circle",
            default_size=90,
            colors=[READOUT_COLOUR],
            stroke="black",
            stroke_width=1.5,
        )
        self.x_axis = axis(
            self.x_scale,
            "activity ratio r = V1/V2 (kinase amount varied)",
            "bottom",
            tick_format="~g",
        )
        self.y_axis = axis(self.y_scale, "fraction of total substrate W", "left", tick_format=".1f")
        self.figure = figure(
            [
                self.band,
                self.ceiling_line,
                self.quasi_line,
                self.pinned_lines,
                self.unmodified_line,
                self.readout_line,
                self.thresholds,
                self.operating_point,
            ],
            [self.x_axis, self.y_axis],
            width,
            height,
        )
        self.span = w.Dropdown(
            options=list(SPANS),
            value="4 decades",
            tooltip="activity-ratio window, centred on EC50 (the operating point moves within it)",
            layout=w.Layout(width="128px"),
        )
        self.basis = w.ToggleButtons(
            options=[("of W", "absolute"), ("of ceiling", "relative")],
            value=state.threshold_basis,
            tooltip="EC markers and band as fractions of total substrate or of the ceiling",
            style={"button_width": "84px"},
        )
        self.legend = w.HTML()
        self.message = MessageLine()
        header = w.HBox(
            [
                w.HTML("<b>Steady-state response</b>", layout=w.Layout(width="140px")),
                self.span,
                self.basis,
            ],
            layout=w.Layout(align_items="center", flex_flow="row nowrap"),
        )
        super().__init__(children=[header, self.figure, self.legend, self.message], state=state)
        self.add_class("hairtrigger-curve")
        self._cache_key: tuple[Any, ...] | None = None
        self._pinned_key: tuple[Any, ...] | None = None
        self.span.observe(self._on_view, "value")
        self.basis.observe(self._on_basis, "value")
        state.observe(self._on_state, ["revision", "pinned", "threshold_basis"])
        self.refresh()

    # --- events ---------------------------------------------------------------------------
    def _on_state(self, change: Mapping[str, Any]) -> None:
        if change["name"] == "threshold_basis" and self.basis.value != change["new"]:
            self.basis.value = change["new"]
        reporting(lambda: self.message)(self.refresh)()

    def _on_view(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.refresh)()

    def _on_basis(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            self.state.threshold_basis = change["new"]

        run()

    # --- drawing --------------------------------------------------------------------------
    def threshold_points(self) -> tuple[np.ndarray, np.ndarray]:
        """EC10/EC50/EC90 marker positions (activity ratio, readout) that exist."""
        results = self.state.results
        relative = self.state.threshold_basis == "relative"
        block = results["relative"] if relative else results
        top = results["readout_ceiling"] if relative else 1.0
        xs, ys = [], []
        for frac, key in (
            (0.1, "activity_ratio_10"),
            (0.5, "activity_ratio_50"),
            (0.9, "activity_ratio_90"),
        ):
            value = block[key]
            if _finite(value, top):
                xs.append(value)
                ys.append(frac * top)
        return np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)

    def window(self) -> tuple[float, float]:
        """Activity-ratio domain shown: the whole range, or a window centred on EC50."""
        spec = PARAMETER_SPECS["activity_ratio"]
        decades = SPANS[self.span.value]
        if decades is None:
            return spec.low, spec.high
        results = self.state.results
        block = results["relative"] if self.state.threshold_basis == "relative" else results
        centre = block["activity_ratio_50"]
        if not _finite(centre):
            centre = results["activity_ratio"]
        log_low = math.log10(spec.low)
        log_high = math.log10(spec.high)
        half = decades / 2.0
        # Quantise the centre (1/20 of the window) so dragging K1 or K2 does not make the axis
        # creep on every tick; it re-centres in small jumps instead.
        grain = decades / 20.0
        mid = round(math.log10(centre) / grain) * grain
        mid = min(max(mid, log_low + half), log_high - half)
        return 10.0 ** (mid - half), 10.0 ** (mid + half)

    def refresh(self) -> None:
        """Redraw every mark from the state (unchanged arrays send nothing)."""
        state = self.state
        cycle = state.cycle
        if cycle is None:
            return
        results = state.results
        low, high = self.window()
        ratios = np.logspace(math.log10(low), math.log10(high), CURVE_POINTS)
        shape_key = tuple(v for k, v in cycle_arrays(cycle).items() if k != "kinase_total")
        key = (shape_key, state.model, state.readout, low, high)
        if key != self._cache_key:
            self._cache_key = key
            readout, unmodified = response_curves(cycle, state.model, state.readout, ratios)
            with self.x_scale.hold_sync():
                self.x_scale.min = low
                self.x_scale.max = high
            self.x_axis.tick_values = np.asarray(log_ticks(low, high), dtype=float)
            with self.readout_line.hold_sync():
                self.readout_line.x = ratios
                self.readout_line.y = readout
            with self.unmodified_line.hold_sync():
                self.unmodified_line.x = ratios
                self.unmodified_line.y = unmodified
            mass_action = state.model == "mass_action"
            with self.quasi_line.hold_sync():
                if mass_action:
                    quasi, _ = response_curves(cycle, "quasi_steady", state.readout, ratios)
                    self.quasi_line.x = ratios
                    self.quasi_line.y = quasi
                self.quasi_line.visible = mass_action
            ceiling = results["readout_ceiling"]
            with self.ceiling_line.hold_sync():
                self.ceiling_line.x = np.array([low, high])
                self.ceiling_line.y = np.array([ceiling, ceiling])
        self._draw_pinned(ratios, (low, high))
        self._draw_thresholds()
        with self.operating_point.hold_sync():
            self.operating_point.x = np.array([results["activity_ratio"]])
            self.operating_point.y = np.array([results["readout_value"]])
        self._draw_legend()
        if not state.problem:
            self.message.clear()
        else:
            self.message.show_error(state.problem)

    def _draw_thresholds(self) -> None:
        xs, ys = self.threshold_points()
        with self.thresholds.hold_sync():
            if len(xs):
                self.thresholds.x = xs
                self.thresholds.y = ys
            self.thresholds.visible = bool(len(xs))
        results = self.state.results
        relative = self.state.threshold_basis == "relative"
        block = results["relative"] if relative else results
        r10, r90 = block["activity_ratio_10"], block["activity_ratio_90"]
        with self.band.hold_sync():
            if _finite(r10, r90):
                self.band.x = np.array([r10, r10, r90, r90])
                self.band.y = np.array([0.0, 1.0, 1.0, 0.0])
            self.band.visible = _finite(r10, r90)

    def _draw_pinned(self, ratios: np.ndarray, window: tuple[float, float]) -> None:
        pinned = tuple(self.state.pinned)
        key = (tuple(id(p) for p in pinned), window)
        if key == self._pinned_key:
            return
        self._pinned_key = key
        with self.pinned_lines.hold_sync():
            if pinned:
                curves = [response_curves(p.cycle, p.model, p.readout, ratios)[0] for p in pinned]
                self.pinned_lines.x = np.tile(ratios, (len(pinned), 1))
                self.pinned_lines.y = np.vstack(curves)
            self.pinned_lines.visible = bool(pinned)

    def _draw_legend(self) -> None:
        state = self.state
        items = [
            (READOUT_COLOUR, "solid", f"readout: {READOUT_LABELS[state.readout]}"),
            (UNMODIFIED_COLOUR, "solid", "unmodified counterpart"),
        ]
        if state.model == "mass_action":
            items.append((QUASI_COLOUR, "dashed", "quasi-steady (no sequestration)"))
        items.append(("#222222", "dashed", f"ceiling {state.results['readout_ceiling']:.3g}"))
        items.append(("#9aa9b8", "solid", "10–90 % band; ◆ EC10/50/90; ● operating point"))
        for i, snap in enumerate(state.pinned):
            colour = PINNED_COLOURS[i % len(PINNED_COLOURS)]
            title = snap.title or f"pinned {i + 1}"
            items.append((colour, "dotted", f"pinned: {title}"))
        parts = [
            f'<span style="white-space:nowrap;margin-right:10px"><span style="display:inline-block;'
            f'width:18px;border-top:3px {style} {colour};vertical-align:middle"></span> '
            f"{html.escape(text)}</span>"
            for colour, style, text in items
        ]
        value = '<div style="font-size:85%;line-height:1.5">' + " ".join(parts) + "</div>"
        if self.legend.value != value:
            self.legend.value = value
