"""hairtrigger: design and analyse covalent-modification switches.

The public API re-exported here is stable; see DEVELOPERS.md for the layout. Importing this
package loads numpy and scipy only; the widget layer lives in `hairtrigger.widgets`.
"""

from .core import CYCLE_KEYS, Cycle, evaluate, steepness_map, time_course
from .core.fitting import fit_dose_response
from .io import Snapshot, load_snapshot, save_snapshot
from .io.data import load_data

__version__ = "0.1.0"

__all__ = [
    "CYCLE_KEYS",
    "Cycle",
    "Snapshot",
    "__version__",
    "evaluate",
    "fit_dose_response",
    "load_data",
    "load_snapshot",
    "save_snapshot",
    "steepness_map",
    "time_course",
]
