"""Which inputs the fit estimates and how a parameter set becomes model inputs (hand-worked)."""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
from conftest import small_plan
from numpy.testing import assert_allclose

from prepkit.fitting.inputs import CHANGE, INITIAL, SEVERITY, TRANSMISSIBILITY, fit_inputs
from prepkit.plan import FitSettings, Range3
from prepkit.plan.fit import CHANGE_MEASURE


def test_priors_come_from_the_workbook_ranges() -> None:
    plan = small_plan()
    inputs = fit_inputs(plan)
    assert inputs.names == (TRANSMISSIBILITY, INITIAL, SEVERITY)
    r0, seeds, severity = inputs.priors
    assert (r0.kind, r0.low, r0.mode, r0.high) == ("pert", 1.8, 2.2, 2.6)
    # 20 infections at day 0, off by a factor of 10 either way (the default).
    assert (seeds.kind, seeds.low, seeds.high) == ("log_uniform", 2.0, 200.0)
    # Population-weighted admitted share (20,000, 60,000 and 15,000 people):
    # Low 1.12 / 95, Central 1.39 / 95, High 1.99 / 95, as ratios to Central.
    assert severity.kind == "pert"
    assert_allclose([severity.low, severity.mode, severity.high],
                    [1.12 / 1.39, 1.0, 1.99 / 1.39], rtol=1e-12)
    assert inputs.change_day is None


def test_a_change_date_adds_the_change_and_a_point_range_is_not_estimated() -> None:
    plan = small_plan()
    disease = dataclasses.replace(plan.disease, r0=Range3.point(2.2))
    fit = FitSettings(change_date=dt.date(2027, 1, 20),
                      change_factor=Range3(low=0.4, central=0.7, high=1.0))
    inputs = fit_inputs(dataclasses.replace(plan, disease=disease, fit=fit))
    assert inputs.names == (CHANGE, INITIAL, SEVERITY)
    assert inputs.change_day == 16  # day 0 is 2027-01-04
    sets = inputs.sets(np.array([[0.5, 40.0, 1.2], [0.9, 5.0, 0.8]]))
    assert_allclose(sets.transmissibility_value, [2.2, 2.2])
    # the change m is carried as the compliance 1 - m of a contacts row keeping nothing
    assert_allclose(sets.compliance[CHANGE_MEASURE], [0.5, 0.1])
    assert sets.initial_infections is not None
    assert_allclose(sets.initial_infections, [40.0, 5.0])
    central = np.array([0.002, 0.01, 0.05])
    assert_allclose(sets.admitted_share, [1.2 * central, 0.8 * central], rtol=1e-12)
    assert_allclose(sets.latent_period_days,
                    np.repeat(inputs.central.latent_period_days, 2))
