"""Strict JSON reading shared by the file formats (snapshots, cascades).

Python's json module accepts ``NaN``/``Infinity`` and silently keeps the last of duplicate keys;
our files refuse both. Problems are raised as `JSONRefusal` with a message; each format turns it
into its own error type with the field named.
"""

from __future__ import annotations

import json
import numbers
import stat
from collections.abc import Mapping
from pathlib import Path
from typing import Any, NoReturn


class JSONRefusal(Exception):
    """Input a hairtrigger file format refuses (message only; the caller adds the field)."""


def describe_json_value(value: Any) -> str:
    """Show a JSON value in a message the way it appears in the file, with its JSON type."""
    if value is None:
        return "null"
    if isinstance(value, bool):
        return f"{'true' if value else 'false'} (a boolean)"
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f"{json.dumps(shown, ensure_ascii=False)} (a string)"
    if isinstance(value, numbers.Integral):
        return repr(int(value))
    if isinstance(value, numbers.Real):
        return repr(float(value))
    if isinstance(value, numbers.Number):
        return repr(value)
    if isinstance(value, Mapping):
        return "an object"
    if isinstance(value, list | tuple):
        return "a list"
    return f"a {type(value).__name__}"


def _refuse_constant(token: str) -> NoReturn:
    # Python's json accepts these non-standard tokens by default; JSON itself does not.
    raise JSONRefusal(f"the token {token} is not valid JSON (numbers must be finite)")


def _refuse_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    result: dict[str, Any] = {}
    for key, value in pairs:
        if key in result:
            raise JSONRefusal(f'the key "{key}" appears twice in one object')
        result[key] = value
    return result


def parse_strict_json(text: str) -> Any:
    """Parse JSON refusing NaN/Infinity tokens and duplicate keys.

    Raises
    ------
    JSONRefusal
        A refused token or a duplicate key.
    json.JSONDecodeError
        The text is not JSON.
    """
    return json.loads(text, parse_constant=_refuse_constant, object_pairs_hook=_refuse_duplicates)


def decode_utf8(data: bytes) -> str:
    """Decode UTF-8 (a byte-order mark is tolerated); refuse UTF-16 and invalid bytes."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise JSONRefusal("the file is UTF-16 text; save it as UTF-8")
    try:
        return data.decode("utf-8-sig")  # tolerate the byte-order mark some editors write
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        msg = (
            f"not valid UTF-8 text: byte 0x{data[exc.start]:02x} at line {line} "
            f"(byte offset {exc.start})"
        )
        raise JSONRefusal(msg) from None


def read_bounded(path: Path, limit: int, kind: str) -> bytes:
    """Read at most `limit` bytes of a regular file, refusing larger files before reading.

    `kind` names the format in messages ("snapshot file"). OSError (missing file, no
    permission) propagates.
    """
    info = path.stat()
    if stat.S_ISDIR(info.st_mode):
        raise JSONRefusal(f"is a folder, not a {kind}")
    if not stat.S_ISREG(info.st_mode):
        raise JSONRefusal("is not a regular file")
    if info.st_size > limit:
        raise JSONRefusal(f"{info.st_size} bytes is over the {limit}-byte limit for a {kind}")
    with path.open("rb") as handle:
        data = handle.read(limit + 1)
    if len(data) > limit:  # the file grew after the size check
        raise JSONRefusal(f"over the {limit}-byte limit for a {kind}")
    return data
