"""SBML export of a cycle (Level 3 Version 2, through python-libsbml), and reading it back.

Two encodings, one per model:

``mass_action``
    Six species (``unmodified``, ``modified``, free ``kinase`` and ``phosphatase``,
    ``kinase_complex``, ``phosphatase_complex``) and six elementary reactions with mass-action
    rate laws: binding, unbinding and catalysis for each enzyme.
``quasi_steady``
    Two species (``unmodified``, ``modified``) and two irreversible Michaelis–Menten reactions
    whose maximal rates are kcat·E.

Species ids equal the column names of `hairtrigger.core.timecourse.COURSE_KEYS`; parameter
ids equal the snapshot's cycle keys (plus ``kinase_koff``, ``phosphatase_koff`` for the
mass-action model, computed from them by initial assignments). Every quantity carries a unit
(µM, s; the compartment holds 1 L so µmol and µM agree numerically). The initial state is the
steady state of the cycle; the free enzymes and the free unmodified substrate are tied to the
totals by initial assignments, so raising an enzyme total in a simulator adds free enzyme, as a
step in `hairtrigger.time_course` does.

libsbml prints doubles with 15 significant digits; the exact values (shortest round-trip
decimal) are also kept in a model annotation, and `read_sbml_parameters` uses them whenever
they agree with the printed values to that precision (a value edited in another tool wins).
"""

from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Final

from ..core.params import CYCLE_DESCRIPTIONS, CYCLE_KEYS, MODELS, Cycle, check_choice
from ..core.steady import steady_state
from .files import atomic_write

#: Namespace of the annotation holding exact parameter values.
ANNOTATION_NS: Final[str] = "urn:hairtrigger:sbml:1"
ANNOTATION_PREFIX: Final[str] = "hairtrigger"

#: Id of the single compartment and its size (litre).
COMPARTMENT_ID: Final[str] = "reaction_volume"

#: Unit definition id of each parameter.
PARAMETER_UNITS: Final[dict[str, str]] = {
    "substrate_total": "uM",
    "kinase_total": "uM",
    "kinase_kcat": "per_second",
    "kinase_km": "uM",
    "kinase_kon": "per_uM_per_second",
    "phosphatase_total": "uM",
    "phosphatase_kcat": "per_second",
    "phosphatase_km": "uM",
    "phosphatase_kon": "per_uM_per_second",
    "kinase_koff": "per_second",
    "phosphatase_koff": "per_second",
}

_SPECIES_NAMES: Final[dict[str, str]] = {
    "unmodified": "free unmodified substrate",
    "modified": "free modified substrate",
    "kinase": "free kinase",
    "phosphatase": "free phosphatase",
    "kinase_complex": "kinase-substrate complex",
    "phosphatase_complex": "phosphatase-substrate complex",
}


def _libsbml():  # type: ignore[no-untyped-def]
    try:
        import libsbml
    except ImportError as exc:  # pragma: no cover - a declared dependency
        msg = "SBML support needs python-libsbml (pip install python-libsbml)"
        raise RuntimeError(msg) from exc
    return libsbml


def _check(code: int, what: str) -> None:
    libsbml = _libsbml()
    if code != libsbml.LIBSBML_OPERATION_SUCCESS:
        msg = f"libsbml refused {what}: {libsbml.OperationReturnValue_toString(code)}"
        raise RuntimeError(msg)


def _add_unit_definitions(model) -> None:  # type: ignore[no-untyped-def]
    libsbml = _libsbml()
    definitions = {
        "micromole": [(libsbml.UNIT_KIND_MOLE, 1, -6)],
        "uM": [(libsbml.UNIT_KIND_MOLE, 1, -6), (libsbml.UNIT_KIND_LITRE, -1, 0)],
        "per_second": [(libsbml.UNIT_KIND_SECOND, -1, 0)],
        "per_uM_per_second": [
            (libsbml.UNIT_KIND_MOLE, -1, -6),
            (libsbml.UNIT_KIND_LITRE, 1, 0),
            (libsbml.UNIT_KIND_SECOND, -1, 0),
        ],
    }
    for ident, units in definitions.items():
        definition = model.createUnitDefinition()
        _check(definition.setId(ident), f"unit id {ident}")
        for kind, exponent, scale in units:
            unit = definition.createUnit()
            unit.setKind(kind)
            unit.setExponent(exponent)
            unit.setScale(scale)
            unit.setMultiplier(1.0)


