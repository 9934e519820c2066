"""``hairtrigger fit DATA.csv --model MODEL``: fit measured dose–response data, print JSON."""

from __future__ import annotations

import argparse
import json
import math
from typing import Any

from ..core.fit_models import FIT_MODELS, KNOWN_CYCLE_KEYS
from ..core.fitting import DEFAULT_COMPARISON, fit_dose_response
from ..core.params import READOUTS, Cycle
from ..io.data import example_data_path, list_example_data, load_data
from . import UserError
from ._files import EXAMPLE_PREFIX, check_output_path, read_snapshot, write_output

_KNOWN_OPTIONS = {key: "--" + key.replace("_", "-") for key in KNOWN_CYCLE_KEYS}

_EPILOG = """\
data file: CSV with a header holding 'input' and 'readout' (optional 'sd', 'replicate');
comment lines '# input_kind: ratio|amount', '# input_unit: ...', '# readout_unit: ...' before
the header declare what the numbers mean. The mass_action model needs the known totals and
turnover numbers: --cycle SNAPSHOT.json and/or --substrate-total, --phosphatase-total,
--kinase-kcat, --phosphatase-kcat (explicit options override the snapshot).

Fitted parameters are estimates from the data given; predictions made with them need
experimental confirmation."""


def register(subparsers: Any) -> None:
    """Add the ``fit`` sub-command."""
    parser = subparsers.add_parser(
        "fit",
        help="fit dose-response data (Michaelian, Hill, cycle models) with 95 %% intervals",
        description=(
            "Fit measured readout-versus-input data by weighted, bounded least squares from\n"
            "several starts; print estimates with profile-likelihood (or bootstrap) intervals,\n"
            "AIC/AICc, identifiability warnings and a comparison with the Michaelian and Hill\n"
            "models as JSON."
        ),
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument(
        "data",
        metavar="DATA.csv",
        help=f"dose-response CSV file, or {EXAMPLE_PREFIX}NAME for bundled invented data "
        f"({', '.join(n.removesuffix('.csv') for n in list_example_data())})",
    )
    parser.add_argument(
        "--model", choices=FIT_MODELS, default="hill", help="model to fit (default: hill)"
    )
    parser.add_argument(
        "--input-kind",
        choices=("ratio", "amount"),
        help="what the input column holds if the file does not say: the "
        "activity ratio V1/V2, or an amount in any unit (the cycle models "
        "then fit a scale factor); default ratio",
    )
    parser.add_argument("--input-unit", help="unit of the input, if the file does not declare it")
    parser.add_argument(
        "--readout-unit", help="unit of the readout, if the file does not declare it"
    )
    parser.add_argument(
        "--fix",
        action="append",
        default=[],
        metavar="NAME=VALUE",
        help="hold a parameter at a value, e.g. --fix bottom=0 (repeatable)",
    )
    parser.add_argument(
        "--bootstrap",
        type=int,
        metavar="N",
        help="residual-bootstrap percentile intervals from N replicates instead "
        "of profile likelihood",
    )
    parser.add_argument(
        "--seed", type=int, default=0, help="seed of the bootstrap resampling (default 0)"
    )
    parser.add_argument(
        "--confidence", type=float, default=0.95, help="interval level (default 0.95)"
    )
    parser.add_argument(
        "--absolute-sd",
        action="store_true",
        help="take the sd column as the true measurement error (chi-square "
        "statistics) rather than relative weights",
    )
    compare = parser.add_mutually_exclusive_group()
    compare.add_argument(
        "--compare",
        metavar="MODEL[,MODEL]",
        help="models compared by AICc (default: michaelian,hill)",
    )
    compare.add_argument("--no-compare", action="store_true", help="skip the model comparison")
    parser.add_argument(
        "--cycle",
        metavar="SNAPSHOT.json",
        help="snapshot (or example:NAME) whose cycle supplies the known values of the "
        "mass_action model and its readout; with a cycle model the output also holds the "
        "fitted cycle ('cycle' block: Michaelis constants K*W with the snapshot's substrate "
        "total, other values from the snapshot) for adopting into a snapshot",
    )
    for key, option in _KNOWN_OPTIONS.items():
        parser.add_argument(
            option,
            type=float,
            dest=key,
            metavar="VALUE",
            help=f"known {key.replace('_', ' ')} (mass_action)",
        )
    parser.add_argument(
        "--readout",
        choices=READOUTS,
        default=None,
        help="what the assay measures in the mass_action model (default: the snapshot's "
        "readout, else total_modified: modified substrate including enzyme complexes)",
    )
    parser.add_argument("--out", metavar="FILE", help="write the JSON to FILE instead of stdout")
    parser.add_argument("--force", action="store_true", help="replace an existing --out FILE")
    parser.set_defaults(func=run)


def _fixed(items: list[str]) -> dict[str, float]:
    out: dict[str, float] = {}
    for item in items:
        name, sep, value = item.partition("=")
        if not sep or not name.strip():
            msg = f"--fix expects NAME=VALUE; got {item!r}"
            raise UserError(msg)
        try:
            number = float(value)
        except ValueError:
            msg = f"--fix {name.strip()}: {value!r} is not a number"
            raise UserError(msg) from None
        if not math.isfinite(number):
            msg = f"--fix {name.strip()}: {value!r} is not a finite number"
            raise UserError(msg)
        out[name.strip()] = number
    return out


def _known_cycle(
    args: argparse.Namespace,
) -> tuple[Cycle | dict[str, float] | None, str]:
    """Known cycle values (snapshot, overridden by explicit options) and the readout."""
    explicit = {k: getattr(args, k) for k in KNOWN_CYCLE_KEYS if getattr(args, k) is not None}
    if args.cycle:
        snapshot = read_snapshot(args.cycle)
        base = snapshot.cycle.replace(**explicit) if explicit else snapshot.cycle
        return base, args.readout or snapshot.readout
    readout = args.readout or "total_modified"
    if not explicit:
        return None, readout
    if args.model == "mass_action":
        missing = [_KNOWN_OPTIONS[k] for k in KNOWN_CYCLE_KEYS if k not in explicit]
        if missing:
            msg = (
                "the mass_action model needs the known values "
                + ", ".join(missing)
                + " (or --cycle SNAPSHOT.json)"
            )
            raise UserError(msg)
    return explicit, readout


def _read_data(args: argparse.Namespace) -> Any:
    path = args.data
    if path.startswith(EXAMPLE_PREFIX):
        try:
            path = example_data_path(path.removeprefix(EXAMPLE_PREFIX))
        except ValueError as exc:
            raise UserError(str(exc)) from None
    try:
        return load_data(
            path,
            input_kind=args.input_kind,
            input_unit=args.input_unit,
            readout_unit=args.readout_unit,
        )
    except FileNotFoundError:
        raise UserError(f"{path}: no such file") from None
    except IsADirectoryError:
        raise UserError(f"{path}: is a folder, not a data file") from None
    except OSError as exc:
        raise UserError(f"{path}: cannot be read ({exc.strerror or exc})") from None


def run(args: argparse.Namespace) -> int:
    """Fit and print the JSON result; return the exit status."""
    if args.bootstrap is not None and args.bootstrap < 20:
        msg = f"--bootstrap needs at least 20 replicates; got {args.bootstrap}"
        raise UserError(msg)
    if args.seed < 0:
        msg = f"--seed must be >= 0; got {args.seed}"
        raise UserError(msg)
    if not 0.5 <= args.confidence < 1.0:
        msg = f"--confidence must be in [0.5, 1); got {args.confidence:g}"
        raise UserError(msg)
    if args.out is not None:
        check_output_path(args.out, args.force, (args.data,))
    cycle, readout = _known_cycle(args)
    if args.model == "mass_action" and cycle is None:
        msg = (
            "the mass_action model needs the known totals and turnover numbers: give "
            "--cycle SNAPSHOT.json or " + ", ".join(_KNOWN_OPTIONS.values())
        )
        raise UserError(msg)
    if args.no_compare:
        compare: tuple[str, ...] = ()
    elif args.compare is not None:
        compare = tuple(m.strip() for m in args.compare.split(",") if m.strip())
        unknown = [m for m in compare if m not in FIT_MODELS]
        if unknown:
            msg = f"--compare: unknown model {unknown[0]!r} (choose from {', '.join(FIT_MODELS)})"
            raise UserError(msg)
    else:
        compare = DEFAULT_COMPARISON
    data = _read_data(args)
    result = fit_dose_response(
        data,
        args.model,
        compare=compare,
        cycle=cycle,
        readout=readout,
        fixed=_fixed(args.fix),
        intervals="bootstrap" if args.bootstrap is not None else "profile",
        bootstrap=args.bootstrap or 1000,
        seed=args.seed,
        confidence=args.confidence,
        absolute_sd=args.absolute_sd,
    )
    # Serialise fully before writing, so a failure never leaves half a JSON object behind.
    write_output(json.dumps(result, indent=2, allow_nan=False) + "\n", args.out, args.force)
    return 0
