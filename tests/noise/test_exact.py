"""The exact stationary distribution of the quasi-steady birth–death chain."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg
import scipy.optimize
import scipy.stats
from noise_reference import chain_generator, make_cycle, null_space_distribution
from scipy.special import gammaln

from hairtrigger.core.copynumber import MOLECULES_PER_UM_FL, CopyNumbers
from hairtrigger.core.noise import (
    BirthDeathChain,
    integrated_autocorrelation_time,
    noise_summary,
    occupancy_variance_rate,
    population_response,
    population_thresholds,
    stationary_distribution,
)
from hairtrigger.core.steady import goldbeter_koshland

# Far from saturation: K·N ≫ N makes both rates linear in the substrate count.
LINEAR = 1e12
# Deep saturation: K·N ≪ 1 makes both rates constant (zero order).
SATURATED = 1e-15


# --- REFERENCES.md "Noise": exact cases ------------------------------------------------------


@pytest.mark.parametrize("n_total", [1, 2, 7, 50, 400])
def test_balanced_zero_order_is_uniform(n_total: int) -> None:
    """Both enzymes saturated, V1 = V2: λ = μ = V on the interior, so p(n) is uniform on
    {0…N} with variance N(N + 2)/12 [F] (Berg, Paulsson & Ehrenberg 2000, Biophys J 79:1228;
    Qian & Cooper 2008, Biochemistry 47:2211)."""
    d = stationary_distribution(BirthDeathChain(n_total, 1.0, SATURATED, SATURATED))
    np.testing.assert_allclose(d.probabilities, 1.0 / (n_total + 1), rtol=1e-9)
    assert d.mean == pytest.approx(n_total / 2, rel=1e-9)
    assert d.variance == pytest.approx(n_total * (n_total + 2) / 12, rel=1e-9)


@pytest.mark.parametrize("n_total", [1, 3, 10, 101, 2000])
def test_linear_equal_rates_is_binomial_half(n_total: int) -> None:
    """Both enzymes linear with equal rate constants: each molecule flips independently, so
    n ~ Binomial(N, ½) with variance N/4 [F] (Qian & Cooper 2008, Biochemistry 47:2211;
    scipy.stats.binom as the independent oracle)."""
    d = stationary_distribution(BirthDeathChain(n_total, 1.0, LINEAR, LINEAR))
    expected = scipy.stats.binom.pmf(np.arange(n_total + 1), n_total, 0.5)
    np.testing.assert_allclose(d.probabilities, expected, rtol=1e-8, atol=1e-300)
    assert d.variance == pytest.approx(n_total / 4, rel=1e-8)
    assert d.fano_factor == pytest.approx(0.5, rel=1e-8)


@pytest.mark.parametrize("ratio", [0.5, 2.0, 1.7])
def test_linear_unequal_rates_is_binomial(ratio: float) -> None:
    """Linear enzymes, rate constants k1, k2: Binomial(N, k1/(k1 + k2)) [F] (Qian & Cooper
    2008). With K1 = K2 the first-order constants are V/(K·N), so p = r/(1 + r)."""
    n_total = 60
    d = stationary_distribution(BirthDeathChain(n_total, ratio, LINEAR, LINEAR))
    expected = scipy.stats.binom.pmf(np.arange(n_total + 1), n_total, ratio / (1 + ratio))
    np.testing.assert_allclose(d.probabilities, expected, rtol=1e-7, atol=1e-300)


@pytest.mark.parametrize("ratio", [0.8, 1.25])
def test_saturated_unbalanced_is_truncated_geometric(ratio: float) -> None:
    """Both saturated, V1 ≠ V2: constant rates make p(n) ∝ rⁿ on {0…N}, geometric [F]
    (Qian & Cooper 2008, Biochemistry 47:2211)."""
    n_total = 40
    d = stationary_distribution(BirthDeathChain(n_total, ratio, SATURATED, SATURATED))
    expected = ratio ** np.arange(n_total + 1)
    np.testing.assert_allclose(d.probabilities, expected / expected.sum(), rtol=1e-9)


# --- independent linear algebra ------------------------------------------------------------


@pytest.mark.parametrize(
    ("n_total", "ratio", "k1", "k2"),
    [
        (1, 1.0, 0.3, 0.3),
        (5, 0.7, 0.05, 2.0),
        (30, 1.1, 0.01, 0.02),
        (80, 1.0, 0.5, 0.1),
        (120, 3.0, 1.0, 1.0),
    ],
)
def test_matches_null_space_of_generator(n_total: int, ratio: float, k1: float, k2: float) -> None:
    """Detailed balance agrees with a direct solve πQ = 0 of the generator built from the rates
    of DESIGN.md §2 (scipy.linalg.null_space)."""
    v2 = 3.0
    chain = BirthDeathChain(n_total, ratio, k1, k2, phosphatase_rate=v2)
    q = chain_generator(n_total, ratio * v2, v2, k1 * n_total, k2 * n_total)
    expected = null_space_distribution(q)
    d = stationary_distribution(chain)
    np.testing.assert_allclose(d.probabilities, expected, rtol=1e-8, atol=1e-14)
    assert d.probabilities.sum() == pytest.approx(1.0, abs=1e-14)
    # πQ = 0 holds for the result itself.
    assert np.abs(d.probabilities @ q).max() < 1e-12 * np.abs(q).max()


def test_matches_gamma_function_closed_form() -> None:
    """The product Π λ(j)/μ(j+1) telescopes into Gamma functions [F]:
    p(n) ∝ rⁿ·Γ(K1N + N − n + 1)/Γ(N − n + 1)·Γ(K2N + n + 1)/Γ(n + 1)."""
    n_total, ratio, k1, k2 = 5000, 1.02, 0.03, 0.07
    d = stationary_distribution(BirthDeathChain(n_total, ratio, k1, k2))
    n = np.arange(n_total + 1)
    km1, km2 = k1 * n_total, k2 * n_total
    logp = (
        n * math.log(ratio)
        + gammaln(km1 + n_total - n + 1)
        - gammaln(n_total - n + 1)
        + gammaln(km2 + n + 1)
        - gammaln(n + 1)
    )
    p = np.exp(logp - logp.max())
    p /= p.sum()
    np.testing.assert_allclose(d.probabilities, p, rtol=1e-8, atol=1e-300)
    assert d.mode == int(np.argmax(p))


def test_log_probabilities_stay_finite_in_far_tails() -> None:
    d = stationary_distribution(BirthDeathChain(20000, 1.5, 0.01, 0.01))
    assert np.all(np.isfinite(d.log_probabilities))
    assert d.probabilities[0] == 0.0  # underflows, while its logarithm is kept
    assert d.log_probabilities[0] < -700


@pytest.mark.parametrize(
    ("n_total", "ratio", "k1", "k2"), [(12, 1.0, 0.2, 0.2), (40, 1.3, 0.05, 0.5)]
)
def test_autocorrelation_quantities_match_poisson_equation(
    n_total: int, ratio: float, k1: float, k2: float
) -> None:
    """σ² = 2⟨f̃, g⟩_π with Q g = −f̃ (the Poisson equation, solved here by scipy lstsq) gives the
    asymptotic variance of a time average; check n and every state indicator."""
    v2 = 2.0
    chain = BirthDeathChain(n_total, ratio, k1, k2, phosphatase_rate=v2)
    d = stationary_distribution(chain)
    q = chain_generator(n_total, ratio * v2, v2, k1 * n_total, k2 * n_total)
    pi = d.probabilities

    def asymptotic_variance(f: np.ndarray) -> float:
        centred = f - pi @ f
        g = scipy.linalg.lstsq(q, -centred)[0]
        g -= pi @ g
        return 2.0 * float(pi @ (centred * g))

    n = np.arange(n_total + 1, dtype=float)
    tau = asymptotic_variance(n) / (2.0 * d.variance)
    assert integrated_autocorrelation_time(d) == pytest.approx(tau, rel=1e-8)
    rates = occupancy_variance_rate(d)
    expected = [asymptotic_variance((n == k).astype(float)) for k in range(n_total + 1)]
    np.testing.assert_allclose(rates, expected, rtol=1e-7, atol=1e-15)


# --- copy numbers ----------------------------------------------------------------------------


def test_copy_numbers_from_volume_use_avogadro() -> None:
    """1 µM in 1 fL is N_A·1e-21 ≈ 602.214 molecules (CODATA 2018 Avogadro constant)."""
    assert MOLECULES_PER_UM_FL == pytest.approx(602.214076, rel=1e-12)
    cycle = make_cycle(substrate=2.0, enzyme=0.05)
    copies = CopyNumbers.from_volume(cycle, 1.5)
    assert copies.substrate == round(2.0 * 1.5 * 602.214076) == 1807
    # W is exactly N molecules: the conversion is N/W, within 0.5/N of N_A·V.
    assert copies.molecules_per_um == pytest.approx(1807 / 2.0, rel=1e-15)
    assert copies.molecules_per_um == pytest.approx(1.5 * 602.214076, rel=0.5 / 1807)
    assert copies.kinase == pytest.approx(0.05 * 1807 / 2.0, rel=1e-12)
    assert copies.volume == 1.5 and copies.volume_given


def test_copy_numbers_from_molecules_define_volume() -> None:
    cycle = make_cycle(substrate=0.5, enzyme=0.01)
    copies = CopyNumbers.from_molecules(cycle, 1000)
    assert copies.substrate == 1000
    assert copies.molecules_per_um == pytest.approx(2000.0)
    assert copies.kinase == pytest.approx(20.0)
    assert copies.volume == pytest.approx(2000.0 / 602.214076)
    assert not copies.volume_given


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"molecules": 0}, "at least 1"),
        ({"molecules": -5}, "at least 1"),
        ({"molecules": 12.5}, "whole number"),
        ({"molecules": float("nan")}, "whole number"),
        ({"molecules": True}, "whole number"),
        ({"molecules": "100"}, "whole number"),
        ({"molecules": 10**9}, "at most"),
        ({"volume": 0.0}, "volume"),
        ({"volume": -1.0}, "volume"),
        ({"volume": float("inf")}, "volume"),
        ({"volume": 1e-6}, "at least 1"),
        ({}, "exactly one"),
        ({"molecules": 10, "volume": 1.0}, "exactly one"),
    ],
)
def test_bad_copy_numbers_are_refused(kwargs: dict, match: str) -> None:
    with pytest.raises(ValueError, match=match):
        CopyNumbers.from_cycle(make_cycle(), **kwargs)


def test_integral_float_molecules_accepted() -> None:
    assert CopyNumbers.from_cycle(make_cycle(), molecules=250.0).substrate == 250


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"molecules": 0, "activity_ratio": 1.0, "K1": 0.1, "K2": 0.1}, "molecules"),
        ({"molecules": 10, "activity_ratio": 0.0, "K1": 0.1, "K2": 0.1}, "activity_ratio"),
        ({"molecules": 10, "activity_ratio": 1.0, "K1": -1.0, "K2": 0.1}, "K1"),
        ({"molecules": 10, "activity_ratio": 1.0, "K1": 0.1, "K2": float("nan")}, "K2"),
    ],
)
def test_bad_chain_parameters_are_refused(kwargs: dict, match: str) -> None:
    with pytest.raises(ValueError, match=match):
        BirthDeathChain(**kwargs)


# --- large N, population response ----------------------------------------------------------


@pytest.mark.parametrize(
    ("ratio", "k1", "k2"), [(0.9, 0.05, 0.05), (1.0, 0.02, 0.1), (1.2, 0.05, 0.05), (2.0, 1.0, 1.0)]
)
def test_large_n_recovers_goldbeter_koshland(ratio: float, k1: float, k2: float) -> None:
    """As N → ∞ the mean fraction tends to the deterministic steady state (Goldbeter &
    Koshland 1981, PNAS 78:6840; at r = 1, y = K2/(K1 + K2) [F]) and the relative spread
    shrinks like N^-1/2."""
    y = float(goldbeter_koshland(ratio, 1.0, k1, k2))
    if ratio == 1.0:
        assert y == pytest.approx(k2 / (k1 + k2), rel=1e-15)
    errors = []
    for n_total in (100, 1000, 10000, 100000):
        d = stationary_distribution(BirthDeathChain(n_total, ratio, k1, k2))
        errors.append(abs(d.mean / n_total - y))
        if n_total == 100000:
            assert d.standard_deviation / n_total < 5.0 / math.sqrt(n_total)
    assert errors[-1] < 2e-4
    assert errors[-1] < errors[0] / 50  # at least ~1/N^0.6 convergence over three decades


def test_population_response_matches_per_ratio_distributions() -> None:
    chain = BirthDeathChain(300, 1.0, 0.02, 0.05)
    ratios = np.geomspace(0.5, 2.0, 23).reshape(1, 23)
    resp = population_response(chain, ratios)
    assert resp.mean_fraction.shape == (1, 23)
    for r, m, s in zip(
        ratios.ravel(), resp.mean_fraction.ravel(), resp.sd_fraction.ravel(), strict=True
    ):
        d = stationary_distribution(chain.with_activity_ratio(float(r)))
        assert m == pytest.approx(d.mean / 300, rel=1e-10)
        assert s == pytest.approx(d.standard_deviation / 300, rel=1e-9)
    np.testing.assert_allclose(
        resp.deterministic_fraction, goldbeter_koshland(ratios, 1.0, 0.02, 0.05), rtol=1e-14
    )


def test_population_response_refuses_bad_ratios() -> None:
    chain = BirthDeathChain(10, 1.0, 0.1, 0.1)
    for bad in ([1.0, 0.0], [np.nan], [-1.0]):
        with pytest.raises(ValueError, match="activity_ratio"):
            population_response(chain, bad)


@pytest.mark.parametrize(
    ("n_total", "k1", "k2"), [(50, 0.01, 0.01), (2000, 0.01, 0.01), (400, 0.1, 1.0), (1, 0.5, 0.5)]
)
def test_population_thresholds_match_brentq(n_total: int, k1: float, k2: float) -> None:
    """The Newton/bisection thresholds agree with scipy.optimize.brentq on the mean."""
    chain = BirthDeathChain(n_total, 1.0, k1, k2)
    result = population_thresholds(chain)
    assert result.success, result.message

    def mean_minus(theta: float, fraction: float) -> float:
        d = stationary_distribution(chain.with_activity_ratio(math.exp(theta)))
        return d.mean - fraction * n_total

    for fraction, found in (
        (0.1, result.activity_ratio_10),
        (0.5, result.activity_ratio_50),
        (0.9, result.activity_ratio_90),
    ):
        root = scipy.optimize.brentq(mean_minus, -30, 30, args=(fraction,), xtol=1e-14)
        assert math.log(found) == pytest.approx(root, abs=1e-9)
    hill = math.log(81) / math.log(result.activity_ratio_90 / result.activity_ratio_10)
    assert result.hill_coefficient == pytest.approx(hill, rel=1e-9)


def test_population_hill_is_shallower_and_tends_to_deterministic() -> None:
    """Finite N blurs the switch (Berg, Paulsson & Ehrenberg 2000, Biophys J 79:1228 [P]); the
    deterministic nH is the closed form ln 81 / ln Rv of REFERENCES.md (K = 0.01 → 26.07662
    [F])."""
    hills = [
        population_thresholds(BirthDeathChain(n, 1.0, 0.01, 0.01)) for n in (100, 1000, 100000)
    ]
    assert hills[0].deterministic_hill_coefficient == pytest.approx(26.07662, rel=1e-6)
    values = [h.hill_coefficient for h in hills]
    assert values[0] < values[1] < values[2] < 26.07662
    assert values[0] < 0.7 * 26.07662
    assert values[2] == pytest.approx(26.07662, rel=2e-3)


def test_michaelian_limit_keeps_population_hill_near_one() -> None:
    """With linear enzymes the mean of the binomial is exactly N·r/(1 + r): a Michaelian curve,
    nH = 1 at any N [F]."""
    result = population_thresholds(BirthDeathChain(25, 1.0, LINEAR, LINEAR))
    assert result.hill_coefficient == pytest.approx(1.0, rel=1e-7)


def test_noise_summary_contract_and_values() -> None:
    cycle = make_cycle(substrate=1.0, enzyme=0.01, km=0.01)
    out = noise_summary(cycle, molecules=500)
    assert list(out)[:6] == [
        "molecules",
        "mean_modified",
        "variance_modified",
        "fano_factor",
        "distribution",
        "population_hill_coefficient",
    ]
    assert out["molecules"] == 500
    assert len(out["distribution"]) == 501
    assert math.fsum(out["distribution"]) == pytest.approx(1.0, abs=1e-12)
    d = stationary_distribution(BirthDeathChain(500, 1.0, 0.01, 0.01))
    assert out["mean_modified"] == pytest.approx(d.mean)
    assert out["fano_factor"] == pytest.approx(d.variance / d.mean)
    assert out["population_hill_coefficient"] < out["deterministic_hill_coefficient"]
    by_volume = noise_summary(cycle, volume=500 / 602.214076)
    assert by_volume["molecules"] == 500
    assert by_volume["mean_modified"] == pytest.approx(out["mean_modified"], rel=1e-12)


def test_noise_summary_warns_when_enzymes_are_not_scarce() -> None:
    cycle = make_cycle(enzyme=0.5)
    assert not noise_summary(cycle, molecules=50)["warnings"]
    warned = noise_summary(cycle, molecules=50, model="mass_action")["warnings"]
    assert warned and "not scarce" in warned[0]
