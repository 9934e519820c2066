"""Snapshot files: one cycle's parameters, model and readout, as versioned, validated JSON.

The format (DESIGN.md §4)::

    {
      "format": "hairtrigger.snapshot",
      "version": 1,
      "title": "...",
      "notes": "...",
      "created": "2025-01-15T09:00:00+00:00",
      "model": "quasi_steady" | "mass_action",
      "readout": "free_modified" | "total_modified",
      "units": {"concentration": "uM", "time": "s"},
      "cycle": {"substrate_total": ..., ... the nine keys of CYCLE_KEYS ...},
      ... any other top-level block (view settings, pinned comparisons) ...
    }

Loading checks everything and reports the first bad field as a `SnapshotError` whose message
starts with a dotted path (``cycle.kinase_km: must be a finite number > 0 uM; got -1.0``).
Hand-written checks give those messages; ``schema.json`` (shipped beside this module) states the
same rules for other tools, and the tests keep the two in agreement. Saving is atomic
(`hairtrigger.io.files.atomic_write`) and floats survive a round trip exactly.
"""

from __future__ import annotations

import dataclasses
import difflib
import json
import math
import numbers
import os
import re
import types
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from datetime import UTC, datetime
from importlib import resources
from pathlib import Path
from typing import Any, Final, NoReturn

from ..core.params import CYCLE_KEYS, CYCLE_UNITS, MODELS, READOUTS, Cycle
from ._strict_json import (
    JSONRefusal,
    decode_utf8,
    describe_json_value,
    parse_strict_json,
    read_bounded,
)
from .files import atomic_write

__all__ = [
    "MAX_SNAPSHOT_BYTES",
    "MIGRATIONS",
    "RESERVED_KEYS",
    "SNAPSHOT_FORMAT",
    "SNAPSHOT_UNITS",
    "SNAPSHOT_VERSION",
    "Snapshot",
    "SnapshotError",
    "dumps_snapshot",
    "load_snapshot",
    "loads_snapshot",
    "save_snapshot",
    "snapshot_from_dict",
    "snapshot_schema",
    "snapshot_to_dict",
]

#: Value of the ``"format"`` key.
SNAPSHOT_FORMAT: Final[str] = "hairtrigger.snapshot"
#: Version written by this hairtrigger (and the newest it reads).
SNAPSHOT_VERSION: Final[int] = 1
#: Oldest version this hairtrigger can read (older ones are upgraded through `MIGRATIONS`).
OLDEST_VERSION: Final[int] = 1
#: Files larger than this are refused before they are read (a snapshot is a few hundred bytes).
MAX_SNAPSHOT_BYTES: Final[int] = 1 << 20
#: The only units the format supports.
SNAPSHOT_UNITS: Final[Mapping[str, str]] = types.MappingProxyType(
    {"concentration": "uM", "time": "s"}
)
#: Top-level keys defined by the format, in the order they are written.
RESERVED_KEYS: Final[tuple[str, ...]] = (
    "format",
    "version",
    "title",
    "notes",
    "created",
    "model",
    "readout",
    "units",
    "cycle",
)

_UNIT_HINTS: Final[dict[str, str]] = {
    "concentration": "convert concentrations and Michaelis constants to uM",
    "time": "convert turnover numbers to 1/s and binding rates to 1/(uM*s)",
}

Document = dict[str, Any]

#: ISO 8601 extended format: a date, optionally with a time, fractional seconds and offset.
#: (schema.json carries the same pattern.)
_ISO_8601: Final = re.compile(
    r"\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d{1,9})?)?(Z|[+-]\d{2}:\d{2})?)?"
)

#: Upgrade steps: ``MIGRATIONS[n]`` turns a version-``n`` document (a plain dict, already
#: checked to be a snapshot of that version) into a version-``n + 1`` document. Version 1 is
#: the first; when version 2 arrives, add ``MIGRATIONS[1]`` and raise `SNAPSHOT_VERSION`.
MIGRATIONS: Final[dict[int, Callable[[Document], Document]]] = {}


