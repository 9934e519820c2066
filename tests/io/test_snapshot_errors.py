"""Every way a snapshot can be bad: the loader names the first bad field, and the shipped JSON
Schema rejects the same documents (except what JSON Schema cannot express, listed apiece)."""

from __future__ import annotations

import copy
import json
import os
import pathlib
from typing import Any

import jsonschema
import pytest
from snapshot_cases import GOOD_DOCUMENT

from hairtrigger.core.params import CYCLE_KEYS
from hairtrigger.io import (
    MAX_SNAPSHOT_BYTES,
    SnapshotError,
    load_snapshot,
    loads_snapshot,
    snapshot_from_dict,
    snapshot_schema,
)

DELETE = object()


def mutated(path: tuple[str, ...], value: Any) -> dict[str, Any]:
    document = copy.deepcopy(GOOD_DOCUMENT)
    *parents, last = path
    target = document
    for key in parents:
        target = target[key]
    if value is DELETE:
        del target[last]
    else:
        target[last] = value
    return document


@pytest.fixture(scope="module")
def validator() -> jsonschema.protocols.Validator:
    schema = snapshot_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


# (id, path to change, new value, field the loader must name, fragment of the message,
#  reason the schema cannot see it or None when the schema must reject it too)
FIELD_CASES: list[tuple[str, tuple[str, ...], Any, str, str, str | None]] = [
    ("format-missing", ("format",), DELETE, "format", "not a hairtrigger snapshot", None),
    ("format-wrong", ("format",), "hairtrigger.cascade", "format", '"hairtrigger.cascade"', None),
    ("format-number", ("format",), 1, "format", "must be", None),
    ("version-missing", ("version",), DELETE, "version", "missing", None),
    ("version-string", ("version",), "1", "version", "must be an integer", None),
    ("version-bool", ("version",), True, "version", "must be an integer; got true", None),
    ("version-fraction", ("version",), 1.5, "version", "must be an integer", None),
    (
        "version-newer",
        ("version",),
        2,
        "version",
        "written by a newer hairtrigger; version 2 > 1",
        None,
    ),
    ("version-much-newer", ("version",), 17, "version", "version 17 > 1", None),
    ("version-zero", ("version",), 0, "version", "unknown snapshot version 0", None),
    ("version-negative", ("version",), -3, "version", "unknown snapshot version -3", None),
    ("title-missing", ("title",), DELETE, "title", "missing", None),
    ("title-number", ("title",), 5, "title", "must be a string; got 5", None),
    ("title-null", ("title",), None, "title", "got null", None),
    ("notes-missing", ("notes",), DELETE, "notes", "missing", None),
    ("notes-list", ("notes",), ["a"], "notes", "got a list", None),
    ("created-missing", ("created",), DELETE, "created", "missing", None),
    ("created-number", ("created",), 20250115, "created", "ISO 8601", None),
    ("created-words", ("created",), "yesterday", "created", "ISO 8601", None),
    ("created-space", ("created",), "2025-01-15 09:00", "created", "ISO 8601", None),
    (
        "created-month-13",
        ("created",),
        "2025-13-01",
        "created",
        "not a real calendar date",
        "a pattern cannot check the calendar",
    ),
    (
        "created-feb-30",
        ("created",),
        "2025-02-30T10:00:00Z",
        "created",
        "calendar",
        "a pattern cannot check the calendar",
    ),
    ("model-missing", ("model",), DELETE, "model", "missing", None),
    (
        "model-unknown",
        ("model",),
        "michaelis_menten",
        "model",
        '"quasi_steady", "mass_action"',
        None,
    ),
    ("model-number", ("model",), 1, "model", "must be one of", None),
    ("readout-missing", ("readout",), DELETE, "readout", "missing", None),
    (
        "readout-unknown",
        ("readout",),
        "modified",
        "readout",
        '"free_modified", "total_modified"',
        None,
    ),
    ("units-missing", ("units",), DELETE, "units", "missing", None),
    ("units-string", ("units",), "uM", "units", "must be the object", None),
    (
        "units-concentration-missing",
        ("units", "concentration"),
        DELETE,
        "units.concentration",
        "missing",
        None,
    ),
    (
        "units-nanomolar",
        ("units", "concentration"),
        "nM",
        "units.concentration",
        'only "uM" is supported; got "nM"',
        None,
    ),
    (
        "units-micro-sign",
        ("units", "concentration"),
        "µM",
        "units.concentration",
        'only "uM" is supported',
        None,
    ),
    ("units-minutes", ("units", "time"), "min", "units.time", 'only "s" is supported', None),
    ("units-time-missing", ("units", "time"), DELETE, "units.time", "missing", None),
    ("units-extra-kind", ("units", "energy"), "kJ", "units.energy", "unknown kind of unit", None),
    ("cycle-missing", ("cycle",), DELETE, "cycle", "missing", None),
    ("cycle-list", ("cycle",), [1, 2], "cycle", "must be an object", None),
    (
        "cycle-unknown-key",
        ("cycle", "kinase_kd"),
        0.5,
        "cycle.kinase_kd",
        "unknown cycle parameter",
        None,
    ),
    (
        "cycle-close-unknown-key",
        ("cycle", "kinase_kcats"),
        0.5,
        "cycle.kinase_kcats",
        'did you mean "kinase_kcat"',
        None,
    ),
]

