"""Headless Chromium for the end-to-end tests (Debian's chromium, driven by Playwright).

The browser is never downloaded: Playwright launches the system binary given by the
environment variable ``HAIRTRIGGER_CHROMIUM`` (default ``/usr/bin/chromium``, from
``apt-get install chromium``). Without it the tests skip with that reason, unless
``HAIRTRIGGER_REQUIRE_BROWSER=1`` (set in CI), which turns the skip into a failure.
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


@pytest.fixture(scope="session")
def chromium_browser() -> Iterator[Any]:
    """One headless Chromium for the whole session."""
    path = chromium_path()
    if path is None:
        reason = (
            "Chromium not found (apt-get install chromium, or set HAIRTRIGGER_CHROMIUM "
            "to the binary)"
        )
        if os.environ.get("HAIRTRIGGER_REQUIRE_BROWSER") == "1":
            pytest.fail(reason)
        pytest.skip(reason)
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
