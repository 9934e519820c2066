"""Stochastic simulation of a cycle at low copy number (Gillespie's direct method).

Two models, as in the rest of the core:

``quasi_steady``
    The reduced birth–death chain on the modified count n (up-rate V1·(N − n)/(K1·N + N − n),
    down-rate V2·n/(K2·N + n)), whose stationary distribution `hairtrigger.core.noise` gives
    exactly.
``mass_action``
    The full six-reaction network with enzyme–substrate complexes,
    A + E1 ⇌ C1 → B + E1 and B + E2 ⇌ C2 → A + E2, with kon, koff = kon·Km − kcat and kcat,
    converted to molecule units through the compartment volume.

Ensembles are reproducible: trajectory i draws its random numbers from a generator keyed by
(seed, i) alone, so the same seed gives the same trajectories whether the ensemble runs in one
piece, in chunks, or is cancelled part-way (the finished trajectories are identical). The
inner loops are compiled with numba (`hairtrigger.core._ssa_kernels`, loaded on first use).
"""

from __future__ import annotations

import math
import numbers
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any, Final, Protocol

import numpy as np
from numpy.typing import NDArray

from .copynumber import CopyNumbers
from .noise import BirthDeathChain, integrated_autocorrelation_time, stationary_distribution
from .params import CYCLE_KEYS, MODELS, Cycle, check_choice, check_positive
from .steady import FloatArray, mass_action_state

IntArray = NDArray[np.int64]

#: Species recorded for every trajectory (molecule counts), in CSV column order.
SPECIES: Final[tuple[str, ...]] = (
    "unmodified",
    "modified",
    "kinase_complex",
    "phosphatase_complex",
)

#: Default cap on the expected number of reaction events in one ensemble (a few minutes).
DEFAULT_EVENT_BUDGET: Final[float] = 1e10

#: Largest ensemble accepted.
MAX_TRAJECTORIES: Final[int] = 1_000_000

#: Largest number of stored counts (trajectories × points × species), about 200 MB.
MAX_STORED_VALUES: Final[int] = 25_000_000

#: Events aimed at per chunk between progress reports and cancel checks (≈ 0.1–0.3 s).
_EVENTS_PER_CHUNK: Final[float] = 4e6

#: Multiple of the chain's integrated autocorrelation time τ used as default burn-in. The
#: network starts at its deterministic steady state, so the mean is already right and only the
#: spread has to develop, roughly as 1 − exp(−2t/τ): after 3τ it is within 0.25 % of its
#: stationary value, well inside the sampling error of any practical ensemble.
BURN_IN_CORRELATION_TIMES: Final[float] = 3.0


class CancelFlag(Protocol):
    """Anything with ``is_set()`` (a `threading.Event`, for example)."""

    def is_set(self) -> bool:
        """Return True once cancellation has been requested."""
        ...


ProgressCallback = Callable[[int, int], None]


_WARM: list[bool] = []


def _kernels() -> Any:
    """The compiled kernels, loaded (or compiled) before any timing starts."""
    # Deferred: numba takes ~0.5 s to import and the kernels are needed only here.
    from . import _ssa_kernels as k

    if not _WARM:
        # One tiny call of each kernel loads its machine code from the on-disk cache (or
        # compiles it, a few seconds, on the first run after an install or an edit) so that
        # the ensemble's wall time and events per second measure simulation only.
        states = k.seed_states(np.uint64(0), 0, 1)
        k.uniforms(states)
        times = np.zeros(1)
        one = np.zeros(1, dtype=np.int64)
        k.simulate_chain(
            one,
            states,
            times,
            1,
            1.0,
            1.0,
            1.0,
            1.0,
            1,
            np.zeros((1, 1), dtype=np.int64),
            one.copy(),
            one.copy(),
        )
        k.simulate_network(
            np.array([[1, 0, 0, 0]], dtype=np.int64),
            states,
            times,
            1,
            1,
            np.ones(6),
            1,
            np.zeros((1, 1, 4), dtype=np.int64),
            one.copy(),
            one.copy(),
        )
        _WARM.append(True)
    return k


# --- the networks ---------------------------------------------------------------------------

