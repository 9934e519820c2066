"""The fitting panel without a kernel: data in, fits equal to the core's, adoption, bad input.

Fits run inline (``background=False``) except in the tests of the worker thread itself. The
bundled titration is invented data (never a check value): with it the panel is compared with
`fit_dose_response` on the same data, not with expected numbers. Independent checks of what is
drawn use the Hill equation (Hill 1910, J Physiol 40:iv) and the Goldbeter–Koshland function
(Goldbeter & Koshland 1981, PNAS 78:6840) written out here.
"""

from __future__ import annotations

import asyncio
import threading
import time
from typing import Any

import numpy as np
import pytest

from hairtrigger.core import steady_state
from hairtrigger.core.fitting import fit_dose_response, fit_model
from hairtrigger.io.data import example_data_path, parse_data
from hairtrigger.widgets import ExplorerState
from hairtrigger.widgets.panels import FittingPanel
from hairtrigger.widgets.panels.fitting import FitWorker, linear_ticks, plot_positions
from hairtrigger.widgets.state import cycle_arrays

EXAMPLE_TEXT = example_data_path("invented_kinase_titration").read_text(encoding="utf-8")


def _gk(r: np.ndarray, k1: float, k2: float) -> np.ndarray:
    """Goldbeter & Koshland (1981) PNAS 78:6840, modified fraction (V2 = 1), written out."""
    b = 1.0 - r + k1 + r * k2
    return 2.0 * r * k2 / (b + np.sqrt(b * b - 4.0 * (1.0 - r) * r * k2))


def _hill(x: np.ndarray, ec50: float, n: float, bottom: float, top: float) -> np.ndarray:
    """Hill (1910) J Physiol 40:iv, with an assay scale: bottom + (top − bottom)·xⁿ/(K ⁿ + xⁿ)."""
    return bottom + (top - bottom) * x**n / (ec50**n + x**n)


def _tick(panel: FittingPanel, *models: str) -> None:
    for name, box in panel.model_boxes.items():
        box.value = name in models


def _paste_and_fit(panel: FittingPanel, text: str, *models: str) -> None:
    panel.paste.value = text
    panel.paste_button.click()
    _tick(panel, *models)
    panel.fit_button.click()


def _all_marks(panel: FittingPanel) -> list[Any]:
    return [*panel.figure.marks, *panel.residual_figure.marks]


def _mark_arrays(panel: FittingPanel) -> list[tuple[np.ndarray, np.ndarray, bool]]:
    return [(np.array(m.x), np.array(m.y), m.visible) for m in _all_marks(panel)]


@pytest.fixture
def panel(state: ExplorerState) -> FittingPanel:
    return FittingPanel(state, background=False)


@pytest.fixture
def fitted(panel: FittingPanel) -> FittingPanel:
    """The panel after pasting the invented example and fitting the three default models."""
    _paste_and_fit(panel, EXAMPLE_TEXT, "michaelian", "hill", "quasi_steady")
    assert panel.outcome is not None, panel.message.text
    return panel


@pytest.fixture
def hill_fitted(panel: FittingPanel) -> FittingPanel:
    """The panel after pasting the invented example and fitting the Hill model (quick)."""
    _paste_and_fit(panel, EXAMPLE_TEXT, "hill")
    assert panel.outcome is not None, panel.message.text
    return panel


def test_pasted_example_gives_the_numbers_of_fit_dose_response(fitted: FittingPanel) -> None:
    panel, state = fitted, fitted.state
    data = parse_data(EXAMPLE_TEXT, source="pasted data")
    reference = fit_dose_response(
        data,
        "quasi_steady",
        compare=("michaelian", "hill"),
        cycle=state.cycle,
        readout=state.readout,
    )
    fits = panel.outcome.fits
    assert set(fits) == {"michaelian", "hill", "quasi_steady"}
    for name, entry in reference["parameters"].items():
        p = next(p for p in fits["quasi_steady"].parameters if p.name == name)
        assert (p.value, p.low, p.high) == (entry["value"], entry["low"], entry["high"])
    comparison = panel.outcome.comparison
    assert comparison["verdict"] == reference["comparison"]["verdict"]
    assert comparison["verdict"].startswith("steeper than Michaelian at 95 %")
    for name, entry in reference["comparison"]["models"].items():
        assert comparison["models"][name]["aicc"] == entry["aicc"]
        assert comparison["models"][name]["rss"] == entry["rss"]
    hill = fit_dose_response(data, "hill", compare=None)["parameters"]
    for p in fits["hill"].parameters:
        assert (p.value, p.low, p.high) == (
            hill[p.name]["value"],
            hill[p.name]["low"],
            hill[p.name]["high"],
        )
    # What the table and the comparison block say.
    assert "not bounded" in panel.table.value  # K1 has no lower end with these data
    assert f"{hill['hill_coefficient']['value']:.4g}" in panel.table.value
    assert "steeper than Michaelian" in panel.comparison.value
    assert "cannot be told apart" in panel.warnings.value
    assert "INVENTED DATA" not in panel.data_summary.value  # pasted, not the example button
    assert panel.message.text.startswith("fitted 3 models to 36 points")


