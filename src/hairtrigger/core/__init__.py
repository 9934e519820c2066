"""Pure numerics of covalent-modification cycles (numpy/scipy only; never imports a widget)."""

from .evaluate import EVALUATE_KEYS, MAP_MEASURES, evaluate, evaluate_arrays, steepness_map
from .params import CYCLE_KEYS, CYCLE_UNITS, MODELS, READOUTS, Cycle
from .steady import SteadyState, goldbeter_koshland, steady_state
from .steepness import inverse_state, peak_sensitivity, readout_ceiling, thresholds

__all__ = [
    "CYCLE_KEYS",
    "CYCLE_UNITS",
    "EVALUATE_KEYS",
    "MAP_MEASURES",
    "MODELS",
    "READOUTS",
    "Cycle",
    "SteadyState",
    "evaluate",
    "evaluate_arrays",
    "goldbeter_koshland",
    "inverse_state",
    "peak_sensitivity",
    "readout_ceiling",
    "steady_state",
    "steepness_map",
    "thresholds",
]
