"""Cascades of covalent-modification cycles with every enzyme–substrate complex kept.

Model
-----
Level 1 is modified by the input enzyme; level i + 1 by the fully modified form of level i.
Each level carries ``sites`` modification sites, modified distributively and sequentially
(state j → j + 1 by the level's kinase, j → j − 1 by its phosphatase), with the same constants
at every site. Every binding step is explicit mass action::

    K + S_j  ⇌  K·S_j  →  K + S_(j+1)        (kon, koff, kcat of the level's kinase)
    P + S_j  ⇌  P·S_j  →  P + S_(j−1)        (kon, koff, kcat of the level's phosphatase)

so an upstream kinase held in complexes with downstream substrate is sequestered, and the fully
modified form of level i exists free, bound to its own phosphatase and bound to level i + 1.

Steady states
-------------
At steady state every complex obeys ``C = E·S/Km`` exactly and every link of a level's chain
carries zero net flux, so the free forms of a level form a geometric series
``S_j = S_n·u^(j−n)`` with ``u = (kcat_K/Km_K)·K / ((kcat_P/Km_P)·P)``. Every species is then a
monomial in 2L + 1 unknowns — the logarithms of the free input enzyme, and of each level's free
fully modified form and free phosphatase — and the steady state solves the 2L + 1 conservation
laws (input enzyme, each substrate, each phosphatase), sums of exponentials of affine functions
of the unknowns. Newton's method on that system (vectorised over states, with step limiting and
backtracking) is continued in the input from a state known exactly (vanishing input: everything
unmodified), so the branch followed is the one reached by raising the input from zero. Each
state is then verified against the full mass-action right-hand side (`ReactionNetwork`) and the
conservation laws. The plateau (input → ∞) is computed from the limiting system, in which the
species whose monomial carries a negative power of the free input vanish.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .network import FloatArray, Reaction, ReactionNetwork, totals_matrix

LN81: Final[float] = math.log(81.0)

#: Output definitions: ``free`` fully modified free form; ``total`` also counting its complexes.
OUTPUT_DEFINITIONS: Final[tuple[str, str]] = ("free", "total")

#: Fractions of the plateau at which EC values are reported.
EC_FRACTIONS: Final[tuple[float, float, float]] = (0.1, 0.5, 0.9)

#: Relative tolerance on the conservation residuals solved by Newton's method.
NEWTON_TOLERANCE: Final[float] = 1e-12

#: A verified steady state must satisfy the full ODE to this relative imbalance.
STATIONARITY_TOLERANCE: Final[float] = 1e-8


# --- parameters -------------------------------------------------------------------------------


def _check_number(name: str, value: Any, *, allow_zero: bool = False) -> float:
    """Return `value` as float if finite and > 0 (or ≥ 0 with `allow_zero`), else raise."""
    bound = "≥ 0" if allow_zero else "> 0"
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be a finite number {bound}; got {value!r} ({type(value).__name__})"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number < 0.0 or (number == 0.0 and not allow_zero):
        msg = f"`{name}` must be a finite number {bound}; got {number!r}"
        raise ValueError(msg)
    return number


@dataclass(frozen=True)
class EnzymeConstants:
    """Mass-action constants of one enzyme acting on one substrate site.

    Parameters
    ----------
    kon : float
        Binding rate constant, 1/(µM·s), > 0.
    koff : float
        Dissociation rate constant of the complex, 1/s, ≥ 0.
    kcat : float
        Catalytic rate constant, 1/s, > 0.
    """

    kon: float
    koff: float
    kcat: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "kon", _check_number("kon", self.kon))
        object.__setattr__(self, "koff", _check_number("koff", self.koff, allow_zero=True))
        object.__setattr__(self, "kcat", _check_number("kcat", self.kcat))

    @property
    def km(self) -> float:
        """Michaelis constant (koff + kcat)/kon, µM."""
        return (self.koff + self.kcat) / self.kon

    @property
    def specificity(self) -> float:
        """kcat/Km, 1/(µM·s): the first-order rate per µM of free enzyme."""
        return self.kcat / self.km

    def as_dict(self) -> dict[str, float]:
        """Return ``{"kon", "koff", "kcat"}``."""
        return {"kon": self.kon, "koff": self.koff, "kcat": self.kcat}


@dataclass(frozen=True)
class CascadeLevel:
    """One level of a cascade: a substrate with 1 or more sites, its phosphatase, constants.

    Parameters
    ----------
    name : str
        Non-empty label, unique within the cascade.
    sites : int
        Number of sites modified distributively and sequentially (≥ 1).
    substrate_total, phosphatase_total : float
        Totals, µM, > 0.
    kinase : EnzymeConstants
        Constants of the enzyme that modifies this level (the input enzyme for level 1, the
        fully modified form of the level above otherwise), the same at every site.
    phosphatase : EnzymeConstants
        Constants of this level's phosphatase, the same at every site.
    """

    name: str
    sites: int
    substrate_total: float
    phosphatase_total: float
    kinase: EnzymeConstants
    phosphatase: EnzymeConstants

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            msg = f"`name` must be a non-empty string; got {self.name!r}"
            raise ValueError(msg)
        if isinstance(self.sites, bool | np.bool_) or not isinstance(self.sites, numbers.Integral):
            msg = f"`sites` must be a whole number ≥ 1; got {self.sites!r}"
            raise ValueError(msg)
        if int(self.sites) < 1:
            msg = f"`sites` must be a whole number ≥ 1; got {self.sites!r}"
            raise ValueError(msg)
        object.__setattr__(self, "sites", int(self.sites))
        object.__setattr__(
            self, "substrate_total", _check_number("substrate_total", self.substrate_total)
        )
        object.__setattr__(
            self, "phosphatase_total", _check_number("phosphatase_total", self.phosphatase_total)
        )
        for role in ("kinase", "phosphatase"):
            if not isinstance(getattr(self, role), EnzymeConstants):
                msg = f"`{role}` must be EnzymeConstants; got {type(getattr(self, role)).__name__}"
                raise ValueError(msg)

    def as_dict(self) -> dict[str, Any]:
        """Return the level as the cascade file writes it."""
        return {
            "name": self.name,
            "sites": self.sites,
            "substrate_total": self.substrate_total,
            "phosphatase_total": self.phosphatase_total,
            "kinase": self.kinase.as_dict(),
            "phosphatase": self.phosphatase.as_dict(),
        }


@dataclass(frozen=True)
class Cascade:
    """A cascade: an input enzyme amount and the levels it drives, top first.

    Parameters
    ----------
    input_enzyme_total : float
        Total input enzyme, µM, ≥ 0.
    levels : sequence of CascadeLevel
        At least one level; names unique.
    title, notes : str
        Free text carried by files.

    Examples
    --------
    >>> k = EnzymeConstants(kon=1000.0, koff=150.0, kcat=150.0)
    >>> c = Cascade(0.001, [CascadeLevel("top", 1, 0.003, 0.0003, k, k)])
    >>> round(c.levels[0].kinase.km, 12)
    0.3
    """

    input_enzyme_total: float
    levels: tuple[CascadeLevel, ...]
    title: str = ""
    notes: str = ""

    def __post_init__(self) -> None:
        object.__setattr__(
            self,
            "input_enzyme_total",
            _check_number("input_enzyme_total", self.input_enzyme_total, allow_zero=True),
        )
        levels = tuple(self.levels)
        if not levels:
            msg = "`levels` must hold at least one level"
            raise ValueError(msg)
        seen: set[str] = set()
        for i, level in enumerate(levels):
            if not isinstance(level, CascadeLevel):
                msg = f"`levels[{i}]` must be a CascadeLevel; got {type(level).__name__}"
                raise ValueError(msg)
            if level.name in seen:
                msg = f"`levels[{i}].name` {level.name!r} is used by an earlier level"
                raise ValueError(msg)
            seen.add(level.name)
        object.__setattr__(self, "levels", levels)
        for key in ("title", "notes"):
            if not isinstance(getattr(self, key), str):
                msg = f"`{key}` must be a string"
                raise ValueError(msg)

    def with_input(self, input_enzyme_total: float) -> Cascade:
        """Return a copy with another input enzyme amount."""
        return Cascade(input_enzyme_total, self.levels, self.title, self.notes)

    @property
    def names(self) -> tuple[str, ...]:
        """Level names, top first."""
        return tuple(level.name for level in self.levels)


# --- the model: full network and its monomial reduction ---------------------------------------


@dataclass(frozen=True)
class _LogSystem:
    """Species as monomials ``exp(logc + M·x)``; residuals ``C·species / totals − 1``."""

    logc: FloatArray  # (species,)
    exponents: FloatArray  # (species, unknowns)
    sums: FloatArray  # (equations, species)

    def evaluate(
        self, x: FloatArray, totals: FloatArray
    ) -> tuple[FloatArray, FloatArray, FloatArray]:
        """Species, residuals and Jacobian for a stack of unknowns ``x`` (P, m)."""
        with np.errstate(over="ignore", under="ignore"):
            conc = np.exp(self.logc + x @ self.exponents.T)
        residual = conc @ self.sums.T / totals - 1.0
        jac = np.einsum("es,ps,sm->pem", self.sums, conc, self.exponents) / totals[..., None]
        return conc, residual, jac

    def residual(self, x: FloatArray, totals: FloatArray) -> FloatArray:
        """Residuals only (P, equations)."""
        with np.errstate(over="ignore", under="ignore"):
            conc = np.exp(self.logc + x @ self.exponents.T)
        return np.asarray(conc @ self.sums.T / totals - 1.0, dtype=float)


@dataclass(frozen=True)
class _NewtonResult:
    x: FloatArray
    converged: NDArray[np.bool_]
    error: FloatArray
    iterations: int


def _newton(
    system: _LogSystem,
    x0: FloatArray,
    totals: FloatArray,
    max_iterations: int = 60,
    max_step: float = 4.0,
) -> _NewtonResult:
    """Damped Newton on a stack of log-monomial systems, each point independent of the others.

    The step is capped at `max_step` log units and halved while it does not reduce the largest
    residual; points stop once their residual is below `NEWTON_TOLERANCE`.
    """
    x = np.array(x0, dtype=float, copy=True)
    totals = np.broadcast_to(totals, (x.shape[0], system.sums.shape[0]))
    _, res, jac = system.evaluate(x, totals)
    err = np.max(np.abs(res), axis=1)
    done = ~(err > NEWTON_TOLERANCE)
    iterations = 0
    for iterations in range(1, max_iterations + 1):  # noqa: B007 - reported
        todo = np.flatnonzero(~done & np.isfinite(err))
        if todo.size == 0:
            break
        try:
            dx = np.linalg.solve(jac[todo], -res[todo][..., None])[..., 0]
        except np.linalg.LinAlgError:
            dx = np.stack(
                [
                    np.linalg.lstsq(j, -r, rcond=None)[0]
                    for j, r in zip(jac[todo], res[todo], strict=True)
                ]
            )
        big = np.max(np.abs(dx), axis=1)
        dx *= np.minimum(1.0, max_step / np.where(big > 0, big, 1.0))[:, None]
        step = np.ones(todo.size)
        xt = x[todo]
        et = err[todo]
        for _ in range(40):
            trial = xt + step[:, None] * dx
            trial_err = np.max(np.abs(system.residual(trial, totals[todo])), axis=1)
            worse = ~(trial_err < et) & ~(trial_err <= NEWTON_TOLERANCE)
            if not np.any(worse):
                break
            step = np.where(worse, 0.5 * step, step)
        x[todo] = trial
        _, res_t, jac_t = system.evaluate(x[todo], totals[todo])
        res[todo] = res_t
        jac[todo] = jac_t
        new_err = np.max(np.abs(res_t), axis=1)
        stalled = ~(new_err < et)  # no progress even with a tiny step: give up on the point
        err[todo] = new_err
        done[todo] = (new_err <= NEWTON_TOLERANCE) | stalled
    converged = err <= NEWTON_TOLERANCE
    return _NewtonResult(x, converged, err, iterations)


class CascadeModel:
    """The reaction network of a cascade and the reduced steady-state system built from it.

    Parameters
    ----------
    cascade : Cascade
        Levels and constants (the input amount is supplied per call).

    Attributes
    ----------
    network : ReactionNetwork
        Every species and reaction (mass action).
    species : tuple of str
        Species names in state order: ``input``, then per level ``NAME:j`` (free, j sites
        modified), ``NAME:j·kinase`` (with its kinase), ``NAME:j·phosphatase``, ``NAME:phosphatase``
        (free phosphatase).
    """

    def __init__(self, cascade: Cascade) -> None:
        if not isinstance(cascade, Cascade):
            msg = f"`cascade` must be a hairtrigger Cascade; got {type(cascade).__name__}"
            raise TypeError(msg)
        self.cascade = cascade
        levels = cascade.levels
        n_levels = len(levels)
        self.n_unknowns = 1 + 2 * n_levels
        names: list[str] = ["input"]
        logc: list[float] = [0.0]
        exps: list[FloatArray] = [self._unit(0)]
        free: list[list[int]] = []
        kin_cx: list[list[int]] = []
        pho_cx: list[list[int]] = []
        phos: list[int] = []
        kinase_var = 0  # unknown holding log free kinase of the current level
        kinase_species = 0  # species index of that kinase
        kinase_of_level: list[int] = []
        for i, level in enumerate(levels):
            n = level.sites
            b, p = 1 + 2 * i, 2 + 2 * i
            log_g = math.log(level.kinase.specificity / level.phosphatase.specificity)
            free_i, kin_i, pho_i = [], [], []
            for j in range(n + 1):
                e = self._unit(b) + (j - n) * (self._unit(kinase_var) - self._unit(p))
                names.append(f"{level.name}:{j}")
                logc.append((j - n) * log_g)
                exps.append(e)
                free_i.append(len(names) - 1)
            for j in range(n):
                names.append(f"{level.name}:{j}·kinase")
                logc.append(logc[free_i[j]] - math.log(level.kinase.km))
                exps.append(exps[free_i[j]] + self._unit(kinase_var))
                kin_i.append(len(names) - 1)
            for j in range(1, n + 1):
                names.append(f"{level.name}:{j}·phosphatase")
                logc.append(logc[free_i[j]] - math.log(level.phosphatase.km))
                exps.append(exps[free_i[j]] + self._unit(p))
                pho_i.append(len(names) - 1)
            names.append(f"{level.name}:phosphatase")
            logc.append(0.0)
            exps.append(self._unit(p))
            phos.append(len(names) - 1)
            free.append(free_i)
            kin_cx.append(kin_i)
            pho_cx.append(pho_i)
            kinase_of_level.append(kinase_species)
            kinase_var = b
            kinase_species = free_i[-1]
        self.species: tuple[str, ...] = tuple(names)
        self.free_forms = free
        self.kinase_complexes = kin_cx
        self.phosphatase_complexes = pho_cx
        self.free_phosphatase = phos
        self.kinase_of_level = kinase_of_level
        self.network = self._build_network()

        moieties: list[list[int]] = [[0, *kin_cx[0]]]
        for i in range(n_levels):
            substrate = [*free[i], *kin_cx[i], *pho_cx[i]]
            if i + 1 < n_levels:
                substrate += kin_cx[i + 1]  # its fully modified form bound to the next level
            moieties.append(substrate)
            moieties.append([phos[i], *pho_cx[i]])
        self.moieties = moieties
        self.system = _LogSystem(
            np.asarray(logc), np.asarray(exps), totals_matrix(self.species, moieties)
        )
        # Limit of unbounded input: monomials with a negative power of the free input vanish.
        powers = self.system.exponents[:, 0]
        keep = powers == 0.0
        self._limit_keep = keep
        self.limit_system = _LogSystem(
            self.system.logc[keep],
            self.system.exponents[keep][:, 1:],
            self.system.sums[1:][:, keep],
        )
        # Output selectors (levels × species) and normalisers.
        ns = len(self.species)
        self.output_free = np.zeros((n_levels, ns))
        self.output_total = np.zeros((n_levels, ns))
        for i in range(n_levels):
            top = free[i][-1]
            self.output_free[i, top] = 1.0
            self.output_total[i, top] = 1.0
            self.output_total[i, pho_cx[i][-1]] = 1.0
            if i + 1 < n_levels:
                self.output_total[i, kin_cx[i + 1]] = 1.0
        self.substrate_totals = np.asarray([lv.substrate_total for lv in levels])

    def _unit(self, k: int) -> FloatArray:
        e = np.zeros(self.n_unknowns)
        e[k] = 1.0
        return e

    def _build_network(self) -> ReactionNetwork:
        reactions: list[Reaction] = []
        for i, level in enumerate(self.cascade.levels):
            kinase = self.kinase_of_level[i]
            phosphatase = self.free_phosphatase[i]
            free = self.free_forms[i]
            for j in range(level.sites):
                cx = self.kinase_complexes[i][j]
                k = level.kinase
                reactions += [
                    Reaction((kinase, free[j]), (cx,), k.kon),
                    Reaction((cx,), (kinase, free[j]), k.koff),
                    Reaction((cx,), (kinase, free[j + 1]), k.kcat),
                ]
            for j in range(1, level.sites + 1):
                cx = self.phosphatase_complexes[i][j - 1]
                p = level.phosphatase
                reactions += [
                    Reaction((phosphatase, free[j]), (cx,), p.kon),
                    Reaction((cx,), (phosphatase, free[j]), p.koff),
                    Reaction((cx,), (phosphatase, free[j - 1]), p.kcat),
                ]
        return ReactionNetwork(self.species, tuple(r for r in reactions if r.rate_constant > 0))

    # --- totals and states ----------------------------------------------------------------
    def totals(self, inputs: ArrayLike) -> FloatArray:
        """Conserved totals for each input amount, shape (P, 2L + 1)."""
        inputs = np.atleast_1d(np.asarray(inputs, dtype=float))
        out = np.empty((inputs.size, self.n_unknowns))
        out[:, 0] = inputs
        for i, level in enumerate(self.cascade.levels):
            out[:, 1 + 2 * i] = level.substrate_total
            out[:, 2 + 2 * i] = level.phosphatase_total
        return out

    def conservation_error(self, species: FloatArray, inputs: ArrayLike) -> FloatArray:
        """Largest relative error of any conservation law, per state."""
        totals = self.totals(inputs)
        error = np.abs(species @ self.system.sums.T - totals)
        # A zero total (no input enzyme) is measured against the largest other total.
        scale = np.where(totals > 0.0, totals, np.max(totals, axis=1, keepdims=True))
        return np.asarray(np.max(error / scale, axis=1), dtype=float)

    def outputs(self, species: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Free and total fully modified fraction of every level, each (P, L)."""
        w = self.substrate_totals
        return species @ self.output_free.T / w, species @ self.output_total.T / w

    def zero_input_state(self) -> FloatArray:
        """The exact steady state at zero input: substrate unmodified and free."""
        x = np.zeros(len(self.species))
        for i, level in enumerate(self.cascade.levels):
            x[self.free_forms[i][0]] = level.substrate_total
            x[self.free_phosphatase[i]] = level.phosphatase_total
        return x

    def low_input_guess(self, log_input: float) -> tuple[FloatArray, float]:
        """Unknowns at a small input from the first-order expansion about zero input.

        Returns the guess and the largest per-site ratio u in the cascade (the expansion is
        accurate when it is small).
        """
        levels = self.cascade.levels
        x = np.zeros(self.n_unknowns)
        # Free input: the rest is bound to (almost entirely unmodified) level-1 substrate.
        x[0] = log_input - math.log1p(levels[0].substrate_total / levels[0].kinase.km)
        kinase = x[0]
        largest = -math.inf
        for i, level in enumerate(levels):
            log_g = math.log(level.kinase.specificity / level.phosphatase.specificity)
            x[2 + 2 * i] = math.log(level.phosphatase_total)
            log_u = log_g + kinase - x[2 + 2 * i]
            largest = max(largest, log_u)
            x[1 + 2 * i] = math.log(level.substrate_total) + level.sites * log_u
            kinase = x[1 + 2 * i]
        return x, math.exp(largest)

    def species_of(self, x: FloatArray) -> FloatArray:
        """Species concentrations (P, species) from unknowns (P, 2L + 1)."""
        with np.errstate(over="ignore", under="ignore"):
            return np.asarray(np.exp(self.system.logc + x @ self.system.exponents.T), dtype=float)

    def limit_species(self, y: FloatArray) -> FloatArray:
        """Species (P, species) in the limit of unbounded input from the limit unknowns."""
        out = np.zeros((y.shape[0], len(self.species)))
        with np.errstate(over="ignore", under="ignore"):
            out[:, self._limit_keep] = np.exp(
                self.limit_system.logc + y @ self.limit_system.exponents.T
            )
        return out

    def log_det(self, x: FloatArray, inputs: ArrayLike) -> tuple[FloatArray, FloatArray]:
        """Sign and log |det| of the reduced Jacobian (a sign change marks a fold)."""
        _, _, jac = self.system.evaluate(np.atleast_2d(x), self.totals(inputs))
        sign, logdet = np.linalg.slogdet(jac)
        return sign, logdet


