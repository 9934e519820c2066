"""Input and output helpers shared by the sub-commands: snapshot arguments, safe writing."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from ..core.params import MODELS, READOUTS
from ..io.examples import example_path, list_examples
from ..io.files import atomic_write
from ..io.snapshot import Snapshot, load_snapshot
from . import UserError

#: ``FILE`` arguments starting with this name a bundled example instead of a file.
EXAMPLE_PREFIX = "example:"


def add_snapshot_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the ``FILE`` argument and the ``--model``/``--readout`` overrides."""
    parser.add_argument(
        "file",
        metavar="FILE",
        help=f"snapshot file (.json), or {EXAMPLE_PREFIX}NAME for a bundled example "
        f"({', '.join(list_examples())})",
    )
    parser.add_argument(
        "--model",
        choices=MODELS,
        default=None,
        help="model to use instead of the file's: complexes neglected or kept",
    )
    parser.add_argument(
        "--readout",
        choices=READOUTS,
        default=None,
        help="readout to use instead of the file's: free modified substrate, or modified "
        "substrate including the phosphatase complex",
    )


def read_snapshot(path: str) -> Snapshot:
    """Load a snapshot named on the command line; file-system errors become one clean line.

    ``example:NAME`` loads the bundled example NAME (`hairtrigger.io.list_examples`).
    """
    if path.startswith(EXAMPLE_PREFIX):
        try:
            return load_snapshot(example_path(path.removeprefix(EXAMPLE_PREFIX)))
        except ValueError as exc:
            raise UserError(str(exc)) from None
    try:
        return load_snapshot(path)
    except FileNotFoundError:
        raise UserError(f"{path}: no such file") from None
    except PermissionError:
        raise UserError(f"{path}: permission denied") from None
    except IsADirectoryError:
        raise UserError(f"{path}: is a folder, not a snapshot file") from None
    except OSError as exc:
        raise UserError(f"{path}: cannot be read ({exc.strerror or exc})") from None


def check_output_path(out: str, force: bool, inputs: tuple[str, ...] = ()) -> None:
    """Refuse an output path before any work is done (existing file, folder, missing folder).

    `atomic_write` checks again when writing; checking first means a refused command costs
    nothing and says exactly what to do.
    """
    target = Path(out)
    if target.is_dir():
        raise UserError(f"{out}: is a folder; give a file name")
    if not target.parent.is_dir():
        raise UserError(f"{out}: the folder {str(target.parent)!r} does not exist")
    exists = target.exists() or target.is_symlink()
    if exists and not force:
        raise UserError(f"{out}: file exists; pass --force to replace it")
    if exists:
        for source in inputs:
            if os.path.exists(source) and os.path.samefile(source, target):
                raise UserError(f"{out}: is the input file {source}; refusing to replace it")


def write_output(text: str, out: str | None, force: bool) -> None:
    """Write `text` to standard output, or atomically to the file `out`."""
    if out is None:
        try:
            sys.stdout.write(text)
            sys.stdout.flush()
        except BrokenPipeError:
            # The reader stopped early (``| head``): not an error; silence the final flush.
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        return
    try:
        atomic_write(out, text, overwrite=force)
    except FileExistsError:
        raise UserError(f"{out}: file exists; pass --force to replace it") from None
    except OSError as exc:
        raise UserError(f"{out}: cannot be written ({exc.strerror or exc})") from None
