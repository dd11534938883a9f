"""A hypothesis search over the whole documented range of every input: the solver never diverges.

Every number a plan can hold is drawn from the range the workbook schema declares for it
(read from prepkit.workbook.schema, not copied), ends included. For single runs and for
small ensembles the search asserts either

* results that are finite, non-negative and conserve people (common practice, no source),
  with peak ward and ICU census within 1e-3 (relative) of the tight reference solver
  (the accuracy target, common practice, no source); or
* a ModelError naming the inputs, and only when some per-capita rate of the plan can exceed
  the fastest the solver follows: a refusal is checked against a bound computed here
  (seasonal peak x beta x the largest row sum of the contact matrix with everybody
  infectious, plus importations per resident and dosing; a stage rate; or the largest
  growth rate, from R0 and the latent period).

Inputs whose documented range has no upper end (trigger levels) are drawn up to a limit
named beside them. The fast search keeps to three bands and 120 days; the slow one (marked
``slow``) goes to the documented twenty bands and 730 days.
"""

from __future__ import annotations

import datetime as dt
import math
from typing import Any

import numpy as np
import pytest
from factories import DAY0, contact_measure, isolation_measure, make_plan, vaccination_measure
from hypothesis import HealthCheck, event, given, note, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from prepkit.errors import ModelError
from prepkit.plan import End, Plan, Range3, Start
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues
from prepkit.simulation.health import DRIFT_TOLERANCE, MAX_RATE_PER_DAY, NEGATIVE_TOLERANCE
from prepkit.simulation.layout import (
    BLK_C,
    BLK_W,
    N_SETTINGS,
    P_ICU_RATE,
    P_SUSCEPTIBILITY,
    P_WAIT_RATE,
    S_BETA,
    S_IMPORTS,
    S_INFECTIOUS_RATE,
    S_LATENT_RATE,
    S_PROTECT_RATE,
    S_SEASON_AMPLITUDE,
    S_TOTAL_POP,
    matrix_offset,
    scalar_offset,
)
from prepkit.simulation.simulate import simulate, simulate_reference
from prepkit.simulation.transmissibility import reproduction_number
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.workbook.schema import FIELDS_BY_NAME, MAX_BANDS

pytestmark = pytest.mark.slow  # hypothesis searches over every input range

REFERENCE_ATOL = (1e-30, 1e-20, 1e-12)
"""Absolute tolerances of the reference, as a share of the smallest band, tightest first
[fraction]."""

STIFF_STEPS = 400
"""Above this many production steps on a day, the reference is LSODA rather than DOP853."""

LEVEL_CEILING = 2.0
"""Trigger levels have no documented maximum; drawn up to 200 % occupancy (or 2 a day)."""


def span(name: str) -> tuple[float, float]:
    """Documented range of a field (shares default to [0, 1])."""
    field = FIELDS_BY_NAME[name]
    low = field.minimum if field.minimum is not None else 0.0
    high = field.maximum if field.maximum is not None else (1.0 if field.type == "share"
                                                           else LEVEL_CEILING)
    return float(low), float(high)


def number(name: str, low_end: bool = True) -> st.SearchStrategy[float]:
    """Any value of the field's range: its ends, uniform, and (for wide ranges) log-uniform.

    ``low_end=False`` leaves out the explicit lower end (still reachable by the uniform
    draw): for inputs where 0 in every band means nobody can infect anybody, a refusal
    that would otherwise take half the search.
    """
    low, high = span(name)
    choices = [st.just(high), st.floats(low, high)] + ([st.just(low)] if low_end else [])
    if high > 100 * max(low, 1e-300):
        bottom = low if low > 0 else high * 1e-6
        choices.append(st.floats(math.log(bottom), math.log(high)).map(math.exp))
    return st.one_of(*choices).map(lambda x: min(max(x, low), high))


def whole(name: str) -> st.SearchStrategy[int]:
    low, high = span(name)
    return st.integers(int(low), int(high))


