"""``hairtrigger report FILE [FILE …] -o report.html``: one self-contained HTML page to share."""

from __future__ import annotations

import argparse
from typing import Any

from ..core.evaluate import MAP_MEASURES
from ..core.params import CYCLE_KEYS
from . import UserError


def _step(text: str) -> tuple[str, float]:
    key, sep, value = text.partition("=")
    key = key.strip()
    if not sep or key not in CYCLE_KEYS:
        msg = f"--step must be KEY=VALUE with KEY one of {', '.join(CYCLE_KEYS)}; got {text!r}"
        raise argparse.ArgumentTypeError(msg)
    try:
        number = float(value)
    except ValueError:
        msg = f"--step {key}: {value!r} is not a number"
        raise argparse.ArgumentTypeError(msg) from None
    return key, number


def register(subparsers: Any) -> None:
    """Add the ``report`` sub-command."""
    parser = subparsers.add_parser(
        "report",
        help="write one self-contained HTML report of one or several snapshots",
        description=(
            "Write ONE self-contained HTML file (no network access needed to view it) with the "
            "parameters, steady-state results, response curve, time course and steepness map "
            "of each snapshot, a side-by-side comparison when several are given, and each "
            "snapshot embedded as JSON so that it can be loaded back. Predictions need "
            "experimental confirmation; the report says so. Needs matplotlib "
            "(pip install 'hairtrigger[report]')."
        ),
    )
    parser.add_argument(
        "files",
        nargs="+",
        metavar="FILE",
        help="snapshot files (JSON), or example:NAME for a bundled example",
    )
    parser.add_argument(
        "-o", "--output", required=True, metavar="OUT.html", help="report file to write"
    )
    parser.add_argument("--force", action="store_true", help="replace OUT.html if it exists")
    parser.add_argument("--title", help="page title (default: the snapshot's title)")
    parser.add_argument(
        "--map-measure",
        choices=MAP_MEASURES,
        default=None,
        help="steepness measure of the map (default: the one saved by the explorer in the "
        "snapshot, else hill_coefficient)",
    )
    parser.add_argument(
        "--map-points",
        type=int,
        default=96,
        metavar="N",
        help="grid points per axis of the steepness map (default: %(default)s)",
    )
    parser.add_argument(
        "--step",
        type=_step,
        action="append",
        metavar="KEY=VALUE",
        help="time-course step applied at t = 0 to every snapshot (repeatable); "
        "default: the kinase amount is stepped across the threshold",
    )
    parser.add_argument(
        "--t-end",
        type=float,
        metavar="T",
        help="time-course end in s (default: long enough to settle)",
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Load the snapshots, render the report and write it atomically."""
    from ..io.report import ReportDependencyError, ReportOptions, write_report
    from ._files import check_output_path, read_snapshot

    check_output_path(args.output, args.force, tuple(args.files))
    snapshots = [read_snapshot(name) for name in args.files]
    options = ReportOptions(
        title=args.title,
        map_measure=args.map_measure,
        map_points=args.map_points,
        steps=dict(args.step) if args.step else None,
        t_end=args.t_end,
    )
    try:
        path = write_report(snapshots, args.output, overwrite=args.force, options=options)
    except ReportDependencyError as exc:
        raise UserError(str(exc)) from exc
    except FileExistsError:
        msg = f"{args.output}: file exists; pass --force to replace it"
        raise UserError(msg) from None
    size = path.stat().st_size
    print(
        f"wrote {path} ({size:,} bytes; {len(snapshots)} snapshot"
        f"{'s' if len(snapshots) != 1 else ''} embedded)"
    )
    return 0
