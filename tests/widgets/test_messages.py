"""Comm messages per update: marks are updated inside hold_sync, unchanged data sends nothing."""

from __future__ import annotations

import asyncio
from typing import Any

import numpy as np

from hairtrigger.widgets import Explorer

MessageLog = Any  # the `messages` fixture (conftest.py)


def _drag(explorer: Explorer, name: str, values: np.ndarray) -> None:
    async def run() -> None:
        for value in values:
            explorer.controls.controls[name].slider.value = float(value)

    asyncio.run(run())


def test_hold_sync_batches_x_and_y(explorer: Explorer, messages: MessageLog) -> None:
    messages.clear()
    explorer.state.K1 = 0.3  # changes the curve's shape: x and y of each line in one message
    per_mark = [m for m in messages.updates() if m[0] is explorer.curve.readout_line]
    assert len(per_mark) <= 1
    if per_mark:
        assert {"y"} <= set(per_mark[0][1]["state"])


def test_messages_per_activity_slider_move(explorer: Explorer, messages: MessageLog) -> None:
    _drag(explorer, "activity_ratio", np.linspace(0.9, 1.1, 3))
    messages.clear()
    _drag(explorer, "activity_ratio", np.linspace(1.11, 1.2, 10))
    per_move = messages.count() / 10
    counts = messages.by_widget()
    # Slider and entry, operating point, time-course lines and marker, table, E1/W control:
    # a handful of messages, none for marks whose data did not change (the curves, the map).
    assert per_move <= 12, counts
    assert explorer.curve.readout_line not in {w for w, *_ in messages.updates()}
    assert explorer.steepness.image_mark not in {w for w, *_ in messages.updates()}
    assert counts.get("Image", 0) == 0


def test_map_refresh_sends_a_few_messages(explorer: Explorer, messages: MessageLog) -> None:
    messages.clear()
    explorer.state.phosphatase_ratio = 0.1
    explorer.flush()
    image_updates = [
        m
        for m in messages.updates()
        if m[0] in (explorer.steepness.image_mark, *explorer.steepness._buffers)
    ]
    # New PNG into the back buffer, then swap the mark's image: two messages, binary payload.
    assert len(image_updates) == 2
    assert any(buffers for _, _, buffers in image_updates)


def test_snapshot_load_is_one_batch(explorer: Explorer, messages: MessageLog) -> None:
    other = Explorer()
    with other.state.batch():
        other.state.K1 = 0.02
        other.state.K2 = 0.03
        other.state.substrate_total = 5.0
    snapshot = other.state.to_snapshot()
    messages.clear()
    start = explorer.state.revision
    explorer.state.apply_snapshot(snapshot)
    assert explorer.state.revision == start + 1
    lines = [m for m in messages.updates() if m[0] is explorer.curve.readout_line]
    assert len(lines) <= 1
