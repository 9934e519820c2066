"""Property tests (hypothesis): bounds, monotonicity, inverse identity, conservation."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from hairtrigger.core.steady import goldbeter_koshland, mass_action_state, steady_state
from hairtrigger.core.steepness import inverse_state, readout_ceiling

log_value = st.floats(min_value=-4.0, max_value=3.0)


@st.composite
def cycles(draw: st.DrawFn) -> dict[str, float]:
    keys = (
        "substrate_total",
        "kinase_total",
        "kinase_kcat",
        "kinase_km",
        "phosphatase_total",
        "phosphatase_kcat",
        "phosphatase_km",
    )
    return {k: 10 ** draw(log_value) for k in keys}


models = st.sampled_from(["quasi_steady", "mass_action"])
readouts = st.sampled_from(["free_modified", "total_modified"])


@settings(max_examples=300, deadline=None)
@given(cycles(), models, readouts)
def test_readout_within_unit_interval_and_below_ceiling(
    p: dict[str, float], model: str, readout: str
) -> None:
    y = float(steady_state(p, model).readout(readout))
    assert 0.0 <= y <= 1.0
    assert y <= float(readout_ceiling(p, model, readout)) * (1 + 1e-12)


@settings(max_examples=200, deadline=None)
@given(cycles(), models, readouts)
def test_monotone_in_activity_ratio(p: dict[str, float], model: str, readout: str) -> None:
    e1 = p["kinase_total"] * np.geomspace(1e-3, 1e3, 200)
    y = steady_state(dict(p, kinase_total=e1), model).readout(readout)
    assert np.all(np.diff(y) >= -1e-13 * y[1:])


@settings(max_examples=300, deadline=None)
@given(cycles(), models, readouts, st.floats(min_value=0.001, max_value=0.999))
def test_forward_of_inverse_is_identity(
    p: dict[str, float], model: str, readout: str, frac: float
) -> None:
    target = frac * float(readout_ceiling(p, model, readout))
    inv = inverse_state(target, p, model, readout)
    assert bool(inv.reachable)
    y = float(steady_state(dict(p, kinase_total=float(inv.kinase_total)), model).readout(readout))
    assert abs(y - target) <= 1e-9 * target


@settings(max_examples=300, deadline=None)
@given(cycles())
def test_conservation_of_substrate_and_enzymes(p: dict[str, float]) -> None:
    s = mass_action_state(p)
    total = float(s.unmodified + s.modified + s.kinase_complex + s.phosphatase_complex)
    assert abs(total - p["substrate_total"]) <= 1e-12 * p["substrate_total"]
    assert 0 <= float(s.kinase_complex) <= p["kinase_total"]
    assert 0 <= float(s.phosphatase_complex) <= p["phosphatase_total"]
    # free enzyme E − C binds: the Michaelis relation C·(Km + S) = E·S holds at steady state
    for e, km, free, c in (
        ("kinase_total", "kinase_km", s.unmodified, s.kinase_complex),
        ("phosphatase_total", "phosphatase_km", s.modified, s.phosphatase_complex),
    ):
        assert np.isclose(float(c) * (p[km] + float(free)), p[e] * float(free), rtol=1e-11)


@settings(max_examples=300, deadline=None)
@given(st.floats(min_value=-6, max_value=6), log_value, log_value)
def test_gk_fractions_sum_to_one(log_r: float, lk1: float, lk2: float) -> None:
    r, k1, k2 = 10.0**log_r, 10.0**lk1, 10.0**lk2
    y = float(goldbeter_koshland(r, 1.0, k1, k2))
    u = float(goldbeter_koshland(1.0, r, k2, k1))
    assert 0.0 <= y <= 1.0
    assert abs(y + u - 1.0) <= 1e-14