BAD_NUMBERS: list[tuple[str, Any, str]] = [
    ("negative", -1.0, "got -1.0"),
    ("zero", 0, "got 0"),
    ("negative-zero", -0.0, "got -0.0"),
    ("string", "0.1", 'got "0.1" (a string)'),
    ("bool", True, "got true (a boolean)"),
    ("null", None, "got null"),
    ("list", [1.0], "got a list"),
    ("object", {"value": 1.0}, "got an object"),
]


def _cycle_cases() -> list[tuple[str, tuple[str, ...], Any, str, str, str | None]]:
    cases = []
    for key in CYCLE_KEYS:
        cases.append((f"{key}-missing", ("cycle", key), DELETE, f"cycle.{key}", "missing", None))
        for label, value, fragment in BAD_NUMBERS:
            cases.append((f"{key}-{label}", ("cycle", key), value, f"cycle.{key}", fragment, None))
    return cases


ALL_FIELD_CASES = FIELD_CASES + _cycle_cases()


@pytest.mark.parametrize(
    ("path", "value", "field", "fragment", "schema_blind"),
    [case[1:] for case in ALL_FIELD_CASES],
    ids=[case[0] for case in ALL_FIELD_CASES],
)
def test_bad_field_is_named_and_schema_agrees(
    path: tuple[str, ...],
    value: Any,
    field: str,
    fragment: str,
    schema_blind: str | None,
    validator: jsonschema.protocols.Validator,
) -> None:
    document = mutated(path, value)
    text = json.dumps(document)
    with pytest.raises(SnapshotError) as info:
        loads_snapshot(text)
    assert info.value.field == field
    assert fragment in info.value.problem
    assert str(info.value).startswith(f"{field}: ")
    assert "\n" not in str(info.value)
    # The dict entry point gives the same verdict as the text one.
    with pytest.raises(SnapshotError) as again:
        snapshot_from_dict(document)
    assert again.value.field == field
    assert validator.is_valid(document) == (schema_blind is not None)


def test_message_format_of_the_documented_example() -> None:
    with pytest.raises(SnapshotError) as info:
        snapshot_from_dict(mutated(("cycle", "kinase_km"), -1.0))
    assert str(info.value) == "cycle.kinase_km: must be a finite number > 0 uM; got -1.0"


def test_first_bad_field_wins_in_contract_order() -> None:
    document = mutated(("model",), "nonsense")
    document["cycle"]["kinase_km"] = -1.0
    document["title"] = 3
    with pytest.raises(SnapshotError) as info:
        snapshot_from_dict(document)
    assert info.value.field == "title"


def test_misspelled_cycle_key_is_suggested() -> None:
    document = copy.deepcopy(GOOD_DOCUMENT)
    document["cycle"]["kinase_Km"] = document["cycle"].pop("kinase_km")
    with pytest.raises(SnapshotError) as info:
        snapshot_from_dict(document)
    assert info.value.field == "cycle.kinase_km"
    assert '"kinase_Km" a misspelling' in info.value.problem


# --- whole-file problems: the text is not a snapshot document at all --------------------------

GOOD_TEXT = json.dumps(GOOD_DOCUMENT, indent=2)

