"""Final epidemic size against closed forms."""

from __future__ import annotations

import numpy as np
import pytest
from factories import compiled, make_plan, totals
from numpy.testing import assert_allclose
from scipy.optimize import fsolve
from scipy.special import lambertw

from prepkit.simulation.contacts import preferential_mixing
from prepkit.simulation.layout import BLK_CUM_INF
from prepkit.simulation.simulate import simulate


def kermack_mckendrick_final_size(r0: float) -> float:
    # Kermack & McKendrick 1927, Proc R Soc Lond A 115:700: z = 1 - exp(-R0 z);
    # closed form with the principal Lambert W branch (Ma & Earn 2006, from memory).
    return float(1.0 + lambertw(-r0 * np.exp(-r0)).real / r0)


@pytest.mark.parametrize("r0", [1.5, 2.0, 3.0])
@pytest.mark.parametrize("stages", [(1, 1), (3, 2), (2, 4)])
def test_one_band_final_size_matches_kermack_mckendrick(r0: float, stages: tuple[int, int]) -> None:
    plan = make_plan(
        r0=r0, latent_stages=stages[0], infectious_stages=stages[1],
        initial_infections=1e-3, horizon=730,
    )
    model = compiled(plan)
    states = simulate(model).states
    attack = totals(model, states, BLK_CUM_INF)[-1, 0] / 1e6
    assert_allclose(attack, kermack_mckendrick_final_size(r0), rtol=1e-6)


def test_final_size_unchanged_by_asymptomatic_and_admitted_mix() -> None:
    # Kermack & McKendrick 1927: one susceptibility class -> z depends on R0 only.
    plan = make_plan(
        r0=1.8, symptomatic_share=0.6, rho=0.3, admitted_share=0.1, onset_to_admission=2.0,
        latent_stages=2, infectious_stages=3, initial_infections=1e-3, horizon=730,
    )
    model = compiled(plan)
    attack = totals(model, simulate(model).states, BLK_CUM_INF)[-1, 0] / 1e6
    assert_allclose(attack, kermack_mckendrick_final_size(1.8), rtol=1e-6)


def test_multi_band_final_size_matches_andreasen() -> None:
    # Andreasen 2011, Bull Math Biol 73:2305, final-size system
    # 1 - z_i = exp(-sum_j beta sigma_i C_ij tau_j s_j z_j), tau_j = mean infectious
    # time weighted by infectiousness, s_j initially susceptible share.
    pops = (2e5, 5e5, 3e5)
    sym = (0.4, 0.7, 0.9)
    rho = 0.5
    sigma = (1.3, 1.0, 0.8)
    prior = (0.0, 0.1, 0.3)
    contacts = (15.0, 10.0, 6.0)
    infectious = 4.0
    plan = make_plan(
        populations=pops, r0=2.2, symptomatic_share=sym, rho=rho, susceptibility=sigma,
        prior_immunity=prior, mean_daily=contacts, assortativity=0.6, infectious_days=infectious,
        latent_stages=2, infectious_stages=2, initial_infections=1e-3, horizon=730,
    )
    model = compiled(plan)
    attack = totals(model, simulate(model).states, BLK_CUM_INF)[-1]
    s0 = 1.0 - np.array(prior)
    c = preferential_mixing(contacts, pops, 0.6)
    tau = infectious * (np.array(sym) + (1.0 - np.array(sym)) * rho)
    hazard = model.beta * np.array(sigma)[:, None] * c * (tau * s0)[None, :]

    def equations(z: np.ndarray) -> np.ndarray:
        return 1.0 - z - np.exp(-hazard @ z)

    z = fsolve(equations, np.full(3, 0.5), xtol=1e-14)
    assert_allclose(equations(z), 0.0, atol=1e-12)
    assert_allclose(attack / (s0 * np.array(pops)), z, rtol=1e-6)