def test_curves_and_residuals_drawn_are_the_fits(fitted: FittingPanel) -> None:
    fits = fitted.outcome.fits
    hill_line = fitted.curves["hill"]
    x = np.asarray(hill_line.x)
    v = fits["hill"].values
    np.testing.assert_allclose(
        hill_line.y, _hill(x, v["ec50"], v["hill_coefficient"], v["bottom"], v["top"]), rtol=1e-10
    )
    quasi = fits["quasi_steady"].values
    ratio = quasi["input_scale"] * np.asarray(fitted.curves["quasi_steady"].x)
    expected = quasi["bottom"] + (quasi["top"] - quasi["bottom"]) * _gk(
        ratio, quasi["K1"], quasi["K2"]
    )
    np.testing.assert_allclose(fitted.curves["quasi_steady"].y, expected, rtol=1e-9)
    assert not fitted.curves["mass_action"].visible
    data = fitted.data
    for name, marks in fitted.residual_points.items():
        if name not in fits:
            assert not marks.visible
            continue
        np.testing.assert_allclose(marks.y, data.readout - fits[name].fitted, rtol=1e-12)
    # Zero doses sit one decade below the smallest positive dose (2 nM), as the legend says.
    assert np.min(fitted.zero_points.x) == pytest.approx(0.2)
    assert "input 0, drawn at 0.2" in fitted.legend.value
    assert fitted.x_axis.label == "input (nM)"
    assert fitted.y_axis.label == "readout (a.u.)"


def _all_finite(panel: FittingPanel) -> None:
    for mark in _all_marks(panel):
        for name in ("x", "y"):
            values = np.asarray(getattr(mark, name), dtype=float)
            assert np.all(np.isfinite(values)), (type(mark).__name__, name)
        assert np.all(np.asarray(mark.x) > 0), "log input axis"
    for scale in (panel.x_scale, panel.y_scale, panel.residual_scale):
        assert np.isfinite(scale.min) and np.isfinite(scale.max) and scale.min < scale.max


def test_no_nan_reaches_a_mark(panel: FittingPanel) -> None:
    # Zero doses, sd error bars, a model refused for too few points.
    text = (
        "# input_kind: ratio\ninput,readout,sd\n0,0.02,0.01\n0.1,0.05,0.01\n"
        "1,0.5,0.02\n10,0.93,0.01\n"
    )
    _paste_and_fit(panel, text, "michaelian", "hill")
    assert "michaelian" in panel.outcome.fits
    assert "Hill</b> not fitted" in panel.warnings.value
    assert panel.error_bars.visible
    np.testing.assert_allclose(
        np.asarray(panel.error_bars.y)[:, 1] - np.asarray(panel.error_bars.y)[:, 0],
        2 * panel.data.sd,
    )
    _all_finite(panel)
    _paste_and_fit(panel, EXAMPLE_TEXT, "michaelian", "hill", "quasi_steady")
    _all_finite(panel)


BAD_PASTES = {
    "non-numeric readout": ("input,readout\n0,1\n1,2\n2,abc\n3,4\n", 4, "readout"),
    "negative input": ("input,readout\n1,0.1\n-2,0.4\n3,0.9\n", 3, "input"),
    "missing readout column": ("input,signal\n1,0.1\n2,0.4\n", 1, "readout"),
    "empty sd cell": ("# note\ninput,readout,sd\n1,0.1,0.01\n2,0.4,\n", 4, "sd"),
    "decimal comma": ("input;readout\n1;0,1\n2;0.4\n", 2, "readout"),
}


