"""Files in and out: snapshots (JSON), data import, SBML export, static reports.

This layer imports `hairtrigger.core` only (plus the standard library).
"""

from .examples import example_path, list_examples, load_example
from .files import atomic_write
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
    "SNAPSHOT_FORMAT",
    "SNAPSHOT_VERSION",
    "Snapshot",
    "SnapshotError",
    "atomic_write",
    "dumps_snapshot",
    "example_path",
    "list_examples",
    "load_example",
    "load_snapshot",
    "loads_snapshot",
    "save_snapshot",
    "snapshot_from_dict",
    "snapshot_schema",
    "snapshot_to_dict",
]
