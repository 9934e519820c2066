"""Speed of the noise layer: compiled ensembles against a plain Python loop, exact distributions.

Run as ``PYTHONPATH=src python benchmarks/bench_noise.py [--quick]``. Prints events per second
and wall time for 1000 trajectories with N = 2000 substrate molecules (reduced chain and full
mass-action network), the same figures for a plain Python direct-method loop run in the same
process on fewer trajectories and extrapolated by event count, and the time of the exact
stationary distribution, population thresholds and the full ``noise`` summary at N = 10⁶
against a per-state Python loop.
"""

from __future__ import annotations

import argparse
import math
import random
import time

import numpy as np

from _timing import best_of  # benchmarks/_timing.py (the script folder is on sys.path)
from hairtrigger import Cycle
from hairtrigger.core.copynumber import CopyNumbers
from hairtrigger.core.noise import (
    BirthDeathChain,
    noise_summary,
    population_thresholds,
    stationary_distribution,
)
from hairtrigger.core.ssa import MassActionNetwork, _kernels, simulate_ensemble

# An invented switch: 2000 substrate molecules, Km/W = 0.05, 20 kinase and 20 phosphatase
# molecules (1 % of the substrate), kinase stepped up by 10 % at t = 0.
CYCLE = Cycle(
    substrate_total=2.0,
    kinase_total=0.02,
    kinase_kcat=2.0,
    kinase_km=0.1,
    kinase_kon=50.0,
    phosphatase_total=0.02,
    phosphatase_kcat=2.0,
    phosphatase_km=0.1,
    phosphatase_kon=50.0,
)
MOLECULES = 2000
TRAJECTORIES = 1000
STEP = {"kinase_total": 0.022}


def python_chain(
    n0: int, t_end: float, points: int, chain: BirthDeathChain, rng: random.Random
) -> tuple[list[int], int]:
    """Plain Python direct method for the reduced chain (Python floats, random.random)."""
    n_total = chain.molecules
    v1, v2 = chain.kinase_rate, chain.phosphatase_rate
    km1, km2 = chain.K1 * n_total, chain.K2 * n_total
    times = [t_end * i / (points - 1) for i in range(points)]
    out: list[int] = []
    n, t, p, events = n0, 0.0, 0, 0
    while p < points:
        free = n_total - n
        up = v1 * free / (km1 + free)
        down = v2 * n / (km2 + n)
        total = up + down
        t_next = t - math.log(1.0 - rng.random()) / total
        while p < points and times[p] < t_next:
            out.append(n)
            p += 1
        if p >= points:
            break
        n += 1 if rng.random() * total < up else -1
        t = t_next
        events += 1
    return out, events


def python_network(
    state: list[int], t_end: float, points: int, net: MassActionNetwork, rng: random.Random
) -> tuple[list[tuple[int, int, int, int]], int]:
    """Plain Python direct method for the six-reaction network."""
    a1, d1, k1, a2, d2, k2 = (float(x) for x in net.constants)
    e1, e2 = net.kinase, net.phosphatase
    a, b, c1, c2 = state
    times = [t_end * i / (points - 1) for i in range(points)]
    out: list[tuple[int, int, int, int]] = []
    t, p, events = 0.0, 0, 0
    while p < points:
        r0 = a1 * a * (e1 - c1)
        r1 = r0 + d1 * c1
        r2 = r1 + k1 * c1
        r3 = r2 + a2 * b * (e2 - c2)
        r4 = r3 + d2 * c2
        total = r4 + k2 * c2
        t_next = t - math.log(1.0 - rng.random()) / total
        while p < points and times[p] < t_next:
            out.append((a, b, c1, c2))
            p += 1
        if p >= points:
            break
        x = rng.random() * total
        if x < r0:
            a, c1 = a - 1, c1 + 1
        elif x < r1:
            a, c1 = a + 1, c1 - 1
        elif x < r2:
            b, c1 = b + 1, c1 - 1
        elif x < r3:
            b, c2 = b - 1, c2 + 1
        elif x < r4:
            b, c2 = b + 1, c2 - 1
        else:
            a, c2 = a + 1, c2 - 1
        t = t_next
        events += 1
    return out, events


def report(label: str, events: int, seconds: float) -> float:
    rate = events / seconds
    print(f"  {label:<44s} {events:>12,d} events  {seconds:9.3f} s  {rate / 1e6:8.2f} M events/s")
    return rate