class SnapshotError(ValueError):
    """A snapshot that cannot be read, naming the first bad field.

    Attributes
    ----------
    field : str or None
        Dotted path of the bad field (``"cycle.kinase_km"``, ``"units.time"``,
        ``"view.series[2]"``); None when the whole file is at fault (not JSON, too large, ...).
    problem : str
        What is wrong and what is allowed.
    source : str or None
        The file (or other origin) being read, if known.
    """

    def __init__(self, field: str | None, problem: str, source: str | None = None) -> None:
        self.field = field
        self.problem = problem
        self.source = source
        parts = [part for part in (source, field) if part]
        super().__init__(": ".join([*parts, problem]))

    def __reduce__(self) -> tuple[Any, ...]:
        return (type(self), (self.field, self.problem, self.source))

    def with_source(self, source: str | None) -> SnapshotError:
        """Return the same error attributed to `source`."""
        return type(self)(self.field, self.problem, source)


def _fail(field: str | None, problem: str) -> NoReturn:
    raise SnapshotError(field, problem)


_describe = describe_json_value


# --- field checks (shared by the loader and the Snapshot constructor) ------------------------


def _check_text(field: str, value: Any) -> str:
    if not isinstance(value, str):
        _fail(field, f"must be a string; got {_describe(value)}")
    _check_encodable(field, value)
    return value


def _check_encodable(field: str, value: str) -> None:
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        bad = value[exc.start]
        _fail(field, f"contains the unpaired surrogate U+{ord(bad):04X}, which is not text")


def _check_created(field: str, value: Any) -> str:
    if not isinstance(value, str):
        _fail(field, f"must be an ISO 8601 date or date-time string; got {_describe(value)}")
    if not _ISO_8601.fullmatch(value):
        _fail(
            field,
            'must be an ISO 8601 date or date-time such as "2025-01-15" or '
            f'"2025-01-15T09:30:00+00:00"; got {_describe(value)}',
        )
    try:
        datetime.fromisoformat(value)
    except ValueError:
        _fail(field, f"is not a real calendar date or time; got {_describe(value)}")
    return value


def _check_choice(field: str, value: Any, choices: tuple[str, ...]) -> str:
    if not isinstance(value, str) or value not in choices:
        known = ", ".join(f'"{c}"' for c in choices)
        _fail(field, f"must be one of {known}; got {_describe(value)}")
    return value


def _check_positive(field: str, key: str, value: Any) -> float:
    allowed = f"a finite number > 0 {CYCLE_UNITS[key]}"
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        _fail(field, f"must be {allowed}; got {_describe(value)}")
    try:
        number = float(value)
    except OverflowError:  # an integer literal with hundreds of digits
        number = math.inf
    if not math.isfinite(number):
        _fail(field, f"must be {allowed}; got {number!r} (too large for a 64-bit float)")
    if number <= 0.0:
        _fail(field, f"must be {allowed}; got {_describe(value)}")
    return number


def _check_json_value(field: str, value: Any) -> Any:
    """Return a deep copy of a JSON-compatible value (lists for tuples), or raise."""
    if value is None or isinstance(value, bool):
        return value
    if isinstance(value, str):
        _check_encodable(field, value)
        return value
    if isinstance(value, numbers.Integral):
        return int(value)
    if isinstance(value, numbers.Real):
        number = float(value)
        if not math.isfinite(number):
            _fail(field, f"must be a finite number (JSON has no NaN or infinity); got {number!r}")
        return number
    if isinstance(value, Mapping):
        copy: dict[str, Any] = {}
        for key, item in value.items():
            if not isinstance(key, str):
                _fail(field, f"object keys must be strings; got {key!r}")
            _check_encodable(f"{field}.{key}", key)
            copy[key] = _check_json_value(f"{field}.{key}", item)
        return copy
    if isinstance(value, list | tuple):
        return [_check_json_value(f"{field}[{i}]", item) for i, item in enumerate(value)]
    _fail(
        field,
        f"must be a JSON value (object, list, string, number, boolean or null); "
        f"got {_describe(value)}",
    )


def _check_extras(extras: Any) -> dict[str, Any]:
    if not isinstance(extras, Mapping):
        _fail("extras", f"must be a mapping of top-level blocks; got {_describe(extras)}")
    checked: dict[str, Any] = {}
    for key, value in extras.items():
        if not isinstance(key, str):
            _fail("extras", f"block names must be strings; got {key!r}")
        if key in RESERVED_KEYS:
            _fail(key, "is a key of the snapshot format, not an extra block")
        _check_encodable(key, key)
        checked[key] = _check_json_value(key, value)
    return checked


def _utc_now() -> str:
    return datetime.now(UTC).replace(microsecond=0).isoformat()


# --- the snapshot object ---------------------------------------------------------------------


