"""Speed of the numerical core: steepness maps and steady-state curves.

Run: ``PYTHONPATH=src python benchmarks/bench_core.py`` (from the repository root).
Prints wall times and ratios against baselines measured in the same run:

* a per-point root-finding loop (scipy brentq per grid point, the naive way) on a sub-grid,
  extrapolated to the full grid;
* a single fused numpy pass over the same grid (the closed-form inverse written as one
  expression, no abstraction), which bounds what the core's layering costs.

Budgets (DESIGN.md §5): 256 × 256 map ≤ 10 ms for either model and ≥ 3000× the per-point loop;
400-point steady-state curve with all readouts ≤ 1 ms.
"""

from __future__ import annotations

import functools
import math
import time

import numpy as np
from scipy.optimize import brentq

import _timing  # benchmarks/_timing.py (the script folder is on sys.path)
from hairtrigger import Cycle, steepness_map
from hairtrigger.core.steady import steady_state

CYCLE = Cycle(
    substrate_total=1.0,
    kinase_total=0.05,
    kinase_kcat=1.0,
    kinase_km=0.05,
    kinase_kon=100.0,
    phosphatase_total=0.05,
    phosphatase_kcat=1.0,
    phosphatase_km=0.05,
    phosphatase_kon=100.0,
)
GRID = 256
KM = np.geomspace(1e-3, 1e2, GRID)


best_of = functools.partial(_timing.best_of, repeat=30)


def fused_map(model: str, readout: str) -> np.ndarray:
    """Hill coefficient over the grid as one closed-form numpy pass (baseline)."""
    w, kc1, e2, kc2 = (
        CYCLE.substrate_total,
        CYCLE.kinase_kcat,
        CYCLE.phosphatase_total,
        CYCLE.phosphatase_kcat,
    )
    m1 = KM[None, :]
    m2 = KM[:, None]
    logs = []
    for t in (0.1, 0.9):
        if model == "quasi_steady":
            b, a = t * w, (1 - t) * w
        elif readout == "free_modified":
            b = t * w
            v = kc2 * e2 * b / (m2 + b)
            a = (1 - t) * w - v / kc1 - v / kc2
        else:
            p = m2 + e2 - t * w
            b = 2 * t * w * m2 / (p + np.sqrt(p * p + 4 * t * w * m2))
            c2 = e2 * b / (m2 + b)
            a = (1 - t) * w - kc2 * c2 / kc1
        with np.errstate(invalid="ignore", divide="ignore"):
            logs.append(np.log(b * (m1 + a) / (np.where(a > 0, a, np.nan) * (m2 + b))))
    return math.log(81) / (logs[1] - logs[0])


def forward_readout(p: dict[str, float], model: str, readout: str) -> float:
    """Steady readout at one point by brentq (quasi-steady: on y; mass-action: on the flux)."""
    w = p["substrate_total"]
    v1, v2 = p["kinase_kcat"] * p["kinase_total"], p["phosphatase_kcat"] * p["phosphatase_total"]
    m1, m2 = p["kinase_km"], p["phosphatase_km"]
    if model == "quasi_steady":
        k1, k2 = m1 / w, m2 / w
        return brentq(lambda y: v1 * (1 - y) / (k1 + 1 - y) - v2 * y / (k2 + y), 0, 1, xtol=1e-14)
    k1, k2 = p["kinase_kcat"], p["phosphatase_kcat"]
    top = min(v1, v2) * (1 - 1e-15)
    v = brentq(
        lambda v: m1 * v / (v1 - v) + m2 * v / (v2 - v) + v / k1 + v / k2 - w,
        0,
        top,
        xtol=1e-300,
        rtol=1e-13,
    )
    b = m2 * v / (v2 - v)
    return (b if readout == "free_modified" else b + v / k2) / w


def naive_point(m1: float, m2: float, model: str, readout: str) -> float:
    """Hill coefficient at one grid point: brentq per threshold around a brentq forward solve."""
    base = dict(CYCLE.as_dict(), kinase_km=m1, phosphatase_km=m2)
    scale = CYCLE.phosphatase_kcat * CYCLE.phosphatase_total / CYCLE.kinase_kcat

    def ratio_for(target: float) -> float:
        def gap(log_r: float) -> float:
            return (
                forward_readout(dict(base, kinase_total=scale * math.exp(log_r)), model, readout)
                - target
            )

        lo, hi = -30.0, 30.0
        if gap(hi) < 0:
            return math.nan
        return math.exp(brentq(gap, lo, hi, xtol=1e-12))

    r10, r90 = ratio_for(0.1), ratio_for(0.9)
    return math.log(81) / math.log(r90 / r10)


def naive_map_time(model: str, readout: str, sub: int = 6) -> tuple[float, np.ndarray]:
    """Per-point loop over a sub × sub grid; returns time extrapolated to GRID² and the values."""
    idx = np.linspace(0, GRID - 1, sub).astype(int)
    t0 = time.perf_counter()
    values = np.array([[naive_point(KM[i], KM[j], model, readout) for i in idx] for j in idx])
    elapsed = time.perf_counter() - t0
    return elapsed * (GRID * GRID) / (sub * sub), values


def main() -> None:
    print(
        f"hairtrigger core benchmark: {GRID} x {GRID} Hill-coefficient map, Km from 1e-3 to 1e2 uM"
    )
    print(
        f"{'model':13s} {'readout':15s} {'core ms':>8s} {'fused ms':>9s} {'core/fused':>10s}"
        f" {'loop s (extrap.)':>17s} {'loop/core':>10s} {'max |diff|':>10s}"
    )
    for model in ("quasi_steady", "mass_action"):
        for readout in ("free_modified", "total_modified"):
            t_core = best_of(lambda: steepness_map(CYCLE, KM[None, :], KM[:, None], model, readout))
            t_fused = best_of(lambda: fused_map(model, readout))
            t_loop, loop_values = naive_map_time(model, readout)
            core = steepness_map(CYCLE, KM[None, :], KM[:, None], model, readout)
            idx = np.linspace(0, GRID - 1, 6).astype(int)
            sub = core[np.ix_(idx, idx)]
            both = np.isfinite(sub) & np.isfinite(loop_values)
            diff = (
                float(np.max(np.abs(sub[both] - loop_values[both]) / sub[both]))
                if both.any()
                else math.nan
            )
            print(
                f"{model:13s} {readout:15s} {t_core * 1e3:8.2f} {t_fused * 1e3:9.2f}"
                f" {t_core / t_fused:10.2f}"
                f" {t_loop:17.1f} {t_loop / t_core:10.0f} {diff:10.1e}"
            )
    print()
    print(
        "400-point steady-state curve (activity ratio 1e-2..1e2), every species and both readouts"
    )
    ratios = np.geomspace(1e-2, 1e2, 400)
    for model in ("quasi_steady", "mass_action"):
        params = dict(CYCLE.as_dict(), kinase_total=ratios * CYCLE.phosphatase_total)

        def curve() -> None:
            s = steady_state(params, model)
            s.readout("free_modified")
            s.readout("total_modified")

        def naive_curve() -> None:
            for e1 in params["kinase_total"][::8]:
                forward_readout(dict(params, kinase_total=float(e1)), model, "total_modified")

        t_curve = best_of(curve, repeat=200)
        t_naive = best_of(naive_curve, repeat=5) * 8
        print(
            f"  {model:13s} vectorised {t_curve * 1e3:7.3f} ms"
            f"   per-point brentq {t_naive * 1e3:7.2f} ms"
            f"   ratio {t_naive / t_curve:6.0f}x   (budget 1 ms)"
        )


if __name__ == "__main__":
    main()
