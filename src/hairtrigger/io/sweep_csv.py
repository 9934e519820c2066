"""Sweep tables as CSV: one row per sample, the varied keys then the evaluated quantities.

Numbers are written in Python's shortest round-trip form (``repr``), so a table read back gives
the same floats, and two sweeps with the same numbers give byte-identical files. A quantity that
does not exist at a sample (NaN in the core) is an empty field. The file is streamed to a
temporary file beside the target and renamed in one step: it is complete or absent, and an
existing file is never half-overwritten.
"""

from __future__ import annotations

import contextlib
import errno
import math
import os
import secrets
from collections.abc import Iterable, Sequence
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

__all__ = ["check_output_path", "format_rows", "write_table_csv"]

#: Rows formatted and written per batch (bounds memory for million-row tables).
_BATCH_ROWS = 20_000


def check_output_path(path: str | os.PathLike[str], overwrite: bool = False) -> Path:
    """Refuse a target that cannot be written, before any work is spent on it.

    Raises
    ------
    FileExistsError
        The file exists and `overwrite` is False.
    IsADirectoryError, FileNotFoundError
        The target is a folder, or its folder does not exist.
    """
    target = Path(os.fspath(path))
    if target.is_dir():
        raise IsADirectoryError(errno.EISDIR, "is a folder, not a file", str(target))
    if not overwrite and (target.exists() or target.is_symlink()):
        msg = f"{target}: file exists; pass overwrite=True (--force) to replace it"
        raise FileExistsError(msg)
    if not target.parent.is_dir():
        raise FileNotFoundError(errno.ENOENT, "folder does not exist", str(target.parent))
    return target


def _cell(value: float) -> str:
    return repr(value) if math.isfinite(value) else ""


def format_rows(table: NDArray[np.float64]) -> Iterable[str]:
    """CSV lines (with newline) of a 2-D float table."""
    for start in range(0, table.shape[0], _BATCH_ROWS):
        block = table[start : start + _BATCH_ROWS].tolist()
        yield "".join(",".join(map(_cell, row)) + "\n" for row in block)


def write_table_csv(
    path: str | os.PathLike[str],
    columns: Sequence[str],
    table: NDArray[np.float64],
    overwrite: bool = False,
) -> Path:
    """Write a header and the rows of `table` to `path` atomically.

    Parameters
    ----------
    path : str or os.PathLike
        Target; its folder must exist.
    columns : sequence of str
        Header names, one per column of `table`.
    table : ndarray, shape (rows, columns)
        Values; NaN becomes an empty field.
    overwrite : bool
        Replace an existing file (default: refuse).

    Returns
    -------
    pathlib.Path
    """
    data = np.asarray(table, dtype=float)
    if data.ndim != 2 or data.shape[1] != len(columns):
        msg = f"`table` must have shape (rows, {len(columns)})"
        raise ValueError(msg)
    target = check_output_path(path, overwrite)
    if overwrite and target.is_symlink():
        target = Path(os.path.realpath(target))
    temporary = target.parent / f".{target.name}.{secrets.token_hex(6)}.tmp"
    try:
        with open(temporary, "x", encoding="utf-8", newline="") as handle:
            handle.write(",".join(columns) + "\n")
            for chunk in format_rows(data):
                handle.write(chunk)
            handle.flush()
            os.fsync(handle.fileno())
        if overwrite:
            os.replace(temporary, target)
        else:
            try:
                os.link(temporary, target)  # fails atomically if the name was taken meanwhile
            except FileExistsError:
                msg = f"{target}: file exists; pass overwrite=True (--force) to replace it"
                raise FileExistsError(msg) from None
            except OSError:
                if target.exists():
                    raise
                os.replace(temporary, target)
    finally:
        with contextlib.suppress(OSError):
            os.unlink(temporary)
    return target
