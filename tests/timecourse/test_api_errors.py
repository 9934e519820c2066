"""Bad input to the time-course API: one-line ValueErrors naming the problem."""

from __future__ import annotations

import pytest
from _tc_helpers import make_cycle

from hairtrigger import time_course
from hairtrigger.core.schedule import Ramp, Schedule, Step


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"steps": {"kinase_amount": 0.02}}, "unknown step key 'kinase_amount'"),
        ({"steps": {"substrate_total": 2.0}}, "`substrate_total` is held fixed"),
        ({"steps": {"kinase_total": -0.02}}, "`kinase_total` must be a finite number > 0"),
        ({"steps": {"kinase_total": 0.0}}, "`kinase_total` must be"),
        ({"steps": {"kinase_total": float("nan")}}, "`kinase_total` must be"),
        ({"steps": "kinase_total=0.02"}, "`steps` must be a mapping"),
        ({"t_end": 0.0}, "`t_end` must be a finite number > 0"),
        ({"t_end": -5.0}, "`t_end`"),
        ({"t_end": float("inf")}, "`t_end`"),
        ({"points": 1}, "`points` must be an integer >= 2"),
        ({"points": 2.5}, "`points`"),
        ({"model": "stochastic"}, "`model` must be one of"),
        ({"readout": "modified"}, "`readout` must be one of"),
        ({"method": "exact", "model": "mass_action"}, "only for the quasi-steady"),
        ({"rtol": 1.0}, "`rtol`"),
    ],
)
def test_bad_arguments(kwargs, match) -> None:
    args = {"steps": {"kinase_total": 0.02}, "t_end": 10.0, "points": 5}
    args.update(kwargs)
    with pytest.raises(ValueError, match=match) as info:
        time_course(make_cycle(), **args)
    assert "\n" not in str(info.value)


def test_negative_dissociation_rate_is_refused_for_mass_action() -> None:
    cycle = make_cycle(kinase_kon=10.0)  # kon·Km = 0.5 < kcat = 1
    with pytest.raises(ValueError, match="kinase dissociation rate .* negative"):
        time_course(cycle, {"phosphatase_total": 0.02}, 10.0, 5, model="mass_action")
    # The quasi-steady model does not use kon and accepts the cycle.
    assert time_course(cycle, {"phosphatase_total": 0.02}, 10.0, 5).success
    # A step of kcat that makes koff negative is refused too.
    with pytest.raises(ValueError, match="phosphatase dissociation rate"):
        time_course(make_cycle(), {"phosphatase_kcat": 6.0}, 10.0, 5, model="mass_action")


@pytest.mark.parametrize(
    ("changes", "match"),
    [
        ([Step("kinase_total", 0.02, 5.0), Step("kinase_total", 0.03, 5.0)], "same time"),
        ([Ramp("kinase_total", 0.02, 0.0, 10.0), Ramp("kinase_total", 0.03, 5.0, 20.0)], "overlap"),
        (
            [Ramp("kinase_total", 0.02, 0.0, 10.0), Step("kinase_total", 0.03, 5.0)],
            "inside its ramp",
        ),
    ],
)
def test_ambiguous_schedules(changes, match) -> None:
    with pytest.raises(ValueError, match=match):
        Schedule(tuple(changes))


@pytest.mark.parametrize(
    ("build", "match"),
    [
        (lambda: Step("kinase_total", 0.02, -1.0), "`time` must be a finite number >= 0"),
        (lambda: Ramp("kinase_total", 0.02, 10.0, 10.0), "must end after it starts"),
        (lambda: Ramp("kinase_kon", 0.02, 0.0, 10.0), "held fixed"),
    ],
)
def test_bad_changes(build, match) -> None:
    with pytest.raises(ValueError, match=match):
        build()


def test_bad_input_leaves_nothing_changed() -> None:
    cycle = make_cycle()
    before = cycle.as_dict()
    with pytest.raises(ValueError):
        time_course(cycle, {"kinase_total": -1.0}, 10.0, 5)
    assert cycle.as_dict() == before
