"""Compiled inner loops of the stochastic simulation (numba, cached on disk).

Imported lazily by `hairtrigger.core.ssa` so that importing the package does not load numba.

Random numbers: every trajectory owns a xoshiro256** generator (Blackman & Vigna, "Scrambled
linear pseudorandom number generators", ACM TOMS 2021) whose 256-bit state is filled by
SplitMix64 from a 64-bit key and the trajectory's index. A trajectory's random stream therefore
depends only on (seed, index): ensembles reproduce exactly however they are split into chunks.

Gillespie's direct method (Gillespie 1977, J Phys Chem 81:2340): waiting time
``−ln(u₁)/a₀``, reaction chosen by ``u₂·a₀`` against the running sum of propensities.
"""

from __future__ import annotations

import numpy as np
from numba import njit

_GOLDEN = np.uint64(0x9E3779B97F4A7C15)
_MIX1 = np.uint64(0xBF58476D1CE4E5B9)
_MIX2 = np.uint64(0x94D049BB133111EB)
_S30 = np.uint64(30)
_S27 = np.uint64(27)
_S31 = np.uint64(31)
_S17 = np.uint64(17)
_S45 = np.uint64(45)
_S7 = np.uint64(7)
_S57 = np.uint64(57)
_S11 = np.uint64(11)
_S53 = np.uint64(53)
_FIVE = np.uint64(5)
_NINE = np.uint64(9)
_TWO_POW_M53 = 1.0 / 9007199254740992.0

#: Status codes written per trajectory.
FINISHED = 0
EVENT_LIMIT = 1


@njit(cache=True, nogil=True)
def _splitmix64(x: np.uint64) -> np.uint64:  # pragma: no cover - compiled
    z = x
    z = (z ^ (z >> _S30)) * _MIX1
    z = (z ^ (z >> _S27)) * _MIX2
    return z ^ (z >> _S31)


@njit(cache=True, nogil=True)
def seed_states(key: np.uint64, first: int, count: int) -> np.ndarray:  # pragma: no cover
    """xoshiro256** states of trajectories first…first + count − 1 (shape (count, 4))."""
    states = np.empty((count, 4), dtype=np.uint64)
    for i in range(count):
        counter = key + np.uint64(4 * (first + i)) * _GOLDEN
        for j in range(4):
            counter += _GOLDEN
            states[i, j] = _splitmix64(counter)
    return states


@njit(cache=True, nogil=True)
def _rotl(x: np.uint64, k: np.uint64) -> np.uint64:  # pragma: no cover - compiled
    return (x << k) | (x >> (np.uint64(64) - k))


@njit(cache=True, nogil=True)
def _next_double(s: np.ndarray) -> float:  # pragma: no cover - compiled
    """Uniform double in [0, 1) from the state row `s` (advanced in place)."""
    result = _rotl(s[1] * _FIVE, _S7) * _NINE
    t = s[1] << _S17
    s[2] ^= s[0]
    s[3] ^= s[1]
    s[1] ^= s[2]
    s[0] ^= s[3]
    s[2] ^= t
    s[3] = _rotl(s[3], _S45)
    return float(result >> _S11) * _TWO_POW_M53


@njit(cache=True, nogil=True)
def uniforms(states: np.ndarray) -> np.ndarray:  # pragma: no cover - compiled
    """One uniform draw in [0, 1) per trajectory (advancing each state)."""
    out = np.empty(states.shape[0])
    for i in range(states.shape[0]):
        out[i] = _next_double(states[i])
    return out


@njit(cache=True, nogil=True)
def _positive_uniform(s: np.ndarray) -> float:  # pragma: no cover - compiled
    """Uniform in (0, 1]: safe to take the logarithm of."""
    return 1.0 - _next_double(s)


