"""Validation of cycle parameters: every bad value is refused with the parameter named."""

from __future__ import annotations

import math

import numpy as np
import pytest

from hairtrigger import CYCLE_KEYS, Cycle

GOOD = dict(
    substrate_total=1.0,
    kinase_total=0.01,
    kinase_kcat=1.0,
    kinase_km=0.1,
    kinase_kon=100.0,
    phosphatase_total=0.01,
    phosphatase_kcat=1.0,
    phosphatase_km=0.1,
    phosphatase_kon=100.0,
)


def test_good_cycle_and_derived_groups() -> None:
    c = Cycle(**GOOD)
    assert c.K1 == pytest.approx(0.1) and c.K2 == pytest.approx(0.1)
    assert c.activity_ratio == pytest.approx(1.0)
    assert c.kinase_koff == pytest.approx(100 * 0.1 - 1)
    assert Cycle.from_dict(c.as_dict()) == c
    assert c.with_activity_ratio(2.5).activity_ratio == pytest.approx(2.5)
    assert isinstance(Cycle(**dict(GOOD, kinase_km=np.float32(0.5))).kinase_km, float)


@pytest.mark.parametrize("key", CYCLE_KEYS)
@pytest.mark.parametrize(
    "bad", [-1.0, 0.0, math.nan, math.inf, -math.inf, True, "1.0", None, [1.0]]
)
def test_bad_values_name_the_parameter(key: str, bad: object) -> None:
    with pytest.raises(ValueError, match=f"`{key}` must be a finite number > 0"):
        Cycle(**dict(GOOD, **{key: bad}))


def test_from_dict_missing_and_unknown() -> None:
    d = dict(GOOD)
    del d["kinase_km"]
    with pytest.raises(ValueError, match="missing cycle parameter `kinase_km`"):
        Cycle.from_dict(d)
    with pytest.raises(ValueError, match="unknown cycle parameter `kinase_vmax`"):
        Cycle.from_dict(dict(GOOD, kinase_vmax=1.0))
    with pytest.raises(ValueError, match="unknown cycle parameter"):
        Cycle(**GOOD).replace(km=1.0)
