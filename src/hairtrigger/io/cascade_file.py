"""Cascade files: the levels of a cascade of covalent-modification cycles, as validated JSON.

The format (DESIGN.md §4)::

    {
      "format": "hairtrigger.cascade",
      "version": 1,
      "title": "...",                       (optional)
      "notes": "...",                       (optional)
      "units": {"concentration": "uM", "time": "s"},   (optional; only these units)
      "input_enzyme_total": 0.0001,
      "levels": [
        {"name": "...", "sites": 1 | 2, "substrate_total": ..., "phosphatase_total": ...,
         "kinase": {"kon": ..., "koff": ..., "kcat": ...},
         "phosphatase": {"kon": ..., "koff": ..., "kcat": ...}},
        ...
      ]
    }

Level 1 is modified by the input enzyme, level i + 1 by the fully modified form of level i; the
constants are the same at every site of a level. Loading checks everything and raises
`CascadeFileError` naming the first bad field as a path (``levels[1].kinase.koff: ...``).
Saving produces the whole text first and writes it atomically.
"""

from __future__ import annotations

import json
import math
import numbers
import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any, Final, NoReturn

from ..core.cascade import Cascade, CascadeLevel, EnzymeConstants
from ._strict_json import (
    JSONRefusal,
    decode_utf8,
    describe_json_value,
    parse_strict_json,
    read_bounded,
)
from .files import atomic_write

__all__ = [
    "CASCADE_FORMAT",
    "CASCADE_EXAMPLES_DIR",
    "CASCADE_VERSION",
    "CascadeFileError",
    "cascade_example_path",
    "cascade_from_dict",
    "cascade_to_dict",
    "dumps_cascade",
    "load_cascade",
    "list_cascade_examples",
    "loads_cascade",
    "save_cascade",
]

CASCADE_FORMAT: Final[str] = "hairtrigger.cascade"
CASCADE_VERSION: Final[int] = 1
#: Site counts the file format allows (the core handles any number; the format fixes 1 or 2).
FILE_SITES: Final[tuple[int, ...]] = (1, 2)
#: A cascade file is a few kilobytes; anything far larger is refused before reading.
MAX_CASCADE_BYTES: Final[int] = 1 << 20

#: Bundled example cascades (invented scenarios), kept apart from the example snapshots.
CASCADE_EXAMPLES_DIR: Final[Path] = Path(__file__).resolve().parent.parent / "examples" / "cascades"

_TOP_KEYS: Final[tuple[str, ...]] = (
    "format",
    "version",
    "title",
    "notes",
    "units",
    "input_enzyme_total",
    "levels",
)
_LEVEL_KEYS: Final[tuple[str, ...]] = (
    "name",
    "sites",
    "substrate_total",
    "phosphatase_total",
    "kinase",
    "phosphatase",
)
_ENZYME_KEYS: Final[tuple[str, ...]] = ("kon", "koff", "kcat")
_ENZYME_UNITS: Final[dict[str, str]] = {"kon": "1/(uM*s)", "koff": "1/s", "kcat": "1/s"}
_UNITS: Final[dict[str, str]] = {"concentration": "uM", "time": "s"}


class CascadeFileError(ValueError):
    """A cascade file that cannot be read, naming the first bad field.

    Attributes
    ----------
    field : str or None
        Path of the bad field (``"levels[1].kinase.koff"``); None for the whole file.
    problem : str
        What is wrong and what is allowed.
    source : str or None
        The file being read, if known.
    """

    def __init__(self, field: str | None, problem: str, source: str | None = None) -> None:
        self.field = field
        self.problem = problem
        self.source = source
        super().__init__(": ".join([p for p in (source, field) if p] + [problem]))

    def __reduce__(self) -> tuple[Any, ...]:
        return (type(self), (self.field, self.problem, self.source))


def _fail(field: str | None, problem: str) -> NoReturn:
    raise CascadeFileError(field, problem)


_describe = describe_json_value


def _number(field: str, value: Any, unit: str, *, allow_zero: bool = False) -> float:
    bound = "≥ 0" if allow_zero else "> 0"
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        _fail(field, f"must be a finite number {bound} {unit}; got {_describe(value)}")
    number = float(value)
    if not math.isfinite(number) or number < 0.0 or (number == 0.0 and not allow_zero):
        _fail(field, f"must be a finite number {bound} {unit}; got {_describe(value)}")
    return number


