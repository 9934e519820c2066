"""The mass-action network (right-hand side, Jacobian) and cascade time courses."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from hairtrigger.core.cascade import (
    CascadeModel,
    cascade_steady_state,
    cascade_time_course,
    scan_cascade,
)
from hairtrigger.core.network import Reaction, ReactionNetwork


def test_jacobian_matches_central_differences(two_level):
    model = CascadeModel(two_level)
    rng = np.random.default_rng(3)
    x = rng.uniform(0.01, 1.0, len(model.species))
    jac = model.network.jacobian(x)
    h = 1e-7
    eye = np.eye(x.size)
    numeric = np.stack(
        [
            (model.network.rhs(x + h * eye[k]) - model.network.rhs(x - h * eye[k])) / (2 * h)
            for k in range(x.size)
        ],
        axis=1,
    )
    np.testing.assert_allclose(jac, numeric, rtol=1e-6, atol=1e-9 * np.max(np.abs(jac)))


def test_batched_evaluation_equals_single(two_level):
    model = CascadeModel(two_level)
    rng = np.random.default_rng(4)
    states = rng.uniform(0.0, 1.0, (5, len(model.species)))
    batched = model.network.jacobian(states)
    for k in range(5):
        # Equal to rounding (matrix products may group sums differently in a batch).
        np.testing.assert_allclose(
            batched[k], model.network.jacobian(states[k]), rtol=1e-13, atol=1e-12
        )
        np.testing.assert_allclose(
            model.network.rhs(states)[k], model.network.rhs(states[k]), rtol=1e-13, atol=1e-12
        )


def test_network_conserves_every_moiety(huang_ferrell):
    """Each conservation row is a left null vector of the stoichiometric matrix."""
    model = CascadeModel(huang_ferrell)
    product = model.system.sums @ model.network.stoichiometry
    assert np.max(np.abs(product)) == 0.0
    # ... and they are all of them: rank + moieties = species.
    rank = np.linalg.matrix_rank(model.network.stoichiometry)
    assert rank + model.system.sums.shape[0] == len(model.species)


def test_network_rejects_bad_reactions():
    with pytest.raises(ValueError, match="one or two distinct reactants"):
        ReactionNetwork(("a",), (Reaction((0, 0), (), 1.0),))


def test_time_course_reaches_the_new_steady_state(huang_ferrell):
    course = cascade_time_course(huang_ferrell.with_input(1e-6), 3e-5, 3000.0, 301)
    assert course.success, course.message
    final = cascade_steady_state(huang_ferrell, 3e-5)
    np.testing.assert_allclose(course.total[-1], list(final.total.values()), rtol=1e-4)
    np.testing.assert_allclose(course.final_total, list(final.total.values()), rtol=1e-12)
    # Conservation holds along the way.
    model = CascadeModel(huang_ferrell)
    error = model.conservation_error(course.species, np.full(course.t.size, 3e-5))
    assert np.max(error) < 1e-6
    halves = course.half_times("total")
    assert all(0.0 < halves[name] < 3000.0 for name in ("MAPKKK", "MAPKK", "MAPK"))
    # Downstream levels lag behind the first (signal passes the levels in turn).
    assert halves["MAPKKK"] < halves["MAPKK"]


def test_time_course_starts_at_the_previous_steady_state(two_level):
    course = cascade_time_course(two_level, 0.01, 50.0, 51)
    before = scan_cascade(two_level, [two_level.input_enzyme_total])
    assert course.success
    np.testing.assert_allclose(course.free[0], before.free[0], rtol=1e-12)


@pytest.mark.parametrize("method", ["BDF", "Radau"])
def test_time_course_integrators_agree(two_level, method):
    reference = cascade_time_course(two_level, 0.01, 20.0, 21, method="LSODA")
    other = cascade_time_course(two_level, 0.01, 20.0, 21, method=method)
    np.testing.assert_allclose(other.species, reference.species, rtol=2e-5, atol=1e-9)


def test_step_down_releases_substrate(two_level):
    """Removing input enzyme releases what it held and relaxes to the lower steady state."""
    course = cascade_time_course(two_level, 0.0005, 2000.0, 101)
    assert course.success
    model = CascadeModel(two_level)
    error = model.conservation_error(course.species, np.full(course.t.size, 0.0005))
    assert np.max(error) < 1e-6
    low = scan_cascade(two_level, [0.0005])
    np.testing.assert_allclose(course.free[-1], low.free[0], rtol=1e-4)


def test_step_from_zero_input_against_scipy_directly(two_level):
    """Our time course equals a plain solve_ivp of the same network from the rest state."""
    model = CascadeModel(two_level)
    start = model.zero_input_state()
    start[0] = 0.004
    t = np.linspace(0.0, 30.0, 7)
    sol = solve_ivp(
        lambda _t, y: model.network.rhs(y),
        (0, 30.0),
        start,
        method="Radau",
        t_eval=t,
        rtol=1e-10,
        atol=1e-14,
    )
    course = cascade_time_course(two_level, 0.004, 30.0, 7, input_before=0.0)
    np.testing.assert_allclose(course.species, sol.y.T, rtol=1e-5, atol=1e-10)


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"input_after": -1.0, "t_end": 1.0}, "input_after"),
        ({"input_after": 1.0, "t_end": 0.0}, "t_end"),
        ({"input_after": 1.0, "t_end": 1.0, "points": 1}, "points"),
        ({"input_after": 1.0, "t_end": 1.0, "method": "RK45"}, "method"),
    ],
)
def test_time_course_bad_arguments(two_level, kwargs, match):
    with pytest.raises(ValueError, match=match):
        cascade_time_course(two_level, **kwargs)


def test_half_time_nan_when_not_reached(two_level):
    course = cascade_time_course(two_level, 0.5, 1e-4, 3)
    assert math.isnan(course.half_times("free")["lower"])
