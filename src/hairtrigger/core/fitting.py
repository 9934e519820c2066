"""Fit measured dose–response data: estimates, 95 % intervals, identifiability, model choice.

The engine fits any `hairtrigger.core.fit_models.ShapeModel` by bounded least squares
(`scipy.optimize.least_squares`, trust-region reflective), weighted by 1/sd² when standard
deviations are known, with positive parameters in log space. A deterministic scrambled Sobol
design over the shape parameters, with the two linear assay parameters solved exactly for each
design point, picks several starts that are then polished, so a local minimum does not pass for
the fit.

Intervals are profile-likelihood intervals by default: each parameter is fixed on a path away
from the estimate while the others are re-optimised, and the interval ends where the profile
statistic crosses its 95 % critical value. With the readout scatter estimated from the data
(no sd, or sd taken as relative weights) the statistic is ``ΔRSS / s²`` referred to F(1, n − p),
which for a linear model reproduces the classical t interval exactly; with ``absolute_sd`` it is
``Δχ²`` referred to χ²(1). A profile that stays below the critical value up to a parameter's
search bound gives an open interval (``None`` on that side) and a warning that the data cannot
identify the parameter. A residual bootstrap (seeded) is the alternative.

Models are compared by AICc; for the nested pair Michaelian ⊂ Hill an F-test (or a
likelihood-ratio test with absolute sd) gives a plain-language verdict on steepness.

Numerical failure is data: every result carries ``success``, ``status`` and ``message``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from typing import Any, Final

import numpy as np
from scipy import stats

from ._fit_engine import (
    Engine,
    Problem,
    check_enough,
    check_fixed,
    resolve_data,
)
from .fit_models import FIT_MODELS, MassActionModel, build_model
from .fit_results import FitResult, ParameterEstimate, Profile, json_number
from .params import CYCLE_KEYS, Cycle, check_choice

#: Interval methods: profile likelihood, residual bootstrap, or none (best fit only).
INTERVAL_METHODS: Final[tuple[str, ...]] = ("profile", "bootstrap", "none")
#: Models compared with the fitted one unless told otherwise (cheap, and answer "is it steep?").
DEFAULT_COMPARISON: Final[tuple[str, ...]] = ("michaelian", "hill")


def fit_model(
    data: Any,
    model: str = "hill",
    *,
    cycle: Cycle | Mapping[str, Any] | None = None,
    readout: str = "total_modified",
    input_kind: str | None = None,
    fixed: Mapping[str, Any] | None = None,
    intervals: str = "profile",
    bootstrap: int = 1000,
    seed: int = 0,
    confidence: float = 0.95,
    absolute_sd: bool = False,
) -> FitResult:
    """Fit one model to dose–response data.

    Parameters
    ----------
    data : DoseResponseData or mapping
        Data (see `hairtrigger.io.load_data`), or a mapping with ``input``, ``readout`` and
        optionally ``sd``, ``replicate``, ``input_kind`` arrays/values.
    model : {"michaelian", "hill", "quasi_steady", "mass_action"}
        The model.
    cycle : Cycle or mapping, optional
        Known totals and turnover numbers (``substrate_total``, ``phosphatase_total``,
        ``kinase_kcat``, ``phosphatase_kcat``); required for ``mass_action``.
    readout : {"free_modified", "total_modified"}
        What the assay measures (mass-action model).
    input_kind : {"ratio", "amount"}, optional
        Overrides an undeclared input kind of the data (a conflicting declaration is an
        error). ``amount`` makes the cycle models fit ``input_scale``.
    fixed : mapping, optional
        Parameters held at given values, e.g. ``{"bottom": 0.0}``.
    intervals : {"profile", "bootstrap"}
        Profile-likelihood intervals (default) or residual-bootstrap percentile intervals.
    bootstrap : int
        Bootstrap replicates (bootstrap method).
    seed : int
        Seed of the bootstrap resampling.
    confidence : float
        Interval level, in (0, 1); default 0.95.
    absolute_sd : bool
        Take ``sd`` as the true measurement error (χ² statistics) instead of relative weights
        whose common scale is estimated from the scatter.

    Returns
    -------
    FitResult
        Estimates, intervals, information criteria, warnings, ``success``/``status``/
        ``message``.

    Raises
    ------
    ValueError
        For bad arguments or data too few to fit (naming the column and rows).
    """
    d = resolve_data(data, input_kind)
    check_choice("intervals", intervals, INTERVAL_METHODS)
    if not (isinstance(confidence, int | float) and 0.5 <= float(confidence) < 1.0):
        msg = f"`confidence` must be a number in [0.5, 1); got {confidence!r}"
        raise ValueError(msg)
    if intervals == "bootstrap" and (
        isinstance(bootstrap, bool) or not isinstance(bootstrap, int) or bootstrap < 20
    ):
        msg = f"`bootstrap` must be an integer >= 20 replicates; got {bootstrap!r}"
        raise ValueError(msg)
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        msg = f"`seed` must be an integer >= 0; got {seed!r}"
        raise ValueError(msg)
    if absolute_sd and d.sd is None:
        msg = "`absolute_sd` needs an 'sd' column in the data"
        raise ValueError(msg)
    shape_model = build_model(model, d.input_kind, cycle, readout)
    fixed_values = check_fixed(shape_model, fixed)
    n_free = len(shape_model.parameter_names) - len(fixed_values)
    check_enough(d, shape_model, n_free)
    sigma = d.sd if d.sd is not None else np.ones(d.n_points)
    problem = Problem(shape_model, d.input, d.readout, sigma, fixed_values)
    for name, value in fixed_values.items():
        j = problem.names.index(name)
        if not problem.lower[j] <= problem.z_fixed[j] <= problem.upper[j]:
            msg = f"fixed `{name}` = {value:g} is outside the range the data allow"
            raise ValueError(msg)
    return Engine(problem, d, shape_model, confidence, absolute_sd).run(intervals, bootstrap, seed)


# --- comparison ------------------------------------------------------------------------------


def compare_fits(fits: Mapping[str, FitResult], confidence: float = 0.95) -> dict[str, Any]:
    """Compare fits of several models to the same data by AICc, with the nested F-test.

    Parameters
    ----------
    fits : mapping
        Model name → `FitResult` (all on the same data).
    confidence : float
        Level of the nested test's verdict.

    Returns
    -------
    dict
        ``models`` (per model: ``aic``, ``aicc``, ``delta_aicc``, ``akaike_weight``,
        ``n_parameters``, ``rss``), ``best_by_aicc``, ``nested_test`` (Michaelian ⊂ Hill, when
        both are present: ``test``, ``statistic``, ``df1``, ``df2``, ``p_value``) and a
        plain-language ``verdict`` about steepness.
    """
    ok = {name: fit for name, fit in fits.items() if fit.success}
    score = {name: (fit.aicc if fit.aicc is not None else fit.aic) for name, fit in ok.items()}
    best = min(score, key=lambda k: score[k]) if score else None
    weights_raw = {k: math.exp(-0.5 * (v - score[best])) for k, v in score.items()} if best else {}
    total = sum(weights_raw.values())
    table = {}
    for name, fit in fits.items():
        table[name] = {
            "aic": json_number(fit.aic),
            "aicc": json_number(fit.aicc),
            "delta_aicc": json_number(score[name] - score[best])
            if name in score and best
            else None,
            "akaike_weight": json_number(weights_raw[name] / total)
            if name in weights_raw
            else None,
            "n_parameters": fit.n_parameters,
            "rss": json_number(fit.rss),
            "success": fit.success,
        }
    out: dict[str, Any] = {"models": table, "best_by_aicc": best, "nested_test": None}
    verdict = None
    if best is not None and len(score) > 1:
        runner = sorted(score, key=lambda k: score[k])[1]
        gap = score[runner] - score[best]
        verdict = (
            f"by AICc the {best} model is preferred over {runner} "
            f"(delta AICc = {gap:.1f}{'; a weak preference' if gap < 2 else ''})"
        )
    mich, hill = ok.get("michaelian"), ok.get("hill")
    if mich is not None and hill is not None:
        test = nested_test(mich, hill)
        out["nested_test"] = test
        steep = steepness_verdict(test, hill, confidence)
        verdict = steep if verdict is None else f"{steep}; {verdict}"
    out["verdict"] = verdict
    return out


def nested_test(simple: FitResult, rich: FitResult) -> dict[str, Any]:
    """F-test (scatter estimated) or likelihood-ratio test (absolute sd) of nested fits."""
    df1 = rich.n_parameters - simple.n_parameters
    df2 = rich.n_points - rich.n_parameters
    cost_s = simple.chi_square if simple.chi_square is not None else simple.rss
    cost_r = rich.chi_square if rich.chi_square is not None else rich.rss
    if rich.absolute_sd:
        statistic = max(cost_s - cost_r, 0.0)
        p_value = float(stats.chi2.sf(statistic, df1))
        kind = "likelihood_ratio"
    else:
        statistic = max(cost_s - cost_r, 0.0) / df1 / (cost_r / df2) if cost_r > 0 else math.inf
        p_value = float(stats.f.sf(statistic, df1, df2))
        kind = "F"
    return {
        "simpler": simple.model,
        "richer": rich.model,
        "test": kind,
        "statistic": json_number(statistic),
        "df1": df1,
        "df2": df2,
        "p_value": p_value,
    }


def steepness_verdict(test: Mapping[str, Any], hill: FitResult, confidence: float = 0.95) -> str:
    """Plain-language verdict: steeper than, shallower than, or like a Michaelian response."""
    pct = f"{100 * confidence:g} %"
    n = hill.values["hill_coefficient"]
    est = next(p for p in hill.parameters if p.name == "hill_coefficient")
    interval = ""
    if est.low is not None or est.high is not None:
        lo = "open" if est.low is None else f"{est.low:.3g}"
        hi = "open" if est.high is None else f"{est.high:.3g}"
        interval = f", {pct} interval {lo} to {hi}"
    detail = f"{test['test']}-test p = {test['p_value']:.2g}; Hill coefficient {n:.3g}{interval}"
    if test["p_value"] < 1.0 - confidence:
        if n > 1:
            return f"steeper than Michaelian at {pct} ({detail})"
        return (
            f"shallower than Michaelian at {pct} ({detail}; a Hill coefficient below 1 "
            "suggests heterogeneity or negative cooperativity)"
        )
    return (
        f"not distinguishable from Michaelian at {pct} ({detail}): these data do not show "
        "ultrasensitivity"
    )


# --- the public one-call API ------------------------------------------------------------------


def fit_dose_response(
    data: Any,
    model: str = "hill",
    *,
    compare: Iterable[str] | None = DEFAULT_COMPARISON,
    cycle: Cycle | Mapping[str, Any] | None = None,
    readout: str = "total_modified",
    input_kind: str | None = None,
    fixed: Mapping[str, Any] | None = None,
    intervals: str = "profile",
    bootstrap: int = 1000,
    seed: int = 0,
    confidence: float = 0.95,
    absolute_sd: bool = False,
) -> dict[str, Any]:
    """Fit a model and return the content of ``hairtrigger fit`` as a JSON-ready dict.

    Parameters
    ----------
    data, model, cycle, readout, input_kind, fixed, intervals, bootstrap, seed, confidence,
    absolute_sd
        As in `fit_model`.
    compare : iterable of str, optional
        Other models fitted (best fit only) for the ``comparison`` block; default Michaelian and
        Hill, which gives the steepness verdict. None or empty skips the comparison. Fixed
        values apply to every compared model that has the parameter; ``mass_action`` needs
        `cycle`.

    Returns
    -------
    dict
        ``model``, ``parameters`` (name → ``{"value", "low", "high", "unit", "fixed"}``; ``None``
        for an open interval end), ``aic``, ``residual_sd``, ``n_points``, ``warnings``, then
        ``aicc``, ``bic``, ``log_likelihood``, ``n_parameters``, ``rss``, ``chi_square``,
        ``reduced_chi_square``, ``weighted``, ``absolute_sd``, ``success``, ``status``,
        ``message``, ``interval_method``, ``confidence``, ``correlations``, ``derived``,
        ``context``, ``data``, ``comparison`` (None when skipped), ``cycle`` (the fitted cycle
        when a full `Cycle` was given and the model is a cycle model) and ``bootstrap`` (with
        the bootstrap method).

    Examples
    --------
    >>> import numpy as np
    >>> x = np.array([0.1, 0.3, 1, 3, 10, 30.0])
    >>> y = x**2 / (1 + x**2) + np.array([1, -1, 1, -1, 1, -1]) * 1e-3
    >>> out = fit_dose_response({"input": x, "readout": y}, "hill", compare=None)
    >>> round(out["parameters"]["hill_coefficient"]["value"], 2)
    2.0
    """
    d = resolve_data(data, input_kind)
    check_choice("model", model, FIT_MODELS)
    others = [] if compare is None else list(dict.fromkeys(compare))
    for name in others:
        check_choice("compare", name, FIT_MODELS)
    common: dict[str, Any] = {
        "cycle": cycle,
        "readout": readout,
        "confidence": confidence,
        "absolute_sd": absolute_sd,
    }
    main = fit_model(
        d, model, fixed=fixed, intervals=intervals, bootstrap=bootstrap, seed=seed, **common
    )
    out = main.as_dict()
    out["data"] = d.as_dict()
    warnings = out["warnings"]
    if model in ("quasi_steady", "mass_action") and not d.input_kind_declared:
        warnings.append(
            "the input is taken as the activity ratio V1/V2 (the data do not declare "
            "input_kind); declare input_kind 'amount' to fit a scale factor for doses in other "
            "units"
        )
    comparison = None
    if others:
        fits = {model: main}
        for name in others:
            if name == model:
                continue
            if name == "mass_action" and cycle is None:
                msg = "comparing with mass_action needs the known cycle values (`cycle`)"
                raise ValueError(msg)
            model_names = build_model(name, d.input_kind, cycle, readout).parameter_names
            shared = {k: v for k, v in (fixed or {}).items() if k in model_names}
            try:
                # The Hill fit's interval on the Hill coefficient goes into the verdict.
                fits[name] = fit_model(
                    d,
                    name,
                    fixed=shared,
                    intervals="profile" if name == "hill" else "none",
                    **common,
                )
            except ValueError as exc:
                warnings.append(f"model {name} was not compared: {exc}")
        if len(fits) > 1:
            comparison = compare_fits(fits, confidence)
    out["comparison"] = comparison
    if isinstance(cycle, Cycle) and model in ("quasi_steady", "mass_action") and main.success:
        out["cycle"] = {
            k: float(v) for k, v in main.fitted_cycle(cycle).as_dict().items() if k in CYCLE_KEYS
        }
    return out


__all__ = [
    "DEFAULT_COMPARISON",
    "FIT_MODELS",
    "INTERVAL_METHODS",
    "FitResult",
    "MassActionModel",
    "ParameterEstimate",
    "Profile",
    "compare_fits",
    "fit_dose_response",
    "fit_model",
    "nested_test",
    "steepness_verdict",
]
