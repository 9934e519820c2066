"""Steepness map: clicks set K1 and K2, undefined cells are distinct, recomputes are debounced."""

from __future__ import annotations

import asyncio
import io
import math

import numpy as np
import pytest

from hairtrigger.widgets import ExplorerState, SteepnessMapPanel
from hairtrigger.widgets._support import Debouncer
from hairtrigger.widgets.colors import (
    UNDEFINED_RGB,
    VIRIDIS_ANCHORS,
    colour_bar_png,
    encode_png,
    viridis,
)
from hairtrigger.widgets.panels.steepness import colour_map


@pytest.fixture
def panel(state: ExplorerState) -> SteepnessMapPanel:
    return SteepnessMapPanel(state)


def _decode(png: bytes) -> np.ndarray:
    from PIL import Image  # an independent PNG decoder

    return np.asarray(Image.open(io.BytesIO(png)).convert("RGBA"))


def _click(panel: SteepnessMapPanel, x: float, y: float) -> None:
    # What the browser sends when the Image mark is clicked (payload converted by the scales).
    panel.image_mark._handle_custom_msgs(
        None, {"event": "element_click", "data": {"click_x": x, "click_y": y}}
    )


def test_click_sets_k1_and_k2_in_one_recompute(
    panel: SteepnessMapPanel, state: ExplorerState
) -> None:
    start = state.revision
    _click(panel, 0.0123, 2.5)
    assert state.revision == start + 1
    cells = state.map_resolution
    step = 6.0 / cells  # log10 span of [1e-4, 1e2]
    for clicked, value in ((0.0123, state.K1), (2.5, state.K2)):
        # Snapped to the clicked cell's centre, 3 significant digits: within half a cell.
        assert abs(math.log10(value) - math.log10(clicked)) <= step / 2 + 1e-3
        assert float(f"{value:.3g}") == value
    assert panel.point.x[0] == state.K1 and panel.point.y[0] == state.K2
    assert panel.message.text == ""


def test_click_outside_the_map_is_ignored(panel: SteepnessMapPanel, state: ExplorerState) -> None:
    before = state.inputs
    _click(panel, -1.0, float("nan"))
    assert state.inputs == before
    assert panel.message.text


def test_clicks_at_the_edges_stay_in_bounds(panel: SteepnessMapPanel, state: ExplorerState) -> None:
    _click(panel, 1e-4, 100.0)
    assert 1e-4 <= state.K1 <= 100 and 1e-4 <= state.K2 <= 100


def test_png_decodes_to_the_colours(panel: SteepnessMapPanel, state: ExplorerState) -> None:
    with state.batch():
        state.model = "mass_action"
        state.phosphatase_ratio = 0.5  # many undefined cells
    panel.flush()
    image = panel.current
    decoded = _decode(image.png)
    assert decoded.shape == (state.map_resolution, state.map_resolution, 4)
    np.testing.assert_array_equal(decoded, image.rgba[::-1])  # row 0 = largest K2 at the top
    undefined = ~image.defined
    assert undefined.any() and image.defined.any()
    np.testing.assert_array_equal(
        image.rgba[undefined & ~image.outline][:, :3],
        np.tile(UNDEFINED_RGB, (int((undefined & ~image.outline).sum()), 1)),
    )
    assert panel.image_mark.image.value == image.png
    assert "undefined" in panel.caption.value


def test_nan_never_reaches_a_mark(panel: SteepnessMapPanel, state: ExplorerState) -> None:
    state.phosphatase_ratio = 2.0
    panel.flush()
    assert np.isnan(panel.current.values).any()
    for mark in panel.figure.marks + panel.colour_bar.marks:
        for trait in ("x", "y"):
            assert np.isfinite(np.asarray(getattr(mark, trait), dtype=float)).all()


def test_colour_bar_spans_the_map(panel: SteepnessMapPanel) -> None:
    image = panel.current
    finite = image.values[image.defined]
    assert panel.bar_scale.min == pytest.approx(finite.min())
    assert panel.bar_scale.max == pytest.approx(finite.max())
    assert "Hill" in panel.bar_axis.label
    ticks = np.asarray(panel.bar_axis.tick_values)
    assert len(ticks) >= 2 and (ticks >= finite.min() * 0.999).all()


