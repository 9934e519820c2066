"""Speed of sweeps (local against a two-worker local Dask cluster) and of cascade scans.

Run: ``PYTHONPATH=src python benchmarks/bench_sweep.py [--samples N]`` from the repository root
(default N = 1 000 000). Prints wall times, parameter sets per second and ratios against
baselines measured in the same run:

* sweep: the naive way, one scalar ``hairtrigger.evaluate`` call per parameter set (timed on a
  sub-sample, extrapolated), against the vectorised chunked sweep in this process, against the
  same sweep on a ``LocalCluster(n_workers=2, processes=True)``; the local and cluster tables
  are checked to be byte-identical;
* cascade: the three-level cascade scanned at 200 inputs by continuation (verified states,
  plateau and exact EC values included), against integrating the full mass-action ODE to rest
  at each input (timed on a few inputs, extrapolated);
* half-times (``--half-time-samples``, default 10 000): the sweep's ``half_time`` (the real
  half-time after evaluate's default step) over many sets — quasi-steady closed form and
  mass-action compiled loop — against one scalar ``switching_metrics`` call per set (timed on
  a sub-sample, extrapolated), against the linear ``relaxation_half_time`` it replaced, and a
  Sobol' analysis of it.

Machine notes: the cluster runs on the same cores as the local run, so on a 2-core machine
shared with other work the cluster cannot beat the local run by much; it is here to measure the
overhead of shipping chunks and to show the numbers do not change.
"""

from __future__ import annotations

import argparse
import time

import numpy as np
from scipy.integrate import solve_ivp

from hairtrigger import Cycle, evaluate
from hairtrigger.core.cascade import (
    Cascade,
    CascadeLevel,
    CascadeModel,
    EnzymeConstants,
    cascade_response,
)
from hairtrigger.core.sweep import (
    cycle_sensitivity,
    evaluate_sample,
    relaxation_half_time,
    run_sweep,
    sample_ranges,
)
from hairtrigger.core.switching import switching_metrics
from hairtrigger.core.switching_arrays import step_half_time

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
RANGES = [
    "kinase_km=0.001:10:log",
    "phosphatase_km=0.001:10:log",
    "substrate_total=0.1:10:log",
    "phosphatase_total=0.01:1:log",
]
RATES = EnzymeConstants(kon=1000.0, koff=150.0, kcat=150.0)
CASCADE = Cascade(
    0.0,
    (
        CascadeLevel("MAPKKK", 1, 0.003, 0.0003, RATES, RATES),
        CascadeLevel("MAPKK", 2, 1.2, 0.0003, RATES, RATES),
        CascadeLevel("MAPK", 2, 1.2, 0.12, RATES, RATES),
    ),
)


def timed(fn):  # noqa: ANN001, ANN201
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def bench_sweeps(samples: int) -> None:
    print(f"== sweep of {samples:,} parameter sets, 4 varied parameters, all evaluate quantities")
    t_sample, _ = timed(lambda: sample_ranges(RANGES, samples, seed=0))
    print(f"drawing the Sobol' sample                  {t_sample:8.3f} s")

    sub = sample_ranges(RANGES, 300, seed=0)
    for model in ("quasi_steady", "mass_action"):

        def naive(model: str = model) -> None:
            for k in range(300):
                cycle = CYCLE.replace(**{key: float(v[k]) for key, v in sub.items()})
                evaluate(cycle, model, "total_modified")

        t_naive, _ = timed(naive)
        naive_rate = 300 / t_naive
        t_local, local = timed(lambda model=model: run_sweep(CYCLE, RANGES, samples, model=model))
        rate = samples / t_local
        print(
            f"{model:13s} naive scalar loop (extrapolated) {samples / naive_rate:8.1f} s "
            f"{naive_rate:12,.0f} sets/s"
        )
        print(
            f"{model:13s} vectorised, this process      {t_local:8.3f} s {rate:12,.0f} sets/s"
            f"   ×{rate / naive_rate:,.0f} the naive loop"
        )
        if model == "mass_action":
            cluster_run(samples, local, rate)


def cluster_run(samples: int, local, local_rate: float) -> None:  # noqa: ANN001
    from distributed import Client, LocalCluster

    t_start, cluster = timed(
        lambda: LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            processes=True,
            host="127.0.0.1",
            dashboard_address=None,
        )
    )
    client = Client(cluster)
    try:
        # Warm the workers (imports) so the timing is the sweep, then time it.
        run_sweep(CYCLE, RANGES, 1000, model="mass_action", client=client)
        t_remote, remote = timed(
            lambda: run_sweep(CYCLE, RANGES, samples, model="mass_action", client=client)
        )
    finally:
        client.close()
        cluster.close()
    rate = samples / t_remote
    same = remote.table().tobytes() == local.table().tobytes()
    print(f"mass_action   cluster start-up (2 processes) {t_start:8.3f} s")
    print(
        f"mass_action   two-worker LocalCluster       {t_remote:8.3f} s {rate:12,.0f} sets/s"
        f"   ×{rate / local_rate:.2f} this process"
    )
    print(f"local and cluster tables byte-identical: {same}")


