"""Switching metrics: published closed forms and independent numerical checks."""

from __future__ import annotations

import numpy as np
import pytest
from _tc_helpers import make_cycle

from hairtrigger.core.steady import steady_state
from hairtrigger.core.switching import (
    relaxation_profile,
    relaxation_time,
    switching_metrics,
    switching_round_trip,
)
from hairtrigger.core.timecourse import time_course


@pytest.mark.parametrize("k", [0.01, 0.1, 0.5, 2.0])
def test_relaxation_time_at_symmetric_point(k: float) -> None:
    """Linearising dy/dt = (V1(1 − y)/(K1 + 1 − y) − V2·y/(K2 + y))/W at y* = 1/2 with K1 = K2 = K
    and V1 = V2 = V gives λ = 2·(V/W)·K/(K + 1/2)², so τ = W(K + 0.5)²/(2VK) [F]
    (from the steady-state equation of Goldbeter & Koshland 1981, PNAS 78:6840)."""
    w = 2.0
    c = make_cycle(substrate_total=w, kinase_km=k * w, phosphatase_km=k * w)
    v = c.phosphatase_vmax
    assert c.activity_ratio == 1.0
    expected = w * (k + 0.5) ** 2 / (2 * v * k)
    assert float(relaxation_time(c.arrays())) == pytest.approx(expected, rel=1e-13)
    metrics = switching_metrics(c.replace(kinase_total=0.0099), {"kinase_total": 0.01})
    assert metrics.relaxation_time == pytest.approx(expected, rel=1e-13)


def test_relaxation_time_is_minimal_at_half_and_diverges_for_small_k() -> None:
    """τ(K) = W(K + 0.5)²/(2VK) is minimal at K = 0.5 and grows as 1/K (critical slowing) [F]."""
    ks = np.array([0.001, 0.01, 0.25, 0.5, 1.0, 4.0])
    taus = relaxation_time({**make_cycle().as_dict(), "kinase_km": ks, "phosphatase_km": ks})
    assert np.argmin(taus) == 3
    assert taus[0] / taus[1] == pytest.approx((0.501**2 / 0.001) / (0.51**2 / 0.01), rel=1e-12)


def test_zero_order_ten_to_ninety_time() -> None:
    """Both enzymes saturated: dy/dt = (V1 − V2)/W, so the 10→90 % time is 0.8·W/(V1 − V2) [F]."""
    k = 1e-6
    before = make_cycle(kinase_km=k, phosphatase_km=k, kinase_total=0.006)
    metrics = switching_metrics(before, {"kinase_total": 0.015})
    expected = 0.8 * 1.0 / (0.015 - 0.01)
    assert metrics.direction == "up"
    assert metrics.time_10_90 == pytest.approx(expected, rel=1e-5)
    # Pitfall: the settling time includes the linear transit, so it is far beyond 40·τ.
    assert metrics.settling_time > 40 * metrics.relaxation_time
    down = switching_metrics(before.replace(kinase_total=0.015), {"kinase_total": 0.006})
    assert down.direction == "down"
    assert down.time_10_90 == pytest.approx(0.8 / (0.01 - 0.006), rel=1e-5)


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
@pytest.mark.parametrize(("before", "after"), [(0.005, 0.01), (0.01, 0.005), (0.004, 0.03)])
def test_metrics_agree_with_crossings_of_a_fine_course(
    model: str, before: float, after: float
) -> None:
    """Cross-check: read the crossings off a dense course by linear interpolation."""
    c = make_cycle(
        kinase_km=0.02,
        phosphatase_km=0.02,
        kinase_kon=500.0,
        phosphatase_kon=500.0,
        kinase_total=before,
    )
    metrics = switching_metrics(c, {"kinase_total": after}, model=model)
    assert metrics.success
    t_end = 3 * metrics.settling_time
    course = time_course(c, {"kinase_total": after}, t_end, 60001, model=model, rtol=1e-10)
    progress = (course["readout"] - metrics.readout_start) / (
        metrics.readout_end - metrics.readout_start
    )
    for level, value in (
        (0.1, metrics.time_to_10),
        (0.5, metrics.half_time),
        (0.9, metrics.time_to_90),
        (0.99, metrics.settling_time),
    ):
        i = int(np.argmax(progress >= level))
        t_cross = np.interp(level, progress[i - 1 : i + 1], course.t[i - 1 : i + 1])
        assert value == pytest.approx(t_cross, rel=1e-5, abs=1e-6 * t_end), level
    assert metrics.time_10_90 == pytest.approx(metrics.time_to_90 - metrics.time_to_10)


