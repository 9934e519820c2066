"""Snapshot controls: title and notes, save and load, download and upload, pins, differences.

Saving to a path runs in the kernel (``save_snapshot``, atomic, refuses to overwrite unless
asked). The browser download is an HTML ``data:`` link, because Voila refuses to serve files
(its allow-list only lets images through). Loading takes a path or a ``FileUpload``; a file
that cannot be read, or that the explorer cannot take, shows an error in place and changes
nothing. Pinned snapshots are drawn on the response curve and can be compared side by side.
"""

from __future__ import annotations

import html
from collections.abc import Mapping
from pathlib import Path
from typing import Any, Final

import ipywidgets as w
from traitlets import Instance

from ...core import CYCLE_KEYS, CYCLE_UNITS, evaluate
from ...io.snapshot import Snapshot, SnapshotError, dumps_snapshot, load_snapshot, loads_snapshot
from ...io.snapshot import save_snapshot as write_snapshot
from .._support import Debouncer, MessageLine, json_download_link, reporting
from .._support import file_stem as _file_stem
from ..state import ExplorerState
from .table import format_number

#: Quiet period before the download link is rebuilt (it is not needed on every drag tick).
DOWNLOAD_DEBOUNCE_SECONDS: Final[float] = 0.4

#: Result keys compared side by side (label, key, relative block?).
COMPARED_RESULTS: Final[tuple[tuple[str, str, bool], ...]] = (
    ("K1", "K1", False),
    ("K2", "K2", False),
    ("activity ratio r", "activity_ratio", False),
    ("readout", "readout_value", False),
    ("readout ceiling", "readout_ceiling", False),
    ("EC10 (r)", "activity_ratio_10", False),
    ("EC50 (r)", "activity_ratio_50", False),
    ("EC90 (r)", "activity_ratio_90", False),
    ("Rv", "response_coefficient", False),
    ("nH", "hill_coefficient", False),
    ("relative EC50 (r)", "activity_ratio_50", True),
    ("relative nH", "hill_coefficient", True),
)


def file_stem(title: str) -> str:
    """A safe file name stem from a snapshot title."""
    return _file_stem(title, "hairtrigger-snapshot")


def download_link(snapshot: Snapshot, label: str = "Download snapshot (.json)") -> str:
    """HTML for a browser download of `snapshot` as a ``data:`` link (works under Voila)."""
    return json_download_link(
        dumps_snapshot(snapshot),
        file_stem(snapshot.title) + ".json",
        label,
        "save the current exploration as a file",
    )


def _ratio(a: Any, b: Any) -> str:
    if a is None or b is None or not isinstance(a, float | int) or not isinstance(b, float | int):
        return ""
    if a == 0:
        return ""
    return f"×{b / a:.3g}"


def difference_table(a: Snapshot, b: Snapshot, label_a: str, label_b: str) -> str:
    """HTML table of two snapshots' parameters and results side by side (B/A ratios)."""
    ra = evaluate(a.cycle, a.model, a.readout)
    rb = evaluate(b.cycle, b.model, b.readout)
    cell = 'style="padding:1px 6px;text-align:right;font-variant-numeric:tabular-nums"'
    rows = [
        '<table style="border-collapse:collapse;font-size:85%">',
        f"<tr><th></th><th {cell}>{html.escape(label_a)}</th><th {cell}>{html.escape(label_b)}"
        f"</th><th {cell}>B/A</th></tr>",
        f"<tr><td>model</td><td {cell}>{a.model}</td><td {cell}>{b.model}</td><td></td></tr>",
        f"<tr><td>readout</td><td {cell}>{a.readout}</td><td {cell}>{b.readout}</td><td></td></tr>",
    ]
    for key in CYCLE_KEYS:
        va, vb = getattr(a.cycle, key), getattr(b.cycle, key)
        mark = "" if va == vb else ' style="background:#fff3c4"'
        rows.append(
            f"<tr{mark}><td>{key} ({CYCLE_UNITS[key]})</td><td {cell}>{format_number(va)}</td>"
            f"<td {cell}>{format_number(vb)}</td><td {cell}>{_ratio(va, vb)}</td></tr>"
        )
    for label, key, relative in COMPARED_RESULTS:
        va = (ra["relative"] if relative else ra)[key]
        vb = (rb["relative"] if relative else rb)[key]
        mark = "" if va == vb else ' style="background:#eef4fb"'
        rows.append(
            f"<tr{mark}><td>{html.escape(label)}</td><td {cell}>{format_number(va)}</td>"
            f"<td {cell}>{format_number(vb)}</td><td {cell}>{_ratio(va, vb)}</td></tr>"
        )
    rows.append("</table>")
    return "".join(rows)


