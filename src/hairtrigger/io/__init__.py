"""Files in and out: snapshots (JSON), data import, SBML export, static reports.

This layer imports `hairtrigger.core` only (plus the standard library).
"""

from .data import DataError, example_data_path, list_example_data, load_data, parse_data
from .examples import example_path, list_examples, load_example
from .files import atomic_write
from .sbml import consistency_problems, cycle_to_sbml, read_sbml_parameters, write_sbml
from .snapshot import (
    MAX_SNAPSHOT_BYTES,
    SNAPSHOT_FORMAT,
    SNAPSHOT_VERSION,
    Snapshot,
    SnapshotError,
    dumps_snapshot,
    load_snapshot,
    loads_snapshot,
    save_snapshot,
    snapshot_from_dict,
    snapshot_schema,
    snapshot_to_dict,
)

__all__ = [
    "MAX_SNAPSHOT_BYTES",
    "DataError",
    "SNAPSHOT_FORMAT",
    "SNAPSHOT_VERSION",
    "Snapshot",
    "SnapshotError",
    "atomic_write",
    "consistency_problems",
    "cycle_to_sbml",
    "dumps_snapshot",
    "example_data_path",
    "example_path",
    "list_example_data",
    "list_examples",
    "load_data",
    "load_example",
    "load_snapshot",
    "loads_snapshot",
    "parse_data",
    "read_sbml_parameters",
    "save_snapshot",
    "snapshot_from_dict",
    "snapshot_schema",
    "snapshot_to_dict",
    "write_sbml",
]
