"""Model responses against independent formulas and brute-force solutions."""

from __future__ import annotations

import math

import numpy as np
import pytest
from fit_reference import gk_modified_fraction, hill_curve
from scipy.optimize import brentq

from hairtrigger.core.fit_models import (
    FIT_MODELS,
    HillModel,
    MassActionModel,
    MichaelianModel,
    QuasiSteadyModel,
    build_model,
)
from hairtrigger.core.params import Cycle

X = np.array([0.0, 0.05, 0.3, 1.0, 1.7, 4.0, 25.0])


def test_hill_and_michaelian_match_the_textbook_formulas():
    theta = np.array([1.7, 2.6, 0.05, 0.9])
    np.testing.assert_allclose(
        HillModel().predict(theta, X), hill_curve(X, 1.7, 2.6, 0.05, 0.9), rtol=1e-13, atol=1e-15
    )
    theta = np.array([1.7, -0.2, 1.3])
    expected = -0.2 + 1.5 * X / (1.7 + X)
    np.testing.assert_allclose(MichaelianModel().predict(theta, X), expected, rtol=1e-13)


def test_shapes_are_vectorised_over_parameter_sets():
    phi = np.array([[1.0, 1.0], [2.0, 3.0], [0.5, 0.7]])
    f = HillModel().shape(phi, X)
    assert f.shape == (3, X.size)
    for row, (ec50, n) in zip(f, phi, strict=True):
        np.testing.assert_allclose(row, hill_curve(X, ec50, n, 0.0, 1.0), rtol=1e-13, atol=1e-16)


@pytest.mark.parametrize(
    ("k1", "k2", "r", "expected"),
    [
        # Goldbeter & Koshland 1981 (PNAS 78:6840), exact consequences of the quadratic [F]
        (1.0, 1.0, 2.0, math.sqrt(3.0) - 1.0),
        (0.3, 0.7, 1.0, 0.7 / (0.3 + 0.7)),
        (0.01, 0.01, 1.05, 0.84),
    ],
)
def test_quasi_steady_reference_points(k1, k2, r, expected):
    y = QuasiSteadyModel("ratio").predict(np.array([k1, k2, 0.0, 1.0]), np.array([r]))
    assert y[0] == pytest.approx(expected, rel=1e-12)


def test_quasi_steady_amount_input_scales_the_ratio():
    k1, k2, scale = 0.1, 0.4, 0.25
    y = QuasiSteadyModel("amount").predict(np.array([k1, k2, scale, 0.1, 0.8]), X)
    expected = 0.1 + 0.7 * gk_modified_fraction(scale * X, k1, k2)
    np.testing.assert_allclose(y, expected, rtol=1e-10, atol=1e-14)


KNOWN = {
    "substrate_total": 2.0,
    "phosphatase_total": 0.2,
    "kinase_kcat": 4.0,
    "phosphatase_kcat": 2.5,
}


def brute_force_mass_action(r: float, km1: float, km2: float, readout: str) -> float:
    """Steady state with complexes kept, by bracketing the flux (scipy brentq).

    Exact steady-state relations C1 = E1 A/(M1 + A), C2 = E2 B/(M2 + B), v = k1 C1 = k2 C2
    (Michaelis-Menten complexes at steady state) and conservation A + B + C1 + C2 = W.
    """
    w, e2, k1, k2 = (
        KNOWN[k]
        for k in ("substrate_total", "phosphatase_total", "kinase_kcat", "phosphatase_kcat")
    )
    v2 = k2 * e2
    e1 = r * v2 / k1
    v1 = k1 * e1
    vmax = min(v1, v2)

    def balance(v: float) -> float:
        return km1 * v / (v1 - v) + km2 * v / (v2 - v) + v / k1 + v / k2 - w

    v = brentq(balance, 0.0, vmax * (1 - 1e-15), xtol=1e-16, rtol=1e-14)
    b = km2 * v / (v2 - v)
    return (b + v / k2) / w if readout == "total_modified" else b / w


@pytest.mark.parametrize("readout", ["total_modified", "free_modified"])
def test_mass_action_matches_brute_force(readout):
    model = MassActionModel(KNOWN, readout, "ratio")
    x = np.array([0.2, 0.6, 0.9, 1.1, 1.6, 3.0])
    got = model.predict(np.array([0.15, 0.4, 0.0, 1.0]), x)
    expected = [brute_force_mass_action(r, 0.15, 0.4, readout) for r in x]
    np.testing.assert_allclose(got, expected, rtol=1e-9)