#: Change of (A, B, C1, C2) by each of the six reactions, in the order of
#: `MassActionNetwork.constants`: kinase binding, unbinding, catalysis; phosphatase binding,
#: unbinding, catalysis.
STOICHIOMETRY: Final[NDArray[np.int64]] = np.array(
    [[-1, 0, 1, 0], [1, 0, -1, 0], [0, 1, -1, 0], [0, -1, 0, 1], [0, 1, 0, -1], [1, 0, 0, -1]],
    dtype=np.int64,
)
STOICHIOMETRY.setflags(write=False)


@dataclass(frozen=True)
class MassActionNetwork:
    """The six-reaction network of one cycle in molecule units.

    Attributes
    ----------
    substrate, kinase, phosphatase : int
        Total substrate N and enzyme molecules E1, E2.
    kinase_binding, phosphatase_binding : float
        a = kon / (molecules per µM), 1/(molecule·s).
    kinase_unbinding, phosphatase_unbinding : float
        koff = kon·Km − kcat, 1/s.
    kinase_kcat, phosphatase_kcat : float
        1/s.
    """

    substrate: int
    kinase: int
    phosphatase: int
    kinase_binding: float
    kinase_unbinding: float
    kinase_kcat: float
    phosphatase_binding: float
    phosphatase_unbinding: float
    phosphatase_kcat: float

    @classmethod
    def from_cycle(cls, cycle: Cycle, copies: CopyNumbers) -> MassActionNetwork:
        """Network of `cycle` in the compartment of `copies`.

        Enzyme amounts come from `cycle`, rounded to whole molecules (each must be ≥ 1).
        """
        copies = copies.for_cycle(cycle)
        for prefix in ("kinase", "phosphatase"):
            koff = getattr(cycle, f"{prefix}_koff")
            if koff < 0.0:
                msg = (
                    f"`{prefix}_kon` is too small: koff = kon*Km - kcat = {koff:.4g} 1/s < 0; "
                    f"need {prefix}_kon >= kcat/Km = "
                    f"{getattr(cycle, prefix + '_kcat') / getattr(cycle, prefix + '_km'):.4g} "
                    "1/(uM*s)"
                )
                raise ValueError(msg)
        kinase, phosphatase = copies.integer_enzymes()
        per_um = copies.molecules_per_um
        return cls(
            substrate=copies.substrate,
            kinase=kinase,
            phosphatase=phosphatase,
            kinase_binding=cycle.kinase_kon / per_um,
            kinase_unbinding=max(cycle.kinase_koff, 0.0),
            kinase_kcat=cycle.kinase_kcat,
            phosphatase_binding=cycle.phosphatase_kon / per_um,
            phosphatase_unbinding=max(cycle.phosphatase_koff, 0.0),
            phosphatase_kcat=cycle.phosphatase_kcat,
        )

    @property
    def constants(self) -> FloatArray:
        """(a1, d1, k1, a2, d2, k2) as the compiled loop expects them."""
        return np.array(
            [
                self.kinase_binding,
                self.kinase_unbinding,
                self.kinase_kcat,
                self.phosphatase_binding,
                self.phosphatase_unbinding,
                self.phosphatase_kcat,
            ]
        )

    def propensities(self, state: NDArray[np.int64]) -> FloatArray:
        """Propensities of the six reactions at states (…, 4) = (A, B, C1, C2), 1/s."""
        s = np.asarray(state, dtype=float)
        a, b, c1, c2 = s[..., 0], s[..., 1], s[..., 2], s[..., 3]
        return np.stack(
            [
                self.kinase_binding * a * (self.kinase - c1),
                self.kinase_unbinding * c1,
                self.kinase_kcat * c1,
                self.phosphatase_binding * b * (self.phosphatase - c2),
                self.phosphatase_unbinding * c2,
                self.phosphatase_kcat * c2,
            ],
            axis=-1,
        )

    def max_total_propensity(self) -> float:
        """An upper bound on the total propensity over all reachable states, 1/s."""
        n = self.substrate
        return (
            self.kinase_binding * n * self.kinase
            + (self.kinase_unbinding + self.kinase_kcat) * self.kinase
            + self.phosphatase_binding * n * self.phosphatase
            + (self.phosphatase_unbinding + self.phosphatase_kcat) * self.phosphatase
        )


