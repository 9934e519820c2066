"""``hairtrigger noise FILE (--molecules N | --volume FL)``: copy-number noise as JSON.

Prints the exact stationary distribution of the quasi-steady birth–death chain and, with
``--trajectories``, runs a stochastic ensemble (Gillespie's direct method) whose per-trajectory
counts can be written to CSV.
"""

from __future__ import annotations

import argparse
import io
import json
import math
import signal
import sys
import threading
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from typing import Any, Final

import numpy as np

from ..core.noise import noise_summary
from ..core.params import CYCLE_KEYS
from ..core.ssa import SPECIES, EnsembleResult, simulate_ensemble
from . import UserError
from ._files import add_snapshot_arguments, check_output_path, read_snapshot, write_output

#: CSV header of ``--csv`` (molecule counts per trajectory and sampling time).
CSV_COLUMNS: Final[tuple[str, ...]] = ("trajectory", "t", *SPECIES)

DESCRIPTION = """\
Print one JSON object describing copy-number noise of the cycle in FILE, with N substrate
molecules (--molecules) or in a compartment of given volume (--volume, fL; 1 uM in 1 fL is
602.214 molecules). The exact stationary distribution of the quasi-steady birth-death chain
gives: molecules, mean_modified, variance_modified, fano_factor, distribution (p(n) for n =
0..N), population_hill_coefficient (effective Hill coefficient of the population-mean response
at this N, targets 10 and 90 % of N), then the mode, standard deviation, correlation time (s),
copy numbers, the deterministic counterparts and a warnings list.

With --trajectories M and --t-end T it also simulates M stochastic trajectories (Gillespie's
direct method) of the model (--model, default the file's: quasi_steady is the reduced chain,
mass_action the six reactions with enzyme-substrate complexes), sampled at --points times from
0 to T, starting from the steady state (or --initial counts) with optional --step changes at t
= 0. The JSON gains an "ensemble" object (mean and standard deviation of the modified count and
of the readout over time, events, speed, seed); --csv OUT writes every trajectory's counts. The
same --seed gives the same trajectories. Model results are predictions that need experimental
confirmation.
"""


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``noise`` sub-command."""
    parser = subparsers.add_parser(
        "noise",
        help="exact copy-number distribution and stochastic trajectories of a snapshot",
        description=DESCRIPTION,
    )
    add_snapshot_arguments(parser)
    copies = parser.add_mutually_exclusive_group(required=True)
    copies.add_argument(
        "--molecules",
        metavar="N",
        type=_whole_number,
        help="substrate molecules (a whole number >= 1)",
    )
    copies.add_argument(
        "--volume", metavar="FL", type=float, help="compartment volume in femtolitres (> 0)"
    )
    ensemble = parser.add_argument_group("stochastic ensemble")
    ensemble.add_argument(
        "--trajectories",
        metavar="M",
        type=_whole_number,
        help="simulate M trajectories (needs --t-end)",
    )
    ensemble.add_argument("--t-end", metavar="T", type=float, help="end of the sampled window, s")
    ensemble.add_argument(
        "--points",
        metavar="P",
        type=_whole_number,
        default=101,
        help="sampling times from 0 to T (default: %(default)s)",
    )
    ensemble.add_argument(
        "--seed",
        metavar="S",
        type=_whole_number,
        default=0,
        help="random seed, a whole number >= 0 (default: %(default)s)",
    )
    ensemble.add_argument(
        "--step",
        metavar="KEY=VALUE",
        action="append",
        default=[],
        help="change a cycle parameter at t = 0, e.g. kinase_total=0.02 "
        "(repeatable; any key but substrate_total)",
    )
    ensemble.add_argument(
        "--initial",
        metavar="SPECIES=COUNT",
        action="append",
        default=[],
        help="start from these counts instead of the steady state, e.g. "
        "modified=0 (repeatable; the rest is unmodified)",
    )
    ensemble.add_argument(
        "--burn-in",
        metavar="SECONDS",
        type=float,
        default=None,
        help="mass_action from the steady state: time simulated before t = 0 "
        "(default: 3 correlation times of the chain)",
    )
    ensemble.add_argument(
        "--event-budget",
        metavar="EVENTS",
        type=float,
        default=None,
        help="refuse ensembles expected to need more reaction events (default: 1e10)",
    )
    ensemble.add_argument(
        "--csv",
        metavar="OUT",
        default=None,
        help="write every trajectory's counts to this CSV file",
    )
    ensemble.add_argument("--force", action="store_true", help="replace an existing --csv file")
    ensemble.add_argument("--quiet", action="store_true", help="no progress bar on stderr")
    parser.set_defaults(func=run)


def _whole_number(text: str) -> int:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if not math.isfinite(value) or value != math.floor(value):
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}")
    return int(value)


def parse_assignments(
    items: Sequence[str], option: str, allowed: Sequence[str], convert: Callable[[str], Any]
) -> dict[str, Any]:
    """Parse repeated ``KEY=VALUE`` options into a dict, or raise `UserError` naming the item."""
    out: dict[str, Any] = {}
    for item in items:
        key, sep, value = item.partition("=")
        key = key.strip()
        if not sep or not key or not value.strip():
            raise UserError(f"{option} must be KEY=VALUE; got {item!r}")
        if key not in allowed:
            raise UserError(f"{option}: unknown key {key!r} (known: {', '.join(allowed)})")
        if key in out:
            raise UserError(f"{option}: {key} given twice")
        try:
            out[key] = convert(value.strip())
        except ValueError:
            raise UserError(f"{option} {key}: not a number: {value.strip()!r}") from None
    return out


def _count(text: str) -> int:
    value = float(text)
    if not math.isfinite(value) or value != math.floor(value):
        raise ValueError(text)
    return int(value)


def _check_ensemble_options(args: argparse.Namespace) -> None:
    if args.trajectories is None:
        given = [
            name
            for name, value in (
                ("--t-end", args.t_end),
                ("--csv", args.csv),
                ("--step", args.step),
                ("--initial", args.initial),
                ("--burn-in", args.burn_in),
                ("--event-budget", args.event_budget),
            )
            if value
        ]
        if given:
            raise UserError(f"{given[0]} needs --trajectories M (it applies to the ensemble)")
        return
    if args.t_end is None:
        raise UserError("--trajectories needs --t-end T (end of the sampled window, s)")
    if args.csv is not None:
        check_output_path(args.csv, args.force, inputs=(args.file,))


class _Progress:
    """Progress on stderr: a tqdm bar when tqdm is installed, else a line every 10 %.

    Nothing is shown until the first chunk has finished, so a refused request prints only
    its one-line error.
    """

    def __init__(self, total: int, enabled: bool) -> None:
        self.total = total
        self.enabled = enabled
        self.bar: Any = None
        self.started = False
        self.next_line = 0.1

    def _start(self) -> None:
        self.started = True
        try:
            from tqdm import tqdm
        except ImportError:
            return
        self.bar = tqdm(
            total=self.total,
            unit="traj",
            desc="trajectories",
            file=sys.stderr,
            leave=False,
            dynamic_ncols=True,
        )

    def __call__(self, done: int, total: int) -> None:
        if not self.enabled:
            return
        if not self.started:
            self._start()
        if self.bar is not None:
            self.bar.update(done - self.bar.n)
            return
        if done / total >= self.next_line or done == total:
            print(f"hairtrigger noise: {done}/{total} trajectories", file=sys.stderr, flush=True)
            while self.next_line <= done / total:
                self.next_line += 0.1

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


@contextmanager
def _cancel_on_interrupt() -> Iterator[threading.Event]:
    """Turn Ctrl-C into a cancel request checked between chunks of trajectories."""
    flag = threading.Event()
    if threading.current_thread() is not threading.main_thread():
        yield flag
        return
    previous = signal.getsignal(signal.SIGINT)
    signal.signal(signal.SIGINT, lambda *_: flag.set())
    try:
        yield flag
    finally:
        signal.signal(signal.SIGINT, previous)


def ensemble_csv(result: EnsembleResult) -> str:
    """Every trajectory's counts as CSV text (`CSV_COLUMNS`; t with 17 significant digits)."""
    m, p = result.counts["modified"].shape
    columns = [np.repeat(np.arange(m), p).astype(np.int64)]
    buffer = io.StringIO()
    buffer.write(",".join(CSV_COLUMNS) + "\n")
    if m == 0:
        return buffer.getvalue()
    t = np.tile(result.t, m)
    counts = np.column_stack(columns + [result.counts[name].ravel() for name in SPECIES])
    t_text = np.char.mod("%.17g", t)
    body = np.char.mod("%d", counts)
    rows = [",".join((row[0], tt, *row[1:])) for row, tt in zip(body, t_text, strict=True)]
    buffer.write("\n".join(rows) + "\n")
    return buffer.getvalue()


