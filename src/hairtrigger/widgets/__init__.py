"""Jupyter widgets (ipywidgets + bqplot) on one shared state; the only layer importing them.

`Explorer` lays out every panel; each panel in `hairtrigger.widgets.panels` also works on its
own with a shared `ExplorerState`::

    from hairtrigger.widgets import Explorer
    explorer = Explorer()          # or Explorer("my_snapshot.json")
    explorer                       # display it
    explorer.state.K1 = 0.01       # drive it from code
"""

from .explorer import Explorer
from .panels import (
    ControlsPanel,
    ReadoutTable,
    ResponseCurvePanel,
    SnapshotPanel,
    SteepnessMapPanel,
    TimeCoursePanel,
)
from .state import PARAMETERS, ExplorerState, ParameterError

__all__ = [
    "PARAMETERS",
    "ControlsPanel",
    "Explorer",
    "ExplorerState",
    "ParameterError",
    "ReadoutTable",
    "ResponseCurvePanel",
    "SnapshotPanel",
    "SteepnessMapPanel",
    "TimeCoursePanel",
]
