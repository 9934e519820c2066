"""Content of the shareable HTML report (hairtrigger.io.report) and its atomic writing."""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
import re
import sys
from collections import Counter
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from hairtrigger import evaluate
from hairtrigger.io import report as report_module
from hairtrigger.io.report import (
    CAUTION,
    SNAPSHOT_BLOCK_CLASS,
    ReportDependencyError,
    ReportOptions,
    extract_snapshot_texts,
    extract_snapshots,
    render_report,
    write_report,
)
from hairtrigger.io.snapshot import Snapshot, dumps_snapshot

FIXED = dt.datetime(2024, 5, 6, 7, 8, tzinfo=dt.UTC)


@pytest.fixture(scope="module")
def options() -> ReportOptions:
    # A coarse map keeps the suite fast; content does not depend on the resolution.
    return ReportOptions(map_points=24, curve_points=120, time_points=80, generated=FIXED)


@pytest.fixture(scope="module")
def single_html(sharp_snapshot: Snapshot, options: ReportOptions) -> str:
    return render_report([sharp_snapshot], options)


@pytest.fixture(scope="module")
def pair_html(sharp_snapshot: Snapshot, crowded_snapshot: Snapshot, options: ReportOptions) -> str:
    return render_report([sharp_snapshot, crowded_snapshot], options)


def _figures(document: str) -> list[str]:
    return re.findall(r'<svg class="hairtrigger-figure" data-figure="([^"]+)"', document)


# --- what the page contains ---------------------------------------------------------------------


def test_single_report_has_caution_tables_and_three_figures(
    single_html: str, sharp_snapshot: Snapshot
) -> None:
    assert single_html.startswith("<!DOCTYPE html>")
    assert CAUTION in single_html
    assert "experimental confirmation" in single_html
    assert _figures(single_html) == ["s1-curve", "s1-timecourse", "s1-map"]
    for key, value in sharp_snapshot.cycle.as_dict().items():
        assert re.search(
            rf"<code>{key}</code></td><td>{re.escape(f'{value:.4g}')}</td>", single_html
        ), key
    assert "Scaffold-bound switch" in single_html
    assert "Invented example: scarce enzymes" in single_html


def test_results_table_shows_evaluate_values(single_html: str, sharp_snapshot: Snapshot) -> None:
    expected = evaluate(sharp_snapshot.cycle, sharp_snapshot.model, sharp_snapshot.readout)
    for key in ("readout_value", "activity_ratio_50", "response_coefficient", "hill_coefficient"):
        cell = f"<code>{key}</code></td><td>{expected[key]:.4g}</td>"
        assert cell in single_html, key


def test_unreachable_thresholds_are_shown_as_missing_with_the_reason(
    crowded_snapshot: Snapshot, options: ReportOptions
) -> None:
    document = render_report(crowded_snapshot, options)
    expected = evaluate(crowded_snapshot.cycle, crowded_snapshot.model, crowded_snapshot.readout)
    assert expected["activity_ratio_90"] is None  # the example really sequesters substrate
    assert re.search(r"<code>activity_ratio_90</code></td><td><span class=\"na\"", document)
    assert "activity_ratio_90 does not exist" in document
    # the relative column still has a value
    relative = expected["relative"]["activity_ratio_90"]
    assert f"{relative:.4g}" in document
    # the steepness map has undefined cells there too, and its legend says what grey means
    entry = report_module._Entry.build(0, crowded_snapshot, "x", options)
    assert np.isnan(entry.steepness).any()
    map_svg = document[document.index('data-figure="s1-map"') :]
    map_svg = map_svg[: map_svg.index("</svg>")]
    assert "grey = undefined (target above ceiling)" in map_svg  # aria-label of the figure
    assert re.search(r'<g id="s1-map-legend_\d+"', map_svg)


def test_comparison_report_overlays_and_tabulates_side_by_side(pair_html: str) -> None:
    assert _figures(pair_html) == ["compare-curves", "compare-timecourses", "s1-map", "s2-map"]
    table = pair_html[pair_html.index('<table class="compare-table">') :]
    table = table[: table.index("</table>")]
    header = table[: table.index("</tr>")]
    assert "Scaffold-bound switch" in header and "Overexpressed enzymes" in header
    rows = re.findall(r"<tr( class=\"differs\")?><th scope='row'>([^<]+)", table)
    differs = {label.strip() for flag, label in rows if flag}
    same = {label.strip() for flag, label in rows if not flag}
    assert {"total kinase E1", "total phosphatase E2", "model"} <= differs
    assert {"total substrate W", "kinase Michaelis constant M1", "readout"} <= same
    # both curves are in the overlay, one legend entry each
    curves = pair_html[pair_html.index('data-figure="compare-curves"') :]
    curves = curves[: curves.index("</svg>")]
    assert len(re.findall(r'<g id="compare-curves-line2d_\d+"', curves)) >= 2


