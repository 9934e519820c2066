"""Robustness over random cascades, and the verification itself can fail."""

from __future__ import annotations

import numpy as np
import pytest

from hairtrigger.core.cascade import (
    Cascade,
    CascadeLevel,
    CascadeModel,
    EnzymeConstants,
    cascade_response,
    scan_cascade,
)


def random_cascade(rng: np.random.Generator) -> Cascade:
    """Up to six levels with constants and totals spread over many decades."""

    def enzyme() -> EnzymeConstants:
        return EnzymeConstants(
            kon=10 ** rng.uniform(-3, 4),
            koff=10 ** rng.uniform(-4, 5),
            kcat=10 ** rng.uniform(-4, 4),
        )

    levels = tuple(
        CascadeLevel(
            f"level{i}",
            int(rng.integers(1, 3)),
            10 ** rng.uniform(-6, 3),
            10 ** rng.uniform(-6, 2),
            enzyme(),
            enzyme(),
        )
        for i in range(int(rng.integers(1, 7)))
    )
    return Cascade(0.0, levels)


@pytest.mark.parametrize("seed", range(12))
def test_random_cascades_are_solved_and_verified(seed):
    cascade = random_cascade(np.random.default_rng(seed))
    response = cascade_response(cascade, 1e-10, 1e6, 40)
    assert response.success, response.message
    assert np.max(response.scan.stationarity) < 1e-10
    assert np.max(response.scan.conservation_error) < 1e-10
    # Outputs rise with the input and stay below their computed plateau.
    for definition in ("free", "total"):
        curve = response.scan.output(definition)
        assert np.all(np.diff(curve, axis=0) >= -1e-9 * curve[1:])  # rounding at the plateau
        assert np.all(curve <= response.plateau.output(definition) * (1 + 1e-9))


def test_verification_flags_a_state_that_is_not_steady(two_level):
    model = CascadeModel(two_level)
    scan = scan_cascade(model, [0.002])
    good = scan.species[0]
    assert model.network.stationarity(good) < 1e-13
    bad = good.copy()
    bad[model.free_forms[1][1]] *= 1.001
    assert model.network.stationarity(bad) > 1e-5
    assert model.conservation_error(bad[None, :], [0.002])[0] > 1e-6