class SnapshotPanel(w.VBox):
    """Save, load, download, upload, pin and compare snapshots of a shared state.

    Parameters
    ----------
    state : ExplorerState
        The shared state.

    Attributes
    ----------
    last_saved : pathlib.Path or None
        The file written by the last successful save.
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState) -> None:
        box = {"description_width": "64px"}
        self.title = w.Text(
            value=state.title,
            description="title",
            style=box,
            placeholder="name this exploration",
            layout=w.Layout(width="330px"),
        )
        self.notes = w.Textarea(
            value=state.notes,
            description="notes",
            style=box,
            placeholder="what you were testing, which assumptions",
            layout=w.Layout(width="330px", height="64px"),
        )
        self.path = w.Text(
            description="file",
            style=box,
            placeholder="path/to/snapshot.json",
            layout=w.Layout(width="330px"),
            tooltip="a path on the machine running the kernel",
        )
        self.overwrite = w.Checkbox(
            value=False, description="overwrite an existing file", indent=False
        )
        self.save_button = w.Button(
            description="Save",
            icon="save",
            tooltip="save to the file path (in the kernel)",
            layout=w.Layout(width="90px"),
        )
        self.load_button = w.Button(
            description="Load",
            icon="folder-open",
            tooltip="load the file path into the explorer",
            layout=w.Layout(width="90px"),
        )
        self.pin_button = w.Button(
            description="Pin current",
            icon="thumb-tack",
            tooltip="keep the current curve on the plot for comparison",
            layout=w.Layout(width="120px"),
        )
        self.download = w.HTML()
        self.upload = w.FileUpload(
            accept=".json,application/json",
            multiple=False,
            description="Upload",
            tooltip="load a snapshot file from this computer",
            layout=w.Layout(width="110px"),
        )
        self.upload_target = w.ToggleButtons(
            options=[("into explorer", "load"), ("as a pin", "pin")],
            value="load",
            tooltip="what an uploaded or loaded file does",
            style={"button_width": "100px"},
        )
        self.pins = w.Select(
            options=[], rows=4, description="pinned", style=box, layout=w.Layout(width="330px")
        )
        self.unpin_button = w.Button(
            description="Remove", icon="times", layout=w.Layout(width="90px")
        )
        self.restore_button = w.Button(
            description="Restore",
            icon="undo",
            tooltip="load the selected pin into the explorer",
            layout=w.Layout(width="90px"),
        )
        self.compare_a = w.Dropdown(
            description="A", style={"description_width": "16px"}, layout=w.Layout(width="162px")
        )
        self.compare_b = w.Dropdown(
            description="B", style={"description_width": "16px"}, layout=w.Layout(width="162px")
        )
        self.difference = w.HTML()
        self.message = MessageLine()
        super().__init__(
            children=[
                w.HTML("<b>Snapshot</b>"),
                self.title,
                self.notes,
                self.path,
                self.overwrite,
                w.HBox([self.save_button, self.load_button, self.upload]),
                w.HBox(
                    [w.HTML("load or upload", layout=w.Layout(width="100px")), self.upload_target]
                ),
                self.download,
                self.message,
                w.HTML("<b>Compare</b>"),
                w.HBox([self.pin_button]),
                self.pins,
                w.HBox([self.restore_button, self.unpin_button]),
                w.HBox([self.compare_a, self.compare_b]),
                self.difference,
            ],
            state=state,
        )
        self.add_class("hairtrigger-snapshots")
        self.last_saved: Path | None = None
        self._updating_choices = False
        self._download_debouncer = Debouncer(DOWNLOAD_DEBOUNCE_SECONDS, self._refresh_passive)
        self.title.observe(self._on_title, "value")
        self.notes.observe(self._on_notes, "value")
        self.save_button.on_click(self._on_save)
        self.load_button.on_click(self._on_load)
        self.pin_button.on_click(self._on_pin)
        self.unpin_button.on_click(self._on_unpin)
        self.restore_button.on_click(self._on_restore)
        self.upload.observe(self._on_upload, "value")
        self.compare_a.observe(self._on_compare, "value")
        self.compare_b.observe(self._on_compare, "value")
        state.observe(self._on_state, ["revision", "title", "notes", "pinned", *state.view_names()])
        self._refresh_pins()
        self._refresh_passive()

    # --- actions callable from Python ------------------------------------------------------
    def save(self, path: str | Path | None = None, overwrite: bool | None = None) -> Path | None:
        """Save the current exploration to `path` (default: the path box). None on failure."""
        target = self.path.value if path is None else str(path)
        if not target.strip():
            self.message.show_error("enter a file path to save to")
            return None
        file = Path(target.strip()).expanduser()
        replace = self.overwrite.value if overwrite is None else overwrite
        try:
            written = write_snapshot(self.state.to_snapshot(), file, overwrite=replace)
        except FileExistsError:
            self.message.show_error(f"{file} exists; tick 'overwrite' to replace it")
            return None
        except (OSError, ValueError) as exc:
            self.message.show_error(f"could not save {file}: {exc}")
            return None
        self.last_saved = Path(written)
        self.message.show_note(f"saved {written}")
        return self.last_saved

    def load(self, path: str | Path | None = None) -> bool:
        """Load `path` (default: the path box) into the explorer or as a pin; False if refused."""
        target = self.path.value if path is None else str(path)
        if not target.strip():
            self.message.show_error("enter the path of a snapshot file to load")
            return False
        try:
            snapshot = load_snapshot(Path(target.strip()).expanduser())
        except (SnapshotError, OSError) as exc:
            self.message.show_error(f"could not load: {exc}")
            return False
        return self._take(snapshot, str(target))

    def load_text(self, content: str | bytes, name: str = "upload") -> bool:
        """Load snapshot JSON text (an upload); False if refused (state unchanged)."""
        try:
            snapshot = loads_snapshot(content, source=name)
        except SnapshotError as exc:
            self.message.show_error(f"could not load: {exc}")
            return False
        return self._take(snapshot, name)

    def pin(self, snapshot: Snapshot | None = None) -> None:
        """Pin `snapshot` (default: the current exploration) for comparison."""
        snap = snapshot if snapshot is not None else self.state.to_snapshot()
        if not snap.title:
            snap = snap.replace(title=f"pin {len(self.state.pinned) + 1}")
        self.state.pinned = (*self.state.pinned, snap.replace(extras={}))

    # --- internals ------------------------------------------------------------------------
    def _take(self, snapshot: Snapshot, source: str) -> bool:
        try:
            if self.upload_target.value == "pin":
                self.state.check_cycle(snapshot.cycle)
                self.pin(snapshot)
                remarks: list[str] = []
                verb = "pinned"
            else:
                remarks = self.state.apply_snapshot(snapshot)
                verb = "loaded"
        except ValueError as exc:
            self.message.show_error(f"could not load {source}: {exc}")
            return False
        note = f"{verb} {source}" + (f" ({'; '.join(remarks)})" if remarks else "")
        self.message.show_note(note)
        return True

    def _on_title(self, change: Mapping[str, Any]) -> None:
        self.state.title = change["new"]

    def _on_notes(self, change: Mapping[str, Any]) -> None:
        self.state.notes = change["new"]

    def _on_save(self, button: Any) -> None:
        reporting(lambda: self.message)(self.save)()

    def _on_load(self, button: Any) -> None:
        reporting(lambda: self.message)(self.load)()

    def _on_pin(self, button: Any) -> None:
        reporting(lambda: self.message)(self.pin)()

    def _on_unpin(self, button: Any) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            index = self.pins.index
            if index is None:
                self.message.show_error("select a pinned snapshot to remove")
                return
            pinned = list(self.state.pinned)
            del pinned[index]
            self.state.pinned = tuple(pinned)

        run()

    def _on_restore(self, button: Any) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            index = self.pins.index
            if index is None:
                self.message.show_error("select a pinned snapshot to restore")
                return
            snapshot = self.state.pinned[index]
            # Keep the pin list: a pin carries no pins of its own, so nothing is added.
            self.state.apply_snapshot(snapshot, keep_pinned=True)
            self.message.show_note(f"restored {snapshot.title}")

        run()

    def _on_upload(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            files = change["new"]
            if not files:
                return
            item = files[0]
            content = item["content"]
            self.load_text(bytes(content), name=item.get("name", "upload"))
            # Clear, so uploading the same file again fires again.
            self.upload.value = ()

        run()

    def _on_state(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            name = change["name"]
            if name == "title" and self.title.value != change["new"]:
                self.title.value = change["new"]
            if name == "notes" and self.notes.value != change["new"]:
                self.notes.value = change["new"]
            if name == "pinned":
                self._refresh_pins()
            # The link and the comparison are not needed on every drag tick.
            self._download_debouncer.request()

        run()

    def _choices(self) -> list[tuple[str, int]]:
        options = [("current", -1)]
        options += [(f"{i + 1}: {p.title}", i) for i, p in enumerate(self.state.pinned)]
        return options

    def _refresh_pins(self) -> None:
        pins = [f"{i + 1}: {p.title} ({p.model})" for i, p in enumerate(self.state.pinned)]
        if list(self.pins.options) != pins:
            self.pins.options = pins
        choices = self._choices()
        values = [v for _, v in choices]
        self._updating_choices = True
        try:
            for dropdown, default in ((self.compare_a, -1), (self.compare_b, 0)):
                current = dropdown.value
                if list(dropdown.options) != choices:
                    dropdown.options = choices
                    dropdown.value = (
                        current if current in values else (default if default in values else -1)
                    )
        finally:
            self._updating_choices = False
        self._refresh_difference()

    def _snapshot_for(self, index: int | None) -> tuple[Snapshot, str]:
        if index is None or index < 0 or index >= len(self.state.pinned):
            return self.state.to_snapshot(), "current"
        snap = self.state.pinned[index]
        return snap, f"{index + 1}: {snap.title}"

    def _on_compare(self, change: Mapping[str, Any]) -> None:
        if self._updating_choices:
            return
        reporting(lambda: self.message)(self._refresh_difference)()

    def _refresh_difference(self) -> None:
        if not self.state.pinned:
            value = (
                '<span style="color:#4d4d4d;font-size:85%">Pin snapshots to compare them '
                "with the current point side by side.</span>"
            )
        else:
            a, label_a = self._snapshot_for(self.compare_a.value)
            b, label_b = self._snapshot_for(self.compare_b.value)
            value = difference_table(a, b, "A " + label_a, "B " + label_b)
        if self.difference.value != value:
            self.difference.value = value

    def _refresh_passive(self) -> None:
        """Rebuild the download link and the comparison (debounced)."""
        value = download_link(self.state.to_snapshot())
        if self.download.value != value:
            self.download.value = value
        self._refresh_difference()

    def flush(self) -> None:
        """Rebuild a pending download link now."""
        self._download_debouncer.flush()
