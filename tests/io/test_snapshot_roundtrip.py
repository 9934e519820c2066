"""Snapshots survive save/load exactly: floats bit for bit, text, extras, key order."""

from __future__ import annotations

import json
import math
import pathlib
import pickle
import re
import struct
import subprocess
import sys
import tempfile
from datetime import UTC, datetime
from typing import Any

import jsonschema
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from snapshot_cases import GOOD_DOCUMENT

import hairtrigger
from hairtrigger.core.params import CYCLE_KEYS, MODELS, READOUTS, Cycle
from hairtrigger.io import (
    Snapshot,
    SnapshotError,
    dumps_snapshot,
    load_snapshot,
    loads_snapshot,
    save_snapshot,
    snapshot_from_dict,
    snapshot_schema,
    snapshot_to_dict,
)
from hairtrigger.io.snapshot import _ISO_8601, MIGRATIONS, RESERVED_KEYS

SRC = pathlib.Path(__file__).resolve().parents[2] / "src"

positive_floats = st.floats(
    min_value=0.0, exclude_min=True, allow_nan=False, allow_infinity=False, allow_subnormal=True
)
json_scalars = (
    st.none()
    | st.booleans()
    | st.integers(min_value=-(10**15), max_value=10**15)
    | st.floats(allow_nan=False, allow_infinity=False)
    | st.text(max_size=20)
)
json_values = st.recursive(
    json_scalars,
    lambda inner: (
        st.lists(inner, max_size=4) | st.dictionaries(st.text(max_size=8), inner, max_size=4)
    ),
    max_leaves=12,
)
extra_blocks = st.dictionaries(
    st.text(min_size=1, max_size=12).filter(lambda k: k not in RESERVED_KEYS),
    json_values,
    max_size=3,
)


VALIDATOR = jsonschema.Draft202012Validator(snapshot_schema())


def bits(x: float) -> bytes:
    return struct.pack("<d", x)


@st.composite
def snapshots(draw: st.DrawFn) -> Snapshot:
    cycle = Cycle(**{key: draw(positive_floats) for key in CYCLE_KEYS})
    return Snapshot(
        cycle,
        model=draw(st.sampled_from(MODELS)),
        readout=draw(st.sampled_from(READOUTS)),
        title=draw(st.text(max_size=30)),
        notes=draw(st.text(max_size=60)),
        created=draw(
            st.sampled_from(
                [
                    "2025-01-15",
                    "2025-01-15T09:00:00+00:00",
                    "2024-02-29T23:59:59.123456Z",
                    "1999-12-31T00:00",
                ]
            )
        ),
        extras=draw(extra_blocks),
    )


@settings(max_examples=100, deadline=None)
@given(snapshots())
def test_text_round_trip_is_exact(snapshot: Snapshot) -> None:
    text = dumps_snapshot(snapshot)
    back = loads_snapshot(text)
    assert back == snapshot
    for key in CYCLE_KEYS:
        assert bits(getattr(back.cycle, key)) == bits(getattr(snapshot.cycle, key))
    assert dumps_snapshot(back) == text  # stable: a second save is byte-identical
    assert loads_snapshot(text.encode("utf-8")) == snapshot


@settings(max_examples=25, deadline=None)
@given(snapshots())
def test_file_round_trip_is_exact(snapshot: Snapshot) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = pathlib.Path(folder) / "s.json"
        save_snapshot(snapshot, path)
        assert load_snapshot(path) == snapshot
        assert path.read_bytes() == dumps_snapshot(snapshot).encode("utf-8")


@settings(max_examples=100, deadline=None)
@given(snapshots())
def test_every_saved_snapshot_satisfies_the_schema(snapshot: Snapshot) -> None:
    VALIDATOR.validate(json.loads(dumps_snapshot(snapshot)))


