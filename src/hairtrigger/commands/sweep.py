"""``hairtrigger sweep FILE --vary KEY=LOW:HIGH[:log] … --samples N``: a sampled sweep as CSV."""

from __future__ import annotations

import argparse
import sys

from ..core.params import CYCLE_KEYS
from ..core.sweep import EVALUATE_QUANTITIES, SAMPLING_DESIGNS, ParameterRange, run_sweep
from ..io.sweep_csv import write_table_csv
from . import UserError
from ._files import add_snapshot_arguments, check_output_path, read_snapshot
from ._progress import TextProgress

DESCRIPTION = f"""\
Sample the parameters named by --vary over their ranges (a scrambled Sobol' sequence by default,
or a Latin hypercube; log ranges are uniform in log), keep the other parameters of the snapshot
FILE, evaluate every sample and write FILE.csv with one row per sample: the varied keys, then
the quantities of "hairtrigger evaluate" ({", ".join(EVALUATE_QUANTITIES)}). A quantity that
does not exist at a sample is an empty field. --seed defaults to 0: the same command gives a
byte-identical file, locally or on a Dask cluster (--scheduler). Keys: {", ".join(CYCLE_KEYS)}.
Model results are predictions that need experimental confirmation.
"""


def _range(text: str) -> ParameterRange:
    try:
        return ParameterRange.parse(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(f"--vary: {exc}") from None


def _whole(name: str, minimum: int):  # noqa: ANN202 - argparse type factory
    def convert(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            value = minimum - 1
        if value < minimum:
            msg = f"{name} must be a whole number ≥ {minimum}; got {text!r}"
            raise argparse.ArgumentTypeError(msg)
        return value

    return convert


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``sweep`` sub-command."""
    parser = subparsers.add_parser(
        "sweep",
        help="evaluate a sampled parameter sweep of a snapshot and write it as CSV",
        description=DESCRIPTION,
    )
    add_snapshot_arguments(parser)
    parser.add_argument(
        "--vary",
        metavar="KEY=LOW:HIGH[:log]",
        type=_range,
        action="append",
        required=True,
        help="a cycle parameter and its range (repeat for several); ':log' samples in log",
    )
    parser.add_argument(
        "--samples",
        metavar="N",
        type=_whole("--samples", 1),
        required=True,
        help="number of samples",
    )
    parser.add_argument(
        "--seed",
        metavar="S",
        type=_whole("--seed", 0),
        default=0,
        help="seed of the sample (default 0)",
    )
    parser.add_argument(
        "--design",
        choices=SAMPLING_DESIGNS,
        default="sobol",
        help="sampling design (default sobol)",
    )
    parser.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        default=None,
        help="Dask scheduler address (e.g. tcp://127.0.0.1:8786); default: this machine",
    )
    parser.add_argument("--out", metavar="FILE.csv", required=True, help="CSV file to write")
    parser.add_argument("--force", action="store_true", help="replace an existing --out file")
    parser.add_argument(
        "--progress",
        action=argparse.BooleanOptionalAction,
        default=None,
        help="show a progress bar on standard error (default: when it is a terminal)",
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run the sweep and write the CSV."""
    keys = [r.key for r in args.vary]
    for k, key in enumerate(keys):
        if key in keys[:k]:
            raise UserError(f"--vary: parameter `{key}` is given twice")
    snapshot = read_snapshot(args.file)
    check_output_path(args.out, args.force, (args.file,))  # fail before the work, not after
    show = sys.stderr.isatty() if args.progress is None else args.progress
    result = run_sweep(
        snapshot.cycle,
        args.vary,
        args.samples,
        model=args.model or snapshot.model,
        readout=args.readout or snapshot.readout,
        seed=args.seed,
        design=args.design,
        client=args.scheduler,
        progress=TextProgress("sweep") if show else None,
    )
    try:
        write_table_csv(args.out, result.columns, result.table(), overwrite=args.force)
    except FileExistsError:
        raise UserError(f"{args.out}: file exists; pass --force to replace it") from None
    except OSError as exc:
        raise UserError(f"{args.out}: cannot be written ({exc.strerror or exc})") from None
    return 0
