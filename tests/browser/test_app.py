"""End-to-end: the explorer served by ``hairtrigger app``, driven in headless Chromium.

Every test asserts on what the page shows (attributes, text, downloaded files), never on how
long something took; waits are for a page condition. Screenshots go to ``artifacts/``.
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path
from typing import Any

import pytest

from hairtrigger.io.snapshot import dumps_snapshot, load_snapshot, loads_snapshot

pytestmark = pytest.mark.browser

REPO_ROOT = Path(__file__).resolve().parents[2]

#: Colour of the readout line of the response curve (hairtrigger.widgets.panels.curve).
READOUT_RGB = "rgb(0, 114, 178)"

#: Console messages that are expected and harmless (WIDGETS.md §3, §4): the offline font
#: fetches of Voila's template and Voila 0.5's shared-module version warnings.
ALLOWED_CONSOLE = (
    "net::ERR_NAME_NOT_RESOLVED",
    "Unsatisfied version",
    "Federation Runtime",
    "No satisfying version",
)

JS_READOUT_D = f"""() => {{
    const lines = [...document.querySelectorAll('.hairtrigger-curve svg.svg-figure path.line')];
    const line = lines.find(p => getComputedStyle(p).stroke === '{READOUT_RGB}');
    return line ? line.getAttribute('d') : null;
}}"""

JS_OPERATING_POINT = f"""() => {{
    const dots = [...document.querySelectorAll('.hairtrigger-curve svg.svg-figure path.dot')];
    const dot = dots.find(d => getComputedStyle(d).fill === '{READOUT_RGB}');
    return dot ? dot.parentElement.getAttribute('transform') : null;
}}"""

JS_TIME_COURSE_D = f"""() => {{
    const sel = '.hairtrigger-timecourse svg.svg-figure path.line';
    const lines = [...document.querySelectorAll(sel)];
    const line = lines.find(p => getComputedStyle(p).stroke === '{READOUT_RGB}');
    return line ? line.getAttribute('d') : null;
}}"""

JS_MAP_GEOMETRY = """() => {
    const map = document.querySelector('.hairtrigger-map svg.svg-figure');
    const image = [...map.querySelectorAll('image')][0].getBoundingClientRect();
    const lines = [...map.querySelectorAll('path.line')].map(p => p.getBoundingClientRect());
    const vertical = lines.filter(r => r.width < 3 && r.height > 20);
    const horizontal = lines.filter(r => r.height < 3 && r.width > 20);
    return {
        image: [image.left, image.top, image.width, image.height],
        x: vertical.length ? vertical[0].left + vertical[0].width / 2 : null,
        y: horizontal.length ? horizontal[0].top + horizontal[0].height / 2 : null,
        d: [...map.querySelectorAll('path.line')].map(p => p.getAttribute('d')).join('|'),
    };
}"""


def _k_bounds() -> tuple[float, float]:
    from hairtrigger.widgets.state import PARAMETER_SPECS

    spec = PARAMETER_SPECS["K1"]
    return spec.low, spec.high


def entry(page: Any, name: str) -> str:
    return page.locator(f".hairtrigger-control-{name} input").first.input_value()


def type_entry(page: Any, name: str, text: str) -> None:
    box = page.locator(f".hairtrigger-control-{name} input").first
    box.fill(text)
    box.press("Enter")


def table_text(page: Any) -> str:
    return page.locator(".hairtrigger-table").first.inner_text()


def entries(page: Any) -> dict[str, str]:
    names = (
        "activity_ratio",
        "K1",
        "K2",
        "phosphatase_ratio",
        "substrate_total",
        "kinase_kcat",
        "phosphatase_kcat",
    )
    return {n: entry(page, n) for n in names}


def app_errors(page: Any) -> str:
    return page.locator(".hairtrigger-app-errors").first.inner_text().strip()


def open_snapshots_tab(page: Any) -> None:
    page.locator(".lm-TabBar-tab", has_text="Snapshots").first.click()
    page.wait_for_selector(".hairtrigger-snapshots a[download]", state="visible")


def upload(page: Any, file: Any) -> None:
    """Choose `file` (a path or a Playwright file payload) in the snapshot panel's upload."""
    with page.expect_file_chooser() as chooser:
        page.locator(".hairtrigger-snapshots .widget-upload").first.click()
    chooser.value.set_files(file)


