"""Small helpers shared by the panels: debouncing, error reporting and the busy indicator.

Nothing here computes science; these classes keep the user interface honest (errors shown in
place instead of vanishing, slow work announced, expensive redraws coalesced).
"""

from __future__ import annotations

import asyncio
import base64
import functools
import html
import logging
import re
import threading
import traceback
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TypeVar

import ipywidgets as w

LOG = logging.getLogger("hairtrigger.widgets")

F = TypeVar("F", bound=Callable[..., Any])

#: Colours of messages (dark enough for text contrast on white, distinguishable without hue).
ERROR_COLOUR = "#b2182b"
NOTE_COLOUR = "#4d4d4d"


def running_loop() -> asyncio.AbstractEventLoop | None:
    """Return the running asyncio loop (a kernel has one), or None (plain scripts, pytest)."""
    try:
        return asyncio.get_running_loop()
    except RuntimeError:
        return None


class Debouncer:
    """Call a function once, `wait` seconds after the last of a burst of requests.

    Inside a Jupyter kernel (a running asyncio loop) each `request` cancels the pending call and
    schedules a new one, so a slider drag triggers one recompute after the drag pauses. Without
    a running loop (plain Python, tests without a kernel) the call happens synchronously at once,
    so scripted use sees up-to-date results; `flush` runs a pending call immediately.

    Parameters
    ----------
    wait : float
        Quiet period in seconds; 0 means "at the next turn of the loop".
    function : callable
        Called with no arguments.
    on_pending : callable, optional
        Called with True when a call becomes pending and False when it has run (drives a busy
        indicator).
    """

    def __init__(
        self,
        wait: float,
        function: Callable[[], Any],
        on_pending: Callable[[bool], Any] | None = None,
    ) -> None:
        if not wait >= 0.0:
            msg = f"`wait` must be >= 0 seconds; got {wait!r}"
            raise ValueError(msg)
        self.wait = float(wait)
        self._function = function
        self._on_pending = on_pending
        self._handle: asyncio.TimerHandle | None = None
        #: Number of calls actually made (tests and benchmarks read it).
        self.calls = 0

    @property
    def pending(self) -> bool:
        """True while a call is scheduled but has not run."""
        return self._handle is not None

    def request(self) -> None:
        """Ask for a call; bursts of requests collapse into one."""
        loop = running_loop()
        if loop is None:
            self.cancel()
            self._run()
            return
        if self._handle is not None:
            self._handle.cancel()
        elif self._on_pending is not None:
            self._on_pending(True)
        self._handle = loop.call_later(self.wait, self._fire)

    def flush(self) -> None:
        """Run a pending call now (no-op when nothing is pending)."""
        if self._handle is not None:
            self._handle.cancel()
            self._fire()

    def cancel(self) -> None:
        """Drop a pending call without running it."""
        if self._handle is not None:
            self._handle.cancel()
            self._handle = None
            if self._on_pending is not None:
                self._on_pending(False)

    def _fire(self) -> None:
        self._handle = None
        try:
            self._run()
        finally:
            if self._on_pending is not None:
                self._on_pending(False)

    def _run(self) -> None:
        self.calls += 1
        self._function()


class MessageLine(w.HTML):
    """One line of feedback beside a control or at the top of a panel (errors, notes).

    Empty when there is nothing to say, so it takes no room. Screen readers announce changes
    (``aria-live``), which matters because colour alone must not carry the meaning: errors are
    prefixed with the word "Error".
    """

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(value="", **kwargs)
        self.add_class("hairtrigger-message")
        self.text = ""

    def show_error(self, text: str) -> None:
        """Show `text` as an error (red, prefixed "Error:")."""
        self.text = text
        self.value = (
            f'<span role="alert" style="color:{ERROR_COLOUR}">Error: {html.escape(text)}</span>'
        )

    def show_note(self, text: str) -> None:
        """Show `text` as a neutral note."""
        self.text = text
        self.value = (
            f'<span aria-live="polite" style="color:{NOTE_COLOUR}">{html.escape(text)}</span>'
        )

    def clear(self) -> None:
        """Remove any message (sends nothing when already empty)."""
        self.text = ""
        if self.value:
            self.value = ""


def reporting(sink: Callable[[], MessageLine | None]) -> Callable[[F], F]:
    """Decorate a callback so an exception is shown in a `MessageLine` instead of vanishing.

    Voila hides tracebacks and ipywidgets only logs callback errors to the kernel log, so an
    unguarded observer fails silently. The decorated function returns None after an error; the
    traceback goes to the ``hairtrigger.widgets`` logger.

    Parameters
    ----------
    sink : callable
        Returns the message line to write to (looked up at call time, so a method can pass
        ``lambda: self.message``).
    """

    def decorate(function: F) -> F:
        @functools.wraps(function)
        def wrapper(*args: Any, **kwargs: Any) -> Any:
            try:
                return function(*args, **kwargs)
            except Exception as exc:  # noqa: BLE001 - shown to the user, logged in full
                LOG.error("error in %s:\n%s", function.__qualname__, traceback.format_exc())
                line = sink()
                if line is not None:
                    line.show_error(f"{type(exc).__name__}: {exc}")
                return None

        return wrapper  # type: ignore[return-value]

    return decorate


