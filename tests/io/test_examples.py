"""The bundled example snapshots: valid, canonical, physically consistent, and each showing the
behaviour its scenario is meant to show (checked against closed forms of the theory)."""

from __future__ import annotations

import math

import pytest

from hairtrigger.core import evaluate
from hairtrigger.core.steepness import quasi_steady_response_coefficient
from hairtrigger.io import (
    dumps_snapshot,
    example_path,
    list_examples,
    load_example,
    load_snapshot,
)

THE_THREE = ["michaelian_relay", "scarce_enzyme_switch", "sequestration_limited"]


def test_the_scenarios_are_bundled() -> None:
    assert set(THE_THREE) <= set(list_examples())
    assert list_examples() == sorted(list_examples())


@pytest.mark.parametrize("name", list_examples())
def test_example_is_valid_canonical_and_invented(name: str) -> None:
    path = example_path(name)
    assert path == example_path(name + ".json")
    snapshot = load_snapshot(path)
    # Written by save_snapshot: re-saving gives the same bytes.
    assert path.read_text(encoding="utf-8") == dumps_snapshot(snapshot)
    assert "Invented scenario" in snapshot.notes
    assert "experimental confirmation" in snapshot.notes
    assert "(invented)" in snapshot.title
    # Dissociation rates koff = kon·Km − kcat must not be negative (mass-action time courses).
    assert snapshot.cycle.kinase_koff >= 0.0
    assert snapshot.cycle.phosphatase_koff >= 0.0


@pytest.mark.parametrize("name", list_examples())
@pytest.mark.parametrize("model", ["quasi_steady", "mass_action"])
@pytest.mark.parametrize("readout", ["free_modified", "total_modified"])
def test_examples_evaluate_to_sensible_numbers(name: str, model: str, readout: str) -> None:
    result = evaluate(load_example(name).cycle, model, readout)
    assert 0.0 < result["readout_value"] < result["readout_ceiling"] <= 1.0
    rel = result["relative"]
    assert rel["activity_ratio_10"] < rel["activity_ratio_50"] < rel["activity_ratio_90"]
    assert 1.0 < rel["response_coefficient"] <= 81.0 * (1 + 1e-9)
    assert rel["hill_coefficient"] >= 1.0 - 1e-9


def test_scarce_enzyme_switch_is_sharp_and_complexes_do_not_matter() -> None:
    snapshot = load_example("scarce_enzyme_switch")
    c = snapshot.cycle
    assert 0.01 <= c.K1 <= 0.05 and 0.01 <= c.K2 <= 0.05
    assert c.kinase_total / c.substrate_total <= 0.02
    assert c.phosphatase_total / c.substrate_total <= 0.02
    qss = evaluate(c, "quasi_steady", snapshot.readout)
    # Goldbeter & Koshland (1981), PNAS 78:6840: Rv = 81(K1+0.1)(K2+0.1)/((K1+0.9)(K2+0.9)).
    rv = float(quasi_steady_response_coefficient(c.K1, c.K2))
    assert qss["response_coefficient"] == pytest.approx(rv, rel=1e-12)
    assert qss["hill_coefficient"] == pytest.approx(math.log(81) / math.log(rv), rel=1e-12)
    assert qss["hill_coefficient"] > 5.0
    # Just below the threshold: most of the swing lies within a 25 % rise in kinase activity.
    assert qss["activity_ratio_10"] < c.activity_ratio < qss["activity_ratio_50"]
    assert qss["activity_ratio_90"] / c.activity_ratio < 1.35
    mass = evaluate(c, "mass_action", snapshot.readout)
    assert mass["readout_value"] == pytest.approx(qss["readout_value"], abs=0.02)
    assert mass["warnings"] == []


def test_sequestration_limited_cycle_hits_its_ceiling() -> None:
    snapshot = load_example("sequestration_limited")
    c = snapshot.cycle
    assert snapshot.model == "mass_action"
    assert c.kinase_total / c.substrate_total >= 0.1
    assert c.phosphatase_total / c.substrate_total >= 0.1
    mass = evaluate(c, snapshot.model, snapshot.readout)
    qss = evaluate(c, "quasi_steady", snapshot.readout)
    assert abs(mass["readout_value"] - qss["readout_value"]) > 0.05
    assert mass["readout_ceiling"] < 0.9
    assert mass["activity_ratio_90"] is None and mass["hill_coefficient"] is None
    assert any("activity_ratio_90 does not exist" in w for w in mass["warnings"])
    assert all(v is not None for v in mass["relative"].values())
    # Sequestration flattens the switch (Blüthgen et al. 2006, FEBS J 273:895 [P, abstract]).
    assert mass["relative"]["hill_coefficient"] < 0.5 * qss["hill_coefficient"]


def test_michaelian_relay_is_graded() -> None:
    snapshot = load_example("michaelian_relay")
    c = snapshot.cycle
    assert c.K1 >= 10 and c.K2 >= 10
    result = evaluate(c, snapshot.model, snapshot.readout)
    # Both Km large: Rv → 81, nH → 1 (Goldbeter & Koshland 1981 limit) [F].
    assert result["response_coefficient"] == pytest.approx(81.0, rel=0.02)
    assert result["hill_coefficient"] == pytest.approx(1.0, abs=0.01)


def test_unknown_example_lists_the_available_ones() -> None:
    with pytest.raises(ValueError, match="available: michaelian_relay") as info:
        example_path("scarce_enzyme_swich")
    assert 'did you mean "scarce_enzyme_switch"' in str(info.value)
    with pytest.raises(TypeError):
        example_path(3)  # type: ignore[arg-type]
