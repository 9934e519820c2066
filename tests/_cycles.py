"""An invented reference cycle shared by the time-course and SBML tests."""

from __future__ import annotations

from hairtrigger.core.params import Cycle

BASE: dict[str, float] = {
    "substrate_total": 1.0,
    "kinase_total": 0.01,
    "kinase_kcat": 1.0,
    "kinase_km": 0.05,
    "kinase_kon": 100.0,
    "phosphatase_total": 0.01,
    "phosphatase_kcat": 1.0,
    "phosphatase_km": 0.05,
    "phosphatase_kon": 100.0,
}


def make_cycle(**changes: float) -> Cycle:
    values = dict(BASE)
    values.update(changes)
    return Cycle(**values)
