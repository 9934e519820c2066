"""Independent reference formulas for the fitting tests (written out from the sources)."""

from __future__ import annotations

import numpy as np


def hill_curve(x: np.ndarray, ec50: float, n: float, bottom: float, top: float) -> np.ndarray:
    """Hill function written out independently of the package (common textbook form)."""
    x = np.asarray(x, dtype=float)
    return bottom + (top - bottom) * x**n / (ec50**n + x**n)


def gk_modified_fraction(r: np.ndarray, k1: float, k2: float) -> np.ndarray:
    """Goldbeter & Koshland (1981, PNAS 78:6840) modified fraction, textbook quadratic form.

    Physical root of (1 - r) y^2 - (1 - r + K1 + r K2) y + r K2 = 0 (V2 = 1), written with the
    plain '+' branch of the published G function; accurate enough away from full modification
    for checking fits (the package itself uses a cancellation-free form).
    """
    r = np.asarray(r, dtype=float)
    b = 1.0 - r + k1 + r * k2
    return 2.0 * r * k2 / (b + np.sqrt(b * b - 4.0 * (1.0 - r) * r * k2))
