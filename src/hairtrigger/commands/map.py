"""``hairtrigger map FILE --grid N``: steepness over a grid of the two Michaelis constants."""

from __future__ import annotations

import argparse
import math
from typing import Final

import numpy as np

from ..core.evaluate import MAP_MEASURES, steepness_map
from ..core.params import Cycle
from ..core.steady import FloatArray
from . import UserError
from ._files import add_snapshot_arguments, check_output_path, read_snapshot, write_output

#: Grid sizes accepted by ``--grid`` (points per axis). 1024² rows is already an 80 MB CSV.
MIN_GRID: Final[int] = 2
MAX_GRID: Final[int] = 1024
#: Default ``--km-range``: Km/W from deeply saturated to Michaelian.
DEFAULT_KM_RANGE: Final[tuple[float, float]] = (1e-3, 1e2)
#: Grid points computed in one vectorised pass; bounds memory for the peak-sensitivity measure
#: (which evaluates a 41-point curve per grid point).
BLOCK_POINTS: Final[int] = 65536

DESCRIPTION = """\
Write the steepness of the cycle in FILE over an N x N grid of Michaelis constants: the kinase
Km and the phosphatase Km each run over N log-spaced values of Km/W (K1, K2) in --km-range,
every other parameter taken from the file. The CSV has one row per grid point (kinase Km
varying slowest) with the columns kinase_km, phosphatase_km (uM), K1, K2 and the chosen
measure. Where the measure does not exist (a threshold above the readout ceiling) the cell is
empty. Numbers are written with the 17 significant digits needed to read them back exactly.
"""


def register(subparsers: argparse._SubParsersAction[argparse.ArgumentParser]) -> None:
    """Add the ``map`` sub-command."""
    parser = subparsers.add_parser(
        "map",
        help="write a steepness map over kinase Km x phosphatase Km as CSV",
        description=DESCRIPTION,
    )
    add_snapshot_arguments(parser)
    parser.add_argument(
        "--grid",
        metavar="N",
        type=int,
        required=True,
        help=f"points per axis, {MIN_GRID} to {MAX_GRID}",
    )
    parser.add_argument(
        "--km-range",
        metavar="LOW:HIGH",
        default=f"{DEFAULT_KM_RANGE[0]:g}:{DEFAULT_KM_RANGE[1]:g}",
        help="range of Km/W on both axes, 0 < LOW < HIGH (default: %(default)s)",
    )
    parser.add_argument(
        "--measure",
        choices=MAP_MEASURES,
        default="hill_coefficient",
        help="steepness measure (default: %(default)s; thresholds as fractions of total "
        "substrate, except relative_hill_coefficient, which takes them against the ceiling)",
    )
    parser.add_argument(
        "--out", metavar="FILE.csv", default=None, help="write here instead of standard output"
    )
    parser.add_argument("--force", action="store_true", help="replace an existing --out file")
    parser.set_defaults(func=run)


def parse_km_range(text: str) -> tuple[float, float]:
    """Parse ``LOW:HIGH`` into two finite floats with 0 < LOW < HIGH, or raise `UserError`."""
    usage = f"--km-range must be LOW:HIGH with 0 < LOW < HIGH (Km/W); got {text!r}"
    parts = text.split(":")
    if len(parts) != 2:
        raise UserError(usage)
    try:
        low, high = (float(part) for part in parts)
    except ValueError:
        raise UserError(usage) from None
    if not (math.isfinite(low) and math.isfinite(high) and 0.0 < low < high):
        raise UserError(usage)
    return low, high


def check_grid(n: int) -> int:
    """Return `n` if it is an allowed grid size, else raise `UserError`."""
    if not MIN_GRID <= n <= MAX_GRID:
        msg = f"--grid must be between {MIN_GRID} and {MAX_GRID} points per axis; got {n}"
        raise UserError(msg)
    return n


def km_axis(cycle: Cycle, n: int, km_range: tuple[float, float]) -> FloatArray:
    """Michaelis constants (µM) at `n` log-spaced values of Km/W over `km_range`."""
    low, high = km_range
    ratios = np.logspace(math.log10(low), math.log10(high), n)
    ratios[0], ratios[-1] = low, high  # exact end points, not 10**log10(x)
    with np.errstate(over="ignore", under="ignore"):
        km = ratios * cycle.substrate_total
    if not (np.all(np.isfinite(km)) and np.all(km > 0.0)):
        msg = (
            f"--km-range {low:g}:{high:g} times the substrate total {cycle.substrate_total:g} uM "
            "leaves the floating-point range"
        )
        raise UserError(msg)
    return km


def steepness_table(
    cycle: Cycle,
    n: int,
    km_range: tuple[float, float],
    model: str,
    readout: str,
    measure: str,
) -> dict[str, FloatArray]:
    """Columns of the map: flattened grids (kinase Km varying slowest) and the measure.

    The measure comes from `hairtrigger.core.evaluate.steepness_map`, evaluated on row blocks
    of at most `BLOCK_POINTS` grid points (each block one vectorised pass).
    """
    km1 = km_axis(cycle, n, km_range)
    km2 = km_axis(cycle, n, km_range)
    values = np.empty((n, n))
    rows = max(1, BLOCK_POINTS // n)
    for start in range(0, n, rows):
        block = slice(start, min(n, start + rows))
        values[block] = steepness_map(
            cycle, km1[block, None], km2[None, :], model=model, readout=readout, measure=measure
        )
    grid1, grid2 = np.meshgrid(km1, km2, indexing="ij")
    w = cycle.substrate_total
    return {
        "kinase_km": grid1.ravel(),
        "phosphatase_km": grid2.ravel(),
        "K1": grid1.ravel() / w,
        "K2": grid2.ravel() / w,
        measure: values.ravel(),
    }


def table_to_csv(table: dict[str, FloatArray]) -> str:
    """CSV text: a header, then one row per point; ``repr`` floats; NaN as an empty cell."""
    header = ",".join(table)
    columns = [
        ["" if math.isnan(x) else repr(x) for x in np.asarray(column, dtype=float).tolist()]
        for column in table.values()
    ]
    lines = [header, *(",".join(row) for row in zip(*columns, strict=True))]
    return "\n".join(lines) + "\n"


def run(args: argparse.Namespace) -> int:
    """Compute the map for ``args.file`` and write it as CSV."""
    n = check_grid(args.grid)
    km_range = parse_km_range(args.km_range)
    if args.out is not None:
        check_output_path(args.out, args.force, inputs=(args.file,))
    snapshot = read_snapshot(args.file)
    table = steepness_table(
        snapshot.cycle,
        n,
        km_range,
        model=args.model or snapshot.model,
        readout=args.readout or snapshot.readout,
        measure=args.measure,
    )
    write_output(table_to_csv(table), args.out, args.force)
    return 0
