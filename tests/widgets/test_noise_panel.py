"""Noise panel: marks equal the core's numbers, bad copy numbers refused, trajectories on demand.

Check values come from `hairtrigger.core.noise` / `ssa` / `timecourse` (themselves checked
against published exact cases in tests/core); the conversion 1 µM in 1 fL = N_A·1e-21 molecules
uses the exact SI value of the Avogadro constant (BIPM, SI Brochure 9th edition, 2019).
"""

from __future__ import annotations

import asyncio
import math
import re
from typing import Any

import bqplot as bq
import numpy as np
import pytest

from hairtrigger.core.noise import (
    BirthDeathChain,
    population_response,
    population_thresholds,
    stationary_distribution,
)
from hairtrigger.core.ssa import simulate_ensemble
from hairtrigger.core.steady import goldbeter_koshland
from hairtrigger.core.timecourse import time_course
from hairtrigger.widgets import ExplorerState
from hairtrigger.widgets.panels import NoisePanel
from hairtrigger.widgets.panels import noise as noise_module
from hairtrigger.widgets.panels.noise import (
    PANEL_MAX_MOLECULES,
    TRAJECTORY_POINTS,
    binned_distribution,
    parse_copy_entry,
)


@pytest.fixture
def qs_state() -> ExplorerState:
    return ExplorerState(model="quasi_steady")


@pytest.fixture
def panel(qs_state: ExplorerState) -> NoisePanel:
    p = NoisePanel(qs_state, background=False)
    p.trajectories_entry.value = 40
    p.t_end_entry.value = 2.0
    return p


def _marks(p: NoisePanel) -> list[bq.Mark]:
    return [
        m
        for fig in (p.distribution_figure, p.population_figure, p.trajectory_figure)
        for m in fig.marks
    ]


def _assert_no_nan(p: NoisePanel) -> None:
    for mark in _marks(p):
        for name in ("x", "y"):
            values = np.asarray(getattr(mark, name), dtype=float)
            assert np.all(np.isfinite(values)), (type(mark).__name__, name)


# --- copy number ----------------------------------------------------------------------------


def test_one_femtolitre_at_one_micromolar_is_602_molecules(panel: NoisePanel) -> None:
    # N_A · 1e-6 mol/L · 1e-15 L = 602.214… (exact Avogadro constant, SI 2019).
    assert panel.copies is not None
    assert panel.copies.substrate == round(6.02214076e23 * 1e-21)
    assert "N = 602" in panel.copy_info.value


def test_molecule_entry_sets_n(panel: NoisePanel) -> None:
    panel.mode_buttons.value = "molecules"  # converts the current compartment: N kept
    assert panel.setting.mode == "molecules" and panel.setting.value == 602
    panel.copy_entry.value = "150"
    assert panel.chain is not None and panel.chain.molecules == 150
    assert panel.distribution is not None and panel.distribution.molecules == 150
    assert panel.copy_message.text == ""


@pytest.mark.parametrize(
    ("mode", "text", "fragment"),
    [
        ("molecules", "abc", "not a number"),
        ("molecules", "0", ">= 1"),
        ("molecules", "-5", ">= 1"),
        ("molecules", "12.5", "whole number"),
        ("molecules", str(PANEL_MAX_MOLECULES + 1), "at most"),
        ("volume", "0", "> 0"),
        ("volume", "nan", "> 0"),
        ("volume", "-1", "> 0"),
        ("volume", "1e-9", "at least 1"),  # 6e-7 molecules: none left
        ("volume", "1e4", "panel's limit"),
    ],
)
def test_bad_copy_number_is_refused_and_nothing_changes(
    panel: NoisePanel, mode: str, text: str, fragment: str
) -> None:
    if panel.mode_buttons.value != mode:
        panel.mode_buttons.value = mode
    setting, revision = panel.setting, panel._state.revision
    y_before = np.array(panel.distribution_line.y)
    panel.copy_entry.value = text
    assert fragment in panel.copy_message.text
    assert "Error" in panel.copy_message.value
    assert panel.setting == setting
    assert panel._state.revision == revision
    np.testing.assert_array_equal(panel.distribution_line.y, y_before)
    with pytest.raises(ValueError, match=re.escape(fragment)):
        panel.set_copy_number(mode, text)