# (id, raw bytes, fragment of the message, field the loader names: None for the whole file)
RAW_CASES: list[tuple[str, bytes, str, str | None]] = [
    ("empty", b"", "the file is empty", None),
    ("whitespace", b"  \n\t\n", "the file is empty", None),
    ("not-json", b"{format: snapshot}", "not valid JSON", None),
    ("truncated", GOOD_TEXT[: len(GOOD_TEXT) // 2].encode(), "not valid JSON", None),
    ("trailing-garbage", (GOOD_TEXT + "\n}").encode(), "Extra data at line", None),
    ("top-list", b"[1, 2, 3]", "the top level must be a JSON object; got a list", None),
    ("top-string", b'"hairtrigger.snapshot"', "must be a JSON object; got", None),
    ("top-number", b"42", "must be a JSON object; got 42", None),
    ("top-null", b"null", "must be a JSON object; got null", None),
    (
        "invalid-utf8",
        GOOD_TEXT.replace("test cycle", "test \udcff").encode("utf-8", "surrogateescape"),
        "not valid UTF-8 text: byte 0xff at line 4",
        None,
    ),
    (
        "latin-1",
        GOOD_TEXT.replace("test cycle", "Kinase µ").encode("latin-1"),
        "not valid UTF-8",
        None,
    ),
    ("utf-16", GOOD_TEXT.encode("utf-16"), "UTF-16", None),
    (
        "nan-token",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": NaN').encode(),
        "the token NaN is not valid JSON",
        None,
    ),
    (
        "infinity-token",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": Infinity').encode(),
        "the token Infinity is not valid JSON",
        None,
    ),
    (
        "minus-infinity-token",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": -Infinity').encode(),
        "the token -Infinity is not valid JSON",
        None,
    ),
    (
        "nan-in-extras",
        GOOD_TEXT.replace('"format"', '"view": {"zoom": NaN},\n  "format"').encode(),
        "the token NaN",
        None,
    ),
    (
        "duplicate-key",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": 0.1, "kinase_km": 5').encode(),
        'the key "kinase_km" appears twice',
        None,
    ),
    (
        "deeply-nested",
        b'{"deep": ' + b"[" * 100_000 + b"]" * 100_000 + b"}",
        "nested too deeply",
        None,
    ),
    (
        "huge-integer",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": ' + "9" * 5000).encode(),
        "not valid JSON for a snapshot",
        None,
    ),
]


@pytest.mark.parametrize(
    ("raw", "fragment", "field"),
    [case[1:] for case in RAW_CASES],
    ids=[case[0] for case in RAW_CASES],
)
def test_bad_text_is_refused(raw: bytes, fragment: str, field: str | None) -> None:
    with pytest.raises(SnapshotError) as info:
        loads_snapshot(raw, source="bad.json")
    assert info.value.field == field
    assert fragment in str(info.value)
    assert str(info.value).startswith("bad.json: ")
    assert "\n" not in str(info.value)


def test_json_errors_carry_line_and_column() -> None:
    text = GOOD_TEXT.replace('"kinase_km": 0.1,', '"kinase_km": 0.1,,')
    with pytest.raises(SnapshotError) as info:
        loads_snapshot(text)
    line = next(i for i, row in enumerate(text.splitlines(), 1) if ",," in row)
    assert f"at line {line}, column" in info.value.problem


# (id, raw text, field, fragment, what the schema misses)
LOADER_ONLY_TEXT: list[tuple[str, str, str, str, str]] = [
    # Python's json turns an out-of-range literal into inf; jsonschema then sees a number > 0.
    (
        "overflowing-number",
        GOOD_TEXT.replace('"kinase_km": 0.1', '"kinase_km": 1e400'),
        "cycle.kinase_km",
        "too large for a 64-bit float",
        "inf passes exclusiveMinimum",
    ),
    (
        "overflowing-extra",
        GOOD_TEXT.replace('"format"', '"view": {"zoom": -1e999},\n  "format"'),
        "view.zoom",
        "must be a finite number",
        "extras are free-form",
    ),
    (
        "lone-surrogate",
        GOOD_TEXT.replace('"test cycle"', '"test \\ud800 cycle"'),
        "title",
        "unpaired surrogate U+D800",
        "a lone surrogate is a valid JSON string escape",
    ),
    (
        "created-trailing-newline",
        GOOD_TEXT.replace('00:00"', '00:00\\n"'),
        "created",
        "ISO 8601",
        "Python's re.search lets $ match before a final newline",
    ),
]


@pytest.mark.parametrize(
    ("text", "field", "fragment", "schema_misses"),
    [case[1:] for case in LOADER_ONLY_TEXT],
    ids=[case[0] for case in LOADER_ONLY_TEXT],
)
def test_loader_refuses_what_the_schema_cannot_express(
    text: str,
    field: str,
    fragment: str,
    schema_misses: str,
    validator: jsonschema.protocols.Validator,
) -> None:
    with pytest.raises(SnapshotError) as info:
        loads_snapshot(text)
    assert info.value.field == field
    assert fragment in info.value.problem
    assert validator.is_valid(json.loads(text)), schema_misses


# --- file-level problems -----------------------------------------------------------------------


def test_missing_file_is_an_os_error(tmp_path: pathlib.Path) -> None:
    with pytest.raises(FileNotFoundError):
        load_snapshot(tmp_path / "absent.json")


def test_folder_is_refused(tmp_path: pathlib.Path) -> None:
    with pytest.raises(SnapshotError, match="is a folder") as info:
        load_snapshot(tmp_path)
    assert info.value.field is None
    assert str(info.value).startswith(str(tmp_path))


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_special_file_is_refused_without_blocking(tmp_path: pathlib.Path) -> None:
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    with pytest.raises(SnapshotError, match="not a regular file"):
        load_snapshot(fifo)


def test_error_names_the_file(tmp_path: pathlib.Path) -> None:
    path = tmp_path / "neg.json"
    path.write_text(json.dumps(mutated(("cycle", "phosphatase_kcat"), -2.0)), encoding="utf-8")
    with pytest.raises(SnapshotError) as info:
        load_snapshot(path)
    assert str(info.value) == (
        f"{path}: cycle.phosphatase_kcat: must be a finite number > 0 1/s; got -2.0"
    )
    assert info.value.source == str(path)


def _padded(size: int) -> bytes:
    """A valid snapshot of exactly `size` bytes (padding inside the notes)."""
    base = json.dumps(GOOD_DOCUMENT).encode()
    document = copy.deepcopy(GOOD_DOCUMENT)
    document["notes"] += " " * (size - len(base))
    data = json.dumps(document).encode()
    assert len(data) == size
    return data


def test_file_at_the_size_limit_is_read(tmp_path: pathlib.Path) -> None:
    path = tmp_path / "big.json"
    path.write_bytes(_padded(MAX_SNAPSHOT_BYTES))
    assert load_snapshot(path).title == "test cycle"


def test_file_over_the_size_limit_is_refused_before_reading(
    tmp_path: pathlib.Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = tmp_path / "huge.json"
    path.write_bytes(_padded(MAX_SNAPSHOT_BYTES + 1))

    def no_reading(*args: Any, **kwargs: Any) -> None:
        raise AssertionError("an oversized file was opened")

    monkeypatch.setattr(pathlib.Path, "open", no_reading)
    with pytest.raises(SnapshotError, match=f"over the {MAX_SNAPSHOT_BYTES}-byte limit"):
        load_snapshot(path)


@pytest.mark.parametrize("kind", [str, bytes, bytearray, memoryview])
def test_text_over_the_size_limit_is_refused(kind: type) -> None:
    data = _padded(MAX_SNAPSHOT_BYTES + 1)
    payload = data.decode() if kind is str else kind(data)
    with pytest.raises(SnapshotError, match="byte limit"):
        loads_snapshot(payload)
    ok = _padded(MAX_SNAPSHOT_BYTES)
    assert loads_snapshot(ok.decode() if kind is str else kind(ok)).title == "test cycle"


def test_byte_order_mark_is_tolerated() -> None:
    assert loads_snapshot(b"\xef\xbb\xbf" + GOOD_TEXT.encode()).title == "test cycle"
    assert loads_snapshot("\ufeff" + GOOD_TEXT).title == "test cycle"


def test_text_of_the_wrong_type_is_a_type_error() -> None:
    with pytest.raises(TypeError, match="`text` must be str or bytes"):
        loads_snapshot(123)  # type: ignore[arg-type]