@pytest.mark.parametrize("kind", list(BAD_PASTES))
def test_bad_paste_names_row_and_column_and_changes_nothing(
    hill_fitted: FittingPanel, kind: str
) -> None:
    fitted = hill_fitted
    text, row, column = BAD_PASTES[kind]
    state = fitted.state
    inputs, revision = state.inputs, state.revision
    data, outcome = fitted.data, fitted.outcome
    marks, table = _mark_arrays(fitted), fitted.table.value
    fitted.paste.value = text
    fitted.paste_button.click()
    message = fitted.message.text
    assert f"row {row}" in message and f"column '{column}'" in message, message
    assert "nothing changed" in fitted.message.value
    assert "Error" in fitted.message.value
    assert fitted.data is data and fitted.outcome is outcome
    assert state.inputs == inputs and state.revision == revision
    assert fitted.table.value == table
    for (x0, y0, v0), (x1, y1, v1) in zip(marks, _mark_arrays(fitted), strict=True):
        np.testing.assert_array_equal(x0, x1)
        np.testing.assert_array_equal(y0, y1)
        assert v0 == v1


def _upload(panel: FittingPanel, name: str, content: bytes) -> None:
    # As the front end sends it (ipywidgets 8): a list of files, contents as a memoryview.
    panel.upload.set_state(
        {
            "value": [
                {
                    "name": name,
                    "type": "text/csv",
                    "size": len(content),
                    "content": memoryview(content),
                    "last_modified": 1_700_000_000_000,
                }
            ]
        }
    )


def test_upload_reads_a_bytes_memoryview(panel: FittingPanel) -> None:
    content = "\ufeff".encode() + EXAMPLE_TEXT.encode("utf-8")  # with a byte-order mark
    _upload(panel, "titration.csv", content)
    assert panel.data is not None and panel.data.n_points == 36, panel.message.text
    assert panel.data.source == "titration.csv"
    assert panel.upload.value == ()  # cleared, so the same file can come again
    assert panel.paste.value.startswith("# title: invented titration")
    assert panel.input_kind.value == "amount"  # declared by the file
    np.testing.assert_array_equal(panel.data.readout, parse_data(EXAMPLE_TEXT).readout)
    before = panel.data
    _upload(panel, "broken.csv", b"input,readout\n1,0.5\n2,\xff\n")
    assert "row 3" in panel.message.text and "column 'readout'" in panel.message.text
    assert panel.data is before


def test_example_button_says_the_data_are_invented(panel: FittingPanel) -> None:
    panel.example_button.click()
    assert panel.data is not None and panel.data.n_points == 36
    assert "INVENTED DATA" in panel.data_summary.value
    assert "invented example data (not a measurement)" in panel.message.text


def test_adopt_writes_the_fitted_quasi_steady_cycle_into_the_state(fitted: FittingPanel) -> None:
    state = fitted.state
    state.substrate_total = 2.0
    revision = state.revision
    assert [v for _, v in fitted.adopt_choice.options] == ["quasi_steady"]
    fitted.adopt_button.click()
    values = fitted.outcome.fits["quasi_steady"].values
    assert state.K1 == pytest.approx(values["K1"], rel=1e-12)
    assert state.K2 == pytest.approx(values["K2"], rel=1e-12)
    assert state.model == "quasi_steady"
    assert state.substrate_total == 2.0  # K1, K2 are dimensionless: W is kept
    assert state.revision == revision + 1  # one recompute
    snapshot = state.to_snapshot()
    assert snapshot.cycle.kinase_km == pytest.approx(values["K1"] * 2.0, rel=1e-12)
    assert snapshot.cycle.phosphatase_km == pytest.approx(values["K2"] * 2.0, rel=1e-12)
    assert "from a quasi-steady cycle fit to pasted data" in state.notes
    assert "The data set no lower limit on K1" in fitted.message.text