def _rounded_steady_state(cycle: Cycle, network: MassActionNetwork) -> IntArray:
    """Deterministic mass-action steady state as whole molecules summing to N."""
    state = mass_action_state(cycle.arrays())
    per_um = network.substrate / cycle.substrate_total
    c1 = min(int(round(float(state.kinase_complex) * per_um)), network.kinase)
    c2 = min(int(round(float(state.phosphatase_complex) * per_um)), network.phosphatase)
    b = int(round(float(state.modified) * per_um))
    b = min(max(b, 0), network.substrate - c1 - c2)
    a = network.substrate - b - c1 - c2
    return np.array([a, b, c1, c2], dtype=np.int64)


def _steady_total_propensity(cycle: Cycle, network: MassActionNetwork) -> float:
    return float(network.propensities(_rounded_steady_state(cycle, network)).sum())


# --- results ------------------------------------------------------------------------------


@dataclass(frozen=True)
class EnsembleResult:
    """An ensemble of stochastic trajectories sampled on a time grid.

    Attributes
    ----------
    model : str
        ``quasi_steady`` (reduced chain) or ``mass_action`` (full network).
    t : ndarray, shape (P,)
        Sampling times, s (the step, if any, acts at t = 0).
    counts : dict of str to ndarray of int, shape (M, P)
        Molecule counts per trajectory and time, keyed by `SPECIES` (complexes are zero in the
        reduced chain). M is the number of finished trajectories.
    molecules : int
        Substrate molecules N.
    requested : int
        Trajectories asked for.
    events : ndarray of int, shape (M,)
        Reaction events simulated per trajectory from t = 0.
    burn_in_events : ndarray of int, shape (M,)
        Events simulated before t = 0 (burn-in of the network's steady start; else zero).
    wall_time : float
        Seconds spent simulating.
    seed : int
        The seed used (the generated one if none was given), to repeat the run.
    status : str
        ``"completed"``, ``"cancelled"`` or ``"event_limit"``.
    message : str
        One line for the user.
    warnings : tuple of str
        Caveats about the run (e.g. enzyme amounts changed by rounding to whole molecules).
    enzyme_molecules : tuple
        (kinase, phosphatase) molecules simulated before and after the step; None for the
        reduced chain, whose rates need no whole enzyme molecules.
    """

    model: str
    t: FloatArray
    counts: dict[str, IntArray] = field(repr=False)
    molecules: int
    requested: int
    events: IntArray = field(repr=False)
    burn_in_events: IntArray = field(repr=False)
    wall_time: float
    seed: int
    status: str
    message: str
    warnings: tuple[str, ...] = ()
    enzyme_molecules: tuple[tuple[int, int] | None, tuple[int, int] | None] = (None, None)

    @property
    def success(self) -> bool:
        """True when every requested trajectory finished within its event cap."""
        return self.status == "completed"

    @property
    def trajectories(self) -> int:
        """Finished trajectories M."""
        return int(self.events.size)

    @property
    def total_events(self) -> int:
        """All reaction events simulated."""
        return int(self.events.sum())

    @property
    def events_per_second(self) -> float:
        """Simulation speed, events (burn-in included) per wall-clock second."""
        simulated = self.total_events + int(self.burn_in_events.sum())
        return simulated / self.wall_time if self.wall_time > 0 else math.nan

    def readout(self, readout: str = "total_modified") -> FloatArray:
        """Readout per trajectory and time as a fraction of N (shape (M, P))."""
        check_choice("readout", readout, ("free_modified", "total_modified"))
        modified = self.counts["modified"].astype(float)
        if readout == "total_modified":
            modified = modified + self.counts["phosphatase_complex"]
        return modified / self.molecules

    def mean(self, species: str = "modified") -> FloatArray:
        """Mean count of `species` over trajectories at each time (NaN if none finished)."""
        values = self._species(species)
        return values.mean(axis=0) if values.shape[0] else np.full(self.t.shape, np.nan)

    def std(self, species: str = "modified") -> FloatArray:
        """Standard deviation over trajectories at each time (ddof = 1; NaN below 2)."""
        values = self._species(species)
        if values.shape[0] < 2:
            return np.full(self.t.shape, np.nan)
        return values.std(axis=0, ddof=1)

    def _species(self, species: str) -> FloatArray:
        check_choice("species", species, SPECIES)
        return self.counts[species].astype(float)

    @classmethod
    def concatenate(cls, parts: list[EnsembleResult]) -> EnsembleResult:
        """Join ensembles run as consecutive slices of one (``first_trajectory`` = 0, k, …).

        With the same seed the joined result equals one run of all trajectories, so slices
        can be simulated on separate workers (processes, a Dask cluster) and joined here.
        """
        if not parts:
            msg = "`parts` must hold at least one EnsembleResult"
            raise ValueError(msg)
        first = parts[0]
        for part in parts[1:]:
            same = (part.model, part.molecules, part.seed) == (
                first.model,
                first.molecules,
                first.seed,
            )
            if not same or not np.array_equal(part.t, first.t):
                msg = "ensembles to join must share model, molecules, seed and time grid"
                raise ValueError(msg)
        statuses = [p.status for p in parts]
        status = next((s for s in ("cancelled", "event_limit") if s in statuses), "completed")
        done = sum(p.trajectories for p in parts)
        requested = sum(p.requested for p in parts)
        message = (
            f"{done} trajectories, {sum(p.total_events for p in parts)} events"
            if status == "completed"
            else "; ".join(p.message for p in parts if p.status != "completed")
        )
        return cls(
            model=first.model,
            t=first.t,
            counts={k: np.concatenate([p.counts[k] for p in parts]) for k in SPECIES},
            molecules=first.molecules,
            requested=requested,
            events=np.concatenate([p.events for p in parts]),
            burn_in_events=np.concatenate([p.burn_in_events for p in parts]),
            wall_time=sum(p.wall_time for p in parts),
            seed=first.seed,
            status=status,
            message=message,
            warnings=first.warnings,
            enzyme_molecules=first.enzyme_molecules,
        )

    def summary(self) -> dict[str, Any]:
        """JSON-ready description of the run (no per-trajectory data)."""
        final_mean = self.mean()[-1] if self.trajectories else math.nan
        final_sd = self.std()[-1] if self.trajectories > 1 else math.nan
        return {
            "model": self.model,
            "trajectories": self.trajectories,
            "requested": self.requested,
            "t_end": float(self.t[-1]),
            "points": int(self.t.size),
            "seed": self.seed,
            "events": self.total_events,
            "burn_in_events": int(self.burn_in_events.sum()),
            "wall_time": self.wall_time,
            "events_per_second": self.events_per_second,
            "final_mean_modified": None if math.isnan(final_mean) else float(final_mean),
            "final_sd_modified": None if math.isnan(final_sd) else float(final_sd),
            "status": self.status,
            "success": self.success,
            "message": self.message,
            "enzyme_molecules": None
            if self.enzyme_molecules[1] is None
            else {
                "kinase_before": self.enzyme_molecules[0][0],  # type: ignore[index]
                "phosphatase_before": self.enzyme_molecules[0][1],  # type: ignore[index]
                "kinase": self.enzyme_molecules[1][0],
                "phosphatase": self.enzyme_molecules[1][1],
            },
            "warnings": list(self.warnings),
        }