def _add_parameter(model, ident: str, value: float, name: str) -> None:  # type: ignore[no-untyped-def]
    parameter = model.createParameter()
    _check(parameter.setId(ident), f"parameter id {ident}")
    parameter.setName(name)
    parameter.setValue(value)
    parameter.setUnits(PARAMETER_UNITS[ident])
    parameter.setConstant(True)


def _add_species(model, ident: str, concentration: float) -> None:  # type: ignore[no-untyped-def]
    species = model.createSpecies()
    _check(species.setId(ident), f"species id {ident}")
    species.setName(_SPECIES_NAMES[ident])
    species.setCompartment(COMPARTMENT_ID)
    species.setInitialConcentration(concentration)
    species.setSubstanceUnits("micromole")
    species.setHasOnlySubstanceUnits(False)
    species.setBoundaryCondition(False)
    species.setConstant(False)


def _add_initial_assignment(model, symbol: str, formula: str) -> None:  # type: ignore[no-untyped-def]
    libsbml = _libsbml()
    assignment = model.createInitialAssignment()
    assignment.setSymbol(symbol)
    math_ast = libsbml.parseL3Formula(formula)
    if math_ast is None:  # pragma: no cover - formulas are ours
        msg = f"cannot parse formula {formula!r}"
        raise RuntimeError(msg)
    _check(assignment.setMath(math_ast), f"initial assignment of {symbol}")


def _add_reaction(  # type: ignore[no-untyped-def]
    model,
    ident: str,
    name: str,
    reactants: tuple[str, ...],
    products: tuple[str, ...],
    formula: str,
) -> None:
    libsbml = _libsbml()
    reaction = model.createReaction()
    _check(reaction.setId(ident), f"reaction id {ident}")
    reaction.setName(name)
    reaction.setReversible(False)
    for species, create in (
        (reactants, reaction.createReactant),
        (products, reaction.createProduct),
    ):
        for ident_species in species:
            reference = create()
            reference.setSpecies(ident_species)
            reference.setStoichiometry(1.0)
            reference.setConstant(True)
    law = reaction.createKineticLaw()
    math_ast = libsbml.parseL3Formula(formula)
    if math_ast is None:  # pragma: no cover - formulas are ours
        msg = f"cannot parse formula {formula!r}"
        raise RuntimeError(msg)
    _check(law.setMath(math_ast), f"kinetic law of {ident}")


def _annotation(cycle: Cycle, model: str) -> str:
    values = " ".join(f'{key}="{getattr(cycle, key)!r}"' for key in CYCLE_KEYS)
    return (
        f'<annotation><{ANNOTATION_PREFIX}:cycle xmlns:{ANNOTATION_PREFIX}="{ANNOTATION_NS}" '
        f'model="{model}" {values}/></annotation>'
    )


def _notes(cycle: Cycle, model: str, title: str) -> str:
    kind = (
        "mass-action model: elementary binding, unbinding and catalysis reactions"
        if model == "mass_action"
        else "quasi-steady model: two Michaelis-Menten reactions"
    )
    return (
        '<notes><body xmlns="http://www.w3.org/1999/xhtml">'
        f"<p>{_xml_escape(title)}</p>"
        f"<p>Covalent-modification cycle exported by hairtrigger ({kind}). Concentrations in "
        "uM, time in s; the initial state is the steady state of the parameters. Model "
        "predictions need experimental confirmation.</p>"
        "</body></notes>"
    )


