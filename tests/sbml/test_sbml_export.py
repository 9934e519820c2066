"""SBML export: libsbml consistency (with units), exact read-back, atomic writing."""

from __future__ import annotations

from pathlib import Path

import libsbml
import pytest

from _cycles import make_cycle
from hairtrigger.core.params import CYCLE_KEYS
from hairtrigger.io.sbml import (
    consistency_problems,
    cycle_to_sbml,
    read_sbml_parameters,
    write_sbml,
)

CYCLES = [
    pytest.param({}, id="base"),
    pytest.param(
        {"kinase_total": 1 / 3, "phosphatase_km": 0.1 + 0.2, "kinase_kon": 1e6, "kinase_km": 1e-4},
        id="awkward-decimals",
    ),
    pytest.param(
        {"substrate_total": 123.456789012345678, "kinase_kcat": 7.0e-3, "phosphatase_kcat": 2.5e-3},
        id="slow-enzymes",
    ),
]


@pytest.mark.parametrize("model", ["mass_action", "quasi_steady"])
@pytest.mark.parametrize("changes", CYCLES)
def test_export_passes_libsbml_consistency_checks_with_units(
    model: str, changes: dict[str, float]
) -> None:
    text = cycle_to_sbml(make_cycle(**changes), model)
    assert consistency_problems(text, units=True) == []


@pytest.mark.parametrize("model", ["mass_action", "quasi_steady"])
@pytest.mark.parametrize("changes", CYCLES)
def test_read_back_recovers_parameters_exactly(model: str, changes: dict[str, float]) -> None:
    cycle = make_cycle(**changes)
    assert read_sbml_parameters(cycle_to_sbml(cycle, model)) == cycle


def test_structure_of_the_two_encodings() -> None:
    cycle = make_cycle()
    mass = libsbml.readSBMLFromString(cycle_to_sbml(cycle, "mass_action")).getModel()
    quasi = libsbml.readSBMLFromString(cycle_to_sbml(cycle, "quasi_steady")).getModel()
    assert (mass.getLevel(), mass.getVersion()) == (3, 2)
    assert sorted(s.getId() for s in mass.getListOfSpecies()) == sorted(
        ["unmodified", "modified", "kinase", "phosphatase", "kinase_complex", "phosphatase_complex"]
    )
    assert [r.getId() for r in mass.getListOfReactions()] == [
        "kinase_binding",
        "kinase_unbinding",
        "kinase_catalysis",
        "phosphatase_binding",
        "phosphatase_unbinding",
        "phosphatase_catalysis",
    ]
    assert [r.getId() for r in quasi.getListOfReactions()] == ["modification", "demodification"]
    assert quasi.getNumSpecies() == 2
    for model in (mass, quasi):
        ids = {p.getId() for p in model.getListOfParameters()}
        assert set(CYCLE_KEYS) <= ids
        assert all(p.isSetUnits() for p in model.getListOfParameters())
        assert all(s.isSetSubstanceUnits() for s in model.getListOfSpecies())
        assert model.getTimeUnits() == "second" and model.getSubstanceUnits() == "micromole"
        for reaction in model.getListOfReactions():
            assert not reaction.getReversible()
    law = libsbml.formulaToL3String(mass.getReaction("kinase_binding").getKineticLaw().getMath())
    assert law == "reaction_volume * kinase_kon * unmodified * kinase"
    law = libsbml.formulaToL3String(quasi.getReaction("modification").getKineticLaw().getMath())
    assert "kinase_km + unmodified" in law


def test_value_edited_in_another_tool_wins_over_annotation() -> None:
    document = libsbml.readSBMLFromString(cycle_to_sbml(make_cycle(), "mass_action"))
    document.getModel().getParameter("kinase_total").setValue(0.025)
    assert read_sbml_parameters(libsbml.writeSBMLToString(document)).kinase_total == 0.025


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("not xml at all", "not readable as SBML"),
        (
            '<?xml version="1.0" encoding="UTF-8"?>'
            '<sbml xmlns="http://www.sbml.org/sbml/level3/version2/core" '
            'level="3" version="2"/>',
            "no model",
        ),
    ],
)
def test_unreadable_documents(text: str, match: str) -> None:
    with pytest.raises(ValueError, match=match):
        read_sbml_parameters(text)


def test_missing_parameter_is_named() -> None:
    document = libsbml.readSBMLFromString(cycle_to_sbml(make_cycle(), "quasi_steady"))
    document.getModel().removeParameter("phosphatase_kon")
    with pytest.raises(ValueError, match="`phosphatase_kon`"):
        read_sbml_parameters(libsbml.writeSBMLToString(document))


def test_mass_action_export_refuses_negative_dissociation_rate() -> None:
    with pytest.raises(ValueError, match="kinase dissociation rate"):
        cycle_to_sbml(make_cycle(kinase_kon=1.0), "mass_action")
    assert consistency_problems(cycle_to_sbml(make_cycle(kinase_kon=1.0), "quasi_steady")) == []


def test_write_is_atomic_and_refuses_overwrite(tmp_path: Path) -> None:
    out = tmp_path / "cycle.xml"
    write_sbml(make_cycle(), out)
    first = out.read_text(encoding="utf-8")
    with pytest.raises(FileExistsError, match="file exists"):
        write_sbml(make_cycle(kinase_total=0.02), out)
    assert out.read_text(encoding="utf-8") == first
    write_sbml(make_cycle(kinase_total=0.02), out, overwrite=True)
    assert read_sbml_parameters(out.read_text(encoding="utf-8")).kinase_total == 0.02
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cycle.xml"]
    with pytest.raises(FileNotFoundError):
        write_sbml(make_cycle(), tmp_path / "missing" / "cycle.xml")
