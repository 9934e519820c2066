"""Every bad-input path of the command line: exit status non-zero, one line on standard error,
no traceback, nothing on standard output, and no file created or changed.

Each case runs in-process through `hairtrigger.cli.main` (fast) and in a fresh interpreter
through the real entry point ``python -m hairtrigger``: a few of those always, all of them in the
slow pass (each costs an interpreter start).
"""

from __future__ import annotations

import json
import pathlib
from typing import Any

import pytest
from cli_running import folder_state, run_cli

from hairtrigger.cli import main
from hairtrigger.io import MAX_SNAPSHOT_BYTES, example_path

GOOD = json.loads(example_path("scarce_enzyme_switch").read_text(encoding="utf-8"))


def variant(**changes: Any) -> str:
    document = json.loads(json.dumps(GOOD))
    for dotted, value in changes.items():
        *parents, last = dotted.split("__")
        target = document
        for parent in parents:
            target = target[parent]
        target[last] = value
    return json.dumps(document, indent=2, ensure_ascii=False)


# Files every case folder holds.
FILES: dict[str, bytes] = {
    "good.json": json.dumps(GOOD, indent=2).encode(),
    "existing.csv": b"kinase_km,phosphatase_km\n1,2\n",
    "malformed.json": b'{"format": "hairtrigger.snapshot", "version": 1,,}',
    "negative.json": variant(cycle__kinase_km=-1.0).encode(),
    "string-number.json": variant(cycle__phosphatase_total="0.05").encode(),
    "newer.json": variant(version=2).encode(),
    "nanomolar.json": variant(units__concentration="nM").encode(),
    "unknown-model.json": variant(model="exact").encode(),
    "wrong-format.json": variant(format="hairtrigger.cascade").encode(),
    "empty.json": b"",
    "latin1.json": variant(title="µ-switch").encode("latin-1"),
    "nan.json": variant().replace('"kinase_km": 0.12', '"kinase_km": NaN').encode(),
    "list.json": b"[1, 2]",
    "oversize.json": b" " * (MAX_SNAPSHOT_BYTES + 1),
}

# (id, arguments, fragment the one-line message must contain)
CASES: list[tuple[str, list[str], str]] = [
    ("no-command", [], "required: COMMAND"),
    ("unknown-command", ["frobnicate"], "invalid choice"),
    ("evaluate-no-file", ["evaluate"], "required: FILE"),
    ("evaluate-missing-file", ["evaluate", "absent.json"], "absent.json: no such file"),
    ("evaluate-folder", ["evaluate", "sub"], "is a folder"),
    ("evaluate-malformed", ["evaluate", "malformed.json"], "not valid JSON"),
    (
        "evaluate-negative",
        ["evaluate", "negative.json"],
        "negative.json: cycle.kinase_km: must be a finite number > 0 uM; got -1.0",
    ),
    (
        "evaluate-string-number",
        ["evaluate", "string-number.json"],
        'cycle.phosphatase_total: must be a finite number > 0 uM; got "0.05" (a string)',
    ),
    ("evaluate-newer", ["evaluate", "newer.json"], "written by a newer hairtrigger; version 2 > 1"),
    ("evaluate-units", ["evaluate", "nanomolar.json"], 'only "uM" is supported'),
    ("evaluate-unknown-model", ["evaluate", "unknown-model.json"], "model: must be one of"),
    ("evaluate-wrong-format", ["evaluate", "wrong-format.json"], "format: must be"),
    ("evaluate-empty", ["evaluate", "empty.json"], "the file is empty"),
    ("evaluate-not-utf8", ["evaluate", "latin1.json"], "not valid UTF-8"),
    ("evaluate-nan", ["evaluate", "nan.json"], "NaN is not valid JSON"),
    ("evaluate-list", ["evaluate", "list.json"], "must be a JSON object"),
    ("evaluate-oversize", ["evaluate", "oversize.json"], "byte limit"),
    (
        "evaluate-bad-model-option",
        ["evaluate", "good.json", "--model", "exact"],
        "argument --model: invalid choice",
    ),
    (
        "evaluate-bad-readout-option",
        ["evaluate", "good.json", "--readout", "phospho"],
        "argument --readout: invalid choice",
    ),
    ("evaluate-unknown-option", ["evaluate", "good.json", "--fast"], "unrecognized arguments"),
    ("evaluate-unknown-example", ["evaluate", "example:nothing"], "no example snapshot named"),
    ("map-no-grid", ["map", "good.json"], "required: --grid"),
    ("map-no-file", ["map", "--grid", "4"], "required: FILE"),
    ("map-grid-1", ["map", "good.json", "--grid", "1"], "--grid must be between 2 and 1024"),
    ("map-grid-0", ["map", "good.json", "--grid", "0"], "--grid must be between"),
    ("map-grid-negative", ["map", "good.json", "--grid=-3"], "--grid must be between"),
    ("map-grid-huge", ["map", "good.json", "--grid", "100000"], "got 100000"),
    ("map-grid-text", ["map", "good.json", "--grid", "abc"], "invalid int value"),
    ("map-grid-fraction", ["map", "good.json", "--grid", "2.5"], "invalid int value"),
    ("map-range-equal", ["map", "good.json", "--grid", "4", "--km-range", "1:1"], "0 < LOW < HIGH"),
    ("map-range-reversed", ["map", "good.json", "--grid", "4", "--km-range", "2:1"], "LOW:HIGH"),
    ("map-range-zero", ["map", "good.json", "--grid", "4", "--km-range", "0:1"], "LOW:HIGH"),
    ("map-range-negative", ["map", "good.json", "--grid", "4", "--km-range=-1:2"], "LOW:HIGH"),
    ("map-range-words", ["map", "good.json", "--grid", "4", "--km-range", "a:b"], "LOW:HIGH"),
    ("map-range-single", ["map", "good.json", "--grid", "4", "--km-range", "1e-3"], "LOW:HIGH"),
    ("map-range-triple", ["map", "good.json", "--grid", "4", "--km-range", "1:2:3"], "LOW:HIGH"),
    ("map-range-nan", ["map", "good.json", "--grid", "4", "--km-range", "nan:1"], "LOW:HIGH"),
    ("map-range-inf", ["map", "good.json", "--grid", "4", "--km-range", "1:inf"], "LOW:HIGH"),
    (
        "map-range-overflow",
        ["map", "good.json", "--grid", "4", "--km-range", "1:1e308"],
        "leaves the floating-point range",
    ),
    (
        "map-bad-measure",
        ["map", "good.json", "--grid", "4", "--measure", "slope"],
        "argument --measure: invalid choice",
    ),
    (
        "map-out-exists",
        ["map", "good.json", "--grid", "4", "--out", "existing.csv"],
        "existing.csv: file exists; pass --force to replace it",
    ),
    (
        "map-out-folder",
        ["map", "good.json", "--grid", "4", "--out", "sub", "--force"],
        "sub: is a folder",
    ),
    (
        "map-out-missing-folder",
        ["map", "good.json", "--grid", "4", "--out", "nowhere/m.csv"],
        "does not exist",
    ),
    (
        "map-out-is-input",
        ["map", "good.json", "--grid", "4", "--out", "good.json", "--force"],
        "is the input file",
    ),
    (
        "map-bad-snapshot-with-out",
        ["map", "negative.json", "--grid", "4", "--out", "new.csv"],
        "cycle.kinase_km",
    ),
    (
        "map-missing-file-with-out",
        ["map", "absent.json", "--grid", "4", "--out", "new.csv"],
        "no such file",
    ),
    ("map-folder", ["map", "sub", "--grid", "4"], "is a folder"),
    ("map-newer", ["map", "newer.json", "--grid", "4"], "newer hairtrigger"),
]