def test_parse_copy_entry_accepts_separators() -> None:
    assert parse_copy_entry("10,000", "molecules").value == 10000
    assert parse_copy_entry(" 2.5 ", "volume").value == 2.5


# --- the exact distribution -----------------------------------------------------------------


def test_distribution_marks_equal_core(panel: NoisePanel, qs_state: ExplorerState) -> None:
    panel.set_copy_number("molecules", 200)
    chain = BirthDeathChain.from_cycle(qs_state.cycle, molecules=200)
    dist = stationary_distribution(chain)
    x = np.asarray(panel.distribution_line.x)
    y = np.asarray(panel.distribution_line.y)
    states = x[:-1].astype(int)
    assert np.all(np.diff(states) == 1)  # N = 200: one bin per state
    np.testing.assert_allclose(y[:-1], dist.probabilities[states], rtol=1e-12)
    # The window leaves out only states far below the peak.
    assert dist.probabilities[states].sum() > 1 - 1e-6
    assert panel.mean_marker.x[0] == pytest.approx(dist.mean, rel=1e-12)
    det = 200 * float(goldbeter_koshland(qs_state.activity_ratio, 1.0, chain.K1, chain.K2))
    assert panel.deterministic_marker.x[0] == pytest.approx(det, rel=1e-12)
    text = panel.summary.value
    assert f"{dist.mean:.4g}" in text and f"{dist.standard_deviation:.3g}" in text
    assert f"Fano factor {dist.fano_factor:.3g}" in text


def test_distribution_follows_the_state(panel: NoisePanel, qs_state: ExplorerState) -> None:
    qs_state.activity_ratio = 1.3
    chain = BirthDeathChain.from_cycle(qs_state.cycle, volume=1.0)
    assert panel.mean_marker.x[0] == pytest.approx(stationary_distribution(chain).mean)


def test_binning_keeps_height_and_mass() -> None:
    dist = stationary_distribution(BirthDeathChain(200_000, 1.0, 0.05, 0.05))
    x, y = binned_distribution(dist, max_bins=300)
    assert x.size <= 302
    widths = np.diff(x)
    assert float(np.sum(y[:-1] * widths)) == pytest.approx(1.0, abs=1e-6)
    assert float(np.max(y)) == pytest.approx(dist.probabilities.max(), rel=0.05)


# --- the population response ----------------------------------------------------------------


def test_population_marks_equal_core(panel: NoisePanel, qs_state: ExplorerState) -> None:
    chain = BirthDeathChain.from_cycle(qs_state.cycle, volume=1.0)
    ratios = np.asarray(panel.population_line.x)
    response = population_response(chain, ratios)
    np.testing.assert_allclose(panel.population_line.y, response.mean_fraction, rtol=1e-12)
    np.testing.assert_allclose(
        panel.deterministic_line.y,
        goldbeter_koshland(ratios, 1.0, qs_state.K1, qs_state.K2),
        rtol=1e-12,
    )
    thresholds = population_thresholds(chain)
    assert ratios[0] < thresholds.activity_ratio_10 < thresholds.activity_ratio_90 < ratios[-1]
    text = panel.hill_text.value
    assert f"population {thresholds.hill_coefficient:.3g}" in text
    assert f"deterministic {thresholds.deterministic_hill_coefficient:.3g}" in text
    # Finite N flattens the population mean (Berg, Paulsson & Ehrenberg 2000, Biophys J).
    assert thresholds.hill_coefficient < thresholds.deterministic_hill_coefficient


def test_large_n_is_debounced_in_a_running_loop(panel: NoisePanel) -> None:
    async def move() -> tuple[bool, int]:
        panel.set_copy_number("molecules", 3_000)
        return panel._debouncer.pending, panel.chain.molecules  # type: ignore[union-attr]

    before = panel.thresholds
    pending, n = asyncio.run(move())
    assert pending and n == 3_000
    # The distribution (N <= live limit) is already drawn; the population curve waits.
    assert panel.distribution is not None and panel.distribution.molecules == 3_000
    assert panel.thresholds is before
    panel.flush()
    assert panel.thresholds is not before
    assert not panel._debouncer.pending
    ratios = np.asarray(panel.population_line.x)
    expected = population_response(panel.chain, ratios).mean_fraction  # type: ignore[arg-type]
    np.testing.assert_allclose(panel.population_line.y, expected, rtol=1e-12)


