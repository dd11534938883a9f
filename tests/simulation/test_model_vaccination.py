"""Vaccination: zero efficacy, leaky versus all-or-nothing, critical coverage."""

from __future__ import annotations

import numpy as np
from factories import compiled, make_plan, scenario, totals, vaccination_measure
from numpy.testing import assert_allclose

from prepkit.scenarios.runs import run_scenario
from prepkit.simulation.layout import BLK_CUM_DOSE, BLK_CUM_INF, BLK_E, BLK_S, BLK_V
from prepkit.simulation.simulate import simulate
from prepkit.simulation.transmissibility import reproduction_number

DOSE_COLUMNS = {
    "doses_per_day", "cumulative_doses", "susceptible_persons", "dosed_unprotected_persons",
    "protected_persons", "active_vaccine",
}


def test_zero_efficacy_equals_no_vaccination() -> None:
    # Invariant of every compartment model (common practice, no source): vaccine efficacy 0 equals
    # no vaccination.
    vaccine = vaccination_measure(
        doses_per_day=20000.0, priority=(2, 1, 0), efficacy_infection=0.0, efficacy_severe=0.0
    )
    plan = make_plan(
        populations=(3e5, 4e5, 3e5), symptomatic_share=(0.4, 0.6, 0.8),
        admitted_share=(0.01, 0.03, 0.2), icu_share=0.2, ward_fatality=0.05, icu_fatality=0.3,
        interventions=(vaccine,), horizon=300,
    )
    with_ = run_scenario(plan, "base", True)
    without = run_scenario(plan, "base", False)
    assert with_.metrics.total.doses_given_doses > 1e5
    columns = [c for c in with_.daily.columns if c not in DOSE_COLUMNS]
    assert_allclose(with_.daily[columns].to_numpy(float), without.daily[columns].to_numpy(float),
                    rtol=1e-9, atol=1e-7)
    people = with_.daily[["susceptible_persons", "dosed_unprotected_persons",
                          "protected_persons"]].sum(axis=1)
    assert_allclose(people, without.daily["susceptible_persons"], rtol=1e-9)


def _final_infections(model: object, y0: np.ndarray) -> float:
    states = simulate(model, y0=y0).states  # type: ignore[arg-type]
    return float(totals(model, states, BLK_CUM_INF)[-1].sum())


def test_leaky_attack_rate_not_below_all_or_nothing() -> None:
    # Halloran, Haber, Longini & Struchiner 1991, Am J Epidemiol 133:323 (from memory):
    # at equal efficacy, all-or-nothing protection gives the smaller attack rate.
    coverage, efficacy = 0.4, 0.6
    vaccine = vaccination_measure(doses_per_day=0.0, efficacy_infection=efficacy,
                                  efficacy_severe=efficacy)
    leaky_plan = make_plan(r0=2.5, interventions=(vaccine,), horizon=500, initial_infections=1.0)
    leaky = compiled(leaky_plan)
    y0 = leaky.y0.copy()
    y0[leaky.layout.stage(BLK_V)] = coverage * 1e6
    y0[leaky.layout.stage(BLK_S)] -= coverage * 1e6
    leaky_total = _final_infections(leaky, y0)
    aon = compiled(make_plan(r0=2.5, prior_immunity=coverage * efficacy, horizon=500,
                             initial_infections=1.0))
    aon_total = _final_infections(aon, aon.y0)
    none = compiled(make_plan(r0=2.5, horizon=500, initial_infections=1.0))
    assert aon_total < leaky_total < _final_infections(none, none.y0)
    assert leaky_total > 1.02 * aon_total


def test_critical_coverage_separates_growth_from_decline() -> None:
    # Anderson & May 1991 (from memory): p_c = (1 - 1/R0) / VE; leaky vaccine:
    # R = R0 (1 - p VE) in a homogeneous population.
    r0, efficacy = 2.5, 0.8
    critical = (1 - 1 / r0) / efficacy
    vaccine = vaccination_measure(doses_per_day=0.0, efficacy_infection=efficacy,
                                  efficacy_severe=0.9)
    model = compiled(make_plan(r0=r0, interventions=(vaccine,), initial_infections=10.0,
                               horizon=730))

    def r_eff(p: float) -> float:
        return reproduction_number(model.pc, model.layout, unprotected_share=np.array([1 - p]),
                                   protected_share=np.array([p]))

    assert_allclose(r_eff(critical), 1.0, rtol=1e-12)
    assert r_eff(critical * 1.001) < 1.0 < r_eff(critical * 0.999)

    def attack(p: float) -> float:
        y0 = model.y0.copy()
        y0[model.layout.stage(BLK_V)] = p * 1e6
        y0[model.layout.stage(BLK_S)] = (1 - p) * 1e6 - 10.0
        return _final_infections(model, y0) / 1e6

    assert attack(critical + 0.05) < 1e-3
    assert attack(critical - 0.05) > 1e-2


def test_doses_follow_priority_and_ceiling() -> None:
    vaccine = vaccination_measure(doses_per_day=10000.0, priority=(1, 0), uptake=0.5,
                                  compliance=0.8, days_to_protection=0.0)
    plan = make_plan(populations=(3e5, 2e5), r0=0.9, initial_infections=0.0,
                     interventions=(vaccine,), horizon=120)
    model = compiled(plan)
    states = simulate(model).states
    doses = totals(model, states, BLK_CUM_DOSE)
    # band 1 first, up to 0.5 x 0.8 x 2e5 = 8e4 doses, then band 0 up to 1.2e5
    assert doses[12, 0] < 1.0 and doses[15, 1] > 4e4
    assert_allclose(doses[-1], [1.2e5, 8e4], rtol=1e-3)
    assert np.all(doses[-1] <= [1.2e5 + 1e-6, 8e4 + 1e-6])
    assert np.all(states[:, model.layout.stage(BLK_S)] >= 0.0)
    assert totals(model, states, BLK_E).max() == 0.0


def test_efficacy_against_severe_disease_reduces_admissions() -> None:
    vaccine = vaccination_measure(doses_per_day=0.0, efficacy_infection=0.5, efficacy_severe=0.9)
    plan = make_plan(r0=2.0, symptomatic_share=0.5, admitted_share=0.1, interventions=(vaccine,),
                     scenarios=(scenario("base", ("vaccine",)),), horizon=600)
    model = compiled(plan)
    y0 = model.y0.copy()
    y0[model.layout.stage(BLK_V)] = 5e5
    y0[model.layout.stage(BLK_S)] -= 5e5
    y0[model.layout.stage(BLK_S)] = np.maximum(y0[model.layout.stage(BLK_S)], 0)
    states = simulate(model, y0=y0).states
    from prepkit.simulation.layout import BLK_CUM_ADM, BLK_CUM_ONSET, BLK_EV

    assert totals(model, states, BLK_EV).max() > 0
    ratio = totals(model, states, BLK_CUM_ADM)[-1, 0] / totals(model, states, BLK_CUM_ONSET)[-1, 0]
    assert ratio < 0.2  # unvaccinated admitted per symptomatic = 0.1 / 0.5
