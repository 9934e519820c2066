"""Parameter sweeps and global sensitivity indices over cycle parameters.

A sweep draws a space-filling sample (scrambled Sobol' sequence or Latin hypercube from
`scipy.stats.qmc`) over any subset of the cycle parameters, each on a linear or logarithmic
range, and evaluates any quantity of `hairtrigger.core.evaluate.evaluate_arrays` at every
sample. The whole sample is drawn up front from the seed and cut into fixed-size chunks, so
neither the chunk size nor where the chunks run (this process or the workers of a Dask cluster)
changes a single number: the same seed gives byte-identical results either way.

Global sensitivity uses Saltelli's sampling design (two independent base matrices A and B and
the d matrices AB_i, A with column i taken from B; Saltelli 2002, Comput Phys Commun 145:280)
and the estimators recommended by Saltelli et al. (2010, Comput Phys Commun 181:259, Table 2):
first order ``S_i = mean(f_B·(f_ABi − f_A)) / V`` and total ``S_Ti = mean((f_A − f_ABi)²) / 2V``
(Jansen's form), with bootstrap percentile intervals.

Dask is optional (the ``cluster`` extra) and imported only when a client or scheduler address is
given.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .evaluate import EVALUATE_KEYS, THRESHOLD_KEYS, evaluate_arrays
from .params import CYCLE_KEYS, MODELS, READOUTS, Cycle, check_choice
from .steady import goldbeter_koshland
from .switching import relaxation_time
from .switching_arrays import step_half_time

FloatArray = NDArray[np.float64]

#: Sampling designs.
SAMPLING_DESIGNS: Final[tuple[str, ...]] = ("sobol", "lhs")

#: Quantities of ``hairtrigger evaluate`` written by a sweep, in the contract's order.
EVALUATE_QUANTITIES: Final[tuple[str, ...]] = (
    *EVALUATE_KEYS[2:],
    *(f"relative_{key}" for key in THRESHOLD_KEYS),
)

#: Half-time (s) after the default step of `hairtrigger.evaluate`'s ``dynamics`` block, rising
#: half: from the steady state with the kinase amount halved, the kinase restored at t = 0
#: (``dynamics.up.half_time``), in the sweep's model (`hairtrigger.core.switching_arrays`).
HALF_TIME: Final[str] = "half_time"

#: The falling half of the same step: the kinase amount halved at t = 0 from the steady state
#: of the parameters (``dynamics.down.half_time``), in the sweep's model.
HALF_TIME_DOWN: Final[str] = "half_time_down"

#: ``half_time`` of the quasi-steady model whatever the sweep's model: exact, closed form and
#: about a microsecond per set — the fast stand-in for mass-action sweeps of 10⁵ sets and
#: more where the enzymes are scarce (complexes negligible); not the mass-action time.
QUASI_STEADY_HALF_TIME: Final[str] = "quasi_steady_half_time"

#: ln 2 times the linear relaxation time at the steady state of the parameters, in the sweep's
#: model (the quasi-steady closed form `relaxation_half_time`, or the slowest mass-action
#: eigenvalue). It describes small perturbations about the steady state, not the zero-order
#: transit after a large step: near the threshold of a saturated cycle it differs from
#: ``half_time`` several-fold (either way).
RELAXATION_HALF_TIME: Final[str] = "relaxation_half_time"

#: Switching times a sweep can compute (beyond the quantities of ``hairtrigger evaluate``).
TIME_QUANTITIES: Final[tuple[str, ...]] = (
    HALF_TIME,
    HALF_TIME_DOWN,
    QUASI_STEADY_HALF_TIME,
    RELAXATION_HALF_TIME,
)

#: Everything a sweep can compute.
SWEEP_QUANTITIES: Final[tuple[str, ...]] = (*EVALUATE_QUANTITIES, *TIME_QUANTITIES)

#: Default outputs of `cycle_sensitivity`: threshold, steepness and switching time.
SENSITIVITY_OUTPUTS: Final[tuple[str, ...]] = ("activity_ratio_50", "hill_coefficient", HALF_TIME)

#: Seconds to wait for a Dask scheduler given by address.
SCHEDULER_TIMEOUT: float = 10.0

#: Samples per chunk; fixed so that results never depend on where chunks run.
DEFAULT_CHUNK_SIZE: Final[int] = 1 << 16

ProgressCallback = Callable[[int, int], None]


# --- ranges and samples ---------------------------------------------------------------------


@dataclass(frozen=True)
class ParameterRange:
    """A cycle parameter varied between `low` and `high`, uniformly in value or in log.

    Parameters
    ----------
    key : str
        One of `hairtrigger.core.params.CYCLE_KEYS`.
    low, high : float
        Bounds in the key's unit, 0 < low < high.
    log : bool
        Sample uniformly in log(value) instead of value.

    Examples
    --------
    >>> ParameterRange.parse("kinase_km=0.01:1:log")
    ParameterRange(key='kinase_km', low=0.01, high=1.0, log=True)
    """

    key: str
    low: float
    high: float
    log: bool = False

    def __post_init__(self) -> None:
        check_choice("key", self.key, CYCLE_KEYS)
        for name in ("low", "high"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, numbers.Real):
                msg = f"`{self.key}` range: `{name}` must be a number; got {value!r}"
                raise ValueError(msg)
            if not math.isfinite(float(value)) or float(value) <= 0.0:
                msg = f"`{self.key}` range: `{name}` must be finite and > 0; got {value!r}"
                raise ValueError(msg)
            object.__setattr__(self, name, float(value))
        if not self.low < self.high:
            msg = f"`{self.key}` range: low ({self.low!r}) must be below high ({self.high!r})"
            raise ValueError(msg)
        object.__setattr__(self, "log", bool(self.log))

    @classmethod
    def parse(cls, text: str) -> ParameterRange:
        """Parse ``KEY=LOW:HIGH`` or ``KEY=LOW:HIGH:log`` (also ``:lin``)."""
        key, sep, spec = str(text).partition("=")
        key = key.strip()
        if not sep or not key:
            msg = f"range {text!r} must look like KEY=LOW:HIGH or KEY=LOW:HIGH:log"
            raise ValueError(msg)
        if key not in CYCLE_KEYS:
            msg = (
                f"range {text!r}: unknown cycle parameter `{key}` (known: {', '.join(CYCLE_KEYS)})"
            )
            raise ValueError(msg)
        parts = spec.split(":")
        if len(parts) not in (2, 3) or (len(parts) == 3 and parts[2] not in ("log", "lin")):
            msg = f"range {text!r} must look like {key}=LOW:HIGH or {key}=LOW:HIGH:log"
            raise ValueError(msg)
        try:
            low, high = float(parts[0]), float(parts[1])
        except ValueError:
            msg = f"range {text!r}: LOW and HIGH must be numbers"
            raise ValueError(msg) from None
        return cls(key, low, high, len(parts) == 3 and parts[2] == "log")

    def scale(self, unit: ArrayLike) -> FloatArray:
        """Map points of [0, 1) onto the range (linearly, or linearly in log)."""
        u = np.asarray(unit, dtype=float)
        if self.log:
            lo, hi = math.log(self.low), math.log(self.high)
            return np.asarray(np.exp(lo + u * (hi - lo)), dtype=float)
        return np.asarray(self.low + u * (self.high - self.low), dtype=float)

    def __str__(self) -> str:
        return f"{self.key}={self.low!r}:{self.high!r}{':log' if self.log else ''}"


def _check_count(name: str, value: Any, minimum: int = 1) -> int:
    if isinstance(value, bool) or not isinstance(value, numbers.Integral) or value < minimum:
        msg = f"`{name}` must be a whole number ≥ {minimum}; got {value!r}"
        raise ValueError(msg)
    return int(value)


def _check_seed(seed: Any) -> int:
    if isinstance(seed, bool) or not isinstance(seed, numbers.Integral) or seed < 0:
        msg = f"`seed` must be a whole number ≥ 0; got {seed!r}"
        raise ValueError(msg)
    return int(seed)


def unit_sample(dimension: int, samples: int, design: str = "sobol", seed: int = 0) -> FloatArray:
    """Space-filling points in the unit cube, shape (samples, dimension).

    ``sobol``: the first `samples` points of a scrambled Sobol' sequence (drawn as the next
    power of two, so the prefix of a longer sweep is the same sweep); ``lhs``: a scrambled Latin
    hypercube. Both are deterministic in `seed`.
    """
    dimension = _check_count("dimension", dimension)
    samples = _check_count("samples", samples)
    check_choice("design", design, SAMPLING_DESIGNS)
    seed = _check_seed(seed)
    from scipy.stats import qmc  # scipy.stats is slow to import; only sweeps need it

    if design == "sobol":
        engine = qmc.Sobol(dimension, scramble=True, rng=np.random.default_rng(seed))
        points = engine.random_base2(max(0, math.ceil(math.log2(samples))))[:samples]
    else:
        points = qmc.LatinHypercube(dimension, rng=np.random.default_rng(seed)).random(samples)
    return np.ascontiguousarray(points, dtype=float)


def _check_ranges(ranges: Sequence[ParameterRange | str]) -> tuple[ParameterRange, ...]:
    parsed = tuple(r if isinstance(r, ParameterRange) else ParameterRange.parse(r) for r in ranges)
    if not parsed:
        msg = "`ranges` must name at least one parameter to vary"
        raise ValueError(msg)
    keys = [r.key for r in parsed]
    for k, key in enumerate(keys):
        if key in keys[:k]:
            msg = f"parameter `{key}` is varied twice"
            raise ValueError(msg)
    return parsed


def sample_ranges(
    ranges: Sequence[ParameterRange | str], samples: int, design: str = "sobol", seed: int = 0
) -> dict[str, FloatArray]:
    """Draw a sweep sample: each varied key → array of `samples` values in its range."""
    parsed = _check_ranges(ranges)
    unit = unit_sample(len(parsed), samples, design, seed)
    return {r.key: r.scale(unit[:, k]) for k, r in enumerate(parsed)}


# --- evaluation -------------------------------------------------------------------------------


def relaxation_half_time(params: Mapping[str, ArrayLike]) -> FloatArray:
    """ln 2 / λ, λ the linear relaxation rate of the quasi-steady cycle at its steady state.

    ``λ = (1/W)·[V1·K1/(K1 + 1 − y*)² + V2·K2/(K2 + y*)²]`` (linearising the quasi-steady
    ODE; REFERENCES.md "Dynamics"), with y* the Goldbeter–Koshland steady state and 1 − y*
    computed directly. A linear measure: it describes small perturbations about the steady
    state, not the zero-order transit after a large step (for that, see
    `hairtrigger.core.switching_arrays.step_half_time`, the sweep's ``half_time``).
    """
    w = np.asarray(params["substrate_total"], dtype=float)
    v1 = np.asarray(params["kinase_kcat"], dtype=float) * np.asarray(
        params["kinase_total"], dtype=float
    )
    v2 = np.asarray(params["phosphatase_kcat"], dtype=float) * np.asarray(
        params["phosphatase_total"], dtype=float
    )
    k1 = np.asarray(params["kinase_km"], dtype=float) / w
    k2 = np.asarray(params["phosphatase_km"], dtype=float) / w
    y = goldbeter_koshland(v1, v2, k1, k2)
    one_minus_y = goldbeter_koshland(v2, v1, k2, k1)
    rate = (v1 * k1 / (k1 + one_minus_y) ** 2 + v2 * k2 / (k2 + y) ** 2) / w
    return np.asarray(math.log(2.0) / rate, dtype=float)


def _check_outputs(outputs: Sequence[str] | None) -> tuple[str, ...]:
    if outputs is None:
        return EVALUATE_QUANTITIES
    chosen = tuple(outputs)
    if not chosen:
        msg = "`outputs` must name at least one quantity"
        raise ValueError(msg)
    for name in chosen:
        check_choice("outputs", name, SWEEP_QUANTITIES)
    return chosen


def evaluate_chunk(
    base: Mapping[str, float],
    varied: Mapping[str, FloatArray],
    model: str,
    readout: str,
    outputs: Sequence[str],
) -> dict[str, FloatArray]:
    """Evaluate one chunk: `base` parameters with `varied` arrays substituted.

    A plain module-level function so Dask workers can import it.
    """
    length = len(next(iter(varied.values())))
    params: dict[str, ArrayLike] = {key: base[key] for key in CYCLE_KEYS}
    params.update(varied)
    out: dict[str, FloatArray] = {}
    wanted = set(outputs)
    if wanted - set(TIME_QUANTITIES):
        values = evaluate_arrays(params, model, readout)
        for name in outputs:
            if name not in TIME_QUANTITIES:
                out[name] = np.broadcast_to(values[name], (length,)).astype(float)
    for name in wanted & set(TIME_QUANTITIES):
        out[name] = np.broadcast_to(_time_quantity(name, params, model, readout), (length,))
        out[name] = out[name].astype(float)
    return {name: out[name] for name in outputs}


def _time_quantity(
    name: str, params: Mapping[str, ArrayLike], model: str, readout: str
) -> FloatArray:
    """One of `TIME_QUANTITIES` over the chunk (NaN where it does not exist)."""
    if name == RELAXATION_HALF_TIME:
        if model == "quasi_steady":
            return relaxation_half_time(params)
        with np.errstate(divide="ignore", invalid="ignore"):
            tau = relaxation_time(params, model)
        # The mass-action equations need kon·Km ≥ kcat (a dissociation rate ≥ 0).
        valid = np.ones(np.shape(tau), dtype=bool)
        for enzyme in ("kinase", "phosphatase"):
            kon, km, kcat = (
                np.asarray(params[f"{enzyme}_{k}"], dtype=float) for k in ("kon", "km", "kcat")
            )
            valid &= kon * km - kcat >= 0.0
        return np.asarray(np.where(valid, math.log(2.0) * tau, np.nan), dtype=float)
    if name == QUASI_STEADY_HALF_TIME:
        return step_half_time(params, "quasi_steady", readout, "up")
    direction = "up" if name == HALF_TIME else "down"
    return step_half_time(params, model, readout, direction)


def _chunks(total: int, size: int) -> Iterator[slice]:
    for start in range(0, total, size):
        yield slice(start, min(start + size, total))


def _resolve_client(client: Any) -> tuple[Any, bool]:
    """Return (client, created_here) for a `distributed.Client` or a scheduler address."""
    if client is None or (hasattr(client, "submit") and hasattr(client, "gather")):
        return client, False
    if isinstance(client, str):
        try:
            from distributed import Client
        except ImportError as exc:  # pragma: no cover - the extra is installed in CI
            msg = (
                "running on a Dask cluster needs the optional `cluster` extra: "
                "pip install 'hairtrigger[cluster]'"
            )
            raise ValueError(msg) from exc
        try:
            return Client(client, timeout=f"{SCHEDULER_TIMEOUT}s"), True
        except (OSError, TimeoutError) as exc:
            msg = f"cannot reach the Dask scheduler at {client!r}: {exc}"
            raise ValueError(msg) from exc
    msg = (
        "`client` must be None, a distributed.Client or a scheduler address; "
        f"got {type(client).__name__}"
    )
    raise ValueError(msg)


def _run_chunks(
    tasks: list[tuple[Any, ...]],
    sizes: list[int],
    client: Any,
    progress: ProgressCallback | None,
) -> list[dict[str, FloatArray]]:
    """Run `evaluate_chunk` on each argument tuple, locally or on Dask; results in order."""
    total = sum(sizes)
    done = 0
    results: list[dict[str, FloatArray] | None] = [None] * len(tasks)
    if progress is not None:
        progress(0, total)
    resolved, created = _resolve_client(client)
    try:
        if resolved is None:
            for k, args in enumerate(tasks):
                results[k] = evaluate_chunk(*args)
                done += sizes[k]
                if progress is not None:
                    progress(done, total)
        else:
            from distributed import as_completed

            futures = [resolved.submit(evaluate_chunk, *args, pure=False) for args in tasks]
            index = {future.key: k for k, future in enumerate(futures)}
            for future in as_completed(futures):
                k = index[future.key]
                results[k] = future.result()
                done += sizes[k]
                if progress is not None:
                    progress(done, total)
    finally:
        if created:
            resolved.close()
    return [r for r in results if r is not None]


def _base_values(cycle: Cycle | Mapping[str, float]) -> dict[str, float]:
    if isinstance(cycle, Cycle):
        return cycle.as_dict()
    return Cycle.from_dict(cycle).as_dict()


def evaluate_sample(
    cycle: Cycle | Mapping[str, float],
    sample: Mapping[str, ArrayLike],
    model: str = "quasi_steady",
    readout: str = "total_modified",
    outputs: Sequence[str] | None = None,
    client: Any = None,
    chunk_size: int = DEFAULT_CHUNK_SIZE,
    progress: ProgressCallback | None = None,
) -> dict[str, FloatArray]:
    """Evaluate quantities at given parameter arrays, chunked, locally or on a Dask cluster.

    Parameters
    ----------
    cycle : Cycle or mapping
        Values of the parameters that are not in `sample`.
    sample : mapping of str to 1-D arrays
        Varied parameters (cycle keys), all of one length, values > 0.
    model, readout : str
        As in `hairtrigger.evaluate`.
    outputs : sequence of str, optional
        Quantities (`SWEEP_QUANTITIES`); default all of `EVALUATE_QUANTITIES`.
    client : distributed.Client or str, optional
        A Dask client, or a scheduler address to connect to (and disconnect from afterwards).
        None runs in this process.
    chunk_size : int
        Samples per task. Results do not depend on it or on `client`.
    progress : callable, optional
        Called as ``progress(done, total)`` after each chunk.

    Returns
    -------
    dict
        Output name → array of the sample's length (NaN where a quantity does not exist).
    """
    check_choice("model", model, MODELS)
    check_choice("readout", readout, READOUTS)
    names = _check_outputs(outputs)
    chunk_size = _check_count("chunk_size", chunk_size)
    base = _base_values(cycle)
    arrays: dict[str, FloatArray] = {}
    length = -1
    for key, values in sample.items():
        check_choice("sample key", key, CYCLE_KEYS)
        array = np.ascontiguousarray(values, dtype=float)
        if array.ndim != 1 or (length >= 0 and array.size != length):
            msg = "every array of `sample` must be 1-D and of the same length"
            raise ValueError(msg)
        if not (np.all(np.isfinite(array)) and np.all(array > 0.0)):
            msg = f"sample values of `{key}` must be finite and > 0"
            raise ValueError(msg)
        length = array.size
        arrays[key] = array
    if length <= 0:
        msg = "`sample` must hold at least one non-empty array"
        raise ValueError(msg)
    slices = list(_chunks(length, chunk_size))
    tasks = [(base, {k: v[s] for k, v in arrays.items()}, model, readout, names) for s in slices]
    parts = _run_chunks(tasks, [s.stop - s.start for s in slices], client, progress)
    return {name: np.concatenate([part[name] for part in parts]) for name in names}


@dataclass(frozen=True)
class SweepResult:
    """A sweep's sample and every quantity evaluated there.

    Attributes
    ----------
    ranges : tuple of ParameterRange
        The varied parameters.
    samples : dict
        Varied key → sampled values.
    outputs : dict
        Quantity → values (NaN where it does not exist).
    model, readout, design : str
    seed : int
    """

    ranges: tuple[ParameterRange, ...]
    samples: dict[str, FloatArray]
    outputs: dict[str, FloatArray]
    model: str
    readout: str
    design: str
    seed: int

    @property
    def columns(self) -> tuple[str, ...]:
        """Varied keys, then the quantities (the CSV header)."""
        return (*self.samples, *self.outputs)

    def table(self) -> FloatArray:
        """All columns side by side, shape (samples, columns)."""
        return np.column_stack([*self.samples.values(), *self.outputs.values()])


def run_sweep(
    cycle: Cycle | Mapping[str, float],
    ranges: Sequence[ParameterRange | str],
    samples: int,
    model: str = "quasi_steady",
    readout: str = "total_modified",
    seed: int = 0,
    design: str = "sobol",
    outputs: Sequence[str] | None = None,
    client: Any = None,
    chunk_size: int = DEFAULT_CHUNK_SIZE,
    progress: ProgressCallback | None = None,
) -> SweepResult:
    """Sample the ranges and evaluate every sample (see `evaluate_sample` for the arguments).

    Examples
    --------
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.1,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.1, phosphatase_kon=100.0)
    >>> r = run_sweep(c, ["kinase_km=0.01:1:log"], 8, outputs=["hill_coefficient"])
    >>> r.columns
    ('kinase_km', 'hill_coefficient')
    """
    parsed = _check_ranges(ranges)
    sample = sample_ranges(parsed, samples, design, seed)
    values = evaluate_sample(cycle, sample, model, readout, outputs, client, chunk_size, progress)
    return SweepResult(parsed, sample, values, model, readout, design, _check_seed(seed))


# --- Sobol' indices ---------------------------------------------------------------------------


@dataclass(frozen=True)
class SobolIndices:
    """First-order and total Sobol' indices of one output, with bootstrap intervals.

    Attributes
    ----------
    names : tuple of str
        The inputs, in column order.
    first_order, total : ndarray, shape (d,)
        S_i and S_Ti.
    first_order_interval, total_interval : ndarray, shape (d, 2)
        Bootstrap percentile intervals at `confidence`.
    variance : float
        Output variance.
    base_samples : int
        Rows of A (and B) used; rows where any evaluation is NaN are left out.
    evaluations : int
        Model evaluations in the design, N·(d + 2).
    confidence : float
    warnings : tuple of str
    """

    names: tuple[str, ...]
    first_order: FloatArray
    total: FloatArray
    first_order_interval: FloatArray
    total_interval: FloatArray
    variance: float
    base_samples: int
    evaluations: int
    confidence: float
    warnings: tuple[str, ...] = field(default=())

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready mapping: per input, first/total with intervals."""

        def number(x: Any) -> float | None:
            value = float(x)
            return value if math.isfinite(value) else None

        return {
            "inputs": {
                name: {
                    "first_order": number(self.first_order[k]),
                    "first_order_interval": [number(v) for v in self.first_order_interval[k]],
                    "total": number(self.total[k]),
                    "total_interval": [number(v) for v in self.total_interval[k]],
                }
                for k, name in enumerate(self.names)
            },
            "variance": number(self.variance),
            "base_samples": self.base_samples,
            "evaluations": self.evaluations,
            "confidence": self.confidence,
            "warnings": list(self.warnings),
        }