# --- results -----------------------------------------------------------------------------------


@dataclass(frozen=True)
class CascadeScan:
    """Steady states of a cascade along a list of input amounts.

    Attributes
    ----------
    inputs : ndarray, shape (P,)
        Input enzyme totals, µM.
    species : ndarray, shape (P, S)
        Every species, µM, in the order of `species_names`.
    species_names : tuple of str
        See `CascadeModel.species`.
    level_names : tuple of str
        Level names, top first.
    free, total : ndarray, shape (P, L)
        Fully modified fraction of each level's substrate: free, and including its complexes
        (with its own phosphatase and, except for the last level, with the next level's
        substrate).
    stationarity : ndarray, shape (P,)
        Largest relative imbalance of the full mass-action right-hand side.
    conservation_error : ndarray, shape (P,)
        Largest relative error of the conservation laws.
    verified : ndarray of bool, shape (P,)
        Newton converged and the state passed both checks.
    success : bool
        All points verified.
    message : str
        What went wrong, if anything.
    warnings : tuple of str
        Folds or jumps met along the way (possible bistability).
    """

    inputs: FloatArray
    species: FloatArray
    species_names: tuple[str, ...]
    level_names: tuple[str, ...]
    free: FloatArray
    total: FloatArray
    stationarity: FloatArray
    conservation_error: FloatArray
    verified: NDArray[np.bool_]
    success: bool
    message: str
    warnings: tuple[str, ...] = ()
    unknowns: FloatArray = field(default_factory=lambda: np.zeros((0, 0)), repr=False)

    def output(self, definition: str) -> FloatArray:
        """The ``free`` or ``total`` fractions, (P, L)."""
        _check_definition(definition)
        return self.free if definition == "free" else self.total


