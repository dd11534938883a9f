"""Invariants over random small plans (hypothesis).

Population conservation (deaths included), no negative compartment and "a measure
with no effect reproduces the baseline exactly" are properties every compartment
model must have (common practice, no source; listed in the project's methods
notes).
"""

from __future__ import annotations

import datetime as dt
from typing import Any

import numpy as np
from factories import (
    DAY0,
    compiled,
    contact_measure,
    isolation_measure,
    make_plan,
    scenario,
    vaccination_measure,
)
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_array_equal

from prepkit.plan import End, Plan, Start
from prepkit.simulation.simulate import simulate

unit = st.floats(0.0, 1.0)


@st.composite
def random_plans(draw: Any) -> tuple[Plan, Plan]:
    """A random plan and the same plan with extra interventions that do nothing."""
    bands = draw(st.integers(1, 3))
    pops = tuple(draw(st.floats(1e3, 1e6)) for _ in range(bands))
    sym = tuple(draw(st.floats(0.1, 1.0)) for _ in range(bands))
    admitted = tuple(p * draw(st.floats(0.0, 0.6)) for p in sym)
    vaccine_args: dict[str, Any] = dict(
        doses_per_day=draw(st.floats(0.0, 0.02)) * sum(pops),
        priority=tuple(draw(st.permutations(range(bands)))),
        uptake=draw(unit),
        efficacy_infection=draw(st.floats(0.0, 0.9)),
        days_to_protection=draw(st.sampled_from([0.0, 7.0, 14.0])),
        start=Start(kind="date", date=DAY0 + dt.timedelta(days=draw(st.integers(-5, 60)))),
    )
    vaccine_args["efficacy_severe"] = vaccine_args["efficacy_infection"] + 0.1
    start_level = draw(st.floats(0.0, 50.0))
    measures = [
        contact_measure(
            "distancing",
            kept={"community": draw(unit), "work": draw(unit), "home": draw(unit)},
            compliance=draw(unit),
            start=Start(kind="admissions", level=start_level),
            end=End(kind="release", level=start_level * draw(unit)),
        ),
        vaccination_measure("vaccine", **vaccine_args),
        isolation_measure("isolation", isolated_share=draw(unit),
                          days_from_onset=draw(st.floats(0.0, 4.0)), compliance=draw(unit)),
    ]
    noops = [
        contact_measure("noop kept all", kept={"community": 1.0, "school": 1.0},
                        start=Start(kind="date", date=DAY0)),
        contact_measure("noop no compliance", kept={"community": 0.1}, compliance=0.0,
                        start=Start(kind="ward_occupancy", level=0.0)),
        vaccination_measure("noop vaccine", **{**vaccine_args, "start": None}, compliance=0.0),
        isolation_measure("noop isolation", isolated_share=0.9, compliance=0.0),
    ]
    chosen = [m.name for m in measures if draw(st.booleans())]
    values: dict[str, Any] = dict(
        populations=pops,
        r0=draw(st.floats(0.7, 4.0)),
        latent_days=draw(st.floats(0.5, 6.0)),
        latent_stages=draw(st.integers(1, 3)),
        infectious_days=draw(st.floats(1.0, 8.0)),
        infectious_stages=draw(st.integers(1, 3)),
        symptomatic_share=sym,
        rho=draw(unit),
        susceptibility=tuple(draw(st.floats(0.3, 1.5)) for _ in range(bands)),
        prior_immunity=tuple(draw(st.floats(0.0, 0.5)) for _ in range(bands)),
        admitted_share=admitted,
        icu_share=tuple(draw(unit) for _ in range(bands)),
        ward_fatality=tuple(draw(unit) for _ in range(bands)),
        icu_fatality=tuple(draw(unit) for _ in range(bands)),
        onset_to_admission=tuple(draw(st.floats(0.5, 7.0)) for _ in range(bands)),
        wait_stages=draw(st.integers(1, 3)),
        mean_daily=tuple(draw(st.floats(1.0, 20.0)) for _ in range(bands)),
        assortativity=draw(unit),
        initial_infections=draw(st.floats(0.0, 100.0)),
        importations=draw(st.floats(0.0, 5.0)),
        seasonal_amplitude=draw(st.floats(0.0, 0.5)),
        seasonal_peak=dt.date(2000, draw(st.integers(1, 12)), 15),
        horizon=150,
    )
    base = make_plan(**values, interventions=measures, scenarios=(scenario("s", chosen),))
    padded = make_plan(
        **values,
        interventions=measures + noops,
        scenarios=(scenario("s", chosen + [m.name for m in noops]),),
    )
    return base, padded


@settings(max_examples=25, deadline=None)
@given(random_plans())
def test_population_conserved_and_nothing_negative(plans: tuple[Plan, Plan]) -> None:
    base, _ = plans
    model = compiled(base)
    states = simulate(model).states
    people = states[:, : model.layout.people_size]
    total = base.population
    # Invariants of every compartment model (common practice, no source): population (deaths
    # included) constant, no negative compartment.
    np.testing.assert_allclose(people.sum(axis=1), total, rtol=1e-9)
    assert people.min() >= -1e-9 * total
    counters = states[:, model.layout.people_size :]
    assert np.all(np.diff(counters, axis=0) >= -1e-9 * total)


@settings(max_examples=25, deadline=None)
@given(random_plans())
def test_interventions_without_effect_change_nothing(plans: tuple[Plan, Plan]) -> None:
    # Invariant of every compartment model (common practice, no source): an intervention with no
    # effect reproduces the baseline exactly.
    base, padded = plans
    a = simulate(compiled(base)).states
    b = simulate(compiled(padded)).states
    assert_array_equal(a, b)
