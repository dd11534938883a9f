"""The seasonal multiplier of transmission.

Equations in words
------------------
``season(t) = 1 + a cos(2 pi (t - t_peak) / 365.25)``: ``a`` the seasonal
amplitude [fraction], ``t_peak`` the model day of the seasonal peak [days
since day 0].
"""

from __future__ import annotations

import math

from numba import njit

KERNEL_SOURCES = "f47b452be61925d7"
"""Digest of the sources compiled together (see :data:`prepkit.simulation.kernels.COMPILED`);
tests/simulation/test_kernel_sources.py gives the value after an edit."""

YEAR_DAYS = 365.25
"""Length of the seasonal cycle [days] (mean Julian year)."""

TWO_PI = 2.0 * math.pi


@njit(cache=True)
def season_factor(t: float, amplitude: float, peak_day: float) -> float:
    """Seasonal multiplier of transmission ``1 + a cos(2 pi (t - t_peak) / 365.25)``."""
    return 1.0 + amplitude * math.cos(TWO_PI * (t - peak_day) / YEAR_DAYS)


