"""Results of dose-response fits: estimates with intervals, profiles, the whole fit.

Plain values and arrays only; `FitResult.as_dict` gives the JSON content of ``hairtrigger fit``
(without the comparison block, which `hairtrigger.core.fitting.fit_dose_response` adds).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .fit_models import ShapeModel
from .params import Cycle
from .steady import FloatArray

# --- results -----------------------------------------------------------------------------------


@dataclass(frozen=True)
class ParameterEstimate:
    """One fitted parameter with its interval.

    Attributes
    ----------
    name, unit : str
        Parameter name and unit (``"input"``/``"readout"`` stand for the data's units).
    value : float
        Best-fit value.
    low, high : float or None
        Interval ends; None where the interval is open (the data do not bound it).
    fixed : bool
        Held at a given value rather than fitted.
    """

    name: str
    unit: str
    value: float
    low: float | None
    high: float | None
    fixed: bool = False

    @property
    def identifiable(self) -> bool:
        """True when both interval ends exist (or the parameter was fixed)."""
        return self.fixed or (self.low is not None and self.high is not None)


@dataclass(frozen=True)
class Profile:
    """A parameter's profile: values tried and the profile statistic at each (sorted)."""

    values: FloatArray
    statistic: FloatArray
    threshold: float


@dataclass(frozen=True, eq=False)
class FitResult:
    """Outcome of fitting one model to one data set (plain values and arrays).

    Attributes
    ----------
    model : str
        Model name.
    parameters : tuple of ParameterEstimate
        In the model's order.
    success : bool
        True when the optimiser converged (open intervals do not make a fit fail).
    status : int
        0 converged, 1 not converged (evaluation limit), 2 failed (no finite prediction).
    message : str
        Human-readable status.
    n_points, n_parameters : int
        Measurements, and free (fitted) parameters.
    rss : float
        Sum of squared raw residuals (readout units²).
    chi_square : float or None
        Sum of squared residuals over sd² (weighted fits).
    residual_sd : float
        sqrt(rss / (n − p)), readout units.
    log_likelihood, aic, aicc, bic : float or None
        Gaussian log-likelihood and information criteria (AICc None when n − k − 1 <= 0).
    correlations : dict
        Correlations of the free parameters (log scale for positive ones) from the
        linearised covariance; None where undefined.
    warnings : tuple of str
        Plain-language warnings (identifiability, bounds, goodness of fit).
    interval_method : str
        ``"profile"`` or ``"bootstrap"``.
    confidence : float
        Interval level.
    derived : dict
        Point estimates of derived quantities (EC10/EC90, steepness, K1/K2 ...).
    profiles : dict
        `Profile` per free parameter (profile method only).
    bootstrap : dict or None
        ``replicates``, ``seed``, ``failed`` (bootstrap method only).
    input, readout, sd, fitted : ndarray
        The data and the fitted readout at each point.
    """

    model: str
    parameters: tuple[ParameterEstimate, ...]
    success: bool
    status: int
    message: str
    n_points: int
    n_parameters: int
    rss: float
    chi_square: float | None
    residual_sd: float
    log_likelihood: float
    aic: float
    aicc: float | None
    bic: float
    correlations: dict[str, dict[str, float | None]]
    warnings: tuple[str, ...]
    interval_method: str
    confidence: float
    derived: dict[str, float | None]
    profiles: dict[str, Profile]
    bootstrap: dict[str, int] | None
    input: FloatArray
    readout: FloatArray
    sd: FloatArray | None
    fitted: FloatArray
    absolute_sd: bool
    shape_model: ShapeModel = field(repr=False)
    theta: FloatArray = field(repr=False)

    @property
    def values(self) -> dict[str, float]:
        """Best-fit values by name."""
        return {p.name: p.value for p in self.parameters}

    @property
    def residuals(self) -> FloatArray:
        """Raw residuals readout − fitted."""
        return np.asarray(self.readout - self.fitted, dtype=float)

    def predict(self, x: Any) -> FloatArray:
        """Fitted readout at inputs `x` (array_like, >= 0)."""
        arr = np.asarray(x, dtype=float)
        if not np.all(np.isfinite(arr)) or np.any(arr < 0):
            msg = "`x` must be finite inputs >= 0"
            raise ValueError(msg)
        return self.shape_model.predict(self.theta, arr)

    def fitted_cycle(self, base: Cycle) -> Cycle:
        """A cycle from `base` with the fitted Michaelis constants (cycle models only).

        For ``quasi_steady`` the constants are K·W with W = ``base.substrate_total``; for
        ``mass_action`` they are the fitted values in µM. Other parameters come from `base`.
        """
        if not isinstance(base, Cycle):
            msg = f"`base` must be a hairtrigger.Cycle; got {type(base).__name__}"
            raise TypeError(msg)
        v = self.values
        if self.model == "quasi_steady":
            w = base.substrate_total
            return base.replace(kinase_km=v["K1"] * w, phosphatase_km=v["K2"] * w)
        if self.model == "mass_action":
            return base.replace(kinase_km=v["kinase_km"], phosphatase_km=v["phosphatase_km"])
        msg = f"a {self.model} fit has no cycle parameters; fit 'quasi_steady' or 'mass_action'"
        raise ValueError(msg)

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready content (the keys of ``hairtrigger fit``, without the comparison)."""
        out: dict[str, Any] = {
            "model": self.model,
            "parameters": {
                p.name: {
                    "value": json_number(p.value),
                    "low": json_number(p.low),
                    "high": json_number(p.high),
                    "unit": p.unit,
                    "fixed": p.fixed,
                }
                for p in self.parameters
            },
            "aic": json_number(self.aic),
            "residual_sd": json_number(self.residual_sd),
            "n_points": self.n_points,
            "warnings": list(self.warnings),
            "aicc": json_number(self.aicc),
            "bic": json_number(self.bic),
            "log_likelihood": json_number(self.log_likelihood),
            "n_parameters": self.n_parameters,
            "rss": json_number(self.rss),
            "chi_square": json_number(self.chi_square),
            "reduced_chi_square": json_number(
                None
                if self.chi_square is None
                else self.chi_square / max(self.n_points - self.n_parameters, 1)
            ),
            "weighted": self.sd is not None,
            "absolute_sd": self.absolute_sd,
            "success": self.success,
            "status": self.status,
            "message": self.message,
            "interval_method": self.interval_method,
            "confidence": self.confidence,
            "correlations": self.correlations,
            "derived": {k: json_number(v) for k, v in self.derived.items()},
            "context": self.shape_model.context(),
        }
        if self.bootstrap is not None:
            out["bootstrap"] = dict(self.bootstrap)
        return out


def json_number(value: Any) -> float | None:
    """Return `value` as a float, or None when it is None, NaN or infinite (JSON null)."""
    if value is None:
        return None
    number = float(value)
    return number if math.isfinite(number) else None
