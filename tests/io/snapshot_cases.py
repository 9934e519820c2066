"""Shared snapshot test data (imported by conftest and the test modules)."""

from __future__ import annotations

from typing import Any

CYCLE_VALUES: dict[str, float] = {
    "substrate_total": 2.0,
    "kinase_total": 0.02,
    "kinase_kcat": 1.5,
    "kinase_km": 0.1,
    "kinase_kon": 50.0,
    "phosphatase_total": 0.03,
    "phosphatase_kcat": 1.0,
    "phosphatase_km": 0.2,
    "phosphatase_kon": 40.0,
}

GOOD_DOCUMENT: dict[str, Any] = {
    "format": "hairtrigger.snapshot",
    "version": 1,
    "title": "test cycle",
    "notes": "a valid snapshot used as the starting point of every bad-input case",
    "created": "2025-01-15T09:00:00+00:00",
    "model": "mass_action",
    "readout": "free_modified",
    "units": {"concentration": "uM", "time": "s"},
    "cycle": CYCLE_VALUES,
}