# --- validation helpers -------------------------------------------------------------------


def _check_count(name: str, value: Any, low: int, high: int) -> int:
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Real):
        msg = f"`{name}` must be a whole number; got {value!r}"
        raise ValueError(msg)
    number = float(value)
    if not math.isfinite(number) or number != math.floor(number):
        msg = f"`{name}` must be a whole number; got {value!r}"
        raise ValueError(msg)
    if not low <= number <= high:
        msg = f"`{name}` must be between {low} and {high}; got {value!r}"
        raise ValueError(msg)
    return int(number)


def _resolve_seed(seed: int | None) -> int:
    if seed is None:
        return int(np.random.SeedSequence().entropy)  # type: ignore[arg-type]
    if isinstance(seed, bool | np.bool_) or not isinstance(seed, numbers.Integral) or seed < 0:
        msg = f"`seed` must be a non-negative integer or None; got {seed!r}"
        raise ValueError(msg)
    return int(seed)


def _seed_key(seed: int) -> np.uint64:
    return np.uint64(np.random.SeedSequence(seed).generate_state(1, dtype=np.uint64)[0])


def _apply_steps(cycle: Cycle, steps: Mapping[str, float] | None) -> Cycle:
    if not steps:
        return cycle
    if not isinstance(steps, Mapping):
        msg = f"`steps` must be a mapping of cycle keys to new values; got {type(steps).__name__}"
        raise ValueError(msg)
    for key in steps:
        if key == "substrate_total":
            msg = "`steps` cannot change `substrate_total`: the molecule count is fixed in a run"
            raise ValueError(msg)
        if key not in CYCLE_KEYS:
            msg = f"unknown step key `{key}` (known: {', '.join(CYCLE_KEYS[1:])})"
            raise ValueError(msg)
    return cycle.replace(**{k: check_positive(k, v) for k, v in steps.items()})