# --- trajectories -----------------------------------------------------------------------------


def test_trajectories_equal_core_and_reproduce(panel: NoisePanel, qs_state: ExplorerState) -> None:
    panel.seed_entry.value = 7
    panel.simulate()
    first = panel.outcome
    assert first is not None and first.ensemble.status == "completed"
    cycle = qs_state.cycle
    steps = {"kinase_total": cycle.with_activity_ratio(qs_state.step_activity_ratio).kinase_total}
    direct = simulate_ensemble(
        cycle,
        2.0,
        40,
        volume=1.0,
        model="quasi_steady",
        points=TRAJECTORY_POINTS,
        seed=7,
        steps=steps,
    )
    values = direct.readout(qs_state.readout)
    np.testing.assert_allclose(panel.mean_line.y, values.mean(axis=0), rtol=1e-12)
    np.testing.assert_allclose(panel.band.y[1] - panel.band.y[0], 2 * values.std(axis=0, ddof=1))
    course = time_course(
        cycle, steps, 2.0, TRAJECTORY_POINTS, model="quasi_steady", readout=qs_state.readout
    )
    np.testing.assert_allclose(panel.course_line.y, course["readout"], rtol=1e-12)
    band = np.array(panel.band.y)
    panel.simulate()  # same seed, same trajectories
    np.testing.assert_array_equal(panel.band.y, band)
    panel.seed_entry.value = 8
    panel.simulate()
    assert not np.array_equal(panel.band.y, band)
    assert panel.progress_bar.value == 40
    _assert_no_nan(panel)


