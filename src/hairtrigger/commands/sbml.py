"""``hairtrigger sbml``: export the snapshot's cycle as SBML Level 3 Version 2."""

from __future__ import annotations

import argparse
from pathlib import Path

from . import UserError

EPILOG = """\
The mass-action model is written as six elementary reactions (binding, unbinding and
catalysis for each enzyme), the quasi-steady model as two Michaelis-Menten reactions.
Parameter ids are the snapshot's cycle keys; units are uM and s; the initial state is the
steady state.

example:
  hairtrigger sbml cycle.json -o cycle.xml
"""


def register(subparsers: argparse._SubParsersAction) -> None:  # type: ignore[type-arg]
    """Add the ``sbml`` sub-command."""
    parser = subparsers.add_parser(
        "sbml",
        help="export the cycle as SBML Level 3",
        description="Write the snapshot's cycle as an SBML Level 3 Version 2 model.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("file", metavar="FILE", help="snapshot file (JSON)")
    parser.add_argument(
        "-o", "--output", required=True, metavar="OUT.xml", help="SBML file to write"
    )
    parser.add_argument("--force", action="store_true", help="overwrite OUT.xml if it exists")
    parser.add_argument(
        "--model", choices=("quasi_steady", "mass_action"), help="override the file's model"
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Write the SBML file."""
    from ..io import load_snapshot
    from ..io.sbml import write_sbml

    out = Path(args.output)
    if out.exists() and not args.force:
        msg = f"{out} exists; refusing to overwrite it (pass --force)"
        raise UserError(msg)
    snapshot = load_snapshot(args.file)
    model = args.model or snapshot.model
    title = getattr(snapshot, "title", None) or "hairtrigger cycle"
    write_sbml(snapshot.cycle, out, model=model, title=title, overwrite=args.force)
    print(f"wrote {out} (SBML Level 3 Version 2, {model} model)")
    return 0