@st.composite
def ranged(draw: Any, name: str, width: bool) -> Range3:
    """A Low/Central/High range inside the field's range (a point unless ``width``)."""
    values = sorted(draw(number(name)) for _ in range(3 if width else 1))
    if not width:
        return Range3.point(values[0])
    return Range3(low=values[0], central=values[1], high=values[2])


@st.composite
def plans(draw: Any, *, most_bands: int, longest: int, width: bool = False) -> Plan:
    bands = draw(st.integers(1, most_bands))
    people = tuple(draw(number("band.people")) for _ in range(bands))
    measure = draw(st.sampled_from(["disease.r0", "disease.doubling_time_days",
                                    "disease.growth_rate_per_day"]))
    spread = draw(ranged(measure, width))
    symptomatic = tuple(draw(ranged("band_disease.symptomatic_share", width))
                        for _ in range(bands))
    low_sym = [s.low for s in symptomatic]
    admitted = tuple(
        Range3(low=p * a.low, central=p * a.central, high=p * a.high)
        for p, a in zip(low_sym, (draw(ranged("band_severity.admitted_share", width))
                                  for _ in range(bands)), strict=True)
    )
    prior = tuple(draw(number("band_disease.prior_immunity")) for _ in range(bands))
    seeded_share = min(draw(number("disease.initial_infections")) / sum(people), 1.0)
    seeded = sum(people) * min(seeded_share, 1.0 - max(prior)) * (1 - 1e-9)
    amplitude = draw(number("disease.seasonal_amplitude"))
    measures = _draw_measures(draw, bands)
    return make_plan(
        populations=people,
        r0=spread if measure == "disease.r0" else None,
        doubling_time=spread if measure == "disease.doubling_time_days" else None,
        growth_rate=spread if measure == "disease.growth_rate_per_day" else None,
        latent_days=draw(ranged("disease.latent_period_days", width)),
        latent_stages=draw(whole("disease.latent_stages")),
        infectious_days=draw(ranged("disease.infectious_period_days", width)),
        infectious_stages=draw(whole("disease.infectious_stages")),
        symptomatic_share=symptomatic,
        rho=draw(number("disease.asymptomatic_relative_infectiousness")),
        susceptibility=tuple(draw(number("band_disease.relative_susceptibility", False))
                             for _ in range(bands)),
        prior_immunity=prior,
        admitted_share=admitted,
        icu_share=tuple(draw(ranged("band_severity.icu_share", width)) for _ in range(bands)),
        ward_fatality=tuple(draw(number("band_severity.ward_fatality")) for _ in range(bands)),
        icu_fatality=tuple(draw(number("band_severity.icu_fatality")) for _ in range(bands)),
        onset_to_admission=tuple(draw(number("band_severity.onset_to_admission_days"))
                                 for _ in range(bands)),
        ward_stay=tuple(draw(ranged("band_severity.ward_stay_days", width))
                        for _ in range(bands)),
        icu_stay=tuple(draw(ranged("band_severity.icu_stay_days", width))
                       for _ in range(bands)),
        wait_stages=draw(whole("severity.admission_delay_stages")),
        ward_stages=draw(whole("severity.ward_stages")),
        icu_stages=draw(whole("severity.icu_stages")),
        mean_daily=tuple(draw(number("band_contacts.mean_daily", False))
                         for _ in range(bands)),
        assortativity=draw(number("mixing.assortativity")),
        initial_infections=seeded,
        importations=draw(number("disease.daily_importations")),
        seasonal_amplitude=amplitude,
        seasonal_peak=dt.date(2000, draw(st.integers(1, 12)), 15) if amplitude > 0 else None,
        horizon=draw(st.integers(int(span("details.horizon_days")[0]), longest)),
        interventions=measures,
    )


