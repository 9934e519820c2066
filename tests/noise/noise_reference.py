"""Independent references for the noise tests: generators solved by scipy, and TV bounds.

Nothing here calls the code under test except to read plain parameters; the stationary
distributions are obtained by direct linear algebra on the generator matrices.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

from hairtrigger import Cycle


def make_cycle(
    substrate: float = 1.0,
    enzyme: float = 0.01,
    km: float = 0.1,
    kcat: float = 1.0,
    kon: float = 100.0,
    ratio: float = 1.0,
    km2: float | None = None,
) -> Cycle:
    """An invented cycle: equal enzymes apart from the kinase amount, which sets the ratio."""
    return Cycle(
        substrate_total=substrate,
        kinase_total=enzyme * ratio,
        kinase_kcat=kcat,
        kinase_km=km,
        kinase_kon=kon,
        phosphatase_total=enzyme,
        phosphatase_kcat=kcat,
        phosphatase_km=km if km2 is None else km2,
        phosphatase_kon=kon,
    )


def chain_generator(n_total: int, v1: float, v2: float, km1: float, km2: float) -> np.ndarray:
    """Dense generator Q (rows sum to 0) of the birth–death chain, rates from DESIGN.md §2."""
    n = np.arange(n_total + 1, dtype=float)
    up = v1 * (n_total - n) / (km1 + n_total - n)
    down = v2 * n / (km2 + n)
    q = np.diag(up[:-1], 1) + np.diag(down[1:], -1)
    q -= np.diag(q.sum(axis=1))
    return q


def null_space_distribution(q: np.ndarray) -> np.ndarray:
    """Stationary distribution as the null space of Qᵀ (scipy.linalg.null_space)."""
    basis = scipy.linalg.null_space(q.T)
    assert basis.shape[1] == 1, "chain must be irreducible"
    v = basis[:, 0]
    return v / v.sum()


def network_generator(
    n_total: int, e1: int, e2: int, a1: float, d1: float, k1: float, a2: float, d2: float, k2: float
) -> tuple[scipy.sparse.csr_matrix, np.ndarray]:
    """Sparse generator of the six-reaction network on states (A, B, C1, C2), and the states."""
    states = [
        (n_total - b - c1 - c2, b, c1, c2)
        for c1 in range(e1 + 1)
        for c2 in range(e2 + 1)
        for b in range(n_total - c1 - c2 + 1)
    ]
    index = {s: i for i, s in enumerate(states)}
    rows, cols, vals = [], [], []
    for i, (a, b, c1, c2) in enumerate(states):
        moves = [
            (a1 * a * (e1 - c1), (a - 1, b, c1 + 1, c2)),
            (d1 * c1, (a + 1, b, c1 - 1, c2)),
            (k1 * c1, (a, b + 1, c1 - 1, c2)),
            (a2 * b * (e2 - c2), (a, b - 1, c1, c2 + 1)),
            (d2 * c2, (a, b + 1, c1, c2 - 1)),
            (k2 * c2, (a + 1, b, c1, c2 - 1)),
        ]
        for rate, target in moves:
            if rate > 0:
                rows.append(i)
                cols.append(index[target])
                vals.append(rate)
    size = len(states)
    q = scipy.sparse.csr_matrix((vals, (rows, cols)), shape=(size, size))
    q = q - scipy.sparse.diags(np.asarray(q.sum(axis=1)).ravel())
    return q.tocsr(), np.array(states)


def sparse_stationary(q: scipy.sparse.csr_matrix) -> np.ndarray:
    """Solve πQ = 0, Σπ = 1 with one balance equation replaced by the normalisation."""
    a = q.T.tolil()
    a[0, :] = 1.0
    rhs = np.zeros(q.shape[0])
    rhs[0] = 1.0
    pi = scipy.sparse.linalg.spsolve(a.tocsc(), rhs)
    return pi / pi.sum()


def total_variation(p: np.ndarray, q: np.ndarray) -> float:
    """½ Σ |p − q| over a common support."""
    return 0.5 * float(np.abs(np.asarray(p) - np.asarray(q)).sum())


def histogram(counts: np.ndarray, n_total: int) -> np.ndarray:
    """Empirical distribution of integer samples on 0…N."""
    x = np.asarray(counts).ravel()
    return np.bincount(x, minlength=n_total + 1) / x.size


def mcdiarmid_margin(trajectories: int, delta: float) -> float:
    """Deviation of TV above its mean exceeded with probability ≤ δ (McDiarmid 1989).

    The pooled histogram of M independent trajectories moves by at most 1/M in total variation
    when one trajectory is replaced, so P(TV − E TV ≥ ε) ≤ exp(−2ε²M).
    """
    return math.sqrt(math.log(1.0 / delta) / (2.0 * trajectories))


def expected_tv_bound_iid_pooled(p: np.ndarray, trajectories: int) -> float:
    """Upper bound on E[TV] for a pooled histogram of M independent trajectories.

    Each trajectory contributes the average of its samples' indicators; whatever their
    correlation, that average has variance ≤ p(1 − p). With E|X − EX| ≤ sd (Jensen) this gives
    E[TV] ≤ ½ Σ_k √(p_k(1 − p_k)/M). Needs unbiased samples (stationary start).
    """
    p = np.asarray(p)
    return 0.5 * float(np.sum(np.sqrt(p * (1.0 - p) / trajectories)))


def expected_tv_bound_reversible(
    p: np.ndarray, variance_rate: np.ndarray, trajectories: int, points: int, spacing: float
) -> float:
    """Upper bound on E[TV] for a stationary reversible chain sampled on a grid.

    For a reversible Markov process the autocovariance of any function is a mixture of
    decaying exponentials with non-negative weights, hence positive and decreasing. The
    variance of the average of P samples at spacing Δ of the indicator of state k is then at
    most p_k(1 − p_k)/P + σ²(k)/(P·Δ), σ²(k) = 2∫C(t)dt the asymptotic variance rate (the sum
    over lags is bounded by the integral). Averaging over M independent trajectories divides
    it by M; Jensen gives E|error| ≤ sd.
    """
    p = np.asarray(p)
    per_trajectory = p * (1.0 - p) / points + np.asarray(variance_rate) / (points * spacing)
    return 0.5 * float(np.sum(np.sqrt(per_trajectory / trajectories)))