def _object(field: str, value: Any, keys: tuple[str, ...]) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        _fail(field, f"must be an object; got {_describe(value)}")
    for key in value:
        if key not in keys:
            _fail(f"{field}.{key}" if field else key, f"unknown key (known: {', '.join(keys)})")
    return value


def _require(document: Mapping[str, Any], key: str, field: str) -> Any:
    if key not in document:
        _fail(field, "is missing")
    return document[key]


def _enzyme(field: str, value: Any) -> EnzymeConstants:
    block = _object(field, value, _ENZYME_KEYS)
    numbers_ = {
        key: _number(
            f"{field}.{key}",
            _require(block, key, f"{field}.{key}"),
            _ENZYME_UNITS[key],
            allow_zero=key == "koff",
        )
        for key in _ENZYME_KEYS
    }
    return EnzymeConstants(**numbers_)


def _level(field: str, value: Any, seen: set[str]) -> CascadeLevel:
    block = _object(field, value, _LEVEL_KEYS)
    name = _require(block, "name", f"{field}.name")
    if not isinstance(name, str) or not name.strip():
        _fail(f"{field}.name", f"must be a non-empty string; got {_describe(name)}")
    if name in seen:
        _fail(
            f"{field}.name", f"{json.dumps(name)} is used by an earlier level; names must be unique"
        )
    seen.add(name)
    sites = _require(block, "sites", f"{field}.sites")
    if (
        isinstance(sites, bool)
        or not isinstance(sites, numbers.Integral)
        or sites not in FILE_SITES
    ):
        _fail(
            f"{field}.sites", f"must be 1 or 2 (sites modified in sequence); got {_describe(sites)}"
        )
    substrate = _number(
        f"{field}.substrate_total",
        _require(block, "substrate_total", f"{field}.substrate_total"),
        "uM",
    )
    phosphatase = _number(
        f"{field}.phosphatase_total",
        _require(block, "phosphatase_total", f"{field}.phosphatase_total"),
        "uM",
    )
    kinase = _enzyme(f"{field}.kinase", _require(block, "kinase", f"{field}.kinase"))
    pase = _enzyme(f"{field}.phosphatase", _require(block, "phosphatase", f"{field}.phosphatase"))
    return CascadeLevel(name, int(sites), substrate, phosphatase, kinase, pase)


def cascade_from_dict(document: Any) -> Cascade:
    """Validate a decoded cascade document and build the `Cascade`.

    Raises
    ------
    CascadeFileError
        Naming the first bad field.
    """
    if not isinstance(document, Mapping):
        _fail(None, f"a cascade file must hold a JSON object; got {_describe(document)}")
    fmt = _require(document, "format", "format")
    if fmt != CASCADE_FORMAT:
        hint = (
            " (this is a snapshot; the cascade command needs a cascade file)"
            if fmt == "hairtrigger.snapshot"
            else ""
        )
        _fail("format", f"must be {json.dumps(CASCADE_FORMAT)}; got {_describe(fmt)}{hint}")
    version = _require(document, "version", "version")
    if isinstance(version, bool) or not isinstance(version, numbers.Integral):
        _fail("version", f"must be a whole number; got {_describe(version)}")
    version = int(version)
    if version > CASCADE_VERSION:
        _fail(
            "version",
            f"is {version}, written by a newer hairtrigger (this one reads "
            f"{CASCADE_VERSION}); upgrade hairtrigger",
        )
    if version < 1:
        _fail("version", f"must be {CASCADE_VERSION}; got {version}")
    _object("", document, _TOP_KEYS)
    texts = {}
    for key in ("title", "notes"):
        value = document.get(key, "")
        if not isinstance(value, str):
            _fail(key, f"must be a string; got {_describe(value)}")
        texts[key] = value
    if "units" in document:
        units = _object("units", document["units"], tuple(_UNITS))
        for key, unit in _UNITS.items():
            got = _require(units, key, f"units.{key}")
            if got != unit:
                _fail(
                    f"units.{key}",
                    f"must be {json.dumps(unit)}; got {_describe(got)} (convert the values)",
                )
    total = _number(
        "input_enzyme_total",
        _require(document, "input_enzyme_total", "input_enzyme_total"),
        "uM",
        allow_zero=True,
    )
    levels = _require(document, "levels", "levels")
    if not isinstance(levels, list) or not levels:
        _fail("levels", f"must be a non-empty list of levels; got {_describe(levels)}")
    seen: set[str] = set()
    built = tuple(_level(f"levels[{i}]", level, seen) for i, level in enumerate(levels))
    return Cascade(total, built, texts["title"], texts["notes"])