@pytest.mark.parametrize(
    "value",
    [5e-324, 2.2250738585072014e-308, 0.1, 1 / 3, 1.0000000000000002, 1.7976931348623157e308],
    ids=["smallest-subnormal", "smallest-normal", "tenth", "third", "one-plus-ulp", "largest"],
)
def test_extreme_floats_round_trip(snapshot: Snapshot, value: float) -> None:
    changed = snapshot.replace(cycle=snapshot.cycle.replace(kinase_km=value))
    assert bits(loads_snapshot(dumps_snapshot(changed)).cycle.kinase_km) == bits(value)


def test_integers_in_a_file_are_read_as_floats() -> None:
    document = json.loads(json.dumps(GOOD_DOCUMENT))
    document["cycle"]["substrate_total"] = 2
    snapshot = snapshot_from_dict(document)
    assert snapshot.cycle.substrate_total == 2.0
    assert isinstance(snapshot.cycle.substrate_total, float)


def test_version_written_as_float_one_is_accepted() -> None:
    # JSON Schema counts 1.0 as the integer 1; the loader agrees.
    document = json.loads(json.dumps(GOOD_DOCUMENT))
    document["version"] = 1.0
    assert snapshot_from_dict(document).title == "test cycle"


def test_key_order_follows_the_contract(snapshot: Snapshot) -> None:
    document = json.loads(
        dumps_snapshot(snapshot.replace(extras={"zeta": 1, "alpha": {"b": 1, "a": 2}}))
    )
    assert list(document) == [*RESERVED_KEYS, "alpha", "zeta"]
    assert list(document["cycle"]) == list(CYCLE_KEYS)
    assert list(document["units"]) == ["concentration", "time"]
    assert list(document["alpha"]) == ["b", "a"]  # inside a block, the block's own order
    assert document["format"] == "hairtrigger.snapshot"
    assert document["version"] == 1
    assert document["units"] == {"concentration": "uM", "time": "s"}


def test_dumps_is_indented_utf8_without_nan(snapshot: Snapshot) -> None:
    text = dumps_snapshot(snapshot)
    assert text.endswith("}\n")
    assert '\n  "format": "hairtrigger.snapshot",' in text
    assert "µ" in text  # written as UTF-8, not \u escapes
    assert "NaN" not in text and "Infinity" not in text


def test_extras_are_preserved_and_read_only(snapshot: Snapshot) -> None:
    source = {"pinned": [{"title": "before", "K1": 0.03}], "view": {"grid": 64}}
    changed = snapshot.replace(extras=source)
    source["view"]["grid"] = 1  # the snapshot kept its own copy
    assert changed.extras["view"]["grid"] == 64
    with pytest.raises(TypeError):
        changed.extras["view"] = {}  # type: ignore[index]
    back = loads_snapshot(dumps_snapshot(changed))
    assert dict(back.extras) == {"pinned": [{"title": "before", "K1": 0.03}], "view": {"grid": 64}}
    assert snapshot_to_dict(back)["pinned"] == [{"title": "before", "K1": 0.03}]


def test_unknown_top_level_blocks_in_a_file_survive(tmp_path: pathlib.Path) -> None:
    document = json.loads(json.dumps(GOOD_DOCUMENT))
    document["comparisons"] = [{"name": "weaker phosphatase", "phosphatase_kcat": 0.5}]
    path = tmp_path / "in.json"
    path.write_text(json.dumps(document), encoding="utf-8")
    out = tmp_path / "out.json"
    save_snapshot(load_snapshot(path), out)
    assert json.loads(out.read_text(encoding="utf-8"))["comparisons"] == document["comparisons"]


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"model": "exact"}, "model"),
        ({"readout": "phospho"}, "readout"),
        ({"title": None}, "title"),
        ({"notes": 3}, "notes"),
        ({"created": "15/01/2025"}, "created"),
        ({"created": "2025-02-30"}, "created"),
        ({"title": "bad \ud800"}, "title"),
        ({"extras": {"format": "x"}}, "format"),
        ({"extras": {"cycle": {}}}, "cycle"),
        ({"extras": {"view": float("nan")}}, "view"),
        ({"extras": {"view": [1.0, float("inf")]}}, "view[1]"),
        ({"extras": {"view": {"a": {1, 2}}}}, "view.a"),
        ({"extras": {"view": {3: "x"}}}, "view"),
        ({"extras": {4: "x"}}, "extras"),
        ({"extras": ["not", "a", "mapping"]}, "extras"),
    ],
)
def test_constructor_validates(snapshot: Snapshot, changes: dict[str, Any], field: str) -> None:
    with pytest.raises(SnapshotError) as info:
        snapshot.replace(**changes)
    assert info.value.field == field


