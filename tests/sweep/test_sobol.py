"""Sobol' indices (Saltelli's estimators) against analytic values."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger.core.sweep import (
    cycle_sensitivity,
    saltelli_design,
    saltelli_matrices,
    sobol_indices,
    sobol_indices_from_values,
)

A, B = 7.0, 0.1


def ishigami(x):
    """Ishigami & Homma (1990): sin x1 + a sin² x2 + b x3⁴ sin x1 on [−π, π]³."""
    return np.sin(x[:, 0]) + A * np.sin(x[:, 1]) ** 2 + B * x[:, 2] ** 4 * np.sin(x[:, 0])


def ishigami_analytic():
    """The standard closed forms of the Ishigami variances [F]."""
    pi = math.pi
    v = A**2 / 8 + B * pi**4 / 5 + B**2 * pi**8 / 18 + 0.5
    v1 = 0.5 * (1 + B * pi**4 / 5) ** 2
    v2 = A**2 / 8
    v13 = 8 * B**2 * pi**8 / 225
    first = np.array([v1, v2, 0.0]) / v
    total = np.array([v1 + v13, v2, v13]) / v
    return first, total


@pytest.fixture(scope="module")
def ishigami_indices():
    return sobol_indices(
        ishigami, [(-math.pi, math.pi)] * 3, 2**13, names=["x1", "x2", "x3"], seed=11, bootstrap=300
    )


def test_ishigami_indices_match_analytic(ishigami_indices):
    first, total = ishigami_analytic()
    np.testing.assert_allclose(ishigami_indices.first_order, first, atol=0.02)
    np.testing.assert_allclose(ishigami_indices.total, total, atol=0.02)
    assert first[0] == pytest.approx(0.3139, abs=1e-4) and total[2] == pytest.approx(
        0.2437, abs=1e-4
    )


def test_ishigami_bootstrap_intervals_cover_the_truth(ishigami_indices):
    first, total = ishigami_analytic()
    lo, hi = ishigami_indices.first_order_interval.T
    assert np.all((lo <= first) & (first <= hi))
    lo, hi = ishigami_indices.total_interval.T
    assert np.all((lo <= total) & (total <= hi))
    widths = ishigami_indices.total_interval[:, 1] - ishigami_indices.total_interval[:, 0]
    assert np.all(widths > 0) and np.all(widths < 0.1)


def test_additive_linear_model_exact_shares():
    """y = Σ c_i x_i, x_i uniform: S_i = S_Ti = c_i²/Σ c_j² [F]; no interactions."""
    c = np.array([1.0, 2.0, 3.0])
    s = sobol_indices(lambda x: x @ c, [(0, 1)] * 3, 2**12, bootstrap=0)
    np.testing.assert_allclose(s.first_order, c**2 / np.sum(c**2), atol=5e-3)
    np.testing.assert_allclose(s.total, c**2 / np.sum(c**2), atol=5e-3)
    assert np.all(np.isnan(s.first_order_interval))


def test_estimator_is_deterministic_in_seed():
    one = sobol_indices(ishigami, [(-math.pi, math.pi)] * 3, 256, seed=1, bootstrap=50)
    two = sobol_indices(ishigami, [(-math.pi, math.pi)] * 3, 256, seed=1, bootstrap=50)
    assert one.first_order.tobytes() == two.first_order.tobytes()
    assert one.total_interval.tobytes() == two.total_interval.tobytes()


def test_design_layout():
    a, b = saltelli_design(2, 8, seed=0)
    stacked = saltelli_matrices(a, b)
    assert stacked.shape == (32, 2)
    np.testing.assert_array_equal(stacked[16:24, 0], b[:, 0])
    np.testing.assert_array_equal(stacked[16:24, 1], a[:, 1])


def test_nan_rows_are_left_out_and_said():
    a, b = saltelli_design(2, 64, seed=0)
    x = saltelli_matrices(a, b)
    values = x[:, 0] + 0.5 * x[:, 1]
    values[3] = np.nan
    s = sobol_indices_from_values(values, 2, bootstrap=0)
    assert s.base_samples == 63 and "1 of 64 base rows left out" in s.warnings[0]


def test_constant_output_is_undefined_not_an_error():
    s = sobol_indices(lambda x: np.ones(len(x)), [(0, 1)] * 2, 16, bootstrap=0)
    assert np.all(np.isnan(s.first_order)) and s.warnings


def test_bad_values():
    with pytest.raises(ValueError, match="divisible"):
        sobol_indices_from_values(np.ones(7), 2)
    with pytest.raises(ValueError, match="confidence"):
        sobol_indices_from_values(np.arange(8.0), 2, confidence=1.5)
    with pytest.raises(ValueError, match="bounds"):
        sobol_indices(ishigami, [(1, 0)], 8)


def test_cycle_sensitivity_finds_the_inert_parameter(cycle):
    """The kinase amount is the input of every threshold, so it cannot affect them: S = 0."""
    result = cycle_sensitivity(
        cycle,
        ["kinase_km=0.01:1:log", "phosphatase_km=0.01:1:log", "kinase_total=0.01:0.05:log"],
        256,
        model="mass_action",
        bootstrap=100,
    )
    threshold, steepness, half = (
        result[k] for k in ("activity_ratio_50", "hill_coefficient", "half_time")
    )
    for indices in (threshold, steepness):
        assert indices.first_order[2] == 0.0 and indices.total[2] == 0.0
        assert indices.total[0] > 0.05 and indices.total[1] > 0.05
    assert half.total[2] > 0.05  # the half-time after the step does depend on the kinase amount
    assert set(threshold.as_dict()["inputs"]) == {"kinase_km", "phosphatase_km", "kinase_total"}


def test_log_outputs_decompose_the_log(cycle):
    """With log_outputs the indices are those of ln(output), computed from the same design."""
    from hairtrigger.core.sweep import evaluate_sample

    ranges = ["kinase_km=0.01:1:log", "phosphatase_total=0.02:0.2:log"]
    logged = cycle_sensitivity(
        cycle, ranges, 128, outputs=["half_time"], bootstrap=0, log_outputs=True
    )["half_time"]
    a, b = saltelli_design(2, 128, seed=0)
    design = saltelli_matrices(a, b)
    sample = {
        "kinase_km": np.exp(np.log(0.01) + design[:, 0] * np.log(100.0)),
        "phosphatase_total": np.exp(np.log(0.02) + design[:, 1] * np.log(10.0)),
    }
    values = np.log(evaluate_sample(cycle, sample, outputs=["half_time"])["half_time"])
    direct = sobol_indices_from_values(values, 2, bootstrap=0)
    np.testing.assert_allclose(logged.total, direct.total, rtol=1e-12)