#: Cases run through the real entry point even in the quick pass: one of each kind.
ENTRY_POINT_SMOKE = {
    "no-command",
    "evaluate-missing-file",
    "evaluate-negative",
    "evaluate-bad-model-option",
    "map-grid-1",
    "map-range-reversed",
    "map-out-exists",
    "map-bad-snapshot-with-out",
}


def _prepare(folder: pathlib.Path) -> pathlib.Path:
    folder.mkdir()
    (folder / "sub").mkdir()
    for name, data in FILES.items():
        (folder / name).write_bytes(data)
    return folder


def _check(returncode: int, stdout: str, stderr: str, fragment: str) -> None:
    assert returncode == 2
    assert stdout == ""
    assert "Traceback" not in stderr
    lines = stderr.splitlines()
    assert len(lines) == 1, stderr
    assert lines[0].startswith("hairtrigger")
    assert ": error: " in lines[0]
    assert fragment in lines[0]


@pytest.mark.parametrize(("args", "fragment"), [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_bad_input_in_process(
    args: list[str],
    fragment: str,
    tmp_path: pathlib.Path,
    monkeypatch: pytest.MonkeyPatch,
    capsys: pytest.CaptureFixture[str],
) -> None:
    folder = _prepare(tmp_path / "case")
    monkeypatch.chdir(folder)
    before = folder_state(folder)
    try:
        status = main(args)
    except SystemExit as exit_:  # usage errors leave through argparse
        status = int(exit_.code or 0)
    captured = capsys.readouterr()
    _check(status, captured.out, captured.err, fragment)
    assert folder_state(folder) == before  # nothing created, changed or removed


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        pytest.param(*c[1:], id=c[0], marks=() if c[0] in ENTRY_POINT_SMOKE else pytest.mark.slow)
        for c in CASES
    ],
)
def test_bad_input_through_the_entry_point(
    args: list[str], fragment: str, tmp_path: pathlib.Path
) -> None:
    folder = _prepare(tmp_path / "case")
    before = folder_state(folder)
    done = run_cli(args, cwd=folder)
    _check(done.returncode, done.stdout, done.stderr, fragment)
    assert folder_state(folder) == before


def test_smoke_cases_exist() -> None:
    assert ENTRY_POINT_SMOKE <= {c[0] for c in CASES}
