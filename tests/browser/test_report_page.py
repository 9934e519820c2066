"""The shareable report in a real browser with the network blocked."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest

from hairtrigger import Cycle
from hairtrigger.io.report import ReportOptions, write_report
from hairtrigger.io.snapshot import Snapshot, dumps_snapshot, loads_snapshot

pytestmark = pytest.mark.browser

# Invented example cycles: a sharp switch with scarce enzymes, and the same pair overexpressed.
SHARP = Cycle(
    substrate_total=2.0,
    kinase_total=0.05,
    kinase_kcat=5.0,
    kinase_km=0.1,
    kinase_kon=100.0,
    phosphatase_total=0.1,
    phosphatase_kcat=2.0,
    phosphatase_km=0.08,
    phosphatase_kon=100.0,
)
SNAPSHOTS = [
    Snapshot(
        cycle=SHARP,
        model="quasi_steady",
        readout="total_modified",
        title="Scaffold-bound switch",
        notes="Invented example.",
    ),
    Snapshot(
        cycle=SHARP.replace(kinase_total=1.0, phosphatase_total=1.5),
        model="mass_action",
        readout="total_modified",
        title="Overexpressed enzymes",
        notes="",
    ),
]


@pytest.fixture(scope="module", params=[1, 2], ids=["single", "comparison"])
def report_file(
    request: pytest.FixtureRequest, tmp_path_factory: pytest.TempPathFactory
) -> tuple[Path, list[Snapshot]]:
    snapshots = SNAPSHOTS[: request.param]
    path = tmp_path_factory.mktemp("report") / "report.html"
    write_report(snapshots, path, options=ReportOptions(map_points=64))
    return path, snapshots


def _open(page: Any, path: Path) -> None:
    page.goto(path.as_uri())
    page.wait_for_load_state("load")


def test_report_makes_no_network_request_and_logs_no_error(
    offline_page: tuple[Any, Any], report_file: tuple[Path, list[Snapshot]], artifacts: Path
) -> None:
    page, log = offline_page
    path, snapshots = report_file
    _open(page, path)
    page.screenshot(path=str(artifacts / f"report-{len(snapshots)}.png"), full_page=True)
    assert log.requests == [path.as_uri()]  # the page itself, nothing else
    assert log.remote_requests == []
    assert log.blocked == []
    assert log.errors() == []


def test_every_figure_renders(
    offline_page: tuple[Any, Any], report_file: tuple[Path, list[Snapshot]]
) -> None:
    page, _log = offline_page
    path, snapshots = report_file
    _open(page, path)
    expected = 3 if len(snapshots) == 1 else 2 + len(snapshots)
    figures = page.locator("svg.hairtrigger-figure")
    assert figures.count() == expected
    for i in range(expected):
        figure = figures.nth(i)
        figure.scroll_into_view_if_needed()
        box = figure.bounding_box()
        assert box is not None and box["width"] > 100 and box["height"] > 100
        # the drawing itself has extent (not an empty svg element), and lines were drawn
        extent = figure.evaluate("svg => { const b = svg.getBBox(); return [b.width, b.height]; }")
        assert min(extent) > 100
        assert figure.locator("path").count() > 10
    # each steepness map is a raster image inside its SVG (so is the colour bar): every image
    # must decode to pixels, and the map's image must be shown large
    maps = page.evaluate(
        """async () => {
            const sel = 'svg.hairtrigger-figure[data-figure$="-map"]';
            const maps = [...document.querySelectorAll(sel)];
            return Promise.all(maps.map(async (svg) => Promise.all(
                [...svg.querySelectorAll('image')].map(async (el) => {
                    const img = new Image();
                    img.src = el.getAttribute('xlink:href') || el.getAttribute('href');
                    await img.decode();
                    const box = el.getBoundingClientRect();
                    return [img.naturalWidth, img.naturalHeight, box.width, box.height];
                }))));
        }"""
    )
    assert len(maps) == len(snapshots)
    for images in maps:
        assert images and all(w > 0 and h > 0 for w, h, _, _ in images)
        assert max(shown_w * shown_h for _, _, shown_w, shown_h in images) > 200 * 200


def test_embedded_snapshots_load_back_exactly(
    offline_page: tuple[Any, Any], report_file: tuple[Path, list[Snapshot]]
) -> None:
    page, _log = offline_page
    path, snapshots = report_file
    _open(page, path)
    blocks = page.evaluate(
        """() => [...document.querySelectorAll('script[type="application/json"]'
                  + '.hairtrigger-snapshot')]
              .map(s => [s.textContent, JSON.parse(s.textContent)])"""
    )
    assert len(blocks) == len(snapshots)
    for (text, parsed), original in zip(blocks, snapshots, strict=True):
        assert parsed == json.loads(dumps_snapshot(original))  # as the browser parses it
        assert dumps_snapshot(loads_snapshot(text)) == dumps_snapshot(original)


def test_download_link_saves_the_snapshot(
    offline_page: tuple[Any, Any], report_file: tuple[Path, list[Snapshot]], tmp_path: Path
) -> None:
    page, log = offline_page
    path, snapshots = report_file
    _open(page, path)
    links = page.locator("a[download]")
    assert links.count() == len(snapshots)
    for i, original in enumerate(snapshots):
        with page.expect_download() as info:
            links.nth(i).click()
        saved = tmp_path / f"saved-{i}.json"
        info.value.save_as(saved)
        assert dumps_snapshot(loads_snapshot(saved.read_text(encoding="utf-8"))) == dumps_snapshot(
            original
        )
    assert log.remote_requests == []
