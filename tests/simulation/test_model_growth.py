"""Early growth rate, doubling time and generation time."""

from __future__ import annotations

import numpy as np
import pytest
from factories import compiled, make_plan
from numpy.testing import assert_allclose

from prepkit.scenarios.runs import run_scenario
from prepkit.simulation.compile import transmissibility_of


def wallinga_lipsitch_r0(r: float, latent: float, m: int, infectious: float, n: int) -> float:
    # Wallinga & Lipsitch 2007, Proc R Soc B 274:599, R = 1/M(-r); Erlang SEIR form as in
    # Wearing, Rohani & Keeling 2005, PLoS Med 2:e174.
    sigma, gamma = 1.0 / latent, 1.0 / infectious
    return r * (1 + r / (m * sigma)) ** m / (gamma * (1 - (1 + r / (n * gamma)) ** (-n)))


@pytest.mark.parametrize("stages", [(1, 1), (2, 3), (4, 2)])
@pytest.mark.parametrize("r0", [1.3, 2.5])
def test_model_growth_rate_matches_erlang_relation(stages: tuple[int, int], r0: float) -> None:
    m, n = stages
    plan = make_plan(r0=r0, latent_days=3.0, latent_stages=m, infectious_days=5.0,
                     infectious_stages=n)
    figures = transmissibility_of(compiled(plan))
    expected = wallinga_lipsitch_r0(figures.growth_rate_per_day, 3.0, m, 5.0, n)
    assert_allclose(expected, r0, rtol=1e-10)
    assert_allclose(figures.doubling_time_days, np.log(2) / figures.growth_rate_per_day)
    # Mean generation time of the Erlang SEIR (mean latent + (n + 1) / (2 n) mean infectious):
    # first moment of Gamma-distributed periods (Wallinga & Lipsitch 2007, section 3).
    assert_allclose(figures.mean_generation_time_days, 3.0 + (n + 1) / (2 * n) * 5.0, rtol=1e-10)


def test_growth_rate_and_doubling_time_targets_are_hit() -> None:
    # The dominant eigenvalue of F - V is the growth rate (Wallinga & Lipsitch 2007).
    plan = make_plan(populations=(3e5, 7e5), growth_rate=0.12, symptomatic_share=(0.5, 0.8),
                     latent_stages=2, infectious_stages=2, admitted_share=(0.01, 0.1))
    assert_allclose(transmissibility_of(compiled(plan)).growth_rate_per_day, 0.12, rtol=1e-9)
    plan = make_plan(doubling_time=5.0, latent_stages=3, infectious_stages=1)
    figures = transmissibility_of(compiled(plan))
    assert_allclose(figures.doubling_time_days, 5.0, rtol=1e-9)
    assert_allclose(
        figures.r0, wallinga_lipsitch_r0(np.log(2) / 5.0, 3.0, 3, 4.0, 1), rtol=1e-9
    )


def test_log_linear_fit_of_early_incidence_gives_the_model_growth_rate() -> None:
    # Wallinga & Lipsitch 2007: early incidence grows as exp(r t).
    plan = make_plan(populations=(1e9,), r0=2.0, latent_stages=2, infectious_stages=2,
                     initial_infections=1.0, horizon=90)
    run = run_scenario(plan, "base")
    days = np.arange(40, 80)
    incidence = run.daily["infections_per_day"].to_numpy()[days]
    slope = np.polyfit(days, np.log(incidence), 1)[0]
    assert_allclose(slope, run.transmissibility.growth_rate_per_day, rtol=2e-3)
