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

# In the page: time from a key press on `handle` to the first mutation of `target`.
MEASURE_JS = """
async ([handleSel, targetSel, attr, key, moves, settleMs, timeoutMs]) => {
  const sleep = (ms) => new Promise(r => setTimeout(r, ms));
  const frame = () => new Promise(r => requestAnimationFrame(() => r()));
  const out = [];
  for (let i = 0; i < moves; i++) {
    const handle = document.querySelector(handleSel);
    const target = document.querySelector(targetSel);
    if (!handle || !target)
      throw new Error('selector not found: ' + (!handle ? handleSel : targetSel));
    handle.focus();
    const k = (typeof key === 'string') ? key : key[i % key.length];
    const before = target.getAttribute(attr);
    const changed = new Promise((resolve) => {
      const obs = new MutationObserver(() => {
        if (target.getAttribute(attr) !== before) { obs.disconnect(); resolve(performance.now()); }
      });
      obs.observe(target, {attributes: true, attributeFilter: [attr]});
      setTimeout(() => { obs.disconnect(); resolve(null); }, timeoutMs);
    });
    const t0 = performance.now();
    handle.dispatchEvent(
      new KeyboardEvent('keydown', {key: k, code: k, bubbles: true, cancelable: true}));
    const t1 = await changed;
    out.push(t1 === null ? null : t1 - t0);
    await frame(); await sleep(settleMs);
  }
  return out;
}
"""


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
    target: str,
    attr: str,
    key: str | list[str],
    moves: int,
    settle_ms: int = 120,
    timeout_ms: int = 5000,
) -> list[float | None]:
    return page.evaluate(MEASURE_JS, [handle, target, attr, key, moves, settle_ms, timeout_ms])


def bench_baseline(b: Any, moves: int) -> dict[str, Any]:
    with served(BASELINE_SOURCE) as url:
        page = b.new_page()
        page.goto(url)
        page.wait_for_selector("svg.svg-figure path.line", timeout=60000)
        page.wait_for_selector(".widget-slider .noUi-handle[role=slider]")
        values = measure(
            page,
            ".widget-slider .noUi-handle[role=slider]",
            "svg.svg-figure path.line",
            "d",
            "ArrowRight",
            moves,
        )
        page.close()
    return summary("baseline: trivial one-line figure", values)


def report(rows: list[dict[str, Any]], baseline: dict[str, Any]) -> None:
    base = baseline.get("median")
    print(
        f"{'measurement':48s} {'n':>4s} {'median':>8s} {'p90':>8s} {'min':>7s} {'max':>7s}"
        f" {'x floor':>8s}"
    )
    for r in [baseline, *rows]:
        if not r.get("n"):
            print(f"{r['name']:48s} no change observed ({r['missed']} misses)")
            continue
        ratio = f"{r['median'] / base:8.1f}" if base else "       -"
        print(
            f"{r['name']:48s} {r['n']:4d} {r['median']:8.1f} {r['p90']:8.1f} {r['min']:7.1f}"
            f" {r['max']:7.1f} {ratio}" + (f"  ({r['missed']} missed)" if r["missed"] else "")
        )


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--moves", type=int, default=40, help="slider moves (>= 30)")
    args = parser.parse_args(argv)
    moves = max(30, args.moves)
    with browser() as b:
        baseline = bench_baseline(b, moves)
        rows: list[dict[str, Any]] = []
    report(rows, baseline)
    return 0


if __name__ == "__main__":
    sys.exit(main())