def screenshot(page: Any, artifacts: Path, name: str) -> None:
    page.screenshot(path=str(artifacts / f"app-{name}.png"), full_page=True)


# --- tests --------------------------------------------------------------------------------------


def test_page_loads_without_registration_or_console_errors(
    app_page: tuple[Any, Any], app_server: Any, artifacts: Path
) -> None:
    page, log = app_page
    screenshot(page, artifacts, "loaded")
    if os.environ.get("HAIRTRIGGER_UPDATE_SCREENSHOT") == "1":  # refresh the README's picture
        page.locator(".hairtrigger-explorer").first.screenshot(
            path=str(REPO_ROOT / "docs" / "explorer.png")
        )
    text = page.locator("body").inner_text()
    assert "is not registered" not in text
    assert not any("is not registered" in message for _, message in log.console)
    assert log.errors(allowed=ALLOWED_CONSOLE) == []
    # the only failed requests are the template's font style sheets (offline)
    assert all("fontawesome" in url for url in log.blocked), log.blocked
    assert app_errors(page) == ""
    # the app started from the snapshot it was given
    start = load_snapshot(app_server.snapshot_path)
    assert float(entry(page, "K1")) == pytest.approx(start.cycle.K1, rel=1e-3)
    assert float(entry(page, "activity_ratio")) == pytest.approx(
        start.cycle.activity_ratio, rel=1e-3
    )


def _press(page: Any, name: str, key: str, times: int) -> None:
    handle = page.locator(f".hairtrigger-control-{name} .noUi-handle[role=slider]").first
    handle.focus()
    for _ in range(times):  # one step = 0.01 in log10 of the value
        handle.press(key)


def test_activity_ratio_slider_moves_the_operating_point_and_redraws(
    app_page: tuple[Any, Any],
) -> None:
    page, log = app_page
    point = page.evaluate(JS_OPERATING_POINT)
    course = page.evaluate(JS_TIME_COURSE_D)
    table = table_text(page)
    ratio = entry(page, "activity_ratio")
    _press(page, "activity_ratio", "ArrowRight", 20)  # about +58 % in r
    page.wait_for_function(f"() => ({JS_OPERATING_POINT})() !== {json.dumps(point)}")
    page.wait_for_function(f"() => ({JS_TIME_COURSE_D})() !== {json.dumps(course)}")
    page.wait_for_function(
        "old => document.querySelector('.hairtrigger-table').innerText !== old", arg=table
    )
    page.wait_for_function(
        "([sel, old]) => document.querySelector(sel).value !== old",
        arg=[".hairtrigger-control-activity_ratio input", ratio],
    )
    assert float(entry(page, "activity_ratio")) > float(ratio)
    # the operating point moved right (larger r) and up (more modified substrate)
    x0, y0 = _translate(point)
    x1, y1 = _translate(page.evaluate(JS_OPERATING_POINT))
    assert x1 > x0 and y1 < y0  # SVG y grows downwards
    assert app_errors(page) == ""
    assert log.errors(allowed=ALLOWED_CONSOLE) == []


def test_k1_slider_changes_the_response_curves_path(app_page: tuple[Any, Any]) -> None:
    page, _log = app_page
    before = page.evaluate(JS_READOUT_D)
    assert before and before.count("L") > 300
    _press(page, "K1", "ArrowRight", 30)  # K1 x 2: a less steep switch
    page.wait_for_function(f"() => ({JS_READOUT_D})() !== {json.dumps(before)}")
    assert page.evaluate(JS_READOUT_D) != before
    assert app_errors(page) == ""


def _translate(transform: str) -> tuple[float, float]:
    inner = transform[transform.index("(") + 1 : transform.index(")")]
    x, y = (float(v) for v in inner.replace(" ", ",").split(",") if v)
    return x, y


