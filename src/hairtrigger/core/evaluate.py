"""The standard set of steady-state quantities of a cycle, and steepness maps.

`evaluate` returns the JSON-ready content of ``hairtrigger evaluate``; `evaluate_arrays` computes
the same quantities vectorised over parameter arrays (sweeps, maps, fitting).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike

from .params import MODELS, READOUTS, Cycle, check_choice
from .steady import FloatArray, steady_state
from .steepness import (
    LN81,
    peak_sensitivity,
    quasi_steady_hill_coefficient,
    readout_ceiling,
    threshold_log_ratios,
    thresholds,
)
from .switching import default_dynamics

#: Keys of the threshold block, absolute and relative.
THRESHOLD_KEYS: Final[tuple[str, ...]] = (
    "activity_ratio_10",
    "activity_ratio_50",
    "activity_ratio_90",
    "response_coefficient",
    "hill_coefficient",
)

#: Scalar keys of `evaluate`, in the contract's order (``relative`` and ``warnings`` follow).
EVALUATE_KEYS: Final[tuple[str, ...]] = (
    "model",
    "readout",
    "K1",
    "K2",
    "activity_ratio",
    "readout_value",
    *THRESHOLD_KEYS,
    "readout_ceiling",
)

#: Measures accepted by `steepness_map`.
MAP_MEASURES: Final[tuple[str, ...]] = (
    "hill_coefficient",
    "response_coefficient",
    "peak_sensitivity",
    "relative_hill_coefficient",
)


def evaluate_arrays(
    params: Mapping[str, ArrayLike],
    model: str = "quasi_steady",
    readout: str = "total_modified",
) -> dict[str, FloatArray]:
    """Vectorised `evaluate`: every numeric quantity as an array of the broadcast shape.

    Relative quantities carry the prefix ``relative_`` (for example
    ``relative_hill_coefficient``). Unreachable targets give NaN.
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    w = np.asarray(params["substrate_total"], dtype=float)
    state = steady_state(params, model)
    absolute = thresholds(params, model, readout, relative=False)
    relative = thresholds(params, model, readout, relative=True)
    out: dict[str, FloatArray] = {
        "K1": np.asarray(params["kinase_km"], dtype=float) / w,
        "K2": np.asarray(params["phosphatase_km"], dtype=float) / w,
        "activity_ratio": np.asarray(params["kinase_kcat"], dtype=float)
        * np.asarray(params["kinase_total"], dtype=float)
        / (
            np.asarray(params["phosphatase_kcat"], dtype=float)
            * np.asarray(params["phosphatase_total"], dtype=float)
        ),
        "readout_value": state.readout(readout),
        "readout_ceiling": readout_ceiling(params, model, readout),
    }
    for key in THRESHOLD_KEYS:
        out[key] = absolute[key]
        out["relative_" + key] = relative[key]
    return out


def _json_number(value: Any) -> float | None:
    number = float(value)
    return number if math.isfinite(number) else None


