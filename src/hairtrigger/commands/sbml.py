"""``hairtrigger sbml``: export the snapshot's cycle as SBML Level 3 Version 2."""

from __future__ import annotations

import argparse

from ..core.params import MODELS
from ..io.sbml import cycle_to_sbml
from ._files import EXAMPLE_PREFIX, check_output_path, read_snapshot, write_output

EPILOG = """\
The mass-action model is written as six elementary reactions (binding, unbinding and
catalysis for each enzyme), the quasi-steady model as two Michaelis-Menten reactions.
Parameter ids are the snapshot's cycle keys; units are uM and s; the initial state is the
steady state.

example:
  hairtrigger sbml cycle.json -o cycle.xml
"""


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``sbml`` sub-command."""
    parser = subparsers.add_parser(
        "sbml",
        help="export the cycle as SBML Level 3",
        description="Write the snapshot's cycle as an SBML Level 3 Version 2 model.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument(
        "file",
        metavar="FILE",
        help=f"snapshot file (.json), or {EXAMPLE_PREFIX}NAME for a bundled example",
    )
    parser.add_argument(
        "-o", "--output", required=True, metavar="OUT.xml", help="SBML file to write"
    )
    parser.add_argument("--force", action="store_true", help="replace an existing OUT.xml")
    parser.add_argument("--model", choices=MODELS, help="model to use instead of the file's")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Write the SBML file."""
    check_output_path(args.output, args.force, inputs=(args.file,))
    snapshot = read_snapshot(args.file)
    model = args.model or snapshot.model
    title = snapshot.title or "hairtrigger cycle"
    write_output(cycle_to_sbml(snapshot.cycle, model, title), args.output, args.force)
    print(f"wrote {args.output} (SBML Level 3 Version 2, {model} model)")
    return 0
