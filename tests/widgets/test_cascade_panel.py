"""The cascade panel: its marks and table are `cascade_response`'s numbers; edits are checked.

No kernel and no browser: controls are set from Python and marks read back. The reference
numbers come from `hairtrigger.core.cascade.cascade_response` called here directly on the
same cascade; the cascade itself is the bundled invented example (not a check value — the
physics of cascades is checked against published values in tests/cascade).
"""

from __future__ import annotations

import asyncio
import base64
import dataclasses
import json
import math
import re
from pathlib import Path

import numpy as np
import pytest

from hairtrigger.core.cascade import Cascade, cascade_response
from hairtrigger.io.cascade_file import (
    cascade_example_path,
    dumps_cascade,
    load_cascade,
    loads_cascade,
)
from hairtrigger.widgets import Explorer, ExplorerState
from hairtrigger.widgets.panels import CascadePanel
from hairtrigger.widgets.panels.cascade import (
    DEFAULT_POINTS,
    DEFAULT_SCAN,
    FIELD_SPECS,
    MAX_LEVELS,
    compact_number,
    format_entry,
    parse_amount,
)


@pytest.fixture(scope="module")
def example() -> Cascade:
    return load_cascade(cascade_example_path("tidepool_relay"))


@pytest.fixture(scope="module")
def reference(example):
    """cascade_response at the panel's default scan."""
    return cascade_response(example, *DEFAULT_SCAN, DEFAULT_POINTS)


@pytest.fixture
def panel() -> CascadePanel:
    return CascadePanel(ExplorerState())


def _table_rows(panel: CascadePanel, table: int = 0) -> list[list[str]]:
    """Cells of the data rows of the first (steepness) or second (Hill coefficients) table."""
    tables = re.findall(r"<table[^>]*>(.*?)</table>", panel.table.value)
    rows = re.findall(r"<tr[^>]*>(.*?)</tr>", tables[table])
    return [re.findall(r"<t[dh][^>]*>(.*?)</t[dh]>", row) for row in rows[1:]]


def _marks(panel: CascadePanel) -> list:
    return [panel.curves, panel.operating_line, *panel.ec_markers]


def _assert_marks_finite(panel: CascadePanel) -> None:
    for mark in _marks(panel):
        for name in ("x", "y"):
            values = np.asarray(getattr(mark, name), dtype=float)
            assert np.all(np.isfinite(values)), (type(mark).__name__, name)


@pytest.mark.parametrize("definition", ["free", "total"])
def test_curves_markers_and_table_equal_cascade_response(panel, example, reference, definition):
    assert panel.cascade == example and panel.message.text == ""
    panel.definition.value = definition
    scan = reference.scan
    expected = scan.output(definition) / reference.plateau.output(definition)[None, :]
    np.testing.assert_allclose(panel.curves.x, scan.inputs, rtol=1e-15)
    np.testing.assert_allclose(panel.curves.y, expected.T, rtol=1e-12)
    for i, level in enumerate(reference.levels):
        steep = level.output(definition)
        np.testing.assert_allclose(
            panel.ec_markers[i].x, [steep.ec10, steep.ec50, steep.ec90], rtol=1e-12
        )
        np.testing.assert_array_equal(panel.ec_markers[i].y, [0.1, 0.5, 0.9])
        assert panel.ec_markers[i].visible
    assert not any(m.visible for m in panel.ec_markers[len(reference.levels) :])
    # The table: every level, then the cascade's output, with the core's numbers.
    rows, hills = _table_rows(panel, 0), _table_rows(panel, 1)
    levels = [*reference.levels, reference.overall]
    assert len(rows) == len(hills) == len(levels)
    for row, hill, values, level in zip(rows, hills, panel.rows(), levels, strict=True):
        steep = level.output(definition)
        numbers = (steep.ec10, steep.ec50, steep.ec90, steep.hill_coefficient, steep.plateau)
        assert row[1:] == [compact_number(v) for v in numbers]
        by_definition = (
            level.free.hill_coefficient,
            level.total.hill_coefficient,
            steep.stage_hill_coefficient,
        )
        assert hill[1:] == [compact_number(v) for v in by_definition]
        keys = ("ec10", "ec50", "ec90", "hill_coefficient", "plateau")
        assert [values[k] for k in keys] == pytest.approx(list(numbers), rel=1e-12)
        keys = ("free_hill_coefficient", "total_hill_coefficient", "stage_hill_coefficient")
        assert [values[k] for k in keys] == pytest.approx(list(by_definition), rel=1e-12)
    assert rows[-1][0] == "overall"
    assert panel.y_axis.label == f"{definition} output / plateau"
    # The operating point of the file is drawn where it is.
    assert panel.operating_line.visible
    assert panel.operating_line.x[0] == example.input_enzyme_total
    _assert_marks_finite(panel)


