"""Shared figure helpers for the plotting panels (axes with units, tidy log ticks)."""

from __future__ import annotations

import math
from typing import Any

import bqplot as bq
import numpy as np

#: Figure margins leaving room for axis labels (and a colour bar on the right where needed).
MARGIN = {"top": 16, "bottom": 52, "left": 62, "right": 16}


def log_ticks(low: float, high: float, max_ticks: int = 7) -> list[float]:
    """Tick values for a log axis over [low, high]: decades, or 1-2-5 steps when short.

    bqplot labels 1, 2 and 5 in every decade on short log axes and the labels collide, so
    panels pass explicit tick values.
    """
    if not (low > 0 and high > low):
        return []
    lo, hi = math.log10(low), math.log10(high)
    decades = [10.0**k for k in range(math.ceil(lo - 1e-9), math.floor(hi + 1e-9) + 1)]
    if hi - lo > 12:
        step = math.ceil((hi - lo) / max_ticks)
        decades = [d for d in decades if round(math.log10(d)) % step == 0]
    if len(decades) >= 3:
        while len(decades) > max_ticks:
            decades = decades[::2]
        return decades
    ticks: list[float] = []
    for k in range(math.floor(lo) - 1, math.ceil(hi) + 1):
        for m in (1.0, 2.0, 5.0):
            v = m * 10.0**k
            if low * (1 - 1e-9) <= v <= high * (1 + 1e-9):
                ticks.append(v)
    if len(ticks) >= 2:
        while len(ticks) > max_ticks:
            ticks = ticks[::2]
        return ticks
    # Less than a 1-2-5 step inside: evenly spaced ticks in log space, rounded.
    values = np.logspace(lo, hi, 4)
    return [float(f"{v:.2g}") for v in values]


def axis(scale: bq.Scale, label: str, side: str, **kwargs: Any) -> bq.Axis:
    """An axis with a label; vertical axes use ``side`` (``orientation`` warns in bqplot 0.13)."""
    options: dict[str, Any] = {"scale": scale, "label": label, "grid_lines": "none"}
    if side in ("left", "right"):
        options.update(side=side, label_offset="44px")
    else:
        options.update(side=side, label_offset="36px")
    options.update(kwargs)
    return bq.Axis(**options)


def figure(
    marks: list[bq.Mark],
    axes: list[bq.Axis],
    width: str,
    height: str,
    margin: dict[str, int] | None = None,
    **kwargs: Any,
) -> bq.Figure:
    """A figure with no animation (transitions pile up during drags) and fixed size."""
    from ipywidgets import Layout

    return bq.Figure(
        marks=marks,
        axes=axes,
        fig_margin=dict(margin or MARGIN),
        animation_duration=0,
        padding_x=0.0,
        padding_y=0.0,
        layout=Layout(width=width, height=height, min_width=width),
        **kwargs,
    )
