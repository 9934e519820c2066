"""Shared helpers of the time-course tests: invented cycles and contract-shaped snapshots."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from hairtrigger.core.params import Cycle

BASE: dict[str, float] = {
    "substrate_total": 1.0,
    "kinase_total": 0.01,
    "kinase_kcat": 1.0,
    "kinase_km": 0.05,
    "kinase_kon": 100.0,
    "phosphatase_total": 0.01,
    "phosphatase_kcat": 1.0,
    "phosphatase_km": 0.05,
    "phosphatase_kon": 100.0,
}


def make_cycle(**changes: float) -> Cycle:
    values = dict(BASE)
    values.update(changes)
    return Cycle(**values)


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
