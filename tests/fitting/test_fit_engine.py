"""The fitting engine: recovery, agreement with scipy's curve_fit, exact intervals, judgement."""

from __future__ import annotations

import math

import numpy as np
import pytest
from fit_reference import gk_modified_fraction, hill_curve
from scipy import optimize, stats

from hairtrigger import fit_dose_response
from hairtrigger.core.dataset import DoseResponseData
from hairtrigger.core.fit_models import HillModel, MassActionModel
from hairtrigger.core.fitting import fit_model
from hairtrigger.core.params import Cycle

HILL_TRUTH = {"ec50": 2.0, "hill_coefficient": 2.5, "bottom": 0.1, "top": 1.0}


def test_hill_recovers_known_parameters(hill_data):
    fit = fit_model(hill_data(seed=0), "hill")
    assert fit.success and fit.status == 0 and fit.message
    for p in fit.parameters:
        # Whether one seed's interval covers the truth is a 95 % event (the coverage test
        # checks the rate); here the truth must lie within a few interval half-widths.
        assert p.low < p.value < p.high
        half_width = 0.5 * (p.high - p.low)
        assert abs(p.value - HILL_TRUTH[p.name]) < 3 * half_width, p
        assert p.value == pytest.approx(HILL_TRUTH[p.name], rel=0.1, abs=0.03)
    assert fit.n_points == 24 and fit.n_parameters == 4
    assert fit.residual_sd == pytest.approx(0.03, rel=0.35)
    assert fit.warnings == ()


def test_hill_fit_agrees_with_scipy_curve_fit(hill_data):
    data = hill_data(seed=3)
    fit = fit_model(data, "hill")
    popt, pcov = optimize.curve_fit(
        hill_curve,
        data["input"],
        data["readout"],
        p0=[1.5, 2.0, 0.0, 1.0],
        ftol=1e-14,
        xtol=1e-14,
        gtol=1e-14,
        maxfev=20000,
    )
    ours = np.array([fit.values[k] for k in HILL_TRUTH])
    np.testing.assert_allclose(ours, popt, rtol=2e-6, atol=1e-8)
    # Correlations do not depend on the log scale of the positive parameters (a diagonal
    # change of variables), so they must match curve_fit's linearised covariance.
    corr = pcov / np.sqrt(np.outer(np.diag(pcov), np.diag(pcov)))
    names = list(HILL_TRUTH)
    for a, na in enumerate(names):
        for b, nb in enumerate(names):
            assert fit.correlations[na][nb] == pytest.approx(corr[a, b], abs=1e-4)
    assert fit.rss == pytest.approx(
        np.sum((hill_curve(data["input"], *popt) - data["readout"]) ** 2), rel=1e-9
    )


def test_weighted_hill_fit_agrees_with_curve_fit_sigma(hill_data):
    data = hill_data(seed=5)
    sd = 0.01 + 0.05 * data["readout"] ** 2
    rng = np.random.default_rng(5)
    data["readout"] = hill_curve(data["input"], 2.0, 2.5, 0.1, 1.0) + rng.normal(0, sd)
    data["sd"] = sd
    fit = fit_model(data, "hill")
    popt, _ = optimize.curve_fit(
        hill_curve,
        data["input"],
        data["readout"],
        sigma=sd,
        p0=[2.0, 2.5, 0.1, 1.0],
        ftol=1e-14,
        xtol=1e-14,
        gtol=1e-14,
        maxfev=20000,
    )
    np.testing.assert_allclose([fit.values[k] for k in HILL_TRUTH], popt, rtol=2e-6, atol=1e-8)
    assert fit.chi_square == pytest.approx(
        np.sum(((hill_curve(data["input"], *popt) - data["readout"]) / sd) ** 2), rel=1e-8
    )


def _quasi_steady_curve(x, k1, k2, scale, bottom, top):
    with np.errstate(all="ignore"):  # curve_fit wanders through negative constants
        return bottom + (top - bottom) * gk_modified_fraction(scale * x, k1, k2)