def test_switching_the_output_definition_does_not_rescan(panel):
    computes = panel.computes
    panel.definition.value = "total"
    panel.definition.value = "free"
    assert panel.computes == computes


BAD_ENTRIES = [
    ("kinase.kon", "abc", "not a number"),
    ("kinase.kon", "0", "not allowed"),
    ("kinase.kcat", "-3", "not allowed"),
    ("phosphatase.koff", "-1e-3", "not allowed"),
    ("substrate_total", "nan", "not allowed"),
    ("phosphatase_total", "inf", "not allowed"),
    ("phosphatase.kon", "", "not a number"),
]


@pytest.mark.parametrize("key, text, why", BAD_ENTRIES)
def test_bad_entries_are_refused_beside_the_entry(panel, key, text, why):
    before, computes, shown = panel.cascade, panel.computes, np.array(panel.curves.y)
    panel.fields[key].submit(text)
    assert why in panel.fields[key].message.text
    assert "Error" in panel.fields[key].message.value
    assert panel.cascade == before and panel.computes == computes
    np.testing.assert_array_equal(panel.curves.y, shown)


def test_good_entries_change_the_level_and_rescan(panel):
    computes = panel.computes
    panel.level.value = 1
    panel.fields["kinase.kon"].submit("1200")
    panel.fields["phosphatase.koff"].submit("0")  # zero dissociation is allowed
    level = panel.cascade.levels[1]
    assert level.kinase.kon == 1200.0 and level.phosphatase.koff == 0.0
    assert panel.computes == computes + 2
    expected = cascade_response(panel.cascade, *DEFAULT_SCAN, DEFAULT_POINTS)
    assert panel.rows()[1]["hill_coefficient"] == expected.levels[1].free.hill_coefficient
    panel.sites.value = 1
    assert panel.cascade.levels[1].sites == 1
    panel.name.submit("relay kinase")
    assert panel.cascade.names[1] == "relay kinase"
    assert panel.level.options[1][0] == "2: relay kinase"


@pytest.mark.parametrize("text, why", [("sentinel", "used by another level"), ("  ", "enter")])
def test_bad_names_are_refused(panel, text, why):
    panel.level.value = 2
    before = panel.cascade
    panel.name.submit(text)
    assert why in panel.name.message.text and panel.cascade == before


@pytest.mark.parametrize(
    "end, text, why",
    [
        (0, "1", "low < high"),
        (1, "1e-7", "low < high"),
        (0, "x", "not a number"),
        (0, "1e-30", "15 decades"),
    ],
)
def test_bad_scan_ranges_are_refused(panel, end, text, why):
    entry = (panel.scan_low, panel.scan_high)[end]
    computes = panel.computes
    entry.submit(text)
    assert why in entry.message.text
    assert panel.scan_range == DEFAULT_SCAN and panel.computes == computes


def test_input_total_moves_the_operating_point(panel):
    panel.input_total.submit("2e-5")
    assert panel.cascade.input_enzyme_total == 2e-5
    assert panel.operating_line.x[0] == 2e-5 and panel.operating_line.visible
    panel.input_total.submit("0")
    assert not panel.operating_line.visible
    panel.input_total.submit("-1")
    assert "not allowed" in panel.input_total.message.text
    assert panel.cascade.input_enzyme_total == 0.0


def test_add_and_remove_levels(panel):
    panel.add_level()
    assert len(panel.cascade.levels) == 4 and panel.selected == 3
    assert panel.cascade.levels[3].name == "level 4"
    assert panel.cascade.levels[3].kinase == panel.cascade.levels[2].kinase
    assert np.shape(panel.curves.y)[0] == 4 and len(_table_rows(panel)) == 5
    assert panel.ec_markers[3].visible or panel.response.warnings
    expected = cascade_response(panel.cascade, *DEFAULT_SCAN, DEFAULT_POINTS)
    assert panel.rows()[3]["ec50"] == pytest.approx(expected.levels[3].free.ec50, nan_ok=True)
    _assert_marks_finite(panel)
    panel.level.value = 0
    panel.remove_level()
    assert panel.cascade.names == ("relay", "effector", "level 4")
    assert panel.fields["substrate_total"].entry.value == format_entry(0.8)
    while len(panel.cascade.levels) > 1:
        panel.remove_button.click()
    panel.remove_button.click()
    assert "at least one level" in panel.level_message.text
    assert len(panel.cascade.levels) == 1 and np.atleast_2d(panel.curves.y).shape[0] == 1
    for _ in range(MAX_LEVELS + 1):
        panel.add_button.click()
    assert len(panel.cascade.levels) == MAX_LEVELS
    assert f"at most {MAX_LEVELS}" in panel.level_message.text


