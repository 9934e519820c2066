"""Panels of the explorer; each observes one shared `ExplorerState` and nothing else."""

from .controls import ControlsPanel, KinaseRatioControl, LogControl
from .curve import ResponseCurvePanel
from .steepness import SteepnessMapPanel
from .table import ReadoutTable

__all__ = [
    "ControlsPanel",
    "KinaseRatioControl",
    "LogControl",
    "ReadoutTable",
    "ResponseCurvePanel",
    "SteepnessMapPanel",
]