# --- the ensemble driver ------------------------------------------------------------------


@dataclass(frozen=True)
class _Plan:
    """Everything fixed before the first trajectory runs."""

    model: str
    times: FloatArray
    molecules: int
    before: Any  # BirthDeathChain or MassActionNetwork
    after: Any
    initial: Mapping[str, int] | None
    burn_in: float
    events_per_trajectory: float
    max_events: int
    steady_cdf: FloatArray | None
    steady_state: IntArray | None
    warnings: tuple[str, ...] = ()


def _rounding_warnings(copies: CopyNumbers, when: str, enzymes: tuple[str, ...]) -> list[str]:
    """Say where whole enzyme molecules change an enzyme amount by more than 1 %."""
    out = []
    for name in enzymes:
        amount = getattr(copies, name)
        count = round(amount)
        label = f"{name} {when}" if when else name
        if count >= 1 and abs(count - amount) > 0.01 * amount:
            out.append(
                f"the mass-action simulation uses whole enzyme molecules: {label} is "
                f"{amount:.4g} molecules, simulated as {count} ({100 * (count / amount - 1):+.1f} %"
                "), which shifts the activity ratio accordingly"
            )
    return out


def _parse_initial(
    initial: str | Mapping[str, Any], model: str, molecules: int, network: MassActionNetwork | None
) -> Mapping[str, int] | None:
    if isinstance(initial, str):
        if initial != "steady":
            msg = f"`initial` must be 'steady' or a mapping of species to counts; got {initial!r}"
            raise ValueError(msg)
        return None
    if not isinstance(initial, Mapping):
        msg = f"`initial` must be 'steady' or a mapping of species to counts; got {initial!r}"
        raise ValueError(msg)
    allowed = SPECIES if model == "mass_action" else SPECIES[:2]
    unknown = sorted(set(initial) - set(allowed))
    if unknown:
        known = ", ".join(allowed)
        msg = f"unknown initial species `{unknown[0]}` for the {model} model (known: {known})"
        raise ValueError(msg)
    counts = {k: _check_count(f"initial {k}", v, 0, molecules) for k, v in initial.items()}
    rest = sum(v for k, v in counts.items() if k != "unmodified")
    if "unmodified" not in counts:
        counts["unmodified"] = molecules - rest
    for key in SPECIES:
        counts.setdefault(key, 0)
    if counts["unmodified"] < 0 or sum(counts.values()) != molecules:
        msg = (
            f"initial counts must add up to the {molecules} substrate molecules; got "
            + ", ".join(f"{k}={counts[k]}" for k in SPECIES if counts[k])
        )
        raise ValueError(msg)
    if network is not None:
        for key, limit in (
            ("kinase_complex", network.kinase),
            ("phosphatase_complex", network.phosphatase),
        ):
            if counts[key] > limit:
                msg = f"initial {key} = {counts[key]} exceeds the {limit} enzyme molecules"
                raise ValueError(msg)
    return counts


def _time_grid(t_end: float, points: int) -> FloatArray:
    t_end = check_positive("t_end", t_end)
    points = _check_count("points", points, 2, 1_000_000)
    return np.linspace(0.0, t_end, points)


