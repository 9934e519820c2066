"""Sweep sampling and evaluation: ranges, determinism, chunk independence."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.stats import qmc

from hairtrigger.core import evaluate_arrays
from hairtrigger.core.sweep import (
    EVALUATE_QUANTITIES,
    ParameterRange,
    evaluate_sample,
    relaxation_half_time,
    run_sweep,
    sample_ranges,
    unit_sample,
)


@pytest.mark.parametrize(
    "text,expected",
    [
        ("kinase_km=0.01:1:log", ParameterRange("kinase_km", 0.01, 1.0, True)),
        ("substrate_total=0.5:5", ParameterRange("substrate_total", 0.5, 5.0, False)),
        (
            " phosphatase_total=1e-3:2e-2:lin",
            ParameterRange("phosphatase_total", 1e-3, 2e-2, False),
        ),
    ],
)
def test_parse_range(text, expected):
    assert ParameterRange.parse(text) == expected


@pytest.mark.parametrize(
    "text,match",
    [
        ("kinase_km", "KEY=LOW:HIGH"),
        ("km=0.1:1", "unknown cycle parameter `km`"),
        ("kinase_km=1:0.1", "must be below high"),
        ("kinase_km=0:1", "> 0"),
        ("kinase_km=a:1", "must be numbers"),
        ("kinase_km=0.1:1:ln", "LOW:HIGH:log"),
        ("kinase_km=0.1:inf", "finite"),
    ],
)
def test_parse_range_rejects(text, match):
    with pytest.raises(ValueError, match=match):
        ParameterRange.parse(text)


def test_ranges_are_respected_and_log_is_uniform_in_log():
    sample = sample_ranges(["kinase_km=0.001:10:log", "substrate_total=1:3"], 4096, seed=5)
    km, w = sample["kinase_km"], sample["substrate_total"]
    assert km.min() >= 0.001 and km.max() < 10 and w.min() >= 1 and w.max() < 3
    # Uniform in log: each decade holds a quarter of the points (Sobol' balance, exact-ish).
    counts = np.histogram(np.log10(km), bins=4, range=(-3, 1))[0]
    np.testing.assert_allclose(counts, 1024, atol=2)


@pytest.mark.parametrize("design", ["sobol", "lhs"])
def test_same_seed_same_sample_other_seed_other_sample(design):
    a = unit_sample(3, 100, design, seed=7)
    b = unit_sample(3, 100, design, seed=7)
    c = unit_sample(3, 100, design, seed=8)
    assert a.tobytes() == b.tobytes() and not np.array_equal(a, c)


def test_latin_hypercube_strata():
    """Each of n equal strata of every axis holds exactly one point (McKay et al. 1979)."""
    points = unit_sample(4, 50, "lhs", seed=1)
    for axis in range(4):
        assert sorted(np.floor(points[:, axis] * 50).astype(int)) == list(range(50))


def test_sobol_prefix_property_and_discrepancy():
    """A shorter Sobol' sweep is the prefix of a longer one; its discrepancy beats random."""
    short, long = unit_sample(2, 300, "sobol", 3), unit_sample(2, 1000, "sobol", 3)
    np.testing.assert_array_equal(short, long[:300])
    random = np.random.default_rng(0).random((1024, 2))
    assert qmc.discrepancy(unit_sample(2, 1024, "sobol", 3)) < qmc.discrepancy(random)


def test_sweep_values_equal_direct_evaluation(cycle):
    result = run_sweep(
        cycle,
        ["kinase_km=0.01:1:log", "phosphatase_total=0.01:0.1"],
        200,
        model="mass_action",
        readout="free_modified",
        seed=2,
    )
    params = {**cycle.as_dict(), **result.samples}
    direct = evaluate_arrays(params, "mass_action", "free_modified")
    for name in EVALUATE_QUANTITIES:
        np.testing.assert_array_equal(result.outputs[name], direct[name])
    assert result.columns == ("kinase_km", "phosphatase_total", *EVALUATE_QUANTITIES)
    assert result.table().shape == (200, 2 + len(EVALUATE_QUANTITIES))


@pytest.mark.parametrize("chunk_size", [1, 7, 64, 10_000])
def test_chunk_size_does_not_change_a_single_bit(cycle, chunk_size):
    ranges = ["kinase_km=0.001:1:log", "substrate_total=0.1:10:log", "kinase_total=0.001:0.1:log"]
    reference = run_sweep(cycle, ranges, 150, model="mass_action", chunk_size=150)
    chunked = run_sweep(cycle, ranges, 150, model="mass_action", chunk_size=chunk_size)
    assert chunked.table().tobytes() == reference.table().tobytes()


def test_progress_is_reported(cycle):
    calls = []
    run_sweep(
        cycle, ["kinase_km=0.01:1"], 100, chunk_size=30, progress=lambda d, t: calls.append((d, t))
    )
    assert calls == [(0, 100), (30, 100), (60, 100), (90, 100), (100, 100)]


def test_relaxation_half_time_symmetric_point():
    """At K1 = K2 = K, V1 = V2 = V: τ = W(K + 0.5)²/(2VK) [F, REFERENCES.md Dynamics]."""
    for k in (0.01, 0.5, 3.0):
        params = {
            "substrate_total": 2.0,
            "kinase_total": 0.1,
            "kinase_kcat": 4.0,
            "kinase_km": 2.0 * k,
            "phosphatase_total": 0.2,
            "phosphatase_kcat": 2.0,
            "phosphatase_km": 2.0 * k,
        }
        tau = 2.0 * (k + 0.5) ** 2 / (2 * 0.4 * k)
        assert float(relaxation_half_time(params)) == pytest.approx(math.log(2) * tau, rel=1e-12)


def test_half_time_output(cycle):
    result = run_sweep(
        cycle, ["kinase_km=0.01:1:log"], 16, outputs=["half_time", "hill_coefficient"]
    )
    assert list(result.outputs) == ["half_time", "hill_coefficient"]
    assert np.all(result.outputs["half_time"] > 0)


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"samples": 0}, "samples"),
        ({"seed": -1}, "seed"),
        ({"design": "grid"}, "design"),
        ({"outputs": ["speed"]}, "outputs"),
        ({"model": "hill"}, "model"),
        ({"ranges": []}, "at least one"),
        ({"ranges": ["kinase_km=0.1:1", "kinase_km=0.2:2"]}, "varied twice"),
        ({"chunk_size": 0}, "chunk_size"),
    ],
)
def test_bad_sweep_arguments(cycle, kwargs, match):
    args = {"ranges": ["kinase_km=0.1:1"], "samples": 8}
    args.update(kwargs)
    with pytest.raises(ValueError, match=match):
        run_sweep(cycle, **args)


def test_evaluate_sample_rejects_bad_arrays(cycle):
    with pytest.raises(ValueError, match="same length"):
        evaluate_sample(cycle, {"kinase_km": [0.1, 0.2], "substrate_total": [1.0]})
    with pytest.raises(ValueError, match="> 0"):
        evaluate_sample(cycle, {"kinase_km": [0.1, -0.2]})
