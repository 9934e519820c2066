"""Speed of time courses: ours against libroadrunner (compiled CVODE) and scipy LSODA.

Run: ``PYTHONPATH=src python benchmarks/bench_timecourse.py`` (from the repository root).

Every figure is measured in this run on the same cycle and step:

* mass-action, 200 points: `hairtrigger.time_course` (compiled Radau IIA + analytic Jacobian)
  against libroadrunner simulating our own SBML export (``reset()`` + ``simulate``), at the
  same relative tolerances, for a mild and a stiff (fast-binding, zero-order) cycle;
* quasi-steady, 200 points: the exact solution against scipy LSODA (``solve_ivp``, Python
  right-hand side), our compiled integrator, and libroadrunner on the Michaelis–Menten export.

Budgets (DESIGN.md §5): mass-action course no slower than the compiled simulator on the same
model in the same run; quasi-steady course ≤ 1 ms through the exact solution. Times are the
best of repeated calls (the machine is shared; best-of is the least noisy statistic).
"""

from __future__ import annotations

import functools
import time
from collections.abc import Callable

import numpy as np
import roadrunner
from scipy.integrate import solve_ivp

import _timing  # benchmarks/_timing.py (the script folder is on sys.path)
from hairtrigger import Cycle, time_course
from hairtrigger.io.sbml import cycle_to_sbml

POINTS = 200

MILD = Cycle(
    substrate_total=1.0,
    kinase_total=0.01,
    kinase_kcat=1.0,
    kinase_km=0.05,
    kinase_kon=100.0,
    phosphatase_total=0.01,
    phosphatase_kcat=1.0,
    phosphatase_km=0.05,
    phosphatase_kon=100.0,
)
STIFF = MILD.replace(
    kinase_km=1e-4, phosphatase_km=1e-4, kinase_kon=1e6, phosphatase_kon=1e6, kinase_total=0.009
)
CASES = (
    ("mild (Km/W 0.05, kon 1e2)", MILD, {"kinase_total": 0.02}, 300.0),
    ("stiff (Km/W 1e-4, kon 1e6)", STIFF, {"kinase_total": 0.011}, 2000.0),
)


best_of = functools.partial(_timing.best_of, repeat=40)


def roadrunner_runner(
    cycle: Cycle, step: dict[str, float], model: str, t_end: float, rtol: float, atol: float
) -> tuple[Callable[[], np.ndarray], roadrunner.RoadRunner]:
    rr = roadrunner.RoadRunner(cycle_to_sbml(cycle, model))
    rr.integrator.relative_tolerance = rtol
    rr.integrator.absolute_tolerance = atol
    rr.integrator.maximum_num_steps = 500000
    for key, value in step.items():
        rr[key] = value

    def run() -> np.ndarray:
        rr.reset()
        return np.asarray(rr.simulate(0.0, t_end, POINTS))

    return run, rr


def max_gap(ours, theirs: np.ndarray, rr: roadrunner.RoadRunner) -> float:
    """Largest difference in modified substrate between the two courses, µM."""
    column = list(rr.simulate(0.0, 1.0, 2).colnames).index("[modified]")
    return float(np.max(np.abs(ours["modified"] - theirs[:, column])))


def mass_action() -> None:
    print(f"== mass-action time course, {POINTS} points: ours vs libroadrunner (same SBML model)")
    t0 = time.perf_counter()
    time_course(MILD, {"kinase_total": 0.02}, 10.0, 3, model="mass_action")
    print(
        "   first call in this process (numba load/compile): "
        f"{1e3 * (time.perf_counter() - t0):.0f} ms"
    )
    print(
        f"   {'cycle':28s} {'rtol':>6s} {'ours ms':>8s} {'rr ms':>8s} {'rr/ours':>8s}"
        f" {'max |dB| uM':>12s}"
    )
    for label, cycle, step, t_end in CASES:
        for rtol in (1e-6, 1e-8, 1e-10):
            atol = 1e-12 if rtol > 1e-9 else 1e-14
            run_rr, rr = roadrunner_runner(cycle, step, "mass_action", t_end, rtol, atol)

            def ours(cycle=cycle, step=step, t_end=t_end, rtol=rtol):
                return time_course(cycle, step, t_end, POINTS, model="mass_action", rtol=rtol)

            t_ours = best_of(ours)
            t_rr = best_of(run_rr)
            gap = max_gap(ours(), run_rr(), rr)
            print(
                f"   {label:28s} {rtol:6.0e} {1e3 * t_ours:8.3f} {1e3 * t_rr:8.3f} "
                f"{t_rr / t_ours:8.2f} {gap:12.2e}"
            )
    print("   rr/ours > 1 means ours is faster; default rtol of time_course is 1e-8.")


def quasi_steady() -> None:
    print(f"\n== quasi-steady time course, {POINTS} points: exact solution vs integrators")
    for label, cycle, step, t_end in CASES:
        after = cycle.replace(**step)
        w = cycle.substrate_total
        v1, v2, m1, m2 = (
            after.kinase_vmax,
            after.phosphatase_vmax,
            after.kinase_km,
            after.phosphatase_km,
        )

        def exact(cycle=cycle, step=step, t_end=t_end):
            return time_course(cycle, step, t_end, POINTS)

        def rhs(_t, y, v1=v1, v2=v2, m1=m1, m2=m2, w=w):
            a = w - y[0]
            return [v1 * a / (m1 + a) - v2 * y[0] / (m2 + y[0])]

        def jac(_t, y, v1=v1, v2=v2, m1=m1, m2=m2, w=w):
            a = w - y[0]
            return [[-v1 * m1 / (m1 + a) ** 2 - v2 * m2 / (m2 + y[0]) ** 2]]

        course = exact()
        t = course["t"]
        b0 = float(course["modified"][0])

        def lsoda(t=t, b0=b0, rhs=rhs, jac=jac):
            return solve_ivp(
                rhs, (0.0, t[-1]), [b0], method="LSODA", t_eval=t, jac=jac, rtol=1e-10, atol=1e-14
            )

        def ode(cycle=cycle, step=step, t_end=t_end):
            return time_course(cycle, step, t_end, POINTS, method="ode", rtol=1e-10)

        run_rr, rr = roadrunner_runner(cycle, step, "quasi_steady", t_end, 1e-10, 1e-14)
        t_exact = best_of(exact, repeat=200)
        t_lsoda = best_of(lsoda)
        t_ode = best_of(ode)
        t_rr = best_of(run_rr)
        err_lsoda = float(np.max(np.abs(lsoda().y[0] - course["modified"])))
        err_rr = max_gap(course, run_rr(), rr)
        print(f"   {label}")
        print(f"     exact t(B) inverted        {1e3 * t_exact:8.3f} ms")
        print(
            f"     scipy LSODA (rtol 1e-10)   {1e3 * t_lsoda:8.3f} ms"
            f"  ratio {t_lsoda / t_exact:6.1f}x"
            f"  max |dB| {err_lsoda:.1e} uM"
        )
        print(
            f"     ours, compiled Radau       {1e3 * t_ode:8.3f} ms  ratio {t_ode / t_exact:6.1f}x"
        )
        print(
            f"     libroadrunner (rtol 1e-10) {1e3 * t_rr:8.3f} ms  ratio {t_rr / t_exact:6.1f}x"
            f"  max |dB| {err_rr:.1e} uM"
        )


if __name__ == "__main__":
    mass_action()
    quasi_steady()