def _draw_measures(draw: Any, bands: int) -> list[Any]:
    """Up to one measure of each kind, drawn in the order :func:`plans` always drew them."""
    measures = []
    if draw(st.booleans()):
        level = draw(number("measure.start_level"))
        measures.append(contact_measure(
            "distancing",
            kept={s: draw(number(f"measure.{s}_kept"))
                  for s in ("home", "school", "work", "community")},
            compliance=draw(number("measure.compliance")),
            start=Start(kind=draw(st.sampled_from(["ward_occupancy", "admissions"])),
                        level=level),
            end=End(kind="release", level=level * draw(st.floats(0.0, 1.0))),
        ))
    if draw(st.booleans()):
        efficacy = draw(number("measure.efficacy_infection"))
        measures.append(vaccination_measure(
            doses_per_day=draw(number("measure.doses_per_day")),
            priority=tuple(draw(st.permutations(range(bands)))),
            uptake=draw(number("measure.uptake_ceiling")),
            efficacy_infection=efficacy,
            efficacy_severe=efficacy + (1 - efficacy) * draw(st.floats(0.0, 1.0)),
            days_to_protection=draw(number("measure.days_to_protection")),
            compliance=draw(number("measure.compliance")),
            start=Start(kind="date", date=DAY0 + dt.timedelta(days=draw(st.integers(0, 30)))),
        ))
    if draw(st.booleans()):
        measures.append(isolation_measure(
            isolated_share=draw(number("measure.isolated_share")),
            days_from_onset=draw(number("measure.days_from_onset")),
            compliance=draw(number("measure.compliance")),
        ))
    return measures


def fastest_possible_rate(model: CompiledModel) -> float:
    """Largest rate the model could meet [1/day] (see module docstring)."""
    nb, pc = model.layout.bands, model.pc
    sc, mo = scalar_offset(nb), matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    season = 1 + pc[sc + S_SEASON_AMPLITUDE]
    force = season * pc[sc + S_BETA] * np.max(sigma * contacts.sum(1))
    stages = max(float(np.max(pc[P_WAIT_RATE * nb : (P_ICU_RATE + 1) * nb])),
                 pc[sc + S_LATENT_RATE], pc[sc + S_INFECTIOUS_RATE], pc[sc + S_PROTECT_RATE])
    extra = pc[sc + S_IMPORTS] / pc[sc + S_TOTAL_POP] + 1.0 + pc[sc + S_PROTECT_RATE]
    # growth: every generation interval is at least a latent period (Wallinga & Lipsitch
    # 2007, Proc R Soc B 274:599: 1 = R M(r)), so r <= lat ((season R0)^(1/m) - 1)
    lat, m = pc[sc + S_LATENT_RATE], model.layout.latent_stages
    growth = lat * ((season * reproduction_number(pc, model.layout)) ** (1 / m) - 1)
    return float(max(stages, force + extra, growth))


def compile_or_none(plan: Plan, overrides: Any = None) -> CompiledModel | None:
    """The compiled run, or None when beta cannot be calibrated (a checked refusal)."""
    try:
        return compile_scenario(plan, "base", True, overrides)
    except ModelError as exc:
        note(f"not calibrated: {exc}")
        event("refused before the run (beta cannot be calibrated)")
        assert "cannot be simulated" not in str(exc)
        return None


def reference_peaks(model: CompiledModel, steps: int) -> np.ndarray:
    # DOP853 as the reference; LSODA (stiff) where the rates would make DOP853 take millions
    # of steps. The absolute tolerance is far below any count that matters: the search meets
    # importations of 1e-24 a day that grow 1e25-fold within the horizon, which a looser
    # tolerance would not follow. Where a solver gives up at one tolerance, the next.
    methods = ("DOP853", "LSODA") if steps <= STIFF_STEPS else ("LSODA",)
    for method in methods:
        for atol in REFERENCE_ATOL:
            try:
                ref = simulate_reference(model, method=method, atol_per_person=atol).states
            except ModelError as exc:
                note(f"reference {method} at atol {atol}: {exc}")
                continue
            return np.array([model.layout.block_total(ref, b).sum(axis=1).max()
                             for b in (BLK_W, BLK_C)])
    raise AssertionError("the reference solvers failed at every tolerance")