@pytest.mark.parametrize(("k1", "k2", "scale"), [(0.01, 0.1, 100.0), (0.02, 0.02, 0.01)])
def test_multistart_finds_the_fit_a_single_start_misses(k1, k2, scale):
    # Doses far from the activity-ratio scale: one start at "natural" values (K = 1, scale 1)
    # does not find the optimum; the Sobol multistart does.
    r50 = (k1 + 0.5) / (k2 + 0.5)
    x = np.repeat(r50 / scale * np.geomspace(0.3, 3.0, 10), 2)
    rng = np.random.default_rng(0)
    y = _quasi_steady_curve(x, k1, k2, scale, 0.1, 1.0) + rng.normal(0, 0.02, x.size)
    fit = fit_model({"input": x, "readout": y, "input_kind": "amount"}, "quasi_steady")

    def rss(p):
        return float(np.sum((_quasi_steady_curve(x, *p) - y) ** 2))

    try:
        single, _ = optimize.curve_fit(_quasi_steady_curve, x, y, p0=[1, 1, 1, 0, 1], maxfev=20000)
        rss_single = rss(single)
    except RuntimeError:
        rss_single = math.inf
    from_truth, _ = optimize.curve_fit(
        _quasi_steady_curve,
        x,
        y,
        p0=[k1, k2, scale, 0.1, 1.0],
        ftol=1e-14,
        xtol=1e-14,
        gtol=1e-14,
        maxfev=20000,
    )
    assert rss_single > 10 * fit.rss
    assert fit.rss == pytest.approx(rss(from_truth), rel=1e-7)
    assert fit.values["input_scale"] == pytest.approx(scale, rel=0.2)


@pytest.mark.parametrize(("k1", "k2"), [(0.05, 0.2), (1.0, 0.5), (0.01, 0.01), (0.3, 3.0)])
def test_exact_goldbeter_koshland_curves_are_fitted_back(k1, k2):
    # Curves from the published quadratic (Goldbeter & Koshland 1981) with known K1, K2 [F]
    r50 = (k1 + 0.5) / (k2 + 0.5)
    r = r50 * np.geomspace(0.2, 5.0, 21)
    y = 0.05 + 0.8 * gk_modified_fraction(r, k1, k2)
    fit = fit_model({"input": r, "readout": y}, "quasi_steady")
    assert fit.values["K1"] == pytest.approx(k1, rel=1e-6)
    assert fit.values["K2"] == pytest.approx(k2, rel=1e-6)
    assert fit.values["bottom"] == pytest.approx(0.05, abs=1e-8)
    assert fit.values["top"] == pytest.approx(0.85, rel=1e-8)
    assert any("fits the data exactly" in w for w in fit.warnings)


@pytest.mark.parametrize(("k1", "k2", "scale"), [(0.05, 0.2, 0.02), (0.02, 0.1, 3.0)])
def test_exact_curves_in_dose_units_recover_the_scale(k1, k2, scale):
    r50 = (k1 + 0.5) / (k2 + 0.5)
    dose = r50 / scale * np.geomspace(0.3, 3.0, 17)
    y = 100.0 + 900.0 * gk_modified_fraction(scale * dose, k1, k2)
    data = DoseResponseData.from_arrays(dose, y, input_kind="amount", input_unit="nM")
    fit = fit_model(data, "quasi_steady")
    assert fit.values["K1"] == pytest.approx(k1, rel=1e-5)
    assert fit.values["K2"] == pytest.approx(k2, rel=1e-5)
    assert fit.values["input_scale"] == pytest.approx(scale, rel=1e-5)
    assert next(p for p in fit.parameters if p.name == "input_scale").unit == "1/nM"


KNOWN = {
    "substrate_total": 2.0,
    "phosphatase_total": 0.3,
    "kinase_kcat": 5.0,
    "phosphatase_kcat": 3.0,
}