def test_document_is_self_contained(pair_html: str) -> None:
    # Nothing that could fetch: every src/href/url() is a data: URI or an in-page fragment.
    for attr, value in re.findall(r'\b(src|href|xlink:href|action|poster)="([^"]*)"', pair_html):
        assert value.startswith(("data:", "#")), (attr, value[:60])
    for value in re.findall(r"url\(([^)]*)\)", pair_html):
        assert value.strip("'\"").startswith(("#", "data:")), value
    assert "<link" not in pair_html
    assert "@import" not in pair_html
    assert re.search(r"<script(?![^>]*application/json)", pair_html) is None  # no executable JS
    assert "Content-Security-Policy" in pair_html and "default-src 'none'" in pair_html


def test_element_ids_are_unique_across_figures(pair_html: str) -> None:
    ids = Counter(re.findall(r'\bid="([^"]+)"', pair_html))
    assert [i for i, n in ids.items() if n > 1] == []
    # every in-document reference points at an id that exists
    refs = set(re.findall(r'(?:href="|url\()#([^")]+)', pair_html))
    assert refs and refs <= set(ids)


# --- embedded snapshots ------------------------------------------------------------------------


def test_embedded_snapshots_load_back_exactly(
    pair_html: str, sharp_snapshot: Snapshot, crowded_snapshot: Snapshot
) -> None:
    texts = extract_snapshot_texts(pair_html)
    assert [json.loads(t) for t in texts] == [
        json.loads(dumps_snapshot(s)) for s in (sharp_snapshot, crowded_snapshot)
    ]
    loaded = extract_snapshots(pair_html)
    assert [dumps_snapshot(s) for s in loaded] == [
        dumps_snapshot(s) for s in (sharp_snapshot, crowded_snapshot)
    ]


