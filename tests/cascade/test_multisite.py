"""Multisite cycles: the first-order closed form, limits, and agreement between models/solvers."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger.core import steady_state, thresholds
from hairtrigger.core.cascade import EnzymeConstants, cascade_response, scan_cascade
from hairtrigger.core.multisite import (
    MULTISITE_MODELS,
    MultisiteCycle,
    _along_rising_input,
    fully_modified_fraction_first_order,
    multisite_plateau,
    multisite_response,
    multisite_state_at_ratio,
    multisite_steady_state,
)

GOLDEN = (1.0 + math.sqrt(5.0)) / 2.0
#: Km = (koff + kcat)/kon = 1e4 uM, far above substrate: first-order enzymes.
LINEAR = EnzymeConstants(kon=1.0, koff=1e4 - 1.0, kcat=1.0)


def gunawardena(u, n):
    """Gunawardena (2005, PNAS 102:14617) [F]: fully modified fraction u^n(u - 1)/(u^(n+1) - 1)."""
    return u**n * (u - 1.0) / (u ** (n + 1) - 1.0)


@pytest.mark.parametrize("n", [1, 2, 3, 6])
def test_first_order_closed_form(n):
    u = np.array([0.05, 0.5, 0.9, 1.1, 2.0, 7.0, 40.0])
    np.testing.assert_allclose(
        fully_modified_fraction_first_order(u, n), gunawardena(u, n), rtol=1e-13
    )
    assert fully_modified_fraction_first_order(1.0, n) == pytest.approx(1.0 / (n + 1))


def test_two_sites_ec50_at_the_golden_ratio():
    """n = 2: u²/(u² + u + 1) = 1/2 at u² = u + 1, the golden ratio [F, Gunawardena 2005]."""
    cycle = MultisiteCycle(2, 1.0, 0.0, 1.0, LINEAR, LINEAR)
    # With equal constants u = E_kinase/E_phosphatase, so EC50 (kinase, uM) = golden ratio.
    r = multisite_response(cycle, "first_order")
    assert r.free.ec50 == pytest.approx(GOLDEN, rel=1e-12)
    # The mass-action and Michaelis-Menten forms tend to it as the enzymes become linear.
    for model in ("michaelis_menten", "mass_action"):
        assert multisite_response(cycle, model).free.ec50 == pytest.approx(GOLDEN, rel=1e-3)


def test_many_sites_hill_coefficient_tends_to_two():
    """n → ∞: fraction → 1 − 1/u, EC90/EC10 → 10/(10/9) = 9, nH → 2 [F, Gunawardena 2005]."""
    values = [
        multisite_response(
            MultisiteCycle(n, 1.0, 0.0, 1.0, LINEAR, LINEAR), "first_order"
        ).free.hill_coefficient
        for n in (2, 8, 64)
    ]
    assert values[0] < values[1] < values[2] < 2.0
    assert values[2] == pytest.approx(2.0, abs=1e-3)
    # n = 1 is Michaelian: nH = 1 exactly.
    one = multisite_response(MultisiteCycle(1, 1.0, 0.0, 1.0, LINEAR, LINEAR), "first_order")
    assert one.free.hill_coefficient == pytest.approx(1.0, rel=1e-12)


def test_two_site_first_order_hill_from_the_closed_form():
    """nH for n = 2 from solving u²/(u² + u + 1) = f directly [F]."""

    def u_at(f):  # (1 − f)u² − f·u − f = 0
        return (f + math.sqrt(f * f + 4 * (1 - f) * f)) / (2 * (1 - f))

    expected = math.log(81) / math.log(u_at(0.9) / u_at(0.1))
    got = multisite_response(MultisiteCycle(2, 1.0, 0.0, 1.0, LINEAR, LINEAR), "first_order")
    assert got.free.hill_coefficient == pytest.approx(expected, rel=1e-12)


@pytest.fixture
def saturable() -> MultisiteCycle:
    """Invented cycle with saturable, unequal enzymes (not a check value)."""
    return MultisiteCycle(
        2,
        1.0,
        0.0,
        0.3,
        EnzymeConstants(kon=10.0, koff=1.0, kcat=2.0),
        EnzymeConstants(kon=5.0, koff=0.5, kcat=1.0),
    )


def test_mass_action_inverse_agrees_with_cascade_continuation(saturable):
    """Closed-form inverse in u (multisite) vs Newton continuation (cascade): independent code."""
    kinase = np.geomspace(1e-3, 30.0, 9)
    state = multisite_steady_state(saturable, kinase, "mass_action")
    scan = scan_cascade(saturable.as_cascade(), kinase)
    assert state.success.all() and scan.success
    np.testing.assert_allclose(state.free, scan.free[:, 0], rtol=1e-10, atol=1e-15)
    np.testing.assert_allclose(state.total, scan.total[:, 0], rtol=1e-10, atol=1e-15)
    r = multisite_response(saturable, "mass_action")
    c = cascade_response(saturable.as_cascade(), 1e-4, 1e3, 80).levels[0]
    for definition in ("free", "total"):
        a, b = r.output(definition), c.output(definition)
        for key in ("ec10", "ec50", "ec90", "hill_coefficient", "plateau"):
            assert getattr(a, key) == pytest.approx(getattr(b, key), rel=1e-9)


def test_mass_action_species_are_stationary(saturable):
    """The inverse-map state satisfies the full mass-action ODE of the cascade network."""
    from hairtrigger.core.cascade import CascadeModel

    model = CascadeModel(saturable.as_cascade())
    s = multisite_state_at_ratio(saturable, np.array([-2.0, 0.0, 1.5]), "mass_action")
    species = np.zeros((3, len(model.species)))
    species[:, 0] = s["free_kinase"]
    species[:, model.free_forms[0]] = s["forms"]
    species[:, model.kinase_complexes[0]] = s["kinase_complexes"]
    species[:, model.phosphatase_complexes[0]] = s["phosphatase_complexes"]
    species[:, model.free_phosphatase[0]] = s["free_phosphatase"]
    assert np.max(model.network.stationarity(species)) < 1e-12
    assert np.max(model.conservation_error(species, s["kinase_total"])) < 1e-12


@pytest.mark.parametrize(
    "readout,definition", [("total_modified", "total"), ("free_modified", "free")]
)
def test_single_site_mass_action_matches_core(saturable, readout, definition):
    one = MultisiteCycle(1, 1.0, 0.0, 0.3, saturable.kinase, saturable.phosphatase)
    params = {
        "substrate_total": 1.0,
        "kinase_total": 1.0,
        "kinase_kcat": 2.0,
        "kinase_km": saturable.kinase.km,
        "kinase_kon": 10.0,
        "phosphatase_total": 0.3,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": saturable.phosphatase.km,
        "phosphatase_kon": 5.0,
    }
    core = thresholds(params, "mass_action", readout, relative=True)
    got = multisite_response(one, "mass_action").output(definition)
    assert got.ec50 == pytest.approx(float(core["activity_ratio_50"]) * 0.3 / 2.0, rel=1e-10)
    assert got.hill_coefficient == pytest.approx(float(core["hill_coefficient"]), rel=1e-9)


def test_single_site_michaelis_menten_is_goldbeter_koshland(saturable):
    """One site, complexes neglected: the quasi-steady (Goldbeter–Koshland) cycle of the core."""
    one = MultisiteCycle(1, 1.0, 0.0, 0.3, saturable.kinase, saturable.phosphatase)
    kinase = np.geomspace(0.01, 10.0, 7)
    state = multisite_steady_state(one, kinase, "michaelis_menten")
    params = {
        "substrate_total": 1.0,
        "kinase_total": kinase,
        "kinase_kcat": 2.0,
        "kinase_km": saturable.kinase.km,
        "kinase_kon": 10.0,
        "phosphatase_total": 0.3,
        "phosphatase_kcat": 1.0,
        "phosphatase_km": saturable.phosphatase.km,
        "phosphatase_kon": 5.0,
    }
    np.testing.assert_allclose(
        state.free, steady_state(params, "quasi_steady").modified, rtol=1e-12
    )


@pytest.mark.parametrize("model", MULTISITE_MODELS)
def test_forward_and_inverse_are_consistent(saturable, model):
    log_u = np.linspace(-5.0, 5.0, 11)
    inverse = multisite_state_at_ratio(saturable, log_u, model)
    forward = multisite_steady_state(saturable, inverse["kinase_total"], model)
    np.testing.assert_allclose(forward.log_ratio, log_u, atol=1e-9)
    assert not forward.multiple.any()


@pytest.mark.parametrize("model", MULTISITE_MODELS)
def test_plateau_is_the_limit(saturable, model):
    plateau = multisite_plateau(saturable, model)
    far = multisite_state_at_ratio(saturable, np.array([40.0]), model)
    assert far["free"][0] == pytest.approx(plateau["free"], rel=1e-12)
    assert far["total"][0] == pytest.approx(plateau["total"], rel=1e-12)
    if model != "mass_action":
        assert plateau["free"] == 1.0


def test_zero_kinase_is_unmodified(saturable):
    state = multisite_steady_state(saturable, [0.0, 0.1])
    assert state.free[0] == 0.0 and state.forms[0, 0] == pytest.approx(1.0)
    assert state.success.all()


def test_rising_input_branch_is_the_running_maximum():
    """The fold rule: along rising input, ratio u is reached only past every earlier need."""
    cycle = MultisiteCycle(2, 1.0, 0.0, 1.0, LINEAR, LINEAR)
    log_u = np.array([0.0, 1.0])
    ecs = multisite_state_at_ratio(cycle, log_u, "first_order")["kinase_total"]
    # Monotone inverse: the running maximum is the value itself (to the fine grid).
    np.testing.assert_allclose(
        _along_rising_input(cycle, "first_order", log_u, ecs), ecs, rtol=2e-3
    )


@pytest.mark.parametrize(
    "kwargs,match",
    [
        ({"sites": 0}, "sites"),
        ({"sites": 1.5}, "sites"),
        ({"substrate_total": 0.0}, "substrate_total"),
        ({"kinase_total": -1.0}, "kinase_total"),
    ],
)
def test_bad_cycles(kwargs, match):
    base = {
        "sites": 2,
        "substrate_total": 1.0,
        "kinase_total": 0.0,
        "phosphatase_total": 1.0,
        "kinase": LINEAR,
        "phosphatase": LINEAR,
    }
    base.update(kwargs)
    with pytest.raises(ValueError, match=match):
        MultisiteCycle(**base)


def test_bad_model(saturable):
    with pytest.raises(ValueError, match="`model`"):
        multisite_response(saturable, "hill")
