"""Dose–response models for fitting: a response shape times an assay scale.

Every model predicts ``readout = bottom + (top − bottom)·f(input; φ)``, where the shape
``f`` rises from 0 to at most 1 and the shape parameters φ are all positive (fitted in log
space). The two assay parameters enter linearly, which the fitting engine uses to pick good
starting values. Shapes are vectorised: φ of shape (m, k) and inputs of shape (n,) give
responses of shape (m, n).

``michaelian``
    f = x/(ec50 + x).
``hill``
    f = xⁿ/(ec50ⁿ + xⁿ), n = ``hill_coefficient``.
``quasi_steady``
    f = the Goldbeter–Koshland modified fraction G(r, 1, K1, K2) (Goldbeter & Koshland 1981,
    PNAS 78:6840) at activity ratio r = input (``input_kind="ratio"``) or r = input_scale·input
    (``input_kind="amount"``).
``mass_action``
    f = the exact steady readout with enzyme–substrate complexes kept, for known totals and
    turnover numbers; fitted Michaelis constants ``kinase_km`` and ``phosphatase_km`` (µM); the
    kinase amount follows from r as ``r·k2·E2/k1``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, ClassVar, Final

import numpy as np
from scipy.special import expit

from .params import CYCLE_UNITS, READOUTS, Cycle, check_choice, check_positive
from .steady import FloatArray, goldbeter_koshland, steady_state
from .steepness import quasi_steady_hill_coefficient, quasi_steady_response_coefficient, thresholds

#: Model names accepted by the fitting functions and ``hairtrigger fit --model``.
FIT_MODELS: Final[tuple[str, ...]] = ("michaelian", "hill", "quasi_steady", "mass_action")

#: Cycle values the mass-action model needs to know (the rest are fitted or irrelevant).
KNOWN_CYCLE_KEYS: Final[tuple[str, ...]] = (
    "substrate_total",
    "phosphatase_total",
    "kinase_kcat",
    "phosphatase_kcat",
)


@dataclass(frozen=True)
class ParameterSpec:
    """One fitted parameter.

    Attributes
    ----------
    name : str
        Name used in results and on the command line.
    unit : str
        Unit text (``"1"`` dimensionless; ``"input"``/``"readout"`` stand for the data's units).
    description : str
        Short human description.
    positive : bool
        Fitted in log space (shape parameters); False for the linear assay parameters.
    """

    name: str
    unit: str
    description: str
    positive: bool = True


BOTTOM = ParameterSpec("bottom", "readout", "assay readout with no modified substrate", False)
TOP = ParameterSpec("top", "readout", "assay readout at full modification", False)


@dataclass(frozen=True)
class SearchBox:
    """Log-space ranges of the shape parameters: where starts are drawn, and hard bounds."""

    start_low: FloatArray
    start_high: FloatArray
    bound_low: FloatArray
    bound_high: FloatArray


class ShapeModel:
    """Base class: a response shape with positive parameters plus the assay scale.

    Subclasses set `name` and `shape_specs` and implement `shape` and `search_box`.
    """

    name: ClassVar[str] = ""
    shape_specs: tuple[ParameterSpec, ...] = ()

    @property
    def specs(self) -> tuple[ParameterSpec, ...]:
        """All parameter specs: shape parameters, then ``bottom``, ``top``."""
        return (*self.shape_specs, BOTTOM, TOP)

    @property
    def parameter_names(self) -> tuple[str, ...]:
        """Parameter names in result order."""
        return tuple(s.name for s in self.specs)

    @property
    def n_shape(self) -> int:
        """Number of shape (log-space) parameters."""
        return len(self.shape_specs)

    def shape(self, phi: FloatArray, x: FloatArray) -> FloatArray:
        """Response shape in [0, 1]; `phi` (m, k) natural values, `x` (n,) → (m, n)."""
        raise NotImplementedError

    def search_box(self, x: FloatArray) -> SearchBox:
        """Start and bound ranges for the shape parameters (natural values), given inputs."""
        raise NotImplementedError

    def predict(self, theta: FloatArray, x: FloatArray) -> FloatArray:
        """Readout for natural parameter vector(s) `theta` (p,) or (m, p) at inputs `x`."""
        theta = np.asarray(theta, dtype=float)
        x = np.asarray(x, dtype=float)
        single = theta.ndim == 1
        t2 = np.atleast_2d(theta)
        f = self.shape(t2[:, : self.n_shape], x.ravel())
        y = t2[:, -2, None] + (t2[:, -1, None] - t2[:, -2, None]) * f
        return y[0].reshape(x.shape) if single else y

    def derived(self, values: Mapping[str, float]) -> dict[str, float | None]:
        """Point estimates of quantities that follow from fitted values (steepness, EC values)."""
        return {}

    def context(self) -> dict[str, Any]:
        """Fixed, known quantities the model uses (for results)."""
        return {}


def _log_input(x: FloatArray) -> FloatArray:
    with np.errstate(divide="ignore"):
        return np.log(x)


def _input_range(x: FloatArray) -> tuple[float, float]:
    positive = x[x > 0]
    return float(positive.min()), float(positive.max())


class MichaelianModel(ShapeModel):
    """Hyperbolic response f = x/(ec50 + x) (Hill coefficient 1)."""

    name: ClassVar[str] = "michaelian"
    shape_specs = (ParameterSpec("ec50", "input", "input giving half the response"),)

    def shape(self, phi: FloatArray, x: FloatArray) -> FloatArray:  # noqa: D102
        u = _log_input(x)[None, :] - np.log(phi[:, 0:1])
        return np.asarray(expit(u), dtype=float)

    def search_box(self, x: FloatArray) -> SearchBox:  # noqa: D102
        lo, hi = _input_range(x)
        return SearchBox(
            np.array([lo]), np.array([hi]), np.array([lo * 1e-4]), np.array([hi * 1e4])
        )

    def derived(self, values: Mapping[str, float]) -> dict[str, float | None]:  # noqa: D102
        ec50 = values["ec50"]
        return {
            "ec10": ec50 / 9.0,
            "ec90": ec50 * 9.0,
            "response_coefficient": 81.0,
            "hill_coefficient": 1.0,
        }


class HillModel(ShapeModel):
    """Hill response f = xⁿ/(ec50ⁿ + xⁿ)."""

    name: ClassVar[str] = "hill"
    shape_specs = (
        ParameterSpec("ec50", "input", "input giving half the response"),
        ParameterSpec("hill_coefficient", "1", "Hill coefficient n (steepness)"),
    )

    def shape(self, phi: FloatArray, x: FloatArray) -> FloatArray:  # noqa: D102
        u = phi[:, 1:2] * (_log_input(x)[None, :] - np.log(phi[:, 0:1]))
        return np.asarray(expit(u), dtype=float)

    def search_box(self, x: FloatArray) -> SearchBox:  # noqa: D102
        lo, hi = _input_range(x)
        return SearchBox(
            np.array([lo, 0.5]),
            np.array([hi, 8.0]),
            np.array([lo * 1e-4, 0.02]),
            np.array([hi * 1e4, 200.0]),
        )

    def derived(self, values: Mapping[str, float]) -> dict[str, float | None]:  # noqa: D102
        ec50, n = values["ec50"], values["hill_coefficient"]
        return {
            "ec10": ec50 * 9.0 ** (-1.0 / n),
            "ec90": ec50 * 9.0 ** (1.0 / n),
            "response_coefficient": 81.0 ** (1.0 / n),
        }


def _activity_ratio_at(y: float, k1: float, k2: float) -> float:
    """Activity ratio giving modified fraction `y` in the quasi-steady cycle (closed form)."""
    return y * (k1 + 1.0 - y) / ((1.0 - y) * (k2 + y))


class QuasiSteadyModel(ShapeModel):
    """Goldbeter–Koshland response of a quasi-steady cycle, K1 = M1/W and K2 = M2/W fitted.

    Parameters
    ----------
    input_kind : {"ratio", "amount"}
        ``amount`` adds the fitted ``input_scale`` (activity ratio per unit input).
    """

    name: ClassVar[str] = "quasi_steady"

    def __init__(self, input_kind: str = "ratio"):
        self.input_kind = input_kind
        specs = [
            ParameterSpec("K1", "1", "kinase Michaelis constant over total substrate, M1/W"),
            ParameterSpec("K2", "1", "phosphatase Michaelis constant over total substrate, M2/W"),
        ]
        if input_kind == "amount":
            specs.append(
                ParameterSpec("input_scale", "1/input", "activity ratio V1/V2 per unit input")
            )
        self.shape_specs = tuple(specs)

    def ratio(self, phi: FloatArray, x: FloatArray) -> FloatArray:
        """Activity ratio at inputs `x`, shape (m, n)."""
        scale = phi[:, 2:3] if self.input_kind == "amount" else np.ones((phi.shape[0], 1))
        return np.asarray(scale * x[None, :], dtype=float)

    def shape(self, phi: FloatArray, x: FloatArray) -> FloatArray:  # noqa: D102
        return goldbeter_koshland(self.ratio(phi, x), 1.0, phi[:, 0:1], phi[:, 1:2])

    def search_box(self, x: FloatArray) -> SearchBox:  # noqa: D102
        start_low, start_high = [1e-3, 1e-3], [3.0, 3.0]
        bound_low, bound_high = [1e-6, 1e-6], [1e4, 1e4]
        if self.input_kind == "amount":
            lo, hi = _input_range(x)
            start_low.append(0.1 / hi)
            start_high.append(10.0 / lo)
            bound_low.append(1e-4 / hi)
            bound_high.append(1e4 / lo)
        return SearchBox(*(np.array(v) for v in (start_low, start_high, bound_low, bound_high)))

    def derived(self, values: Mapping[str, float]) -> dict[str, float | None]:  # noqa: D102
        k1, k2 = values["K1"], values["K2"]
        out: dict[str, float | None] = {
            "hill_coefficient": float(quasi_steady_hill_coefficient(k1, k2)),
            "response_coefficient": float(quasi_steady_response_coefficient(k1, k2)),
        }
        for pct, y in (("10", 0.1), ("50", 0.5), ("90", 0.9)):
            out[f"activity_ratio_{pct}"] = _activity_ratio_at(y, k1, k2)
        if self.input_kind == "amount":
            for pct in ("10", "50", "90"):
                ratio = out[f"activity_ratio_{pct}"]
                assert ratio is not None
                out[f"input_{pct}"] = ratio / values["input_scale"]
        return out

    def context(self) -> dict[str, Any]:  # noqa: D102
        return {"input_kind": self.input_kind}


class MassActionModel(ShapeModel):
    """Exact steady readout with complexes kept; Michaelis constants fitted, the rest known.

    Parameters
    ----------
    known : Cycle or mapping
        Supplies `KNOWN_CYCLE_KEYS` (µM, 1/s). A `Cycle` also supplies start values for the
        Michaelis constants.
    readout : {"free_modified", "total_modified"}
        What the assay measures (``total_modified``: modified substrate including the
        phosphatase complex, as seen after lysis).
    input_kind : {"ratio", "amount"}
        ``amount`` adds the fitted ``input_scale``.
    """

    name: ClassVar[str] = "mass_action"

    def __init__(
        self,
        known: Cycle | Mapping[str, Any],
        readout: str = "total_modified",
        input_kind: str = "ratio",
    ):
        self.readout = check_choice("readout", readout, READOUTS)
        self.input_kind = input_kind
        values = known.as_dict() if isinstance(known, Cycle) else dict(known)
        missing = [k for k in KNOWN_CYCLE_KEYS if k not in values]
        if missing:
            msg = (
                f"the mass_action model needs the known cycle value `{missing[0]}` "
                f"({CYCLE_UNITS[missing[0]]}); give a cycle with " + ", ".join(KNOWN_CYCLE_KEYS)
            )
            raise ValueError(msg)
        self.known = {k: check_positive(k, values[k]) for k in KNOWN_CYCLE_KEYS}
        self.base_cycle = known if isinstance(known, Cycle) else None
        specs = [
            ParameterSpec("kinase_km", "uM", "kinase Michaelis constant M1"),
            ParameterSpec("phosphatase_km", "uM", "phosphatase Michaelis constant M2"),
        ]
        if input_kind == "amount":
            specs.append(
                ParameterSpec("input_scale", "1/input", "activity ratio V1/V2 per unit input")
            )
        self.shape_specs = tuple(specs)

    @property
    def phosphatase_vmax(self) -> float:
        """V2 = k2·E2, µM/s."""
        return self.known["phosphatase_kcat"] * self.known["phosphatase_total"]

    def cycle_arrays(self, phi: FloatArray, x: FloatArray) -> dict[str, FloatArray]:
        """Cycle parameter arrays of shape (m, n) for `phi` (m, k) and inputs `x` (n,)."""
        scale = phi[:, 2:3] if self.input_kind == "amount" else np.ones((phi.shape[0], 1))
        ratio = scale * x[None, :]
        kinase_total = ratio * self.phosphatase_vmax / self.known["kinase_kcat"]
        return {
            "substrate_total": np.full(ratio.shape, self.known["substrate_total"]),
            "kinase_total": kinase_total,
            "kinase_kcat": np.full(ratio.shape, self.known["kinase_kcat"]),
            "kinase_km": np.broadcast_to(phi[:, 0:1], ratio.shape),
            "phosphatase_total": np.full(ratio.shape, self.known["phosphatase_total"]),
            "phosphatase_kcat": np.full(ratio.shape, self.known["phosphatase_kcat"]),
            "phosphatase_km": np.broadcast_to(phi[:, 1:2], ratio.shape),
        }

    def shape(self, phi: FloatArray, x: FloatArray) -> FloatArray:  # noqa: D102
        params = self.cycle_arrays(phi, x)
        # No kinase, nothing modified: the steady-state solver needs V1 > 0, so evaluate a
        # placeholder there and put the exact zero back.
        zero = params["kinase_total"] <= 0.0
        params["kinase_total"] = np.where(zero, 1.0, params["kinase_total"])
        y = steady_state(params, "mass_action").readout(self.readout)
        return np.asarray(np.where(zero, 0.0, y), dtype=float)

    def search_box(self, x: FloatArray) -> SearchBox:  # noqa: D102
        w = self.known["substrate_total"]
        start_low, start_high = [1e-3 * w, 1e-3 * w], [3.0 * w, 3.0 * w]
        bound_low, bound_high = [1e-6 * w, 1e-6 * w], [1e4 * w, 1e4 * w]
        if self.input_kind == "amount":
            lo, hi = _input_range(x)
            start_low.append(0.1 / hi)
            start_high.append(10.0 / lo)
            bound_low.append(1e-4 / hi)
            bound_high.append(1e4 / lo)
        return SearchBox(*(np.array(v) for v in (start_low, start_high, bound_low, bound_high)))

    def fitted_params(self, values: Mapping[str, float]) -> dict[str, float]:
        """Cycle parameters (except the kinase amount, set by the input) at fitted values."""
        return {
            **self.known,
            "kinase_km": values["kinase_km"],
            "phosphatase_km": values["phosphatase_km"],
            "kinase_total": self.phosphatase_vmax / self.known["kinase_kcat"],
        }

    def derived(self, values: Mapping[str, float]) -> dict[str, float | None]:  # noqa: D102
        w = self.known["substrate_total"]
        params = {k: np.asarray(v) for k, v in self.fitted_params(values).items()}
        out: dict[str, float | None] = {
            "K1": values["kinase_km"] / w,
            "K2": values["phosphatase_km"] / w,
        }
        for relative in (False, True):
            th = thresholds(params, "mass_action", self.readout, relative=relative)
            prefix = "relative_" if relative else ""
            for key in (
                "activity_ratio_10",
                "activity_ratio_50",
                "activity_ratio_90",
                "hill_coefficient",
            ):
                value = float(th[key])
                out[prefix + key] = value if math.isfinite(value) else None
        return out

    def context(self) -> dict[str, Any]:  # noqa: D102
        return {"input_kind": self.input_kind, "readout": self.readout, "known": dict(self.known)}


def build_model(
    model: str,
    input_kind: str = "ratio",
    cycle: Cycle | Mapping[str, Any] | None = None,
    readout: str = "total_modified",
) -> ShapeModel:
    """Return the model object for a name in `FIT_MODELS`.

    Parameters
    ----------
    model : str
        One of `FIT_MODELS`.
    input_kind : {"ratio", "amount"}
        What the data's input holds (matters for the cycle models only).
    cycle : Cycle or mapping, optional
        Known cycle values; required for ``mass_action``.
    readout : str
        Assay readout of the mass-action model.
    """
    check_choice("model", model, FIT_MODELS)
    if model == "michaelian":
        return MichaelianModel()
    if model == "hill":
        return HillModel()
    if model == "quasi_steady":
        return QuasiSteadyModel(input_kind)
    if cycle is None:
        msg = (
            "the mass_action model needs the known totals and turnover numbers: pass `cycle` "
            "(a Cycle or a mapping with " + ", ".join(KNOWN_CYCLE_KEYS) + ")"
        )
        raise ValueError(msg)
    return MassActionModel(cycle, readout, input_kind)