def test_outline_marks_the_target_level() -> None:
    values = np.tile(np.geomspace(1.0, 100.0, 8), (4, 1))
    rgba, defined, outline, low, high = colour_map(values, target=10.0)
    assert defined.all() and (low, high) == pytest.approx((1.0, 100.0))
    crossing = np.argmax(values[0] > 10.0)
    assert outline[:, crossing - 1].all() and outline.sum() == 4


def test_measure_choice_and_target_entry(panel: SteepnessMapPanel, state: ExplorerState) -> None:
    panel.measure.value = "response_coefficient"
    assert state.map_measure == "response_coefficient"
    assert "response coefficient" in panel.bar_axis.label
    panel.target.value = "banana"
    assert state.map_target == 4.0 and panel.target_message.text
    panel.target.value = "20"
    assert state.map_target == 20.0 and panel.target_message.text == ""


def test_map_ignores_changes_it_does_not_depend_on(
    panel: SteepnessMapPanel, state: ExplorerState
) -> None:
    start = panel.recomputes
    state.activity_ratio = 1.4
    state.K1 = 0.2
    state.kinase_kon = 5000.0
    assert panel.recomputes == start
    state.phosphatase_ratio = 0.2
    assert panel.recomputes == start + 1


def test_500_rapid_changes_recompute_the_map_once(
    panel: SteepnessMapPanel, state: ExplorerState
) -> None:
    async def drag() -> None:
        for value in np.geomspace(0.001, 1.0, 500):
            state.phosphatase_ratio = float(value)  # as a drag in a kernel (a running loop)
        assert panel.pending and panel.busy.shown
        await asyncio.sleep(panel._debouncer.wait + 0.2)

    start = panel.recomputes
    asyncio.run(drag())
    assert panel.recomputes == start + 1
    assert not panel.pending and not panel.busy.shown
    # Consistent: the map on screen is the map at the final parameters.
    assert panel.map_key() == panel._map_key
    reference = SteepnessMapPanel(state)
    np.testing.assert_array_equal(reference.current.rgba, panel.current.rgba)


def test_debouncer_is_synchronous_without_a_loop() -> None:
    calls = []
    debouncer = Debouncer(10.0, lambda: calls.append(1))
    debouncer.request()
    assert calls == [1] and not debouncer.pending


def test_debouncer_flush_and_cancel() -> None:
    calls = []

    async def run() -> None:
        debouncer = Debouncer(10.0, lambda: calls.append(1))
        debouncer.request()
        debouncer.request()
        assert debouncer.pending and calls == []
        debouncer.flush()
        assert calls == [1]
        debouncer.request()
        debouncer.cancel()
        await asyncio.sleep(0)

    asyncio.run(run())
    assert calls == [1]
    with pytest.raises(ValueError, match="wait"):
        Debouncer(-1.0, lambda: None)


def test_viridis_matches_matplotlib() -> None:
    # An independent implementation of the same published colour map.
    import matplotlib

    t = np.linspace(0.0, 1.0, 501)
    reference = matplotlib.colormaps["viridis"](t)[:, :3]
    assert np.abs(viridis(t) - reference).max() < 6 / 255
    assert viridis(np.array([0.0]))[0] == pytest.approx(VIRIDIS_ANCHORS[0], abs=1e-6)
    assert viridis(t).dtype == np.float32


def test_png_encoder_round_trip() -> None:
    rng = np.random.default_rng(1)
    rgba = rng.integers(0, 256, size=(7, 5, 4), dtype=np.uint8)
    np.testing.assert_array_equal(_decode(encode_png(rgba)), rgba)
    bar = _decode(colour_bar_png(64))
    assert bar.shape == (64, 1, 4)
    assert bar[0, 0, 1] > bar[-1, 0, 1]  # yellow (high) on top
    with pytest.raises(ValueError, match="rgba"):
        encode_png(np.zeros((3, 3)))