@njit(cache=True, nogil=True)
def simulate_chain(
    initial: np.ndarray,
    states: np.ndarray,
    times: np.ndarray,
    molecules: int,
    kinase_rate: float,
    kinase_km: float,
    phosphatase_rate: float,
    phosphatase_km: float,
    max_events: int,
    out: np.ndarray,
    events: np.ndarray,
    status: np.ndarray,
) -> None:  # pragma: no cover - compiled
    """Direct method for the reduced birth–death chain.

    Parameters
    ----------
    initial : int64 (M,)
        Modified count at t = times[0]... (the run starts at time 0).
    states : uint64 (M, 4)
        Generator states (advanced in place).
    times : float64 (P,)
        Increasing sampling times ≥ 0.
    molecules, kinase_rate, kinase_km, phosphatase_rate, phosphatase_km
        N, V1 and Km1 (molecules/s, molecules), V2 and Km2.
    max_events : int
        Per-trajectory cap; a trajectory that reaches it stops with status EVENT_LIMIT and
        its remaining samples hold the last state.
    out : int64 (M, P)
        Modified count at each sampling time (written).
    events, status : int64 (M,)
        Events simulated and status per trajectory (written).
    """
    n_points = times.shape[0]
    for i in range(initial.shape[0]):
        s = states[i]
        n = initial[i]
        t = 0.0
        p = 0
        count = 0
        code = FINISHED
        while p < n_points:
            free = molecules - n
            up = kinase_rate * free / (kinase_km + free)
            down = phosphatase_rate * n / (phosphatase_km + n)
            total = up + down
            if total > 0.0:
                t_next = t - np.log(_positive_uniform(s)) / total
            else:
                t_next = np.inf
            while p < n_points and times[p] < t_next:
                out[i, p] = n
                p += 1
            if p >= n_points:
                break
            if count >= max_events:
                code = EVENT_LIMIT
                while p < n_points:
                    out[i, p] = n
                    p += 1
                break
            if _next_double(s) * total < up:
                n += 1
            else:
                n -= 1
            t = t_next
            count += 1
        events[i] = count
        status[i] = code


@njit(cache=True, nogil=True)
def simulate_network(
    initial: np.ndarray,
    states: np.ndarray,
    times: np.ndarray,
    kinase_count: int,
    phosphatase_count: int,
    constants: np.ndarray,
    max_events: int,
    out: np.ndarray,
    events: np.ndarray,
    status: np.ndarray,
) -> None:  # pragma: no cover - compiled
    """Direct method for the six-reaction mass-action network.

    Reactions (molecule units): A + E1 → C1 (a1·A·E1), C1 → A + E1 (d1·C1), C1 → B + E1
    (k1·C1), B + E2 → C2 (a2·B·E2), C2 → B + E2 (d2·C2), C2 → A + E2 (k2·C2); free enzyme
    E1 = kinase_count − C1, E2 = phosphatase_count − C2.

    Parameters
    ----------
    initial : int64 (M, 4)
        (A, B, C1, C2) at time 0.
    constants : float64 (6,)
        a1, d1, k1, a2, d2, k2 in molecule units (1/(molecule·s) for a, 1/s otherwise).
    out : int64 (M, P, 4)
        (A, B, C1, C2) at each sampling time (written).

    Other parameters as in `simulate_chain`.
    """
    a1 = constants[0]
    d1 = constants[1]
    k1 = constants[2]
    a2 = constants[3]
    d2 = constants[4]
    k2 = constants[5]
    n_points = times.shape[0]
    for i in range(initial.shape[0]):
        s = states[i]
        a = initial[i, 0]
        b = initial[i, 1]
        c1 = initial[i, 2]
        c2 = initial[i, 3]
        t = 0.0
        p = 0
        count = 0
        code = FINISHED
        while p < n_points:
            r0 = a1 * a * (kinase_count - c1)
            r1 = r0 + d1 * c1
            r2 = r1 + k1 * c1
            r3 = r2 + a2 * b * (phosphatase_count - c2)
            r4 = r3 + d2 * c2
            total = r4 + k2 * c2
            if total > 0.0:
                t_next = t - np.log(_positive_uniform(s)) / total
            else:
                t_next = np.inf
            while p < n_points and times[p] < t_next:
                out[i, p, 0] = a
                out[i, p, 1] = b
                out[i, p, 2] = c1
                out[i, p, 3] = c2
                p += 1
            if p >= n_points:
                break
            if count >= max_events:
                code = EVENT_LIMIT
                while p < n_points:
                    out[i, p, 0] = a
                    out[i, p, 1] = b
                    out[i, p, 2] = c1
                    out[i, p, 3] = c2
                    p += 1
                break
            x = _next_double(s) * total
            if x < r0:
                a -= 1
                c1 += 1
            elif x < r1:
                a += 1
                c1 -= 1
            elif x < r2:
                b += 1
                c1 -= 1
            elif x < r3:
                b -= 1
                c2 += 1
            elif x < r4:
                b += 1
                c2 -= 1
            else:
                a += 1
                c2 -= 1
            t = t_next
            count += 1
        events[i] = count
        status[i] = code
