"""Growth rates of parameter sets against the model's full infected subsystem."""

from __future__ import annotations

import math

import numpy as np
from conftest import small_plan
from numpy.testing import assert_allclose

from prepkit.fitting.growth import doubling_times, growth_rates, reproduction_numbers
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.draw_values import DrawValues, take_draws
from prepkit.simulation.layout import S_BETA, scalar_offset
from prepkit.simulation.transmissibility import growth_rate, reproduction_number


def test_growth_rate_and_r_match_the_eigenvalues_of_the_infected_subsystem() -> None:
    # Reference: the dominant eigenvalue of F - V and the spectral radius of F V^-1 of the
    # model's whole infected subsystem (Wallinga & Lipsitch 2007, Proc. R. Soc. B 274:599;
    # Diekmann, Heesterbeek & Metz 1990, J. Math. Biol. 28:365), with beta scaled by m.
    plan = small_plan()
    model = compile_scenario(plan, plan.scenarios[0].name, False)
    beta = model.pc[scalar_offset(model.layout.bands) + S_BETA]
    multipliers = np.array([0.35, 0.6, 1.0, 1.4])
    values = take_draws(DrawValues.of_inputs(model.inputs), np.zeros(4, dtype=np.int64))
    got_r = growth_rates(model.pc, model.layout, values, np.full(4, beta), multipliers)
    got_R = reproduction_numbers(model.pc, model.layout, values, np.full(4, beta), multipliers)
    for m, r, big_r in zip(multipliers, got_r, got_R, strict=True):
        assert_allclose(r, growth_rate(model.pc, model.layout, beta=m * beta), atol=1e-9)
        assert_allclose(big_r, reproduction_number(model.pc, model.layout, beta=m * beta),
                        rtol=1e-9)
    assert got_r[0] < 0.0 < got_r[-1]  # R below 1 shrinks, above 1 grows


def test_doubling_time_is_ln2_over_r() -> None:
    assert_allclose(doubling_times([0.1, -0.05]), [math.log(2) / 0.1, math.log(2) / 0.05])
