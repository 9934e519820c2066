"""Mass-action reaction networks with at most bimolecular reactions, vectorised over states.

A `ReactionNetwork` holds species, reactions (one or two reactants, mass-action rate constant)
and their stoichiometry. It evaluates reaction rates, the ODE right-hand side and its analytic
Jacobian for one state or a whole stack of states at once, and measures how far a state is from
stationary. Cascades and multisite cycles build their networks from it; the steady-state solvers
elsewhere use it as an independent check of their reduced equations.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]

#: Gross rates (µM/s) below this are products of subnormal numbers and cannot be checked.
RATE_FLOOR: Final[float] = 1e-280

#: Marker for "no second reactant" in `Reaction`.
NO_SPECIES: Final[int] = -1


@dataclass(frozen=True)
class Reaction:
    """One mass-action reaction with one or two reactants.

    Attributes
    ----------
    reactants : tuple of int
        Species indices consumed (one or two, distinct).
    products : tuple of int
        Species indices produced.
    rate_constant : float
        1/s for one reactant, 1/(µM·s) for two.
    """

    reactants: tuple[int, ...]
    products: tuple[int, ...]
    rate_constant: float


@dataclass(frozen=True)
class ReactionNetwork:
    """Species and mass-action reactions, with vectorised rates, right-hand side and Jacobian.

    Parameters
    ----------
    species : sequence of str
        Species names, in state-vector order.
    reactions : sequence of Reaction
        The reactions.

    Notes
    -----
    States are arrays whose last axis runs over species; any leading axes are batch axes.
    """

    species: tuple[str, ...]
    reactions: tuple[Reaction, ...]
    _first: IntArray = field(init=False, repr=False)
    _second: IntArray = field(init=False, repr=False)
    _constants: FloatArray = field(init=False, repr=False)
    _stoichiometry: FloatArray = field(init=False, repr=False)

    def __post_init__(self) -> None:
        n = len(self.species)
        first, second, constants = [], [], []
        stoich = np.zeros((n, len(self.reactions)))
        for q, reaction in enumerate(self.reactions):
            if not 1 <= len(reaction.reactants) <= 2 or len(set(reaction.reactants)) != len(
                reaction.reactants
            ):
                msg = f"reaction {q} must have one or two distinct reactants"
                raise ValueError(msg)
            first.append(reaction.reactants[0])
            second.append(reaction.reactants[1] if len(reaction.reactants) == 2 else NO_SPECIES)
            constants.append(float(reaction.rate_constant))
            for s in reaction.reactants:
                stoich[s, q] -= 1.0
            for s in reaction.products:
                stoich[s, q] += 1.0
        object.__setattr__(self, "_first", np.asarray(first, dtype=np.intp))
        # The "no second reactant" slot points at an extra column of ones (index n).
        object.__setattr__(
            self,
            "_second",
            np.asarray([n if s == NO_SPECIES else s for s in second], dtype=np.intp),
        )
        object.__setattr__(self, "_constants", np.asarray(constants, dtype=float))
        object.__setattr__(self, "_stoichiometry", stoich)

    @property
    def stoichiometry(self) -> FloatArray:
        """Stoichiometric matrix, shape (species, reactions)."""
        return self._stoichiometry

    def index(self, name: str) -> int:
        """Position of species `name` in the state vector."""
        return self.species.index(name)

    def _padded(self, state: ArrayLike) -> FloatArray:
        x = np.asarray(state, dtype=float)
        return np.concatenate([x, np.ones((*x.shape[:-1], 1))], axis=-1)

    def rates(self, state: ArrayLike) -> FloatArray:
        """Reaction rates (µM/s), shape ``state.shape[:-1] + (reactions,)``."""
        x = self._padded(state)
        return np.asarray(self._constants * x[..., self._first] * x[..., self._second], dtype=float)

    def rhs(self, state: ArrayLike) -> FloatArray:
        """Time derivative of every species (µM/s), same shape as `state`."""
        return np.asarray(self.rates(state) @ self._stoichiometry.T, dtype=float)

    def jacobian(self, state: ArrayLike) -> FloatArray:
        """Analytic Jacobian d rhs / d state, shape ``state.shape + (species,)``."""
        x = self._padded(state)
        n = len(self.species)
        q = np.arange(len(self.reactions))
        drate = np.zeros((*x.shape[:-1], len(self.reactions), n + 1))
        drate[..., q, self._first] = self._constants * x[..., self._second]
        drate[..., q, self._second] += self._constants * x[..., self._first]
        return np.asarray(self._stoichiometry @ drate[..., :n], dtype=float)

    def stationarity(self, state: ArrayLike) -> FloatArray:
        """Largest relative imbalance of any species, |net rate| / (production + consumption).

        Zero at an exact steady state; rounding alone gives about 1e-15. Shape
        ``state.shape[:-1]``. Species whose gross rate is below `RATE_FLOOR` are measured
        against the floor: rates that small come from products of subnormal numbers, whose
        balance floating point cannot resolve (such species are immaterial anyway).
        """
        r = self.rates(state)
        net = np.abs(r @ self._stoichiometry.T)
        gross = r @ np.abs(self._stoichiometry).T
        with np.errstate(divide="ignore", invalid="ignore"):
            rel = net / np.maximum(gross, RATE_FLOOR)
        return np.asarray(np.max(rel, axis=-1), dtype=float)


def totals_matrix(species: Sequence[str], moieties: Sequence[Sequence[int]]) -> FloatArray:
    """0/1 matrix whose row k sums the species holding conserved moiety k."""
    matrix = np.zeros((len(moieties), len(species)))
    for k, members in enumerate(moieties):
        matrix[k, list(members)] = 1.0
    return matrix
