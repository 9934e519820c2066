"""Python-side cost of the explorer: one slider move with every panel refreshed, and one map.

Run: ``PYTHONPATH=src python benchmarks/bench_widgets.py [--repeats N]``

Moves run inside a running asyncio loop, as in a kernel, so debounced work (the steepness map,
the download link and the snapshot comparison) waits for the drag to pause, exactly as it does
in the browser; the map recompute is timed on its own. Baselines measured in the same run:

* the bare core work of a move (``evaluate`` plus the step-response time course): the ratio
  shows what the widget layer adds;
* the bare ``steepness_map`` call: the ratio shows what colouring and PNG encoding add;
* a stock ``bqplot.HeatMap`` colour update of the same grid (float32): Python-side cost and
  bytes sent, for comparison with the pre-coloured PNG image.

Comm messages are counted by wrapping ``Widget._send`` (no kernel needed).
"""

from __future__ import annotations

import argparse
import asyncio
import os
import statistics
import sys
import time
import warnings
from collections.abc import Callable
from typing import Any

warnings.filterwarnings("ignore", message="metadata", category=DeprecationWarning)

import bqplot as bq  # noqa: E402
import ipywidgets  # noqa: E402
import numpy as np  # noqa: E402

from hairtrigger.core import evaluate, steepness_map  # noqa: E402
from hairtrigger.widgets import Explorer  # noqa: E402
from hairtrigger.widgets.state import compute_time_course  # noqa: E402

BUDGET_MOVE_MS = 16.0

_SENT: list[tuple[Any, dict[str, Any], list[Any]]] = []
_original_send = ipywidgets.Widget._send


def _recording_send(self: Any, msg: dict[str, Any], buffers: list[Any] | None = None) -> None:
    _SENT.append((self, msg, list(buffers or [])))
    _original_send(self, msg, buffers)


ipywidgets.Widget._send = _recording_send  # type: ignore[method-assign]


def _bytes(buffers: list[Any]) -> int:
    return sum(memoryview(b).nbytes for b in buffers)


def median_ms(samples: list[float]) -> float:
    return 1e3 * statistics.median(samples)


def time_calls(function: Callable[[], Any], repeats: int, cpu: bool = False) -> list[float]:
    """Seconds per call (wall clock, or CPU time of this thread with ``cpu=True``)."""
    clock = time.thread_time if cpu else time.perf_counter
    function()  # warm-up (JIT compilation, caches)
    out = []
    for _ in range(repeats):
        start = clock()
        function()
        out.append(clock() - start)
    return out


def time_interleaved(
    first: Callable[[], Any], second: Callable[[], Any], repeats: int
) -> tuple[list[float], list[float]]:
    """Wall seconds per call of two functions, called alternately.

    Alternating keeps a change in machine load (other processes on a shared machine) from
    landing on one side of the ratio only.
    """
    first(), second()  # warm-up
    a: list[float] = []
    b: list[float] = []
    for _ in range(repeats):
        for function, out in ((first, a), (second, b)):
            start = time.perf_counter()
            function()
            out.append(time.perf_counter() - start)
    return a, b