def _xml_escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def cycle_to_sbml(
    cycle: Cycle, model: str = "mass_action", title: str = "hairtrigger cycle"
) -> str:
    """Encode a cycle as an SBML Level 3 Version 2 document.

    Parameters
    ----------
    cycle : Cycle
        The parameters (snapshot cycle keys become parameter ids).
    model : {"mass_action", "quasi_steady"}
        Elementary mass-action reactions, or two Michaelis–Menten reactions.
    title : str
        Human-readable model name.

    Returns
    -------
    str
        The SBML document (UTF-8 XML text).

    Raises
    ------
    ValueError
        For an unknown model, or (mass-action) a negative dissociation rate kon·Km − kcat.
    """
    if not isinstance(cycle, Cycle):
        msg = f"`cycle` must be a hairtrigger.Cycle; got {type(cycle).__name__}"
        raise ValueError(msg)
    check_choice("model", model, MODELS)
    libsbml = _libsbml()
    if model == "mass_action":
        for name in ("kinase", "phosphatase"):
            koff = getattr(cycle, f"{name}_koff")
            if koff < 0.0:
                msg = (
                    f"the {name} dissociation rate {name}_kon*{name}_km - {name}_kcat is negative "
                    f"({koff:.6g} 1/s); the mass-action model needs {name}_kon >= "
                    f"{name}_kcat/{name}_km"
                )
                raise ValueError(msg)
    document = libsbml.SBMLDocument(3, 2)
    sbml = document.createModel()
    sbml.setId(f"hairtrigger_{model}_cycle")
    sbml.setName(title)
    for setter, unit in (
        (sbml.setSubstanceUnits, "micromole"),
        (sbml.setTimeUnits, "second"),
        (sbml.setVolumeUnits, "litre"),
        (sbml.setExtentUnits, "micromole"),
    ):
        setter(unit)
    _add_unit_definitions(sbml)
    compartment = sbml.createCompartment()
    compartment.setId(COMPARTMENT_ID)
    compartment.setName("reaction volume")
    compartment.setSpatialDimensions(3.0)
    compartment.setSize(1.0)
    compartment.setUnits("litre")
    compartment.setConstant(True)

    for key in CYCLE_KEYS:
        _add_parameter(sbml, key, getattr(cycle, key), CYCLE_DESCRIPTIONS[key])
    state = steady_state(cycle.arrays(), model)
    c = COMPARTMENT_ID
    if model == "mass_action":
        _add_parameter(sbml, "kinase_koff", cycle.kinase_koff, "kinase unbinding rate d1")
        _add_parameter(
            sbml, "phosphatase_koff", cycle.phosphatase_koff, "phosphatase unbinding rate d2"
        )
        _add_initial_assignment(sbml, "kinase_koff", "kinase_kon * kinase_km - kinase_kcat")
        _add_initial_assignment(
            sbml, "phosphatase_koff", "phosphatase_kon * phosphatase_km - phosphatase_kcat"
        )
        species = {
            "unmodified": float(state.unmodified),
            "modified": float(state.modified),
            "kinase": cycle.kinase_total - float(state.kinase_complex),
            "phosphatase": cycle.phosphatase_total - float(state.phosphatase_complex),
            "kinase_complex": float(state.kinase_complex),
            "phosphatase_complex": float(state.phosphatase_complex),
        }
        for ident, value in species.items():
            _add_species(sbml, ident, value)
        _add_initial_assignment(
            sbml,
            "unmodified",
            "substrate_total - modified - kinase_complex - phosphatase_complex",
        )
        _add_initial_assignment(sbml, "kinase", "kinase_total - kinase_complex")
        _add_initial_assignment(sbml, "phosphatase", "phosphatase_total - phosphatase_complex")
        reactions: tuple[tuple[str, str, tuple[str, ...], tuple[str, ...], str], ...] = (
            (
                "kinase_binding",
                "kinase binds unmodified substrate",
                ("unmodified", "kinase"),
                ("kinase_complex",),
                f"{c} * kinase_kon * unmodified * kinase",
            ),
            (
                "kinase_unbinding",
                "kinase complex dissociates",
                ("kinase_complex",),
                ("unmodified", "kinase"),
                f"{c} * kinase_koff * kinase_complex",
            ),
            (
                "kinase_catalysis",
                "kinase modifies substrate",
                ("kinase_complex",),
                ("modified", "kinase"),
                f"{c} * kinase_kcat * kinase_complex",
            ),
            (
                "phosphatase_binding",
                "phosphatase binds modified substrate",
                ("modified", "phosphatase"),
                ("phosphatase_complex",),
                f"{c} * phosphatase_kon * modified * phosphatase",
            ),
            (
                "phosphatase_unbinding",
                "phosphatase complex dissociates",
                ("phosphatase_complex",),
                ("modified", "phosphatase"),
                f"{c} * phosphatase_koff * phosphatase_complex",
            ),
            (
                "phosphatase_catalysis",
                "phosphatase demodifies substrate",
                ("phosphatase_complex",),
                ("unmodified", "phosphatase"),
                f"{c} * phosphatase_kcat * phosphatase_complex",
            ),
        )
    else:
        _add_species(sbml, "unmodified", float(state.unmodified))
        _add_species(sbml, "modified", float(state.modified))
        _add_initial_assignment(sbml, "unmodified", "substrate_total - modified")
        reactions = (
            (
                "modification",
                "kinase modifies substrate (Michaelis-Menten)",
                ("unmodified",),
                ("modified",),
                f"{c} * kinase_kcat * kinase_total * unmodified / (kinase_km + unmodified)",
            ),
            (
                "demodification",
                "phosphatase demodifies substrate (Michaelis-Menten)",
                ("modified",),
                ("unmodified",),
                f"{c} * phosphatase_kcat * phosphatase_total * modified"
                " / (phosphatase_km + modified)",
            ),
        )
    for ident, name, reactants, products, formula in reactions:
        _add_reaction(sbml, ident, name, reactants, products, formula)
    _check(sbml.setNotes(_notes(cycle, model, title)), "model notes")
    _check(sbml.setAnnotation(_annotation(cycle, model)), "model annotation")
    text: str = libsbml.writeSBMLToString(document)
    return text


