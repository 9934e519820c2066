"""The numerical core, the file layer and the command line never load the widget stack."""

from __future__ import annotations

import subprocess
import sys

import pytest

WIDGET_MODULES = ("ipywidgets", "bqplot", "traitlets", "IPython")


@pytest.mark.parametrize(
    "statement",
    [
        "import hairtrigger",
        "import hairtrigger.core",
        "import hairtrigger.io",
        "import hairtrigger.cli; hairtrigger.cli.build_parser()",
    ],
)
def test_core_io_cli_do_not_import_widgets(statement: str, cli_env: dict[str, str]) -> None:
    code = f"{statement}\nimport sys\nprint(','.join(m for m in {WIDGET_MODULES!r} if m in sys.modules))"
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, env=cli_env, check=True
    )
    assert out.stdout.strip() == "", f"{statement!r} loaded {out.stdout.strip()}"


def test_core_imports_only_numpy_and_scipy() -> None:
    """Static check: no module of hairtrigger.core imports anything outside the allowed set."""
    import ast
    from pathlib import Path

    import hairtrigger.core as core

    allowed = {
        "numpy",
        "scipy",
        "math",
        "numbers",
        "dataclasses",
        "typing",
        "collections",
        "functools",
        "itertools",
        "warnings",
        "__future__",
        "enum",
        "threading",
        "time",
        "os",
        "concurrent",
        "contextlib",
        "abc",
        "operator",
        "hashlib",
    }
    bad = []
    for path in Path(core.__file__).parent.rglob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
                names = [node.module]
            else:
                continue
            for name in names:
                top = name.split(".")[0]
                if top == "hairtrigger" and name.startswith("hairtrigger.core"):
                    continue
                # numba: optional JIT for inner loops; distributed: optional (the `cluster`
                # extra), imported lazily only when a sweep is sent to a Dask cluster.
                if top not in allowed and top not in ("numba", "distributed"):
                    bad.append(f"{path.name}: {name}")
    assert not bad, bad
