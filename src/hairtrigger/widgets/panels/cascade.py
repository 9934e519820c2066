"""Cascade panel: build a cascade level by level and see how steepness compounds.

A cascade (`hairtrigger.core.cascade.Cascade`) is edited one level at a time: pick a level,
edit its name, sites (1 or 2), substrate and phosphatase totals and the mass-action constants
of the enzyme that modifies it and of its phosphatase; add or remove levels. Entries are
validated when submitted (Enter or leaving the box): a bad entry shows a message beside it and
changes nothing. The panel starts from the bundled invented example ``tidepool_relay``, loads
and saves cascade files (a path in the kernel, or upload and a ``data:`` download link, which
work under Voila), and scans the input enzyme over a log range.

The scan is `hairtrigger.core.cascade.cascade_response` (50–150 ms for three levels), run
debounced after an edit and on the Recompute button, never per keystroke. It draws each
level's output (free or total fully modified form, chosen here) normalised to its computed
plateau on one shared log input axis, with the EC10/EC50/EC90 markers, and tabulates the EC
values, Hill coefficients and plateaus of every level and of the cascade's output. A scan whose
steady states fail their checks is reported in the panel and leaves the plots and the table
as they were.

The cascade lives in this panel (`CascadePanel.cascade`); the explorer's cycle is not used.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any, Final

import bqplot as bq
import ipywidgets as w
import numpy as np
from traitlets import Instance

from ...core.cascade import (
    OUTPUT_DEFINITIONS,
    Cascade,
    CascadeLevel,
    CascadeResponse,
    EnzymeConstants,
    cascade_response,
)
from ...io.cascade_file import (
    FILE_SITES,
    CascadeFileError,
    cascade_example_path,
    dumps_cascade,
    list_cascade_examples,
    load_cascade,
    loads_cascade,
    save_cascade,
)
from .._support import BusyIndicator, Debouncer, MessageLine, json_download_link, reporting
from .._support import file_stem as _file_stem
from ..colors import OKABE_ITO
from ..state import ExplorerState
from ._figure import axis, figure, log_ticks
from .table import format_number

#: The example the panel starts from (an invented scenario).
DEFAULT_EXAMPLE: Final[str] = "tidepool_relay"

#: Default scan of the input enzyme total, µM (covers the example's EC10–EC90 of every level).
DEFAULT_SCAN: Final[tuple[float, float]] = (1e-6, 1e-1)

#: Scan points offered; a three-level scan of 100 points takes 0.1–0.15 s.
POINT_CHOICES: Final[tuple[int, ...]] = (50, 100, 200, 400)
DEFAULT_POINTS: Final[int] = 100

#: Levels the panel edits and draws (one colour each).
MAX_LEVELS: Final[int] = 8

#: Level colours: Okabe–Ito, the low-contrast yellow last.
LEVEL_COLOURS: Final[tuple[str, ...]] = (
    OKABE_ITO[0],
    OKABE_ITO[1],
    OKABE_ITO[2],
    OKABE_ITO[3],
    OKABE_ITO[4],
    OKABE_ITO[5],
    OKABE_ITO[7],
    OKABE_ITO[6],
)

#: Quiet period after an edit before the scan runs.
COMPUTE_DEBOUNCE_SECONDS: Final[float] = 0.35

#: Wide scan used by "Fit range" to find where the levels switch, µM, and its points.
FIT_SCAN: Final[tuple[float, float, int]] = (1e-9, 1e3, 61)

#: Output definitions as shown to users.
DEFINITION_LABELS: Final[dict[str, str]] = {
    "free": "free fully modified form",
    "total": "fully modified form incl. its complexes",
}

_MISSING = "—"

#: Columns of the first table (besides the level): the chosen output's steepness.
STEEPNESS_KEYS: Final[tuple[str, ...]] = ("ec10", "ec50", "ec90", "hill_coefficient", "plateau")


# --- parsing ------------------------------------------------------------------------------------


class EntryError(ValueError):
    """What a user typed cannot be taken (the message says why and what is allowed)."""


def parse_amount(text: str, label: str, unit: str, allow_zero: bool = False) -> float:
    """Parse a typed number that must be finite and > 0 (or ≥ 0), or raise `EntryError`."""
    cleaned = text.strip().replace("\u2212", "-").replace(",", ".")
    bound = "≥ 0" if allow_zero else "> 0"
    allowed = f"a number {bound}{(' ' + unit) if unit else ''}"
    try:
        number = float(cleaned)
    except ValueError:
        msg = f"{label}: {text.strip()!r} is not a number; enter {allowed}"
        raise EntryError(msg) from None
    if not math.isfinite(number) or number < 0.0 or (number == 0.0 and not allow_zero):
        msg = f"{label}: {cleaned} is not allowed; enter {allowed}"
        raise EntryError(msg)
    return number


def format_entry(value: float) -> str:
    """Short text for an entry box that reads back as exactly `value`."""
    short = f"{value:g}"
    return short if float(short) == value else repr(float(value))


def compact_number(value: float, digits: int = 3) -> str:
    """A table number in few characters: 3 significant digits, exponents without padding.

    ``0.000683`` → ``6.83e-4``; ``5.68`` → ``5.68``; NaN → an em dash.
    """
    text = format_number(value, digits)
    if text == _MISSING:
        return text
    number = float(value)
    if number != 0.0 and abs(number) < 1e-2:
        text = f"{number:.{digits - 1}e}"
    mantissa, sep, exponent = text.partition("e")
    return mantissa + (f"e{int(exponent)}" if sep else "")


def file_stem(title: str) -> str:
    """A safe file name stem from a cascade title."""
    return _file_stem(title, "hairtrigger-cascade")


def download_link(cascade: Cascade, label: str = "Download cascade (.json)") -> str:
    """HTML for a browser download of `cascade` as a ``data:`` link (works under Voila)."""
    return json_download_link(
        dumps_cascade(cascade),
        file_stem(cascade.title) + ".json",
        label,
        "save the cascade as a file",
    )


# --- small composable parts ---------------------------------------------------------------------


@dataclass(frozen=True)
class FieldSpec:
    """A numeric property of a level: where it lives, how it is labelled and bounded."""

    key: str  # "substrate_total", "phosphatase_total" or "<role>.<constant>"
    label: str
    unit: str
    allow_zero: bool = False

    def read(self, level: CascadeLevel) -> float:
        """The value of this field in `level`."""
        if "." in self.key:
            role, constant = self.key.split(".")
            return float(getattr(getattr(level, role), constant))
        return float(getattr(level, self.key))

    def write(self, level: CascadeLevel, value: float) -> CascadeLevel:
        """A copy of `level` with this field set (validated by the core's constructors)."""
        if "." in self.key:
            role, constant = self.key.split(".")
            enzyme = getattr(level, role)
            values = enzyme.as_dict()
            values[constant] = value
            return replace(level, **{role: EnzymeConstants(**values)})
        return replace(level, **{self.key: value})


def _enzyme_specs(role: str) -> tuple[FieldSpec, ...]:
    return (
        FieldSpec(f"{role}.kon", f"{role} kon", "1/(µM·s)"),
        FieldSpec(f"{role}.koff", f"{role} koff", "1/s", allow_zero=True),
        FieldSpec(f"{role}.kcat", f"{role} kcat", "1/s"),
    )


#: Every numeric field of a level, in the order of the form.
FIELD_SPECS: Final[tuple[FieldSpec, ...]] = (
    FieldSpec("substrate_total", "substrate total", "µM"),
    FieldSpec("phosphatase_total", "phosphatase total", "µM"),
    *_enzyme_specs("kinase"),
    *_enzyme_specs("phosphatase"),
)


class Entry:
    """A compact text entry (a number or a name) and the message line that goes with it.

    Submitting (Enter or leaving the box) calls `on_submit(text)`; the owner validates and
    either clears the message or shows why the value was refused.
    """

    def __init__(self, tooltip: str, width: str = "82px") -> None:
        self.entry = w.Text(continuous_update=False, tooltip=tooltip, layout=w.Layout(width=width))
        self.entry.add_class("hairtrigger-entry")
        self.message = MessageLine(layout=w.Layout(margin="0 0 0 4px"))
        self._callback: Callable[[str], Any] | None = None
        self._quiet = False
        self.entry.observe(self._on_value, "value")

    def on_submit(self, callback: Callable[[str], Any]) -> None:
        """Call `callback(text)` when the user submits a new text."""
        self._callback = callback

    def show(self, value: float | str) -> None:
        """Display `value` without triggering a submission; clears any message."""
        self._quiet = True
        try:
            self.entry.value = value if isinstance(value, str) else format_entry(value)
        finally:
            self._quiet = False
        self.message.clear()

    def submit(self, text: str) -> None:
        """Type `text` and submit it (as a user does)."""
        if self.entry.value == text:
            self._on_value({"new": text})
        else:
            self.entry.value = text

    def _on_value(self, change: Mapping[str, Any]) -> None:
        if not self._quiet and self._callback is not None:
            self._callback(change["new"])


# --- the panel ----------------------------------------------------------------------------------


def _example() -> Cascade:
    return load_cascade(cascade_example_path(DEFAULT_EXAMPLE))


class CascadePanel(w.VBox):
    """Build a cascade level by level; per-level responses on one input axis; steepness table.

    Parameters
    ----------
    state : ExplorerState
        The explorer's shared state (only its `progress` hook is used: the cascade is this
        panel's own).
    cascade : Cascade, optional
        The cascade to start from (default: the bundled invented example ``tidepool_relay``).
    scan : (float, float)
        Initial scan range of the input enzyme total, µM.
    debounce : float
        Quiet period in seconds between the last edit and the scan.
    width, height : str
        CSS size of the figure (the explorer's tab area is about 420 px wide).

    Attributes
    ----------
    response : CascadeResponse or None
        The last scan that succeeded (what the plot and the table show).
    shown_cascade : Cascade or None
        The cascade that `response` belongs to.
    curves : bqplot.Lines
        One line per level: output over plateau against the input enzyme total.
    ec_markers : list of bqplot.Scatter
        EC10/EC50/EC90 of each level (one mark per level slot, hidden when unused).
    fields : dict
        `Entry` per numeric field of the selected level (keys of `FIELD_SPECS`).
    """

    state = Instance(ExplorerState)

    def __init__(
        self,
        state: ExplorerState,
        cascade: Cascade | None = None,
        scan: tuple[float, float] = DEFAULT_SCAN,
        debounce: float = COMPUTE_DEBOUNCE_SECONDS,
        width: str = "385px",
        height: str = "260px",
    ) -> None:
        start = cascade if cascade is not None else _example()
        self._check_panel_limits(start)
        self._updating = False  # True while the form is refreshed from the design
        self._cascade = start
        self._selected = 0
        self.response: CascadeResponse | None = None
        self.shown_cascade: Cascade | None = None
        self.last_saved: Path | None = None
        self.computes = 0
        self._computed_key: tuple[Any, ...] | None = None
        self._scan = (float(scan[0]), float(scan[1]))
        box = {"description_width": "60px"}

        # File and example controls.
        self.title = w.Text(
            value=start.title,
            description="title",
            style=box,
            placeholder="name this cascade",
            layout=w.Layout(width="385px"),
        )
        self.path = w.Text(
            description="file",
            style=box,
            placeholder="path/to/cascade.json",
            tooltip="a path on the machine running the kernel",
            layout=w.Layout(width="385px"),
        )
        self.overwrite = w.Checkbox(
            value=False, description="overwrite", indent=False, layout=w.Layout(width="90px")
        )
        self.load_button = w.Button(
            description="Load",
            icon="folder-open",
            tooltip="load the cascade file at the path",
            layout=w.Layout(width="76px"),
        )
        self.save_button = w.Button(
            description="Save",
            icon="save",
            tooltip="save the cascade to the path (in the kernel)",
            layout=w.Layout(width="76px"),
        )
        self.upload = w.FileUpload(
            accept=".json,application/json",
            multiple=False,
            description="Upload",
            tooltip="load a cascade file from this computer",
            layout=w.Layout(width="96px"),
        )
        self.example = w.Dropdown(
            options=list_cascade_examples(),
            value=DEFAULT_EXAMPLE,
            description="example",
            style=box,
            layout=w.Layout(width="240px"),
        )
        self.example_button = w.Button(
            description="Start from example",
            icon="undo",
            tooltip="replace the cascade by the bundled example (an invented scenario)",
            layout=w.Layout(width="150px"),
        )
        self.download = w.HTML()
        self.file_message = MessageLine()

        # Level editor.
        self.level = w.Dropdown(
            description="level",
            style=box,
            layout=w.Layout(width="230px"),
            tooltip="the level being edited (1 = driven by the input enzyme)",
        )
        self.add_button = w.Button(
            description="Add",
            icon="plus",
            layout=w.Layout(width="70px"),
            tooltip="add a level below the last one (a copy of it)",
        )
        self.remove_button = w.Button(
            description="Remove",
            icon="minus",
            layout=w.Layout(width="90px"),
            tooltip="remove the selected level",
        )
        self.name = Entry("level name (unique)", width="150px")
        self.sites = w.ToggleButtons(
            options=[("1 site", 1), ("2 sites", 2)],
            value=1,
            tooltip="sites modified distributively, in sequence",
            style={"button_width": "62px"},
        )
        self.fields: dict[str, Entry] = {
            spec.key: Entry(f"{spec.label} ({spec.unit}); press Enter") for spec in FIELD_SPECS
        }
        self.km_note = w.HTML()
        self.level_message = MessageLine()

        # Input and scan.
        self.input_total = Entry("input enzyme total at the operating point (µM, ≥ 0)")
        self.scan_low = Entry("lowest input enzyme total scanned (µM)", width="70px")
        self.scan_high = Entry("highest input enzyme total scanned (µM)", width="70px")
        self.points = w.Dropdown(
            options=list(POINT_CHOICES),
            value=DEFAULT_POINTS,
            description="points",
            style={"description_width": "42px"},
            layout=w.Layout(width="110px"),
        )
        self.fit_button = w.Button(
            description="Fit range",
            icon="arrows-h",
            tooltip="set the scan to cover every level's EC10–EC90",
            layout=w.Layout(width="92px"),
        )
        self.compute_button = w.Button(
            description="Recompute",
            icon="refresh",
            tooltip="scan the cascade now",
            layout=w.Layout(width="104px"),
        )
        self.definition = w.ToggleButtons(
            options=[("free output", "free"), ("total output", "total")],
            value="free",
            tooltip="free: fully modified form, free; total: including its complexes (with its "
            "phosphatase and with the next level's substrate)",
            style={"button_width": "96px"},
        )

        # Figure and table.
        self.x_scale = bq.LogScale(min=self._scan[0], max=self._scan[1])
        self.y_scale = bq.LinearScale(min=0.0, max=1.05)
        scales = {"x": self.x_scale, "y": self.y_scale}
        self.curves = bq.Lines(
            x=np.array([1.0, 2.0]),
            y=np.zeros((1, 2)),
            scales=scales,
            colors=list(LEVEL_COLOURS),
            stroke_width=2.0,
            visible=False,
        )
        self.ec_markers = [
            bq.Scatter(
                x=np.ones(1),
                y=np.zeros(1),
                scales=scales,
                marker="diamond",
                default_size=40,
                colors=[colour],
                stroke="white",
                visible=False,
            )
            for colour in LEVEL_COLOURS
        ]
        self.operating_line = bq.Lines(
            x=np.ones(2),
            y=np.array([0.0, 1.05]),
            scales=scales,
            colors=["#555555"],
            line_style="dashed",
            stroke_width=1.0,
            visible=False,
        )
        self.x_axis = axis(self.x_scale, "input enzyme total (µM)", "bottom", tick_format=".0e")
        self.y_axis = axis(self.y_scale, "free output / plateau", "left", tick_format=".1f")
        self.figure = figure(
            [self.operating_line, self.curves, *self.ec_markers],
            [self.x_axis, self.y_axis],
            width,
            height,
        )
        self.legend = w.HTML()
        self.table = w.HTML(layout=w.Layout(width="390px"))
        self.busy = BusyIndicator()
        self.message = MessageLine()

        enzyme_rows = []
        for constant, unit in (("kon", "1/(µM·s)"), ("koff", "1/s"), ("kcat", "1/s")):
            k, p = self.fields[f"kinase.{constant}"], self.fields[f"phosphatase.{constant}"]
            enzyme_rows += [
                w.HBox(
                    [
                        w.HTML(
                            f"{constant} <span style='color:#4d4d4d'>({unit})</span>",
                            layout=w.Layout(width="130px"),
                        ),
                        k.entry,
                        p.entry,
                    ]
                ),
                k.message,
                p.message,
            ]
        s_tot, p_tot = self.fields["substrate_total"], self.fields["phosphatase_total"]
        label = {"layout": w.Layout(width="130px")}
        editor = w.VBox(
            [
                w.HBox([self.level, self.add_button, self.remove_button]),
                w.HBox([w.HTML("name", **label), self.name.entry]),
                self.name.message,
                w.HBox([w.HTML("sites", **label), self.sites]),
                w.HBox([w.HTML("substrate total (µM)", **label), s_tot.entry]),
                s_tot.message,
                w.HBox([w.HTML("phosphatase total (µM)", **label), p_tot.entry]),
                p_tot.message,
                w.HBox(
                    [
                        w.HTML("", **label),
                        w.HTML("<i>kinase</i>", layout=w.Layout(width="86px")),
                        w.HTML("<i>phosphatase</i>", layout=w.Layout(width="86px")),
                    ]
                ),
                *enzyme_rows,
                self.km_note,
                self.level_message,
            ],
            layout=w.Layout(border="1px solid #dddddd", padding="4px", margin="4px 0"),
        )
        scan_row = w.VBox(
            [
                w.HBox(
                    [
                        w.HTML(
                            "input enzyme at the operating point (µM)",
                            layout=w.Layout(width="250px"),
                        ),
                        self.input_total.entry,
                    ]
                ),
                self.input_total.message,
                w.HBox(
                    [
                        w.HTML("scan (µM)", layout=w.Layout(width="62px")),
                        self.scan_low.entry,
                        w.HTML("to", layout=w.Layout(width="20px")),
                        self.scan_high.entry,
                        self.points,
                    ]
                ),
                self.scan_low.message,
                self.scan_high.message,
                w.HBox(
                    [self.fit_button, self.compute_button, self.busy],
                    layout=w.Layout(align_items="center"),
                ),
            ]
        )
        super().__init__(
            children=[
                w.HTML(
                    "<b>Cascade</b> <span style='color:#4d4d4d;font-size:85%'>level i + 1 "
                    "is modified by the fully modified form of level i; all complexes "
                    "kept</span>"
                ),
                self.title,
                self.path,
                w.HBox([self.load_button, self.save_button, self.overwrite, self.upload]),
                w.HBox([self.example, self.example_button]),
                self.download,
                self.file_message,
                editor,
                scan_row,
                self.definition,
                self.figure,
                self.legend,
                self.message,
                self.table,
            ],
            state=state,
        )
        self.add_class("hairtrigger-cascade")
        self._debouncer = Debouncer(debounce, self._compute_pending, on_pending=self._on_pending)

        for spec in FIELD_SPECS:
            self.fields[spec.key].on_submit(self._field_handler(spec))
        self.name.on_submit(self._guarded(self._on_name))
        self.input_total.on_submit(self._guarded(self._on_input_total))
        self.scan_low.on_submit(self._guarded(lambda text: self._on_scan(text, 0)))
        self.scan_high.on_submit(self._guarded(lambda text: self._on_scan(text, 1)))
        self.sites.observe(self._on_sites, "value")
        self.level.observe(self._on_level, "value")
        self.points.observe(self._on_points, "value")
        self.definition.observe(self._on_definition, "value")
        self.title.observe(self._on_title, "value")
        self.add_button.on_click(lambda _b: self._run(self.add_level))
        self.remove_button.on_click(lambda _b: self._run(self.remove_level))
        self.load_button.on_click(lambda _b: self._run(self.load, sink=self.file_message))
        self.save_button.on_click(lambda _b: self._run(self.save, sink=self.file_message))
        self.example_button.on_click(
            lambda _b: self._run(self.start_from_example, sink=self.file_message)
        )
        self.upload.observe(self._on_upload, "value")
        self.fit_button.on_click(lambda _b: self._run(self.fit_range))
        self.compute_button.on_click(lambda _b: self._run(self.compute))

        self._show_scan()
        self._refresh_design()
        self.compute()

    # --- the design -------------------------------------------------------------------------
    @property
    def cascade(self) -> Cascade:
        """The cascade being edited (always valid)."""
        return self._cascade

    @property
    def selected(self) -> int:
        """Index of the level being edited (0 = the top level)."""
        return self._selected

    @property
    def scan_range(self) -> tuple[float, float]:
        """Scan of the input enzyme total, µM (log-spaced)."""
        return self._scan

    @staticmethod
    def _check_panel_limits(cascade: Cascade) -> None:
        if not isinstance(cascade, Cascade):
            msg = f"`cascade` must be a hairtrigger Cascade; got {type(cascade).__name__}"
            raise ValueError(msg)
        if len(cascade.levels) > MAX_LEVELS:
            msg = (
                f"the panel edits up to {MAX_LEVELS} levels; this cascade has {len(cascade.levels)}"
            )
            raise ValueError(msg)
        for i, level in enumerate(cascade.levels):
            if level.sites not in FILE_SITES:
                msg = (
                    f"level {i + 1} ({level.name}) has {level.sites} sites; the panel and "
                    "cascade files hold 1 or 2"
                )
                raise ValueError(msg)

    def set_cascade(self, cascade: Cascade, select: int = 0) -> None:
        """Replace the cascade (checked first; on error nothing changes) and rescan.

        Raises
        ------
        ValueError
            More than `MAX_LEVELS` levels, or a level with a site count other than 1 or 2.
        """
        self._check_panel_limits(cascade)
        self._cascade = cascade
        self._selected = min(max(int(select), 0), len(cascade.levels) - 1)
        self._refresh_design()
        self._debouncer.request()

    def _replace_level(self, index: int, level: CascadeLevel) -> None:
        levels = list(self._cascade.levels)
        levels[index] = level
        self._commit(levels)

    def _commit(self, levels: list[CascadeLevel], input_total: float | None = None) -> None:
        """Build the new cascade (the core validates it: names unique) and take it."""
        c = self._cascade
        total = c.input_enzyme_total if input_total is None else input_total
        self.set_cascade(Cascade(total, tuple(levels), c.title, c.notes), self._selected)

    def add_level(self) -> None:
        """Append a level below the last, copying its constants, with a new unique name."""
        levels = list(self._cascade.levels)
        if len(levels) >= MAX_LEVELS:
            self.level_message.show_error(f"the panel holds at most {MAX_LEVELS} levels")
            return
        names = {level.name for level in levels}
        number = len(levels) + 1
        while f"level {number}" in names:
            number += 1
        levels.append(replace(levels[-1], name=f"level {number}"))
        self._selected = len(levels) - 1
        self._commit(levels)
        self.level_message.show_note(f"added level {len(levels)} (a copy of the one above)")

    def remove_level(self, index: int | None = None) -> None:
        """Remove the selected level (or `index`); a cascade keeps at least one level."""
        levels = list(self._cascade.levels)
        where = self._selected if index is None else int(index)
        if len(levels) == 1:
            self.level_message.show_error("a cascade needs at least one level")
            return
        if not 0 <= where < len(levels):
            self.level_message.show_error(f"there is no level {where + 1}")
            return
        removed = levels.pop(where)
        self._selected = max(0, where - 1)
        self._commit(levels)
        self.level_message.show_note(f"removed {removed.name}")

    # --- files --------------------------------------------------------------------------
    def load(self, path: str | Path | None = None) -> bool:
        """Load a cascade file (default: the path box); False if refused (nothing changes)."""
        target = str(self.path.value if path is None else path).strip()
        if not target:
            self.file_message.show_error("enter the path of a cascade file to load")
            return False
        try:
            cascade = load_cascade(Path(target).expanduser())
        except CascadeFileError as exc:
            self.file_message.show_error(f"could not load: {exc}")
            return False
        except FileNotFoundError:
            self.file_message.show_error(f"could not load {target}: no such file")
            return False
        except OSError as exc:
            self.file_message.show_error(f"could not load {target}: {exc.strerror or exc}")
            return False
        return self._take(cascade, target)

    def load_text(self, content: str | bytes, name: str = "upload") -> bool:
        """Load cascade JSON text (an upload); False if refused (nothing changes)."""
        try:
            cascade = loads_cascade(content, source=name)
        except CascadeFileError as exc:
            self.file_message.show_error(f"could not load: {exc}")
            return False
        return self._take(cascade, name)

    def start_from_example(self, name: str | None = None) -> bool:
        """Replace the cascade by a bundled example (default: the one chosen in the menu)."""
        chosen = self.example.value if name is None else name
        try:
            cascade = load_cascade(cascade_example_path(chosen))
        except (ValueError, OSError) as exc:
            self.file_message.show_error(f"could not load the example: {exc}")
            return False
        return self._take(cascade, f"example {chosen}")

    def _take(self, cascade: Cascade, source: str) -> bool:
        try:
            self.set_cascade(cascade)
        except ValueError as exc:
            self.file_message.show_error(f"could not load {source}: {exc}")
            return False
        self.file_message.show_note(f"loaded {source}")
        return True

    def save(self, path: str | Path | None = None, overwrite: bool | None = None) -> Path | None:
        """Save the cascade (default: to the path box) atomically; None on failure."""
        target = str(self.path.value if path is None else path).strip()
        if not target:
            self.file_message.show_error("enter a file path to save to")
            return None
        file = Path(target).expanduser()
        replace_existing = self.overwrite.value if overwrite is None else bool(overwrite)
        try:
            written = save_cascade(self._cascade, file, overwrite=replace_existing)
        except FileExistsError:
            self.file_message.show_error(f"{file} exists; tick 'overwrite' to replace it")
            return None
        except (OSError, ValueError) as exc:
            self.file_message.show_error(f"could not save {file}: {exc}")
            return None
        self.last_saved = Path(written)
        self.file_message.show_note(f"saved {written}")
        return self.last_saved

    # --- computing ------------------------------------------------------------------------
    @property
    def pending(self) -> bool:
        """True while a debounced scan is waiting."""
        return self._debouncer.pending

    def flush(self) -> None:
        """Run a pending scan now."""
        self._debouncer.flush()

    def _compute_key(self) -> tuple[Any, ...]:
        return (self._cascade, self._scan, int(self.points.value))

    def _compute_pending(self) -> None:
        reporting(lambda: self.message)(self._compute_if_changed)()

    def _compute_if_changed(self) -> None:
        if self._compute_key() != self._computed_key:
            self.compute()
        else:
            self._draw()

    def compute(self) -> bool:
        """Scan the cascade now; True on success. On failure the plots and table stay."""
        self._debouncer.cancel()
        key = self._compute_key()
        low, high = self._scan
        with self.busy.working("cascade"), self.state.progress("cascade"):
            result = cascade_response(self._cascade, low, high, int(self.points.value))
        self.computes += 1
        self._computed_key = key
        if not result.success:
            shown = (
                "; the plot and the table still show the last scan that succeeded"
                if self.response is not None
                else ""
            )
            self.message.show_error(f"the scan failed: {result.message}{shown}")
            if self.response is not None:
                self._draw_table()  # says that it shows an older cascade
            return False
        self.response = result
        self.shown_cascade = self._cascade
        self.message.clear()
        self._draw()
        return True

    def fit_range(self) -> bool:
        """Set the scan to a decade below every EC10 and above every EC90, then rescan."""
        low, high, points = FIT_SCAN
        with self.busy.working("cascade"), self.state.progress("cascade"):
            wide = cascade_response(self._cascade, low, high, points)
        if not wide.success:
            self.message.show_error(f"could not find the switching range: {wide.message}")
            return False
        ecs = [
            getattr(level.output(d), key)
            for level in wide.levels
            for d in OUTPUT_DEFINITIONS
            for key in ("ec10", "ec90")
        ]
        finite = [v for v in ecs if math.isfinite(v)]
        if not finite:
            self.message.show_error(
                f"no level reaches 10–90 % of its plateau between {low:g} and {high:g} µM"
            )
            return False
        new_low = 10.0 ** math.floor(math.log10(min(finite)) - 1.0)
        new_high = 10.0 ** math.ceil(math.log10(max(finite)) + 1.0)
        self._scan = (max(new_low, low), min(new_high, high))
        self._show_scan()
        return self.compute()

    def _on_pending(self, pending: bool) -> None:
        if pending:
            self.busy.hold("cascade")
        else:
            self.busy.release("cascade")

    # --- what is shown ----------------------------------------------------------------
    def curve_data(self) -> tuple[np.ndarray, np.ndarray]:
        """Input totals (P,) and each level's output over its plateau (L, P), verified only."""
        response = self.response
        if response is None:
            return np.zeros(0), np.zeros((0, 0))
        definition = self.definition.value
        scan = response.scan
        values = scan.output(definition) / response.plateau.output(definition)[None, :]
        keep = scan.verified & np.all(np.isfinite(values), axis=1) & np.isfinite(scan.inputs)
        return np.asarray(scan.inputs[keep], dtype=float), np.ascontiguousarray(values[keep].T)

    def rows(self) -> list[dict[str, Any]]:
        """The table: per level, then ``overall``, for the chosen output definition."""
        response = self.response
        if response is None:
            return []
        definition = self.definition.value
        out = []
        entries = [(lv.name, lv) for lv in response.levels]
        entries.append(("overall", response.overall))
        for label, level in entries:
            steep = level.output(definition)
            out.append(
                {
                    "level": label,
                    "sites": level.sites,
                    "ec10": steep.ec10,
                    "ec50": steep.ec50,
                    "ec90": steep.ec90,
                    "hill_coefficient": steep.hill_coefficient,
                    "stage_hill_coefficient": steep.stage_hill_coefficient,
                    "plateau": steep.plateau,
                    "free_hill_coefficient": level.free.hill_coefficient,
                    "total_hill_coefficient": level.total.hill_coefficient,
                }
            )
        return out

    def _draw(self) -> None:
        response = self.response
        if response is None:
            return
        low, high = (float(v) for v in response.scan.inputs[[0, -1]])
        with self.x_scale.hold_sync():
            self.x_scale.min = low
            self.x_scale.max = high
        ticks = np.asarray(log_ticks(low, high), dtype=float)
        if not np.array_equal(np.asarray(self.x_axis.tick_values, dtype=float), ticks):
            self.x_axis.tick_values = ticks
        x, y = self.curve_data()
        n_levels = len(response.levels)
        # Room above 1 for a response that overshoots its plateau (non-monotone).
        top = max(1.05, 1.05 * float(np.max(y))) if y.size else 1.05
        if self.y_scale.max != top:
            self.y_scale.max = top
        with self.curves.hold_sync():
            if x.size >= 2:
                self.curves.x = x
                self.curves.y = y
            self.curves.visible = bool(x.size >= 2)
        definition = self.definition.value
        for i, mark in enumerate(self.ec_markers):
            xs, ys = [], []
            if i < n_levels:
                steep = response.levels[i].output(definition)
                for value, level in ((steep.ec10, 0.1), (steep.ec50, 0.5), (steep.ec90, 0.9)):
                    if math.isfinite(value):
                        xs.append(value)
                        ys.append(level)
            with mark.hold_sync():
                if xs:
                    mark.x = np.asarray(xs, dtype=float)
                    mark.y = np.asarray(ys, dtype=float)
                mark.visible = bool(xs)
        operating = self.shown_cascade.input_enzyme_total if self.shown_cascade else 0.0
        inside = low <= operating <= high and operating > 0.0
        with self.operating_line.hold_sync():
            if inside:
                self.operating_line.x = np.array([operating, operating])
                self.operating_line.y = np.array([0.0, top])
            self.operating_line.visible = inside
        label = f"{definition} output / plateau"
        if self.y_axis.label != label:
            self.y_axis.label = label
        self._draw_legend()
        self._draw_table()

    def _draw_legend(self) -> None:
        response = self.response
        assert response is not None
        items = [
            (
                LEVEL_COLOURS[i],
                "solid",
                f"{i + 1}: {lv.name} ({lv.sites} site{'s' if lv.sites > 1 else ''})",
            )
            for i, lv in enumerate(response.levels)
        ]
        items.append(("#555555", "dashed", "operating point"))
        parts = [
            f'<span style="white-space:nowrap;margin-right:10px"><span style="display:inline-block;'
            f'width:18px;border-top:3px {style} {colour};vertical-align:middle"></span> '
            f"{html.escape(text)}</span>"
            for colour, style, text in items
        ]
        parts.append('<span style="white-space:nowrap">◆ EC10, EC50, EC90</span>')
        value = '<div style="font-size:85%;line-height:1.5">' + " ".join(parts) + "</div>"
        if self.legend.value != value:
            self.legend.value = value

    def _draw_table(self) -> None:
        response = self.response
        assert response is not None
        definition = self.definition.value
        cell = 'style="padding:1px 5px;text-align:right;font-variant-numeric:tabular-nums"'
        head = 'style="padding:1px 5px;text-align:right;font-weight:normal;color:#4d4d4d"'
        table = '<table style="border-collapse:collapse;font-size:80%;white-space:nowrap">'
        rows = self.rows()

        def body(keys: tuple[str, ...]) -> list[str]:
            out = []
            for index, row in enumerate(rows):
                last = index == len(rows) - 1
                style = ' style="border-top:1px solid #bbbbbb;font-weight:bold"' if last else ""
                out.append(
                    f"<tr{style}><td style='padding:1px 5px 1px 0'>"
                    f"{html.escape(row['level'])}</td>"
                    + "".join(f"<td {cell}>{compact_number(row[key])}</td>" for key in keys)
                    + "</tr>"
                )
            return out

        lines = [
            table,
            f'<caption style="white-space:normal;text-align:left;color:#4d4d4d">Output: '
            f"{html.escape(DEFINITION_LABELS[definition])}; EC values are input enzyme "
            "totals (µM) at 10/50/90 % of the plateau</caption>",
            f'<tr><th style="text-align:left">level</th><th {head}>EC10</th>'
            f"<th {head}>EC50</th><th {head}>EC90</th><th {head}>nH</th>"
            f"<th {head}>plateau</th></tr>",
            *body(STEEPNESS_KEYS),
            "</table>",
            f'{table}<caption style="white-space:normal;text-align:left;color:#4d4d4d;'
            'padding-top:4px">'
            "Hill coefficients by output definition</caption>",
            f'<tr><th style="text-align:left">level</th><th {head}>nH free</th>'
            f"<th {head}>nH total</th>"
            f'<th {head} title="against the level\'s own free kinase">stage nH ({definition})'
            "</th></tr>",
            *body(("free_hill_coefficient", "total_hill_coefficient", "stage_hill_coefficient")),
            "</table>",
        ]
        notes = list(response.warnings)
        if self.shown_cascade is not None and (
            self.shown_cascade.levels != self._cascade.levels
            or self.shown_cascade.input_enzyme_total != self._cascade.input_enzyme_total
        ):
            notes.insert(
                0,
                "the table shows the last cascade that scanned successfully, not the "
                "one being edited",
            )
        if notes:
            lines.append('<ul style="margin:4px 0 0 16px;padding:0;color:#8c2d04;font-size:85%">')
            lines += [f"<li>{html.escape(note)}</li>" for note in notes]
            lines.append("</ul>")
        lines.append(
            '<div style="color:#4d4d4d;font-size:80%;margin-top:4px">nH = ln 81 / ln(EC90/EC10) '
            "against the input enzyme; overall: the cascade's output (its last level); stage "
            "nH against the level's own free kinase; plateau "
            "= computed limit of unbounded input (fraction of the level's substrate). "
            "Predictions of a model; they need experimental confirmation.</div>"
        )
        value = "".join(lines)
        if self.table.value != value:
            self.table.value = value

    # --- keeping the form in step with the design -----------------------------------------
    def _refresh_design(self) -> None:
        cascade = self._cascade
        options = [(f"{i + 1}: {lv.name}", i) for i, lv in enumerate(cascade.levels)]
        self._updating = True
        try:
            with self.level.hold_sync():
                if list(self.level.options) != options:
                    self.level.options = options
                self.level.value = self._selected
            if self.title.value != cascade.title:
                self.title.value = cascade.title
            level = cascade.levels[self._selected]
            self.name.show(level.name)
            self.sites.value = level.sites
            for spec in FIELD_SPECS:
                self.fields[spec.key].show(spec.read(level))
            self.input_total.show(cascade.input_enzyme_total)
        finally:
            self._updating = False
        role = (
            "the input enzyme"
            if self._selected == 0
            else f"the fully modified {cascade.levels[self._selected - 1].name}"
        )
        self.km_note.value = (
            f'<div style="font-size:85%;color:#4d4d4d">Modified by {html.escape(role)}. '
            f"Michaelis constants (koff + kcat)/kon: kinase {level.kinase.km:.4g} µM, "
            f"phosphatase {level.phosphatase.km:.4g} µM.</div>"
        )
        self.download.value = download_link(cascade)

    def _show_scan(self) -> None:
        self.scan_low.show(self._scan[0])
        self.scan_high.show(self._scan[1])

    # --- event handlers ---------------------------------------------------------------
    def _run(self, action: Callable[[], Any], sink: MessageLine | None = None) -> None:
        reporting(lambda: sink or self.message)(action)()

    def _guarded(self, handler: Callable[[str], Any]) -> Callable[[str], None]:
        def run(text: str) -> None:
            reporting(lambda: self.level_message)(handler)(text)

        return run

    def _field_handler(self, spec: FieldSpec) -> Callable[[str], None]:
        entry = self.fields[spec.key]

        def handle(text: str) -> None:
            level = self._cascade.levels[self._selected]
            try:
                value = parse_amount(text, spec.label, spec.unit, spec.allow_zero)
                updated = spec.write(level, value)
            except (EntryError, ValueError) as exc:
                entry.message.show_error(str(exc))
                return
            entry.message.clear()
            if updated != level:
                self._replace_level(self._selected, updated)

        return lambda text: reporting(lambda: entry.message)(handle)(text)

    def _on_name(self, text: str) -> None:
        name = text.strip()
        level = self._cascade.levels[self._selected]
        if not name:
            self.name.message.show_error("name: enter a name for the level")
            return
        others = [lv.name for i, lv in enumerate(self._cascade.levels) if i != self._selected]
        if name in others:
            self.name.message.show_error(f"name: {name!r} is used by another level")
            return
        self.name.message.clear()
        if name != level.name:
            self._replace_level(self._selected, replace(level, name=name))

    def _on_sites(self, change: Mapping[str, Any]) -> None:
        if self._updating:
            return

        @reporting(lambda: self.level_message)
        def run() -> None:
            level = self._cascade.levels[self._selected]
            if change["new"] != level.sites:
                self._replace_level(self._selected, replace(level, sites=int(change["new"])))

        run()

    def _on_level(self, change: Mapping[str, Any]) -> None:
        if self._updating or change["new"] is None:
            return

        @reporting(lambda: self.level_message)
        def run() -> None:
            self._selected = int(change["new"])
            self.level_message.clear()
            self._refresh_design()

        run()

    def _on_input_total(self, text: str) -> None:
        try:
            value = parse_amount(text, "input enzyme total", "µM", allow_zero=True)
        except EntryError as exc:
            self.input_total.message.show_error(str(exc))
            return
        self.input_total.message.clear()
        if value != self._cascade.input_enzyme_total:
            self._commit(list(self._cascade.levels), input_total=value)

    def _on_scan(self, text: str, end: int) -> None:
        entry = (self.scan_low, self.scan_high)[end]
        label = ("lowest", "highest")[end] + " input scanned"
        try:
            value = parse_amount(text, label, "µM")
        except EntryError as exc:
            entry.message.show_error(str(exc))
            return
        bounds = list(self._scan)
        bounds[end] = value
        if not bounds[0] < bounds[1]:
            entry.message.show_error(
                f"{label}: the scan needs low < high (now {bounds[0]:g} to {bounds[1]:g} µM)"
            )
            return
        if bounds[1] / bounds[0] > 1e15:
            entry.message.show_error(f"{label}: scan at most 15 decades")
            return
        self.scan_low.message.clear()
        self.scan_high.message.clear()
        self._scan = (bounds[0], bounds[1])
        self._debouncer.request()

    def _on_points(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self._debouncer.request)()

    def _on_definition(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self._draw)()

    def _on_title(self, change: Mapping[str, Any]) -> None:
        if self._updating:
            return

        @reporting(lambda: self.file_message)
        def run() -> None:
            c = self._cascade
            if change["new"] != c.title:
                self._cascade = Cascade(c.input_enzyme_total, c.levels, change["new"], c.notes)
                self.download.value = download_link(self._cascade)

        run()

    def _on_upload(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.file_message)
        def run() -> None:
            files = change["new"]
            if not files:
                return
            item = files[0]
            self.load_text(bytes(item["content"]), name=item.get("name", "upload"))
            self.upload.value = ()  # so the same file can be uploaded again

        run()
