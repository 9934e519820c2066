"""Fixtures for the report tests: invented example cycles as snapshots."""

from __future__ import annotations

import pytest

from hairtrigger import Cycle
from hairtrigger.io.snapshot import Snapshot


def _cycle(**changes: float) -> Cycle:
    # An invented scaffold-bound kinase/phosphatase pair with scarce enzymes (sharp switch).
    base = Cycle(
        substrate_total=2.0,
        kinase_total=0.05,
        kinase_kcat=5.0,
        kinase_km=0.1,
        kinase_kon=100.0,
        phosphatase_total=0.1,
        phosphatase_kcat=2.0,
        phosphatase_km=0.08,
        phosphatase_kon=100.0,
    )
    return base.replace(**changes)


@pytest.fixture(scope="session")
def sharp_snapshot() -> Snapshot:
    return Snapshot(
        cycle=_cycle(),
        model="quasi_steady",
        readout="total_modified",
        title="Scaffold-bound switch",
        notes="Invented example: scarce enzymes, both near saturation.",
    )


@pytest.fixture(scope="session")
def crowded_snapshot() -> Snapshot:
    # Enzymes as abundant as the substrate: complexes sequester it and cap the readout.
    return Snapshot(
        cycle=_cycle(kinase_total=1.0, phosphatase_total=1.5),
        model="mass_action",
        readout="total_modified",
        title="Overexpressed enzymes",
        notes="",
    )
