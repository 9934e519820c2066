"""The ``hairtrigger`` command line: batch work over `hairtrigger.core` and `hairtrigger.io`.

Each sub-command lives in its own module under `hairtrigger.commands` and exposes
``register(subparsers)``, which adds its parser and sets ``func`` to a callable
``(args) -> int``. Errors the user can fix (bad files, bad values) are raised as `UserError`,
`ValueError` or `OSError` and printed as one line on standard error, never as a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence
from typing import Final, NoReturn

from . import __version__
from .commands import UserError

#: Sub-command modules, in the order shown by ``--help``.
COMMAND_MODULES: Final[tuple[str, ...]] = (
    "evaluate",
    "map",
    "timecourse",
    "sbml",
    "noise",
    "fit",
    "cascade",
    "sweep",
    "explore",
    "report",
    "app",
)


class _OneLineErrorParser(argparse.ArgumentParser):
    """Argument parser whose usage errors are one line on standard error (exit status 2).

    Sub-command parsers inherit the class (``add_subparsers`` uses the parent's type).
    """

    def error(self, message: str) -> NoReturn:
        """Print ``PROG: error: MESSAGE`` and a pointer to ``--help`` on one line, exit 2."""
        self.exit(2, f"{self.prog}: error: {message} (see '{self.prog} --help')\n")


def build_parser() -> argparse.ArgumentParser:
    """Return the top-level parser with every sub-command registered."""
    parser = _OneLineErrorParser(
        prog="hairtrigger",
        description=(
            "Analyse covalent-modification switches: steady states, steepness, thresholds and "
            "more, from snapshot files. Model results are predictions that need experimental "
            "confirmation."
        ),
    )
    parser.add_argument("--version", action="version", version=f"hairtrigger {__version__}")
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    subparsers.required = True
    for name in COMMAND_MODULES:
        importlib.import_module(f"hairtrigger.commands.{name}").register(subparsers)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status (0 on success, 2 on bad input)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.func(args))
    except (UserError, ValueError, OSError) as exc:
        message = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        print(f"hairtrigger {args.command}: error: {message}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print(f"hairtrigger {args.command}: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
