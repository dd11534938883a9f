"""Erlang stays and bed-days."""

from __future__ import annotations

import numpy as np
import pytest
from factories import compiled, make_plan, totals
from numpy.testing import assert_allclose
from scipy.stats import gamma

from prepkit.scenarios.runs import run_scenario
from prepkit.simulation.layout import BLK_C, BLK_W
from prepkit.simulation.simulate import simulate


@pytest.mark.parametrize("stages", [1, 2, 5])
def test_unit_cohort_leaves_hospital_as_gamma_survival(stages: int) -> None:
    plan = make_plan(ward_stay=8.0, icu_stay=12.0, ward_stages=stages, icu_stages=stages,
                     initial_infections=0.0)
    model = compiled(plan, substeps=16)  # fine steps: this checks the stage structure
    y0 = np.zeros(model.layout.size)
    y0[model.layout.index(BLK_W, 0, 0)] = 1.0
    y0[model.layout.index(BLK_C, 0, 0)] = 1.0
    states = simulate(model, y0=y0, days=60).states
    t = np.arange(61)
    # Hurtado & Kirosingh 2019, J Math Biol 79:1831: k stages at rate k/T -> Gamma(k, T/k).
    assert_allclose(totals(model, states, BLK_W)[:, 0], gamma.sf(t, stages, scale=8.0 / stages),
                    atol=1e-8)
    assert_allclose(totals(model, states, BLK_C)[:, 0], gamma.sf(t, stages, scale=12.0 / stages),
                    atol=1e-8)


def test_bed_days_equal_admissions_times_mean_stay() -> None:
    plan = make_plan(
        populations=(4e5, 6e5), r0=2.0, symptomatic_share=0.6, admitted_share=(0.02, 0.1),
        icu_share=(0.1, 0.3), ward_stay=(6.0, 9.0), icu_stay=(10.0, 14.0), ward_stages=3,
        horizon=730,
    )
    run = run_scenario(plan, "base")
    for label, ward_stay, icu_stay in (("0-9", 6.0, 10.0), ("10+", 9.0, 14.0)):
        band = run.metrics.by_band[label]
        ward_admissions = band.admissions_persons - band.icu_admissions_persons
        # Little 1961, Oper Res 9:383: L = lambda W, so bed-days = admissions x mean stay.
        assert_allclose(band.ward_bed_days, ward_admissions * ward_stay, rtol=1e-7)
        assert_allclose(band.icu_bed_days, band.icu_admissions_persons * icu_stay, rtol=1e-7)
    # the daily (midnight census) sum approximates the integral
    assert_allclose(run.daily["ward_census_persons"].sum(), run.metrics.total.ward_bed_days,
                    rtol=1e-3)
