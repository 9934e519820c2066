"""Cascade files: round trip, validation naming the first bad field, atomic saving."""

from __future__ import annotations

import copy
import json

import pytest

from hairtrigger.core.cascade import Cascade, CascadeLevel, EnzymeConstants
from hairtrigger.io.cascade_file import (
    CascadeFileError,
    cascade_example_path,
    cascade_from_dict,
    cascade_to_dict,
    dumps_cascade,
    list_cascade_examples,
    load_cascade,
    loads_cascade,
    save_cascade,
)


@pytest.fixture
def document(two_level) -> dict:
    return cascade_to_dict(two_level)


def test_round_trip_is_exact(two_level, tmp_path):
    path = save_cascade(two_level, tmp_path / "c.json")
    assert load_cascade(path) == two_level
    assert loads_cascade(dumps_cascade(two_level)) == two_level
    odd = Cascade(0.1 + 0.2, two_level.levels, "t\u00e9", "n")
    assert loads_cascade(dumps_cascade(odd)).input_enzyme_total == 0.1 + 0.2


def test_contract_keys(document):
    assert document["format"] == "hairtrigger.cascade" and document["version"] == 1
    level = document["levels"][0]
    assert set(level) == {
        "name",
        "sites",
        "substrate_total",
        "phosphatase_total",
        "kinase",
        "phosphatase",
    }
    assert set(level["kinase"]) == set(level["phosphatase"]) == {"kon", "koff", "kcat"}


def _set(doc, path, value):
    target = doc
    for key in path[:-1]:
        target = target[key]
    if value is KeyError:
        del target[path[-1]]
    else:
        target[path[-1]] = value


@pytest.mark.parametrize(
    "path,value,field,match",
    [
        (("format",), "hairtrigger.snapshot", "format", "this is a snapshot"),
        (("format",), KeyError, "format", "is missing"),
        (("version",), 2, "version", "newer hairtrigger"),
        (("version",), "1", "version", "whole number"),
        (("input_enzyme_total",), -1.0, "input_enzyme_total", "≥ 0"),
        (("input_enzyme_total",), True, "input_enzyme_total", "boolean"),
        (("levels",), [], "levels", "non-empty list"),
        (("levels", 0, "name"), "", "levels[0].name", "non-empty string"),
        (("levels", 1, "name"), "upper", "levels[1].name", "earlier level"),
        (("levels", 0, "sites"), 3, "levels[0].sites", "must be 1 or 2"),
        (("levels", 0, "sites"), 1.0, "levels[0].sites", "must be 1 or 2"),
        (("levels", 1, "substrate_total"), 0, "levels[1].substrate_total", "> 0 uM"),
        (("levels", 1, "phosphatase_total"), KeyError, "levels[1].phosphatase_total", "missing"),
        (("levels", 1, "kinase", "koff"), -0.5, "levels[1].kinase.koff", "≥ 0 1/s"),
        (("levels", 0, "phosphatase", "kon"), 0.0, "levels[0].phosphatase.kon", "> 0"),
        (("levels", 0, "phosphatase", "kcat"), "fast", "levels[0].phosphatase.kcat", "a string"),
        (("levels", 0, "kinase", "km"), 1.0, "levels[0].kinase.km", "unknown key"),
        (("levels", 0, "kinase"), [1, 2, 3], "levels[0].kinase", "must be an object"),
        (("levels", 0, "colour"), "red", "levels[0].colour", "unknown key"),
        (("units", "time"), "min", "units.time", "convert"),
        (("title",), 3, "title", "must be a string"),
        (("view",), {}, "view", "unknown key"),
    ],
)
def test_bad_field_is_named(document, path, value, field, match):
    doc = copy.deepcopy(document)
    _set(doc, path, value)
    with pytest.raises(CascadeFileError, match=match) as info:
        cascade_from_dict(doc)
    assert info.value.field == field
    assert str(info.value).startswith(field)


@pytest.mark.parametrize(
    "text,match",
    [
        ("{", "not valid JSON"),
        ('{"format": NaN}', "token NaN is not valid JSON"),
        ('{"format": "a", "format": "b"}', "appears twice"),
        ("[]", "JSON object"),
        (b"\xff\xfe", "UTF-16 text; save it as UTF-8"),
        (b"{\"a\": \"\xff\"}", "not valid UTF-8"),
    ],
)
def test_bad_text(text, match):
    with pytest.raises(CascadeFileError, match=match):
        loads_cascade(text, source="x.json")


def test_load_names_the_file(tmp_path, document):
    document["levels"][0]["sites"] = 0
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(document))
    with pytest.raises(CascadeFileError, match=r"bad\.json: levels\[0\]\.sites"):
        load_cascade(path)
    with pytest.raises(CascadeFileError, match="is a folder"):
        load_cascade(tmp_path)


def test_save_refuses_to_overwrite_and_keeps_the_old_file(two_level, tmp_path):
    path = tmp_path / "c.json"
    path.write_text("precious")
    with pytest.raises(FileExistsError):
        save_cascade(two_level, path)
    assert path.read_text() == "precious"
    save_cascade(two_level, path, overwrite=True)
    assert load_cascade(path) == two_level
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.json"]  # no temporary left behind


def test_save_refuses_more_than_two_sites_before_touching_disk(tmp_path):
    k = EnzymeConstants(1.0, 1.0, 1.0)
    three = Cascade(0.0, (CascadeLevel("x", 3, 1.0, 1.0, k, k),))
    with pytest.raises(ValueError, match="1 or 2 sites"):
        save_cascade(three, tmp_path / "c.json")
    assert list(tmp_path.iterdir()) == []


def test_example_cascade_loads_and_is_invented():
    assert "tidepool_relay" in list_cascade_examples()
    cascade = load_cascade(cascade_example_path("tidepool_relay"))
    assert [lv.sites for lv in cascade.levels] == [1, 2, 2]
    assert "Invented" in cascade.notes and "experimental confirmation" in cascade.notes
    with pytest.raises(ValueError, match="available: tidepool_relay"):
        cascade_example_path("nope")


@pytest.mark.parametrize(
    "build,match",
    [
        (lambda k: EnzymeConstants(kon=-1.0, koff=1.0, kcat=1.0), "`kon`"),
        (lambda k: CascadeLevel("a", 0, 1.0, 1.0, k, k), "`sites`"),
        (lambda k: Cascade(0.0, ()), "at least one level"),
        (lambda k: Cascade(0.0, (CascadeLevel("a", 1, 1.0, 1.0, k, k),) * 2), "earlier level"),
    ],
)
def test_core_objects_validate(build, match):
    with pytest.raises(ValueError, match=match):
        build(EnzymeConstants(1.0, 1.0, 1.0))