class BusyIndicator(w.HTML):
    """A spinner with a label, shown only while slow work runs.

    `working` is a context manager: if the work inside takes longer than `delay` seconds, a
    watchdog thread shows the indicator (widget updates from threads work with
    ipykernel >= 7.1), so quick updates send no extra messages and start no threads. `hold` and
    `release` count longer-lived pending work (a debounced map recompute) and keep the
    indicator up until the last one is released.
    """

    _SPINNER = (
        '<span role="status" aria-live="polite" style="display:inline-flex;align-items:center;'
        'color:#333"><span style="width:12px;height:12px;border:2px solid #999;'
        "border-top-color:#111;border-radius:50%;display:inline-block;margin-right:6px;"
        'animation:hairtrigger-spin 0.8s linear infinite"></span>{label}</span>'
        "<style>@keyframes hairtrigger-spin{to{transform:rotate(360deg)}}</style>"
    )

    def __init__(self, delay: float = 0.15, **kwargs: Any) -> None:
        super().__init__(value="", **kwargs)
        self.add_class("hairtrigger-busy")
        self.delay = float(delay)
        self._lock = threading.RLock()
        self._holders: dict[str, int] = {}
        self._running: list[tuple[int, str]] = []  # (job number, label) of `working` bodies
        self._shown_job: str | None = None
        self._jobs = 0
        self._wake = threading.Condition(self._lock)
        self._watchdog: threading.Thread | None = None

    @property
    def shown(self) -> bool:
        """True while the spinner is visible."""
        return bool(self.value)

    def _refresh(self) -> None:
        labels = [k for k, n in self._holders.items() if n > 0]
        if self._shown_job is not None:
            labels.append(self._shown_job)
        text = "updating " + ", ".join(dict.fromkeys(labels)) + "…" if labels else ""
        value = self._SPINNER.replace("{label}", html.escape(text)) if labels else ""
        if value != self.value:
            self.value = value

    def hold(self, label: str) -> None:
        """Show the indicator for `label` until `release` (counts nested holds)."""
        with self._lock:
            self._holders[label] = self._holders.get(label, 0) + 1
            self._refresh()

    def release(self, label: str) -> None:
        """Undo one `hold` of `label`."""
        with self._lock:
            self._holders[label] = max(0, self._holders.get(label, 0) - 1)
            self._refresh()

    def _watch(self) -> None:
        # One long-lived thread: waits for a job, then for `delay`; shows the job if it is
        # still the one running.
        with self._lock:
            while True:
                while not self._running:
                    self._wake.wait()
                job, label = self._running[0]
                self._wake.wait(self.delay)
                if self._running and self._running[0][0] == job and self._shown_job is None:
                    self._shown_job = label
                    self._refresh()
                while self._running and self._running[0][0] == job:
                    self._wake.wait()

    @contextmanager
    def working(self, label: str) -> Iterator[None]:
        """Show the indicator if the body runs longer than `delay` seconds."""
        with self._lock:
            self._jobs += 1
            job = self._jobs
            self._running.append((job, label))
            if self._watchdog is None:
                self._watchdog = threading.Thread(
                    target=self._watch, daemon=True, name="hairtrigger-busy"
                )
                self._watchdog.start()
            self._wake.notify_all()
        try:
            yield
        finally:
            with self._lock:
                self._running = [item for item in self._running if item[0] != job]
                if self._shown_job is not None and not self._running:
                    self._shown_job = None
                    self._refresh()
                self._wake.notify_all()


def file_stem(title: str, default: str) -> str:
    """A safe file name stem from a title (letters, digits, ``._-``), `default` if empty."""
    stem = re.sub(r"[^A-Za-z0-9._-]+", "-", title.strip()).strip("-._")
    return (stem or default)[:60]


def json_download_link(text: str, file_name: str, label: str, tooltip: str) -> str:
    """HTML for a browser download of JSON `text` as a ``data:`` link.

    Voila refuses to serve files from the kernel's folder, so downloads carry their content.
    """
    payload = base64.b64encode(text.encode("utf-8")).decode("ascii")
    name = html.escape(file_name, quote=True)
    return (
        f'<a download="{name}" href="data:application/json;charset=utf-8;base64,{payload}" '
        f'style="text-decoration:underline" title="{html.escape(tooltip, quote=True)}">'
        f"{html.escape(label)}</a>"
    )
