"""The explorer as a stand-alone web app (what ``hairtrigger app`` serves with Voila).

`explorer_app` builds the explorer from the snapshot named by the ``HAIRTRIGGER_SNAPSHOT``
environment variable (or none), and puts an error panel above it. The panels report errors in
their own callbacks in their message lines; the panel here is the safety net for anything else
that would otherwise end in the kernel log unseen (Voila shows no kernel log): exceptions in
widget message handling and in callbacks run by ipywidgets.
"""

from __future__ import annotations

import html
import logging
import os
import traceback
from typing import Any, Final

import ipywidgets as w

from ..io.snapshot import load_snapshot

#: Environment variable naming the snapshot file to start from.
SNAPSHOT_ENV: Final[str] = "HAIRTRIGGER_SNAPSHOT"

#: Loggers that receive the exceptions raised while the kernel handles widget messages.
WIDGET_MESSAGE_LOGGERS: Final[tuple[str, ...]] = ("Comm", "ipykernel.comm", "traitlets")

_MAX_SHOWN: Final[int] = 5


class AppErrorPanel(w.HTML):
    """Errors that escaped every panel, shown at the top of the app (newest first).

    Empty, and so invisible, until something goes wrong.
    """

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(value="", **kwargs)
        self.add_class("hairtrigger-app-errors")
        self.messages: list[tuple[str, str]] = []

    def show(self, summary: str, details: str = "") -> None:
        """Add an error with a one-line `summary` and optional `details` (a traceback)."""
        self.messages.insert(0, (summary, details))
        del self.messages[_MAX_SHOWN:]
        items = "".join(
            f"<details><summary>{html.escape(s)}</summary><pre>{html.escape(d)}</pre></details>"
            if d
            else f"<div>{html.escape(s)}</div>"
            for s, d in self.messages
        )
        self.value = (
            '<div role="alert" style="border:1px solid #b00020;background:#fdecee;color:#5c0011;'
            'padding:6px 10px;border-radius:4px;margin-bottom:8px">'
            "<strong>Error in the app</strong> (the page may be out of date; the details say "
            f"what failed):{items}</div>"
        )

    def clear(self) -> None:
        """Remove every message."""
        self.messages.clear()
        self.value = ""


class _PanelHandler(logging.Handler):
    """Logging handler that puts records with an exception (or ERROR and above) on the panel."""

    def __init__(self, panel: AppErrorPanel) -> None:
        super().__init__(level=logging.ERROR)
        self.panel = panel

    def emit(self, record: logging.LogRecord) -> None:
        try:
            details = ""
            summary = record.getMessage()
            if record.exc_info and record.exc_info[1] is not None:
                exc = record.exc_info[1]
                summary = f"{type(exc).__name__}: {exc}"
                details = "".join(traceback.format_exception(*record.exc_info))
            self.panel.show(summary, details)
        except Exception:  # noqa: BLE001 - a failing error display must not raise in a handler
            self.handleError(record)


def _attach(panel: AppErrorPanel) -> None:
    """Route widget-message exceptions and ipywidgets callback errors to `panel`."""
    handler = _PanelHandler(panel)
    for name in WIDGET_MESSAGE_LOGGERS:
        logger = logging.getLogger(name)
        for old in [h for h in logger.handlers if isinstance(h, _PanelHandler)]:
            logger.removeHandler(old)  # re-running the cell replaces, never duplicates
        logger.addHandler(handler)
    try:
        from IPython import get_ipython
    except ImportError:  # pragma: no cover - always there in a kernel
        return
    shell = get_ipython()
    if shell is None:
        return
    # ipywidgets' CallbackDispatcher (on_click, on_msg, ...) reports errors through
    # showtraceback, whose output Voila drops; show them on the panel as well.
    original = getattr(shell.showtraceback, "__wrapped__", shell.showtraceback)

    def showtraceback(*args: Any, **kwargs: Any) -> Any:
        import sys

        etype, value, tb = sys.exc_info()
        if value is not None:
            panel.show(
                f"{etype.__name__ if etype else 'Error'}: {value}",
                "".join(traceback.format_exception(etype, value, tb)),
            )
        return original(*args, **kwargs)

    showtraceback.__wrapped__ = original  # type: ignore[attr-defined]
    shell.showtraceback = showtraceback


def add_stable_classes(explorer: Any) -> None:
    """Give every parameter control a CSS class naming its parameter.

    ``hairtrigger-control-<name>`` (for example ``hairtrigger-control-activity_ratio``) lets
    browser tests and user style sheets find a control without relying on layout order.
    """
    for name, control in explorer.controls.controls.items():
        control.add_class(f"hairtrigger-control-{name}")


def explorer_app(snapshot_path: str | os.PathLike[str] | None = None) -> w.VBox:
    """Build the app: the error panel and the explorer, started from a snapshot if given.

    Parameters
    ----------
    snapshot_path : path-like, optional
        Snapshot to start from; defaults to the file named by ``HAIRTRIGGER_SNAPSHOT``, else
        the explorer's own default scenario. A snapshot the explorer cannot take is reported on
        the error panel and the app starts from the default scenario.

    Returns
    -------
    ipywidgets.VBox
        Display it (the last expression of a notebook cell); ``.explorer`` is the explorer
        and ``.errors`` the error panel.
    """
    from . import Explorer

    panel = AppErrorPanel()
    _attach(panel)
    path = snapshot_path if snapshot_path is not None else os.environ.get(SNAPSHOT_ENV) or None
    explorer = None
    if path:
        try:
            explorer = Explorer(snapshot=load_snapshot(path))
        except (ValueError, OSError) as exc:
            panel.show(f"could not start from {path}: {exc}; showing the default scenario")
    if explorer is None:
        explorer = Explorer()
    add_stable_classes(explorer)
    box = w.VBox([panel, explorer])
    box.add_class("hairtrigger-app")
    box.explorer = explorer  # type: ignore[attr-defined]
    box.errors = panel  # type: ignore[attr-defined]
    return box


def write_explorer_report(
    explorer: Any,
    path: str | os.PathLike[str],
    *,
    include_pinned: bool = True,
    overwrite: bool = False,
) -> Any:
    """Write the shareable HTML report of an explorer's current point (and its pins).

    Parameters
    ----------
    explorer : Explorer
        The explorer (its shared state supplies the snapshots).
    path : path-like
        Report file (``.html``), written atomically.
    include_pinned : bool
        Add the pinned snapshots, so the report compares them with the current point.
    overwrite : bool
        Replace an existing file.

    Returns
    -------
    pathlib.Path
        The file written (see `hairtrigger.io.report.write_report`).
    """
    from ..io.report import write_report

    state = explorer.state
    current = state.to_snapshot()
    snapshots = [current, *state.pinned] if include_pinned else [current]
    return write_report(snapshots, path, overwrite=overwrite)