def test_hostile_title_cannot_break_out_of_the_json_block(
    sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    nasty = Snapshot(
        cycle=sharp_snapshot.cycle,
        model="quasi_steady",
        readout="free_modified",
        title='</script><script>alert("x")</script> & <b>',
        notes="line one\nline two </SCRIPT>",
    )
    document = render_report([nasty], options)
    assert "<script>alert" not in document
    assert document.count(f'<script type="application/json" class="{SNAPSHOT_BLOCK_CLASS}"') == 1
    (loaded,) = extract_snapshots(document)
    assert dumps_snapshot(loaded) == dumps_snapshot(nasty)


def test_download_link_carries_the_same_snapshot(
    single_html: str, sharp_snapshot: Snapshot
) -> None:
    import base64

    (uri,) = re.findall(r'href="data:application/json;base64,([^"]+)" download=', single_html)
    assert base64.b64decode(uri).decode("utf-8") == dumps_snapshot(sharp_snapshot)


def test_extract_refuses_a_page_without_snapshots() -> None:
    with pytest.raises(ValueError, match="no embedded hairtrigger snapshot"):
        extract_snapshots("<html><body><p>hello</p></body></html>")


def test_extract_names_the_bad_block() -> None:
    page = (
        f'<script type="application/json" class="{SNAPSHOT_BLOCK_CLASS}">'
        '{"format": "hairtrigger.snapshot", "version": 1}</script>'
    )
    with pytest.raises(ValueError, match="embedded snapshot 1"):
        extract_snapshots(page)


# --- numbers behind the figures, checked against independent solutions ----------------------------


def test_response_curve_matches_goldbeter_koshland_quadratic(sharp_snapshot: Snapshot) -> None:
    # Goldbeter & Koshland 1981, PNAS 78:6840: (1 − r)y² − (1 − r + K1 + r·K2)y + r·K2 = 0,
    # solved here root by root with numpy.roots (no shared code with the core).
    cycle = sharp_snapshot.cycle
    ratios = np.logspace(-1, 1, 25)
    curve = report_module._response_curve(cycle, "quasi_steady", "total_modified", ratios)
    k1, k2 = cycle.K1, cycle.K2
    for r, y in zip(ratios, curve, strict=True):
        roots = np.roots([1 - r, -(1 - r + k1 + r * k2), r * k2])
        physical = [z.real for z in roots if abs(z.imag) < 1e-12 and 0 < z.real < 1]
        assert len(physical) == 1
        assert y == pytest.approx(physical[0], rel=1e-9)


def test_mass_action_curve_matches_direct_root_finding(crowded_snapshot: Snapshot) -> None:
    # Conservation W = A + B + C1 + C2 with Michaelis–Menten complexes, solved for the free
    # unmodified substrate A with scipy's brentq (independent of the core's flux formulation).
    c = crowded_snapshot.cycle
    ratios = np.logspace(-1.5, 1, 9)
    curve = report_module._response_curve(c, "mass_action", "total_modified", ratios)
    for r, y in zip(ratios, curve, strict=True):
        e1 = r * c.phosphatase_vmax / c.kinase_kcat

        def balance(a: float, e1: float = e1) -> float:
            c1 = e1 * a / (c.kinase_km + a)
            v = c.kinase_kcat * c1
            # v = k2·E2·B/(M2 + B)  ->  B = M2·v/(V2 − v)
            b = c.phosphatase_km * v / (c.phosphatase_vmax - v)
            c2 = v / c.phosphatase_kcat
            return a + b + c1 + c2 - c.substrate_total

        # A is bracketed by 0 (balance −W) and W, or the A at which the kinase flux would
        # reach V2 (balance → +∞), whichever is smaller.
        hi = c.substrate_total
        if c.kinase_kcat * e1 > c.phosphatase_vmax:
            hi = min(
                hi,
                c.kinase_km
                * c.phosphatase_vmax
                / (c.kinase_kcat * e1 - c.phosphatase_vmax)
                * (1 - 1e-12),
            )
        a = brentq(balance, 0.0, hi, xtol=1e-15, rtol=1e-13)
        v = c.kinase_kcat * e1 * a / (c.kinase_km + a)
        b = c.phosphatase_km * v / (c.phosphatase_vmax - v)
        expected = (b + v / c.phosphatase_kcat) / c.substrate_total
        assert y == pytest.approx(expected, rel=1e-7)


def test_half_time_matches_an_independent_integration(sharp_snapshot: Snapshot) -> None:
    # Quasi-steady ODE dB/dt = V1·A/(M1 + A) − V2·B/(M2 + B) (DESIGN §2), integrated with
    # scipy's Radau at tight tolerances from the steady state before the step.
    c = sharp_snapshot.cycle
    step = {"kinase_total": 0.06}
    opts = ReportOptions(map_points=16, curve_points=40, time_points=400, steps=step, t_end=60.0)
    res = evaluate(c, "quasi_steady", "total_modified")
    course = report_module._time_course(c, "quasi_steady", "total_modified", step, opts)
    after = c.replace(**step)
    w = c.substrate_total

    def rhs(_t: float, y: np.ndarray) -> np.ndarray:
        b = y[0]
        a = w - b
        return np.array(
            [
                after.kinase_vmax * a / (after.kinase_km + a)
                - after.phosphatase_vmax * b / (after.phosphatase_km + b)
            ]
        )

    b0 = res["readout_value"] * w
    target = 0.5 * (course.before + course.after) * w

    def crosses(_t: float, y: np.ndarray) -> float:
        return y[0] - target

    crosses.terminal = True  # type: ignore[attr-defined]
    sol = solve_ivp(rhs, (0, 60.0), [b0], method="Radau", rtol=1e-10, atol=1e-13, events=crosses)
    assert course.before == pytest.approx(res["readout_value"], rel=1e-12)
    assert course.half_time == pytest.approx(sol.t_events[0][0], rel=2e-3)  # grid interpolation
    assert course.switch_time is not None and course.switch_time > 0


def test_default_step_crosses_the_threshold(
    sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    res = evaluate(sharp_snapshot.cycle, "quasi_steady", "total_modified")
    assert res["readout_value"] > 0.5  # the example sits in the "on" state
    entry = report_module._Entry.build(0, sharp_snapshot, "x", options)
    course = entry.course
    # switching off: the kinase is stepped to the amount that gives 10 % of the ceiling
    assert course.after == pytest.approx(0.1, rel=1e-9)
    assert course.readout[-1] == pytest.approx(course.after, abs=2e-3)  # the window settles


def test_map_values_come_from_steepness_map(sharp_snapshot: Snapshot) -> None:
    # Quasi-steady closed form Rv = 81(K1+0.1)(K2+0.1)/((K1+0.9)(K2+0.9)), nH = ln81/ln Rv
    # (Goldbeter & Koshland 1981).
    opts = ReportOptions(map_points=12, steps={"kinase_total": 0.06}, t_end=5.0, time_points=16)
    entry = report_module._Entry.build(0, sharp_snapshot, "x", opts)
    k1 = entry.km_axis[None, :]
    k2 = entry.km_axis[:, None]
    rv = 81 * (k1 + 0.1) * (k2 + 0.1) / ((k1 + 0.9) * (k2 + 0.9))
    np.testing.assert_allclose(entry.steepness, np.log(81) / np.log(rv), rtol=1e-9)


# --- options and errors -----------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"map_points": 3}, "map_points"),
        ({"curve_points": True}, "curve_points"),
        ({"map_measure": "steepest"}, "map_measure"),
        ({"map_decades": (2.0, -1.0)}, "map_decades"),
        ({"steps": {"kinase_amount": 1.0}}, "unknown step parameter `kinase_amount`"),
        ({"steps": {"kinase_total": -1.0}}, "kinase_total"),
        ({"steps": {}}, "at least one"),
        ({"t_end": 0.0}, "t_end"),
    ],
)
def test_bad_options_are_refused_by_name(kwargs: dict, match: str) -> None:
    with pytest.raises(ValueError, match=match):
        ReportOptions(**kwargs)