def test_typing_k1_moves_the_map_crosshair_and_changes_the_table(
    app_page: tuple[Any, Any], artifacts: Path
) -> None:
    page, _log = app_page
    before = page.evaluate(JS_MAP_GEOMETRY)
    table = table_text(page)
    type_entry(page, "K1", "0.5")
    page.wait_for_function(f"() => ({JS_MAP_GEOMETRY})().d !== {json.dumps(before['d'])}")
    page.wait_for_function(
        "old => document.querySelector('.hairtrigger-table').innerText !== old", arg=table
    )
    after = page.evaluate(JS_MAP_GEOMETRY)
    screenshot(page, artifacts, "k1-typed")
    # the vertical crosshair now sits at K1 = 0.5 on the map's log axis
    lo, hi = _k_bounds()
    left, _top, width, _height = after["image"]
    expected_x = left + width * (math.log10(0.5) - math.log10(lo)) / (math.log10(hi / lo))
    assert after["x"] == pytest.approx(expected_x, abs=2.0)
    assert after["y"] == pytest.approx(before["y"], abs=0.5)  # K2 untouched
    assert entry(page, "K1") == "0.5"
    assert table_text(page) != table
    assert app_errors(page) == ""


def _snap(value: float, cells: int, lo: float, hi: float) -> float:
    """Centre of the map cell containing `value` (log spacing), to 3 significant digits."""
    step = (math.log10(hi) - math.log10(lo)) / cells
    index = min(max(math.floor((math.log10(value) - math.log10(lo)) / step), 0), cells - 1)
    return float(f"{10 ** (math.log10(lo) + step * (index + 0.5)):.3g}")


def test_clicking_the_map_moves_the_k1_and_k2_sliders(app_page: tuple[Any, Any]) -> None:
    page, _log = app_page
    k1_handle = ".hairtrigger-control-K1 .noUi-handle[role=slider]"
    k2_handle = ".hairtrigger-control-K2 .noUi-handle[role=slider]"
    before = (
        page.get_attribute(k1_handle, "aria-valuenow"),
        page.get_attribute(k2_handle, "aria-valuenow"),
    )
    left, top, width, height = page.evaluate(JS_MAP_GEOMETRY)["image"]
    fx, fy = 0.30, 0.20  # 30 % from the left, 20 % from the top (the y axis points up)
    page.mouse.click(left + fx * width, top + fy * height)
    page.wait_for_function(
        "([a, b, old]) => document.querySelector(a).getAttribute('aria-valuenow') !== old[0]"
        " && document.querySelector(b).getAttribute('aria-valuenow') !== old[1]",
        arg=[k1_handle, k2_handle, list(before)],
    )
    lo, hi = _k_bounds()
    span = math.log10(hi / lo)
    clicked_k1 = 10 ** (math.log10(lo) + fx * span)
    clicked_k2 = 10 ** (math.log10(lo) + (1 - fy) * span)
    cells = 128  # the default map resolution
    k1, k2 = float(entry(page, "K1")), float(entry(page, "K2"))
    # Snapped to the clicked cell's centre; allow one cell for sub-pixel placement.
    cell = 10 ** (span / cells)
    assert _snap(clicked_k1, cells, lo, hi) / cell <= k1 <= _snap(clicked_k1, cells, lo, hi) * cell
    assert _snap(clicked_k2, cells, lo, hi) / cell <= k2 <= _snap(clicked_k2, cells, lo, hi) * cell
    # the sliders show the same values (their aria value is the log10 exponent)
    assert float(page.get_attribute(k1_handle, "aria-valuenow")) == pytest.approx(
        math.log10(k1), abs=0.011
    )
    assert float(page.get_attribute(k2_handle, "aria-valuenow")) == pytest.approx(
        math.log10(k2), abs=0.011
    )
    assert app_errors(page) == ""


