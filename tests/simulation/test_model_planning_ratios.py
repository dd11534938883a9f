"""Severity ratios of a planning table reproduced exactly whatever the dynamics."""

from __future__ import annotations

import numpy as np
import pytest
from factories import make_plan
from numpy.testing import assert_allclose

from prepkit.scenarios.runs import run_scenario

# US HHS Pandemic Influenza Plan (Nov 2005), Table 1, severe column:
ILLNESS_ATTACK = 0.30  # illness attack rate
HOSPITALISED_PER_ILL = 0.110
ICU_PER_HOSPITALISED = 0.15
DEATHS_PER_ILL = 0.021

SYMPTOMATIC = 0.5  # chosen: half of infections are ill (common practice, no source)
ICU_FATALITY = 0.5  # chosen; ward fatality follows from the deaths/ill ratio
WARD_FATALITY = (
    DEATHS_PER_ILL / HOSPITALISED_PER_ILL - ICU_PER_HOSPITALISED * ICU_FATALITY
) / (1 - ICU_PER_HOSPITALISED)


@pytest.mark.parametrize("stages", [(1, 1, 1), (3, 2, 2)])
def test_hhs_severe_ratios(stages: tuple[int, int, int]) -> None:
    infection_attack = ILLNESS_ATTACK / SYMPTOMATIC
    # Kermack & McKendrick 1927: R0 = -ln(1 - z) / z gives final size z.
    r0 = -np.log(1 - infection_attack) / infection_attack
    plan = make_plan(
        r0=r0, latent_stages=stages[0], infectious_stages=stages[1], wait_stages=stages[2],
        symptomatic_share=SYMPTOMATIC, admitted_share=SYMPTOMATIC * HOSPITALISED_PER_ILL,
        icu_share=ICU_PER_HOSPITALISED, ward_fatality=WARD_FATALITY, icu_fatality=ICU_FATALITY,
        initial_infections=1e-3, horizon=730,
    )
    total = run_scenario(plan, "base").metrics.total
    ill = total.symptomatic_cases_persons
    assert_allclose(ill / 1e6, ILLNESS_ATTACK, rtol=1e-5)
    assert_allclose(total.admissions_persons / ill, HOSPITALISED_PER_ILL, rtol=1e-6)
    assert_allclose(total.icu_admissions_persons / total.admissions_persons,
                    ICU_PER_HOSPITALISED, rtol=1e-6)
    assert_allclose(total.hospital_deaths_persons / ill, DEATHS_PER_ILL, rtol=1e-6)