def test_exact_mass_action_curve_is_fitted_back():
    model = MassActionModel(KNOWN, "total_modified", "ratio")
    r = np.concatenate([[0.0], np.geomspace(0.2, 3.0, 16)])
    y = model.predict(np.array([0.1, 0.3, 0.02, 0.95]), r)
    fit = fit_model({"input": r, "readout": y}, "mass_action", cycle=KNOWN)
    assert fit.values["kinase_km"] == pytest.approx(0.1, rel=1e-5)
    assert fit.values["phosphatase_km"] == pytest.approx(0.3, rel=1e-5)
    assert fit.derived["K1"] == pytest.approx(0.05, rel=1e-5)


def test_mass_action_recovers_michaelis_constants_from_noisy_data():
    model = MassActionModel(KNOWN, "total_modified", "ratio")
    r = np.repeat(np.geomspace(0.2, 3.0, 10), 3)
    rng = np.random.default_rng(2)
    y = model.predict(np.array([0.1, 0.3, 0.02, 0.95]), r) + rng.normal(0, 0.01, r.size)
    fit = fit_model({"input": r, "readout": y}, "mass_action", cycle=KNOWN)
    est = {p.name: p for p in fit.parameters}
    for name, truth in (("kinase_km", 0.1), ("phosphatase_km", 0.3)):
        assert est[name].low < truth < est[name].high
    cycle = Cycle(
        substrate_total=2.0,
        kinase_total=0.1,
        kinase_kcat=5.0,
        kinase_km=1.0,
        kinase_kon=100.0,
        phosphatase_total=0.3,
        phosphatase_kcat=3.0,
        phosphatase_km=1.0,
        phosphatase_kon=100.0,
    )
    adopted = fit.fitted_cycle(cycle)
    assert adopted.kinase_km == fit.values["kinase_km"]
    assert adopted.phosphatase_total == 0.3


# --- intervals are exact where theory says they must be --------------------------------------


def _linear_subproblem(seed: int, weighted: bool):
    rng = np.random.default_rng(seed)
    x = np.geomspace(0.1, 10.0, 12)
    f = x**2 / (1.0 + x**2)
    sd = np.linspace(0.02, 0.06, x.size) if weighted else None
    y = 0.2 + 0.6 * f + rng.normal(0, 0.04 if sd is None else sd)
    return x, f, y, sd


@pytest.mark.parametrize("weighted", [False, True])
def test_profile_interval_is_the_classical_t_interval_for_a_linear_model(weighted):
    # With ec50 and n fixed the model is linear in (bottom, top): the F(1, n - p) profile
    # interval must equal the textbook regression t interval exactly (e.g. Seber & Wild 1989,
    # Nonlinear Regression, ch. 5: profile intervals reduce to t intervals for linear models).
    x, f, y, sd = _linear_subproblem(7, weighted)
    fit = fit_model(
        {"input": x, "readout": y, **({"sd": sd} if weighted else {})},
        "hill",
        fixed={"ec50": 1.0, "hill_coefficient": 2.0},
    )
    w = np.ones_like(y) if sd is None else 1.0 / sd
    design = np.column_stack([1.0 - f, f]) * w[:, None]
    beta, rss, *_ = np.linalg.lstsq(design, y * w, rcond=None)
    dof = x.size - 2
    s2 = rss[0] / dof
    se = np.sqrt(np.diag(np.linalg.inv(design.T @ design)) * s2)
    half = stats.t.ppf(0.975, dof) * se
    for name, b, h in zip(("bottom", "top"), beta, half, strict=True):
        p = next(q for q in fit.parameters if q.name == name)
        assert p.value == pytest.approx(b, rel=1e-9)
        assert p.low == pytest.approx(b - h, rel=1e-6)
        assert p.high == pytest.approx(b + h, rel=1e-6)
    assert fit.n_parameters == 2
    assert [p.fixed for p in fit.parameters] == [True, True, False, False]


