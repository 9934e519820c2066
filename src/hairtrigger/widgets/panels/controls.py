"""Parameter controls: a log slider with a numeric entry beside it, per parameter.

Every control writes to the shared `ExplorerState` and listens to it, so a value set anywhere
(the map, a snapshot, code) shows up here. An entry that is not a number in range is refused
with a message beside the control, and the state stays as it was. Sliders and entries are
ordinary ipywidgets, so they are reachable with Tab and move with the arrow keys.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import ipywidgets as w
from traitlets import Instance

from ...core import MODELS, READOUTS
from .._support import MessageLine, reporting
from ..state import (
    KINASE_RATIO_SYMBOL,
    MODEL_LABELS,
    PARAMETER_SPECS,
    PARAMETERS,
    READOUT_LABELS,
    ExplorerState,
    ParameterError,
    ParameterSpec,
)

#: Exponent step of the log sliders (one arrow key press changes a value by about 2.3 %).
SLIDER_STEP = 0.01

DESCRIPTION_WIDTH = "92px"

#: Readout names short enough for the dropdown in the 330-px control column (the panels'
#: legends and the table caption use the longer `READOUT_LABELS`).
READOUT_CHOICES: dict[str, str] = {
    "free_modified": "free modified B/W",
    "total_modified": "total modified (B + C2)/W",
}


def format_value(value: float) -> str:
    """Format a parameter for an entry box (4 significant digits, no trailing zeros)."""
    return f"{value:.4g}"


def parse_entry(text: str, name: str, low: float, high: float, unit: str = "") -> float:
    """Parse what a user typed into a numeric entry, or raise `ParameterError` saying why."""
    cleaned = text.strip().replace("\u2212", "-")
    allowed = f"a number between {low:g} and {high:g}{(' ' + unit) if unit else ''}"
    try:
        number = float(cleaned)
    except ValueError:
        msg = f"{name}: {text.strip()!r} is not a number; enter {allowed}"
        raise ParameterError(msg) from None
    if not math.isfinite(number) or not low <= number <= high:
        msg = f"{name}: {cleaned} is out of range; enter {allowed}"
        raise ParameterError(msg)
    return number


class LogControl(w.VBox):
    """Log-scaled slider, numeric entry and message line for one state parameter.

    Parameters
    ----------
    state : ExplorerState
        The shared state.
    name : str
        A parameter name (`ExplorerState.parameter_names`) or ``step_activity_ratio``.
    spec : ParameterSpec, optional
        Overrides the parameter's spec (used for view settings such as the step target).
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState, name: str, spec: ParameterSpec | None = None) -> None:
        self.name = name
        self.spec = spec if spec is not None else PARAMETER_SPECS[name]
        self._state = state  # usable before the widget's traits are initialised
        low, high = self.bounds()
        label = self.spec.symbol + (f" ({self.spec.unit})" if self.spec.unit else "")
        self.slider = w.FloatLogSlider(
            value=self.current(),
            base=10.0,
            min=math.log10(low),
            max=math.log10(high),
            step=SLIDER_STEP,
            readout=False,
            continuous_update=True,
            description=label,
            tooltip=self.spec.description,
            style={"description_width": DESCRIPTION_WIDTH},
            layout=w.Layout(width="240px"),
        )
        self.entry = w.Text(
            value=format_value(self.current()),
            continuous_update=False,
            tooltip=f"type a value between {low:g} and {high:g} and press Enter",
            layout=w.Layout(width="78px"),
        )
        self.entry.add_class("hairtrigger-entry")
        self.message = MessageLine(layout=w.Layout(margin="0 0 0 6px"))
        super().__init__(
            children=[w.HBox([self.slider, self.entry]), self.message],
            state=state,
            layout=w.Layout(margin="0 0 2px 0"),
        )
        self.slider.observe(self._on_slider, "value")
        self.entry.observe(self._on_entry, "value")
        state.observe(self._on_state, self.observed_names())

    # --- binding to the state (overridden by derived controls) -----------------------------
    def observed_names(self) -> list[str]:
        """State traits whose change must refresh this control."""
        return [self.name]

    def current(self) -> float:
        """The value this control shows."""
        return float(getattr(self._state, self.name))

    def bounds(self) -> tuple[float, float]:
        """Inclusive range accepted by the control (equal to the state trait's bounds)."""
        return self.spec.low, self.spec.high

    def apply(self, value: float) -> None:
        """Write `value` to the state (raises `ParameterError` if the state refuses it)."""
        setattr(self._state, self.name, value)

    # --- events ---------------------------------------------------------------------------
    def is_echo(self, value: float) -> bool:
        """True if `value` is the slider's snapped image of the state's current value.

        When the kernel sets a value that is not on the slider's step grid (a typed entry, a
        loaded snapshot, a map click), the browser's FloatLogSlider snaps its handle to the
        grid and sends the snapped value back, even though nobody moved it (ipywidgets 8.1
        with ``continuous_update=True``). Taking that echo would silently change the state
        (0.95 would become 0.955), so it is ignored; a real move lands on another grid point.
        """
        slider = self.slider
        current = self.current()
        if not (value > 0 and current > 0):
            return False
        base = slider.base
        position = math.log(current, base)
        snapped = slider.min + round((position - slider.min) / slider.step) * slider.step
        snapped = min(max(snapped, slider.min), slider.max)
        return abs(math.log(value, base) - snapped) <= 1e-6 * slider.step

    def _on_slider(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            value = float(change["new"])
            if value != self.current() and not self.is_echo(value):
                self.apply(value)
            self.message.clear()

        run()

    def _on_entry(self, change: Mapping[str, Any]) -> None:
        text = change["new"]
        if text == format_value(self.current()):
            return
        low, high = self.bounds()
        try:
            value = parse_entry(text, self.spec.symbol, low, high, self.spec.unit)
            self.apply(value)
        except ParameterError as exc:
            self.message.show_error(str(exc))
            return
        self.message.clear()
        self.refresh()

    def _on_state(self, change: Mapping[str, Any]) -> None:
        reporting(lambda: self.message)(self.refresh)()

    def refresh(self) -> None:
        """Show the state's value on the slider and in the entry."""
        value = self.current()
        if self.slider.value != value:
            self.slider.value = value
        text = format_value(value)
        if self.entry.value != text:
            self.entry.value = text
            self.message.clear()


class KinaseRatioControl(LogControl):
    """The kinase amount as E1/W; moving it moves the activity ratio (the state's input).

    Its range follows the phosphatase level and turnover numbers, so that every position maps
    to an activity ratio within that parameter's bounds.
    """

    def __init__(self, state: ExplorerState) -> None:
        spec = ParameterSpec(
            "kinase_ratio",
            KINASE_RATIO_SYMBOL,
            "total kinase over total substrate (sets the "
            "activity ratio at the current phosphatase level and turnovers)",
            "",
            0.0,
            0.0,
            0.0,
        )
        super().__init__(state, "kinase_ratio", spec=spec)

    def observed_names(self) -> list[str]:  # noqa: D102
        return ["activity_ratio", "phosphatase_ratio", "kinase_kcat", "phosphatase_kcat"]

    def current(self) -> float:  # noqa: D102
        return float(self._state.kinase_ratio)

    def bounds(self) -> tuple[float, float]:  # noqa: D102
        return self._state.kinase_ratio_bounds()

    def apply(self, value: float) -> None:  # noqa: D102
        self._state.set_kinase_ratio(value)

    def refresh(self) -> None:  # noqa: D102
        low, high = self.bounds()
        with self.slider.hold_sync(), self.slider.hold_trait_notifications():
            # Bounds first, then the value: a slider clamps a value outside its current range.
            self.slider.min = math.log10(low)
            self.slider.max = math.log10(high)
            self.slider.value = self.current()
        self.entry.tooltip = f"type a value between {low:.4g} and {high:.4g} and press Enter"
        text = format_value(self.current())
        if self.entry.value != text:
            self.entry.value = text
            self.message.clear()


class ChoiceControl(w.VBox):
    """A dropdown bound to one state choice (model or readout)."""

    state = Instance(ExplorerState)

    def __init__(
        self,
        state: ExplorerState,
        name: str,
        options: list[tuple[str, str]],
        description: str,
        tooltip: str,
    ) -> None:
        self.name = name
        self.dropdown = w.Dropdown(
            options=options,
            value=getattr(state, name),
            description=description,
            tooltip=tooltip,
            style={"description_width": DESCRIPTION_WIDTH},
            layout=w.Layout(width="318px"),
        )
        self.message = MessageLine()
        super().__init__(children=[self.dropdown, self.message], state=state)
        self.dropdown.observe(self._on_dropdown, "value")
        state.observe(self._on_state, name)

    def _on_dropdown(self, change: Mapping[str, Any]) -> None:
        @reporting(lambda: self.message)
        def run() -> None:
            setattr(self.state, self.name, change["new"])
            self.message.clear()

        run()

    def _on_state(self, change: Mapping[str, Any]) -> None:
        if self.dropdown.value != change["new"]:
            self.dropdown.value = change["new"]


class ControlsPanel(w.VBox):
    """All cycle parameters, the model and the readout, bound to one shared state.

    Parameters
    ----------
    state : ExplorerState
        The shared state.

    Attributes
    ----------
    controls : dict of LogControl
        By parameter name (plus ``kinase_ratio``).
    """

    state = Instance(ExplorerState)

    def __init__(self, state: ExplorerState) -> None:
        self.model_control = ChoiceControl(
            state,
            "model",
            [(MODEL_LABELS[m], m) for m in MODELS],
            "model",
            "quasi-steady neglects enzyme-substrate complexes; mass action keeps them "
            "(sequestration)",
        )
        self.readout_control = ChoiceControl(
            state,
            "readout",
            [(READOUT_CHOICES.get(r, READOUT_LABELS[r]), r) for r in READOUTS],
            "readout",
            "what the assay measures: free modified substrate B, or all modified substrate "
            "B + C2 including the part bound to the phosphatase (as measured after lysis); "
            "under sequestration the two differ",
        )
        self.controls: dict[str, LogControl] = {}
        for spec in PARAMETERS:
            self.controls[spec.name] = LogControl(state, spec.name)
            if spec.name == "activity_ratio":
                self.controls["kinase_ratio"] = KinaseRatioControl(state)
        self.binding_note = w.HTML(
            '<span style="color:#4d4d4d;font-size:90%">Binding rates matter for mass-action '
            "time courses only (dissociation rate = a·M − k must not be negative).</span>"
        )
        heading = w.HTML("<b>Cycle</b>")
        enzyme_heading = w.HTML("<b>Enzymes and substrate</b>")
        binding_heading = w.HTML("<b>Binding (mass action)</b>")
        order = list(self.controls)
        super().__init__(
            children=[
                heading,
                self.model_control,
                self.readout_control,
                *(self.controls[n] for n in order[:4]),
                enzyme_heading,
                *(self.controls[n] for n in order[4:8]),
                binding_heading,
                self.binding_note,
                *(self.controls[n] for n in order[8:]),
            ],
            state=state,
        )
        self.add_class("hairtrigger-controls")
        state.observe(self._on_model, "model")
        self._on_model({"new": state.model})

    def _on_model(self, change: Mapping[str, Any]) -> None:
        quasi = change["new"] == "quasi_steady"
        for spec in PARAMETERS:
            if spec.mass_action_only:
                control = self.controls[spec.name]
                control.slider.disabled = quasi
                control.entry.disabled = quasi
