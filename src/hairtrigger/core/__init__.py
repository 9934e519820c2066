"""Pure numerics of covalent-modification cycles (numpy/scipy only; never imports a widget)."""

from .evaluate import EVALUATE_KEYS, MAP_MEASURES, evaluate, evaluate_arrays, steepness_map
from .params import CYCLE_KEYS, CYCLE_UNITS, MODELS, READOUTS, Cycle
from .schedule import STEP_KEYS, Ramp, Schedule, Step
from .steady import SteadyState, goldbeter_koshland, steady_state
from .steepness import inverse_state, peak_sensitivity, readout_ceiling, thresholds
from .switching import (
    SwitchingMetrics,
    relaxation_profile,
    relaxation_time,
    switching_metrics,
    switching_round_trip,
)
from .timecourse import COURSE_KEYS, TimeCourse, time_course

__all__ = [
    "COURSE_KEYS",
    "STEP_KEYS",
    "Ramp",
    "Schedule",
    "Step",
    "SwitchingMetrics",
    "TimeCourse",
    "relaxation_profile",
    "relaxation_time",
    "switching_metrics",
    "switching_round_trip",
    "time_course",
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