@dataclass(frozen=True)
class Snapshot:
    """One saved cycle: validated parameters, the model and readout to use, and annotations.

    Parameters
    ----------
    cycle : Cycle
        The cycle parameters (µM, 1/s, 1/(µM·s)).
    model : {"quasi_steady", "mass_action"}
        Model the snapshot is meant to be evaluated with.
    readout : {"free_modified", "total_modified"}
        Readout the snapshot is meant to be evaluated with.
    title, notes : str
        Free text.
    created : str
        ISO 8601 date or date-time; defaults to now (UTC, whole seconds).
    extras : mapping
        Further top-level blocks (view settings, pinned comparisons, ...) kept verbatim on a
        round trip. Values must be JSON values; names must not be format keys. Stored as a
        read-only view of a private copy.

    Raises
    ------
    SnapshotError
        A field is invalid (a `ValueError`; ``.field`` names it).

    Examples
    --------
    >>> from hairtrigger import Cycle
    >>> c = Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.1,
    ...           kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0,
    ...           phosphatase_km=0.1, phosphatase_kon=100.0)
    >>> s = Snapshot(c, title="demo", created="2025-01-15")
    >>> loads_snapshot(dumps_snapshot(s)) == s
    True
    """

    cycle: Cycle
    model: str = "quasi_steady"
    readout: str = "total_modified"
    title: str = ""
    notes: str = ""
    created: str = field(default_factory=_utc_now)
    extras: Mapping[str, Any] = field(default_factory=dict, hash=False)

    def __post_init__(self) -> None:
        if not isinstance(self.cycle, Cycle):
            _fail("cycle", f"must be a hairtrigger.Cycle; got {type(self.cycle).__name__}")
        _check_choice("model", self.model, MODELS)
        _check_choice("readout", self.readout, READOUTS)
        _check_text("title", self.title)
        _check_text("notes", self.notes)
        _check_created("created", self.created)
        object.__setattr__(self, "extras", types.MappingProxyType(_check_extras(self.extras)))

    def replace(self, **changes: Any) -> Snapshot:
        """Return a copy with some fields changed (validated again)."""
        return dataclasses.replace(self, **changes)

    def __reduce__(self) -> tuple[Any, ...]:
        # The read-only extras view cannot be pickled itself (Dask workers, deepcopy).
        fields = (self.cycle, self.model, self.readout, self.title, self.notes, self.created)
        return (type(self), (*fields, dict(self.extras)))


# --- dict <-> Snapshot -----------------------------------------------------------------------


def snapshot_to_dict(snapshot: Snapshot) -> Document:
    """Return the JSON document of `snapshot`: format keys in contract order, then extras sorted.

    Cycle keys follow `hairtrigger.core.params.CYCLE_KEYS`; the result is a fresh deep copy.
    """
    if not isinstance(snapshot, Snapshot):
        msg = f"`snapshot` must be a hairtrigger Snapshot; got {type(snapshot).__name__}"
        raise TypeError(msg)
    document: Document = {
        "format": SNAPSHOT_FORMAT,
        "version": SNAPSHOT_VERSION,
        "title": snapshot.title,
        "notes": snapshot.notes,
        "created": snapshot.created,
        "model": snapshot.model,
        "readout": snapshot.readout,
        "units": dict(SNAPSHOT_UNITS),
        "cycle": {key: getattr(snapshot.cycle, key) for key in CYCLE_KEYS},
    }
    for key in sorted(snapshot.extras):
        document[key] = _check_json_value(key, snapshot.extras[key])
    return document


def _require(document: Mapping[str, Any], key: str, prefix: str = "") -> Any:
    if key not in document:
        _fail(prefix + key, "missing (required)")
    return document[key]


def _check_format(document: Mapping[str, Any]) -> None:
    if "format" not in document:
        _fail(
            "format",
            f'missing; not a hairtrigger snapshot (expected "format": "{SNAPSHOT_FORMAT}")',
        )
    if document["format"] != SNAPSHOT_FORMAT:
        _fail("format", f'must be "{SNAPSHOT_FORMAT}"; got {_describe(document["format"])}')


