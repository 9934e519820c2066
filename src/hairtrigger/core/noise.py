"""Copy-number noise of a quasi-steady cycle: the exact birth–death chain.

With N substrate molecules and enzyme–substrate complexes neglected, the number n of modified
molecules is a birth–death chain on {0, …, N} with

    up-rate    λ(n) = V1·(N − n)/(K1·N + N − n),
    down-rate  μ(n) = V2·n/(K2·N + n),

V1, V2 the maximal rates in molecules per second and K1·N, K2·N the Michaelis constants in
molecules. Its stationary distribution is exact, ``p(n) ∝ Π_{j<n} λ(j)/μ(j + 1)``; it is
computed here in log space as a cumulative sum anchored at the mode (the terms
``ln λ(j) − ln μ(j + 1)`` decrease strictly in j, so partial sums stay small where p is not).

Because ln r enters every term additively, ``ln p_r(n) = ln p_1(n) + n·ln r + const``: the
population-mean response over many activity ratios is one matrix of log weights, and
d mean / d ln r equals the variance, which gives Newton steps for the thresholds.

References: Berg, Paulsson & Ehrenberg (2000) Biophys J 79:1228 (zero-order ultrasensitivity
in a finite cell); Qian & Cooper (2008) Biochemistry 47:2211 (binomial and geometric limits).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Final

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .copynumber import CopyNumbers, check_molecules
from .params import Cycle, check_positive
from .steady import FloatArray, goldbeter_koshland
from .steepness import LN81, THRESHOLD_FRACTIONS, quasi_steady_hill_coefficient

#: Keys of ``hairtrigger noise`` output that the contract fixes, in order (DESIGN.md §4).
NOISE_KEYS: Final[tuple[str, ...]] = (
    "molecules",
    "mean_modified",
    "variance_modified",
    "fano_factor",
    "distribution",
    "population_hill_coefficient",
)

#: Upper bound on the log-weight matrix held at once (rows × states), about 32 MB of floats.
_MATRIX_BUDGET: Final[int] = 1 << 22

#: Newton/bisection iterations allowed for a population threshold (about 8–15 are needed).
_MAX_THRESHOLD_STEPS: Final[int] = 200


@dataclass(frozen=True)
class BirthDeathChain:
    """The quasi-steady cycle as a birth–death chain on the modified count n ∈ {0…N}.

    Parameters
    ----------
    molecules : int
        Substrate molecules N (≥ 1).
    activity_ratio : float
        r = V1/V2.
    K1, K2 : float
        Michaelis constants over total substrate (so K·N is Km in molecules).
    phosphatase_rate : float, optional
        V2 in molecules per second; sets the time scale only (default 1).
    """

    molecules: int
    activity_ratio: float
    K1: float  # noqa: N815 - the symbol of the field
    K2: float  # noqa: N815 - the symbol of the field
    phosphatase_rate: float = 1.0

    def __post_init__(self) -> None:
        object.__setattr__(self, "molecules", check_molecules("molecules", self.molecules))
        for name in ("activity_ratio", "K1", "K2", "phosphatase_rate"):
            object.__setattr__(self, name, check_positive(name, getattr(self, name)))

    @classmethod
    def from_cycle(
        cls, cycle: Cycle, molecules: int | None = None, volume: float | None = None
    ) -> BirthDeathChain:
        """Chain of `cycle` with `molecules` substrate molecules or in `volume` fL."""
        return cls.from_copies(cycle, CopyNumbers.from_cycle(cycle, molecules, volume))

    @classmethod
    def from_copies(cls, cycle: Cycle, copies: CopyNumbers) -> BirthDeathChain:
        """Chain of `cycle` in the compartment of `copies` (rates in molecules per second)."""
        copies = copies.for_cycle(cycle)
        return cls(
            molecules=copies.substrate,
            activity_ratio=cycle.activity_ratio,
            K1=cycle.K1,
            K2=cycle.K2,
            phosphatase_rate=cycle.phosphatase_kcat * copies.phosphatase,
        )

    @property
    def kinase_rate(self) -> float:
        """V1 in molecules per second."""
        return self.activity_ratio * self.phosphatase_rate

    def up_rate(self, n: ArrayLike) -> FloatArray:
        """λ(n) = V1·(N − n)/(K1·N + N − n), molecules per second."""
        n = np.asarray(n, dtype=float)
        free = self.molecules - n
        return np.asarray(self.kinase_rate * free / (self.K1 * self.molecules + free), dtype=float)

    def down_rate(self, n: ArrayLike) -> FloatArray:
        """μ(n) = V2·n/(K2·N + n), molecules per second."""
        n = np.asarray(n, dtype=float)
        return np.asarray(self.phosphatase_rate * n / (self.K2 * self.molecules + n), dtype=float)

    def with_activity_ratio(self, ratio: float) -> BirthDeathChain:
        """Copy at another activity ratio (kinase rate changed, phosphatase rate kept)."""
        return BirthDeathChain(self.molecules, ratio, self.K1, self.K2, self.phosphatase_rate)

    def log_terms(self, log_ratio: float | None = None) -> FloatArray:
        """``ln λ(j) − ln μ(j + 1)`` for j = 0…N − 1 (strictly decreasing in j).

        Written as ``ln r − ln(1 + K1·N/(N − j)) + ln(1 + K2·N/(j + 1))``: two `log1p` per
        state, no rate formed, nothing cancels for tiny or huge Michaelis constants.
        """
        n_total = self.molecules
        theta = math.log(self.activity_ratio) if log_ratio is None else float(log_ratio)
        free = np.arange(n_total, 0, -1, dtype=float)  # N − j
        j1 = free[::-1]  # j + 1
        terms = np.log1p((self.K2 * n_total) / j1)
        terms -= np.log1p((self.K1 * n_total) / free)
        terms += theta
        return terms


def _anchored_log_weights(terms: FloatArray) -> tuple[FloatArray, int]:
    """ln p(n) − ln p(mode) from the decreasing increments `terms`, and the mode."""
    mode = int(np.count_nonzero(terms > 0.0))
    logw = np.empty(terms.size + 1)
    logw[mode] = 0.0
    np.cumsum(terms[mode:], out=logw[mode + 1 :])
    if mode:
        logw[:mode] = -np.cumsum(terms[:mode][::-1])[::-1]
    return logw, mode


@dataclass(frozen=True)
class StationaryDistribution:
    """Exact stationary distribution of a `BirthDeathChain`.

    Attributes
    ----------
    chain : BirthDeathChain
        The chain it belongs to.
    probabilities : ndarray, shape (N + 1,)
        p(n) for n = 0…N, summing to 1.
    log_probabilities : ndarray, shape (N + 1,)
        ln p(n) (finite even where p(n) underflows to 0).
    mean, variance : float
        Mean and variance of the modified count.
    mode : int
        Most probable modified count.
    """

    chain: BirthDeathChain
    probabilities: FloatArray = field(repr=False)
    log_probabilities: FloatArray = field(repr=False)
    mean: float
    variance: float
    mode: int

    @property
    def molecules(self) -> int:
        """Substrate molecules N."""
        return self.chain.molecules

    @property
    def fano_factor(self) -> float:
        """Variance over mean (1 for a Poisson count)."""
        return self.variance / self.mean

    @property
    def standard_deviation(self) -> float:
        """Standard deviation of the modified count."""
        return math.sqrt(self.variance)

    @property
    def states(self) -> NDArray[np.int64]:
        """The states n = 0…N."""
        return np.arange(self.molecules + 1)

    def cumulative(self) -> FloatArray:
        """P(n ≤ k) for k = 0…N."""
        return np.cumsum(self.probabilities)


def stationary_distribution(chain: BirthDeathChain) -> StationaryDistribution:
    """Exact stationary distribution of the birth–death `chain` (log space, O(N)).

    Examples
    --------
    Both enzymes far from saturation with equal rates give Binomial(N, ½):

    >>> d = stationary_distribution(BirthDeathChain(10, 1.0, 1e9, 1e9))
    >>> round(d.variance, 6)
    2.5
    """
    if not isinstance(chain, BirthDeathChain):
        msg = f"`chain` must be a BirthDeathChain; got {type(chain).__name__}"
        raise TypeError(msg)
    logw, mode = _anchored_log_weights(chain.log_terms())
    weights = np.exp(logw)  # max is exactly 1 (at the mode): no overflow, sum >= 1
    total = math.fsum(weights) if weights.size < 4096 else float(np.sum(weights))
    probabilities = weights / total
    log_probabilities = logw - math.log(total)
    n = np.arange(chain.molecules + 1, dtype=float)
    mean = float(np.sum(n * probabilities))  # not np.dot: BLAS threads cost more here
    deviation = n - mean
    variance = float(np.sum(deviation * deviation * probabilities))
    return StationaryDistribution(chain, probabilities, log_probabilities, mean, variance, mode)


# --- autocorrelation of the stationary chain --------------------------------------------------


def _log_flux(distribution: StationaryDistribution) -> FloatArray:
    """ln(π(k)·λ(k)) for k = 0…N − 1 (the probability flux across the edge k → k + 1)."""
    chain = distribution.chain
    k = np.arange(chain.molecules, dtype=float)
    with np.errstate(divide="ignore"):
        return np.asarray(
            distribution.log_probabilities[:-1] + np.log(chain.up_rate(k)), dtype=float
        )


def _log_cumsum(log_values: FloatArray) -> FloatArray:
    """ln of the running sum of exp(`log_values`), without under- or overflow."""
    return np.asarray(np.logaddexp.accumulate(log_values), dtype=float)


def _log_tails(distribution: StationaryDistribution) -> tuple[FloatArray, FloatArray]:
    """ln F(k) and ln(1 − F(k)) for k = 0…N − 1, each summed from its own tail."""
    logp = distribution.log_probabilities
    lower = _log_cumsum(logp)[:-1]
    upper = _log_cumsum(logp[::-1])[::-1][1:]
    return lower, upper


def integrated_autocorrelation_time(distribution: StationaryDistribution) -> float:
    """Integrated autocorrelation time of n at stationarity, seconds.

    τ = ∫₀^∞ Corr(n(0), n(t)) dt, exact for a birth–death chain: the Poisson equation solves
    by one sum, giving ``τ·Var(n) = Σ_k S(k)²/(π(k)λ(k))`` with
    ``S(k) = Σ_{j≤k} π(j)(j − mean) = −Σ_{j>k} π(j)(j − mean)``. Each S(k) is summed from the
    tail on its own side of the mean, in log space, so no term cancels. The time average of n
    over a window T ≫ τ has variance ≈ 2·τ·Var(n)/T.
    """
    if distribution.molecules == 0 or distribution.variance == 0.0:
        return 0.0
    logp = distribution.log_probabilities
    n = np.arange(distribution.molecules + 1, dtype=float)
    mean = distribution.mean
    with np.errstate(divide="ignore"):
        below = _log_cumsum(logp + np.log(np.maximum(mean - n, 0.0)))[:-1]  # k < mean
        above = _log_cumsum((logp + np.log(np.maximum(n - mean, 0.0)))[::-1])[::-1][1:]
    k = n[:-1]
    log_s = np.where(k < mean, below, above)
    terms = np.exp(2.0 * log_s - _log_flux(distribution))
    return float(np.sum(terms[np.isfinite(terms)]) / distribution.variance)


def occupancy_variance_rate(distribution: StationaryDistribution) -> FloatArray:
    """Asymptotic variance rate σ²(k) of the time spent in each state k.

    For the indicator of state k the time average over a window T has variance ≈ σ²(k)/T with
    ``σ²(k) = 2·π(k)²·[Σ_{j<k} F(j)²/w(j) + Σ_{j≥k} (1 − F(j))²/w(j)]``, F the cumulative
    distribution and w(j) = π(j)λ(j) (exact for a reversible birth–death chain; two running
    sums for all k, in log space). Used to judge how closely a finite simulation can match
    the distribution.

    Returns
    -------
    ndarray, shape (N + 1,)
        σ²(k), s.
    """
    log_lower, log_upper = _log_tails(distribution)
    log_w = _log_flux(distribution)
    left = _log_cumsum(2.0 * log_lower - log_w)  # Σ_{j≤k}, k = 0…N − 1
    right = _log_cumsum((2.0 * log_upper - log_w)[::-1])[::-1]  # Σ_{j≥k}
    below = np.concatenate(([-np.inf], left))  # Σ_{j<k}, k = 0…N
    above = np.concatenate((right, [-np.inf]))
    log_sigma = math.log(2.0) + 2.0 * distribution.log_probabilities + np.logaddexp(below, above)
    return np.asarray(np.exp(log_sigma), dtype=float)


# --- population-mean response over activity ratios --------------------------------------------


@dataclass(frozen=True)
class _RatioMoments:
    mean: FloatArray
    variance: FloatArray


class _LogWeightFamily:
    """ln p_r(n) = base(n) + (n − anchor)·ln r + const for one chain, all ratios at once."""

    def __init__(self, chain: BirthDeathChain) -> None:
        self.molecules = chain.molecules
        self.base, self.anchor = _anchored_log_weights(chain.log_terms(log_ratio=0.0))
        self.n = np.arange(self.molecules + 1, dtype=float)
        self.offset = self.n - self.anchor
        self.rows = max(1, _MATRIX_BUDGET // (self.molecules + 1))

    def moments(self, log_ratios: FloatArray) -> _RatioMoments:
        theta = np.asarray(log_ratios, dtype=float).ravel()
        mean = np.empty(theta.size)
        variance = np.empty(theta.size)
        for start in range(0, theta.size, self.rows):
            block = theta[start : start + self.rows]
            logw = self.base[None, :] + block[:, None] * self.offset[None, :]
            logw -= logw.max(axis=1, keepdims=True)
            w = np.exp(logw, out=logw)
            total = w.sum(axis=1)
            m = (w @ self.n) / total
            d = self.n[None, :] - m[:, None]
            v = np.einsum("ij,ij,ij->i", w, d, d) / total
            mean[start : start + block.size] = m
            variance[start : start + block.size] = v
        return _RatioMoments(
            mean.reshape(np.shape(log_ratios)), variance.reshape(np.shape(log_ratios))
        )


@dataclass(frozen=True)
class PopulationResponse:
    """Mean and spread of the modified fraction at a set of activity ratios.

    Attributes
    ----------
    activity_ratio : ndarray
        The ratios r = V1/V2.
    mean_fraction, sd_fraction : ndarray
        Mean and standard deviation of n/N over the cell population (stationary).
    deterministic_fraction : ndarray
        The Goldbeter–Koshland steady state (N → ∞) at the same ratios.
    molecules : int
        N.
    """

    activity_ratio: FloatArray
    mean_fraction: FloatArray
    sd_fraction: FloatArray
    deterministic_fraction: FloatArray
    molecules: int


def population_response(chain: BirthDeathChain, activity_ratio: ArrayLike) -> PopulationResponse:
    """Stationary mean modified fraction of a cell population at each activity ratio.

    Parameters
    ----------
    chain : BirthDeathChain
        Supplies N, K1 and K2 (its own ratio is not used).
    activity_ratio : array_like
        Ratios r > 0 (any shape); evaluated together, in blocks that bound memory.

    Returns
    -------
    PopulationResponse
    """
    ratios = np.asarray(activity_ratio, dtype=float)
    if not (np.all(np.isfinite(ratios)) and np.all(ratios > 0.0)):
        msg = "`activity_ratio` must hold finite numbers > 0"
        raise ValueError(msg)
    moments = _LogWeightFamily(chain).moments(np.log(ratios))
    n_total = chain.molecules
    return PopulationResponse(
        activity_ratio=ratios,
        mean_fraction=moments.mean / n_total,
        sd_fraction=np.sqrt(moments.variance) / n_total,
        deterministic_fraction=goldbeter_koshland(ratios, 1.0, chain.K1, chain.K2),
        molecules=n_total,
    )


@dataclass(frozen=True)
class PopulationThresholds:
    """Activity ratios at which the population mean reaches 10/50/90 % of N.

    Attributes
    ----------
    activity_ratio_10, activity_ratio_50, activity_ratio_90 : float
        The ratios (NaN if the root finder failed).
    response_coefficient, hill_coefficient : float
        r90/r10 and ln 81 / ln(r90/r10).
    deterministic_hill_coefficient : float
        The N → ∞ value (Goldbeter–Koshland closed form) for comparison.
    success : bool
    status : str
        ``"converged"`` or ``"max_iterations"``.
    message : str
    iterations : int
    """

    activity_ratio_10: float
    activity_ratio_50: float
    activity_ratio_90: float
    response_coefficient: float
    hill_coefficient: float
    deterministic_hill_coefficient: float
    success: bool
    status: str
    message: str
    iterations: int

    def as_dict(self) -> dict[str, float]:
        """The threshold quantities as a plain dict (the keys of ``hairtrigger evaluate``)."""
        return {
            "activity_ratio_10": self.activity_ratio_10,
            "activity_ratio_50": self.activity_ratio_50,
            "activity_ratio_90": self.activity_ratio_90,
            "response_coefficient": self.response_coefficient,
            "hill_coefficient": self.hill_coefficient,
        }


def _deterministic_log_ratio(fraction: FloatArray, k1: float, k2: float) -> FloatArray:
    """ln r at which the Goldbeter–Koshland curve equals `fraction` (closed form)."""
    y = np.asarray(fraction, dtype=float)
    return np.asarray(np.log(y) + np.log(k1 + 1.0 - y) - np.log1p(-y) - np.log(k2 + y), dtype=float)


def population_thresholds(
    chain: BirthDeathChain, fractions: tuple[float, ...] = THRESHOLD_FRACTIONS
) -> PopulationThresholds:
    """Thresholds and effective Hill coefficient of the population-mean response at this N.

    The targets are absolute (mean = 10 %, 50 %, 90 % of N). The mean is strictly increasing in
    θ = ln r with dmean/dθ = Var(n), so each target is bracketed by expanding steps from the
    deterministic threshold and then found by Newton steps guarded by bisection, all targets
    at once.
    """
    family = _LogWeightFamily(chain)
    n_total = chain.molecules
    frac = np.asarray(fractions, dtype=float)
    target = frac * n_total
    guess = _deterministic_log_ratio(frac, chain.K1, chain.K2)

    # Bracket: lo has mean < target, hi has mean > target.
    lo = guess - 0.5
    hi = guess + 0.5
    step = np.ones_like(guess)
    for _ in range(80):
        both = family.moments(np.concatenate((lo, hi))).mean
        m_lo, m_hi = both[: lo.size], both[lo.size :]
        low_bad = m_lo >= target
        high_bad = m_hi <= target
        if not (low_bad.any() or high_bad.any()):
            break
        lo = np.where(low_bad, lo - step, lo)
        hi = np.where(high_bad, hi + step, hi)
        step *= 2.0

    theta = np.clip(guess, lo, hi)
    tolerance = 1e-12 * n_total
    status = "max_iterations"
    iterations = 0
    for iterations in range(1, _MAX_THRESHOLD_STEPS + 1):  # noqa: B007 - count kept
        moments = family.moments(theta)
        residual = moments.mean - target
        above = residual > 0.0
        hi = np.where(above, theta, hi)
        lo = np.where(above, lo, theta)
        done = (np.abs(residual) <= tolerance) | (hi - lo <= 4e-16 * np.maximum(1.0, np.abs(theta)))
        if done.all():
            status = "converged"
            break
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = theta - residual / moments.variance
        inside = (newton > lo) & (newton < hi) & np.isfinite(newton)
        theta = np.where(done, theta, np.where(inside, newton, 0.5 * (lo + hi)))

    success = status == "converged"
    ratios = np.exp(theta) if success else np.full_like(theta, np.nan)
    by_fraction = dict(zip(fractions, ratios, strict=True))
    log_ratios = dict(zip(fractions, theta, strict=True))
    det_hill = float(quasi_steady_hill_coefficient(chain.K1, chain.K2))
    if success and 0.1 in by_fraction and 0.9 in by_fraction:
        log_rv = float(log_ratios[0.9] - log_ratios[0.1])
        rv = math.exp(log_rv)
        hill = LN81 / log_rv
    else:
        rv = hill = math.nan
    message = (
        f"thresholds found in {iterations} steps"
        if success
        else f"population thresholds did not converge in {iterations} steps"
    )
    return PopulationThresholds(
        activity_ratio_10=float(by_fraction.get(0.1, math.nan)),
        activity_ratio_50=float(by_fraction.get(0.5, math.nan)),
        activity_ratio_90=float(by_fraction.get(0.9, math.nan)),
        response_coefficient=rv,
        hill_coefficient=hill,
        deterministic_hill_coefficient=det_hill,
        success=success,
        status=status,
        message=message,
        iterations=iterations,
    )


# --- the summary behind ``hairtrigger noise`` -------------------------------------------------


def _finite_or_none(value: float) -> float | None:
    return value if math.isfinite(value) else None


def noise_summary(
    cycle: Cycle,
    molecules: int | None = None,
    volume: float | None = None,
    model: str = "quasi_steady",
) -> dict[str, Any]:
    """Exact noise of the quasi-steady chain of `cycle` at a copy number (``hairtrigger noise``).

    Parameters
    ----------
    cycle : Cycle
        Cycle parameters (µM, 1/s).
    molecules : int, optional
        Substrate molecules N.
    volume : float, optional
        Compartment volume, fL (1 µM in 1 fL ≈ 602.214 molecules); give exactly one of the two.
    model : str
        The model of the snapshot; with ``mass_action`` a warning says when the chain, which
        neglects complexes, is a poor guide (enzymes not scarce).

    Returns
    -------
    dict
        `NOISE_KEYS` first (``distribution`` is p(n) for n = 0…N), then ``mode_modified``,
        ``standard_deviation_modified``, ``correlation_time`` (s), copy numbers,
        ``deterministic_mean_modified``, ``deterministic_hill_coefficient``, the
        ``population`` and ``deterministic`` threshold blocks and ``warnings``.

    Examples
    --------
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.01,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.01, phosphatase_kon=100.0)
    >>> out = noise_summary(c, volume=1.0)
    >>> out["molecules"], round(out["mean_modified"], 6), len(out["distribution"])
    (602, 301.0, 603)
    >>> out["population_hill_coefficient"] < out["deterministic_hill_coefficient"]
    True
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise TypeError(msg)
    copies = CopyNumbers.from_cycle(cycle, molecules, volume)
    chain = BirthDeathChain.from_copies(cycle, copies)
    dist = stationary_distribution(chain)
    pop = population_thresholds(chain)
    det_y = float(goldbeter_koshland(cycle.activity_ratio, 1.0, cycle.K1, cycle.K2))
    det_theta = _deterministic_log_ratio(np.asarray(THRESHOLD_FRACTIONS), cycle.K1, cycle.K2)
    det_log_rv = float(det_theta[2] - det_theta[0])
    warnings: list[str] = []
    if not pop.success:
        warnings.append(pop.message)
    if model == "mass_action":
        scarce = max(cycle.kinase_total, cycle.phosphatase_total) / cycle.substrate_total
        if scarce > 0.05:
            warnings.append(
                f"enzymes are not scarce (largest enzyme/substrate = {scarce:.3g}): the "
                "quasi-steady chain neglects the substrate held in complexes; simulate the "
                "mass-action network to see its effect"
            )
    return {
        "molecules": chain.molecules,
        "mean_modified": dist.mean,
        "variance_modified": dist.variance,
        "fano_factor": dist.fano_factor,
        "distribution": dist.probabilities.tolist(),
        "population_hill_coefficient": _finite_or_none(pop.hill_coefficient),
        "mode_modified": dist.mode,
        "standard_deviation_modified": dist.standard_deviation,
        "correlation_time": integrated_autocorrelation_time(dist),
        "volume": copies.volume,
        "kinase_molecules": copies.kinase,
        "phosphatase_molecules": copies.phosphatase,
        "activity_ratio": cycle.activity_ratio,
        "K1": cycle.K1,
        "K2": cycle.K2,
        "deterministic_mean_modified": det_y * chain.molecules,
        "deterministic_hill_coefficient": pop.deterministic_hill_coefficient,
        "population": {k: _finite_or_none(v) for k, v in pop.as_dict().items()},
        "deterministic": {
            "activity_ratio_10": math.exp(det_theta[0]),
            "activity_ratio_50": math.exp(det_theta[1]),
            "activity_ratio_90": math.exp(det_theta[2]),
            "response_coefficient": math.exp(det_log_rv),
            "hill_coefficient": pop.deterministic_hill_coefficient,
        },
        "warnings": warnings,
    }