def test_mass_action_approaches_quasi_steady_when_enzymes_scarce_and_binding_fast() -> None:
    c = make_cycle(
        kinase_total=1e-4,
        phosphatase_total=1e-4,
        kinase_km=0.05,
        phosphatase_km=0.05,
        kinase_kon=1e5,
        phosphatase_kon=1e5,
        kinase_kcat=100.0,
        phosphatase_kcat=100.0,
    )
    qs = switching_metrics(c, {"kinase_total": 2e-4}, model="quasi_steady", readout="free_modified")
    ma = switching_metrics(c, {"kinase_total": 2e-4}, model="mass_action", readout="free_modified")
    assert ma.half_time == pytest.approx(qs.half_time, rel=2e-3)
    assert ma.relaxation_time == pytest.approx(qs.relaxation_time, rel=2e-3)


def test_mass_action_relaxation_time_matches_decay_of_a_small_step() -> None:
    """The slowest Jacobian eigenvalue governs the late decay: ln|r − r∞| falls at rate 1/τ."""
    c = make_cycle(kinase_total=0.2, phosphatase_total=0.1, kinase_kon=20.0, phosphatase_kon=40.0)
    after = c.replace(kinase_total=0.2002)
    tau = float(relaxation_time(after.arrays(), "mass_action"))
    course = time_course(
        c, {"kinase_total": 0.2002}, 30 * tau, 3001, model="mass_action", rtol=1e-12
    )
    final = float(steady_state(after.arrays(), "mass_action").modified)
    gap = np.abs(course["modified"] - final)
    window = (course.t > 8 * tau) & (course.t < 14 * tau)
    slope = np.polyfit(course.t[window], np.log(gap[window]), 1)[0]
    assert -1.0 / slope == pytest.approx(tau, rel=1e-3)


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
def test_critical_slowing_peaks_at_the_threshold(model: str) -> None:
    c = make_cycle(kinase_km=0.01, phosphatase_km=0.01, kinase_kon=1000.0, phosphatase_kon=1000.0)
    ratios = np.geomspace(0.5, 2.0, 201)
    taus = relaxation_profile(c, ratios, model)
    assert taus.shape == ratios.shape
    peak = ratios[np.argmax(taus)]
    assert peak == pytest.approx(1.0, rel=0.05)
    assert taus.max() > 20 * taus[0]


def test_round_trip_names_and_no_change() -> None:
    c = make_cycle()
    pair = switching_round_trip(c, "kinase_total", 0.005, 0.01)
    assert pair["up"].direction == "up" and pair["down"].direction == "down"
    assert pair["up"].readout_end == pytest.approx(pair["down"].readout_start)
    same = switching_metrics(c, {"kinase_total": c.kinase_total})
    assert same.direction == "none" and np.isnan(same.half_time)
    assert same.as_dict()["half_time"] is None


@pytest.mark.parametrize(
    ("steps", "match"),
    [
        ([], "at t = 0"),
        ({"substrate_total": 2.0}, "held fixed"),
        ({"kinase_total": -1.0}, "kinase_total"),
    ],
)
def test_switching_bad_steps(steps, match) -> None:
    with pytest.raises(ValueError, match=match):
        switching_metrics(make_cycle(), steps)