def test_mass_action_with_scarce_enzymes_approaches_quasi_steady():
    # Complexes negligible when enzymes are scarce: the quasi-steady limit [F]
    known = dict(KNOWN, phosphatase_total=1e-7)
    ma = MassActionModel(known, "total_modified", "ratio")
    qs = QuasiSteadyModel("ratio")
    w = known["substrate_total"]
    x = np.geomspace(0.3, 3.0, 9)
    y_ma = ma.predict(np.array([0.2 * w, 0.5 * w, 0.0, 1.0]), x)
    y_qs = qs.predict(np.array([0.2, 0.5, 0.0, 1.0]), x)
    np.testing.assert_allclose(y_ma, y_qs, rtol=1e-5)


def test_zero_input_gives_the_bottom_without_warnings():
    for model in (
        HillModel(),
        MichaelianModel(),
        QuasiSteadyModel("ratio"),
        MassActionModel(KNOWN, "total_modified", "ratio"),
    ):
        theta = np.concatenate([np.full(model.n_shape, 0.5), [0.03, 0.9]])
        assert model.predict(theta, np.array([0.0]))[0] == pytest.approx(0.03, abs=1e-15)


def test_hill_derived_thresholds_follow_ec90_over_ec10():
    # EC90/EC10 = 81^(1/n) for a Hill curve [F]
    d = HillModel().derived({"ec50": 3.0, "hill_coefficient": 2.0})
    assert d["ec90"] / d["ec10"] == pytest.approx(9.0)
    assert d["response_coefficient"] == pytest.approx(9.0)
    y = hill_curve(np.array([d["ec10"], d["ec90"]]), 3.0, 2.0, 0.0, 1.0)
    np.testing.assert_allclose(y, [0.1, 0.9])


def test_quasi_steady_derived_steepness_is_the_closed_form():
    k1, k2 = 0.05, 0.2
    d = QuasiSteadyModel("amount").derived({"K1": k1, "K2": k2, "input_scale": 0.5})
    rv = 81 * (k1 + 0.1) * (k2 + 0.1) / ((k1 + 0.9) * (k2 + 0.9))  # Goldbeter & Koshland 1981 [F]
    assert d["response_coefficient"] == pytest.approx(rv, rel=1e-12)
    assert d["hill_coefficient"] == pytest.approx(math.log(81) / math.log(rv), rel=1e-12)
    for pct, target in (("10", 0.1), ("50", 0.5), ("90", 0.9)):
        r = d[f"activity_ratio_{pct}"]
        assert gk_modified_fraction(np.array([r]), k1, k2)[0] == pytest.approx(target, rel=1e-10)
        assert d[f"input_{pct}"] == pytest.approx(r / 0.5)


def test_mass_action_derived_uses_the_known_cycle():
    d = MassActionModel(KNOWN, "total_modified", "ratio").derived(
        {"kinase_km": 0.2, "phosphatase_km": 0.4}
    )
    assert d["K1"] == pytest.approx(0.1) and d["K2"] == pytest.approx(0.2)
    r50 = d["activity_ratio_50"]
    assert brute_force_mass_action(r50, 0.2, 0.4, "total_modified") == pytest.approx(0.5, rel=1e-8)


def test_build_model_names_and_errors():
    assert {build_model(m, cycle=KNOWN).name for m in FIT_MODELS} == set(FIT_MODELS)
    assert build_model("quasi_steady", "amount").parameter_names == (
        "K1",
        "K2",
        "input_scale",
        "bottom",
        "top",
    )
    assert HillModel().parameter_names == ("ec50", "hill_coefficient", "bottom", "top")
    with pytest.raises(ValueError, match="model"):
        build_model("logistic")
    with pytest.raises(ValueError, match="known totals"):
        build_model("mass_action")
    with pytest.raises(ValueError, match="kinase_kcat"):
        build_model(
            "mass_action",
            cycle={"substrate_total": 1, "phosphatase_total": 1, "phosphatase_kcat": 1},
        )
    with pytest.raises(ValueError, match="phosphatase_total"):
        build_model("mass_action", cycle=dict(KNOWN, phosphatase_total=-1.0))
    cycle = Cycle(
        substrate_total=1,
        kinase_total=0.1,
        kinase_kcat=1,
        kinase_km=0.1,
        kinase_kon=100,
        phosphatase_total=0.1,
        phosphatase_kcat=1,
        phosphatase_km=0.1,
        phosphatase_kon=100,
    )
    assert build_model("mass_action", cycle=cycle).known["substrate_total"] == 1.0