def test_saved_snapshot_downloads_and_loads_back_to_the_same_state(
    app_page: tuple[Any, Any], tmp_path: Path, artifacts: Path
) -> None:
    page, _log = app_page
    type_entry(page, "K2", "0.2")  # a state different from the starting snapshot
    page.wait_for_function(
        "() => document.querySelector('.hairtrigger-control-K2 input').value === '0.2'"
    )
    open_snapshots_tab(page)
    link = page.locator(".hairtrigger-snapshots a[download]").first
    # the link is rebuilt shortly after a change; wait until it carries K2 = 0.2
    page.wait_for_function(
        """() => {
            const a = document.querySelector('.hairtrigger-snapshots a[download]');
            const text = atob(a.getAttribute('href').split(',')[1]);
            const s = JSON.parse(text);
            return Math.abs(s.cycle.phosphatase_km / s.cycle.substrate_total - 0.2) < 1e-9;
        }"""
    )
    saved_state = entries(page)
    with page.expect_download() as info:
        link.click()
    saved = tmp_path / "saved.json"
    info.value.save_as(saved)
    snapshot = loads_snapshot(saved.read_bytes())
    assert dumps_snapshot(snapshot) == saved.read_text(encoding="utf-8")
    c = snapshot.cycle
    assert f"{c.K1:.4g}" == saved_state["K1"]
    assert f"{c.K2:.4g}" == saved_state["K2"] == "0.2"
    assert f"{c.activity_ratio:.4g}" == saved_state["activity_ratio"]
    assert f"{c.substrate_total:.4g}" == saved_state["substrate_total"]
    # change the state, then upload the saved file: the page returns to the saved state
    type_entry(page, "K1", "2")
    page.wait_for_function(
        "() => document.querySelector('.hairtrigger-control-K1 input').value === '2'"
    )
    upload(page, str(saved))
    page.wait_for_function(
        "v => document.querySelector('.hairtrigger-control-K1 input').value === v",
        arg=saved_state["K1"],
    )
    assert entries(page) == saved_state
    screenshot(page, artifacts, "snapshot-reloaded")
    assert app_errors(page) == ""


def test_malformed_upload_shows_an_error_and_changes_nothing(
    app_page: tuple[Any, Any], artifacts: Path
) -> None:
    page, _log = app_page
    open_snapshots_tab(page)
    state = entries(page)
    table = table_text(page)
    curve = page.evaluate(JS_READOUT_D)
    upload(
        page,
        {
            "name": "broken.json",
            "mimeType": "application/json",
            "buffer": b'{"format": "hairtrigger.snapshot", "version": 1, "cycle": {',
        },
    )
    message = page.locator(".hairtrigger-snapshots .hairtrigger-message", has_text="Error")
    message.first.wait_for(state="visible")
    text = message.first.inner_text()
    assert "broken.json" in text and "JSON" in text
    screenshot(page, artifacts, "bad-upload")
    assert entries(page) == state
    assert table_text(page) == table
    assert page.evaluate(JS_READOUT_D) == curve
    assert app_errors(page) == ""


def test_every_tab_opens_with_its_figures_drawn(app_page: tuple[Any, Any], artifacts: Path) -> None:
    page, log = app_page
    tabs = page.locator(".hairtrigger-explorer .lm-TabBar-tab")
    titles = [tabs.nth(i).inner_text().strip() for i in range(tabs.count())]
    assert {"Readout", "Snapshots"} <= set(titles)
    for i, title in enumerate(titles):
        tabs.nth(i).click()
        # the chosen pane is shown, the others are not, and the figures in it have real size
        page.wait_for_function(
            """i => {
                const panes = [...document.querySelectorAll(
                    '.hairtrigger-explorer .widget-tab-contents > .lm-Widget')];
                const shown = panes.filter(p => getComputedStyle(p).visibility !== 'hidden'
                                                && !p.classList.contains('lm-mod-hidden'));
                return shown.length === 1 && shown[0] === panes[i]
                       && shown[0].getBoundingClientRect().height > 50;
            }""",
            arg=i,
        )
        sizes = page.evaluate(
            """i => [...document.querySelectorAll(
                    '.hairtrigger-explorer .widget-tab-contents > .lm-Widget')][i]
                    .querySelectorAll('svg.svg-figure')
                    .values().map(s => [s.getBoundingClientRect().width,
                                        s.getBoundingClientRect().height]).toArray()""",
            arg=i,
        )
        assert all(w > 100 and h > 100 for w, h in sizes), (title, sizes)
        screenshot(page, artifacts, f"tab-{title.lower().replace(' ', '-')}")
    assert log.errors(allowed=ALLOWED_CONSOLE) == []
    assert app_errors(page) == ""
