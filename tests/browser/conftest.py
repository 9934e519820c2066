"""Headless Chromium for the end-to-end tests (Debian's chromium, driven by Playwright).

The browser is never downloaded: Playwright launches the system binary given by the
environment variable ``HAIRTRIGGER_CHROMIUM`` (default ``/usr/bin/chromium``, from
``apt-get install chromium``, else ``chromium`` on the PATH). Without it the tests FAIL with a
message saying how to install it; they never skip (CI installs chromium, so a missing browser
is a broken setup, not a reason to pass quietly).

Waits are for page conditions, never fixed sleeps, and they are generous (`WAIT_MS`) so the
tests hold on a loaded two-core machine where a kernel round trip can take seconds.
"""

from __future__ import annotations

import os
import shutil
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pytest

REPO_ROOT = Path(__file__).resolve().parents[2]
ARTIFACTS = REPO_ROOT / "artifacts"

#: Flags that keep Chromium quiet, headless and off the network on its own account.
LAUNCH_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]

#: Default time Playwright waits for a page condition (ms); generous for loaded machines.
WAIT_MS = 120_000

#: Time to wait for the app page to be drawn: Voila starts a fresh kernel per page (ms).
PAGE_READY_MS = 240_000

#: Schemes a self-contained page may load from.
LOCAL_SCHEMES = ("file:", "data:", "blob:", "about:")


def chromium_path() -> str | None:
    """Path of the Chromium binary to drive, or None if there is none."""
    configured = os.environ.get("HAIRTRIGGER_CHROMIUM")
    candidates = [configured] if configured else ["/usr/bin/chromium", shutil.which("chromium")]
    for candidate in candidates:
        if candidate and Path(candidate).is_file() and os.access(candidate, os.X_OK):
            return candidate
    return None


MISSING_CHROMIUM = (
    "the browser tests need Debian's Chromium at /usr/bin/chromium and found none: run "
    "'apt-get install chromium' (or set HAIRTRIGGER_CHROMIUM to a Chromium binary)"
)


def require_chromium() -> str:
    """Path of the Chromium binary; fail the test (never skip) with how to get it if absent."""
    path = chromium_path()
    if path is None:
        pytest.fail(MISSING_CHROMIUM, pytrace=False)
    return path


@pytest.fixture(scope="session")
def chromium_browser() -> Iterator[Any]:
    """One headless Chromium for the whole session."""
    path = require_chromium()
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=path, headless=True, args=LAUNCH_ARGS)
        try:
            yield browser
        finally:
            browser.close()


@pytest.fixture(scope="session")
def artifacts() -> Path:
    """Folder for screenshots and other artefacts of the browser tests (gitignored)."""
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS


@dataclass
class PageLog:
    """What a page did: every request, the ones blocked, console messages and page errors."""

    requests: list[str] = field(default_factory=list)
    blocked: list[str] = field(default_factory=list)
    console: list[tuple[str, str]] = field(default_factory=list)
    page_errors: list[str] = field(default_factory=list)

    @property
    def remote_requests(self) -> list[str]:
        return [u for u in self.requests if not u.startswith(LOCAL_SCHEMES)]

    def errors(self, allowed: tuple[str, ...] = ()) -> list[str]:
        """Console errors and uncaught exceptions, bar messages containing an allowed text."""
        found = [text for kind, text in self.console if kind == "error"] + self.page_errors
        return [text for text in found if not any(a in text for a in allowed)]


@pytest.fixture
def offline_page(chromium_browser: Any) -> Iterator[tuple[Any, PageLog]]:
    """A page whose every non-local request is aborted (and recorded)."""
    context = chromium_browser.new_context(
        viewport={"width": 1200, "height": 900}, accept_downloads=True, service_workers="block"
    )
    context.set_default_timeout(WAIT_MS)
    log = PageLog()

    def guard(route: Any) -> None:
        url = route.request.url
        if url.startswith(LOCAL_SCHEMES):
            route.continue_()
        else:
            log.blocked.append(url)
            route.abort()

    context.route("**/*", guard)
    page = context.new_page()
    page.on("request", lambda request: log.requests.append(request.url))
    page.on("console", lambda message: log.console.append((message.type, message.text)))
    page.on("pageerror", lambda error: log.page_errors.append(str(error)))
    try:
        yield page, log
    finally:
        context.close()


