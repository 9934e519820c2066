"""Shared helpers of the time-course tests: invented cycles and contract-shaped snapshots."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from _cycles import BASE, make_cycle  # noqa: F401 - re-exported for the time-course tests
from hairtrigger.core.params import Cycle

__all__ = ["BASE", "make_cycle", "write_snapshot"]


def write_snapshot(
    path: Path, cycle: Cycle, model: str = "quasi_steady", readout: str = "total_modified"
) -> Path:
    """A snapshot file built from the contract of DESIGN.md section 4."""
    document: dict[str, Any] = {
        "format": "hairtrigger.snapshot",
        "version": 1,
        "title": "invented test cycle",
        "notes": "",
        "created": "2026-01-01T00:00:00+00:00",
        "model": model,
        "readout": readout,
        "units": {"concentration": "uM", "time": "s"},
        "cycle": cycle.as_dict(),
    }
    path.write_text(json.dumps(document), encoding="utf-8")
    return path
