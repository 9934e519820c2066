"""Sweeps on a local Dask cluster give exactly the local numbers."""

from __future__ import annotations

import numpy as np
import pytest

from hairtrigger.core.sweep import cycle_sensitivity, run_sweep

RANGES = ["kinase_km=0.001:1:log", "phosphatase_km=0.001:1:log", "substrate_total=0.1:10:log"]


def test_cluster_sweep_equals_local_sweep(cycle, dask_client):
    local = run_sweep(cycle, RANGES, 3000, model="mass_action", seed=4, chunk_size=512)
    remote = run_sweep(
        cycle, RANGES, 3000, model="mass_action", seed=4, chunk_size=512, client=dask_client
    )
    assert remote.table().tobytes() == local.table().tobytes()
    assert remote.columns == local.columns


def test_cluster_by_scheduler_address(cycle, dask_client):
    address = dask_client.scheduler.address
    calls = []
    local = run_sweep(cycle, RANGES, 500, seed=1, chunk_size=100)
    remote = run_sweep(
        cycle,
        RANGES,
        500,
        seed=1,
        chunk_size=100,
        client=address,
        progress=lambda d, t: calls.append(d),
    )
    assert remote.table().tobytes() == local.table().tobytes()
    assert calls[0] == 0 and calls[-1] == 500 and len(calls) == 6


def test_cluster_sensitivity_equals_local(cycle, dask_client):
    local = cycle_sensitivity(cycle, RANGES[:2], 128, bootstrap=20)
    remote = cycle_sensitivity(cycle, RANGES[:2], 128, bootstrap=20, client=dask_client)
    for name in local:
        assert local[name].total.tobytes() == remote[name].total.tobytes()
        assert (
            local[name].first_order_interval.tobytes()
            == remote[name].first_order_interval.tobytes()
        )


def test_unreachable_scheduler_is_a_clear_error(cycle, monkeypatch):
    pytest.importorskip("distributed")
    monkeypatch.setattr("hairtrigger.core.sweep.SCHEDULER_TIMEOUT", 1.0)
    with pytest.raises(ValueError, match="cannot reach the Dask scheduler"):
        run_sweep(cycle, RANGES, 10, client="tcp://127.0.0.1:9")


def test_bad_client_type(cycle):
    with pytest.raises(ValueError, match="`client`"):
        run_sweep(cycle, RANGES, 10, client=42)


def test_local_result_has_no_nan_surprises(cycle):
    r = run_sweep(cycle, RANGES, 64, model="quasi_steady")
    assert np.all(np.isfinite(r.outputs["hill_coefficient"]))
