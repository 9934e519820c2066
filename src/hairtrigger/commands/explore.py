"""``hairtrigger explore [SNAPSHOT]``: open the explorer notebook in JupyterLab (or Voila).

From a source checkout the repository's ``notebooks/explore.ipynb`` opens in place. From an
installed wheel the notebook shipped as package data is copied into a working folder first
(``./hairtrigger-explore`` unless ``--dir`` says otherwise), so the installed package is never
edited and a user's changes to an earlier copy are kept. A snapshot given on the command line is
checked before anything starts and handed to the notebook through ``HAIRTRIGGER_SNAPSHOT``.

This module imports neither the widget stack nor Jupyter: it only builds a command line and
runs it (``--dry-run`` prints it instead).
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import shlex
import shutil
import subprocess
import sys
from importlib import resources
from pathlib import Path
from typing import Final

from . import UserError

#: Environment variable through which the notebook receives the snapshot to open.
SNAPSHOT_VARIABLE: Final[str] = "HAIRTRIGGER_SNAPSHOT"

#: Name of the explorer notebook (in the repository's ``notebooks/`` and in the wheel).
NOTEBOOK_NAME: Final[str] = "explore.ipynb"

#: Default working folder for the copy made from an installed package.
DEFAULT_DIR: Final[str] = "hairtrigger-explore"


def source_notebook() -> Path | None:
    """The repository's notebook when running from a source checkout, else None."""
    package = Path(__file__).resolve().parents[1]  # src/hairtrigger
    candidate = package.parent.parent / "notebooks" / NOTEBOOK_NAME
    if package.parent.name == "src" and candidate.is_file():
        return candidate
    return None


def packaged_notebook() -> Path | None:
    """The notebook shipped inside the installed package (wheel), else None."""
    try:
        resource = resources.files("hairtrigger") / "_notebooks" / NOTEBOOK_NAME
    except ModuleNotFoundError:  # pragma: no cover - hairtrigger is importable here
        return None
    path = Path(str(resource))
    return path if path.is_file() else None


def notebook_to_open(workdir: Path | None, fresh: bool, dry_run: bool = False) -> tuple[Path, str]:
    """Choose the notebook: the source checkout's, or a working copy of the packaged one.

    Parameters
    ----------
    workdir : Path or None
        Folder for a copy (None: the source notebook in place, or ``./hairtrigger-explore``).
    fresh : bool
        Replace an existing copy.
    dry_run : bool
        Decide, but copy nothing.

    Returns
    -------
    path : Path
        The notebook to open.
    note : str
        What was (or would be) done, for the user.
    """
    source = source_notebook()
    if source is not None and workdir is None:
        return source, f"opening {source} (source checkout)"
    original = source or packaged_notebook()
    if original is None:
        msg = (
            f"the explorer notebook {NOTEBOOK_NAME} is missing from this installation; "
            "reinstall hairtrigger"
        )
        raise UserError(msg)
    folder = (workdir or Path(DEFAULT_DIR)).expanduser()
    target = folder / NOTEBOOK_NAME
    if target.exists() and not fresh:
        return target, f"opening your copy {target} (--fresh replaces it with the original)"
    if dry_run:
        return target, f"would copy the explorer notebook to {target}"
    folder.mkdir(parents=True, exist_ok=True)
    shutil.copyfile(original, target)
    return target, f"copied the explorer notebook to {target}"


def check_snapshot(argument: str) -> Path:
    """Validate the snapshot (a file, or ``example:NAME``) before starting a server.

    Returns the file's absolute path; a bad or missing file is a one-line error.
    """
    from ..io.examples import example_path
    from ._files import EXAMPLE_PREFIX, read_snapshot

    read_snapshot(argument)  # UserError / SnapshotError (a ValueError): reported by the CLI
    if argument.startswith(EXAMPLE_PREFIX):
        return example_path(argument.removeprefix(EXAMPLE_PREFIX)).resolve()
    return Path(argument).expanduser().resolve()


def build_command(notebook: Path, app: str, port: int | None, browser: bool) -> list[str]:
    """The server command line (loopback only; ``--allow-root`` when running as root)."""
    module = {"lab": "jupyterlab", "voila": "voila"}[app]
    if importlib.util.find_spec(module) is None:
        msg = f"{module} is not installed; install the app extra: pip install 'hairtrigger[app]'"
        raise UserError(msg)
    command = [sys.executable, "-m", module]
    if app == "lab":
        command += ["--ip=127.0.0.1", f"--ServerApp.root_dir={notebook.parent}"]
        if hasattr(os, "geteuid") and os.geteuid() == 0:
            command.append("--allow-root")
        if not browser:
            command.append("--no-browser")
        if port is not None:
            command.append(f"--port={port}")
        command.append(str(notebook))
    else:
        command += [str(notebook), "--Voila.ip=127.0.0.1"]
        if not browser:
            command.append("--no-browser")
        if port is not None:
            command.append(f"--port={port}")
    return command


def run(args: argparse.Namespace) -> int:
    """Start the server on the explorer notebook (or print the command with ``--dry-run``)."""
    if args.port is not None and not 1 <= args.port <= 65535:
        msg = f"`--port` must be between 1 and 65535; got {args.port}"
        raise UserError(msg)
    env = dict(os.environ)
    if args.snapshot is not None:
        env[SNAPSHOT_VARIABLE] = str(check_snapshot(args.snapshot))
    workdir = Path(args.dir) if args.dir is not None else None
    notebook, note = notebook_to_open(workdir, args.fresh, dry_run=args.dry_run)
    command = build_command(notebook.resolve(), args.app, args.port, not args.no_browser)
    if args.dry_run:
        print(f"# {note}")
        if args.snapshot is not None:
            print(f"{SNAPSHOT_VARIABLE}={shlex.quote(env[SNAPSHOT_VARIABLE])}")
        print(shlex.join(command))
        return 0
    print(f"hairtrigger explore: {note}", file=sys.stderr)
    print("hairtrigger explore: stop the server with Ctrl+C", file=sys.stderr)
    return subprocess.call(command, env=env)


def register(subparsers: argparse._SubParsersAction) -> None:  # type: ignore[type-arg]
    """Add the ``explore`` sub-command."""
    parser = subparsers.add_parser(
        "explore",
        help="open the interactive explorer notebook in JupyterLab (or Voila)",
        description=(
            "Open the explorer notebook (all panels on one shared state) in JupyterLab, on "
            "127.0.0.1. From a source checkout the repository's notebooks/explore.ipynb opens "
            "in place; from an installed package a copy is made in a working folder. Needs "
            "the 'app' extra: pip install 'hairtrigger[app]'."
        ),
    )
    parser.add_argument(
        "snapshot",
        nargs="?",
        metavar="SNAPSHOT",
        help="a snapshot file (.json), or example:NAME for a bundled example, "
        "to open in the explorer (default: the notebook's own scenario)",
    )
    parser.add_argument(
        "--app",
        choices=("lab", "voila"),
        default="lab",
        help="JupyterLab (default) or Voila (the notebook as an app)",
    )
    parser.add_argument(
        "--dir",
        metavar="DIR",
        help=f"working folder for the notebook copy (default ./{DEFAULT_DIR} "
        "when installed; forces a copy from a source checkout)",
    )
    parser.add_argument(
        "--fresh", action="store_true", help="replace an existing copy in the working folder"
    )
    parser.add_argument("--port", type=int, metavar="PORT", help="server port")
    parser.add_argument("--no-browser", action="store_true", help="do not open a browser")
    parser.add_argument(
        "--dry-run", action="store_true", help="print the command that would run, and exit"
    )
    parser.set_defaults(func=run)