def _check_version(document: Mapping[str, Any]) -> int:
    value = _require(document, "version")
    # JSON Schema counts 1.0 as an integer; so do we, so that the two agree.
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        _fail("version", f"must be an integer; got {_describe(value)}")
    if isinstance(value, numbers.Integral):
        version = int(value)
    else:
        number = float(value)
        if not (math.isfinite(number) and number.is_integer()):
            _fail("version", f"must be an integer; got {_describe(value)}")
        version = int(number)
    if version > SNAPSHOT_VERSION:
        _fail(
            "version",
            f"written by a newer hairtrigger; version {version} > {SNAPSHOT_VERSION} "
            "(upgrade hairtrigger to read this file)",
        )
    if version < OLDEST_VERSION:
        _fail(
            "version",
            f"unknown snapshot version {version}; this hairtrigger reads versions "
            f"{OLDEST_VERSION} to {SNAPSHOT_VERSION}",
        )
    return version


def _migrate(document: Document, version: int) -> Document:
    """Upgrade a document step by step to `SNAPSHOT_VERSION`."""
    while version < SNAPSHOT_VERSION:
        step = MIGRATIONS.get(version)
        if step is None:
            _fail("version", f"no upgrade from snapshot version {version} is available")
        document = step(dict(document))
        version += 1
        document["version"] = version
    return document


def _check_units(document: Mapping[str, Any]) -> None:
    units = _require(document, "units")
    expected = json.dumps(dict(SNAPSHOT_UNITS))
    if not isinstance(units, Mapping):
        _fail("units", f"must be the object {expected}; got {_describe(units)}")
    for kind, unit in SNAPSHOT_UNITS.items():
        value = _require(units, kind, "units.")
        if value != unit:
            _fail(
                f"units.{kind}",
                f'only "{unit}" is supported; got {_describe(value)} ({_UNIT_HINTS[kind]})',
            )
    for kind in units:
        if kind not in SNAPSHOT_UNITS:
            _fail(f"units.{kind}", f"unknown kind of unit (known: {', '.join(SNAPSHOT_UNITS)})")


def _check_cycle(document: Mapping[str, Any]) -> Cycle:
    block = _require(document, "cycle")
    if not isinstance(block, Mapping):
        _fail(
            "cycle",
            f"must be an object with the keys {', '.join(CYCLE_KEYS)}; got {_describe(block)}",
        )
    unknown = [key for key in block if key not in CYCLE_KEYS]
    values: dict[str, float] = {}
    for key in CYCLE_KEYS:
        if key not in block:
            close = difflib.get_close_matches(key, [str(k) for k in unknown], n=1)
            hint = f' (is "{close[0]}" a misspelling?)' if close else ""
            _fail(f"cycle.{key}", f"missing (required){hint}")
        values[key] = _check_positive(f"cycle.{key}", key, block[key])
    if unknown:
        key = unknown[0]
        close = difflib.get_close_matches(str(key), CYCLE_KEYS, n=1)
        hint = f'did you mean "{close[0]}"? ' if close else ""
        _fail(f"cycle.{key}", f"unknown cycle parameter; {hint}known: {', '.join(CYCLE_KEYS)}")
    return Cycle(**values)


def snapshot_from_dict(document: Mapping[str, Any]) -> Snapshot:
    """Validate a parsed snapshot document and return it as a `Snapshot`.

    Checks run in the order the keys are written (``format``, ``version``, ``title`` ...,
    ``cycle``, then extra blocks), so the error names the first bad field. Older versions are
    upgraded through `MIGRATIONS` first.

    Raises
    ------
    SnapshotError
        Naming the first bad field.
    """
    try:
        if not isinstance(document, Mapping):
            _fail(None, f"the top level must be a JSON object; got {_describe(document)}")
        _check_format(document)
        version = _check_version(document)
        upgraded = _migrate(dict(document), version)
        title = _check_text("title", _require(upgraded, "title"))
        notes = _check_text("notes", _require(upgraded, "notes"))
        created = _check_created("created", _require(upgraded, "created"))
        model = _check_choice("model", _require(upgraded, "model"), MODELS)
        readout = _check_choice("readout", _require(upgraded, "readout"), READOUTS)
        _check_units(upgraded)
        cycle = _check_cycle(upgraded)
        extras = {key: value for key, value in upgraded.items() if key not in RESERVED_KEYS}
        return Snapshot(cycle, model, readout, title, notes, created, extras)
    except RecursionError:
        raise SnapshotError(None, "nested too deeply to be a snapshot") from None


# --- text <-> Snapshot -----------------------------------------------------------------------


def _too_large(size: int) -> NoReturn:
    _fail(None, f"{size} bytes is over the {MAX_SNAPSHOT_BYTES}-byte limit for a snapshot file")