def test_absolute_sd_gives_the_normal_interval_for_a_linear_model():
    x, f, y, sd = _linear_subproblem(8, True)
    fit = fit_model(
        {"input": x, "readout": y, "sd": sd},
        "hill",
        absolute_sd=True,
        fixed={"ec50": 1.0, "hill_coefficient": 2.0},
    )
    design = np.column_stack([1.0 - f, f]) / sd[:, None]
    beta = np.linalg.lstsq(design, y / sd, rcond=None)[0]
    se = np.sqrt(np.diag(np.linalg.inv(design.T @ design)))
    z = stats.norm.ppf(0.975)
    top = next(q for q in fit.parameters if q.name == "top")
    assert top.low == pytest.approx(beta[1] - z * se[1], rel=1e-6)
    assert top.high == pytest.approx(beta[1] + z * se[1], rel=1e-6)


def test_confidence_level_widens_intervals(hill_data):
    data = hill_data(seed=1)
    narrow = fit_model(data, "hill", confidence=0.8).parameters[1]
    wide = fit_model(data, "hill", confidence=0.99).parameters[1]
    assert wide.low < narrow.low < narrow.value < narrow.high < wide.high


# --- identifiability ----------------------------------------------------------------------------


def test_k1_and_k2_from_one_curve_in_dose_units_are_flagged():
    # A moderately steep curve in arbitrary dose units: the midpoint is absorbed by the scale,
    # leaving one shape number (steepness) for two constants.
    rng = np.random.default_rng(4)
    k1, k2, scale = 0.3, 0.3, 0.5
    dose = np.repeat(np.geomspace(0.5, 8.0, 9), 2)
    y = 0.05 + 0.9 * gk_modified_fraction(scale * dose, k1, k2) + rng.normal(0, 0.03, dose.size)
    out = fit_dose_response(
        {"input": dose, "readout": y, "input_kind": "amount"}, "quasi_steady", compare=None
    )
    open_ends = [
        (n, p) for n, p in out["parameters"].items() if p["low"] is None or p["high"] is None
    ]
    assert open_ends, out["parameters"]
    text = " ".join(out["warnings"])
    assert "not identifiable" in text
    assert "K1 and K2 cannot be told apart" in text


def test_michaelian_data_fitted_with_the_cycle_model_are_called_degenerate():
    # A hyperbolic response is the cycle's limit of unsaturated enzymes (K1, K2 -> infinity
    # with r/K1 fixed; Goldbeter & Koshland 1981): K1, K2 and the input scale then trade off.
    rng = np.random.default_rng(0)
    x = np.repeat(np.geomspace(0.1, 10.0, 8), 2)
    y = hill_curve(x, 1.0, 1.0, 0.0, 1.0) + rng.normal(0, 0.01, x.size)
    fit = fit_model({"input": x, "readout": y, "input_kind": "amount"}, "quasi_steady")
    text = " | ".join(fit.warnings)
    assert "nearly degenerate" in text and "K1" in text.split("nearly degenerate")[1]
    assert "Michaelian (not ultrasensitive)" in text
    k1 = next(p for p in fit.parameters if p.name == "K1")
    assert k1.high is None


def test_top_is_open_when_the_data_never_reach_the_plateau():
    x = np.geomspace(0.01, 0.5, 10)
    rng = np.random.default_rng(9)
    y = hill_curve(x, 5.0, 1.5, 0.0, 1.0) + rng.normal(0, 0.002, x.size)
    fit = fit_model({"input": x, "readout": y}, "hill")
    top = next(p for p in fit.parameters if p.name == "top")
    assert top.high is None and not top.identifiable
    assert any(w.startswith("top is not identifiable") for w in fit.warnings)
    assert fit.as_dict()["parameters"]["top"]["high"] is None


def test_well_determined_fit_has_no_identifiability_warnings(hill_data):
    fit = fit_model(hill_data(seed=2, noise=0.01), "hill")
    assert not any("identifiable" in w or "degenerate" in w for w in fit.warnings)
    assert all(p.identifiable for p in fit.parameters)


# --- model comparison -----------------------------------------------------------------------


def test_steep_data_are_steeper_than_michaelian(hill_data):
    out = fit_dose_response(hill_data(seed=0, n=3.0), "hill")
    comparison = out["comparison"]
    assert comparison["best_by_aicc"] == "hill"
    assert comparison["verdict"].startswith("steeper than Michaelian at 95 %")
    assert comparison["nested_test"]["test"] == "F"