def test_save_and_load_round_trip(panel, tmp_path: Path):
    panel.level.value = 1
    panel.fields["kinase.kcat"].submit("61.5")
    panel.title.value = "edited relay (invented)"
    path = tmp_path / "relay.json"
    panel.path.value = str(path)
    panel.save_button.click()
    assert "saved" in panel.file_message.text
    saved = load_cascade(path)
    assert saved == panel.cascade and saved.title == "edited relay (invented)"
    # Saving again without 'overwrite' is refused and leaves the file alone.
    text = path.read_text(encoding="utf-8")
    panel.fields["kinase.kcat"].submit("70")
    assert panel.save(path) is None and "exists" in panel.file_message.text
    assert path.read_text(encoding="utf-8") == text

    other = CascadePanel(ExplorerState())
    other.path.value = str(path)
    other.load_button.click()
    assert other.cascade == saved and "loaded" in other.file_message.text
    assert other.title.value == "edited relay (invented)"
    expected = cascade_response(saved, *DEFAULT_SCAN, DEFAULT_POINTS)
    assert other.rows()[1]["ec50"] == expected.levels[1].free.ec50
    assert other.save(path, overwrite=True) == path
    assert json.loads(path.read_text(encoding="utf-8")) == json.loads(dumps_cascade(saved))


def test_download_link_and_upload(panel, example):
    panel.fields["substrate_total"].submit("0.02")
    link = panel.download.value
    payload = re.search(r"base64,([A-Za-z0-9+/=]+)", link).group(1)
    assert loads_cascade(base64.b64decode(payload)) == panel.cascade
    assert 'download="Tidepool-relay-an-invented-three-tier-salinity-relay.json"' in link

    fresh = CascadePanel(ExplorerState())
    text = dumps_cascade(panel.cascade).encode("utf-8")
    fresh.upload.set_state(
        {
            "value": [
                {
                    "name": "up.json",
                    "type": "application/json",
                    "size": len(text),
                    "content": memoryview(text),
                    "last_modified": 1_700_000_000_000,
                }
            ]
        }
    )
    assert fresh.cascade == panel.cascade and fresh.upload.value == ()
    assert "loaded up.json" in fresh.file_message.text
    fresh.start_from_example()
    assert fresh.cascade == example


def _bad_documents(example) -> dict[str, bytes]:
    good = json.loads(dumps_cascade(example))
    three_sites = json.loads(dumps_cascade(example))
    three_sites["levels"][0]["sites"] = 3
    bad_koff = json.loads(dumps_cascade(example))
    bad_koff["levels"][1]["kinase"]["koff"] = -1
    many = json.loads(dumps_cascade(example))
    many["levels"] = [dict(good["levels"][0], name=f"L{i}") for i in range(MAX_LEVELS + 1)]
    return {
        "not JSON": b"{levels",
        "a snapshot": json.dumps({"format": "hairtrigger.snapshot", "version": 1}).encode(),
        "three sites": json.dumps(three_sites).encode(),
        "negative koff": json.dumps(bad_koff).encode(),
        "too many levels": json.dumps(many).encode(),
    }


@pytest.mark.parametrize(
    "case", ["not JSON", "a snapshot", "three sites", "negative koff", "too many levels"]
)
def test_bad_files_change_nothing(panel, example, tmp_path, case):
    content = _bad_documents(example)[case]
    before, computes, shown = panel.cascade, panel.computes, panel.table.value
    assert not panel.load_text(content, name="bad.json")
    assert "Error" in panel.file_message.value
    path = tmp_path / "bad.json"
    path.write_bytes(content)
    assert not panel.load(path)
    assert str(path) in panel.file_message.text or "bad.json" in panel.file_message.text
    assert panel.cascade == before and panel.computes == computes
    assert panel.table.value == shown
    assert not panel.load(tmp_path / "missing.json")
    assert "no such file" in panel.file_message.text


def test_a_failed_scan_is_shown_and_changes_nothing(panel, monkeypatch):
    shown_y, table, response = np.array(panel.curves.y), panel.table.value, panel.response

    def failing(cascade, low, high, points):
        real = cascade_response(cascade, low, high, points)
        return dataclasses.replace(
            real,
            success=False,
            message="the steady state at input 1e-05 uM failed verification (stationarity 0.1)",
        )

    monkeypatch.setattr("hairtrigger.widgets.panels.cascade.cascade_response", failing)
    panel.fields["kinase.kon"].submit("900")
    assert "failed verification" in panel.message.text and "Error" in panel.message.value
    assert panel.response is response
    np.testing.assert_array_equal(panel.curves.y, shown_y)
    assert "last cascade that scanned successfully" in panel.table.value
    assert panel.table.value != table  # only the note was added
    _assert_marks_finite(panel)