def test_adopt_mass_action_uses_the_totals_of_the_fit(panel: FittingPanel) -> None:
    state = panel.state  # W = 1 µM, E2 = 0.02 µM, k1 = k2 = 10/s
    truth = dict(cycle_arrays(state.cycle), kinase_km=0.03, phosphatase_km=0.08)
    r = np.logspace(-0.7, 0.7, 14)
    params = dict(
        truth,
        kinase_total=r
        * truth["phosphatase_kcat"]
        * truth["phosphatase_total"]
        / truth["kinase_kcat"],
    )
    y = steady_state(params, "mass_action").readout(state.readout)
    text = "# input_kind: ratio\ninput,readout\n" + "".join(
        f"{float(a)!r},{0.05 + 0.9 * float(b)!r}\n" for a, b in zip(r, y, strict=True)
    )
    _paste_and_fit(panel, text, "mass_action")
    fit = panel.outcome.fits["mass_action"]
    assert fit.values["kinase_km"] == pytest.approx(0.03, rel=1e-4)
    assert fit.values["phosphatase_km"] == pytest.approx(0.08, rel=1e-4)
    # The explorer moves on; adopting restores the totals the fit assumed.
    state.phosphatase_ratio = 0.05
    ratio = state.activity_ratio
    assert panel.adopt("mass_action")
    assert state.phosphatase_ratio == pytest.approx(0.02, rel=1e-12)
    assert state.K1 == pytest.approx(fit.values["kinase_km"], rel=1e-12)
    assert state.K2 == pytest.approx(fit.values["phosphatase_km"], rel=1e-12)
    assert state.activity_ratio == pytest.approx(ratio, rel=1e-12)
    assert state.model == "mass_action"


def test_adopt_refuses_a_value_outside_the_sliders(panel: FittingPanel) -> None:
    # Goldbeter–Koshland curve with K1 = 3e-5, below the explorer's K1 range (1e-4 ... 100).
    r = np.logspace(-1, 1, 15)
    y = 0.1 + 2.0 * _gk(r, 3e-5, 0.05) + 1e-4 * np.sin(np.arange(15))
    text = "input,readout\n" + "".join(
        f"{float(a)!r},{float(b)!r}\n" for a, b in zip(r, y, strict=True)
    )
    _paste_and_fit(panel, text, "quasi_steady")
    assert panel.outcome.fits["quasi_steady"].values["K1"] < 1e-4
    state = panel.state
    inputs, revision, notes = state.inputs, state.revision, state.notes
    panel.adopt_button.click()
    assert "not adopted (nothing changed)" in panel.message.text
    assert "K1" in panel.message.text and "outside the explorer's range" in panel.message.text
    assert state.inputs == inputs and state.revision == revision and state.notes == notes


def test_fit_needs_data_and_a_model(panel: FittingPanel) -> None:
    panel.fit_button.click()
    assert "load data first" in panel.message.text
    panel.paste.value = EXAMPLE_TEXT
    panel.paste_button.click()
    _tick(panel)
    panel.fit_button.click()
    assert "tick at least one model" in panel.message.text
    assert panel.outcome is None
    assert panel.adopt_button.disabled


def test_conflicting_input_kind_keeps_previous_fits(hill_fitted: FittingPanel) -> None:
    fitted = hill_fitted
    outcome = fitted.outcome
    fitted.input_kind.value = "ratio"  # the example declares doses ('amount')
    fitted.fit_button.click()
    assert "no model could be fitted (nothing changed)" in fitted.message.text
    assert "conflicts with the data" in fitted.message.text
    assert fitted.outcome is outcome


def test_new_data_clear_the_fits(hill_fitted: FittingPanel) -> None:
    fitted = hill_fitted
    fitted.load_text("input,readout\n0.1,0.1\n1,0.5\n10,0.9\n100,0.95\n")
    assert fitted.outcome is None
    assert fitted.table.value == "" and fitted.adopt_button.disabled
    assert not any(line.visible for line in fitted.curves.values())
    assert fitted.input_kind.value == "ratio"
    assert fitted.x_axis.label == "activity ratio r = V1/V2"


