"""Steepness-map panel: a steepness measure over log K1 × log K2 at the current enzyme levels.

The map is one pre-coloured PNG drawn by a bqplot ``Image`` mark (a few ms to redraw in the
browser where the stock ``HeatMap`` needs ≈ 260 ms at 256²), so undefined cells get their own
colour and NaN never reaches a mark. The same image takes the clicks: bqplot reports them in
data coordinates, and a click sets K1 and K2 (snapped to the cell clicked). A crosshair marks
the current point; an outline marks a steepness level the user chooses. The map depends only on
the enzyme levels, turnovers, substrate, model, readout and measure — not on K1, K2 or the
activity ratio — and is recomputed debounced (once after a drag pauses), never per drag tick.

bqplot's ``Image`` view redraws only when its ``image`` trait is assigned a different
``ipywidgets.Image`` (it does not listen to the image's ``value``), so the panel keeps two
image widgets and swaps them.
"""

from __future__ import annotations

import html
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from ...core import MAP_MEASURES, Cycle, peak_sensitivity, steepness_map
from .._support import BusyIndicator, Debouncer, MessageLine, reporting
from ..colors import (
    BLACK_INDEX,
    PALETTE,
    UNDEFINED_INDEX,
    UNDEFINED_RGB,
    WHITE_INDEX,
    colour_bar_png,
    encode_png,
    relative_luminance,
)
from ..state import (
    MAP_RESOLUTIONS,
    MEASURE_LABELS,
    PARAMETER_SPECS,
    TARGET_SPEC,
    ExplorerState,
    cycle_arrays,
)
from ._figure import axis, figure, log_ticks
from .controls import format_value, parse_entry

#: Quiet period before the map is recomputed after the last change (seconds).
MAP_DEBOUNCE_SECONDS: Final[float] = 0.25

#: Cycle keys the map depends on (it sweeps the Michaelis constants; the kinase amount is the
#: unknown of the closed-form inverse, and binding rates do not enter steady states).
MAP_INPUT_KEYS: Final[tuple[str, ...]] = (
    "substrate_total",
    "kinase_kcat",
    "phosphatase_total",
    "phosphatase_kcat",
)


@dataclass(frozen=True)
class MapImage:
    """A computed steepness map and its colouring.

    Attributes
    ----------
    k1, k2 : ndarray
        Cell centres along K1 (columns) and K2 (rows), dimensionless.
    values : ndarray, shape (len(k2), len(k1))
        The measure; NaN where undefined (never sent to a mark).
    defined : ndarray of bool
        Where the measure exists (finite and > 0, so it has a log colour).
    low, high : float
        Colour range (measure units), log-spaced; None when nothing is defined.
    rgba : ndarray of uint8, shape (len(k2), len(k1), 4)
        Colours, row 0 at the top (largest K2), outline included.
    outline : ndarray of bool
        Cells painted as the outline of the target level.
    png : bytes
        `rgba` encoded.
    """

    k1: np.ndarray
    k2: np.ndarray
    values: np.ndarray
    defined: np.ndarray
    low: float | None
    high: float | None
    rgba: np.ndarray
    outline: np.ndarray
    png: bytes


def cell_centres(low: float, high: float, cells: int) -> np.ndarray:
    """Log-spaced centres of `cells` equal cells spanning [low, high]."""
    lo, hi = math.log10(low), math.log10(high)
    step = (hi - lo) / cells
    return np.asarray(10.0 ** (lo + step * (np.arange(cells) + 0.5)), dtype=float)


#: Palette entries darker than this get a white outline, the others a black one.
_DARK = relative_luminance(PALETTE[:256, :3] / 255.0) < 0.45