def consistency_problems(text: str, units: bool = True) -> list[tuple[str, str]]:
    """Run libsbml's consistency checks on an SBML document.

    Parameters
    ----------
    text : str
        SBML document.
    units : bool
        Include the unit-consistency checks.

    Returns
    -------
    list of (severity, message)
        Severity ``"error"``, ``"warning"`` or ``"info"``; empty if the document is clean.
    """
    libsbml = _libsbml()
    document = libsbml.readSBMLFromString(text)
    document.setConsistencyChecks(libsbml.LIBSBML_CAT_UNITS_CONSISTENCY, units)
    document.checkConsistency()
    problems = []
    for i in range(document.getNumErrors()):
        error = document.getError(i)
        if error.getSeverity() >= libsbml.LIBSBML_SEV_ERROR:
            severity = "error"
        elif error.getSeverity() == libsbml.LIBSBML_SEV_WARNING:
            severity = "warning"
        else:
            severity = "info"
        problems.append((severity, error.getMessage().strip()))
    return problems


def write_sbml(
    cycle: Cycle,
    path: str | os.PathLike[str],
    model: str = "mass_action",
    title: str = "hairtrigger cycle",
    overwrite: bool = False,
) -> Path:
    """Write `cycle_to_sbml` to `path` atomically (`hairtrigger.io.files.atomic_write`).

    Parameters
    ----------
    cycle, model, title
        As in `cycle_to_sbml`.
    path : path-like
        Destination file.
    overwrite : bool
        Replace an existing file; otherwise an existing file raises `FileExistsError`.

    Returns
    -------
    Path
        The written path.
    """
    text = cycle_to_sbml(cycle, model, title)
    return atomic_write(path, text, overwrite=overwrite)


def _annotated_values(model) -> dict[str, str]:  # type: ignore[no-untyped-def]
    annotation = model.getAnnotation()
    if annotation is None:
        return {}
    for i in range(annotation.getNumChildren()):
        child = annotation.getChild(i)
        if child.getName() == "cycle" and child.getURI() == ANNOTATION_NS:
            attributes = child.getAttributes()
            return {
                attributes.getName(j): attributes.getValue(j) for j in range(attributes.getLength())
            }
    return {}


def read_sbml_parameters(text: str) -> Cycle:
    """Recover the cycle parameters from an SBML document written by `cycle_to_sbml`.

    Parameters are looked up by their ids (the snapshot cycle keys). Where the model
    annotation holds an exact value that agrees with the parameter's printed value to 15
    significant digits, the exact value is returned; otherwise the printed value.

    Parameters
    ----------
    text : str
        SBML document.

    Returns
    -------
    Cycle

    Raises
    ------
    ValueError
        If the text is not readable SBML, or a parameter is missing or invalid.
    """
    libsbml = _libsbml()
    document = libsbml.readSBMLFromString(text)
    for i in range(document.getNumErrors()):
        error = document.getError(i)
        if error.getSeverity() >= libsbml.LIBSBML_SEV_ERROR:
            msg = f"not readable as SBML: {error.getMessage().strip().splitlines()[0]}"
            raise ValueError(msg)
    model = document.getModel()
    if model is None:
        msg = "the SBML document contains no model"
        raise ValueError(msg)
    exact = _annotated_values(model)
    values: dict[str, float] = {}
    for key in CYCLE_KEYS:
        parameter = model.getParameter(key)
        if parameter is None or not parameter.isSetValue():
            msg = f"the SBML model has no parameter `{key}` with a value"
            raise ValueError(msg)
        printed = parameter.getValue()
        value = printed
        if key in exact:
            try:
                candidate = float(exact[key])
            except ValueError:
                candidate = math.nan
            if math.isfinite(candidate) and math.isclose(candidate, printed, rel_tol=1e-14):
                value = candidate
        values[key] = value
    return Cycle.from_dict(values)