def test_no_nan_reaches_the_browser(messages, example):
    """EC values outside a narrow scan are NaN in the core; the marks get finite data only."""
    panel = CascadePanel(ExplorerState(), scan=(1e-5, 1e-2))
    messages.clear()
    panel.fields["kinase.kon"].submit("650")
    response = panel.response
    assert any(math.isnan(lv.free.ec10) for lv in response.levels)  # outside the scan
    assert any("below the scanned range" in w for w in response.warnings)
    assert "below the scanned range" in panel.table.value
    checked = 0
    marks = {id(m) for m in _marks(panel)}
    for widget, msg, buffers in messages.updates():
        if id(widget) not in marks:
            continue
        state = msg["state"]
        for path, buffer in zip(msg.get("buffer_paths", []), buffers, strict=True):
            dtype = state[path[0]]["dtype"]
            values = np.frombuffer(buffer, dtype=dtype)
            assert np.all(np.isfinite(values)), (type(widget).__name__, path)
            checked += 1
    assert checked >= 2
    _assert_marks_finite(panel)
    # The curves are still the core's numbers where the scan has them.
    expected = response.scan.free / response.plateau.free[None, :]
    np.testing.assert_allclose(panel.curves.y, expected.T, rtol=1e-12)


def test_fit_range_covers_every_level(panel):
    panel.scan_low.submit("1e-5")
    panel.scan_high.submit("1e-4")
    assert panel.response.warnings
    assert panel.fit_range()
    low, high = panel.scan_range
    for row in panel.rows():
        assert low < row["ec10"] and row["ec90"] < high
    assert panel.scan_low.entry.value == format_entry(low)
    assert not panel.response.warnings


def test_edits_in_a_kernel_are_debounced_into_one_scan(example):
    """With a running event loop (as in a kernel) a burst of edits runs one scan."""

    async def scenario() -> tuple[int, int, int]:
        panel = CascadePanel(ExplorerState(), debounce=0.05)
        start = panel.computes
        for value in ("510", "520", "530"):
            panel.fields["kinase.kon"].submit(value)
        during = panel.computes
        assert panel.pending and panel.busy.shown
        await asyncio.sleep(0.3)
        return start, during, panel.computes

    start, during, after = asyncio.run(scenario())
    assert during == start and after == start + 1


def test_the_explorer_takes_it_as_a_tab():
    """The two lines the integrator adds to `Explorer.__init__`."""
    explorer = Explorer()
    explorer.cascade = CascadePanel(explorer.state)
    index = explorer.add_tab("Cascade", explorer.cascade)
    assert explorer.tabs.titles[index] == "Cascade"
    assert explorer.tabs.children[index] is explorer.cascade


@pytest.mark.parametrize(
    "text, allow_zero, ok",
    [
        ("1e-3", False, 1e-3),
        ("2,5", False, 2.5),
        ("\u22121", True, None),
        ("0", True, 0.0),
        ("0", False, None),
        ("1e999", False, None),
    ],
)
def test_parse_amount(text, allow_zero, ok):
    if ok is None:
        with pytest.raises(ValueError):
            parse_amount(text, "x", "µM", allow_zero)
    else:
        assert parse_amount(text, "x", "µM", allow_zero) == ok


@pytest.mark.parametrize("value", [500.0, 0.001, 1e-5, 0.1 + 0.2, 123456789.123])
def test_entries_show_values_that_read_back_exactly(value):
    assert float(format_entry(value)) == value


def test_every_field_is_in_the_form(panel):
    assert set(panel.fields) == {spec.key for spec in FIELD_SPECS}
    level = panel.cascade.levels[0]
    assert panel.fields["kinase.koff"].entry.value == format_entry(level.kinase.koff)
    assert panel.fields["phosphatase.kcat"].entry.value == format_entry(level.phosphatase.kcat)


@pytest.mark.parametrize(
    "value, text",
    [
        (0.000683, "6.83e-4"),
        (5.6784, "5.68"),
        (1.46e-05, "1.46e-5"),
        (0.0123, "0.0123"),
        (math.nan, "—"),
        (123456.0, "1.23e5"),
        (0.0, "0"),
    ],
)
def test_compact_numbers(value, text):
    assert compact_number(value) == text
