"""Our SBML export simulated by libroadrunner (CVODE) agrees with our courses and steady states."""

from __future__ import annotations

import numpy as np
import pytest
import roadrunner

from _cycles import make_cycle
from hairtrigger.core.steady import steady_state
from hairtrigger.core.timecourse import time_course
from hairtrigger.io.sbml import cycle_to_sbml

SPECIES = ("unmodified", "modified", "kinase_complex", "phosphatase_complex")


def simulate(text: str, step: dict[str, float], t_end: float, points: int) -> dict[str, np.ndarray]:
    rr = roadrunner.RoadRunner(text)
    rr.integrator.relative_tolerance = 1e-11
    rr.integrator.absolute_tolerance = 1e-15
    rr.integrator.maximum_num_steps = 200000
    for key, value in step.items():
        rr[key] = value
    rr.reset()  # re-evaluates the initial assignments: added enzyme arrives free
    result = rr.simulate(0.0, t_end, points)
    ids = rr.model.getFloatingSpeciesIds()
    columns = list(result.colnames)
    return {name: np.asarray(result[:, columns.index(f"[{name}]")]) for name in ids} | {
        "time": np.asarray(result[:, 0])
    }


CASES = [
    pytest.param({}, {"kinase_total": 0.02}, 300.0, id="scarce-up"),
    pytest.param({"kinase_total": 0.004}, {"kinase_total": 0.012}, 1500.0, id="cross-threshold"),
    pytest.param(
        {
            "kinase_km": 1e-4,
            "phosphatase_km": 1e-4,
            "kinase_kon": 1e6,
            "phosphatase_kon": 1e6,
            "kinase_total": 0.009,
        },
        {"kinase_total": 0.011},
        2000.0,
        id="stiff-zero-order",
    ),
    pytest.param(
        {"kinase_total": 0.3, "phosphatase_total": 0.2},
        {"phosphatase_total": 0.4},
        60.0,
        id="abundant-enzymes",
    ),
]


@pytest.mark.parametrize("model", ["mass_action", "quasi_steady"])
@pytest.mark.parametrize(("changes", "step", "t_end"), CASES)
def test_course_agrees_with_roadrunner(model: str, changes, step, t_end) -> None:
    before = make_cycle(**changes)
    ours = time_course(before, step, t_end, 200, model=model)
    theirs = simulate(cycle_to_sbml(before, model), step, t_end, 200)
    np.testing.assert_allclose(theirs["time"], ours["t"], rtol=1e-12)
    w = before.substrate_total
    for name in SPECIES:
        if name in theirs:
            assert np.max(np.abs(theirs[name] - ours[name])) < 1e-6 * w, name
    if model == "mass_action":
        np.testing.assert_allclose(theirs["kinase"], ours.free_kinase, atol=1e-6 * w)
        np.testing.assert_allclose(theirs["phosphatase"], ours.free_phosphatase, atol=1e-6 * w)


STEADY = [
    pytest.param({}, id="base"),
    pytest.param(
        {
            "kinase_total": 0.03,
            "kinase_km": 0.002,
            "phosphatase_km": 0.004,
            "kinase_kon": 1000.0,
            "phosphatase_kon": 1000.0,
        },
        id="saturated",
    ),
    pytest.param(
        {"kinase_total": 0.4, "phosphatase_total": 0.5, "kinase_km": 0.2}, id="sequestering"
    ),
]


@pytest.mark.parametrize("model", ["mass_action", "quasi_steady"])
@pytest.mark.parametrize("changes", STEADY)
def test_steady_state_agrees_with_roadrunner(model: str, changes) -> None:
    cycle = make_cycle(**changes)
    rr = roadrunner.RoadRunner(
        cycle_to_sbml(cycle.replace(kinase_total=0.5 * cycle.kinase_total), model)
    )
    rr.conservedMoietyAnalysis = True
    rr.kinase_total = cycle.kinase_total
    rr.reset()
    rr.steadyState()
    ids = rr.model.getFloatingSpeciesIds()
    theirs = dict(zip(ids, rr.model.getFloatingSpeciesConcentrations(), strict=True))
    # General-purpose solvers can land on non-physical roots: validate before comparing.
    total = sum(theirs[name] for name in SPECIES if name in theirs)
    assert min(theirs.values()) >= 0.0 and total == pytest.approx(cycle.substrate_total, rel=1e-12)
    ours = steady_state(cycle.arrays(), model)
    for name in SPECIES:
        if name in theirs:
            assert abs(theirs[name] - float(getattr(ours, name))) < 1e-9 * cycle.substrate_total, (
                name
            )