@dataclass(frozen=True)
class CascadePlateau:
    """Outputs in the limit of unbounded input (fractions of each level's substrate).

    Attributes
    ----------
    free, total : ndarray, shape (L,)
    species : ndarray, shape (S,)
        Limiting species (µM); the free input and species that vanish are zero.
    success : bool
    message : str
    """

    free: FloatArray
    total: FloatArray
    species: FloatArray
    success: bool
    message: str

    def output(self, definition: str) -> FloatArray:
        """The ``free`` or ``total`` plateau, (L,)."""
        _check_definition(definition)
        return self.free if definition == "free" else self.total


@dataclass(frozen=True)
class OutputSteepness:
    """EC values (input enzyme, µM), effective Hill coefficient and plateau of one output.

    NaN marks a value that could not be located in the scanned range (see the warnings).
    """

    ec10: float
    ec50: float
    ec90: float
    hill_coefficient: float
    plateau: float
    #: ln 81 / ln of the ratio of the level's own free kinase at EC90 and EC10: the steepness
    #: of this stage alone, against the enzyme that drives it.
    stage_hill_coefficient: float = math.nan

    def as_dict(self) -> dict[str, float | None]:
        """The contract's keys (``ec10``, ``ec50``, ``ec90``, ``hill_coefficient``, ``plateau``)."""
        return {
            "ec10": _json_number(self.ec10),
            "ec50": _json_number(self.ec50),
            "ec90": _json_number(self.ec90),
            "hill_coefficient": _json_number(self.hill_coefficient),
            "plateau": _json_number(self.plateau),
        }


