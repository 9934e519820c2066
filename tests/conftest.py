"""Shared fixtures for the whole suite (area-specific fixtures live in each folder's conftest)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SRC = ROOT / "src"


@pytest.fixture(scope="session")
def cli_env() -> dict[str, str]:
    """Environment for running ``python -m hairtrigger`` in a subprocess from the source tree."""
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(p for p in (str(SRC), env.get("PYTHONPATH", "")) if p)
    return env


@pytest.fixture(scope="session")
def python() -> str:
    """The interpreter running the tests."""
    return sys.executable
