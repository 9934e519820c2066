"""Invented example data shipped with the package (demonstrations only, never check values).

``invented_kinase_titration.csv``
    An invented titration of an engineered kinase (0-200 nM) in a reconstituted cycle, read
    by a phospho-specific signal in arbitrary units, three replicates per dose. Generated from
    a quasi-steady cycle model plus noise; not a measurement.
"""

from __future__ import annotations

from importlib.resources import files
from pathlib import Path

#: Names of the example files.
EXAMPLE_FILES = ("invented_kinase_titration.csv",)


def example_path(name: str) -> Path:
    """Return the path of an example file (one of `EXAMPLE_FILES`)."""
    if name not in EXAMPLE_FILES:
        msg = f"`name` must be one of {', '.join(EXAMPLE_FILES)}; got {name!r}"
        raise ValueError(msg)
    return Path(str(files(__name__) / name))
