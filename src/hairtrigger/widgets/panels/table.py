"""Readout table: the numbers behind the plots, with the warnings that qualify them."""

from __future__ import annotations

import html
import math
from collections.abc import Mapping
from typing import Any

import ipywidgets as w
from traitlets import Instance

from .._support import MessageLine, reporting
from ..state import MODEL_LABELS, READOUT_LABELS, ExplorerState

MISSING = "—"


def format_number(value: Any, digits: int = 4) -> str:
    """Format a number for the table; None or non-finite values show as an em dash."""
    if value is None:
        return MISSING
    number = float(value)
    if not math.isfinite(number):
        return MISSING
    return f"{number:.{digits}g}"


def table_rows(state: ExplorerState) -> list[tuple[str, str, str, str]]:
    """Rows ``(quantity, value of W, value of ceiling, unit)`` shown by `ReadoutTable`."""
    r = state.results
    rel = r["relative"]
    course = state.time_course
    rows = [
        ("K1 = M1/W", format_number(r["K1"]), "", ""),
        ("K2 = M2/W", format_number(r["K2"]), "", ""),
        ("activity ratio r", format_number(r["activity_ratio"]), "", ""),
        ("kinase E1/W", format_number(state.kinase_ratio), "", ""),
        (
            "readout",
            format_number(r["readout_value"]),
            format_number(_ratio(r["readout_value"], r["readout_ceiling"])),
            "fraction",
        ),
        ("readout ceiling", format_number(r["readout_ceiling"]), "1", "fraction of W"),
        (
            "EC10 (r)",
            format_number(r["activity_ratio_10"]),
            format_number(rel["activity_ratio_10"]),
            "",
        ),
        (
            "EC50 (r)",
            format_number(r["activity_ratio_50"]),
            format_number(rel["activity_ratio_50"]),
            "",
        ),
        (
            "EC90 (r)",
            format_number(r["activity_ratio_90"]),
            format_number(rel["activity_ratio_90"]),
            "",
        ),
        (
            "Rv = r90/r10",
            format_number(r["response_coefficient"]),
            format_number(rel["response_coefficient"]),
            "",
        ),
        (
            "nH = ln 81 / ln Rv",
            format_number(r["hill_coefficient"]),
            format_number(rel["hill_coefficient"]),
            "",
        ),
    ]
    if course is not None:
        rows += [
            ("half-time after step", format_number(course.half_time), "", "s"),
            ("10→90 % switching time", format_number(course.switching_time), "", "s"),
            ("relaxation time (final state)", format_number(course.relaxation_time), "", "s"),
        ]
    dynamics = r.get("dynamics")
    if dynamics:
        down, up = dynamics["down"], dynamics["up"]
        rows += [
            ("half-time, kinase halved", format_number(down.get("half_time")), "", "s"),
            ("half-time, kinase restored", format_number(up.get("half_time")), "", "s"),
            ("relaxation time here", format_number(dynamics.get("relaxation_time")), "", "s"),
            (
                "relaxation time at EC50",
                format_number(dynamics.get("relaxation_time_at_threshold")),
                "",
                "s",
            ),
        ]
    return rows


def _ratio(a: Any, b: Any) -> float | None:
    if a is None or b is None or not b:
        return None
    return float(a) / float(b)


class ReadoutTable(w.VBox):
    """The current point's numbers (absolute and relative to the ceiling) and warnings.

    Parameters
    ----------
    state : ExplorerState
        The shared state.
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState, width: str = "420px") -> None:
        self.table = w.HTML(layout=w.Layout(width=width))
        self.message = MessageLine()
        super().__init__(children=[w.HTML("<b>Readout</b>"), self.table, self.message], state=state)
        self.add_class("hairtrigger-table")
        state.observe(self._on_state, "revision")
        self.refresh()

    def _on_state(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.refresh)()

    def refresh(self) -> None:
        """Rebuild the table (one message, only when its text changed)."""
        state = self.state
        cell = 'style="padding:1px 6px;text-align:right;font-variant-numeric:tabular-nums"'
        head = 'style="padding:1px 6px;text-align:right;font-weight:normal;color:#4d4d4d"'
        lines = [
            '<table style="border-collapse:collapse;font-size:85%;width:100%">',
            '<caption style="text-align:left;color:#4d4d4d">'
            f"{html.escape(MODEL_LABELS[state.model])}; "
            f"{html.escape(READOUT_LABELS[state.readout])}</caption>",
            f'<tr><th style="text-align:left"></th><th {head}>targets of W</th>'
            f"<th {head}>of ceiling</th><th {head}>unit</th></tr>",
        ]
        for name, absolute, relative, unit in table_rows(state):
            lines.append(
                f'<tr><td style="padding:1px 8px 1px 0">{html.escape(name)}</td>'
                f"<td {cell}>{html.escape(absolute)}</td><td {cell}>{html.escape(relative)}</td>"
                f'<td style="padding:1px 8px;color:#4d4d4d">{html.escape(unit)}</td></tr>'
            )
        lines.append("</table>")
        notes = list(state.results.get("warnings", []))
        course = state.time_course
        if course is not None and course.message and not course.success:
            notes.append(f"time course: {course.message}")
        if state.problem:
            notes.append(state.problem)
        if notes:
            lines.append('<ul style="margin:4px 0 0 16px;padding:0;color:#8c2d04;font-size:85%">')
            lines += [f"<li>{html.escape(n)}</li>" for n in notes]
            lines.append("</ul>")
        lines.append(
            '<div style="color:#4d4d4d;font-size:80%;margin-top:4px">Predictions of a model; '
            "they need experimental confirmation.</div>"
        )
        value = "".join(lines)
        if self.table.value != value:
            self.table.value = value
