"""The ``dynamics`` block that time courses add to ``evaluate``."""

from __future__ import annotations

import pytest
from _tc_helpers import make_cycle

from hairtrigger import evaluate
from hairtrigger.core.evaluate import EVALUATE_KEYS
from hairtrigger.core.switching import switching_metrics

METRIC_KEYS = {
    "direction",
    "readout_start",
    "readout_end",
    "half_time",
    "time_10_90",
    "time_to_10",
    "time_to_90",
    "settling_time",
    "relaxation_time",
    "success",
    "message",
}


@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
def test_dynamics_block_extends_evaluate(model: str) -> None:
    c = make_cycle(kinase_km=0.02, phosphatase_km=0.02, kinase_kon=1000.0, phosphatase_kon=1000.0)
    result = evaluate(c, model)
    assert set(EVALUATE_KEYS) | {"relative", "warnings", "dynamics"} == set(result)
    dynamics = result["dynamics"]
    assert dynamics["step"]["key"] == "kinase_total"
    assert dynamics["step"]["low"] == pytest.approx(0.005) and dynamics["step"]["high"] == 0.01
    assert set(dynamics["up"]) == METRIC_KEYS and set(dynamics["down"]) == METRIC_KEYS
    assert dynamics["up"]["direction"] == "up" and dynamics["down"]["direction"] == "down"
    # The default step is exactly the documented one.
    expected = switching_metrics(c.replace(kinase_total=0.005), {"kinase_total": 0.01}, model)
    assert dynamics["up"]["half_time"] == pytest.approx(expected.half_time, rel=1e-12)
    assert dynamics["up"]["readout_end"] == pytest.approx(result["readout_value"], rel=1e-12)
    # At r = 1 the cycle sits at its threshold (symmetric Km), so both relaxation times agree.
    assert dynamics["relaxation_time_at_threshold"] == pytest.approx(
        dynamics["relaxation_time"], rel=1e-6
    )


def test_dynamics_absent_with_warning_when_kon_too_small() -> None:
    result = evaluate(make_cycle(kinase_kon=1.0), "mass_action")
    assert result["dynamics"] is None
    assert any("dissociation rate" in w for w in result["warnings"])
    assert result["hill_coefficient"] is not None