def test_michaelian_data_are_not_distinguishable(hill_data):
    out = fit_dose_response(hill_data(seed=0, n=1.0, ec50=1.0, low=0.05, high=20.0), "hill")
    assert out["comparison"]["verdict"].startswith("not distinguishable from Michaelian at 95 %")


def test_shallow_data_are_shallower_than_michaelian(hill_data):
    out = fit_dose_response(
        hill_data(seed=0, n=0.5, ec50=1.0, low=1e-3, high=1e3, levels=12, noise=0.01), "hill"
    )
    assert out["comparison"]["verdict"].startswith("shallower than Michaelian at 95 %")


def test_f_test_and_aicc_match_independent_computation(hill_data):
    data = hill_data(seed=6, n=1.6)
    x, y = data["input"], data["readout"]
    out = fit_dose_response(data, "hill")
    hill_p, _ = optimize.curve_fit(hill_curve, x, y, p0=[2.0, 1.6, 0.1, 1.0], maxfev=20000)
    mich_p, _ = optimize.curve_fit(
        lambda x, e, b, t: hill_curve(x, e, 1.0, b, t), x, y, p0=[2.0, 0.1, 1.0], maxfev=20000
    )
    rss_h = np.sum((hill_curve(x, *hill_p) - y) ** 2)
    rss_m = np.sum((hill_curve(x, mich_p[0], 1.0, *mich_p[1:]) - y) ** 2)
    n = x.size
    f_stat = (rss_m - rss_h) / (rss_h / (n - 4))
    test = out["comparison"]["nested_test"]
    assert test["statistic"] == pytest.approx(f_stat, rel=1e-6)
    assert test["p_value"] == pytest.approx(stats.f.sf(f_stat, 1, n - 4), rel=1e-5)
    # Gaussian likelihood with the variance estimated (k = p + 1); AICc small-sample term
    # (Hurvich & Tsai 1989, Biometrika 76:297).
    k = 5
    aic = n * math.log(2 * math.pi * rss_h / n) + n + 2 * k
    assert out["aic"] == pytest.approx(aic, rel=1e-8)
    assert out["aicc"] == pytest.approx(aic + 2 * k * (k + 1) / (n - k - 1), rel=1e-8)
    weights = [m["akaike_weight"] for m in out["comparison"]["models"].values()]
    assert sum(weights) == pytest.approx(1.0)


def test_absolute_sd_uses_a_likelihood_ratio_test(hill_data):
    data = hill_data(seed=0, n=3.0)
    data["sd"] = np.full(data["input"].size, 0.03)
    out = fit_dose_response(data, "hill", absolute_sd=True)
    assert out["comparison"]["nested_test"]["test"] == "likelihood_ratio"
    assert out["absolute_sd"] and out["weighted"]
    assert out["reduced_chi_square"] == pytest.approx(out["chi_square"] / 20)


def test_understated_sd_is_reported(hill_data):
    data = hill_data(seed=0, noise=0.05)
    data["sd"] = np.full(data["input"].size, 0.005)
    fit = fit_model(data, "hill")
    assert any("larger than the stated sd" in w for w in fit.warnings)


# --- bootstrap ---------------------------------------------------------------------------------


def test_bootstrap_is_seeded_and_close_to_the_profile(hill_data):
    data = hill_data(seed=4)
    a = fit_model(data, "hill", intervals="bootstrap", bootstrap=200, seed=1)
    b = fit_model(data, "hill", intervals="bootstrap", bootstrap=200, seed=1)
    c = fit_model(data, "hill", intervals="bootstrap", bootstrap=200, seed=2)
    profile = fit_model(data, "hill")
    assert a.parameters == b.parameters
    assert a.parameters != c.parameters
    assert a.bootstrap == {"replicates": 200, "seed": 1, "failed": 0}
    for pb, pp in zip(a.parameters, profile.parameters, strict=True):
        assert pb.value == pp.value
        assert pb.low < pb.value < pb.high
        ratio = (pb.high - pb.low) / (pp.high - pp.low)
        assert 0.6 < ratio < 1.5, (pb, pp)
    assert a.as_dict()["bootstrap"]["seed"] == 1 and a.interval_method == "bootstrap"


