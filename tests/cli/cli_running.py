"""Run the real ``python -m hairtrigger`` entry point in a subprocess (shared by the CLI tests)."""

from __future__ import annotations

import hashlib
import os
import pathlib
import subprocess
import sys
from collections.abc import Sequence

SRC = pathlib.Path(__file__).resolve().parents[2] / "src"


def cli_env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(SRC), env.get("PYTHONPATH", "")]))
    env["PYTHONWARNINGS"] = "error"  # a stray warning in normal use would also fail here
    return env


def run_cli(
    args: Sequence[str], cwd: pathlib.Path | None = None
) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "hairtrigger", *args],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=cli_env(),
        timeout=120,
    )


def folder_state(folder: pathlib.Path) -> dict[str, tuple[int, str]]:
    """Every file below `folder` with its modification time and content hash."""
    state = {}
    for path in sorted(folder.rglob("*")):
        if path.is_file():
            state[str(path.relative_to(folder))] = (
                path.stat().st_mtime_ns,
                hashlib.sha256(path.read_bytes()).hexdigest(),
            )
        else:
            state[str(path.relative_to(folder))] = (0, "folder")
    return state
