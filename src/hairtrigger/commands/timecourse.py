"""``hairtrigger timecourse``: a time course after steps (or ramps) from the file's steady state."""

from __future__ import annotations

import argparse
import io

from ..core.schedule import Ramp, Step
from ..core.timecourse import TimeCourse, time_course
from . import UserError
from ._files import add_snapshot_arguments, check_output_path, read_snapshot, write_output

HEADER = "t,unmodified,modified,kinase_complex,phosphatase_complex,readout"

EPILOG = """\
Steps: KEY is one of kinase_total, kinase_kcat, kinase_km, phosphatase_total,
phosphatase_kcat, phosphatase_km; VALUE in uM or 1/s. A step applies at t = 0 unless
written KEY=VALUE@TIME. A ramp KEY=VALUE@START:END moves KEY linearly to VALUE.
Columns: t (s), unmodified, modified, kinase_complex, phosphatase_complex (uM), readout
(fraction of total substrate). Predictions need experimental confirmation.

example:
  hairtrigger timecourse cycle.json --step kinase_total=0.02 --t-end 300 --points 7
"""


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``timecourse`` sub-command."""
    parser = subparsers.add_parser(
        "timecourse",
        help="time course after parameter steps, as CSV",
        description=(
            "Start from the steady state of the snapshot's cycle, apply steps (and ramps) of "
            "its parameters, and write the sampled course as CSV."
        ),
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    add_snapshot_arguments(parser)
    parser.add_argument(
        "--step",
        action="append",
        default=[],
        metavar="KEY=VALUE[@TIME]",
        help="set a parameter at t = 0 (or at TIME s); repeatable",
    )
    parser.add_argument(
        "--ramp",
        action="append",
        default=[],
        metavar="KEY=VALUE@START:END",
        help="move a parameter linearly to VALUE between START and END s; repeatable",
    )
    parser.add_argument("--t-end", type=float, required=True, metavar="T", help="end time, s")
    parser.add_argument(
        "--points", type=int, default=200, metavar="N", help="samples on [0, T] (default 200)"
    )
    parser.add_argument("--csv", metavar="OUT", help="write CSV here instead of standard output")
    parser.add_argument("--force", action="store_true", help="replace an existing --csv file")
    parser.set_defaults(func=run)


def _number(option: str, text: str, what: str) -> float:
    try:
        return float(text)
    except ValueError:
        msg = f"{option}: {what} must be a number; got {text!r}"
        raise UserError(msg) from None


def parse_step(text: str) -> Step:
    """Parse ``KEY=VALUE`` or ``KEY=VALUE@TIME`` into a `Step`."""
    key, sep, rest = text.partition("=")
    if not sep or not key:
        msg = f"--step {text}: expected KEY=VALUE (for example kinase_total=0.02)"
        raise UserError(msg)
    value_text, at, time_text = rest.partition("@")
    value = _number(f"--step {text}", value_text, "VALUE")
    time = _number(f"--step {text}", time_text, "TIME") if at else 0.0
    try:
        return Step(key.strip(), value, time)
    except ValueError as exc:
        raise UserError(f"--step {text}: {exc}") from None


def parse_ramp(text: str) -> Ramp:
    """Parse ``KEY=VALUE@START:END`` into a `Ramp`."""
    key, sep, rest = text.partition("=")
    value_text, at, window = rest.partition("@")
    start_text, colon, end_text = window.partition(":")
    if not (sep and key and at and colon):
        msg = f"--ramp {text}: expected KEY=VALUE@START:END (for example kinase_total=0.02@0:60)"
        raise UserError(msg)
    option = f"--ramp {text}"
    value = _number(option, value_text, "VALUE")
    start = _number(option, start_text, "START")
    end = _number(option, end_text, "END")
    try:
        return Ramp(key.strip(), value, start, end)
    except ValueError as exc:
        raise UserError(f"{option}: {exc}") from None


def format_csv(course: TimeCourse) -> str:
    """The course as CSV text (header, then one row per sample; shortest exact decimals)."""
    buffer = io.StringIO()
    buffer.write(HEADER + "\n")
    for row in course.as_array().tolist():
        buffer.write(",".join(repr(float(x)) for x in row) + "\n")
    return buffer.getvalue()


def run(args: argparse.Namespace) -> int:
    """Compute the course and write it."""
    changes = [parse_step(s) for s in args.step] + [parse_ramp(r) for r in args.ramp]
    if not changes:
        msg = "give at least one --step KEY=VALUE (or --ramp)"
        raise UserError(msg)
    if args.csv is not None:
        check_output_path(args.csv, args.force, inputs=(args.file,))
    snapshot = read_snapshot(args.file)
    model = args.model or snapshot.model
    readout = args.readout or snapshot.readout
    course = time_course(snapshot.cycle, changes, args.t_end, args.points, model, readout)
    if not course.success:
        msg = f"the integration stopped before t = {args.t_end:g} s: {course.message}"
        raise UserError(msg)
    write_output(format_csv(course), args.csv, args.force)
    return 0