def colour_map(
    values: np.ndarray, target: float | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float | None, float | None]:
    """Colour a map in log10 of the measure; undefined cells grey; outline of `target`.

    Colours come from a 256-step viridis lookup table (one gather per map). Returns
    ``(rgba, defined, outline, low, high)`` with rows as in `values` (row 0 = smallest K2;
    flip before encoding).
    """
    defined = np.isfinite(values) & (values > 0.0)
    outline = np.zeros(values.shape, dtype=bool)
    if not defined.any():
        index = np.full(values.shape, UNDEFINED_INDEX, dtype=np.intp)
        return PALETTE[index], defined, outline, None, None
    with np.errstate(divide="ignore", invalid="ignore"):
        logs = np.log10(values)
    lo = float(np.min(logs, where=defined, initial=np.inf))
    hi = float(np.max(logs, where=defined, initial=-np.inf))
    if hi - lo < 1e-9:
        lo, hi = lo - 0.05, hi + 0.05
    scaled = (logs - lo) * (255.0 / (hi - lo))
    index = np.where(defined, np.clip(np.rint(np.nan_to_num(scaled)), 0, 255), UNDEFINED_INDEX)
    index = index.astype(np.intp)
    if target is not None and target > 0:
        above = logs > math.log10(target)
        # A cell is on the outline where it and a neighbour (right or up) are both defined and
        # lie on opposite sides of the level.
        horizontal = (above[:, 1:] != above[:, :-1]) & defined[:, 1:] & defined[:, :-1]
        vertical = (above[1:, :] != above[:-1, :]) & defined[1:, :] & defined[:-1, :]
        outline[:, :-1] |= horizontal
        outline[:-1, :] |= vertical
        if outline.any():
            dark = _DARK[np.minimum(index, 255)]
            index = np.where(outline, np.where(dark, WHITE_INDEX, BLACK_INDEX), index)
    return PALETTE[index], defined, outline, 10.0**lo, 10.0**hi


def compute_map(
    cycle: Cycle,
    model: str,
    readout: str,
    measure: str,
    cells: int,
    k_low: float,
    k_high: float,
    target: float | None,
) -> MapImage:
    """Compute and colour a steepness map (calls `hairtrigger.core.steepness_map`)."""
    k1 = cell_centres(k_low, k_high, cells)
    k2 = cell_centres(k_low, k_high, cells)
    w_total = cycle.substrate_total
    values = steepness_map(
        cycle, (k1 * w_total)[None, :], (k2 * w_total)[:, None], model, readout, measure
    )
    rgba, defined, outline, low, high = colour_map(values, target)
    png = encode_png(rgba[::-1])
    return MapImage(k1, k2, values, defined, low, high, rgba, outline, png)


