"""Concentrations ↔ molecule counts in one cell (or compartment) of given volume.

One micromolar in one femtolitre is ``N_A · 1e-6 mol/L · 1e-15 L = N_A · 1e-21`` molecules
(≈ 602.214). A copy number is fixed either by a volume (fL) or by giving the substrate count
directly, in which case the volume follows from the substrate concentration.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass
from typing import Any, Final

import numpy as np

from .params import Cycle

#: Avogadro constant, 1/mol (exact since the 2019 SI redefinition).
AVOGADRO: Final[float] = 6.02214076e23

#: Molecules per (µM · fL): N_A · 1e-6 mol/L · 1e-15 L.
MOLECULES_PER_UM_FL: Final[float] = AVOGADRO * 1e-21

#: Largest substrate copy number accepted (the exact distribution holds N + 1 numbers).
MAX_MOLECULES: Final[int] = 10_000_000


def check_molecules(name: str, value: Any, maximum: int = MAX_MOLECULES) -> int:
    """Return `value` as an int if it is a whole number in 1…`maximum`, else raise ValueError.

    Integral floats (``2000.0``) are accepted; ``2000.5``, booleans, NaN and strings are not.
    """
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be a whole number of molecules >= 1; got {value!r}"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number != math.floor(number):
        msg = f"`{name}` must be a whole number of molecules >= 1; got {value!r}"
        raise ValueError(msg)
    if number < 1:
        msg = f"`{name}` must be at least 1 molecule; got {value!r}"
        raise ValueError(msg)
    if number > maximum:
        msg = f"`{name}` must be at most {maximum} molecules; got {value!r}"
        raise ValueError(msg)
    return int(number)


def check_volume(value: Any) -> float:
    """Return the cell volume as a float if it is a finite number > 0 fL, else raise."""
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`volume` must be a finite number > 0 fL; got {value!r}"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number <= 0.0:
        msg = f"`volume` must be a finite number > 0 fL; got {value!r}"
        raise ValueError(msg)
    return number


@dataclass(frozen=True)
class CopyNumbers:
    """Molecule counts of a cycle in one compartment.

    Attributes
    ----------
    substrate : int
        Substrate molecules N (rounded to the nearest whole molecule when set by a volume).
    kinase, phosphatase : float
        Enzyme amounts in molecules (not rounded: the quasi-steady chain only needs the rates;
        the mass-action simulation rounds them, see `integer_enzymes`).
    molecules_per_um : float
        Molecules per µM, N / W (so W is exactly N molecules; with a volume given this is
        N_A·V rounded with the substrate count), used to convert rate constants.
    volume : float
        Compartment volume, fL (``molecules_per_um / MOLECULES_PER_UM_FL``).
    volume_given : bool
        True if the volume was given, False if the substrate count was.
    """

    substrate: int
    kinase: float
    phosphatase: float
    molecules_per_um: float
    volume: float
    volume_given: bool

    @classmethod
    def from_volume(cls, cycle: Cycle, volume: float) -> CopyNumbers:
        """Counts for `cycle` in a compartment of `volume` fL (substrate rounded to whole)."""
        volume = check_volume(volume)
        per_um = MOLECULES_PER_UM_FL * volume
        exact = cycle.substrate_total * per_um
        if exact < 0.5:
            msg = (
                f"`volume` {volume:g} fL holds only {exact:.3g} substrate molecules at "
                f"{cycle.substrate_total:g} uM; at least 1 is needed"
            )
            raise ValueError(msg)
        substrate = check_molecules("substrate molecules", round(exact))
        # The rounded count defines the conversion: molecules per µM is N / W (within 0.5/N of
        # N_A·V), so that Km in molecules is exactly K·N in the chain and in the network alike.
        return cls._build(
            cycle, substrate, substrate / cycle.substrate_total, volume_given=True, volume=volume
        )

    @classmethod
    def from_molecules(cls, cycle: Cycle, molecules: int) -> CopyNumbers:
        """Counts for `cycle` with `molecules` substrate molecules; volume follows from W."""
        substrate = check_molecules("molecules", molecules)
        per_um = substrate / cycle.substrate_total
        return cls._build(
            cycle, substrate, per_um, volume_given=False, volume=per_um / MOLECULES_PER_UM_FL
        )

    @classmethod
    def from_cycle(
        cls, cycle: Cycle, molecules: int | None = None, volume: float | None = None
    ) -> CopyNumbers:
        """Counts from exactly one of `molecules` (substrate count) or `volume` (fL)."""
        if (molecules is None) == (volume is None):
            msg = "give exactly one of `molecules` (substrate count) or `volume` (fL)"
            raise ValueError(msg)
        if molecules is not None:
            return cls.from_molecules(cycle, molecules)
        return cls.from_volume(cycle, volume)  # type: ignore[arg-type]

    @classmethod
    def _build(
        cls, cycle: Cycle, substrate: int, per_um: float, volume_given: bool, volume: float
    ) -> CopyNumbers:
        return cls(
            substrate=substrate,
            kinase=cycle.kinase_total * per_um,
            phosphatase=cycle.phosphatase_total * per_um,
            molecules_per_um=per_um,
            volume=volume,
            volume_given=volume_given,
        )

    def for_cycle(self, cycle: Cycle) -> CopyNumbers:
        """The same compartment (substrate count and conversion) holding `cycle`'s enzymes.

        Used after a step in enzyme amount: the substrate count must be unchanged.
        """
        if not math.isclose(
            cycle.substrate_total * self.molecules_per_um, self.substrate, rel_tol=1e-12
        ):
            msg = "`substrate_total` cannot change within one compartment (copy numbers fixed)"
            raise ValueError(msg)
        return CopyNumbers._build(
            cycle, self.substrate, self.molecules_per_um, self.volume_given, self.volume
        )

    def integer_enzymes(self) -> tuple[int, int]:
        """Kinase and phosphatase counts rounded to whole molecules (each must be ≥ 1).

        Raises
        ------
        ValueError
            If an enzyme rounds to zero molecules (no mass-action simulation is possible).
        """
        counts = []
        for name, amount in (
            ("kinase_total", self.kinase),
            ("phosphatase_total", self.phosphatase),
        ):
            count = round(amount)
            if count < 1:
                msg = (
                    f"`{name}` is {amount:.3g} molecules in {self.volume:.4g} fL; the mass-action "
                    "simulation needs at least one enzyme molecule (use a larger volume or the "
                    "quasi-steady chain)"
                )
                raise ValueError(msg)
            counts.append(int(count))
        return counts[0], counts[1]

    def to_molecules(self, concentration: float) -> float:
        """Convert a concentration (µM) to molecules in this compartment."""
        return float(concentration) * self.molecules_per_um
