"""End-to-end: an exception in a widget callback of the app is shown on the page, not swallowed.

Voila hides tracebacks by default and shows no kernel log, so an error in a callback would
vanish. The app's error panel (`hairtrigger.widgets.app.AppErrorPanel`) must catch both kinds
of callback a user's interaction runs: an ``on_click``-style callback (ipywidgets'
CallbackDispatcher) and a trait observer run while the kernel handles a widget message. The
served notebook is the app plus two controls whose callbacks fail on purpose.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest

from hairtrigger.commands.app import (
    VoilaServer,
    app_environment,
    app_notebook,
    free_port,
    voila_command,
    write_app_folder,
)

pytestmark = pytest.mark.browser

FAULTY_APP = """\
import ipywidgets as w
from hairtrigger.widgets.app import explorer_app

app = explorer_app()
button = w.Button(description="fail on click")
button.add_class("fault-button")

def fail_on_click(_button):
    raise RuntimeError("fault injected by a click")

button.on_click(fail_on_click)
slider = w.IntSlider(value=0, min=0, max=10, description="fail on change")
slider.add_class("fault-slider")

def fail_on_change(_change):
    raise ValueError("fault injected by an observer")

slider.observe(fail_on_change, "value")
w.VBox([app, button, slider])
"""


@pytest.fixture(scope="module")
def faulty_app(chromium_browser: Any, tmp_path_factory: pytest.TempPathFactory) -> Iterator[str]:
    folder = tmp_path_factory.mktemp("faulty-app")
    write_app_folder(folder)
    notebook = folder / "faulty.ipynb"
    content = app_notebook()
    content["cells"][0]["source"] = FAULTY_APP.splitlines(keepends=True)
    notebook.write_text(json.dumps(content), encoding="utf-8")
    env = app_environment(folder)
    with VoilaServer(voila_command(notebook, free_port()), env) as server:
        assert server.address is not None
        yield server.address


#: Time for Voila to start a kernel and run the notebook on a loaded machine (ms).
READY_MS = 240_000


@pytest.fixture
def faulty_page(live_page: Any, faulty_app: str) -> tuple[Any, Any]:
    page, log = live_page(faulty_app)
    page.wait_for_selector(".hairtrigger-explorer", timeout=READY_MS)
    page.wait_for_selector(".fault-button", timeout=READY_MS)
    return page, log


def _panel_text(page: Any) -> str:
    return page.locator(".hairtrigger-app-errors").first.inner_text()


def _wait_for_panel(page: Any, text: str) -> None:
    page.wait_for_function(
        "t => (document.querySelector('.hairtrigger-app-errors')?.innerText || '').includes(t)",
        arg=text,
    )


def test_a_failing_click_callback_is_shown_with_its_traceback(
    faulty_page: tuple[Any, Any], artifacts: Path
) -> None:
    page, _log = faulty_page
    assert _panel_text(page).strip() == ""  # nothing wrong yet: the panel is empty
    page.locator(".fault-button").first.click()
    _wait_for_panel(page, "RuntimeError: fault injected by a click")
    assert "Error in the app" in _panel_text(page)
    # the traceback is one click away, naming the failing function
    page.locator(".hairtrigger-app-errors summary").first.click()
    page.wait_for_function(
        "() => document.querySelector('.hairtrigger-app-errors pre').innerText"
        ".includes('fail_on_click')"
    )
    page.screenshot(path=str(artifacts / "app-callback-error.png"), full_page=True)


def test_a_failing_observer_is_shown(faulty_page: tuple[Any, Any]) -> None:
    page, _log = faulty_page
    handle = page.locator(".fault-slider .noUi-handle[role=slider]").first
    handle.focus()
    handle.press("ArrowRight")
    _wait_for_panel(page, "ValueError: fault injected by an observer")
    # the explorer itself still works after the error: its controls are still there
    assert page.locator(".hairtrigger-control-K1 input").count() >= 1