class SteepnessMapPanel(w.VBox):
    """Steepness over log K1 × log K2, linked to a shared state; a click sets K1 and K2.

    Parameters
    ----------
    state : ExplorerState
        The shared state.
    width, height : str
        CSS size of the map figure.
    debounce : float
        Seconds of quiet before a recompute (ignored without a running event loop, where the
        map is recomputed synchronously).

    Attributes
    ----------
    image_mark : bqplot.Image
        The coloured map (also the click target).
    crosshair : bqplot.Lines
        Two lines through the current (K1, K2).
    current : MapImage or None
        The map on screen.
    """

    state = Instance(ExplorerState)

    def __init__(
        self,
        state: ExplorerState,
        width: str = "400px",
        height: str = "380px",
        debounce: float = MAP_DEBOUNCE_SECONDS,
    ) -> None:
        spec1 = PARAMETER_SPECS["K1"]
        spec2 = PARAMETER_SPECS["K2"]
        self.k_low, self.k_high = spec1.low, spec1.high
        if (spec2.low, spec2.high) != (spec1.low, spec1.high):  # pragma: no cover - by design
            raise RuntimeError("K1 and K2 must share bounds for a square map")
        self.x_scale = bq.LogScale(min=self.k_low, max=self.k_high)
        self.y_scale = bq.LogScale(min=self.k_low, max=self.k_high)
        scales = {"x": self.x_scale, "y": self.y_scale}
        self._buffers = (w.Image(format="png"), w.Image(format="png"))
        self.image_mark = bq.Image(
            image=self._buffers[0],
            x=np.array([self.k_low, self.k_high]),
            y=np.array([self.k_low, self.k_high]),
            scales=scales,
        )
        self.crosshair = bq.Lines(
            x=np.ones((2, 2)),
            y=np.ones((2, 2)),
            scales=scales,
            colors=["white", "white"],
            stroke_width=1.2,
            line_style="dashed",
        )
        self.crosshair_halo = bq.Lines(
            x=np.ones((2, 2)),
            y=np.ones((2, 2)),
            scales=scales,
            colors=["black", "black"],
            stroke_width=3.0,
            opacities=[0.6, 0.6],
        )
        self.point = bq.Scatter(
            x=np.ones(1),
            y=np.ones(1),
            scales=scales,
            marker="circle",
            default_size=70,
            colors=["white"],
            stroke="black",
            stroke_width=2.0,
        )
        ticks = np.asarray(log_ticks(self.k_low, self.k_high), dtype=float)
        self.figure = figure(
            [self.image_mark, self.crosshair_halo, self.crosshair, self.point],
            [
                axis(
                    self.x_scale,
                    "K1 = M1/W (kinase Km / total substrate)",
                    "bottom",
                    tick_format="~g",
                    tick_values=ticks,
                ),
                axis(
                    self.y_scale,
                    "K2 = M2/W (phosphatase Km / W)",
                    "left",
                    tick_format="~g",
                    tick_values=ticks,
                ),
            ],
            width,
            height,
            min_aspect_ratio=1.0,
            max_aspect_ratio=1.0,
        )
        # Colour bar: a gradient image on a log scale spanning the map's colour range.
        self.bar_scale = bq.LogScale(min=1.0, max=10.0)
        self._bar_x = bq.LinearScale(min=0.0, max=1.0)
        self.bar_image = bq.Image(
            image=w.Image(value=colour_bar_png(), format="png"),
            x=np.array([0.0, 1.0]),
            y=np.array([1.0, 10.0]),
            scales={"x": self._bar_x, "y": self.bar_scale},
        )
        self.bar_axis = axis(
            self.bar_scale,
            MEASURE_LABELS[state.map_measure],
            "right",
            tick_format="~g",
            label_offset="48px",
        )
        self.colour_bar = figure(
            [self.bar_image],
            [self.bar_axis],
            "108px",
            height,
            margin={"top": 16, "bottom": 52, "left": 4, "right": 76},
        )
        self.measure = w.Dropdown(
            options=[(MEASURE_LABELS[m], m) for m in MAP_MEASURES],
            value=state.map_measure,
            description="measure",
            style={"description_width": "58px"},
            layout=w.Layout(width="290px"),
            tooltip="steepness measure drawn; the relative nH takes EC10/EC90 as fractions of "
            "the readout ceiling",
        )
        self.resolution = w.Dropdown(
            options=[(f"{n}²", n) for n in MAP_RESOLUTIONS],
            value=state.map_resolution,
            description="cells",
            style={"description_width": "36px"},
            layout=w.Layout(width="110px"),
        )
        self.target = w.Text(
            value=format_value(state.map_target),
            continuous_update=False,
            description="outline at",
            style={"description_width": "70px"},
            layout=w.Layout(width="150px"),
            tooltip="draw the outline where the measure crosses this value (press Enter)",
        )
        self.busy = BusyIndicator()
        self.caption = w.HTML()
        self.message = MessageLine()
        self.target_message = MessageLine()
        header = w.HBox(
            [w.HTML("<b>Steepness map</b>"), self.busy], layout=w.Layout(align_items="center")
        )
        options = w.HBox([self.measure, self.resolution], layout=w.Layout(grid_gap="6px"))
        super().__init__(
            children=[
                header,
                options,
                w.HBox([self.target, self.target_message]),
                w.HBox([self.figure, self.colour_bar]),
                self.caption,
                self.message,
            ],
            state=state,
        )
        self.add_class("hairtrigger-map")
        self.current: MapImage | None = None
        self._front = 0
        self._map_key: tuple[Any, ...] | None = None
        self.recomputes = 0
        self._debouncer = Debouncer(debounce, self._recompute_now, on_pending=self._on_pending)
        self.image_mark.on_element_click(self._on_click)
        self.measure.observe(self._on_measure, "value")
        self.resolution.observe(self._on_resolution, "value")
        self.target.observe(self._on_target, "value")
        state.observe(self._on_state, ["revision", "map_measure", "map_resolution", "map_target"])
        self._recompute_now()
        self._draw_point()

    # --- map inputs -----------------------------------------------------------------------
    def map_key(self) -> tuple[Any, ...]:
        """Everything the map's values depend on (a change triggers a recompute)."""
        state = self.state
        cycle = state.cycle
        values = cycle_arrays(cycle) if cycle is not None else {}
        return (
            tuple(values.get(k) for k in MAP_INPUT_KEYS),
            state.model,
            state.readout,
            state.map_measure,
            state.map_resolution,
        )

    @property
    def pending(self) -> bool:
        """True while a debounced recompute is waiting."""
        return self._debouncer.pending

    def flush(self) -> None:
        """Run a pending recompute now."""
        self._debouncer.flush()

    def _on_pending(self, pending: bool) -> None:
        if pending:
            self.busy.hold("map")
        else:
            self.busy.release("map")

    # --- events ---------------------------------------------------------------------------
    def _on_state(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            name = change["name"]
            if name == "map_measure" and self.measure.value != change["new"]:
                self.measure.value = change["new"]
            if name == "map_resolution" and self.resolution.value != change["new"]:
                self.resolution.value = change["new"]
            if name == "map_target":
                self.target.value = format_value(change["new"])
                self.target_message.clear()
                self._redraw_colours()
            if self.map_key() != self._map_key:
                self._debouncer.request()
            self._draw_point()

        run()

    def _on_measure(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(setattr)(self.state, "map_measure", change["new"])

    def _on_resolution(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(setattr)(self.state, "map_resolution", change["new"])

    def _on_target(self, change: Mapping[str, Any]) -> None:
        text = change["new"]
        if text == format_value(self.state.map_target):
            return
        try:
            value = parse_entry(text, "outline level", TARGET_SPEC.low, TARGET_SPEC.high)
            self.state.map_target = value
        except ValueError as exc:
            self.target_message.show_error(str(exc))
            return
        self.target_message.clear()

    def _on_click(self, mark: Any, event: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.click)(event.get("data", event))

    # --- actions --------------------------------------------------------------------------
    def snap(self, value: float) -> float:
        """Snap a clicked K to the centre of its map cell, rounded to 3 significant digits."""
        cells = self.state.map_resolution
        lo, hi = math.log10(self.k_low), math.log10(self.k_high)
        step = (hi - lo) / cells
        index = min(max(math.floor((math.log10(value) - lo) / step), 0), cells - 1)
        centre = 10.0 ** (lo + step * (index + 0.5))
        rounded = float(f"{centre:.3g}")
        return min(max(rounded, self.k_low), self.k_high)

    def click(self, data: Mapping[str, Any]) -> None:
        """Handle a click payload ``{"click_x": K1, "click_y": K2}``: set K1 and K2 at once."""
        x, y = float(data["click_x"]), float(data["click_y"])
        if not (math.isfinite(x) and math.isfinite(y) and x > 0 and y > 0):
            self.message.show_error(f"click outside the map (K1={x:g}, K2={y:g}) ignored")
            return
        with self.state.batch():
            self.state.K1 = self.snap(x)
            self.state.K2 = self.snap(y)
        self.message.clear()

    def _recompute_now(self) -> None:
        state = self.state
        cycle = state.cycle
        if cycle is None:
            return
        key = self.map_key()
        image = compute_map(
            cycle,
            state.model,
            state.readout,
            state.map_measure,
            state.map_resolution,
            self.k_low,
            self.k_high,
            state.map_target,
        )
        self.recomputes += 1
        self._map_key = key
        self._show(image)

    def _redraw_colours(self) -> None:
        """Re-colour the map on screen (new outline level) without recomputing it."""
        if self.current is None:
            return
        image = self.current
        rgba, defined, outline, low, high = colour_map(image.values, self.state.map_target)
        self._show(
            MapImage(
                image.k1,
                image.k2,
                image.values,
                defined,
                low,
                high,
                rgba,
                outline,
                encode_png(rgba[::-1]),
            )
        )

    def _show(self, image: MapImage) -> None:
        self.current = image
        back = 1 - self._front
        self._buffers[back].value = image.png
        self.image_mark.image = self._buffers[back]
        self._front = back
        label = MEASURE_LABELS[self.state.map_measure] + " (log colour scale)"
        if image.low is not None and image.high is not None:
            with self.bar_scale.hold_sync():
                self.bar_scale.min = image.low
                self.bar_scale.max = image.high
            with self.bar_image.hold_sync():
                self.bar_image.y = np.array([image.low, image.high])
            with self.bar_axis.hold_sync():
                self.bar_axis.tick_values = np.asarray(log_ticks(image.low, image.high), float)
                self.bar_axis.label = label
            self.bar_image.visible = True
        else:
            self.bar_image.visible = False
        self._draw_caption()

    def _draw_point(self) -> None:
        results = self.state.results
        k1, k2 = results["K1"], results["K2"]
        lo, hi = self.k_low, self.k_high
        xs = np.array([[k1, k1], [lo, hi]])
        ys = np.array([[lo, hi], [k2, k2]])
        for mark in (self.crosshair_halo, self.crosshair):
            with mark.hold_sync():
                mark.x = xs
                mark.y = ys
        with self.point.hold_sync():
            self.point.x = np.array([k1])
            self.point.y = np.array([k2])
        self._draw_caption()

    def point_value(self) -> float | None:
        """The map's measure at the current (K1, K2), from the core (None if undefined)."""
        state = self.state
        measure = state.map_measure
        results = state.results
        if measure == "hill_coefficient":
            value = results["hill_coefficient"]
        elif measure == "response_coefficient":
            value = results["response_coefficient"]
        elif measure == "relative_hill_coefficient":
            value = results["relative"]["hill_coefficient"]
        else:
            cycle = state.cycle
            value = float(peak_sensitivity(cycle_arrays(cycle), state.model, state.readout))
        return value if value is not None and math.isfinite(value) else None

    def _draw_caption(self) -> None:
        if self.current is None:
            return
        image = self.current
        value = self.point_value()
        symbol = MEASURE_LABELS[self.state.map_measure]
        here = f"{value:.4g}" if value is not None else "undefined"
        share = 1.0 - float(image.defined.mean())
        parts = [f"At the crosshair: {html.escape(symbol)} = {here}."]
        if image.low is not None:
            parts.append(f"Colours span {image.low:.3g} to {image.high:.3g} (log scale).")
        else:
            parts.append("The measure is undefined over the whole map.")
        if share > 0:
            parts.append(
                f'<span style="display:inline-block;width:12px;height:12px;vertical-align:middle;'
                f'background:rgb{UNDEFINED_RGB};border:1px solid #999"></span> undefined '
                f"({share:.0%} of cells: a 10 % or 90 % target lies above the readout ceiling)."
            )
        if image.outline.any():
            parts.append(f"Outline: level {self.state.map_target:g}.")
        parts.append("Click the map to set K1 and K2.")
        value_html = '<div style="font-size:85%;max-width:520px">' + " ".join(parts) + "</div>"
        if self.caption.value != value_html:
            self.caption.value = value_html