def cascade_to_dict(cascade: Cascade) -> dict[str, Any]:
    """The cascade as the file writes it (keys in the format's order)."""
    if not isinstance(cascade, Cascade):
        msg = f"`cascade` must be a hairtrigger Cascade; got {type(cascade).__name__}"
        raise TypeError(msg)
    for i, level in enumerate(cascade.levels):
        if level.sites not in FILE_SITES:
            msg = f"`levels[{i}].sites` is {level.sites}; cascade files hold 1 or 2 sites per level"
            raise ValueError(msg)
    return {
        "format": CASCADE_FORMAT,
        "version": CASCADE_VERSION,
        "title": cascade.title,
        "notes": cascade.notes,
        "units": dict(_UNITS),
        "input_enzyme_total": cascade.input_enzyme_total,
        "levels": [level.as_dict() for level in cascade.levels],
    }


def loads_cascade(text: str | bytes, source: str | None = None) -> Cascade:
    """Parse and validate cascade JSON text."""
    try:
        try:
            document = parse_strict_json(decode_utf8(text) if isinstance(text, bytes) else text)
        except JSONRefusal as exc:
            _fail(None, str(exc))
        except json.JSONDecodeError as exc:
            _fail(None, f"is not valid JSON: {exc.msg} (line {exc.lineno}, column {exc.colno})")
        return cascade_from_dict(document)
    except CascadeFileError as exc:
        if source is None:
            raise
        raise CascadeFileError(exc.field, exc.problem, source) from None


def dumps_cascade(cascade: Cascade) -> str:
    """The file text of `cascade` (floats round-trip exactly; no NaN)."""
    return (
        json.dumps(cascade_to_dict(cascade), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    )


def load_cascade(path: str | os.PathLike[str]) -> Cascade:
    """Read and validate a cascade file.

    Raises
    ------
    CascadeFileError
        The file is too large, not UTF-8 JSON, or a field is invalid (the message names the
        file and the field).
    OSError
        The file does not exist or cannot be read.
    """
    file = Path(os.fspath(path))
    try:
        data = read_bounded(file, MAX_CASCADE_BYTES, "cascade file")
    except JSONRefusal as exc:
        raise CascadeFileError(None, str(exc), str(file)) from None
    return loads_cascade(data, source=str(file))


def save_cascade(cascade: Cascade, path: str | os.PathLike[str], overwrite: bool = False) -> Path:
    """Write `cascade` to `path` atomically (complete or not at all).

    Raises
    ------
    FileExistsError
        `path` exists and `overwrite` is False.
    ValueError
        A level has more than 2 sites (the file format holds 1 or 2).
    OSError
        The folder does not exist or writing failed; an existing file keeps its content.
    """
    return atomic_write(path, dumps_cascade(cascade), overwrite=overwrite)


def list_cascade_examples() -> list[str]:
    """Names of the bundled example cascades (without ``.json``), sorted."""
    return sorted(path.stem for path in CASCADE_EXAMPLES_DIR.glob("*.json"))


def cascade_example_path(name: str) -> Path:
    """File of the bundled example cascade `name` (with or without ``.json``).

    Raises
    ------
    ValueError
        No example has that name; the message lists those there are.

    Examples
    --------
    >>> cascade_example_path("tidepool_relay").name
    'tidepool_relay.json'
    """
    stem = str(name).removesuffix(".json")
    names = list_cascade_examples()
    if stem not in names:
        msg = f"no example cascade named `{name}`; available: {', '.join(names)}"
        raise ValueError(msg)
    return CASCADE_EXAMPLES_DIR / f"{stem}.json"