# --- fixing, predicting, failures, bad arguments -------------------------------------------


def test_fixed_parameters_are_reported_and_not_counted(hill_data):
    out = fit_dose_response(hill_data(seed=0), "hill", fixed={"bottom": 0.1})
    bottom = out["parameters"]["bottom"]
    assert bottom == {"value": 0.1, "low": 0.1, "high": 0.1, "unit": "a.u.", "fixed": True}
    assert out["n_parameters"] == 3
    assert out["comparison"]["models"]["michaelian"]["n_parameters"] == 2  # fixed there too


def test_predict_follows_the_fit(hill_data):
    fit = fit_model(hill_data(seed=0), "hill")
    x = np.array([0.0, 1.0, 2.0, 50.0])
    v = fit.values
    np.testing.assert_allclose(
        fit.predict(x),
        hill_curve(x, v["ec50"], v["hill_coefficient"], v["bottom"], v["top"]),
        rtol=1e-12,
    )
    np.testing.assert_allclose(fit.residuals, fit.readout - fit.fitted)
    with pytest.raises(ValueError, match="`x`"):
        fit.predict([-1.0])
    with pytest.raises(ValueError, match="no cycle parameters"):
        fit.fitted_cycle(Cycle(1, 1, 1, 1, 1, 1, 1, 1, 1))


def test_numerical_failure_is_data(hill_data, monkeypatch):
    monkeypatch.setattr(
        HillModel, "shape", lambda self, phi, x: np.full((phi.shape[0], x.size), np.nan)
    )
    fit = fit_model(hill_data(seed=0), "hill")
    assert not fit.success and fit.status == 2
    assert "finite" in fit.message
    assert fit.as_dict()["aic"] is None


@pytest.mark.parametrize(
    ("kwargs", "words"),
    [
        ({"fixed": {"slope": 1.0}}, "cannot fix `slope`"),
        ({"fixed": {"ec50": -1.0}}, "fixed `ec50` must be a finite number > 0"),
        ({"fixed": {"top": "high"}}, "fixed `top`"),
        ({"confidence": 1.2}, "`confidence`"),
        ({"absolute_sd": True}, "sd"),
        ({"intervals": "bootstrap", "bootstrap": 5}, "`bootstrap`"),
        ({"seed": -3}, "`seed`"),
        ({"intervals": "jackknife"}, "`intervals`"),
        ({"input_kind": "dose"}, "input_kind"),
    ],
)
def test_bad_arguments_raise_value_error(hill_data, kwargs, words):
    with pytest.raises(ValueError, match=words):
        fit_model(hill_data(seed=0), "hill", **kwargs)


def test_fewer_points_than_parameters_names_column_and_rows():
    data = DoseResponseData.from_arrays([0.5, 1.0, 2.0], [0.1, 0.5, 0.9])
    with pytest.raises(ValueError, match=r"column 'input': 3 points .*points 1-3.* 4 free"):
        fit_model(data, "hill")
    few_levels = DoseResponseData.from_arrays([1, 1, 1, 2, 2, 2, 3], [0, 0.1, 0, 1, 1.1, 1, 1])
    with pytest.raises(ValueError, match="3 distinct inputs"):
        fit_model(few_levels, "hill")


def test_input_kind_conflict_with_declared_data():
    data = DoseResponseData.from_arrays([0.5, 1, 2, 4], [0, 0.3, 0.8, 1], input_kind="amount")
    with pytest.raises(ValueError, match="conflicts"):
        fit_model(data, "quasi_steady", input_kind="ratio")


def test_cycle_models_say_when_the_input_kind_was_assumed():
    r = np.geomspace(0.3, 3, 9)
    out = fit_dose_response(
        {"input": r, "readout": gk_modified_fraction(r, 0.1, 0.1)}, "quasi_steady", compare=None
    )
    assert any("taken as the activity ratio" in w for w in out["warnings"])
    assert out["comparison"] is None