def bench_cascade() -> None:
    print("== cascade scan: three levels (1, 2, 2 sites), 200 inputs 1e-7..1e-1 uM")
    cascade_response(CASCADE, 1e-7, 1e-1, 200)  # warm-up
    times = []
    for _ in range(5):
        t, response = timed(lambda: cascade_response(CASCADE, 1e-7, 1e-1, 200))
        times.append(t)
    t_scan = min(times)
    print(
        f"continuation + verification + plateau + EC values {t_scan * 1e3:8.1f} ms "
        f"(nH free: {', '.join(f'{lv.free.hill_coefficient:.2f}' for lv in response.levels)})"
    )
    model = CascadeModel(CASCADE)
    inputs = np.geomspace(1e-7, 1e-1, 200)[::40]

    def brute() -> None:
        for value in inputs:
            start = model.zero_input_state()
            start[0] = value
            solve_ivp(
                lambda _t, y: model.network.rhs(y),
                (0.0, 2e5),
                start,
                method="LSODA",
                jac=lambda _t, y: model.network.jacobian(y),
                rtol=1e-10,
                atol=1e-16,
            )

    t_brute, _ = timed(brute)
    per_point = t_brute / inputs.size
    print(
        f"integrate-to-rest per input (LSODA, extrapolated) {per_point * 200 * 1e3:8.1f} ms "
        f"   continuation is ×{per_point * 200 / t_scan:.0f} faster"
    )


#: Ranges of the half-time benchmark: kon·Km ≥ kcat everywhere, so every mass-action set has
#: a half-time.
TIME_RANGES = [
    "kinase_km=0.02:2:log",
    "phosphatase_km=0.02:2:log",
    "substrate_total=0.1:10:log",
    "phosphatase_total=0.01:1:log",
]


def bench_half_times(samples: int) -> None:
    print(f"== half-time after evaluate's default step, {samples:,} parameter sets")
    sample = sample_ranges(TIME_RANGES, samples, seed=0)
    params = dict(CYCLE.as_dict())
    params.update(sample)
    step_half_time({k: np.atleast_1d(v)[:2] for k, v in params.items()}, "mass_action")  # load
    t_linear, _ = timed(lambda: relaxation_half_time(params))
    print(
        f"linear ln2·tau (the old stand-in)             {t_linear * 1e3:8.2f} ms "
        f"{samples / t_linear:12,.0f} sets/s"
    )
    sub = 200 if samples >= 200 else samples
    for model in ("quasi_steady", "mass_action"):

        def scalar(model: str = model) -> None:
            for k in range(sub):
                c = CYCLE.replace(**{key: float(v[k]) for key, v in sample.items()})
                low = c.replace(kinase_total=0.5 * c.kinase_total)
                switching_metrics(low, {"kinase_total": c.kinase_total}, model)

        t_scalar, _ = timed(scalar)
        scalar_rate = sub / t_scalar
        t_vec, values = timed(lambda model=model: step_half_time(params, model))
        rate = samples / t_vec
        print(
            f"{model:13s} scalar switching_metrics loop (extrap.) {samples / scalar_rate:8.2f} s "
            f"{scalar_rate:12,.0f} sets/s"
        )
        label = "closed form, vectorised" if model == "quasi_steady" else "compiled loop over sets"
        print(
            f"{model:13s} {label:31s} {t_vec:8.3f} s {rate:12,.0f} sets/s   "
            f"×{rate / scalar_rate:,.0f} the scalar loop; NaN {int(np.isnan(values).sum())}"
        )
    qs = step_half_time(params, "quasi_steady")
    ma = step_half_time(params, "mass_action")
    lin = relaxation_half_time(params)
    print(
        "ratio mass-action / quasi-steady half-time: median "
        f"{np.nanmedian(ma / qs):.3f}, 5-95 % {np.nanpercentile(ma / qs, 5):.3f}–"
        f"{np.nanpercentile(ma / qs, 95):.3f}"
    )
    print(
        "ratio real / linear (quasi-steady): median "
        f"{np.nanmedian(qs / lin):.3f}, 5-95 % {np.nanpercentile(qs / lin, 5):.3f}–"
        f"{np.nanpercentile(qs / lin, 95):.3f}"
    )
    base = 1 << max(4, int(np.log2(max(samples // 6, 16))))
    for model in ("quasi_steady", "mass_action"):
        t_sobol, result = timed(
            lambda model=model: cycle_sensitivity(
                CYCLE,
                TIME_RANGES,
                base,
                model=model,
                outputs=["half_time"],
                bootstrap=200,
                log_outputs=True,
            )
        )
        total = ", ".join(f"{v:.2f}" for v in result["half_time"].total)
        print(
            f"{model:13s} Sobol' of ln half_time, N = {base} ({base * 6:,} sets) {t_sobol:8.2f} s"
            f"   total indices {total}"
        )
    # The sweep's evaluate_sample gives the same numbers as the direct call.
    check = evaluate_sample(
        CYCLE, {k: v[:256] for k, v in sample.items()}, "mass_action", outputs=["half_time"]
    )["half_time"]
    print(f"sweep output equals step_half_time: {np.array_equal(check, ma[:256], equal_nan=True)}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=1_000_000)
    parser.add_argument("--half-time-samples", type=int, default=10_000)
    parser.add_argument("--only", choices=["cascade", "sweep", "half-time"], default=None)
    args = parser.parse_args()
    if args.only in (None, "cascade"):
        bench_cascade()
    if args.only in (None, "half-time"):
        bench_half_times(args.half_time_samples)
    if args.only in (None, "sweep"):
        bench_sweeps(args.samples)


if __name__ == "__main__":
    main()