def saltelli_design(dimension: int, samples: int, seed: int = 0) -> tuple[FloatArray, FloatArray]:
    """Base matrices A and B (each (samples, dimension)) in the unit cube.

    Columns of one scrambled Sobol' sequence of dimension 2d: the first d form A, the last d B
    (Saltelli 2002; Saltelli et al. 2010). A power of two for `samples` keeps the sequence's
    balance.
    """
    points = unit_sample(2 * _check_count("dimension", dimension), samples, "sobol", seed)
    return points[:, :dimension], points[:, dimension:]


def saltelli_matrices(a: FloatArray, b: FloatArray) -> FloatArray:
    """Stack A, B and every AB_i (A with column i from B): shape ((d + 2)·N, d)."""
    n, d = a.shape
    blocks = [a, b]
    for i in range(d):
        ab = a.copy()
        ab[:, i] = b[:, i]
        blocks.append(ab)
    return np.concatenate(blocks, axis=0)


def _indices(f_a: FloatArray, f_b: FloatArray, f_ab: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Saltelli et al. (2010) estimators over the last axis; f_ab has shape (..., d, N)."""
    both = np.concatenate([f_a, f_b], axis=-1)
    variance = np.var(both, axis=-1)
    first = np.mean(f_b[..., None, :] * (f_ab - f_a[..., None, :]), axis=-1) / variance[..., None]
    total = 0.5 * np.mean((f_a[..., None, :] - f_ab) ** 2, axis=-1) / variance[..., None]
    return first, total


def sobol_indices_from_values(
    values: ArrayLike,
    dimension: int,
    names: Sequence[str] | None = None,
    bootstrap: int = 1000,
    confidence: float = 0.95,
    seed: int = 0,
) -> SobolIndices:
    """Sobol' indices from outputs evaluated on `saltelli_matrices` (in that row order).

    Parameters
    ----------
    values : array_like, shape ((d + 2)·N,)
        f(A), f(B), f(AB_1), …, f(AB_d), concatenated.
    dimension : int
        d.
    names : sequence of str, optional
        Input names (default ``x1 … xd``).
    bootstrap : int
        Bootstrap resamples of the N rows (0: no intervals).
    confidence : float
        Level of the percentile intervals, in (0, 1).
    seed : int
        Seed of the bootstrap resampling.
    """
    d = _check_count("dimension", dimension)
    f = np.asarray(values, dtype=float)
    if f.ndim != 1 or f.size % (d + 2):
        msg = f"`values` must be 1-D with a length divisible by dimension + 2 = {d + 2}"
        raise ValueError(msg)
    if not 0.0 < float(confidence) < 1.0:
        msg = f"`confidence` must lie in (0, 1); got {confidence!r}"
        raise ValueError(msg)
    bootstrap = _check_count("bootstrap", bootstrap, minimum=0)
    labels = tuple(names) if names is not None else tuple(f"x{i + 1}" for i in range(d))
    if len(labels) != d:
        msg = f"`names` must hold {d} names"
        raise ValueError(msg)
    n = f.size // (d + 2)
    blocks = f.reshape(d + 2, n)
    valid = np.all(np.isfinite(blocks), axis=0)
    warnings: list[str] = []
    if not np.all(valid):
        warnings.append(
            f"{int(np.sum(~valid))} of {n} base rows left out because the output does not exist "
            "there (NaN); the indices describe the region where it does"
        )
    blocks = blocks[:, valid]
    m = blocks.shape[1]
    nan_d = np.full(d, np.nan)
    if m < 2 or np.var(np.concatenate([blocks[0], blocks[1]])) == 0.0:
        warnings.append("too few valid rows or a constant output: indices undefined")
        interval = np.full((d, 2), np.nan)
        return SobolIndices(
            labels,
            nan_d,
            nan_d.copy(),
            interval,
            interval.copy(),
            math.nan,
            m,
            f.size,
            float(confidence),
            tuple(warnings),
        )
    f_a, f_b, f_ab = blocks[0], blocks[1], blocks[2:]
    first, total = _indices(f_a, f_b, f_ab)
    variance = float(np.var(np.concatenate([f_a, f_b])))
    first_iv = np.full((d, 2), np.nan)
    total_iv = np.full((d, 2), np.nan)
    if bootstrap:
        rng = np.random.default_rng(_check_seed(seed))
        batch = max(1, min(bootstrap, (1 << 22) // max(1, m * (d + 2))))
        firsts, totals = [], []
        left = bootstrap
        while left:
            take = min(batch, left)
            rows = rng.integers(0, m, size=(take, m))
            s1, st = _indices(f_a[rows], f_b[rows], np.moveaxis(f_ab[:, rows], 0, 1))
            firsts.append(s1)
            totals.append(st)
            left -= take
        alpha = 0.5 * (1.0 - float(confidence))
        q = [100.0 * alpha, 100.0 * (1.0 - alpha)]
        first_iv = np.percentile(np.concatenate(firsts), q, axis=0).T
        total_iv = np.percentile(np.concatenate(totals), q, axis=0).T
    return SobolIndices(
        labels,
        first,
        total,
        first_iv,
        total_iv,
        variance,
        m,
        f.size,
        float(confidence),
        tuple(warnings),
    )


def sobol_indices(
    function: Callable[[FloatArray], ArrayLike],
    bounds: Sequence[tuple[float, float]],
    samples: int,
    names: Sequence[str] | None = None,
    seed: int = 0,
    bootstrap: int = 1000,
    confidence: float = 0.95,
) -> SobolIndices:
    """Sobol' indices of a vectorised function on a box (uniform inputs).

    Parameters
    ----------
    function : callable
        Maps an array of points (M, d) to M outputs.
    bounds : sequence of (low, high)
        Box of the d inputs.
    samples : int
        Base sample size N (a power of two is best); N·(d + 2) evaluations.
    names, seed, bootstrap, confidence
        As in `sobol_indices_from_values` (`seed` also scrambles the design).

    Examples
    --------
    >>> s = sobol_indices(lambda x: x[:, 0] + 0.0 * x[:, 1], [(0, 1), (0, 1)], 1024, bootstrap=0)
    >>> bool(abs(s.first_order[0] - 1) < 1e-2 and abs(s.total[1]) < 1e-12)
    True
    """
    box = np.asarray(bounds, dtype=float)
    if box.ndim != 2 or box.shape[1] != 2 or not np.all(box[:, 1] > box[:, 0]):
        msg = "`bounds` must be a sequence of (low, high) pairs with low < high"
        raise ValueError(msg)
    d = box.shape[0]
    a, b = saltelli_design(d, samples, seed)
    points = box[:, 0] + saltelli_matrices(a, b) * (box[:, 1] - box[:, 0])
    values = np.asarray(function(points), dtype=float).reshape(-1)
    return sobol_indices_from_values(values, d, names, bootstrap, confidence, seed)


def cycle_sensitivity(
    cycle: Cycle | Mapping[str, float],
    ranges: Sequence[ParameterRange | str],
    samples: int,
    model: str = "quasi_steady",
    readout: str = "total_modified",
    outputs: Sequence[str] = SENSITIVITY_OUTPUTS,
    seed: int = 0,
    bootstrap: int = 1000,
    confidence: float = 0.95,
    client: Any = None,
    chunk_size: int = DEFAULT_CHUNK_SIZE,
    progress: ProgressCallback | None = None,
    log_outputs: bool = False,
) -> dict[str, SobolIndices]:
    """Global sensitivity of threshold, steepness and switching time to the varied parameters.

    The Saltelli design is mapped onto the ranges (log ranges: uniform in log, so the indices
    apportion the variance of the output over log-uniform inputs) and evaluated like a sweep
    (chunked; locally or on Dask with identical results).

    Parameters
    ----------
    outputs : sequence of str
        Any of `SWEEP_QUANTITIES`; by default ``activity_ratio_50`` (threshold),
        ``hill_coefficient`` (steepness) and ``half_time`` — the half-time after the default
        step of ``evaluate``'s ``dynamics`` block (kinase amount restored from half), in the
        sweep's model. Quasi-steady half-times are closed form (about a microsecond per set);
        mass-action half-times integrate every set with the compiled integrator (about half a
        millisecond per set: 10⁴ sets take seconds; run large designs on Dask, or ask for
        ``quasi_steady_half_time`` where the complexes are negligible). The old linear
        measure is ``relaxation_half_time``.
    samples : int
        Base sample size N; N·(d + 2) evaluations.
    log_outputs : bool
        Decompose the variance of ln(output) instead of the output. Thresholds and times that
        span decades are heavy-tailed on their own scale, which makes the estimators noisy
        (total indices can then exceed 1 at moderate N); on the log scale they are not.

    Returns
    -------
    dict
        Output → `SobolIndices`.
    """
    parsed = _check_ranges(ranges)
    d = len(parsed)
    a, b = saltelli_design(d, samples, seed)
    design = saltelli_matrices(a, b)
    sample = {r.key: r.scale(design[:, k]) for k, r in enumerate(parsed)}
    values = evaluate_sample(
        cycle, sample, model, readout, list(outputs), client, chunk_size, progress
    )
    names = [r.key for r in parsed]
    if log_outputs:
        with np.errstate(divide="ignore", invalid="ignore"):
            values = {k: np.where(v > 0.0, np.log(v), np.nan) for k, v in values.items()}
    return {
        name: sobol_indices_from_values(values[name], d, names, bootstrap, confidence, seed)
        for name in outputs
    }