@pytest.fixture
def live_page(chromium_browser: Any) -> Iterator[Any]:
    """Open a served page: ``live_page(url)`` returns ``(page, log)``, closed after the test.

    The page is reached once its response arrives; wait for its content with page conditions.
    """
    contexts: list[Any] = []

    def open_page(url: str) -> tuple[Any, PageLog]:
        context = chromium_browser.new_context(
            viewport={"width": 1300, "height": 1000}, accept_downloads=True
        )
        contexts.append(context)
        context.set_default_timeout(WAIT_MS)
        log = PageLog()
        page = context.new_page()
        page.on("request", lambda request: log.requests.append(request.url))
        page.on("requestfailed", lambda request: log.blocked.append(request.url))
        page.on("console", lambda message: log.console.append((message.type, message.text)))
        page.on("pageerror", lambda error: log.page_errors.append(str(error)))
        page.goto(url, timeout=PAGE_READY_MS, wait_until="commit")
        return page, log

    try:
        yield open_page
    finally:
        for context in contexts:
            context.close()


# --- the app (hairtrigger app, Voila on 127.0.0.1) ----------------------------------------------

#: Console errors that are expected offline: Voila's template asks a CDN for Font Awesome.
OFFLINE_FONT_ERROR = "net::ERR_NAME_NOT_RESOLVED"


@dataclass
class AppServer:
    """A running ``hairtrigger app``: its address, the snapshot it started from, its process."""

    url: str
    snapshot_path: Path
    process: Any


@pytest.fixture(scope="session")
def app_server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[AppServer]:
    """``python -m hairtrigger app SNAPSHOT --port P`` on a free loopback port, for the session.

    Started as a user would start it (the command prints the address when Voila is ready);
    stopped at the end by PID: SIGTERM makes the command stop Voila and its kernels.
    """
    import signal
    import subprocess
    import sys
    import threading
    import time
    import urllib.request

    from hairtrigger.commands.app import free_port
    from hairtrigger.io.examples import load_example
    from hairtrigger.io.snapshot import save_snapshot

    require_chromium()  # no browser, no point in serving
    folder = tmp_path_factory.mktemp("app")
    snapshot_path = folder / "start.json"
    save_snapshot(load_example("scarce_enzyme_switch"), snapshot_path)
    src = str(REPO_ROOT / "src")
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([src, *filter(None, [env.get("PYTHONPATH")])])
    port = free_port()
    process = subprocess.Popen(
        [sys.executable, "-m", "hairtrigger", "app", str(snapshot_path), "--port", str(port)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
        env=env,
        cwd=folder,
    )
    address: list[str] = []
    ready = threading.Event()

    def read() -> None:
        assert process.stdout is not None
        for line in process.stdout:
            if "served at" in line and not address:
                address.append(line.rsplit(" ", 1)[-1].strip())
                ready.set()
        ready.set()

    threading.Thread(target=read, daemon=True).start()
    try:
        if not ready.wait(240) or not address:
            err = process.stderr.read() if process.poll() is not None and process.stderr else ""
            pytest.fail(f"hairtrigger app did not start: {err[-2000:]}")
        url = address[0]
        assert url.startswith(f"http://127.0.0.1:{port}/")
        deadline = time.monotonic() + 120
        while True:  # the address is printed once Voila listens; check it answers
            try:
                with urllib.request.urlopen(url, timeout=5) as response:  # noqa: S310 - loopback
                    if response.status == 200:
                        break
            except OSError:
                if time.monotonic() > deadline:
                    raise
                time.sleep(0.2)
        yield AppServer(url, snapshot_path, process)
    finally:
        if process.poll() is None:
            process.send_signal(signal.SIGTERM)
            try:
                process.wait(timeout=20)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait()


@pytest.fixture
def app_page(chromium_browser: Any, app_server: AppServer) -> Iterator[tuple[Any, PageLog]]:
    """A fresh page of the app (Voila starts one kernel per page), loaded and drawn."""
    context = chromium_browser.new_context(
        viewport={"width": 1300, "height": 1000}, accept_downloads=True
    )
    context.set_default_timeout(WAIT_MS)
    log = PageLog()
    page = context.new_page()
    page.on("request", lambda request: log.requests.append(request.url))
    page.on("requestfailed", lambda request: log.blocked.append(request.url))
    page.on("console", lambda message: log.console.append((message.type, message.text)))
    page.on("pageerror", lambda error: log.page_errors.append(str(error)))
    try:
        page.goto(app_server.url, timeout=PAGE_READY_MS, wait_until="commit")
        # Drawn means: the explorer is there, the response curve has its 400-point path and
        # the kernel has written the readout table.
        page.wait_for_selector(".hairtrigger-explorer", timeout=PAGE_READY_MS)
        page.wait_for_function(
            """() => [...document.querySelectorAll('.hairtrigger-curve svg.svg-figure path.line')]
                     .some(p => (p.getAttribute('d') || '').split('L').length > 300)""",
            timeout=PAGE_READY_MS,
        )
        page.wait_for_selector(".hairtrigger-map svg.svg-figure image", timeout=PAGE_READY_MS)
        page.wait_for_function(
            "() => /\\d/.test(document.querySelector('.hairtrigger-table')?.innerText || '')",
            timeout=PAGE_READY_MS,
        )
        yield page, log
    finally:
        context.close()
