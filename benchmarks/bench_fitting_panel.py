"""Cost of the fitting panel: fits via the panel against bare core calls, redraw, responsiveness.

Run: ``PYTHONPATH=src python benchmarks/bench_fitting_panel.py [--repeats N]``

Data: the bundled *invented* titration (36 points, doses in nM). Baselines measured in the same
run:

* each model fitted by a bare ``fit_model`` call (profile intervals, as the panel does): the
  ratio shows what the panel adds around the core;
* the whole batch run inline (blocking) against the same batch in the panel's worker thread
  inside a running asyncio loop (as in a kernel): while the thread fits, a 10 ms timer on the
  loop keeps ticking, and the longest gap between ticks is how long the kernel could not answer
  (inline, that gap is the whole batch).

Comm messages and bytes of the redraw after a fit are counted by wrapping ``Widget._send``.
"""

from __future__ import annotations

import argparse
import asyncio
import statistics
import time
import warnings
from typing import Any

warnings.filterwarnings("ignore", message="metadata", category=DeprecationWarning)

import ipywidgets  # noqa: E402

from hairtrigger.core.fitting import fit_model  # noqa: E402
from hairtrigger.io.data import example_data_path, parse_data  # noqa: E402
from hairtrigger.widgets import ExplorerState  # noqa: E402
from hairtrigger.widgets.panels import FittingPanel  # noqa: E402

MODELS = ("michaelian", "hill", "quasi_steady", "mass_action")

_SENT: list[tuple[Any, dict[str, Any], list[Any]]] = []
_original_send = ipywidgets.Widget._send


def _recording_send(self: Any, msg: dict[str, Any], buffers: list[Any] | None = None) -> None:
    _SENT.append((self, msg, list(buffers or [])))
    _original_send(self, msg, buffers)


ipywidgets.Widget._send = _recording_send  # type: ignore[method-assign]


def median_ms(samples: list[float]) -> float:
    return 1e3 * statistics.median(samples)


def bench_models(repeats: int) -> None:
    text = example_data_path("invented_kinase_titration").read_text(encoding="utf-8")
    data = parse_data(text, source="example")
    state = ExplorerState()
    panel = FittingPanel(state, background=False)
    panel.load_text(text, source="example")
    print(f"{'model':<14}{'core fit_model':>16}{'through panel':>16}{'ratio':>8}")
    for model in MODELS:
        for name, box in panel.model_boxes.items():
            box.value = name == model
        core, through = [], []
        fit_model(data, model, cycle=state.cycle, readout=state.readout)  # warm-up
        for _ in range(repeats):
            start = time.perf_counter()
            fit_model(data, model, cycle=state.cycle, readout=state.readout, input_kind="amount")
            core.append(time.perf_counter() - start)
            start = time.perf_counter()
            panel.fit()
            through.append(time.perf_counter() - start)
        c, t = median_ms(core), median_ms(through)
        print(f"{model:<14}{c:>13.1f} ms{t:>13.1f} ms{t / c:>8.2f}")

    # Two fitted batches (the example, and its readouts scaled by 1.05) drawn alternately, so
    # every curve really changes (equal arrays are not sent again).
    for box in panel.model_boxes.values():
        box.value = True
    outcomes = []
    for factor in (1.0, 1.05):
        lines = text.splitlines()
        header = next(i for i, ln in enumerate(lines) if ln.startswith("input"))
        rows = [ln.split(",") for ln in lines[header + 1 :]]
        scaled = "\n".join(
            lines[: header + 1] + [f"{r[0]},{float(r[1]) * factor:g},{r[2]}" for r in rows]
        )
        panel.load_text(scaled, source="example")
        panel.fit()
        assert panel.outcome is not None
        outcomes.append(panel.outcome)
    draws = []
    for i in range(2 * repeats):
        panel.outcome = outcomes[i % 2]
        _SENT.clear()
        start = time.perf_counter()
        panel._draw()
        panel._refresh_results()
        draws.append(time.perf_counter() - start)
    updates = [m for m in _SENT if m[1].get("method") == "update"]
    size = sum(memoryview(b).nbytes for _, _, bufs in updates for b in bufs)
    print(
        f"redraw after a 4-model fit (Python side): {median_ms(draws):.1f} ms, "
        f"{len(updates)} messages, {size / 1024:.1f} KiB of array buffers"
    )


def bench_responsiveness() -> None:
    text = example_data_path("invented_kinase_titration").read_text(encoding="utf-8")
    state = ExplorerState()

    def batch(background: bool) -> tuple[float, float]:
        async def scenario() -> tuple[float, float]:
            panel = FittingPanel(state, background=background)
            panel.load_text(text, source="example")
            for box in panel.model_boxes.values():
                box.value = True
            gaps: list[float] = []
            stop = False

            async def ticker() -> None:
                last = time.perf_counter()
                while not stop:
                    await asyncio.sleep(0.01)
                    now = time.perf_counter()
                    gaps.append(now - last)
                    last = now

            task = asyncio.create_task(ticker())
            await asyncio.sleep(0.03)
            start = time.perf_counter()
            panel.fit()
            while panel.outcome is None:
                await asyncio.sleep(0.005)
            elapsed = time.perf_counter() - start
            stop = True
            await task
            return elapsed, max(gaps)

        return asyncio.run(scenario())

    inline_total, inline_gap = batch(False)
    thread_total, thread_gap = batch(True)
    print(
        f"4-model batch inline:        {inline_total:.2f} s, longest loop stall "
        f"{1e3 * inline_gap:.0f} ms"
    )
    print(
        f"4-model batch worker thread: {thread_total:.2f} s, longest loop stall "
        f"{1e3 * thread_gap:.0f} ms  (stall ratio inline/thread "
        f"{inline_gap / thread_gap:.1f}x)"
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args()
    bench_models(args.repeats)
    bench_responsiveness()


if __name__ == "__main__":
    main()