def test_no_snapshot_is_an_error() -> None:
    with pytest.raises(ValueError, match="at least one snapshot"):
        render_report([])
    with pytest.raises(TypeError, match=r"snapshots\[0\]"):
        render_report([{"cycle": {}}])  # type: ignore[list-item]


def test_missing_matplotlib_gives_the_install_command(
    monkeypatch: pytest.MonkeyPatch, sharp_snapshot: Snapshot
) -> None:
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    with pytest.raises(ReportDependencyError, match=r"hairtrigger\[report\]"):
        render_report([sharp_snapshot])


# --- writing ----------------------------------------------------------------------------------


def test_write_report_refuses_to_overwrite_and_replaces_with_overwrite(
    tmp_path: Path, sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    out = tmp_path / "report.html"
    out.write_text("keep me", encoding="utf-8")
    with pytest.raises(FileExistsError, match="overwrite"):
        write_report([sharp_snapshot], out, options=options)
    assert out.read_text(encoding="utf-8") == "keep me"
    write_report([sharp_snapshot], out, options=options, overwrite=True)
    assert extract_snapshots(out.read_text(encoding="utf-8"))[0].title == sharp_snapshot.title
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]  # no temp files left


def test_failed_render_writes_nothing(
    tmp_path: Path, sharp_snapshot: Snapshot, monkeypatch: pytest.MonkeyPatch
) -> None:
    out = tmp_path / "report.html"
    out.write_text("previous report", encoding="utf-8")

    def broken(*_args: object, **_kwargs: object) -> str:
        raise RuntimeError("drawing failed")

    monkeypatch.setattr(report_module, "render_report", broken)
    with pytest.raises(RuntimeError):
        write_report([sharp_snapshot], out, overwrite=True)
    assert out.read_text(encoding="utf-8") == "previous report"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]


def test_write_into_missing_folder_is_a_clear_error(
    tmp_path: Path, sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    with pytest.raises(FileNotFoundError, match="does not exist"):
        write_report([sharp_snapshot], tmp_path / "nowhere" / "r.html", options=options)


def test_a_time_course_that_cannot_be_computed_is_explained_not_drawn(
    sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    # Mass action needs koff = kon·Km − kcat >= 0; a binding rate this small makes it negative
    # (the core refuses such a course), while the steady state is still defined.
    slow_binding = sharp_snapshot.replace(
        model="mass_action", cycle=sharp_snapshot.cycle.replace(kinase_kon=1.0)
    )
    assert slow_binding.cycle.kinase_koff < 0
    document = render_report([slow_binding], options)
    assert _figures(document) == ["s1-curve", "s1-map"]
    assert "no time course:" in document
    pair = render_report([slow_binding, sharp_snapshot], options)
    assert _figures(pair) == ["compare-curves", "compare-timecourses", "s1-map", "s2-map"]


def test_explorer_view_settings_choose_the_step_and_the_map(
    sharp_snapshot: Snapshot, options: ReportOptions
) -> None:
    # The explorer saves its time-course target and map measure under "view"; the report
    # follows them unless told otherwise.
    saved = sharp_snapshot.replace(
        extras={"view": {"step_activity_ratio": 3.0, "map_measure": "response_coefficient"}}
    )
    entry = report_module._Entry.build(0, saved, "x", options)
    c = saved.cycle
    assert entry.course.steps == {
        "kinase_total": pytest.approx(3.0 * c.phosphatase_vmax / c.kinase_kcat, rel=1e-12)
    }
    assert entry.measure == "response_coefficient"
    document = render_report([saved], options)
    assert "response coefficient Rv = r90/r10 over the two" in document
    told = report_module._Entry.build(
        0,
        saved,
        "x",
        dataclasses.replace(options, map_measure="peak_sensitivity", steps={"kinase_total": 0.06}),
    )
    assert told.measure == "peak_sensitivity" and told.course.steps == {"kinase_total": 0.06}
    # malformed view settings are ignored, not fatal
    odd = sharp_snapshot.replace(extras={"view": {"step_activity_ratio": "high", "map_measure": 7}})
    entry = report_module._Entry.build(0, odd, "x", options)
    assert entry.measure == "hill_coefficient"
    assert entry.course.after == pytest.approx(0.1, rel=1e-9)  # the default step
