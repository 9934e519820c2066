"""Fixtures for time-course, switching and command-line tests."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import pytest
from _tc_helpers import make_cycle, write_snapshot

from hairtrigger.core.params import Cycle


@pytest.fixture
def cycle() -> Cycle:
    return make_cycle()


@pytest.fixture
def snapshot_file(tmp_path: Path) -> Callable[..., Path]:
    def build(
        cycle: Cycle | None = None,
        model: str = "quasi_steady",
        readout: str = "total_modified",
        name: str = "cycle.json",
    ) -> Path:
        return write_snapshot(tmp_path / name, cycle or make_cycle(), model, readout)

    return build