@dataclass(frozen=True)
class LevelResponse:
    """Steepness of one level's output against the cascade input."""

    name: str
    sites: int
    free: OutputSteepness
    total: OutputSteepness

    def output(self, definition: str) -> OutputSteepness:
        """The `OutputSteepness` of ``free`` or ``total``."""
        _check_definition(definition)
        return self.free if definition == "free" else self.total


@dataclass(frozen=True)
class CascadeResponse:
    """Dose–response of every level of a cascade to its input enzyme.

    Attributes
    ----------
    levels : tuple of LevelResponse
        Top first. EC values are input enzyme totals at 10/50/90 % of each output's plateau.
    scan : CascadeScan
        The scanned steady states.
    plateau : CascadePlateau
        Outputs as the input grows without bound.
    success : bool
    message : str
    warnings : tuple of str
    """

    levels: tuple[LevelResponse, ...]
    scan: CascadeScan
    plateau: CascadePlateau
    success: bool
    message: str
    warnings: tuple[str, ...]

    @property
    def overall(self) -> LevelResponse:
        """The cascade's output: its last level."""
        return self.levels[-1]

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready content of ``hairtrigger cascade`` (DESIGN.md §4, plus context keys)."""

        def level_entry(level: LevelResponse) -> dict[str, Any]:
            return {
                "name": level.name,
                "sites": level.sites,
                "free": level.free.as_dict(),
                "total": level.total.as_dict(),
                "stage_hill_coefficient": {
                    d: _json_number(level.output(d).stage_hill_coefficient)
                    for d in OUTPUT_DEFINITIONS
                },
            }

        inputs = self.scan.inputs
        return {
            "levels": [level_entry(level) for level in self.levels],
            "overall": {d: self.overall.output(d).as_dict() for d in OUTPUT_DEFINITIONS},
            "scan": {
                "low": float(inputs[0]),
                "high": float(inputs[-1]),
                "points": int(inputs.size),
                "spacing": "log",
                "max_stationarity_residual": _json_number(np.max(self.scan.stationarity)),
            },
            "success": self.success,
            "message": self.message,
            "warnings": list(self.warnings),
        }


def _json_number(value: Any) -> float | None:
    number = float(value)
    return number if math.isfinite(number) else None


def _check_definition(definition: str) -> None:
    if definition not in OUTPUT_DEFINITIONS:
        msg = f"`definition` must be 'free' or 'total'; got {definition!r}"
        raise ValueError(msg)


# --- continuation -------------------------------------------------------------------------------


class _Tracer:
    """Natural-parameter continuation of the reduced system in s = ln(input)."""

    def __init__(self, model: CascadeModel) -> None:
        self.model = model
        self.warnings: list[str] = []

    def start(self, s_first: float) -> tuple[float, FloatArray]:
        """A state known to high accuracy, at an input small enough for the expansion."""
        s = s_first - 1.0
        for _ in range(200):
            guess, largest_u = self.model.low_input_guess(s)
            if largest_u <= 1e-6:
                break
            s -= math.log(largest_u / 1e-6) + 1.0
        result = _newton(self.model.system, guess[None, :], self.model.totals(math.exp(s)))
        return s, result.x[0]

    def tangent(self, x: FloatArray, s: float) -> FloatArray:
        """dx/ds at a solution (only the input law depends on s)."""
        _, res, jac = self.model.system.evaluate(x[None, :], self.model.totals(math.exp(s)))
        rhs = np.zeros(self.model.n_unknowns)
        rhs[0] = 1.0 + res[0, 0]
        try:
            return np.asarray(np.linalg.solve(jac[0], rhs), dtype=float)
        except np.linalg.LinAlgError:
            return np.zeros(self.model.n_unknowns)

    def step_to(
        self, s: float, x: FloatArray, s_target: float, h: float
    ) -> tuple[FloatArray, float, bool]:
        """Continue from (s, x) to s_target; return state, last step size, success."""
        min_step = 1e-7
        while s < s_target:
            h_now = min(h, s_target - s)
            predicted = x + h_now * self.tangent(x, s)
            res = _newton(
                self.model.system,
                predicted[None, :],
                self.model.totals(math.exp(s + h_now)),
                max_iterations=12,
            )
            jump = float(np.max(np.abs(res.x[0] - predicted)))
            if res.converged[0] and jump <= 0.5:
                s += h_now
                x = res.x[0]
                if res.iterations <= 3:
                    h = min(1.5 * h, 2.0)
            else:
                h = 0.5 * h_now
                if h < min_step:
                    return x, h, False
        return x, h, True


def _relax(model: CascadeModel, species: FloatArray, input_total: float) -> FloatArray | None:
    """Integrate the full ODE from `species` with the input changed until still; polish."""
    from scipy.integrate import solve_ivp  # only on this rare path (keeps imports light)

    start = _apply_input_step(model, species, input_total)
    scale = _slowest_time(model.cascade)
    y = start
    for _ in range(6):
        sol = solve_ivp(
            lambda _t, v: model.network.rhs(v),
            (0.0, 100.0 * scale),
            y,
            method="LSODA",
            jac=lambda _t, v: model.network.jacobian(v),
            rtol=1e-9,
            atol=1e-14,
        )
        y = np.maximum(sol.y[:, -1], 1e-300)
        if model.network.stationarity(y) < 1e-4:
            break
        scale *= 10.0
    x0 = _unknowns_from_species(model, y[None, :])
    res = _newton(model.system, x0, model.totals(input_total))
    return res.x[0] if res.converged[0] else None


def _unknowns_from_species(model: CascadeModel, species: FloatArray) -> FloatArray:
    """Log of the free input, each level's free fully modified form and free phosphatase."""
    x = np.empty((species.shape[0], model.n_unknowns))
    tiny = np.finfo(float).tiny
    x[:, 0] = np.log(np.maximum(species[:, 0], tiny))
    for i in range(len(model.cascade.levels)):
        x[:, 1 + 2 * i] = np.log(np.maximum(species[:, model.free_forms[i][-1]], tiny))
        x[:, 2 + 2 * i] = np.log(np.maximum(species[:, model.free_phosphatase[i]], tiny))
    return x


