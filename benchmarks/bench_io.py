"""Speed of the snapshot layer and of ``hairtrigger map``, against baselines in the same run.

Run: ``PYTHONPATH=src python benchmarks/bench_io.py``. Prints per-call times and ratios:

- reading a snapshot (validation included) vs a bare ``json.loads`` of the same text;
- writing one (temporary file, fsync, rename) vs a plain ``Path.write_text``;
- the 256 x 256 map command: the core's `steepness_map` alone vs the command's table (blocks)
  and its CSV text.
"""

from __future__ import annotations

import functools
import json
import pathlib
import tempfile

import numpy as np

import _timing  # benchmarks/_timing.py (the script folder is on sys.path)
from hairtrigger.commands.map import km_axis, steepness_table, table_to_csv
from hairtrigger.core import Cycle, steepness_map
from hairtrigger.io import (
    dumps_snapshot,
    example_path,
    load_snapshot,
    loads_snapshot,
    save_snapshot,
)

best = functools.partial(_timing.best_of, repeat=5)


def main() -> None:
    path = example_path("sequestration_limited")
    text = path.read_text(encoding="utf-8")
    snapshot = load_snapshot(path)

    t_json = best(lambda: json.loads(text), number=2000)
    t_load = best(lambda: loads_snapshot(text), number=2000)
    parsed = json.loads(text)
    t_dump_json = best(lambda: json.dumps(parsed, indent=2), number=2000)
    t_dump = best(lambda: dumps_snapshot(snapshot), number=2000)
    print(
        f"read  snapshot: {t_load * 1e6:8.1f} us   bare json.loads {t_json * 1e6:6.1f} us   "
        f"ratio {t_load / t_json:5.1f}x"
    )
    print(
        f"dumps snapshot: {t_dump * 1e6:8.1f} us   bare json.dumps {t_dump_json * 1e6:6.1f} us   "
        f"ratio {t_dump / t_dump_json:5.1f}x"
    )

    with tempfile.TemporaryDirectory() as folder:
        target = pathlib.Path(folder) / "s.json"
        plain = pathlib.Path(folder) / "plain.json"
        t_save = best(lambda: save_snapshot(snapshot, target, overwrite=True), number=50)
        t_plain = best(
            lambda: plain.write_text(dumps_snapshot(snapshot), encoding="utf-8"), number=50
        )
    print(
        f"save  snapshot: {t_save * 1e6:8.1f} us   plain write_text {t_plain * 1e6:5.1f} us   "
        f"ratio {t_save / t_plain:5.1f}x (fsync + rename)"
    )

    for model in ("quasi_steady", "mass_action"):
        bench_map(snapshot.cycle, model, 256)


def bench_map(cycle: Cycle, model: str, n: int) -> None:
    """Time the core map, the command's table and its CSV text on an n x n grid."""
    km = km_axis(cycle, n, (1e-3, 1e2))

    def core() -> object:
        return steepness_map(cycle, km[:, None], km[None, :], model, "total_modified")

    def table_only() -> dict[str, np.ndarray]:
        return steepness_table(cycle, n, (1e-3, 1e2), model, "total_modified", "hill_coefficient")

    t_core = best(core)
    t_table = best(table_only)
    table = table_only()
    t_csv = best(lambda: table_to_csv(table), repeat=3)
    same = np.array_equal(table["hill_coefficient"], np.ravel(core()), equal_nan=True)
    assert same, "the command's table differs from the core map"
    print(
        f"map {n}x{n} {model:12s}: core {t_core * 1e3:7.2f} ms   command table "
        f"{t_table * 1e3:7.2f} ms (ratio {t_table / t_core:4.2f}x)   CSV text "
        f"{t_csv * 1e3:7.1f} ms (ratio {t_csv / t_core:6.1f}x the core)"
    )


if __name__ == "__main__":
    main()
