"""Fixtures for the fitting tests: synthetic dose-response data and CSV files."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest
from fit_reference import hill_curve


@pytest.fixture
def hill_data() -> Callable[..., dict[str, np.ndarray]]:
    """Factory: noisy Hill data on a log-spaced design with replicates."""

    def make(
        seed: int = 0,
        ec50: float = 2.0,
        n: float = 2.5,
        bottom: float = 0.1,
        top: float = 1.0,
        noise: float = 0.03,
        levels: int = 8,
        replicates: int = 3,
        low: float = 0.2,
        high: float = 20.0,
    ) -> dict[str, np.ndarray]:
        rng = np.random.default_rng(seed)
        x = np.repeat(np.geomspace(low, high, levels), replicates)
        y = hill_curve(x, ec50, n, bottom, top) + rng.normal(0.0, noise, x.size)
        return {"input": x, "readout": y}

    return make


@pytest.fixture
def write_csv(tmp_path: Path) -> Callable[..., Path]:
    """Factory: write text (or bytes) to a CSV file in a temporary folder."""

    def write(content: str | bytes, name: str = "data.csv") -> Path:
        path = tmp_path / name
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
        return path

    return write
