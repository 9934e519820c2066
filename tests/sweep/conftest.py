"""Fixtures for sweep tests."""

from __future__ import annotations

import pytest

from hairtrigger.core import Cycle


@pytest.fixture
def cycle() -> Cycle:
    """An invented cycle (not a check value)."""
    return Cycle(
        substrate_total=2.0,
        kinase_total=0.03,
        kinase_kcat=3.0,
        kinase_km=0.2,
        kinase_kon=50.0,
        phosphatase_total=0.05,
        phosphatase_kcat=2.0,
        phosphatase_km=0.3,
        phosphatase_kon=40.0,
    )


@pytest.fixture(scope="session")
def dask_client():
    """A two-worker local Dask cluster in separate processes, on loopback only."""
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        host="127.0.0.1",
        dashboard_address=None,
    )
    client = distributed.Client(cluster)
    yield client
    client.close()
    cluster.close()