def test_cancel_stops_between_chunks(panel: NoisePanel, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(noise_module, "simulate_ensemble", _chunked(noise_module.simulate_ensemble))
    original = panel._progress

    def progress_then_cancel(done: int, total: int) -> None:
        original(done, total)
        panel.cancel()  # as if the Cancel button were pressed after the first chunk

    monkeypatch.setattr(panel, "_progress", progress_then_cancel)
    panel.trajectories_entry.value = 400
    panel.simulate()
    outcome = panel.outcome
    assert outcome is not None
    assert outcome.ensemble.status == "cancelled"
    assert 0 < outcome.ensemble.trajectories < 400
    assert "cancelled" in panel.trajectory_message.text
    assert not panel.run_button.disabled and panel.cancel_button.disabled
    _assert_no_nan(panel)


def _chunked(function: Any) -> Any:
    """simulate_ensemble with small chunks, so a run has several cancel points."""
    from hairtrigger.core import ssa

    def wrapper(*args: Any, **kwargs: Any) -> Any:
        saved = ssa._EVENTS_PER_CHUNK
        ssa._EVENTS_PER_CHUNK = 2000.0  # type: ignore[misc]
        try:
            return function(*args, **kwargs)
        finally:
            ssa._EVENTS_PER_CHUNK = saved  # type: ignore[misc]

    return wrapper


def test_background_run_and_cancel_button(qs_state: ExplorerState) -> None:
    p = NoisePanel(qs_state)  # worker thread
    p.trajectories_entry.value = 20
    p.t_end_entry.value = 1.0
    p.run_button.click()
    assert p.wait(timeout=60)
    assert p.outcome is not None and p.outcome.ensemble.trajectories == 20
    p.cancel_button.disabled = False
    p.cancel_button.click()
    assert p._cancel.is_set()


def test_one_trajectory_sends_no_nan(panel: NoisePanel) -> None:
    panel.trajectories_entry.value = 1
    panel.simulate()
    assert "one trajectory" in panel.trajectory_message.text
    np.testing.assert_array_equal(panel.band.y[0], panel.band.y[1])
    _assert_no_nan(panel)


def test_stale_run_is_flagged(panel: NoisePanel, qs_state: ExplorerState) -> None:
    panel.simulate()
    assert panel.trajectory_stale.value == ""
    qs_state.K1 = 0.1
    assert "Parameters changed" in panel.trajectory_stale.value


def test_refused_ensemble_shows_error(panel: NoisePanel) -> None:
    panel.t_end_entry.value = 1e6
    panel.trajectories_entry.value = 20_000
    panel.simulate()
    assert "Error" in panel.trajectory_message.value
    assert panel.outcome is None
    assert not panel.run_button.disabled


def test_no_nan_in_any_mark_after_updates(panel: NoisePanel, qs_state: ExplorerState) -> None:
    for n in (1, 2, 50):
        panel.set_copy_number("molecules", n)
        _assert_no_nan(panel)
    qs_state.K1 = 1e-4
    qs_state.K2 = 1e2
    qs_state.activity_ratio = 1e-3
    _assert_no_nan(panel)
    assert math.isfinite(panel.distribution.mean)  # type: ignore[union-attr]


def test_compartment_that_no_longer_fits_keeps_the_last_view(
    panel: NoisePanel, qs_state: ExplorerState
) -> None:
    panel.set_copy_number("volume", 0.5)
    y_before = np.array(panel.distribution_line.y)
    qs_state.substrate_total = 1e-3  # 0.5 fL now holds 0.3 substrate molecules
    assert "copy number" in panel.message.text and "at least 1" in panel.message.text
    np.testing.assert_array_equal(panel.distribution_line.y, y_before)
    qs_state.substrate_total = 1.0
    assert panel.message.text == ""


def test_wired_into_the_explorer_as_a_tab(messages: Any) -> None:
    from hairtrigger.widgets import Explorer

    explorer = Explorer()
    panel = NoisePanel(explorer.state)
    index = explorer.add_tab("Noise", panel)
    assert explorer.tabs.titles[index] == "Noise"
    assert explorer.tabs.titles[:2] == ("Readout", "Snapshots")
    slider = explorer.controls.controls["activity_ratio"].slider
    messages.clear()
    slider.value = 1.05
    ours = [m for m in messages.updates() if m[0] in _panel_widgets(panel)]
    # One message per changed mark or scale (hold_sync), a handful of texts: bounded.
    assert 0 < len(ours) <= 16
    chain = BirthDeathChain.from_cycle(explorer.state.cycle, volume=1.0)
    assert panel.mean_marker.x[0] == pytest.approx(stationary_distribution(chain).mean)


def test_large_n_move_sends_little_before_the_pause(panel: NoisePanel, messages: Any) -> None:
    panel.set_copy_number("molecules", 200_000)
    panel.flush()

    async def move() -> int:
        messages.clear()
        panel._state.activity_ratio = 1.02
        return len([m for m in messages.updates() if m[0] in _panel_widgets(panel)])

    sent = asyncio.run(move())
    assert sent <= 2  # the busy indicator only; p(n) and the population curve wait
    assert panel._debouncer.pending
    panel.flush()
    chain = BirthDeathChain.from_cycle(panel._state.cycle, molecules=200_000)
    assert panel.mean_marker.x[0] == pytest.approx(stationary_distribution(chain).mean)


def _panel_widgets(panel: NoisePanel) -> set[Any]:
    found: set[Any] = set()

    def walk(widget: Any) -> None:
        if id(widget) in {id(x) for x in found}:
            return
        found.add(widget)
        for name in ("children", "marks", "axes"):
            for child in getattr(widget, name, ()) or ():
                walk(child)
        for name in ("scales", "scale"):
            value = getattr(widget, name, None)
            if isinstance(value, dict):
                for child in value.values():
                    walk(child)
            elif value is not None and hasattr(value, "comm"):
                walk(value)

    walk(panel)
    return found


def test_busy_indicator_shows_while_an_ensemble_runs(panel: NoisePanel) -> None:
    seen: list[bool] = []
    original = panel._progress

    def watch(done: int, total: int) -> None:
        seen.append(panel.busy.shown)
        original(done, total)

    panel._progress = watch  # type: ignore[method-assign]
    panel.simulate()
    assert seen and all(seen)
    assert not panel.busy.shown