def test_each_mark_is_updated_in_one_message(panel: FittingPanel, messages: Any) -> None:
    panel.paste.value = EXAMPLE_TEXT
    panel.paste_button.click()
    _tick(panel, "hill", "quasi_steady")
    messages.clear()
    panel.fit_button.click()
    updates: dict[int, int] = {}
    for widget, _, _ in messages.updates():
        updates[id(widget)] = updates.get(id(widget), 0) + 1
    for name in ("hill", "quasi_steady"):
        assert updates[id(panel.curves[name])] == 1
        assert updates[id(panel.residual_points[name])] == 1
    assert updates.get(id(panel.curves["michaelian"]), 0) == 0  # hidden and untouched


def test_plot_positions_put_zero_a_decade_below() -> None:
    xs, zero, (left, right) = plot_positions(np.array([0.0, 0.5, 5.0]))
    assert zero == pytest.approx(0.05)
    np.testing.assert_allclose(xs, [0.05, 0.5, 5.0])
    assert left < 0.05 and right > 5.0
    xs, zero, _ = plot_positions(np.array([0.0, 0.0]))
    assert zero is not None and np.all(xs > 0)


# --- the worker ----------------------------------------------------------------------------


def test_worker_delivers_only_the_newest_job() -> None:
    worker = FitWorker(background=True)
    release = threading.Event()
    delivered: list[str] = []

    def slow(cancelled: Any) -> str:
        release.wait(5.0)
        return "first"

    worker.submit(slow, delivered.append)
    worker.submit(lambda cancelled: "second", delivered.append)
    assert worker.wait(5.0)
    release.set()
    time.sleep(0.05)
    assert delivered == ["second"]
    assert worker.dropped == 1


def test_background_fit_matches_inline_and_can_be_cancelled(state: ExplorerState) -> None:
    inline = FittingPanel(state, background=False)
    _paste_and_fit(inline, EXAMPLE_TEXT, "hill")
    threaded = FittingPanel(state, background=True)
    _paste_and_fit(threaded, EXAMPLE_TEXT, "hill")
    assert threaded.wait(30.0)
    assert threaded.outcome is not None, threaded.message.text
    assert threaded.outcome.fits["hill"].values == inline.outcome.fits["hill"].values
    assert threaded.cancel_button.disabled and not threaded.busy.shown
    previous = threaded.outcome
    threaded.fit_button.click()
    assert not threaded.cancel_button.disabled and threaded.busy.shown
    threaded.cancel_button.click()
    assert threaded.cancel_button.disabled and not threaded.busy.shown
    time.sleep(0.05)
    deadline = time.time() + 30.0
    while any(t.name.startswith("hairtrigger-fit") for t in threading.enumerate()):
        assert time.time() < deadline
        time.sleep(0.02)
    assert threaded.outcome is previous  # the cancelled result was ignored
    assert "cancelled" in threaded.message.text


def test_in_a_kernel_loop_results_arrive_on_the_loop_thread(state: ExplorerState) -> None:
    seen: list[threading.Thread] = []

    async def scenario() -> FittingPanel:
        panel = FittingPanel(state)  # default: a worker thread when a loop runs
        original = panel._draw

        def draw() -> None:
            seen.append(threading.current_thread())
            original()

        panel._draw = draw  # type: ignore[method-assign]
        panel.load_text(EXAMPLE_TEXT)
        seen.clear()
        _tick(panel, "michaelian")
        panel.fit_button.click()
        assert panel.outcome is None  # not inline
        for _ in range(3000):
            if panel.outcome is not None:
                break
            await asyncio.sleep(0.01)
        return panel

    panel = asyncio.run(scenario())
    assert panel.outcome is not None
    assert seen == [threading.main_thread()]
    ref = fit_model(parse_data(EXAMPLE_TEXT), "michaelian")
    assert panel.outcome.fits["michaelian"].values == ref.values


@pytest.mark.parametrize(
    "low, high, expected",
    [
        (-406.1, 3334.7, [0.0, 1000.0, 2000.0, 3000.0]),
        (-1025.8, 1025.8, [-1000.0, -500.0, 0.0, 500.0, 1000.0]),
        (0.0, 1.0, [0.0, 0.2, 0.4, 0.6, 0.8, 1.0]),
        (0.1, 0.3, [0.1, 0.15, 0.2, 0.25, 0.3]),
        (1.0, 1.0, []),
    ],
)
def test_linear_ticks_are_round(low: float, high: float, expected: list[float]) -> None:
    assert linear_ticks(low, high, 5) == expected
