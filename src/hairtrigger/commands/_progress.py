"""A small text progress bar on standard error for long commands."""

from __future__ import annotations

import sys
import time
from typing import TextIO


class TextProgress:
    """Callable ``progress(done, total)`` drawing one self-overwriting line.

    Parameters
    ----------
    label : str
        Shown before the bar.
    stream : file, optional
        Where to draw (standard error by default).
    interval : float
        Least time between redraws, s (the last update is always drawn).
    """

    def __init__(self, label: str, stream: TextIO | None = None, interval: float = 0.2) -> None:
        self.label = label
        self.stream = stream if stream is not None else sys.stderr
        self.interval = interval
        self._started = time.perf_counter()
        self._drawn = -1.0

    def __call__(self, done: int, total: int) -> None:
        now = time.perf_counter()
        if done < total and now - self._drawn < self.interval:
            return
        self._drawn = now
        width = 30
        fraction = done / total if total else 1.0
        bar = "#" * int(round(width * fraction))
        elapsed = now - self._started
        rate = done / elapsed if elapsed > 0 else 0.0
        self.stream.write(
            f"\r{self.label}: [{bar:<{width}}] {100 * fraction:5.1f}% {done}/{total}  {rate:,.0f}/s"
        )
        if done >= total:
            self.stream.write("\n")
        self.stream.flush()
