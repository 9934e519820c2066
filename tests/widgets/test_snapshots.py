"""Snapshots through the widgets: save, load, download, upload, pins, differences, bad files."""

from __future__ import annotations

import base64
import json
import re
from pathlib import Path

import pytest

from hairtrigger.io.snapshot import dumps_snapshot, load_snapshot, loads_snapshot
from hairtrigger.widgets import Explorer


def _set_scene(explorer: Explorer) -> None:
    state = explorer.state
    with state.batch():
        state.K1 = 0.0123
        state.K2 = 0.456
        state.activity_ratio = 1.07
        state.phosphatase_ratio = 0.031
        state.substrate_total = 2.5
        state.kinase_kcat = 3.3
        state.phosphatase_kcat = 7.7
        state.kinase_kon = 900.0
        state.phosphatase_kon = 1100.0
        state.model = "mass_action"
        state.readout = "free_modified"
        state.map_measure = "peak_sensitivity"
        state.map_target = 12.0
        state.step_activity_ratio = 0.7
        state.threshold_basis = "relative"
    explorer.snapshots.title.value = "round trip (invented)"
    explorer.snapshots.notes.value = "notes: ünïcode survives"


def _assert_same(a: Explorer, b: Explorer) -> None:
    for name in a.state.parameter_names():
        assert getattr(b.state, name) == pytest.approx(getattr(a.state, name), rel=1e-13), name
    for name in ("model", "readout", "title", "notes", *a.state.view_names()):
        assert getattr(b.state, name) == getattr(a.state, name), name
    ra, rb = a.state.results, b.state.results
    for block_a, block_b in ((ra, rb), (ra["relative"], rb["relative"])):
        for key, value in block_a.items():
            if isinstance(value, float):
                assert block_b[key] == pytest.approx(value, rel=1e-10), key
            elif not isinstance(value, dict):
                assert block_b[key] == value, key


def test_save_and_load_round_trip_through_the_widgets(tmp_path: Path) -> None:
    first = Explorer()
    _set_scene(first)
    first.snapshots.pin()
    path = tmp_path / "scene.json"
    first.snapshots.path.value = str(path)
    first.snapshots.save_button.click()
    assert path.exists(), first.snapshots.message.text
    assert "saved" in first.snapshots.message.text
    document = json.loads(path.read_text(encoding="utf-8"))
    assert document["format"] == "hairtrigger.snapshot" and document["view"]["map_target"] == 12.0
    assert len(document["pinned"]) == 1

    second = Explorer()
    start = second.state.revision
    second.snapshots.path.value = str(path)
    second.snapshots.load_button.click()
    assert second.state.revision == start + 1, "a load recomputes once"
    _assert_same(first, second)
    assert len(second.state.pinned) == 1
    assert second.snapshots.title.value == "round trip (invented)"
    assert second.steepness.measure.value == "peak_sensitivity"
    # Saved again, the file is the same apart from its creation time.
    again = tmp_path / "again.json"
    second.snapshots.save(again)
    a = json.loads(path.read_text(encoding="utf-8"))
    b = json.loads(again.read_text(encoding="utf-8"))
    a.pop("created"), b.pop("created")
    for block in (a, b):
        for pin in block.get("pinned", []):
            pin.pop("created")
    assert a == b


def test_explorer_opens_a_snapshot_file(tmp_path: Path) -> None:
    first = Explorer()
    _set_scene(first)
    path = first.snapshots.save(tmp_path / "s.json")
    assert path is not None
    second = Explorer(path)
    _assert_same(first, second)
    third = Explorer(load_snapshot(path))
    _assert_same(first, third)


def test_download_link_carries_the_snapshot(explorer: Explorer) -> None:
    _set_scene(explorer)
    explorer.flush()
    link = explorer.snapshots.download.value
    assert 'download="round-trip-invented.json"' in link
    payload = re.search(r"base64,([A-Za-z0-9+/=]+)", link).group(1)
    snapshot = loads_snapshot(base64.b64decode(payload))
    assert snapshot.title == "round trip (invented)"
    assert snapshot.cycle == explorer.state.to_cycle()
    assert snapshot.extras["view"]["map_measure"] == "peak_sensitivity"


