"""Time-course panel: the response to a step in activity, from the current steady state.

The step goes from the current activity ratio to a target set with this panel's own control
(the kinase amount changes at t = 0). Species are drawn as fractions of total substrate, with
the readout on top and a marker at the half-time. The course itself is computed once per change
by the shared state (`ExplorerState.time_course`), so the readout table shows the same numbers.
"""

from __future__ import annotations

import html
from collections.abc import Mapping
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from .._support import MessageLine, reporting
from ..colors import OKABE_ITO
from ..state import READOUT_LABELS, STEP_SPEC, ExplorerState
from ._figure import axis, figure
from .controls import LogControl

#: Species drawn, in order: (key, label, colour, line style).
SPECIES: Final[tuple[tuple[str, str, str, str], ...]] = (
    ("unmodified", "free unmodified A", OKABE_ITO[1], "solid"),
    ("modified", "free modified B", OKABE_ITO[2], "solid"),
    ("kinase_complex", "kinase complex C1", OKABE_ITO[3], "dashed"),
    ("phosphatase_complex", "phosphatase complex C2", OKABE_ITO[4], "dashed"),
)
READOUT_COLOUR = OKABE_ITO[0]


class TimeCoursePanel(w.VBox):
    """Step response of the current cycle, with its own step-target control.

    Parameters
    ----------
    state : ExplorerState
        The shared state.
    width, height : str
        CSS size of the figure.

    Attributes
    ----------
    species_lines : bqplot.Lines
        One line per entry of `SPECIES` (fractions of W).
    readout_line : bqplot.Lines
        The readout (fraction of W).
    half_time_marker : bqplot.Lines
        Vertical line at the half-time (hidden when it does not exist).
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState, width: str = "470px", height: str = "300px") -> None:
        self.x_scale = bq.LinearScale(min=0.0, max=1.0)
        self.y_scale = bq.LinearScale(min=0.0, max=1.0)
        scales = {"x": self.x_scale, "y": self.y_scale}
        self.species_lines = bq.Lines(
            x=np.zeros((len(SPECIES), 2)),
            y=np.zeros((len(SPECIES), 2)),
            scales=scales,
            colors=[s[2] for s in SPECIES],
            stroke_width=1.5,
        )
        self.readout_line = bq.Lines(
            x=np.zeros(2), y=np.zeros(2), scales=scales, colors=[READOUT_COLOUR], stroke_width=2.5
        )
        self.half_time_marker = bq.Lines(
            x=np.zeros(2),
            y=np.array([0.0, 1.0]),
            scales=scales,
            colors=["#111111"],
            line_style="dotted",
            stroke_width=1.5,
            visible=False,
        )
        self.half_time_point = bq.Scatter(
            x=np.zeros(1),
            y=np.zeros(1),
            scales=scales,
            marker="triangle-down",
            default_size=60,
            colors=["#111111"],
            visible=False,
        )
        self.x_axis = axis(self.x_scale, "time after the step (s)", "bottom", tick_format="~g")
        self.y_axis = axis(self.y_scale, "fraction of total substrate W", "left", tick_format=".1f")
        self.figure = figure(
            [self.species_lines, self.readout_line, self.half_time_marker, self.half_time_point],
            [self.x_axis, self.y_axis],
            width,
            height,
        )
        self.step_control = LogControl(state, "step_activity_ratio", spec=STEP_SPEC)
        self.summary = w.HTML()
        self.legend = w.HTML(self._legend_html(state))
        self.message = MessageLine()
        super().__init__(
            children=[
                w.HTML("<b>Time course after a step in activity</b>"),
                self.step_control,
                self.figure,
                self.legend,
                self.summary,
                self.message,
            ],
            state=state,
        )
        self.add_class("hairtrigger-timecourse")
        state.observe(self._on_state, "revision")
        self.refresh()

    @staticmethod
    def _legend_html(state: ExplorerState) -> str:
        items = [(READOUT_COLOUR, "solid", f"readout ({READOUT_LABELS[state.readout]})")]
        items += [(c, s, label) for _, label, c, s in SPECIES]
        items.append(("#111111", "dotted", "half-time"))
        parts = [
            '<span style="white-space:nowrap;margin-right:10px"><span style="display:inline-block;'
            f'width:18px;border-top:3px {style} {colour};vertical-align:middle"></span> '
            f"{html.escape(text)}</span>"
            for colour, style, text in items
        ]
        return '<div style="font-size:85%;line-height:1.5">' + " ".join(parts) + "</div>"

    def _on_state(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.refresh)()

    def refresh(self) -> None:
        """Redraw from the state's time course (one message per mark, unchanged data: none)."""
        state = self.state
        course = state.time_course
        legend = self._legend_html(state)
        if self.legend.value != legend:
            self.legend.value = legend
        if course is None:
            self.message.show_note("time course unavailable")
            return
        w_total = state.substrate_total
        t = course.t
        ys = np.vstack([course.species[key] / w_total for key, *_ in SPECIES])
        finite = np.isfinite(ys).all(axis=0) & np.isfinite(course.readout)
        t_ok, ys, readout = t[finite], ys[:, finite], course.readout[finite]
        if len(t_ok) < 2:
            for mark in (
                self.species_lines,
                self.readout_line,
                self.half_time_marker,
                self.half_time_point,
            ):
                mark.visible = False
            self.message.show_error(f"no time course: {course.message}")
            self._draw_summary(course)
            return
        self.species_lines.visible = True
        self.readout_line.visible = True
        top = max(1.0, float(np.max(ys)), float(np.max(readout)))
        with self.x_scale.hold_sync():
            self.x_scale.min = 0.0
            self.x_scale.max = float(t_ok[-1])
        self.y_scale.max = top
        with self.species_lines.hold_sync():
            self.species_lines.x = np.tile(t_ok, (len(SPECIES), 1))
            self.species_lines.y = ys
        with self.readout_line.hold_sync():
            self.readout_line.x = t_ok
            self.readout_line.y = readout
        half = course.half_time
        shown = half is not None and 0.0 <= half <= float(t_ok[-1])
        with self.half_time_marker.hold_sync():
            if shown:
                self.half_time_marker.x = np.array([half, half])
                self.half_time_marker.y = np.array([0.0, top])
            self.half_time_marker.visible = shown
        with self.half_time_point.hold_sync():
            if shown:
                level = float(np.interp(half, t_ok, readout))
                self.half_time_point.x = np.array([half])
                self.half_time_point.y = np.array([level])
            self.half_time_point.visible = shown
        self._draw_summary(course)
        if course.success:
            self.message.clear()
        else:
            self.message.show_error(f"integration stopped early: {course.message}")

    def _draw_summary(self, course: Any) -> None:
        def fmt(value: float | None, unit: str = " s") -> str:
            return "—" if value is None else f"{value:.3g}{unit}"

        text = (
            f"Step r = {course.ratio_before:.4g} → {course.ratio_after:.4g}: half-time "
            f"{fmt(course.half_time)}, 10→90 % of the change in {fmt(course.switching_time)}, "
            f"relaxation time at the end {fmt(course.relaxation_time)}."
        )
        value = f'<div style="font-size:85%">{text}</div>'
        if self.summary.value != value:
            self.summary.value = value
