"""Peak prevalence of an SEIR epidemic with one infectious stage."""

from __future__ import annotations

import numpy as np
import pytest
from factories import compiled, make_plan, totals
from numpy.testing import assert_allclose

from prepkit.simulation.layout import BLK_E, BLK_S, BLK_Y
from prepkit.simulation.simulate import simulate


def refined_max(values: np.ndarray) -> float:
    # Parabola through the daily maximum and its two neighbours (common practice, no source).
    top = int(np.argmax(values))
    a, b, c = values[top - 1], values[top], values[top + 1]
    return float(b - (a - c) ** 2 / (8.0 * (a - 2.0 * b + c)))


@pytest.mark.parametrize("r0", [1.6, 2.5])
@pytest.mark.parametrize("latent_stages", [1, 3])
def test_max_latent_plus_infectious_obeys_sir_peak_formula(r0: float, latent_stages: int) -> None:
    plan = make_plan(
        r0=r0, latent_days=8.0, latent_stages=latent_stages, infectious_days=12.0,
        infectious_stages=1, initial_infections=1e-2, horizon=730,
    )
    model = compiled(plan)
    states = simulate(model).states
    n = 1e6
    s0 = totals(model, states, BLK_S)[0, 0] / n
    i0 = 1.0 - s0
    prevalence = (totals(model, states, BLK_E) + totals(model, states, BLK_Y))[:, 0] / n
    # Hethcote 2000, SIAM Rev 42:599 (from memory): i_max = i0 + s0 - (1 + ln(R0 s0)) / R0
    expected = i0 + s0 - (1.0 + np.log(r0 * s0)) / r0
    assert_allclose(refined_max(prevalence), expected, rtol=1e-5)
    # Keeling & Rohani 2008 ch. 2 (from memory): the infectious compartment alone peaks lower.
    assert totals(model, states, BLK_Y)[:, 0].max() / n < expected