def _upload(explorer: Explorer, name: str, text: bytes) -> None:
    # As the front end sends it: a list of files, contents as binary, time in ms.
    explorer.snapshots.upload.set_state(
        {
            "value": [
                {
                    "name": name,
                    "type": "application/json",
                    "size": len(text),
                    "content": memoryview(text),
                    "last_modified": 1_700_000_000_000,
                }
            ]
        }
    )


def test_upload_loads_and_can_pin(explorer: Explorer) -> None:
    source = Explorer()
    _set_scene(source)
    text = dumps_snapshot(source.state.to_snapshot()).encode("utf-8")
    _upload(explorer, "scene.json", text)
    _assert_same(source, explorer)
    assert explorer.snapshots.upload.value == ()  # cleared, so the same file can come again
    assert "loaded scene.json" in explorer.snapshots.message.text
    explorer.snapshots.upload_target.value = "pin"
    before = explorer.state.inputs
    _upload(explorer, "scene.json", text)
    assert explorer.state.inputs == before
    assert explorer.state.pinned[-1].title == "round trip (invented)"


BAD_FILES = {
    "not JSON": b"{not json",
    "empty": b"",
    "wrong format": b'{"format": "something.else", "version": 1}',
    "bad field": None,  # filled below: a negative Km
    "out of range": None,  # a valid snapshot outside the explorer's ranges
    "bad view": None,
}


def _bad_text(kind: str, good: dict) -> bytes:
    if BAD_FILES.get(kind) is not None:
        return BAD_FILES[kind]
    document = json.loads(json.dumps(good))
    if kind == "bad field":
        document["cycle"]["kinase_km"] = -1.0
    elif kind == "out of range":
        document["cycle"]["kinase_km"] = 1e-9
    elif kind == "bad view":
        document["view"] = {"map_measure": "steepest"}
    return json.dumps(document).encode("utf-8")


@pytest.mark.parametrize("kind", list(BAD_FILES))
@pytest.mark.parametrize("route", ["path", "upload"])
def test_a_bad_file_shows_an_error_and_changes_nothing(
    explorer: Explorer, tmp_path: Path, kind: str, route: str
) -> None:
    good = json.loads(dumps_snapshot(explorer.state.to_snapshot()))
    text = _bad_text(kind, good)
    state = explorer.state
    before = (state.inputs, state.revision, state.title, tuple(state.pinned))
    if route == "path":
        path = tmp_path / "bad.json"
        path.write_bytes(text)
        explorer.snapshots.path.value = str(path)
        explorer.snapshots.load_button.click()
    else:
        _upload(explorer, "bad.json", text)
    assert (state.inputs, state.revision, state.title, tuple(state.pinned)) == before
    message = explorer.snapshots.message
    assert message.text.startswith("could not load")
    assert "Error" in message.value


def test_missing_file_and_missing_path(explorer: Explorer, tmp_path: Path) -> None:
    assert not explorer.snapshots.load(tmp_path / "nope.json")
    assert "could not load" in explorer.snapshots.message.text
    explorer.snapshots.path.value = ""
    explorer.snapshots.save_button.click()
    assert "enter a file path" in explorer.snapshots.message.text


def test_save_refuses_to_overwrite_unless_asked(explorer: Explorer, tmp_path: Path) -> None:
    path = tmp_path / "s.json"
    path.write_text("precious", encoding="utf-8")
    assert explorer.snapshots.save(path) is None
    assert "exists" in explorer.snapshots.message.text
    assert path.read_text(encoding="utf-8") == "precious"
    explorer.snapshots.overwrite.value = True
    assert explorer.snapshots.save(path) == path
    assert load_snapshot(path).cycle == explorer.state.to_cycle()


def test_pins_restore_remove_and_difference(explorer: Explorer) -> None:
    snapshots = explorer.snapshots
    state = explorer.state
    state.title = "baseline"
    snapshots.pin_button.click()
    state.phosphatase_ratio = 0.4
    assert len(state.pinned) == 1
    snapshots.compare_a.value = -1
    snapshots.compare_b.value = 0
    explorer.flush()
    table = snapshots.difference.value
    assert "phosphatase_total" in table and "×" in table and "baseline" in table
    snapshots.pins.index = 0
    snapshots.restore_button.click()
    assert state.phosphatase_ratio == pytest.approx(0.02)
    assert len(state.pinned) == 1
    snapshots.unpin_button.click()
    assert state.pinned == ()
    assert "Pin snapshots" in snapshots.difference.value
