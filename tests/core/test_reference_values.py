"""Published formulas and worked values (../REFERENCES.md), each with its source named.

Tags as in REFERENCES.md: [P] stated in the source, [F] follows exactly from a published formula
(re-derived here, not pasted), [M] recalled and not confirmed against the text.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger import Cycle, evaluate
from hairtrigger.core.steady import goldbeter_koshland, quasi_steady_state
from hairtrigger.core.steepness import (
    LN81,
    local_sensitivity,
    peak_sensitivity,
    quasi_steady_hill_coefficient,
    quasi_steady_response_coefficient,
    thresholds,
)


def qs_params(k1: float, k2: float, ratio: float = 1.0, w: float = 1.0) -> dict[str, float]:
    """Quasi-steady parameter set with given K1, K2 and activity ratio (unit V2)."""
    return {
        "substrate_total": w,
        "kinase_total": ratio,
        "kinase_kcat": 1.0,
        "kinase_km": k1 * w,
        "phosphatase_total": 1.0,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": k2 * w,
    }


# --- Goldbeter & Koshland (1981) PNAS 78:6840: steady state of the cycle -----------------------


def gk_published_form(v1: float, v2: float, k1: float, k2: float) -> float:
    """G = 2·V1·K2 / (B + sqrt(B² − 4(V2 − V1)·V1·K2)), B = V2 − V1 + K1·V2 + K2·V1 [P form]."""
    b = v2 - v1 + k1 * v2 + k2 * v1
    return 2 * v1 * k2 / (b + math.sqrt(b * b - 4 * (v2 - v1) * v1 * k2))


@pytest.mark.parametrize(
    ("v1", "k1", "k2"),
    [(0.5, 0.1, 0.1), (1.3, 1.0, 0.2), (0.9, 0.01, 0.05), (2.0, 3.0, 3.0), (1.01, 0.5, 0.001)],
)
def test_goldbeter_koshland_matches_published_form(v1: float, k1: float, k2: float) -> None:
    # Goldbeter & Koshland 1981 [P form]; well-conditioned region where the textbook form is fine.
    assert goldbeter_koshland(v1, 1.0, k1, k2) == pytest.approx(
        gk_published_form(v1, 1.0, k1, k2), rel=1e-12
    )


def test_balanced_point_is_exact() -> None:
    # [F] at r = 1 the steady state is y = K2/(K1 + K2) (Goldbeter & Koshland 1981).
    for k1, k2 in [(0.01, 0.01), (0.3, 0.07), (1e-6, 2e-6), (5.0, 1e-3)]:
        assert goldbeter_koshland(1.0, 1.0, k1, k2) == k2 / (k1 + k2)


def test_worked_point_values() -> None:
    # [F] K1 = K2 = 1, r = 2 -> y = sqrt(3) - 1; K1 = K2 = 0.01, r = 1.05 -> y = 0.84 exactly
    # (both from the Goldbeter–Koshland quadratic, REFERENCES.md).
    assert goldbeter_koshland(2.0, 1.0, 1.0, 1.0) == pytest.approx(math.sqrt(3) - 1, rel=1e-15)
    assert goldbeter_koshland(1.05, 1.0, 0.01, 0.01) == pytest.approx(0.84, rel=1e-14)


def test_satisfies_steady_state_equation_far_into_saturation() -> None:
    # The steady state V1(1 − y)/(K1 + 1 − y) = V2·y/(K2 + y) must hold to rounding even where
    # the textbook form loses log10(1/K) digits (pitfall 1).
    r = np.geomspace(1e-3, 1e3, 61)
    for k in (1e-6, 1e-3, 0.1, 10.0):
        y = goldbeter_koshland(r, 1.0, k, k)
        u = goldbeter_koshland(1.0, r, k, k)  # unmodified by swapping, not 1 - y
        np.testing.assert_allclose(y + u, 1.0, rtol=4e-16 * 4)
        lhs = r * u / (k + u)
        rhs = y / (k + y)
        np.testing.assert_allclose(lhs, rhs, rtol=1e-13)


# --- Response coefficient (Goldbeter & Koshland 1981), REFERENCES.md [F] -------------------------


@pytest.mark.parametrize(
    ("k", "rv", "nh"),
    [(1.0, 27.149584, 1.331102), (0.1, 3.24, None), (0.01, 1.1835527, 26.07662)],
)
def test_response_coefficient_worked_values(k: float, rv: float, nh: float | None) -> None:
    # Rv = 81(K1 + 0.1)(K2 + 0.1)/((K1 + 0.9)(K2 + 0.9)); worked values in REFERENCES.md [F].
    closed = 81 * (k + 0.1) ** 2 / (k + 0.9) ** 2
    assert closed == pytest.approx(rv, rel=2e-7)
    got = thresholds(qs_params(k, k), "quasi_steady", "free_modified")
    assert float(got["response_coefficient"]) == pytest.approx(closed, rel=1e-12)
    if nh is not None:
        assert float(got["hill_coefficient"]) == pytest.approx(nh, rel=1e-6)
        assert float(got["hill_coefficient"]) == pytest.approx(LN81 / math.log(closed), rel=1e-12)


def test_response_coefficient_exact_for_k_point_one() -> None:
    # [F] K1 = K2 = 0.1 gives Rv = 81·0.04/1 = 3.24 exactly.
    got = thresholds(qs_params(0.1, 0.1), "quasi_steady", "free_modified")
    assert float(got["response_coefficient"]) == pytest.approx(3.24, rel=1e-14)


def test_random_km_against_closed_form() -> None:
    rng = np.random.default_rng(7)
    k1 = 10 ** rng.uniform(-5, 3, 500)
    k2 = 10 ** rng.uniform(-5, 3, 500)
    got = thresholds(qs_params(k1, k2), "quasi_steady", "total_modified")  # type: ignore[arg-type]
    np.testing.assert_allclose(
        got["response_coefficient"], quasi_steady_response_coefficient(k1, k2), rtol=1e-11
    )
    np.testing.assert_allclose(
        got["hill_coefficient"], quasi_steady_hill_coefficient(k1, k2), rtol=1e-9
    )


def test_limits_michaelian_and_one_saturated() -> None:
    # [F] both Km large -> Rv = 81, nH = 1; one enzyme saturated, the other linear -> Rv = 9, nH = 2.
    big = thresholds(qs_params(1e9, 1e9), "quasi_steady", "free_modified")
    assert float(big["response_coefficient"]) == pytest.approx(81.0, rel=1e-7)
    assert float(big["hill_coefficient"]) == pytest.approx(1.0, rel=1e-7)
    half = thresholds(qs_params(1e-9, 1e9), "quasi_steady", "free_modified")
    assert float(half["response_coefficient"]) == pytest.approx(9.0, rel=1e-7)
    assert float(half["hill_coefficient"]) == pytest.approx(2.0, rel=1e-7)


def test_hill_coefficient_accurate_as_rv_tends_to_one() -> None:
    # Pitfall 4: ln 81 / ln Rv cancels as Rv -> 1; compare with the subtraction-free closed form
    # Rv − 1 = (80·K1·K2 + 7.2(K1 + K2))/((K1 + 0.9)(K2 + 0.9)), derived from the formula above.
    for k in (1e-4, 1e-6, 1e-8, 1e-10):
        got = thresholds(qs_params(k, k), "quasi_steady", "free_modified")
        exact = LN81 / math.log1p((80 * k * k + 14.4 * k) / (k + 0.9) ** 2)
        assert float(got["hill_coefficient"]) == pytest.approx(exact, rel=1e-9)


def test_five_percent_swing_needs_k_about_0003() -> None:
    # [F] a 10 %→90 % swing for a ~5 % change in r needs K1 = K2 ≈ 0.003 (REFERENCES.md; the
    # "few per cent flips the switch" picture is common practice with no single source).
    rv = float(
        thresholds(qs_params(0.003, 0.003), "quasi_steady", "free_modified")["response_coefficient"]
    )
    assert 1.04 < rv < 1.06


# --- Steepness conventions (Ferrell & Ha 2014 TIBS 39:496 [M for the exact formula]) ----------


def test_hill_function_ec90_over_ec10() -> None:
    # [F] for y = x^n/(K^n + x^n), EC90/EC10 = 81^(1/n), so nH = ln 81/ln(EC90/EC10) recovers n.
    for n in (1.0, 2.5, 7.0):
        ec90 = 9 ** (1 / n)
        ec10 = (1 / 9) ** (1 / n)
        assert LN81 / math.log(ec90 / ec10) == pytest.approx(n, rel=1e-14)


def test_local_logit_slope_at_half() -> None:
    # [F] K1 = K2 = 0.01: the slope of ln(y/(1 − y)) against ln r at y = 0.5 is 1 + 1/(2K) = 51,
    # while nH = 26.08 (Legewie, Blüthgen & Herzel 2005 FEBS J, global vs local measures [P title]).
    k = 0.01
    s = float(local_sensitivity(0.5, qs_params(k, k), "quasi_steady", "free_modified"))
    assert s / (1 - 0.5) == pytest.approx(1 + 1 / (2 * k), rel=1e-10)  # d logit y = d ln y/(1 − y)


def test_peak_sensitivity_is_maximum_of_local_sensitivity() -> None:
    params = qs_params(0.02, 0.05)
    y = np.linspace(0.001, 0.999, 20001)
    dense = local_sensitivity(y, params, "quasi_steady", "free_modified")
    peak = float(peak_sensitivity(params, "quasi_steady", "free_modified"))
    assert peak >= dense.max() * (1 - 1e-9)
    assert peak == pytest.approx(dense.max(), rel=1e-6)


def test_peak_sensitivity_michaelian_limit_is_one() -> None:
    # Far from saturation the response is Michaelian: y = r/(1 + r), d ln y/d ln r = 1 − y ≤ 1.
    peak = float(peak_sensitivity(qs_params(1e6, 1e6), "quasi_steady", "free_modified"))
    assert peak == pytest.approx(1.0, rel=1e-5)


# --- Enzyme sequestration: tQSSA complex (Borghans, de Boer & Segel 1996 [M]; Ciliberto,
#     Capuani & Tyson 2007 PLoS Comput Biol 3:e45) ------------------------------------------------


def test_complex_matches_total_qssa_formula() -> None:
    # [F] at steady state C = ½[(E + Km + S) − sqrt((E + Km + S)² − 4·E·S)] with S the total of
    # the enzyme's substrate (free + bound); check both complexes of the mass-action solution.
    from hairtrigger.core.steady import mass_action_state

    p = {
        "substrate_total": 1.0,
        "kinase_total": 0.4,
        "kinase_kcat": 2.0,
        "kinase_km": 0.05,
        "phosphatase_total": 0.6,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": 0.2,
    }
    s = mass_action_state(p)
    for e, km, free, c in (
        (0.4, 0.05, s.unmodified, s.kinase_complex),
        (0.6, 0.2, s.modified, s.phosphatase_complex),
    ):
        total = float(free + c)
        expected = 0.5 * ((e + km + total) - math.sqrt((e + km + total) ** 2 - 4 * e * total))
        assert float(c) == pytest.approx(expected, rel=1e-12)


def test_evaluate_reports_contract_values_for_scarce_enzymes() -> None:
    # With enzymes scarce the mass-action model approaches the quasi-steady one (Goldbeter &
    # Koshland 1981 assume negligible complexes).
    cycle = Cycle(
        substrate_total=1.0,
        kinase_total=1e-6,
        kinase_kcat=1.0,
        kinase_km=0.01,
        kinase_kon=100.0,
        phosphatase_total=1e-6,
        phosphatase_kcat=1.0,
        phosphatase_km=0.01,
        phosphatase_kon=100.0,
    )
    qs = evaluate(cycle, "quasi_steady")
    ma = evaluate(cycle, "mass_action")
    assert qs["hill_coefficient"] == pytest.approx(26.07662, rel=1e-6)
    assert ma["hill_coefficient"] == pytest.approx(qs["hill_coefficient"], rel=1e-3)
    assert quasi_steady_state({k: v for k, v in cycle.as_dict().items()}).modified == pytest.approx(
        0.5
    )
