"""Wall times of dose-response fits: Hill, quasi-steady and mass-action; profile vs bootstrap.

Run: ``PYTHONPATH=src python benchmarks/bench_fitting.py`` (from the repository root).

Baselines measured in the same run:

* ``scipy.optimize.curve_fit`` from one good start on the same data (what a careful analyst
  does by hand: one local fit, linearised standard errors) — the price of our multistart,
  profile intervals and diagnostics is reported as a ratio against it;
* our own best fit without intervals (``intervals="none"``) — what the intervals cost on top.

Figures are the best of a few repeats (the machine is shared; best-of is the stable figure).
"""

from __future__ import annotations

import functools

import numpy as np
from scipy import optimize

import _timing  # benchmarks/_timing.py (the script folder is on sys.path)
from hairtrigger.core.fit_models import MassActionModel
from hairtrigger.core.fitting import fit_dose_response, fit_model
from hairtrigger.core.steady import goldbeter_koshland

KNOWN = {
    "substrate_total": 2.0,
    "phosphatase_total": 0.3,
    "kinase_kcat": 5.0,
    "phosphatase_kcat": 3.0,
}


best_of = functools.partial(_timing.best_of, repeat=5)


def hill(x: np.ndarray, ec50: float, n: float, bottom: float, top: float) -> np.ndarray:
    return bottom + (top - bottom) * x**n / (ec50**n + x**n)


def quasi_steady(x: np.ndarray, k1: float, k2: float, scale: float, bottom: float, top: float):
    return bottom + (top - bottom) * goldbeter_koshland(scale * x, 1.0, k1, k2)


def main() -> None:
    rng = np.random.default_rng(0)
    x_hill = np.repeat(np.geomspace(0.2, 20.0, 8), 3)
    hill_data = {
        "input": x_hill,
        "readout": hill(x_hill, 2.0, 2.5, 0.1, 1.0) + rng.normal(0, 0.03, x_hill.size),
    }
    dose = np.repeat(np.geomspace(2.0, 60.0, 10), 2)
    qs_data = {
        "input": dose,
        "readout": quasi_steady(dose, 0.05, 0.1, 0.05, 0.05, 0.9) + rng.normal(0, 0.02, dose.size),
        "input_kind": "amount",
    }
    r = np.geomspace(0.2, 3.0, 15)
    ma = MassActionModel(KNOWN)
    ma_data = {
        "input": r,
        "readout": ma.predict(np.array([0.1, 0.3, 0.02, 0.95]), r) + rng.normal(0, 0.01, r.size),
    }

    rows: list[tuple[str, float, str]] = []

    # Hill ------------------------------------------------------------------------------------
    t_cf_hill = best_of(
        lambda: optimize.curve_fit(
            hill, hill_data["input"], hill_data["readout"], p0=[2.0, 2.5, 0.1, 1.0]
        ),
        repeat=20,
    )
    t_hill_best = best_of(lambda: fit_model(hill_data, "hill", intervals="none"))
    t_hill_prof = best_of(lambda: fit_model(hill_data, "hill"))
    t_hill_boot = best_of(
        lambda: fit_model(hill_data, "hill", intervals="bootstrap", bootstrap=200, seed=0),
        repeat=2,
    )
    t_hill_api = best_of(lambda: fit_dose_response(hill_data, "hill"))
    rows += [
        ("Hill, curve_fit one start (baseline)", t_cf_hill, "1"),
        ("Hill, multistart best fit", t_hill_best, f"{t_hill_best / t_cf_hill:.0f}x curve_fit"),
        ("Hill, profile intervals", t_hill_prof, f"{t_hill_prof / t_hill_best:.1f}x best fit"),
        (
            "Hill, bootstrap 200 replicates",
            t_hill_boot,
            f"{t_hill_boot / t_hill_prof:.1f}x profile",
        ),
        (
            "Hill, fit_dose_response (profile + Michaelian comparison)",
            t_hill_api,
            f"{t_hill_api / t_cf_hill:.0f}x curve_fit",
        ),
    ]

    # Quasi-steady -----------------------------------------------------------------------------
    t_cf_qs = best_of(
        lambda: optimize.curve_fit(
            quasi_steady, qs_data["input"], qs_data["readout"], p0=[0.05, 0.1, 0.05, 0.05, 0.9]
        ),
        repeat=20,
    )
    t_qs_best = best_of(lambda: fit_model(qs_data, "quasi_steady", intervals="none"))
    t_qs_prof = best_of(lambda: fit_model(qs_data, "quasi_steady"))
    t_qs_boot = best_of(
        lambda: fit_model(qs_data, "quasi_steady", intervals="bootstrap", bootstrap=200, seed=0),
        repeat=1,
    )
    rows += [
        ("Quasi-steady (dose units), curve_fit one start (baseline)", t_cf_qs, "1"),
        ("Quasi-steady, multistart best fit", t_qs_best, f"{t_qs_best / t_cf_qs:.0f}x curve_fit"),
        ("Quasi-steady, profile intervals", t_qs_prof, f"{t_qs_prof / t_qs_best:.1f}x best fit"),
        (
            "Quasi-steady, bootstrap 200 replicates",
            t_qs_boot,
            f"{t_qs_boot / t_qs_prof:.1f}x profile",
        ),
    ]

    # Mass action ------------------------------------------------------------------------------
    t_ma_best = best_of(lambda: fit_model(ma_data, "mass_action", cycle=KNOWN, intervals="none"))
    t_ma_prof = best_of(lambda: fit_model(ma_data, "mass_action", cycle=KNOWN), repeat=3)
    rows += [
        ("Mass action (known totals), multistart best fit", t_ma_best, ""),
        ("Mass action, profile intervals", t_ma_prof, f"{t_ma_prof / t_ma_best:.1f}x best fit"),
    ]

    width = max(len(r[0]) for r in rows)
    print(f"{'fit':{width}s}  {'wall time':>10s}  ratio")
    for name, seconds, ratio in rows:
        print(f"{name:{width}s}  {seconds * 1e3:8.1f} ms  {ratio}")


if __name__ == "__main__":
    main()
