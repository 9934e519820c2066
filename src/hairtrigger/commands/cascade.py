"""``hairtrigger cascade FILE --scan LOW:HIGH [--points N]``: per-level steepness of a cascade."""

from __future__ import annotations

import argparse
import json
import math
import sys

from ..core.cascade import cascade_response
from ..io.cascade_file import cascade_example_path, list_cascade_examples, load_cascade
from . import UserError
from ._files import EXAMPLE_PREFIX, write_output

DESCRIPTION = """\
Scan the input enzyme total of the cascade in FILE (a "hairtrigger.cascade" JSON file) over
LOW:HIGH uM (log-spaced points) and print one JSON object. Its "levels" list has one entry per
level, top first: "name", and for each output definition, "free" (the fully modified form, free)
and "total" (the fully modified form including its complexes: with its own phosphatase and with
the next level's substrate), the input enzyme totals "ec10", "ec50", "ec90" (uM) at which the
output reaches 10/50/90 % of its plateau, the effective "hill_coefficient" ln 81 / ln(EC90/EC10),
and the "plateau" itself (fraction of the level's substrate in the limit of unbounded input,
computed, not the scan's last point). "stage_hill_coefficient" measures each level against its
own free kinase. "overall" repeats the last level (the cascade's output). EC values outside the
scan are null with a warning. Every steady state is checked against the full mass-action
equations. Model results are predictions that need experimental confirmation.
"""


def _scan_range(text: str) -> tuple[float, float]:
    low_text, sep, high_text = text.partition(":")
    try:
        if not sep:
            raise ValueError
        low, high = float(low_text), float(high_text)
    except ValueError:
        msg = f"--scan must look like LOW:HIGH (input enzyme totals in uM); got {text!r}"
        raise argparse.ArgumentTypeError(msg) from None
    if not (math.isfinite(low) and math.isfinite(high) and 0.0 < low < high):
        msg = f"--scan needs finite 0 < LOW < HIGH (uM; points are log-spaced); got {text!r}"
        raise argparse.ArgumentTypeError(msg)
    return low, high


def _points(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        value = -1
    if not 3 <= value <= 100_000:
        msg = f"--points must be a whole number from 3 to 100000; got {text!r}"
        raise argparse.ArgumentTypeError(msg)
    return value


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``cascade`` sub-command."""
    parser = subparsers.add_parser(
        "cascade",
        help="EC10/EC50/EC90 and Hill coefficients of every level of a cascade, as JSON",
        description=DESCRIPTION,
    )
    parser.add_argument(
        "file",
        metavar="FILE",
        help=f"cascade file (JSON, format hairtrigger.cascade), or {EXAMPLE_PREFIX}NAME for a "
        f"bundled example ({', '.join(list_cascade_examples())})",
    )
    parser.add_argument(
        "--scan",
        metavar="LOW:HIGH",
        type=_scan_range,
        required=True,
        help="range of the input enzyme total to scan, uM (log-spaced)",
    )
    parser.add_argument(
        "--points",
        metavar="N",
        type=_points,
        default=200,
        help="number of scan points (default 200)",
    )
    parser.set_defaults(func=run)


def read_cascade(path: str):  # noqa: ANN201 - returns hairtrigger.core.cascade.Cascade
    """Load a cascade named on the command line; file-system errors become one clean line."""
    try:
        if path.startswith(EXAMPLE_PREFIX):
            return load_cascade(cascade_example_path(path.removeprefix(EXAMPLE_PREFIX)))
        return load_cascade(path)
    except FileNotFoundError:
        raise UserError(f"{path}: no such file") from None
    except PermissionError:
        raise UserError(f"{path}: permission denied") from None
    except OSError as exc:
        raise UserError(f"{path}: cannot be read ({exc.strerror or exc})") from None


def run(args: argparse.Namespace) -> int:
    """Scan the cascade and print the JSON result; exit 1 if a steady state failed its checks."""
    cascade = read_cascade(args.file)
    low, high = args.scan
    result = cascade_response(cascade, low, high, args.points)
    write_output(json.dumps(result.as_dict(), indent=2, allow_nan=False) + "\n", None, force=False)
    if not result.success:
        print(f"hairtrigger cascade: {result.message}", file=sys.stderr)
        return 1
    return 0
