"""Example snapshots shipped with hairtrigger (invented scenarios, not measured data)."""

from __future__ import annotations

import difflib
from pathlib import Path
from typing import Final

from .snapshot import Snapshot, load_snapshot

__all__ = ["EXAMPLES_DIR", "example_path", "list_examples", "load_example"]

#: Folder of the bundled example snapshots (package data).
EXAMPLES_DIR: Final[Path] = Path(__file__).resolve().parent.parent / "examples"


def list_examples() -> list[str]:
    """Return the names of the bundled example snapshots, sorted (without ``.json``)."""
    return sorted(path.stem for path in EXAMPLES_DIR.glob("*.json"))


def example_path(name: str) -> Path:
    """Return the file of the bundled example `name` (with or without ``.json``).

    Raises
    ------
    ValueError
        No example has that name; the message lists the names there are.

    Examples
    --------
    >>> example_path("scarce_enzyme_switch").name
    'scarce_enzyme_switch.json'
    """
    if not isinstance(name, str):
        msg = f"`name` must be a string; got {type(name).__name__}"
        raise TypeError(msg)
    stem = name.removesuffix(".json")
    names = list_examples()
    if stem not in names:
        close = difflib.get_close_matches(stem, names, n=1)
        hint = f'did you mean "{close[0]}"? ' if close else ""
        msg = f"no example snapshot named `{name}`; {hint}available: {', '.join(names)}"
        raise ValueError(msg)
    return EXAMPLES_DIR / f"{stem}.json"


def load_example(name: str) -> Snapshot:
    """Load the bundled example snapshot `name` (see `list_examples`)."""
    return load_snapshot(example_path(name))
