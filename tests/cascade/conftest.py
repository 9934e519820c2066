"""Fixtures for cascade and multisite tests."""

from __future__ import annotations

import pytest

from hairtrigger.core.cascade import Cascade, CascadeLevel, EnzymeConstants


@pytest.fixture(scope="session")
def huang_ferrell() -> Cascade:
    """The three-level cascade of Huang & Ferrell (1996, PNAS 93:10078) [P, REFERENCES.md].

    Totals (uM): MAPKKK 0.003, MAPKK 1.2, MAPK 1.2, MAPK phosphatase 0.12, MAPKKK and MAPKK
    phosphatases 0.0003; every binding a = 1000 /uM per unit time, d = k = 150 per unit time
    (Km = 0.3 uM); MAPKK and MAPK dually phosphorylated, distributively.
    """
    rates = EnzymeConstants(kon=1000.0, koff=150.0, kcat=150.0)
    return Cascade(
        0.0,
        (
            CascadeLevel("MAPKKK", 1, 0.003, 0.0003, rates, rates),
            CascadeLevel("MAPKK", 2, 1.2, 0.0003, rates, rates),
            CascadeLevel("MAPK", 2, 1.2, 0.12, rates, rates),
        ),
    )


@pytest.fixture(scope="session")
def huang_ferrell_response(huang_ferrell: Cascade):  # noqa: ANN201
    from hairtrigger.core.cascade import cascade_response

    return cascade_response(huang_ferrell, 1e-7, 1e-1, 160)


@pytest.fixture
def two_level() -> Cascade:
    """A small invented two-level cascade with unequal constants (not a check value)."""
    return Cascade(
        0.002,
        (
            CascadeLevel(
                "upper",
                1,
                0.05,
                0.004,
                EnzymeConstants(kon=200.0, koff=30.0, kcat=12.0),
                EnzymeConstants(kon=300.0, koff=20.0, kcat=5.0),
            ),
            CascadeLevel(
                "lower",
                2,
                0.6,
                0.03,
                EnzymeConstants(kon=500.0, koff=80.0, kcat=40.0),
                EnzymeConstants(kon=250.0, koff=10.0, kcat=8.0),
            ),
        ),
    )