def _slowest_time(cascade: Cascade) -> float:
    """A generous time scale of the slowest level (s): substrate turned over once by its enzymes."""
    times = [
        level.substrate_total
        * (1.0 / (level.phosphatase.kcat * level.phosphatase_total) + 1.0 / level.kinase.kcat)
        for level in cascade.levels
    ]
    return max(times) + max(1.0 / lv.kinase.kcat for lv in cascade.levels)


def _trace_inputs(
    model: CascadeModel, inputs: FloatArray
) -> tuple[FloatArray, NDArray[np.bool_], list[str]]:
    """Unknowns at each (ascending, positive) input, by continuation from vanishing input."""
    tracer = _Tracer(model)
    logs = np.log(inputs)
    s, x = tracer.start(float(logs[0]))
    out = np.full((inputs.size, model.n_unknowns), np.nan)
    ok = np.zeros(inputs.size, dtype=bool)
    h = 0.25
    sign_before = model.log_det(x, math.exp(s))[0][0]
    fold_reported = False
    for k, target in enumerate(logs):
        x_new, h, reached = tracer.step_to(s, x, float(target), h)
        if not reached:
            # A fold: the branch followed from zero input ends. Follow the physics (slowly
            # raising the input): relax the full ODE at the new input, then polish by Newton.
            relaxed = _relax(model, model.species_of(x_new[None, :])[0], float(inputs[k]))
            if relaxed is None:
                tracer.warnings.append(
                    f"no steady state could be followed past input {math.exp(s):.6g} uM"
                )
                break
            tracer.warnings.append(
                f"the steady state jumps between input {math.exp(s):.6g} and {inputs[k]:.6g} "
                "uM (a fold: the cascade may be bistable; values follow the branch reached by "
                "raising the input from zero)"
            )
            x_new, h = relaxed, 0.25
        s, x = float(target), x_new
        out[k] = x
        ok[k] = True
        sign = model.log_det(x, inputs[k])[0][0]
        if sign != sign_before and not fold_reported:
            tracer.warnings.append(
                f"the reduced Jacobian changes sign near input {inputs[k]:.6g} uM (a fold: "
                "possible bistability)"
            )
            fold_reported = True
        sign_before = sign
    return out, ok, tracer.warnings


def _check_inputs(inputs: ArrayLike) -> FloatArray:
    values = np.atleast_1d(np.asarray(inputs, dtype=float))
    if values.ndim != 1 or values.size == 0:
        msg = "`inputs` must be a non-empty 1-D array of input enzyme totals (uM)"
        raise ValueError(msg)
    if not np.all(np.isfinite(values)) or np.any(values < 0.0):
        msg = "`inputs` must be finite and ≥ 0 uM"
        raise ValueError(msg)
    return values


