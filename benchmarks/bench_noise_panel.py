"""Python-side cost of the noise panel: one slider move with every panel, with and without it.

Run: ``PYTHONPATH=src python benchmarks/bench_noise_panel.py [--repeats N]``

The explorer is built as the integrator wires it (the noise panel as a tab). Moves of the
activity-ratio slider run inside a running asyncio loop, as in a kernel, so debounced work
waits for the drag to pause. Baseline measured in the same run: the same explorer without the
noise panel. The debounced large-N recompute and one ensemble run are timed on their own.
Timings are CPU time of the kernel thread (medians), as in ``bench_widgets.py``.
"""

from __future__ import annotations

import argparse
import asyncio
import math
import os
import statistics
import time
import warnings

warnings.filterwarnings("ignore", message="metadata", category=DeprecationWarning)

import numpy as np  # noqa: E402

from hairtrigger.widgets import Explorer  # noqa: E402
from hairtrigger.widgets.panels.noise import POPULATION_LIVE_LIMIT, NoisePanel  # noqa: E402

BUDGET_MOVE_MS = 16.0


def moves_ms(explorer: Explorer, values: np.ndarray) -> float:
    """Median CPU milliseconds per activity-ratio slider move (in a running loop)."""
    slider = explorer.controls.controls["activity_ratio"].slider
    cpus: list[float] = []

    async def drag() -> None:
        for value in values:
            start = time.thread_time()
            slider.value = float(value)
            cpus.append(time.thread_time() - start)

    asyncio.run(drag())
    explorer.flush()
    return 1e3 * statistics.median(cpus)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=30, help="moves per figure")
    args = parser.parse_args(argv)
    values = np.geomspace(0.9, 1.1, args.repeats)

    print("hairtrigger noise-panel benchmark (Python side, CPU time, medians)")
    print(f"budget: one slider move with every panel refreshed <= {BUDGET_MOVE_MS:g} ms\n")
    ok = True
    for model in ("quasi_steady", "mass_action"):
        bare = Explorer()
        bare.state.model = model
        moves_ms(bare, values[:3])
        base = moves_ms(bare, values)
        explorer = Explorer()
        explorer.state.model = model
        panel = NoisePanel(explorer.state)
        explorer.add_tab("Noise", panel)
        print(f"[{model}] baseline (explorer without the noise panel): {base:6.2f} ms/move")
        for n in (100, 602, 1000, 5000, 20_000, 100_000, 1_000_000):
            panel.set_copy_number("molecules", n)
            panel.flush()
            moves_ms(explorer, values[:3])
            with_panel = moves_ms(explorer, values)
            ok &= with_panel <= BUDGET_MOVE_MS
            own = []
            for _ in range(len(values)):
                start = time.thread_time()
                panel.refresh()  # what the panel adds to one move (outside a loop: no debounce)
                own.append(time.thread_time() - start)
            panel_ms = 1e3 * statistics.median(own) if n <= POPULATION_LIVE_LIMIT else math.nan
            start = time.thread_time()
            panel._update_large_now()
            deferred = 1e3 * (time.thread_time() - start)
            print(
                f"  N = {n:>9}: move {with_panel:6.2f} ms ({with_panel - base:+6.2f} ms, "
                f"x{with_panel / base:4.2f} baseline), "
                f"{'within' if with_panel <= BUDGET_MOVE_MS else 'OVER'} budget; "
                f"panel refresh alone {panel_ms:5.2f} ms; "
                f"debounced p(n) + population {deferred:8.1f} ms"
            )
        print()

    explorer = Explorer()
    explorer.state.model = "quasi_steady"
    panel = NoisePanel(explorer.state, background=False)
    panel.trajectories_entry.value = 1000
    panel.set_copy_number("molecules", 2000)
    panel.t_end_entry.value = 5.0
    for model in ("quasi_steady", "mass_action"):
        explorer.state.model = model
        panel.simulate()  # warm-up (loads the compiled kernels)
        start = time.perf_counter()
        panel.simulate()
        wall = time.perf_counter() - start
        run = panel.outcome.ensemble  # type: ignore[union-attr]
        print(
            f"ensemble on demand ({model}, 1000 trajectories, N = 2000, t_end 5 s): "
            f"{wall:5.2f} s wall incl. drawing, {run.total_events:.3g} events, "
            f"{run.events_per_second:.3g} events/s in the core"
        )
    print(f"\nall slider moves within budget: {'yes' if ok else 'NO'}")
    if hasattr(os, "getloadavg"):
        print(f"load average during the run: {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
