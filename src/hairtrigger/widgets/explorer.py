"""The explorer: every panel laid out on one shared state, sized for a 1280 × 800 screen."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any, Final

import ipywidgets as w

from ._support import BusyIndicator, MessageLine
from .panels.cascade import CascadePanel
from .panels.controls import ControlsPanel
from .panels.curve import ResponseCurvePanel
from .panels.fitting import FittingPanel
from .panels.noise import NoisePanel
from .panels.snapshots import SnapshotPanel
from .panels.steepness import SteepnessMapPanel
from .panels.table import ReadoutTable
from .panels.timecourse import TimeCoursePanel
from .state import ExplorerState

APP_NAME: Final[str] = "hairtrigger"

#: Title of the built-in scenario (invented; not measured data).
DEFAULT_TITLE: Final[str] = "Invented scenario: a kinase/phosphatase pair at 2 % of substrate"

DEFAULT_NOTES: Final[str] = (
    "Invented scenario for illustration, not measured data. Model predictions need "
    "experimental confirmation."
)

_CSS: Final[str] = """
<style>
.hairtrigger-explorer .widget-html-content { line-height: 1.35; }
.hairtrigger-explorer .hairtrigger-message .widget-html-content { font-size: 85%; }
.hairtrigger-explorer .jupyter-widgets:focus-visible,
.hairtrigger-explorer .noUi-handle:focus-visible {
  outline: 2px solid #0072B2; outline-offset: 1px;
}
</style>
"""


class Explorer(w.VBox):
    """Controls, response curve, time course, steepness map, readout table and snapshots.

    Parameters
    ----------
    snapshot : Snapshot, str or os.PathLike, optional
        A snapshot (or the path of a snapshot file) to start from; by default a built-in
        invented scenario.
    state : ExplorerState, optional
        Share an existing state (for example with panels displayed elsewhere).

    Attributes
    ----------
    state : ExplorerState
        The shared state; set parameters on it from code (``explorer.state.K1 = 0.01``).
    controls, curve, time_course, steepness, table, snapshots, fitting, noise, cascade : panels
        The panels; each also works on its own with the same state.
    tabs : ipywidgets.Tab
        The tabbed area under the map (Readout, Snapshots, and any added with `add_tab`).

    Raises
    ------
    ValueError
        The snapshot cannot be read or lies outside the explorer's ranges.
    """

    def __init__(self, snapshot: Any = None, state: ExplorerState | None = None) -> None:
        self.busy = BusyIndicator()
        if state is None:
            state = ExplorerState(title=DEFAULT_TITLE, notes=DEFAULT_NOTES)
        if snapshot is not None:
            if isinstance(snapshot, str | os.PathLike):
                from ..io.snapshot import load_snapshot

                snapshot = load_snapshot(Path(snapshot))
            state.apply_snapshot(snapshot)
        self.state = state
        state.progress = self.busy.working
        self.message = MessageLine()
        self.controls = ControlsPanel(state)
        self.curve = ResponseCurvePanel(state, width="460px", height="290px")
        self.time_course = TimeCoursePanel(state, width="460px", height="240px")
        self.steepness = SteepnessMapPanel(state, width="320px", height="320px")
        self.table = ReadoutTable(state, width="400px")
        self.snapshots = SnapshotPanel(state)
        left = w.VBox(
            [self.controls],
            layout=w.Layout(
                width="330px",
                min_width="330px",
                max_height="740px",
                overflow="auto",
                padding="0 6px 0 0",
            ),
        )
        self.tabs = w.Tab(layout=w.Layout(width="428px"))
        self._lazy_tabs: dict[int, w.Widget] = {}
        self.tabs.observe(self._on_tab_selected, names="selected_index")
        self.add_tab("Readout", self.table)
        self.add_tab("Snapshots", self.snapshots)
        self.fitting = FittingPanel(state, width="400px", height="250px")
        self.add_tab("Fit", self.fitting, lazy=True)
        self.noise = NoisePanel(state, width="410px")
        self.add_tab("Noise", self.noise, lazy=True)
        self.cascade = CascadePanel(state)
        self.add_tab("Cascade", self.cascade, lazy=True)
        middle = w.VBox([self.curve, self.time_course], layout=w.Layout(width="465px"))
        right = w.VBox([self.steepness, self.tabs], layout=w.Layout(width="435px"))
        header = w.HBox(
            [
                w.HTML(
                    f"{_CSS}<b style='font-size:120%'>{APP_NAME}</b> "
                    "<span style='color:#4d4d4d'>covalent-modification switch explorer — "
                    "predictions need experimental confirmation</span>"
                ),
                self.busy,
                self.message,
            ],
            layout=w.Layout(align_items="center", justify_content="flex-start"),
        )
        super().__init__(
            children=[
                header,
                w.HBox(
                    [left, middle, right],
                    # One row in a 1280-px window (Voila); narrower output areas (JupyterLab with a
                    # side bar) wrap the map column below instead of scrolling sideways.
                    layout=w.Layout(flex_flow="row wrap", max_width="1240px"),
                ),
            ],
        )
        self.add_class("hairtrigger-explorer")

    def add_tab(self, title: str, panel: w.Widget, select: bool = False, lazy: bool = False) -> int:
        """Add `panel` as a tab beside the readout table and the snapshots.

        The panel should observe `state` (build it with ``Panel(explorer.state)``) and not
        talk to the other panels. Keep it within the tab area (about 420 px wide) so
        the explorer still fits a 1280-px window.

        Parameters
        ----------
        title : str
            Tab title (short: the tab bar is about 430 px wide).
        panel : ipywidgets.Widget
            The panel to show.
        select : bool
            Bring the new tab to the front.
        lazy : bool
            Show a placeholder until the tab is first selected. Use it for panels with
            figures: a bqplot figure drawn inside a hidden tab has no size and draws
            negative-width rectangles (browser console errors). The panel is built and
            follows the state all along; only its view waits.

        Returns
        -------
        int
            Index of the new tab.

        Raises
        ------
        ValueError
            `title` is empty, or `panel` is not a widget or is already a tab.
        """
        if not isinstance(title, str) or not title.strip():
            msg = f"`title` must be a non-empty string; got {title!r}"
            raise ValueError(msg)
        if not isinstance(panel, w.Widget):
            msg = f"`panel` must be an ipywidgets widget; got {type(panel).__name__}"
            raise ValueError(msg)
        if any(child is panel for child in (*self.tabs.children, *self._lazy_tabs.values())):
            msg = f"`panel` is already a tab ({type(panel).__name__})"
            raise ValueError(msg)
        titles = (*self.tabs.titles, title.strip())
        index = len(titles) - 1
        shown = panel
        if lazy and not select:
            shown = w.HTML("<i>Loading…</i>")
            self._lazy_tabs[index] = panel
        with self.tabs.hold_sync():
            self.tabs.children = (*self.tabs.children, shown)
            self.tabs.titles = titles
            if select:
                self.tabs.selected_index = len(titles) - 1
        return len(titles) - 1

    def _on_tab_selected(self, change: dict[str, Any]) -> None:
        panel = self._lazy_tabs.pop(change["new"], None) if change["new"] is not None else None
        if panel is not None:
            children = list(self.tabs.children)
            children[change["new"]] = panel
            self.tabs.children = tuple(children)

    def flush(self) -> None:
        """Run pending debounced work now (map recompute, download link)."""
        self.steepness.flush()
        self.noise.flush()
        self.cascade.flush()
        self.snapshots.flush()

    def write_report(
        self, path: str | os.PathLike[str], *, include_pinned: bool = True, overwrite: bool = False
    ) -> Path:
        """Write the shareable, self-contained HTML report of the current point (and pins).

        Parameters
        ----------
        path : path-like
            Report file (``.html``), written atomically.
        include_pinned : bool
            Add the pinned snapshots, so that the report compares them with the current point.
        overwrite : bool
            Replace an existing file.

        Returns
        -------
        pathlib.Path
            The file written; see ``hairtrigger report`` for its contents. Needs matplotlib.
        """
        from .app import write_explorer_report

        return Path(
            write_explorer_report(self, path, include_pinned=include_pinned, overwrite=overwrite)
        )