def scan_cascade(cascade: Cascade | CascadeModel, inputs: ArrayLike) -> CascadeScan:
    """Verified steady states of `cascade` at each input enzyme total.

    Parameters
    ----------
    cascade : Cascade or CascadeModel
        The cascade (its own ``input_enzyme_total`` is ignored), or its prebuilt model.
    inputs : array_like, shape (P,)
        Input enzyme totals, µM, ≥ 0, any order.

    Returns
    -------
    CascadeScan
        States in the order of `inputs`; ``success`` False (with a message) if any state could
        not be found or failed verification.

    Notes
    -----
    Continuation runs upward from vanishing input through the sorted inputs, so at a fold
    (bistability) the branch reached by raising the input is reported, with a warning.
    """
    model = cascade if isinstance(cascade, CascadeModel) else CascadeModel(cascade)
    values = _check_inputs(inputs)
    order = np.argsort(values, kind="stable")
    sorted_inputs = values[order]
    positive = sorted_inputs > 0.0
    species = np.empty((values.size, len(model.species)))
    unknowns = np.full((values.size, model.n_unknowns), np.nan)
    ok = np.ones(values.size, dtype=bool)
    warnings: list[str] = []
    species[~positive] = model.zero_input_state()
    if np.any(positive):
        x, ok_pos, warnings = _trace_inputs(model, sorted_inputs[positive])
        species[positive] = model.species_of(x)
        unknowns[positive] = x
        ok[positive] = ok_pos
    inverse = np.empty_like(order)
    inverse[order] = np.arange(order.size)
    species = species[inverse]
    unknowns = unknowns[inverse]
    ok = ok[inverse]
    with np.errstate(invalid="ignore"):
        stationarity = model.network.stationarity(species)
        conservation = model.conservation_error(species, values)
    verified = ok & (stationarity <= STATIONARITY_TOLERANCE) & (conservation <= 1e-9)
    free, total = model.outputs(species)
    message = ""
    if not np.all(verified):
        bad = int(np.flatnonzero(~verified)[0])
        message = (
            f"the steady state at input {values[bad]:.6g} uM was not found or failed verification "
            f"(stationarity {stationarity[bad]:.3g}, conservation error {conservation[bad]:.3g})"
        )
    return CascadeScan(
        inputs=values,
        species=species,
        species_names=model.species,
        level_names=model.cascade.names,
        free=free,
        total=total,
        stationarity=stationarity,
        conservation_error=conservation,
        verified=verified,
        success=bool(np.all(verified)),
        message=message,
        warnings=tuple(warnings),
        unknowns=unknowns,
    )


@dataclass(frozen=True)
class CascadeState:
    """One verified steady state of a cascade (see `CascadeScan` for the fields)."""

    input_enzyme_total: float
    species: dict[str, float]
    free: dict[str, float]
    total: dict[str, float]
    stationarity: float
    conservation_error: float
    success: bool
    message: str
    warnings: tuple[str, ...]


def cascade_steady_state(cascade: Cascade, input_enzyme_total: float | None = None) -> CascadeState:
    """Verified steady state of `cascade` at its own (or the given) input enzyme total.

    Examples
    --------
    >>> k = EnzymeConstants(kon=1000.0, koff=150.0, kcat=150.0)
    >>> c = Cascade(0.001, [CascadeLevel("top", 1, 0.003, 0.0003, k, k)])
    >>> state = cascade_steady_state(c)
    >>> state.success, state.stationarity < 1e-12
    (True, True)
    """
    value = cascade.input_enzyme_total if input_enzyme_total is None else input_enzyme_total
    value = _check_number("input_enzyme_total", value, allow_zero=True)
    scan = scan_cascade(cascade, [value])
    names = scan.level_names
    return CascadeState(
        input_enzyme_total=value,
        species=dict(zip(scan.species_names, scan.species[0].tolist(), strict=True)),
        free=dict(zip(names, scan.free[0].tolist(), strict=True)),
        total=dict(zip(names, scan.total[0].tolist(), strict=True)),
        stationarity=float(scan.stationarity[0]),
        conservation_error=float(scan.conservation_error[0]),
        success=scan.success,
        message=scan.message,
        warnings=scan.warnings,
    )


# --- the plateau ----------------------------------------------------------------------------


def _plateau_from(model: CascadeModel, s: float, x: FloatArray) -> CascadePlateau:
    """Solve the limiting system, continuing the input upward until its start is good."""
    tracer = _Tracer(model)
    h = 1.0
    limit_totals = model.totals(1.0)[:, 1:]
    ok = True
    for _ in range(60):
        err = np.max(np.abs(model.limit_system.residual(x[None, 1:], limit_totals)))
        if err < 1e-3:
            break
        x_next, h, ok = tracer.step_to(s, x, s + 2.0, max(h, 0.5))
        if not ok:
            break
        s, x = s + 2.0, x_next
    res = _newton(model.limit_system, x[None, 1:], limit_totals)
    species = model.limit_species(res.x)[0]
    free, total = (out[0] for out in model.outputs(species[None, :]))
    success = bool(res.converged[0]) and bool(np.all(np.isfinite(total)))
    message = "" if success else "the limiting system for unbounded input did not converge"
    return CascadePlateau(free, total, species, success, message)


def cascade_plateau(cascade: Cascade) -> CascadePlateau:
    """Outputs of every level as the input enzyme grows without bound (computed limit)."""
    model = CascadeModel(cascade)
    tracer = _Tracer(model)
    s, x = tracer.start(0.0)
    return _plateau_from(model, s, x)


# --- EC values --------------------------------------------------------------------------------


def _locate(
    model: CascadeModel,
    scan: CascadeScan,
    selector: FloatArray,
    targets: FloatArray,
    brackets: NDArray[np.intp],
) -> tuple[FloatArray, FloatArray]:
    """Log input where ``selector·species / W = target`` inside scan brackets [k, k + 1].

    Vectorised regula falsi (Illinois) in s = ln(input) over all targets at once; each
    evaluation is one batched Newton solve started from the state interpolated in the bracket.
    Returns log inputs and the unknowns there.
    """
    s_grid = np.log(scan.inputs)
    s_lo, s_hi = s_grid[brackets], s_grid[brackets + 1]
    x_lo, x_hi = scan.unknowns[brackets], scan.unknowns[brackets + 1]

    def value(x: FloatArray) -> FloatArray:
        return np.einsum("ps,ps->p", model.species_of(x), selector)

    f_lo = value(x_lo) - targets
    f_hi = value(x_hi) - targets
    s_mid = s_lo.copy()
    x_mid = x_lo.copy()
    side = np.zeros(targets.size)
    for _ in range(80):
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.clip(f_lo / (f_lo - f_hi), 0.02, 0.98)
        t = np.where(np.isfinite(t), t, 0.5)
        s_mid = s_lo + t * (s_hi - s_lo)
        guess = x_lo + t[:, None] * (x_hi - x_lo)
        res = _newton(model.system, guess, model.totals(np.exp(s_mid)))
        x_mid = res.x
        f_mid = value(x_mid) - targets
        left = np.sign(f_mid) == np.sign(f_lo)
        # Illinois: halve the stale end's value when the same end is kept twice.
        s_lo = np.where(left, s_mid, s_lo)
        x_lo = np.where(left[:, None], x_mid, x_lo)
        f_lo_new = np.where(left, f_mid, f_lo)
        f_hi_new = np.where(left, f_hi, f_mid)
        s_hi = np.where(left, s_hi, s_mid)
        x_hi = np.where(left[:, None], x_hi, x_mid)
        f_hi_new = np.where(left & (side > 0), 0.5 * f_hi_new, f_hi_new)
        f_lo_new = np.where(~left & (side < 0), 0.5 * f_lo_new, f_lo_new)
        side = np.where(left, 1.0, -1.0)
        f_lo, f_hi = f_lo_new, f_hi_new
        if np.all(np.abs(s_hi - s_lo) < 1e-13 * np.maximum(1.0, np.abs(s_mid))) or np.all(
            np.abs(f_mid) <= 1e-14 * np.abs(targets)
        ):
            break
    return s_mid, x_mid


