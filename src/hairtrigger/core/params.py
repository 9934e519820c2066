"""Validated parameters of a covalent-modification cycle.

Units throughout the core: concentrations in µM, time in s, turnover numbers (kcat) in 1/s,
binding rate constants (kon) in 1/(µM·s).
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Mapping
from dataclasses import asdict, dataclass, fields, replace
from typing import Any, Final

import numpy as np

#: The cycle keys, in the order used by snapshot files and tables.
CYCLE_KEYS: Final[tuple[str, ...]] = (
    "substrate_total",
    "kinase_total",
    "kinase_kcat",
    "kinase_km",
    "kinase_kon",
    "phosphatase_total",
    "phosphatase_kcat",
    "phosphatase_km",
    "phosphatase_kon",
)

#: Unit of each cycle key (as written in snapshot files and shown in widgets).
CYCLE_UNITS: Final[dict[str, str]] = {
    "substrate_total": "uM",
    "kinase_total": "uM",
    "kinase_kcat": "1/s",
    "kinase_km": "uM",
    "kinase_kon": "1/(uM*s)",
    "phosphatase_total": "uM",
    "phosphatase_kcat": "1/s",
    "phosphatase_km": "uM",
    "phosphatase_kon": "1/(uM*s)",
}

#: Short human description of each key, shared by error messages, widgets and reports.
CYCLE_DESCRIPTIONS: Final[dict[str, str]] = {
    "substrate_total": "total substrate W",
    "kinase_total": "total kinase E1",
    "kinase_kcat": "kinase turnover k1",
    "kinase_km": "kinase Michaelis constant M1",
    "kinase_kon": "kinase binding rate a1",
    "phosphatase_total": "total phosphatase E2",
    "phosphatase_kcat": "phosphatase turnover k2",
    "phosphatase_km": "phosphatase Michaelis constant M2",
    "phosphatase_kon": "phosphatase binding rate a2",
}

MODELS: Final[tuple[str, ...]] = ("quasi_steady", "mass_action")
READOUTS: Final[tuple[str, ...]] = ("free_modified", "total_modified")


def check_positive(name: str, value: Any) -> float:
    """Return `value` as a float if it is a finite real number > 0, else raise.

    Parameters
    ----------
    name : str
        Parameter name used in the error message.
    value : Any
        Candidate value; booleans, strings, NaN and infinities are refused.

    Returns
    -------
    float
        The value as a Python float.

    Raises
    ------
    ValueError
        Naming the parameter and the allowed range.
    """
    unit = CYCLE_UNITS.get(name, "")
    allowed = f"a finite number > 0{(' ' + unit) if unit else ''}"
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be {allowed}; got {value!r} ({type(value).__name__})"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        msg = f"`{name}` must be {allowed}; got {number!r}"
        raise ValueError(msg)
    return number


def check_choice(name: str, value: Any, choices: tuple[str, ...]) -> str:
    """Return `value` if it is one of `choices`, else raise a `ValueError` listing them."""
    if not isinstance(value, str) or value not in choices:
        msg = f"`{name}` must be one of {', '.join(repr(c) for c in choices)}; got {value!r}"
        raise ValueError(msg)
    return value


@dataclass(frozen=True)
class Cycle:
    """Parameters of one covalent-modification cycle (kinase/phosphatase or similar).

    All values are finite and strictly positive; construction validates them and raises
    `ValueError` naming the first bad parameter.

    Parameters
    ----------
    substrate_total : float
        Total substrate W, µM.
    kinase_total, phosphatase_total : float
        Total modifying (E1) and demodifying (E2) enzyme, µM.
    kinase_kcat, phosphatase_kcat : float
        Turnover numbers k1, k2, 1/s.
    kinase_km, phosphatase_km : float
        Michaelis constants M1, M2, µM.
    kinase_kon, phosphatase_kon : float
        Binding rate constants a1, a2, 1/(µM·s). They matter only for mass-action time
        courses; the dissociation rate follows as ``kon * km - kcat`` and must not be negative
        there.

    Examples
    --------
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.1,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.1, phosphatase_kon=100.0)
    >>> c.K1, c.activity_ratio
    (0.1, 1.0)
    """

    substrate_total: float
    kinase_total: float
    kinase_kcat: float
    kinase_km: float
    kinase_kon: float
    phosphatase_total: float
    phosphatase_kcat: float
    phosphatase_km: float
    phosphatase_kon: float

    def __post_init__(self) -> None:
        for f in fields(self):
            object.__setattr__(self, f.name, check_positive(f.name, getattr(self, f.name)))

    # --- construction helpers -------------------------------------------------------------
    @classmethod
    def from_dict(cls, values: Mapping[str, Any]) -> Cycle:
        """Build a cycle from a mapping with exactly the keys of `CYCLE_KEYS`."""
        missing = [k for k in CYCLE_KEYS if k not in values]
        if missing:
            msg = f"missing cycle parameter `{missing[0]}`"
            raise ValueError(msg)
        unknown = sorted(set(values) - set(CYCLE_KEYS))
        if unknown:
            msg = f"unknown cycle parameter `{unknown[0]}` (known: {', '.join(CYCLE_KEYS)})"
            raise ValueError(msg)
        return cls(**{k: values[k] for k in CYCLE_KEYS})

    def as_dict(self) -> dict[str, float]:
        """Return the parameters as a plain ``{key: float}`` dict in `CYCLE_KEYS` order."""
        return asdict(self)

    def replace(self, **changes: float) -> Cycle:
        """Return a copy with some parameters changed (validated again)."""
        unknown = sorted(set(changes) - set(CYCLE_KEYS))
        if unknown:
            msg = f"unknown cycle parameter `{unknown[0]}` (known: {', '.join(CYCLE_KEYS)})"
            raise ValueError(msg)
        return replace(self, **changes)

    def with_activity_ratio(self, ratio: float) -> Cycle:
        """Return a copy whose kinase amount gives the activity ratio `ratio` (= V1/V2)."""
        ratio = check_positive("activity_ratio", ratio)
        return self.replace(kinase_total=ratio * self.phosphatase_vmax / self.kinase_kcat)

    # --- derived quantities ---------------------------------------------------------------
    @property
    def kinase_vmax(self) -> float:
        """Maximal kinase rate V1 = k1·E1, µM/s."""
        return self.kinase_kcat * self.kinase_total

    @property
    def phosphatase_vmax(self) -> float:
        """Maximal phosphatase rate V2 = k2·E2, µM/s."""
        return self.phosphatase_kcat * self.phosphatase_total

    @property
    def activity_ratio(self) -> float:
        """Activity ratio r = V1/V2."""
        return self.kinase_vmax / self.phosphatase_vmax

    @property
    def K1(self) -> float:  # noqa: N802 - the symbol of the field
        """Kinase Michaelis constant over total substrate, M1/W."""
        return self.kinase_km / self.substrate_total

    @property
    def K2(self) -> float:  # noqa: N802 - the symbol of the field
        """Phosphatase Michaelis constant over total substrate, M2/W."""
        return self.phosphatase_km / self.substrate_total

    @property
    def kinase_koff(self) -> float:
        """Kinase–substrate dissociation rate kon·Km − kcat, 1/s (negative: inconsistent)."""
        return self.kinase_kon * self.kinase_km - self.kinase_kcat

    @property
    def phosphatase_koff(self) -> float:
        """Phosphatase–substrate dissociation rate kon·Km − kcat, 1/s."""
        return self.phosphatase_kon * self.phosphatase_km - self.phosphatase_kcat

    def arrays(self) -> dict[str, np.ndarray]:
        """Return the parameters as 0-d float arrays keyed like `CYCLE_KEYS`."""
        return {k: np.asarray(v, dtype=float) for k, v in self.as_dict().items()}