def test_constructor_needs_a_cycle() -> None:
    with pytest.raises(SnapshotError, match="must be a hairtrigger.Cycle"):
        Snapshot({"substrate_total": 1.0})  # type: ignore[arg-type]


def test_created_defaults_to_now_in_utc(cycle: Cycle) -> None:
    before = datetime.now(UTC).replace(microsecond=0)
    created = datetime.fromisoformat(Snapshot(cycle).created)
    after = datetime.now(UTC)
    assert created.tzinfo is not None
    assert before <= created <= after


def test_snapshot_is_frozen_and_hashable(snapshot: Snapshot) -> None:
    with pytest.raises(AttributeError):
        snapshot.title = "changed"  # type: ignore[misc]
    assert hash(snapshot) == hash(snapshot.replace())


def test_snapshot_pickles_and_deep_copies(snapshot: Snapshot) -> None:
    import copy

    for clone in (pickle.loads(pickle.dumps(snapshot)), copy.deepcopy(snapshot)):
        assert clone == snapshot
        assert isinstance(clone.extras, type(snapshot.extras))


def test_snapshot_error_pickles() -> None:
    error = SnapshotError("cycle.kinase_km", "must be positive", "f.json")
    back = pickle.loads(pickle.dumps(error))
    assert (back.field, back.problem, back.source, str(back)) == (
        "cycle.kinase_km",
        "must be positive",
        "f.json",
        "f.json: cycle.kinase_km: must be positive",
    )
    assert isinstance(back, ValueError)


def test_to_dict_refuses_other_objects() -> None:
    with pytest.raises(TypeError, match="Snapshot"):
        snapshot_to_dict({"cycle": {}})  # type: ignore[arg-type]


def test_top_level_names_are_the_io_ones() -> None:
    assert hairtrigger.load_snapshot is load_snapshot
    assert hairtrigger.save_snapshot is save_snapshot
    assert hairtrigger.Snapshot is Snapshot


def test_migration_hook_upgrades_older_versions(monkeypatch: pytest.MonkeyPatch) -> None:
    """A future version 2 plugs in by raising the version and adding ``MIGRATIONS[1]``."""
    import hairtrigger.io.snapshot as module

    seen: list[int] = []

    def one_to_two(document: dict[str, Any]) -> dict[str, Any]:
        seen.append(document["version"])
        document["title"] = document["title"] + " (upgraded)"
        return document

    monkeypatch.setattr(module, "SNAPSHOT_VERSION", 2)
    monkeypatch.setitem(MIGRATIONS, 1, one_to_two)
    snapshot = snapshot_from_dict(json.loads(json.dumps(GOOD_DOCUMENT)))
    assert seen == [1]
    assert snapshot.title == "test cycle (upgraded)"


def test_missing_migration_step_is_reported(monkeypatch: pytest.MonkeyPatch) -> None:
    import hairtrigger.io.snapshot as module

    monkeypatch.setattr(module, "SNAPSHOT_VERSION", 2)
    with pytest.raises(SnapshotError, match="no upgrade from snapshot version 1") as info:
        snapshot_from_dict(json.loads(json.dumps(GOOD_DOCUMENT)))
    assert info.value.field == "version"


# --- the schema states the loader's rules ----------------------------------------------------


def test_schema_is_a_valid_draft_2020_12_schema() -> None:
    schema = snapshot_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"


