"""``hairtrigger evaluate FILE``: steady readout, thresholds, steepness and ceiling as JSON."""

from __future__ import annotations

import argparse
import json

from ..core.evaluate import evaluate
from ._files import add_snapshot_arguments, read_snapshot, write_output

DESCRIPTION = """\
Print one JSON object for the cycle in FILE: K1, K2, the activity ratio and the steady readout
at the file's parameters; the activity ratios giving 10, 50 and 90 % of total substrate, the
response coefficient (r90/r10) and effective Hill coefficient; the readout ceiling; and, under
"relative", the same thresholds taken as fractions of the ceiling. A quantity that does not exist
(a target above the ceiling) is null and the "warnings" list says why. "dynamics" times the
response to the kinase amount halved and restored (half-time, 10-90 % time, settling and
relaxation times, s). Model results are predictions that need experimental confirmation.
"""


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``evaluate`` sub-command."""
    parser = subparsers.add_parser(
        "evaluate",
        help="print thresholds, steepness and ceiling of a snapshot as JSON",
        description=DESCRIPTION,
    )
    add_snapshot_arguments(parser)
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Evaluate the snapshot named by ``args.file`` and print the result."""
    snapshot = read_snapshot(args.file)
    model = args.model or snapshot.model
    readout = args.readout or snapshot.readout
    result = evaluate(snapshot.cycle, model, readout)
    write_output(json.dumps(result, indent=2, allow_nan=False) + "\n", None, force=False)
    return 0