def bench_ensembles(
    trajectories: int, python_trajectories: int, t_end: float, chain_t_end: float | None = None
) -> None:
    copies = CopyNumbers.from_molecules(CYCLE, MOLECULES)
    stepped = CYCLE.replace(**STEP)
    chain = BirthDeathChain.from_copies(stepped, copies)
    network = MassActionNetwork.from_cycle(stepped, copies)
    _kernels()  # load the compiled kernels outside the timings
    chain_end = t_end if chain_t_end is None else chain_t_end

    print(
        f"\n1. Reduced chain, N = {MOLECULES}, {trajectories} trajectories to t = {chain_end:g} s,"
        " from the exact steady state, kinase step +10 %"
    )
    result = simulate_ensemble(
        CYCLE, chain_end, trajectories, molecules=MOLECULES, seed=1, steps=STEP, points=201
    )
    fast = report("compiled (numba) ensemble", result.total_events, result.wall_time)
    rng = random.Random(1)
    start = time.perf_counter()
    py_events = sum(
        python_chain(MOLECULES // 2, chain_end, 201, chain, rng)[1]
        for _ in range(python_trajectories)
    )
    slow = report(
        f"plain Python loop ({python_trajectories} trajectories)",
        py_events,
        time.perf_counter() - start,
    )
    print(
        f"  plain Python for {trajectories} trajectories (extrapolated by events): "
        f"{result.total_events / slow:8.1f} s   speed-up x{fast / slow:,.0f}"
    )

    print(
        f"\n2. Mass-action network, N = {MOLECULES}, {network.kinase} kinase + "
        f"{network.phosphatase} phosphatase molecules, {trajectories} trajectories to "
        f"t = {t_end:g} s, from the steady state (burn-in 20 s), kinase step +10 %"
    )
    result = simulate_ensemble(
        CYCLE,
        t_end,
        trajectories,
        molecules=MOLECULES,
        seed=1,
        steps=STEP,
        points=201,
        model="mass_action",
        burn_in=20.0,
    )
    simulated = result.total_events + int(result.burn_in_events.sum())
    fast = report("compiled (numba) ensemble, burn-in included", simulated, result.wall_time)
    rng = random.Random(1)
    start_state = [
        int(x)
        for x in (
            result.counts[name][0, 0]
            for name in ("unmodified", "modified", "kinase_complex", "phosphatase_complex")
        )
    ]
    py_trajectories = max(1, python_trajectories // 5)
    start = time.perf_counter()
    py_events = sum(
        python_network(start_state, t_end, 201, network, rng)[1] for _ in range(py_trajectories)
    )
    slow = report(
        f"plain Python loop ({py_trajectories} trajectories)",
        py_events,
        time.perf_counter() - start,
    )
    print(
        f"  plain Python for {trajectories} trajectories (extrapolated by events): "
        f"{simulated / slow:8.1f} s   speed-up x{fast / slow:,.0f}"
    )


def naive_distribution(chain: BirthDeathChain) -> np.ndarray:
    """Per-state Python loop over the product formula, in log space (the baseline)."""
    n_total = chain.molecules
    km1, km2 = chain.K1 * n_total, chain.K2 * n_total
    logp = [0.0]
    for j in range(n_total):
        up = chain.kinase_rate * (n_total - j) / (km1 + n_total - j)
        down = chain.phosphatase_rate * (j + 1) / (km2 + j + 1)
        logp.append(logp[-1] + math.log(up) - math.log(down))
    top = max(logp)
    weights = [math.exp(x - top) for x in logp]
    total = math.fsum(weights)
    return np.array([w / total for w in weights])




def bench_exact(n_total: int) -> None:
    chain = BirthDeathChain(n_total, 1.0, 0.01, 0.02, phosphatase_rate=100.0)
    print(f"\n3. Exact stationary distribution, N = {n_total:,d} (K1 = 0.01, K2 = 0.02)")
    t_fast = best_of(lambda: stationary_distribution(chain), repeat=5)
    t_naive = best_of(lambda: naive_distribution(chain), repeat=1)
    fast = stationary_distribution(chain).probabilities
    slow = naive_distribution(chain)
    print(f"  vectorised log-space cumulative sum      {t_fast * 1e3:9.1f} ms")
    print(
        f"  per-state Python loop (baseline)         {t_naive * 1e3:9.1f} ms   "
        f"ratio x{t_naive / t_fast:,.0f}   max |dp| = {np.abs(fast - slow).max():.1e}"
    )
    t_thr = best_of(lambda: population_thresholds(chain), repeat=3)
    print(f"  population thresholds and Hill coefficient {t_thr * 1e3:7.1f} ms")
    cycle = Cycle(
        substrate_total=1.0,
        kinase_total=0.01,
        kinase_kcat=1.0,
        kinase_km=0.01,
        kinase_kon=100.0,
        phosphatase_total=0.01,
        phosphatase_kcat=1.0,
        phosphatase_km=0.02,
        phosphatase_kon=100.0,
    )
    t_sum = best_of(lambda: noise_summary(cycle, molecules=n_total), repeat=3)
    print(f"  whole `noise` summary (without JSON text) {t_sum * 1e3:8.1f} ms")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="smaller runs (a smoke test)")
    args = parser.parse_args()
    if args.quick:
        bench_ensembles(100, 2, 20.0)
        bench_exact(100_000)
    else:
        bench_ensembles(TRAJECTORIES, 5, 100.0, chain_t_end=1000.0)
        bench_exact(1_000_000)


if __name__ == "__main__":
    main()
