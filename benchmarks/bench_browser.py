"""Browser latency of the explorer: slider -> redrawn curve, and steepness-map refresh.

Run: ``PYTHONPATH=src python benchmarks/bench_browser.py [--moves N]``

Everything is measured in headless Chromium (Debian's, ``HAIRTRIGGER_CHROMIUM`` or
``/usr/bin/chromium``) against Voila on 127.0.0.1, poll-free: a ``MutationObserver`` on the
drawn element records ``performance.now()`` at its first change after a key press dispatched
on the focused control. Each move waits for the page to settle before the next.

- baseline: a one-line bqplot figure driven by a trivial model (y = a·x), the floor the kernel
  round trip and redraw impose, measured in the same run;
- curve: the activity-ratio slider -> the response curve's path ``d`` (median, p90, over
  ``--moves`` moves, at least 30);
- map: a parameter entry that changes the map -> the map image's ``href``, at 128² and 256²
  (the panel's debounce wait, if any, is reported separately and subtracted).

Budgets (DESIGN.md §5): curve median <= 100 ms; map at 256² <= 150 ms.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import sys
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from hairtrigger.commands.app import (
    KERNEL_NAME,
    VoilaServer,
    app_environment,
    free_port,
    voila_command,
    write_app_folder,
)

CURVE_BUDGET_MS = 100.0
MAP_BUDGET_MS = 150.0
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

BASELINE_SOURCE = """\
import numpy as np, bqplot as bq, ipywidgets as w
x = np.linspace(0.0, 1.0, 400)
line = bq.Lines(x=x, y=x, scales={"x": bq.LinearScale(), "y": bq.LinearScale(min=0, max=10)})
fig = bq.Figure(marks=[line], axes=[], animation_duration=0)
slider = w.FloatSlider(value=1.0, min=0.0, max=10.0, step=0.01)
slider.observe(lambda change: setattr(line, "y", x * change["new"]), "value")
w.VBox([slider, fig])
"""

# In the page: time from a key press on `handle` to the first change of `attr` on the element
# returned by `finder` (JS source of a function), then (for images) until the new picture is
# decoded, plus one animation frame. Moves are `settleMs` apart so they do not overlap.
MEASURE_JS = """
async ([handleSel, finderSrc, attr, key, moves, settleMs, timeoutMs, decode]) => {
  const find = new Function('return (' + finderSrc + ')();');
  const sleep = (ms) => new Promise(r => setTimeout(r, ms));
  const frame = () => new Promise(r => requestAnimationFrame(() => r()));
  const out = [];
  for (let i = 0; i < moves; i++) {
    const handle = document.querySelector(handleSel);
    const target = find();
    if (!handle || !target)
      throw new Error('not found: ' + (!handle ? handleSel : finderSrc));
    handle.focus();
    const k = (typeof key === 'string') ? key : key[i % key.length];
    const before = target.getAttribute(attr);
    const changed = new Promise((resolve) => {
      const obs = new MutationObserver(() => {
        if (target.getAttribute(attr) !== before) { obs.disconnect(); resolve(true); }
      });
      obs.observe(target, {attributes: true, attributeFilter: [attr]});
      setTimeout(() => { obs.disconnect(); resolve(false); }, timeoutMs);
    });
    const t0 = performance.now();
    handle.dispatchEvent(
      new KeyboardEvent('keydown', {key: k, code: k, bubbles: true, cancelable: true}));
    const ok = await changed;
    if (ok && decode) {
      const img = new Image();
      img.src = target.getAttribute(attr);
      await img.decode();
    }
    if (ok) await frame();
    out.push(ok ? performance.now() - t0 : null);
    await sleep(settleMs);
  }
  return out;
}
"""

READOUT_RGB = "rgb(0, 114, 178)"  # the readout colour of the explorer's curves

FIND_BASELINE_LINE = "() => document.querySelector('svg.svg-figure path.line')"
FIND_CURVE_LINE = f"""() => [...document.querySelectorAll(
    '.hairtrigger-curve svg.svg-figure path.line')]
    .find(p => getComputedStyle(p).stroke === '{READOUT_RGB}')"""
FIND_OPERATING_POINT = f"""() => {{
    const dot = [...document.querySelectorAll('.hairtrigger-curve svg.svg-figure path.dot')]
        .find(d => getComputedStyle(d).fill === '{READOUT_RGB}');
    return dot ? dot.parentElement : null; }}"""
FIND_TIME_COURSE = f"""() => [...document.querySelectorAll(
    '.hairtrigger-timecourse svg.svg-figure path.line')]
    .find(p => getComputedStyle(p).stroke === '{READOUT_RGB}')"""
FIND_MAP_IMAGE = "() => document.querySelector('.hairtrigger-map svg.svg-figure image')"


def percentile(values: list[float], q: float) -> float:
    ordered = sorted(values)
    pos = (len(ordered) - 1) * q
    lo, hi = int(pos), min(int(pos) + 1, len(ordered) - 1)
    return ordered[lo] + (ordered[hi] - ordered[lo]) * (pos - lo)


def summary(name: str, values: list[float | None]) -> dict[str, Any]:
    good = [v for v in values if v is not None]
    missed = len(values) - len(good)
    if not good:
        return {"name": name, "n": 0, "missed": missed}
    return {
        "name": name,
        "n": len(good),
        "missed": missed,
        "median": statistics.median(good),
        "p90": percentile(good, 0.9),
        "min": min(good),
        "max": max(good),
    }


def notebook_json(source: str) -> str:
    return json.dumps(
        {
            "cells": [
                {
                    "cell_type": "code",
                    "execution_count": None,
                    "id": "bench",
                    "metadata": {},
                    "outputs": [],
                    "source": source.splitlines(keepends=True),
                }
            ],
            "metadata": {
                "kernelspec": {
                    "display_name": "hairtrigger",
                    "language": "python",
                    "name": KERNEL_NAME,
                }
            },
            "nbformat": 4,
            "nbformat_minor": 5,
        }
    )


@contextmanager
def served(source: str | None, env_extra: dict[str, str] | None = None) -> Iterator[str]:
    """Serve the app notebook (source None) or a notebook of `source`; yield its address."""
    with tempfile.TemporaryDirectory(prefix="hairtrigger-bench-") as tmp:
        folder = Path(tmp)
        notebook = write_app_folder(folder)
        if source is not None:
            notebook = folder / "bench.ipynb"
            notebook.write_text(notebook_json(source), encoding="utf-8")
        env = app_environment(folder)
        env.update(env_extra or {})
        with VoilaServer(voila_command(notebook, free_port()), env) as server:
            assert server.address is not None
            yield server.address


@contextmanager
def browser() -> Iterator[Any]:
    from playwright.sync_api import sync_playwright

    path = os.environ.get("HAIRTRIGGER_CHROMIUM", "/usr/bin/chromium")
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=path, headless=True, args=LAUNCH_ARGS)
        try:
            yield b
        finally:
            b.close()


def measure(
    page: Any,
    handle: str,
    finder: str,
    attr: str,
    key: str | list[str],
    moves: int,
    settle_ms: int = 150,
    timeout_ms: int = 5000,
    decode: bool = False,
) -> list[float | None]:
    """Milliseconds from each key press to the redraw (None where nothing changed)."""
    args = [handle, finder, attr, key, moves, settle_ms, timeout_ms, decode]
    return page.evaluate(MEASURE_JS, args)


def bench_baseline(b: Any, moves: int) -> dict[str, Any]:
    with served(BASELINE_SOURCE) as url:
        page = b.new_page()
        page.goto(url)
        page.wait_for_selector("svg.svg-figure path.line", timeout=60000)
        page.wait_for_selector(".widget-slider .noUi-handle[role=slider]")
        values = measure(
            page,
            ".widget-slider .noUi-handle[role=slider]",
            FIND_BASELINE_LINE,
            "d",
            "ArrowRight",
            moves,
        )
        page.close()
    return summary("baseline: trivial one-line figure", values)


def handle_of(name: str) -> str:
    return f".hairtrigger-control-{name} .noUi-handle[role=slider]"


def choose_resolution(page: Any, cells: int) -> None:
    """Pick the map resolution in the map panel and wait for the map to be redrawn."""
    select = page.locator(".hairtrigger-map select").nth(1)
    label = f"{cells}²"
    current = select.evaluate("s => s.options[s.selectedIndex].text")
    before = page.locator(".hairtrigger-map svg.svg-figure image").first.get_attribute("href")
    if current != label:
        select.select_option(label=label)
        page.wait_for_function(
            "old => document.querySelector('.hairtrigger-map svg.svg-figure image')"
            ".getAttribute('href') !== old",
            arg=before,
            timeout=120000,
        )
    # The map is one pre-coloured PNG of cells x cells pixels: check the size really changed.
    size = page.evaluate(
        """async () => {
            const el = document.querySelector('.hairtrigger-map svg.svg-figure image');
            const img = new Image();
            img.src = el.getAttribute('href');
            await img.decode();
            return [img.naturalWidth, img.naturalHeight];
        }"""
    )
    if size != [cells, cells]:
        raise RuntimeError(f"map image is {size[0]}x{size[1]} pixels, expected {cells}x{cells}")
    print(f"map image at {label}: {size[0]}x{size[1]} pixels", flush=True)


def bench_explorer(b: Any, moves: int, map_moves: int) -> list[dict[str, Any]]:
    from hairtrigger.widgets.panels.steepness import MAP_DEBOUNCE_SECONDS

    debounce_ms = 1000.0 * MAP_DEBOUNCE_SECONDS
    rows = []
    with served(None, {"HAIRTRIGGER_SNAPSHOT": ""}) as url:
        page = b.new_page(viewport={"width": 1300, "height": 1000})
        page.goto(url)
        page.wait_for_selector(".hairtrigger-explorer", timeout=90000)
        page.wait_for_function(f"() => !!({FIND_OPERATING_POINT})()", timeout=60000)
        page.wait_for_selector(".hairtrigger-map svg.svg-figure image", timeout=60000)
        page.wait_for_timeout(1500)  # let the first map and link debounces pass
        # r back and forth around the operating point, so it stays in its window
        swing = ["ArrowRight"] * 5 + ["ArrowLeft"] * 5
        rows.append(
            summary(
                "activity-ratio slider -> operating point moved",
                measure(
                    page,
                    handle_of("activity_ratio"),
                    FIND_OPERATING_POINT,
                    "transform",
                    swing,
                    moves,
                ),
            )
        )
        rows.append(
            summary(
                "activity-ratio slider -> time course redrawn",
                measure(page, handle_of("activity_ratio"), FIND_TIME_COURSE, "d", swing, moves),
            )
        )
        rows.append(
            summary(
                "K1 slider -> response curve path redrawn",
                measure(page, handle_of("K1"), FIND_CURVE_LINE, "d", swing, moves, settle_ms=350),
            )
        )
        for cells in (128, 256):
            choose_resolution(page, cells)
            page.wait_for_timeout(500)
            raw = measure(
                page,
                handle_of("phosphatase_ratio"),
                FIND_MAP_IMAGE,
                "href",
                swing,
                map_moves,
                settle_ms=int(debounce_ms) + 400,
                decode=True,
            )
            total = summary(f"map {cells}^2: E2/W slider -> image shown (incl. debounce)", raw)
            rows.append(total)
            net = [None if v is None else v - debounce_ms for v in raw]
            rows.append(
                summary(f"map {cells}^2 refresh (minus {debounce_ms:.0f} ms debounce)", net)
            )
        page.close()
    return rows


def report(rows: list[dict[str, Any]], baseline: dict[str, Any]) -> None:
    base = baseline.get("median")
    print(
        f"{'measurement':56s} {'n':>4s} {'median':>8s} {'p90':>8s} {'min':>7s} {'max':>7s}"
        f" {'x floor':>8s}"
    )
    for r in [baseline, *rows]:
        if not r.get("n"):
            print(f"{r['name']:56s} no change observed ({r['missed']} misses)")
            continue
        ratio = f"{r['median'] / base:8.1f}" if base else "       -"
        print(
            f"{r['name']:56s} {r['n']:4d} {r['median']:8.1f} {r['p90']:8.1f} {r['min']:7.1f}"
            f" {r['max']:7.1f} {ratio}" + (f"  ({r['missed']} missed)" if r["missed"] else "")
        )


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--moves", type=int, default=40, help="slider moves (>= 30)")
    parser.add_argument("--map-moves", type=int, default=20, help="map refreshes per size")
    args = parser.parse_args(argv)
    moves = max(30, args.moves)
    with browser() as b:
        baseline = bench_baseline(b, moves)
        rows = bench_explorer(b, moves, max(5, args.map_moves))
    report(rows, baseline)
    curve = next(r for r in rows if r["name"].startswith("K1 slider"))
    point = next(r for r in rows if r["name"].startswith("activity-ratio slider -> operating"))
    map256 = next(r for r in rows if r["name"].startswith("map 256^2 refresh"))
    print()
    for label, row, budget in (
        ("curve (K1 -> path)", curve, CURVE_BUDGET_MS),
        ("curve (r -> operating point)", point, CURVE_BUDGET_MS),
        ("map 256^2 refresh", map256, MAP_BUDGET_MS),
    ):
        if not row.get("n"):
            print(f"budget {label}: NOT MEASURED")
            continue
        verdict = "within" if row["median"] <= budget else "OVER"
        print(
            f"budget {label}: median {row['median']:.1f} ms vs {budget:.0f} ms -> {verdict}"
            f" budget (p90 {row['p90']:.1f} ms)"
        )
    return 0


if __name__ == "__main__":
    sys.exit(main())
