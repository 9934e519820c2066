"""Pure numerics of covalent-modification cycles (numpy/scipy only; never imports a widget)."""

from .cascade import (
    Cascade,
    CascadeLevel,
    EnzymeConstants,
    cascade_plateau,
    cascade_response,
    cascade_steady_state,
    cascade_time_course,
    scan_cascade,
)
from .evaluate import EVALUATE_KEYS, MAP_MEASURES, evaluate, evaluate_arrays, steepness_map
from .multisite import MultisiteCycle, multisite_response, multisite_steady_state
from .params import CYCLE_KEYS, CYCLE_UNITS, MODELS, READOUTS, Cycle
from .schedule import STEP_KEYS, Ramp, Schedule, Step
from .steady import SteadyState, goldbeter_koshland, steady_state
from .steepness import inverse_state, peak_sensitivity, readout_ceiling, thresholds
from .sweep import ParameterRange, cycle_sensitivity, run_sweep, sobol_indices
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
    "Cascade",
    "CascadeLevel",
    "Cycle",
    "EnzymeConstants",
    "MultisiteCycle",
    "ParameterRange",
    "SteadyState",
    "cascade_plateau",
    "cascade_response",
    "cascade_steady_state",
    "cascade_time_course",
    "cycle_sensitivity",
    "evaluate",
    "evaluate_arrays",
    "goldbeter_koshland",
    "inverse_state",
    "multisite_response",
    "multisite_steady_state",
    "peak_sensitivity",
    "readout_ceiling",
    "run_sweep",
    "scan_cascade",
    "sobol_indices",
    "steady_state",
    "steepness_map",
    "thresholds",
]