def bench_moves(
    explorer: Explorer, name: str, values: np.ndarray
) -> tuple[list[float], list[float], float]:
    """Time each slider move in a running loop.

    Returns wall seconds and CPU seconds (this thread) per move, and comm messages per move.
    CPU time is what the move costs; wall time also contains waiting for a busy machine.
    """
    slider = explorer.controls.controls[name].slider
    walls: list[float] = []
    cpus: list[float] = []

    async def drag() -> None:
        for value in values:
            start, cpu = time.perf_counter(), time.thread_time()
            slider.value = float(value)
            walls.append(time.perf_counter() - start)
            cpus.append(time.thread_time() - cpu)

    _SENT.clear()
    asyncio.run(drag())
    messages = sum(1 for _, m, _ in _SENT if m.get("method") == "update") / len(values)
    explorer.flush()
    return walls, cpus, messages


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=40, help="moves or maps per figure")
    args = parser.parse_args(argv)
    n = args.repeats

    print("hairtrigger widgets benchmark (Python side; medians)")
    print(
        f"budget: one slider move with every panel refreshed <= {BUDGET_MOVE_MS:g} ms "
        "(CPU time of the kernel thread)\n"
    )
    explorer = Explorer()
    state = explorer.state
    ok = True
    for model in ("quasi_steady", "mass_action"):
        state.model = model
        explorer.flush()
        cycle = state.cycle
        core = time_calls(
            lambda: (
                evaluate(cycle, model, state.readout),
                compute_time_course(cycle, model, state.readout, state.step_activity_ratio),
            ),
            n,
            cpu=True,
        )
        print(f"[{model}]")
        print(
            f"  baseline: core work of one move (evaluate + time course), CPU "
            f"{median_ms(core):6.2f} ms"
        )
        sweeps = {
            "activity_ratio": np.geomspace(0.9, 1.1, n),
            "K1": np.geomspace(0.03, 0.08, n),
            "phosphatase_ratio": np.geomspace(0.015, 0.03, n),
        }
        for name, values in sweeps.items():
            bench_moves(explorer, name, values[:3])  # warm-up
            walls, cpus, messages = bench_moves(explorer, name, values)
            wall, cpu = median_ms(walls), median_ms(cpus)
            ok &= cpu <= BUDGET_MOVE_MS
            print(
                f"  move {name:<18} CPU {cpu:6.2f} ms, wall {wall:6.2f} ms "
                f"(p90 {1e3 * float(np.percentile(walls, 90)):6.2f}), "
                f"{cpu / median_ms(core):4.1f}x core, {messages:4.1f} messages/move, "
                f"{'within' if cpu <= BUDGET_MOVE_MS else 'OVER'} budget"
            )
        print()

    print("steepness map recompute (compute + colour + PNG + send), wall time")
    panel = explorer.steepness
    for model in ("quasi_steady", "mass_action"):
        for measure in ("hill_coefficient", "peak_sensitivity"):
            for cells in (128, 256):
                with state.batch():
                    state.model = model
                    state.map_measure = measure
                    state.map_resolution = cells
                explorer.flush()
                cycle = state.cycle
                k = panel.current.k1 * cycle.substrate_total
                reps = max(3, n // 8)
                bare, full = time_interleaved(
                    lambda: steepness_map(
                        cycle, k[None, :], k[:, None], model, state.readout, measure
                    ),
                    panel._recompute_now,
                    reps,
                )
                # Messages and bytes of a refresh that changes the picture (a new outline).
                _SENT.clear()
                for target in (3.0, 5.0):
                    state.map_target = target
                sent = [
                    m
                    for m in _SENT
                    if m[1].get("method") == "update"
                    and m[0] in (panel.image_mark, *panel._buffers)
                ]
                size = sum(_bytes(b) for _, _, b in sent) / 2
                print(
                    f"  {model:<12} {measure:<17} {cells}²: {median_ms(full):7.2f} ms "
                    f"(core map {median_ms(bare):7.2f} ms, "
                    f"x{median_ms(full) / median_ms(bare):5.2f}), {len(sent) / 2:3.1f} "
                    f"image messages/refresh, {size / 1024:5.1f} KiB PNG"
                )
                state.map_target = 4.0

    print("\nbaseline: stock bqplot HeatMap colour update (float32), same grids")
    for cells in (128, 256):
        grid = np.geomspace(1e-4, 1e2, cells)
        heat = bq.HeatMap(
            x=grid,
            y=grid,
            color=np.zeros((cells, cells), np.float32),
            scales={
                "x": bq.LogScale(),
                "y": bq.LogScale(),
                "color": bq.ColorScale(scheme="viridis"),
            },
        )
        rng = np.random.default_rng(0)
        colours = [rng.random((cells, cells)).astype(np.float32) for _ in range(n // 4 + 1)]
        it = iter(colours)
        _SENT.clear()
        times = time_calls(lambda: setattr(heat, "color", next(it)), n // 4)
        size = sum(_bytes(b) for w, m, b in _SENT if w is heat) / max(1, len(_SENT))
        print(
            f"  HeatMap {cells}²: {median_ms(times):6.2f} ms Python side, {size / 1024:6.1f} KiB "
            "per update (browser redraw ≈ 260 ms at 256², WIDGETS.md)"
        )
    print(f"\nall slider moves within budget (CPU time): {'yes' if ok else 'NO'}")
    if hasattr(os, "getloadavg"):
        print(f"load average during the run: {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    return 0


if __name__ == "__main__":
    sys.exit(main())