def _ensemble_block(result: EnsembleResult, readout: str, csv_path: str | None) -> dict[str, Any]:
    block = result.summary()
    block["readout"] = readout
    block["t"] = result.t.tolist()
    if result.trajectories:
        block["mean_modified"] = result.mean().tolist()
        block["sd_modified"] = result.std().tolist() if result.trajectories > 1 else None
        values = result.readout(readout)
        block["mean_readout"] = values.mean(axis=0).tolist()
        block["sd_readout"] = (
            values.std(axis=0, ddof=1).tolist() if result.trajectories > 1 else None
        )
    block["csv"] = csv_path
    return block


def run(args: argparse.Namespace) -> int:
    """Compute the noise summary (and the ensemble, if asked) for ``args.file``."""
    _check_ensemble_options(args)
    snapshot = read_snapshot(args.file)
    model = args.model or snapshot.model
    result = noise_summary(
        snapshot.cycle, molecules=args.molecules, volume=args.volume, model=model
    )
    if args.trajectories is not None:
        steps = parse_assignments(args.step, "--step", CYCLE_KEYS[1:], float)
        initial = parse_assignments(args.initial, "--initial", SPECIES, _count) or "steady"
        progress = _Progress(args.trajectories, enabled=not args.quiet)
        extra = {} if args.event_budget is None else {"event_budget": args.event_budget}
        try:
            with _cancel_on_interrupt() as cancel:
                ensemble = simulate_ensemble(
                    snapshot.cycle,
                    args.t_end,
                    args.trajectories,
                    molecules=args.molecules,
                    volume=args.volume,
                    model=model,
                    points=args.points,
                    seed=args.seed,
                    initial=initial,
                    steps=steps,
                    burn_in=args.burn_in,
                    progress=progress,
                    cancel=cancel,
                    **extra,
                )
        finally:
            progress.close()
        if ensemble.status == "cancelled":
            print(
                f"hairtrigger noise: interrupted after {ensemble.trajectories} of "
                f"{ensemble.requested} trajectories; nothing written",
                file=sys.stderr,
            )
            return 130
        if not ensemble.success:
            result["warnings"].append(ensemble.message)
        result["warnings"].extend(ensemble.warnings)
        if args.csv is not None:
            write_output(ensemble_csv(ensemble), args.csv, force=args.force)
        readout = args.readout or snapshot.readout
        result["ensemble"] = _ensemble_block(ensemble, readout, args.csv)
    write_output(json.dumps(result, allow_nan=False) + "\n", None, force=False)
    return 0