def check_refusal(exc: ModelError, model: CompiledModel) -> None:
    note(str(exc))
    event("refused: faster than the solver follows")
    assert "cannot be simulated" in str(exc)
    assert exc.problems and all(p.field and p.found for p in exc.problems)
    assert fastest_possible_rate(model) > MAX_RATE_PER_DAY


def check_single(plan: Plan) -> None:
    model = compile_or_none(plan)
    if model is None:
        return
    try:
        run = simulate(model)
    except ModelError as exc:
        check_refusal(exc, model)
        return
    states, total = run.states, plan.population
    people = states[:, : model.layout.people_size]
    assert np.isfinite(states).all()
    assert people.min() >= -NEGATIVE_TOLERANCE * total
    assert np.abs(people.sum(axis=1) - people[0].sum()).max() <= DRIFT_TOLERANCE * total
    fast = np.array([model.layout.block_total(states, b).sum(axis=1).max()
                     for b in (BLK_W, BLK_C)])
    assert_allclose(fast, reference_peaks(model, int(run.substeps.max())), rtol=1e-3,
                    atol=1e-9 * total)
    event("simulated and checked against the reference")


def check_ensemble(plan: Plan, draws_count: int, seed: int) -> None:
    from prepkit.uncertainty.fields import sample_quantiles
    from prepkit.uncertainty.run import draw_values

    model = compile_or_none(plan)
    if model is None:
        return
    quantiles = sample_quantiles(plan, draws_count, seed)
    values: DrawValues = draw_values(plan, "base", quantiles)
    try:
        draws = simulate_draws(model, plan, values, dtype=np.float64, blocks=1)
    except ModelError as exc:
        if "cannot be simulated" not in str(exc):  # a draw's beta cannot be calibrated
            note(str(exc))
            event("refused before the run (beta cannot be calibrated)")
            assert exc.draw is None
            return
        assert exc.draw is not None
        drawn = compile_or_none(plan, values.overrides(exc.draw))
        if drawn is not None:
            check_refusal(exc, drawn)
        return
    total = plan.population
    assert np.isfinite(draws.series).all() and np.isfinite(draws.finals).all()
    assert draws.series[:2].min() >= -NEGATIVE_TOLERANCE * total
    for d in range(values.size):
        drawn = compile_or_none(plan, values.overrides(d))
        assert drawn is not None
        assert_allclose(draws.peaks[d, :2], reference_peaks(drawn, int(draws.substeps[d])),
                        rtol=1e-3, atol=1e-9 * total)
    event("simulated and checked against the reference")


SEARCH = settings(deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                        HealthCheck.data_too_large])


@settings(SEARCH, max_examples=30)
@given(plans(most_bands=3, longest=120))
def test_single_runs_over_the_documented_ranges(plan: Plan) -> None:
    check_single(plan)


@settings(SEARCH, max_examples=10)
@given(plans(most_bands=2, longest=90, width=True), st.integers(0, 2**32 - 1))
def test_small_ensembles_over_the_documented_ranges(plan: Plan, seed: int) -> None:
    check_ensemble(plan, 3, seed)


@pytest.mark.slow
@settings(SEARCH, max_examples=60)
@given(plans(most_bands=MAX_BANDS, longest=int(span("details.horizon_days")[1])))
def test_single_runs_over_the_documented_ranges_long(plan: Plan) -> None:
    check_single(plan)


@pytest.mark.slow
@settings(SEARCH, max_examples=25)
@given(plans(most_bands=4, longest=int(span("details.horizon_days")[1]), width=True),
       st.integers(0, 2**32 - 1))
def test_small_ensembles_over_the_documented_ranges_long(plan: Plan, seed: int) -> None:
    check_ensemble(plan, 4, seed)
