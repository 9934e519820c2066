"""Timing helper shared by the benchmarks (run from the repository root)."""

from __future__ import annotations

import time
from collections.abc import Callable


def best_of(fn: Callable[[], object], repeat: int = 30, number: int = 1) -> float:
    """Smallest wall time per call over `repeat` rounds of `number` calls, in seconds.

    One warm-up call runs first (compilation, caches), and is not counted.
    """
    fn()
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        for _ in range(number):
            fn()
        best = min(best, (time.perf_counter() - start) / number)
    return best