def _plan(
    cycle: Cycle,
    copies: CopyNumbers,
    model: str,
    t_end: float,
    points: int,
    trajectories: int,
    initial: str | Mapping[str, Any],
    steps: Mapping[str, float] | None,
    burn_in: float | None,
    event_budget: float,
) -> _Plan:
    check_choice("model", model, MODELS)
    times = _time_grid(t_end, points)
    after_cycle = _apply_steps(cycle, steps)
    after_copies = copies.for_cycle(after_cycle)
    species = len(SPECIES) if model == "mass_action" else 1
    stored = trajectories * times.size * species
    if stored > MAX_STORED_VALUES:
        msg = (
            f"{trajectories} trajectories x {times.size} points would store {stored:.3g} counts "
            f"(limit {MAX_STORED_VALUES:.3g}); use fewer trajectories or points"
        )
        raise ValueError(msg)
    chain_before = BirthDeathChain.from_copies(cycle, copies)
    if model == "quasi_steady":
        before: Any = chain_before
        after: Any = BirthDeathChain.from_copies(after_cycle, after_copies)
        # Each cycle turnover is one up and one down event.
        rate = 2.0 * _chain_flux(after)
        rate_before = 2.0 * _chain_flux(before)
        max_rate = after.kinase_rate + after.phosphatase_rate
        network = None
    else:
        before = MassActionNetwork.from_cycle(cycle, copies)
        after = MassActionNetwork.from_cycle(after_cycle, after_copies)
        rate = _steady_total_propensity(after_cycle, after)
        rate_before = _steady_total_propensity(cycle, before)
        max_rate = after.max_total_propensity()
        network = before
    parsed = _parse_initial(initial, model, copies.substrate, network)

    steady_cdf = None
    steady_state = None
    if burn_in is not None and (model != "mass_action" or parsed is not None):
        msg = "`burn_in` applies only to the mass_action model started from its steady state"
        raise ValueError(msg)
    if parsed is None and model == "quasi_steady":
        steady_cdf = stationary_distribution(chain_before).cumulative()
    if parsed is None and model == "mass_action":
        steady_state = _rounded_steady_state(cycle, before)
        if burn_in is None:
            tau = integrated_autocorrelation_time(stationary_distribution(chain_before))
            waiting = 1.0 / max(rate_before, 1e-300)
            burn_in = max(BURN_IN_CORRELATION_TIMES * tau, 1000.0 * waiting)
    burn_in = 0.0 if burn_in is None else burn_in
    if (
        isinstance(burn_in, bool)
        or not isinstance(burn_in, numbers.Real)
        or not (math.isfinite(burn_in) and burn_in >= 0.0)
    ):
        msg = f"`burn_in` must be a finite number >= 0 s; got {burn_in!r}"
        raise ValueError(msg)
    burn_in = float(burn_in)

    per_trajectory = rate * times[-1] + rate_before * burn_in
    expected = trajectories * per_trajectory
    if expected > event_budget:
        msg = (
            f"{trajectories} trajectories to t_end = {times[-1]:g} s need about {expected:.3g} "
            f"reaction events (budget {event_budget:.3g}); use fewer trajectories, a shorter "
            "t_end or a smaller copy number, or raise the event budget"
        )
        raise ValueError(msg)
    # Cap per trajectory far above what the fastest reachable state could produce.
    horizon = max(times[-1], burn_in)
    cap = int(min(4.0 * max_rate * horizon + 1e6, 2**62))
    warnings: list[str] = []
    if model == "mass_action":
        both = ("kinase", "phosphatase")
        warnings = _rounding_warnings(copies, "before the step" if steps else "", both)
        changed = tuple(name for name in both if steps and f"{name}_total" in steps)
        warnings += _rounding_warnings(after_copies, "after the step", changed)
    return _Plan(
        model,
        times,
        copies.substrate,
        before,
        after,
        parsed,
        burn_in,
        per_trajectory,
        cap,
        steady_cdf,
        steady_state,
        tuple(warnings),
    )


def _chain_flux(chain: BirthDeathChain) -> float:
    """Stationary cycle flux of the chain, molecules per second (mean up-rate)."""
    dist = stationary_distribution(chain)
    n = np.arange(chain.molecules + 1, dtype=float)
    return float(np.dot(dist.probabilities, chain.up_rate(n)))


def _apply_enzyme_step(
    state: IntArray, before: MassActionNetwork, after: MassActionNetwork
) -> IntArray:
    """Adjust (A, B, C1, C2) rows when a step removes enzyme molecules.

    Added enzyme arrives free. Removed enzyme is taken free first; if fewer are free than are
    removed, complexes give up their substrate (C1 → A, C2 → B) and the enzyme goes.
    """
    state = state.copy()
    for column, substrate_column, old, new in (
        (2, 0, before.kinase, after.kinase),
        (3, 1, before.phosphatase, after.phosphatase),
    ):
        if new >= old:
            continue
        free = old - state[:, column]
        deficit = np.maximum((old - new) - free, 0)
        state[:, column] -= deficit
        state[:, substrate_column] += deficit
    return state