def cascade_response(
    cascade: Cascade, low: float, high: float, points: int = 200
) -> CascadeResponse:
    """EC10/EC50/EC90 and effective Hill coefficients of every level against the input enzyme.

    Parameters
    ----------
    cascade : Cascade
        The cascade (its ``input_enzyme_total`` is not used).
    low, high : float
        Scan range of the input enzyme total, µM, 0 < low < high; points are log-spaced.
    points : int
        Number of scan points (≥ 3).

    Returns
    -------
    CascadeResponse
        For each level and each output definition (``free``: fully modified free form;
        ``total``: fully modified form including its complexes), the EC values are the input
        totals (µM) at which the output reaches 10/50/90 % of its plateau — the computed limit
        as the input grows without bound, not the scan's last point — located exactly between
        scan points; the effective Hill coefficient is ln 81 / ln(EC90/EC10). A value outside
        the scanned range is NaN with a warning.

    Examples
    --------
    >>> k = EnzymeConstants(kon=1000.0, koff=150.0, kcat=150.0)
    >>> c = Cascade(0.0, [CascadeLevel("top", 1, 0.003, 0.0003, k, k)])
    >>> r = cascade_response(c, 1e-6, 1e-2, 50)
    >>> round(r.levels[0].free.hill_coefficient, 2)
    1.0
    """
    low = _check_number("low", low)
    high = _check_number("high", high)
    if not high > low:
        msg = f"the scan needs `low` < `high`; got {low!r} and {high!r}"
        raise ValueError(msg)
    if isinstance(points, bool) or not isinstance(points, numbers.Integral) or points < 3:
        msg = f"`points` must be a whole number ≥ 3; got {points!r}"
        raise ValueError(msg)
    model = CascadeModel(cascade)
    inputs = np.geomspace(low, high, int(points))
    scan = scan_cascade(model, inputs)
    warnings = list(scan.warnings)
    last = int(np.flatnonzero(scan.verified)[-1]) if np.any(scan.verified) else -1
    if last >= 0:
        plateau = _plateau_from(model, float(np.log(inputs[last])), scan.unknowns[last])
    else:
        plateau = cascade_plateau(cascade)
    if not plateau.success:
        warnings.append(plateau.message)
    levels: list[LevelResponse] = []
    n_levels = len(cascade.levels)
    fractions = np.asarray(EC_FRACTIONS)
    results: dict[tuple[int, str], OutputSteepness] = {}
    # Gather every (level, definition, fraction) target, locate them all at once.
    jobs: list[tuple[int, str, int, int]] = []  # level, definition, fraction index, bracket
    job_selectors: list[FloatArray] = []
    job_targets: list[float] = []
    for i in range(n_levels):
        for definition in OUTPUT_DEFINITIONS:
            curve = scan.output(definition)[:, i]
            top = float(plateau.output(definition)[i])
            rows = model.output_free if definition == "free" else model.output_total
            if np.any(curve[scan.verified] > top * (1.0 + 1e-9)):
                warnings.append(
                    f"{cascade.levels[i].name} ({definition}) exceeds its plateau within the scan "
                    "(non-monotone response); EC values refer to the first crossings"
                )
            for f_index, frac in enumerate(fractions):
                z = curve / top
                above = np.flatnonzero(scan.verified & (z >= frac))
                label = f"EC{round(100 * frac)} of {cascade.levels[i].name} ({definition})"
                if above.size == 0:
                    warnings.append(f"{label} lies above the scanned range (> {high:.6g} uM)")
                    continue
                k = int(above[0])
                if k == 0:
                    warnings.append(f"{label} lies below the scanned range (< {low:.6g} uM)")
                    continue
                if not (scan.verified[k - 1] and scan.verified[k]):
                    continue
                jobs.append((i, definition, f_index, k - 1))
                job_selectors.append(rows[i] / model.substrate_totals[i])
                job_targets.append(frac * top)
    log_ec = {}
    kinase_log = {}
    if jobs:
        s_root, x_root = _locate(
            model,
            scan,
            np.asarray(job_selectors),
            np.asarray(job_targets),
            np.asarray([job[3] for job in jobs], dtype=np.intp),
        )
        for n_job, (i, definition, f_index, _) in enumerate(jobs):
            log_ec[(i, definition, f_index)] = float(s_root[n_job])
            kinase_log[(i, definition, f_index)] = float(
                np.log(model.species_of(x_root[n_job][None, :])[0, model.kinase_of_level[i]])
            )
    for i in range(n_levels):
        for definition in OUTPUT_DEFINITIONS:
            ecs = [log_ec.get((i, definition, f), math.nan) for f in range(3)]
            kin = [kinase_log.get((i, definition, f), math.nan) for f in (0, 2)]
            hill = LN81 / (ecs[2] - ecs[0]) if math.isfinite(ecs[2] - ecs[0]) else math.nan
            stage = LN81 / (kin[1] - kin[0]) if math.isfinite(kin[1] - kin[0]) else math.nan
            results[(i, definition)] = OutputSteepness(
                ec10=math.exp(ecs[0]),
                ec50=math.exp(ecs[1]),
                ec90=math.exp(ecs[2]),
                hill_coefficient=hill,
                plateau=float(plateau.output(definition)[i]),
                stage_hill_coefficient=stage,
            )
        levels.append(
            LevelResponse(
                cascade.levels[i].name,
                cascade.levels[i].sites,
                results[(i, "free")],
                results[(i, "total")],
            )
        )
    success = scan.success and plateau.success
    message = scan.message or plateau.message
    return CascadeResponse(tuple(levels), scan, plateau, success, message, tuple(warnings))