def loads_snapshot(
    text: str | bytes | bytearray | memoryview, source: str | None = None
) -> Snapshot:
    """Read a snapshot from JSON text or UTF-8 bytes (for example a widget upload).

    Parameters
    ----------
    text : str or bytes-like
        The file content. Bytes must be UTF-8 (a leading byte-order mark is tolerated).
    source : str, optional
        Name used in error messages (a file name).

    Returns
    -------
    Snapshot

    Raises
    ------
    SnapshotError
        Too large, not UTF-8, not JSON (with line and column), or naming the first bad field.
    """
    try:
        if isinstance(text, str):
            if len(text) > MAX_SNAPSHOT_BYTES:
                _too_large(len(text.encode("utf-8", "surrogatepass")))
            decoded = text.removeprefix("\ufeff")
        elif isinstance(text, bytes | bytearray | memoryview):
            data = bytes(text)
            if len(data) > MAX_SNAPSHOT_BYTES:
                _too_large(len(data))
            try:
                decoded = decode_utf8(data)
            except JSONRefusal as exc:
                _fail(None, str(exc))
        else:
            msg = f"`text` must be str or bytes; got {type(text).__name__}"
            raise TypeError(msg)
        if not decoded.strip():
            _fail(None, "the file is empty; a snapshot is a JSON object")
        try:
            document = parse_strict_json(decoded)
        except json.JSONDecodeError as exc:
            _fail(None, f"not valid JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}")
        except JSONRefusal as exc:
            _fail(None, str(exc))
        except RecursionError:
            _fail(None, "not a snapshot: the JSON is nested too deeply")
        except ValueError as exc:  # e.g. an integer with more digits than Python converts
            _fail(None, f"not valid JSON for a snapshot: {str(exc).splitlines()[0]}")
        return snapshot_from_dict(document)
    except SnapshotError as exc:
        raise exc.with_source(source) from None


def dumps_snapshot(snapshot: Snapshot) -> str:
    """Return the snapshot as JSON text (indent 2, UTF-8-ready, newline-terminated).

    Floats are written by ``repr``, so they read back bit for bit; NaN and infinity cannot
    occur (they are refused on the way in, and ``allow_nan=False`` guards the way out).
    """
    return (
        json.dumps(snapshot_to_dict(snapshot), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    )


# --- files -----------------------------------------------------------------------------------


def load_snapshot(path: str | os.PathLike[str]) -> Snapshot:
    """Read and validate a snapshot file.

    Parameters
    ----------
    path : str or os.PathLike
        A ``.json`` snapshot file.

    Returns
    -------
    Snapshot
        With ``.cycle``, ``.model``, ``.readout``, ``.title``, ``.notes``, ``.created`` and
        ``.extras``.

    Raises
    ------
    SnapshotError
        The file is a folder, too large, not UTF-8 JSON, or a field is invalid; the message
        starts with the path and the field.
    OSError
        The file does not exist or cannot be read.
    """
    file = Path(os.fspath(path))
    try:
        data = read_bounded(file, MAX_SNAPSHOT_BYTES, "snapshot file")
    except JSONRefusal as exc:
        raise SnapshotError(None, str(exc), str(file)) from None
    return loads_snapshot(data, source=str(file))


def save_snapshot(
    snapshot: Snapshot, path: str | os.PathLike[str], overwrite: bool = False
) -> Path:
    """Write `snapshot` to `path` atomically.

    The whole text is produced before the disk is touched; it is written to a temporary file
    in the same folder, flushed, and renamed over the target in one step, so a failure leaves
    no partial file and an existing file unchanged.

    Parameters
    ----------
    snapshot : Snapshot
        What to save.
    path : str or os.PathLike
        Target file; its folder must exist.
    overwrite : bool
        Replace an existing file. If False (the default) an existing file is refused.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    FileExistsError
        `path` exists and `overwrite` is False.
    OSError
        The folder does not exist or writing failed.
    """
    text = dumps_snapshot(snapshot)
    return atomic_write(path, text.encode("utf-8"), overwrite=overwrite)


def snapshot_schema() -> dict[str, Any]:
    """Return the JSON Schema (draft 2020-12) of the current snapshot version.

    It states the same rules as the loader for tools outside hairtrigger; the loader does not
    use it (its own checks give better messages) and does not need `jsonschema`.
    """
    text = resources.files("hairtrigger.io").joinpath("schema.json").read_text(encoding="utf-8")
    schema: dict[str, Any] = json.loads(text)
    return schema