def evaluate(
    cycle: Cycle, model: str = "quasi_steady", readout: str = "total_modified"
) -> dict[str, Any]:
    """Steady readout, thresholds, steepness and ceiling of one cycle.

    Parameters
    ----------
    cycle : Cycle
        Validated cycle parameters.
    model : {"quasi_steady", "mass_action"}
        Complexes neglected or kept.
    readout : {"free_modified", "total_modified"}
        Free modified substrate, or modified substrate including the phosphatase complex.

    Returns
    -------
    dict
        The keys of ``hairtrigger evaluate`` (`EVALUATE_KEYS`, then ``relative``,
        ``warnings`` and ``dynamics``). Absolute thresholds are fractions of total substrate,
        relative ones
        fractions of the readout ceiling; a quantity that does not exist is None and a warning
        says why. ``dynamics`` (`hairtrigger.core.switching.default_dynamics`) times the
        response to the kinase amount halved (``down``) and restored (``up``) from steady
        state: half-time, 10→90 % time, settling (99 %) and relaxation times in s, plus the
        relaxation time at the cycle's steady state and at the threshold. Quasi-steady times
        are exact (closed-form solution); mass-action times come from the compiled
        integrator.

    Examples
    --------
    >>> c = Cycle(substrate_total=1.0, kinase_total=1.0, kinase_kcat=1.0, kinase_km=0.1,
    ...           kinase_kon=100.0, phosphatase_total=1.0, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.1, phosphatase_kon=100.0)
    >>> round(evaluate(c, "quasi_steady")["response_coefficient"], 12)
    3.24
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise TypeError(msg)
    arrays = evaluate_arrays(cycle.arrays(), model, readout)
    result: dict[str, Any] = {"model": model, "readout": readout}
    for key in EVALUATE_KEYS[2:]:
        result[key] = _json_number(arrays[key])
    result["relative"] = {key: _json_number(arrays["relative_" + key]) for key in THRESHOLD_KEYS}
    warnings: list[str] = []
    ceiling = result["readout_ceiling"]
    for frac, key in ((0.1, "activity_ratio_10"), (0.5, "activity_ratio_50"), (0.9, "activity_ratio_90")):
        if result[key] is None:
            warnings.append(
                f"{key} does not exist: a readout of {frac:g} of total substrate is above the "
                f"ceiling {ceiling:.6g} that no kinase amount can exceed (substrate held in "
                "enzyme complexes)"
            )
    if result["response_coefficient"] is None:
        warnings.append(
            "response_coefficient and hill_coefficient do not exist for absolute targets "
            "(see the warnings above); the relative block measures steepness against the ceiling"
        )
    result["warnings"] = warnings
    # After the contract's keys; its own problems are appended to the same warnings list.
    result["dynamics"] = _dynamics(cycle, model, readout, warnings)
    return result


def _dynamics(cycle: Cycle, model: str, readout: str, warnings: list[str]) -> dict[str, Any] | None:
    """The ``dynamics`` block (`default_dynamics`), or None with a warning if it cannot exist."""
    if model == "mass_action":
        for name in ("kinase", "phosphatase"):
            if getattr(cycle, f"{name}_koff") < 0.0:
                warnings.append(
                    f"dynamics do not exist: the {name} dissociation rate {name}_kon*{name}_km - "
                    f"{name}_kcat is negative; the mass-action model needs a larger {name}_kon"
                )
                return None
    block = default_dynamics(cycle, model, readout)
    for direction in ("up", "down"):
        if not block[direction]["success"]:
            warnings.append(f"dynamics.{direction}: {block[direction]['message']}")
    return block


def steepness_map(
    cycle: Cycle,
    kinase_km: ArrayLike,
    phosphatase_km: ArrayLike,
    model: str = "quasi_steady",
    readout: str = "total_modified",
    measure: str = "hill_coefficient",
) -> FloatArray:
    """Steepness over arrays of the two Michaelis constants, other parameters from `cycle`.

    Parameters
    ----------
    cycle : Cycle
        Supplies substrate, enzyme amounts and turnover numbers.
    kinase_km, phosphatase_km : array_like
        Michaelis constants (µM); broadcast against each other (for a grid, pass
        ``km1[None, :]`` and ``km2[:, None]``).
    model, readout : str
        As in `evaluate`.
    measure : {"hill_coefficient", "response_coefficient", "peak_sensitivity",
               "relative_hill_coefficient"}
        The steepness measure; thresholds are absolute except for the relative Hill
        coefficient, which takes them as fractions of the readout ceiling.

    Returns
    -------
    ndarray of float
        Broadcast shape of the two Km arrays; NaN where the measure is undefined.
    """
    check_choice("measure", measure, MAP_MEASURES)
    km1 = np.asarray(kinase_km, dtype=float)
    km2 = np.asarray(phosphatase_km, dtype=float)
    bad = ~(np.isfinite(km1).all() and np.isfinite(km2).all() and (km1 > 0).all() and (km2 > 0).all())
    if bad:
        msg = "`kinase_km` and `phosphatase_km` must be finite and > 0 uM"
        raise ValueError(msg)
    shape = np.broadcast(km1, km2).shape
    params: dict[str, ArrayLike] = dict(cycle.as_dict())
    params["kinase_km"] = km1
    params["phosphatase_km"] = km2
    if measure == "peak_sensitivity":
        return np.broadcast_to(peak_sensitivity(params, model, readout), shape).astype(float)
    if model == "quasi_steady" and measure != "response_coefficient":
        # Absolute and relative thresholds coincide (ceiling 1); the closed form is exact.
        values = quasi_steady_hill_coefficient(km1 / cycle.substrate_total, km2 / cycle.substrate_total)
        return np.broadcast_to(values, shape).astype(float)
    relative = measure == "relative_hill_coefficient"
    log10, log90 = threshold_log_ratios(params, model, readout, (0.1, 0.9), relative)
    log_rv = log90 - log10
    with np.errstate(divide="ignore", invalid="ignore"):
        values = np.exp(log_rv) if measure == "response_coefficient" else LN81 / log_rv
    return np.broadcast_to(values, shape).astype(float)
