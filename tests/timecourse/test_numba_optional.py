"""numba is an accelerator: loaded only for integrated courses, and the code runs without it."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

SRC = Path(__file__).resolve().parents[2] / "src"

CYCLE = (
    "Cycle(substrate_total=1.0, kinase_total=0.01, kinase_kcat=1.0, kinase_km=0.05, "
    "kinase_kon=100.0, phosphatase_total=0.01, phosphatase_kcat=1.0, phosphatase_km=0.05, "
    "phosphatase_kon=100.0)"
)


def run(code: str) -> str:
    done = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        check=True,
        env={"PYTHONPATH": str(SRC), "PATH": "/usr/bin:/bin"},
    )
    return done.stdout.strip()


def test_import_and_quasi_steady_work_do_not_load_numba() -> None:
    code = (
        "import sys\nfrom hairtrigger import Cycle, evaluate, time_course\n"
        f"c = {CYCLE}\nevaluate(c)\ntime_course(c, {{'kinase_total': 0.02}}, 10.0, 5)\n"
        "print('numba' in sys.modules)"
    )
    assert run(code) == "False"


def test_pure_python_fallback_gives_the_same_course() -> None:
    code = (
        "import sys\n{hide}from hairtrigger import Cycle, time_course\n"
        "from hairtrigger.core import _radau\n"
        f"c = {CYCLE}\n"
        "course = time_course(c, {{'kinase_total': 0.02}}, 300.0, 50, model='mass_action')\n"
        "print(_radau.HAVE_NUMBA, course.success, repr(float(course['modified'][-1])))"
    )
    without = run(code.format(hide="sys.modules['numba'] = None\n")).split()
    with_numba = run(code.format(hide="")).split()
    assert without[:2] == ["False", "True"] and with_numba[:2] == ["True", "True"]
    assert abs(float(without[2]) - float(with_numba[2])) < 1e-12
