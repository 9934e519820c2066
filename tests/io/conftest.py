"""Fixtures for the snapshot tests: a valid cycle, snapshot and raw document."""

from __future__ import annotations

import copy
from typing import Any

import pytest
from snapshot_cases import CYCLE_VALUES, GOOD_DOCUMENT

from hairtrigger.core.params import Cycle
from hairtrigger.io import Snapshot


@pytest.fixture
def cycle() -> Cycle:
    return Cycle(**CYCLE_VALUES)


@pytest.fixture
def snapshot(cycle: Cycle) -> Snapshot:
    return Snapshot(
        cycle,
        model="mass_action",
        readout="free_modified",
        title="test cycle",
        notes="notes with µ and ✓",
        created="2025-01-15T09:00:00+00:00",
        extras={"view": {"log_axes": True, "range": [0.01, 100.0], "label": None}},
    )


@pytest.fixture
def good_document() -> dict[str, Any]:
    return copy.deepcopy(GOOD_DOCUMENT)