def test_schema_lists_the_same_keys_and_choices_as_the_loader() -> None:
    schema = snapshot_schema()
    assert schema["required"] == list(RESERVED_KEYS)
    assert schema["properties"]["cycle"]["required"] == list(CYCLE_KEYS)
    assert list(schema["properties"]["cycle"]["properties"]) == list(CYCLE_KEYS)
    assert schema["properties"]["model"]["enum"] == list(MODELS)
    assert schema["properties"]["readout"]["enum"] == list(READOUTS)
    assert schema["properties"]["created"]["pattern"] == f"^{_ISO_8601.pattern}$"
    assert schema["properties"]["version"]["const"] == 1


@settings(max_examples=300, deadline=None)
@given(
    key=st.sampled_from([*RESERVED_KEYS, *(f"cycle.{k}" for k in CYCLE_KEYS), "units.time"]),
    value=json_values,
)
def test_loader_and_schema_agree_on_random_replacements(key: str, value: Any) -> None:
    document = json.loads(json.dumps(GOOD_DOCUMENT))
    *parents, last = key.split(".")
    target = document
    for parent in parents:
        target = target[parent]
    target[last] = value
    try:
        snapshot_from_dict(document)
        loader_ok = True
    except SnapshotError:
        loader_ok = False
    schema_ok = VALIDATOR.is_valid(document)
    if key == "created" and isinstance(value, str) and re.fullmatch(_ISO_8601, value):
        # Only the loader checks the calendar (a pattern cannot): it may refuse more.
        assert schema_ok and (loader_ok or not _is_calendar_date(value))
    else:
        assert loader_ok == schema_ok, (key, value)


def _is_calendar_date(text: str) -> bool:
    try:
        datetime.fromisoformat(text)
    except ValueError:
        return False
    return True


def test_loading_needs_no_jsonschema_nor_widgets() -> None:
    code = (
        "import sys, hairtrigger.io as io, hairtrigger.cli as cli; cli.build_parser(); "
        "[io.load_example(n) for n in io.list_examples()]; "
        "bad = {'jsonschema', 'ipywidgets', 'bqplot', 'traitlets', 'IPython'} & set(sys.modules); "
        "print(sorted(bad))"
    )
    env = {"PYTHONPATH": str(SRC), "PATH": "/usr/bin:/bin"}
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True
    )
    assert out.stdout.strip() == "[]"


def test_nan_cannot_reach_the_file(snapshot: Snapshot, monkeypatch: pytest.MonkeyPatch) -> None:
    # allow_nan=False is the last guard, should a non-finite number ever slip past validation.
    document = snapshot_to_dict(snapshot)
    document["cycle"]["kinase_km"] = math.nan
    import hairtrigger.io.snapshot as module

    monkeypatch.setattr(module, "snapshot_to_dict", lambda s: document)
    with pytest.raises(ValueError, match="not JSON compliant"):
        dumps_snapshot(snapshot)


# --- robustness: whatever the input, the answer is a Snapshot or a SnapshotError --------------


def _outcome(payload: Any) -> str:
    try:
        loads_snapshot(payload)
    except SnapshotError as exc:
        assert "\n" not in str(exc)
        return "refused"
    return "accepted"


@settings(max_examples=200, deadline=None)
@given(st.binary(max_size=200))
def test_random_bytes_never_raise_anything_else(data: bytes) -> None:
    _outcome(data)


@settings(max_examples=200, deadline=None)
@given(
    place=st.sampled_from(["top", "units", "cycle", *(f"cycle.{k}" for k in CYCLE_KEYS)]),
    value=json_values,
)
def test_random_documents_never_raise_anything_else(place: str, value: Any) -> None:
    document = json.loads(json.dumps(GOOD_DOCUMENT))
    if place == "top":
        document = value
    elif "." in place:
        document["cycle"][place.split(".")[1]] = value
    else:
        document[place] = value
    _outcome(json.dumps(document))