def simulate_ensemble(
    cycle: Cycle,
    t_end: float,
    trajectories: int = 1,
    *,
    molecules: int | None = None,
    volume: float | None = None,
    model: str = "quasi_steady",
    points: int = 101,
    seed: int | None = None,
    initial: str | Mapping[str, Any] = "steady",
    steps: Mapping[str, float] | None = None,
    burn_in: float | None = None,
    event_budget: float = DEFAULT_EVENT_BUDGET,
    progress: ProgressCallback | None = None,
    cancel: CancelFlag | Callable[[], bool] | None = None,
    first_trajectory: int = 0,
) -> EnsembleResult:
    """Simulate an ensemble of stochastic trajectories of `cycle` (Gillespie direct method).

    Parameters
    ----------
    cycle : Cycle
        Parameters before the step (µM, 1/s, 1/(µM·s)).
    t_end : float
        End of the sampled window, s; samples at `points` evenly spaced times from 0.
    trajectories : int
        Ensemble size M.
    molecules, volume : int or float
        Substrate molecules, or compartment volume in fL (exactly one).
    model : {"quasi_steady", "mass_action"}
        Reduced birth–death chain, or the six-reaction network with complexes.
    points : int
        Sampling times (≥ 2).
    seed : int, optional
        Same seed, same trajectories (independent of chunking). None draws a fresh seed,
        reported in the result.
    initial : "steady" or mapping
        ``"steady"``: the chain starts from its exact stationary distribution; the network from
        its deterministic steady state followed by a burn-in of `burn_in` seconds (so it is
        sampled from its own stationary distribution). A mapping gives counts, e.g.
        ``{"modified": 0}`` (the rest unmodified, complexes zero unless given).
    steps : mapping, optional
        New values of cycle keys (e.g. ``{"kinase_total": 0.02}``) acting at t = 0. Enzyme
        added arrives free; removed enzyme is taken free first, then from complexes.
    burn_in : float, optional
        Network only: seconds simulated before t = 0 from the deterministic steady state.
        Default: 3 integrated autocorrelation times of the chain (and at least 1000 mean
        waiting times).
    event_budget : float
        Refuse ensembles expected to need more reaction events than this.
    progress : callable, optional
        ``progress(done, total)`` after each chunk of trajectories.
    cancel : threading.Event or callable, optional
        Checked between chunks; when set, the run stops and returns the finished
        trajectories with status ``"cancelled"``.
    first_trajectory : int
        Index of the first trajectory (to split one ensemble across workers).

    Returns
    -------
    EnsembleResult

    Examples
    --------
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.05,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.05, phosphatase_kon=100.0)
    >>> run = simulate_ensemble(c, 10.0, 50, molecules=200, seed=1,
    ...                         steps={"kinase_total": 0.012})
    >>> run.status, run.counts["modified"].shape
    ('completed', (50, 101))
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise TypeError(msg)
    trajectories = _check_count("trajectories", trajectories, 1, MAX_TRAJECTORIES)
    first_trajectory = _check_count("first_trajectory", first_trajectory, 0, 2**40)
    event_budget = check_positive("event_budget", event_budget)
    copies = CopyNumbers.from_cycle(cycle, molecules, volume)
    plan = _plan(
        cycle, copies, model, t_end, points, trajectories, initial, steps, burn_in, event_budget
    )
    used_seed = _resolve_seed(seed)
    key = _seed_key(used_seed)
    kernels = _kernels()
    is_cancelled = _cancel_checker(cancel)

    chunk = int(max(1, min(trajectories, _EVENTS_PER_CHUNK / max(plan.events_per_trajectory, 1.0))))
    n_points = plan.times.size
    width = len(SPECIES) if plan.model == "mass_action" else 1
    out = np.zeros((trajectories, n_points, width), dtype=np.int64)
    events = np.zeros(trajectories, dtype=np.int64)
    burn_events = np.zeros(trajectories, dtype=np.int64)
    status = np.zeros(trajectories, dtype=np.int64)
    done = 0
    cancelled = False
    started = time.perf_counter()
    while done < trajectories:
        if is_cancelled():
            cancelled = True
            break
        stop = min(trajectories, done + chunk)
        _run_chunk(
            kernels,
            plan,
            key,
            first_trajectory + done,
            out[done:stop],
            events[done:stop],
            burn_events[done:stop],
            status[done:stop],
        )
        done = stop
        if progress is not None:
            progress(done, trajectories)
    wall = time.perf_counter() - started

    out = out[:done]
    events = events[:done]
    burn_events = burn_events[:done]
    limited = int(np.count_nonzero(status[:done] == kernels.EVENT_LIMIT))
    counts = _counts(plan, out)
    if cancelled:
        state, message = "cancelled", f"cancelled after {done} of {trajectories} trajectories"
    elif limited:
        state = "event_limit"
        message = (
            f"{limited} of {done} trajectories reached the cap of {plan.max_events} events; their "
            "later samples repeat the last state"
        )
    else:
        state, message = "completed", f"{done} trajectories, {int(events.sum())} events"
    return EnsembleResult(
        plan.model,
        plan.times,
        counts,
        plan.molecules,
        trajectories,
        events,
        burn_events,
        wall,
        used_seed,
        state,
        message,
        plan.warnings,
        _enzyme_counts(plan),
    )


def _enzyme_counts(
    plan: _Plan,
) -> tuple[tuple[int, int] | None, tuple[int, int] | None]:
    """Whole (kinase, phosphatase) molecules simulated before and after the step."""
    if plan.model != "mass_action":
        return None, None
    return (plan.before.kinase, plan.before.phosphatase), (
        plan.after.kinase,
        plan.after.phosphatase,
    )


def _cancel_checker(cancel: CancelFlag | Callable[[], bool] | None) -> Callable[[], bool]:
    if cancel is None:
        return lambda: False
    if hasattr(cancel, "is_set"):
        return lambda: bool(cancel.is_set())  # type: ignore[union-attr]
    if callable(cancel):
        return lambda: bool(cancel())
    msg = f"`cancel` must be a threading.Event-like object or a callable; got {cancel!r}"
    raise ValueError(msg)


def _counts(plan: _Plan, out: IntArray) -> dict[str, IntArray]:
    if plan.model == "mass_action":
        return {name: np.ascontiguousarray(out[:, :, i]) for i, name in enumerate(SPECIES)}
    modified = np.ascontiguousarray(out[:, :, 0])
    zero = np.zeros_like(modified)
    return {
        "unmodified": plan.molecules - modified,
        "modified": modified,
        "kinase_complex": zero,
        "phosphatase_complex": zero.copy(),
    }


def _run_chunk(
    kernels: Any,
    plan: _Plan,
    key: np.uint64,
    first: int,
    out: IntArray,
    events: IntArray,
    burn_events: IntArray,
    status: IntArray,
) -> None:
    """Simulate trajectories first…first + len(out) − 1 into `out` (views of the result)."""
    count = out.shape[0]
    states = kernels.seed_states(key, first, count)
    if plan.model == "quasi_steady":
        if plan.initial is None:
            assert plan.steady_cdf is not None
            u = kernels.uniforms(states)
            start = np.searchsorted(plan.steady_cdf, u * plan.steady_cdf[-1], side="right")
            start = np.minimum(start, plan.molecules).astype(np.int64)
        else:
            start = np.full(count, plan.initial["modified"], dtype=np.int64)
        chain = plan.after
        buffer = np.empty((count, plan.times.size), dtype=np.int64)
        kernels.simulate_chain(
            start,
            states,
            plan.times,
            chain.molecules,
            chain.kinase_rate,
            chain.K1 * chain.molecules,
            chain.phosphatase_rate,
            chain.K2 * chain.molecules,
            plan.max_events,
            buffer,
            events,
            status,
        )
        out[:, :, 0] = buffer
        return

    before: MassActionNetwork = plan.before
    after: MassActionNetwork = plan.after
    if plan.initial is None:
        assert plan.steady_state is not None
        start = np.repeat(plan.steady_state[None, :], count, axis=0)
        if plan.burn_in > 0.0:
            final = np.empty((count, 1, 4), dtype=np.int64)
            burn_status = np.zeros(count, dtype=np.int64)
            kernels.simulate_network(
                start,
                states,
                np.array([plan.burn_in]),
                before.kinase,
                before.phosphatase,
                before.constants,
                plan.max_events,
                final,
                burn_events,
                burn_status,
            )
            start = np.ascontiguousarray(final[:, 0, :])
    else:
        row = [plan.initial[name] for name in SPECIES]
        start = np.repeat(np.array(row, dtype=np.int64)[None, :], count, axis=0)
    start = _apply_enzyme_step(start, before, after)
    kernels.simulate_network(
        start,
        states,
        plan.times,
        after.kinase,
        after.phosphatase,
        after.constants,
        plan.max_events,
        out,
        events,
        status,
    )
    if plan.initial is None and plan.burn_in > 0.0:
        np.maximum(status, burn_status, out=status)