# --- time courses ----------------------------------------------------------------------------


def _apply_input_step(model: CascadeModel, species: FloatArray, new_total: float) -> FloatArray:
    """State right after the input enzyme total is set to `new_total`.

    Added enzyme arrives free. Removed enzyme is taken from free enzyme and its complexes in
    proportion, the substrate it held returning free in the same modification state.
    """
    y = np.array(species, dtype=float, copy=True)
    carriers = [0, *model.kinase_complexes[0]]
    old_total = float(np.sum(y[carriers]))
    if new_total >= old_total:
        y[0] += new_total - old_total
        return y
    keep = new_total / old_total
    y[0] *= keep
    for j, cx in enumerate(model.kinase_complexes[0]):
        released = y[cx] * (1.0 - keep)
        y[cx] -= released
        y[model.free_forms[0][j]] += released
    return y


@dataclass(frozen=True)
class CascadeTimeCourse:
    """Every species and level output after a step in the input enzyme.

    Attributes
    ----------
    t : ndarray, shape (T,)
        Time, s (the step is at t = 0).
    species : ndarray, shape (T, S)
        µM, columns as `species_names`.
    species_names, level_names : tuple of str
    free, total : ndarray, shape (T, L)
        Fully modified fractions (free; including complexes).
    input_before, input_after : float
        Input enzyme totals before and after the step, µM.
    final_free, final_total : ndarray, shape (L,)
        The steady state the step leads to (computed, not the last sample).
    success : bool
    message : str
    """

    t: FloatArray
    species: FloatArray
    species_names: tuple[str, ...]
    level_names: tuple[str, ...]
    free: FloatArray
    total: FloatArray
    input_before: float
    input_after: float
    final_free: FloatArray
    final_total: FloatArray
    success: bool
    message: str

    def half_times(self, definition: str = "total") -> dict[str, float]:
        """Time at which each level's output first covers half its way to the new steady state.

        NaN where the time course does not get there within the simulated time.
        """
        _check_definition(definition)
        curve = self.free if definition == "free" else self.total
        final = self.final_free if definition == "free" else self.final_total
        out: dict[str, float] = {}
        for i, name in enumerate(self.level_names):
            start = curve[0, i]
            mid = 0.5 * (start + final[i])
            progress = (curve[:, i] - mid) * np.sign(final[i] - start)
            crossed = np.flatnonzero(progress >= 0.0)
            if final[i] == start or crossed.size == 0:
                out[name] = math.nan if final[i] != start else 0.0
                continue
            k = int(crossed[0])
            if k == 0:
                out[name] = float(self.t[0])
                continue
            y0, y1 = curve[k - 1, i], curve[k, i]
            t0, t1 = self.t[k - 1], self.t[k]
            out[name] = float(t0 + (mid - y0) / (y1 - y0) * (t1 - t0))
        return out


def cascade_time_course(
    cascade: Cascade,
    input_after: float,
    t_end: float,
    points: int = 200,
    input_before: float | None = None,
    method: str = "LSODA",
) -> CascadeTimeCourse:
    """Time course of every species after a step in the input enzyme at t = 0.

    Parameters
    ----------
    cascade : Cascade
        The cascade; its ``input_enzyme_total`` is the input before the step unless
        `input_before` is given.
    input_after : float
        Input enzyme total after the step, µM (≥ 0). Added enzyme arrives free; removed enzyme
        leaves free and bound pools in proportion, releasing its substrate.
    t_end : float
        Simulated time after the step, s.
    points : int
        Output times, evenly spaced on [0, t_end] (≥ 2).
    input_before : float, optional
        Input before the step; the cascade starts from its verified steady state there.
    method : {"LSODA", "BDF", "Radau"}
        Stiff integrator of `scipy.integrate.solve_ivp`, given the analytic Jacobian.

    Returns
    -------
    CascadeTimeCourse
        ``success`` False with the integrator's message on failure.
    """
    before = cascade.input_enzyme_total if input_before is None else input_before
    before = _check_number("input_before", before, allow_zero=True)
    after = _check_number("input_after", input_after, allow_zero=True)
    t_end = _check_number("t_end", t_end)
    if isinstance(points, bool) or not isinstance(points, numbers.Integral) or points < 2:
        msg = f"`points` must be a whole number ≥ 2; got {points!r}"
        raise ValueError(msg)
    if method not in ("LSODA", "BDF", "Radau"):
        msg = f"`method` must be 'LSODA', 'BDF' or 'Radau'; got {method!r}"
        raise ValueError(msg)
    from scipy.integrate import solve_ivp  # imported here so loading the module stays cheap

    model = CascadeModel(cascade)
    states = scan_cascade(model, [before, after])
    start = _apply_input_step(model, states.species[0], after)
    t = np.linspace(0.0, t_end, int(points))
    scale = max(float(np.max(model.totals(max(before, after)))), 1e-300)
    sol = solve_ivp(
        lambda _t, v: model.network.rhs(v),
        (0.0, t_end),
        start,
        method=method,
        t_eval=t,
        jac=lambda _t, v: model.network.jacobian(v),
        rtol=1e-8,
        atol=1e-12 * scale,
    )
    success = bool(sol.success) and states.success
    message = sol.message if not sol.success else states.message
    if sol.success:
        species = sol.y.T
    else:
        species = np.full((t.size, len(model.species)), np.nan)
        species[: sol.y.shape[1]] = sol.y.T
    free, total = model.outputs(species)
    return CascadeTimeCourse(
        t=t,
        species=species,
        species_names=model.species,
        level_names=cascade.names,
        free=free,
        total=total,
        input_before=before,
        input_after=after,
        final_free=states.free[1],
        final_total=states.total[1],
        success=success,
        message=str(message),
    )


def level_outputs_named(
    scan: CascadeScan | CascadeTimeCourse, definition: str
) -> dict[str, FloatArray]:
    """Map each level name to its output column (``free`` or ``total``)."""
    _check_definition(definition)
    values = scan.free if definition == "free" else scan.total
    return {name: values[:, i] for i, name in enumerate(scan.level_names)}


def build_cascade(
    input_enzyme_total: float, levels: Sequence[dict[str, Any]], title: str = "", notes: str = ""
) -> Cascade:
    """Build a `Cascade` from plain dicts shaped like the cascade file's ``levels`` entries."""
    built = []
    for level in levels:
        built.append(
            CascadeLevel(
                name=level["name"],
                sites=level["sites"],
                substrate_total=level["substrate_total"],
                phosphatase_total=level["phosphatase_total"],
                kinase=EnzymeConstants(**level["kinase"]),
                phosphatase=EnzymeConstants(**level["phosphatase"]),
            )
        )
    return Cascade(input_enzyme_total, tuple(built), title, notes)
