"""Panels of the explorer; each observes one shared `ExplorerState` and nothing else."""

from .controls import ControlsPanel, KinaseRatioControl, LogControl
from .curve import ResponseCurvePanel
from .fitting import FittingPanel
from .noise import NoisePanel
from .snapshots import SnapshotPanel
from .steepness import SteepnessMapPanel
from .table import ReadoutTable
from .timecourse import TimeCoursePanel

__all__ = [
    "ControlsPanel",
    "FittingPanel",
    "KinaseRatioControl",
    "LogControl",
    "NoisePanel",
    "ReadoutTable",
    "ResponseCurvePanel",
    "SnapshotPanel",
    "SteepnessMapPanel",
    "TimeCoursePanel",
]
