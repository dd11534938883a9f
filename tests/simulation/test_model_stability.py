"""The solver never diverges on a legal input: the reported cases, the step rule, the checks.

Every case of the report runs the town sample (read from its workbook) with one input moved
to the edge of its documented range (the ranges are read from the workbook schema, not
copied). Each result must be finite, non-negative and conserve people, and its peak ward
and ICU census must agree with the DOP853 reference within 1e-3 (the accuracy target,
common practice, no source). Inputs that contradict one another beyond what the solver can
follow stop with a ModelError naming them, never with numbers.
"""

from __future__ import annotations

import math
import pickle
import shutil
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from prepkit.errors import ModelError
from prepkit.plan import Plan, Range3
from prepkit.scenarios.runs import compile_scenario, run_scenario
from prepkit.simulation.health import DRIFT_TOLERANCE, MAX_RATE_PER_DAY, NEGATIVE_TOLERANCE
from prepkit.simulation.layout import (
    BLK_C,
    BLK_CUM_INF,
    BLK_W,
    S_GROWTH_BOUND,
    S_GROWTH_STEP,
    S_LATENT_RATE,
    scalar_offset,
)
from prepkit.simulation.simulate import simulate, simulate_reference
from prepkit.simulation.transmissibility import growth_rate
from prepkit.uncertainty.ensemble import simulate_draws
from prepkit.uncertainty.fields import sample_quantiles
from prepkit.uncertainty.run import draw_values, run_ensemble
from prepkit.workbook import read_plan
from prepkit.workbook.schema import FIELDS_BY_NAME

pytestmark = pytest.mark.slow  # ensembles against the reference solver

SAMPLE = Path(__file__).parents[2] / "sample_workbooks" / "tamsett_hollow.xlsx"


def edge(name: str, end: str) -> float:
    """The documented minimum or maximum of a workbook field."""
    value = getattr(FIELDS_BY_NAME[name], end)
    assert value is not None
    return float(value)


@pytest.fixture(scope="module")
def town() -> Plan:
    return read_plan(SAMPLE)


def with_disease(plan: Plan, **changes: Any) -> Plan:
    return replace(plan, disease=replace(plan.disease, **changes))


def assert_sound(model: Any, states: np.ndarray) -> None:
    """Finite, non-negative, people conserved (common practice, no source)."""
    people = states[:, : model.layout.people_size]
    total = float(model.population.sum())
    assert np.isfinite(states).all()
    assert people.min() >= -NEGATIVE_TOLERANCE * total
    assert np.abs(people.sum(axis=1) - people[0].sum()).max() <= DRIFT_TOLERANCE * total


def assert_matches_reference(model: Any, states: np.ndarray, method: str = "DOP853") -> None:
    ref = simulate_reference(model, method=method).states
    total = float(model.population.sum())
    for block in (BLK_W, BLK_C):
        fast = model.layout.block_total(states, block).sum(axis=1).max()
        slow = model.layout.block_total(ref, block).sum(axis=1).max()
        assert_allclose(fast, slow, rtol=1e-3, atol=1e-9 * total)


# --------------------------------------------------------------------------- reported cases


def test_importations_at_their_documented_maximum_stay_finite(town: Plan) -> None:
    # Report: Disease!C16 = 1,000,000 a day gave NaN axis limits and a census of -1.15e57.
    plan = with_disease(town, daily_importations=edge("disease.daily_importations", "maximum"))
    for scenario in plan.scenarios:
        model = compile_scenario(plan, scenario, True)
        run = simulate(model)
        assert_sound(model, run.states)
        assert_matches_reference(model, run.states)
        # everybody not immune is infected within days, from outside
        assert run.states[-1, model.layout.stage(0)].sum() < 1e-6 * plan.population


def test_shortest_doubling_time_with_five_day_periods_stays_finite(town: Plan) -> None:
    # Report: doubling time 0.5 days with latent = infectious = 5 days diverged.
    plan = with_disease(
        town,
        doubling_time_days=Range3.point(edge("disease.doubling_time_days", "minimum")),
        latent_period_days=Range3.point(5.0),
        infectious_period_days=Range3.point(5.0),
    )
    for flag in (True, False):
        model = compile_scenario(plan, plan.scenarios[0], flag)
        run = simulate(model)
        assert run.substeps.max() > model.substeps  # the force of infection needs more steps
        assert_sound(model, run.states)
        assert_matches_reference(model, run.states)
        metrics = run_scenario(plan, plan.scenarios[0], flag).metrics
        assert 0.0 <= metrics.ward.peak_census_persons <= plan.population


def wide_ranges(town: Plan) -> Plan:
    """The report's ensemble: doubling time Low 0.5, latent and infectious High 25 days."""
    d = town.disease
    assert d.doubling_time_days is not None
    return with_disease(
        town,
        doubling_time_days=replace(d.doubling_time_days,
                                   low=edge("disease.doubling_time_days", "minimum")),
        latent_period_days=replace(d.latent_period_days, high=25.0),
        infectious_period_days=replace(d.infectious_period_days, high=25.0),
    )


def test_wide_ranges_give_finite_bands_and_every_draw_matches_the_reference(town: Plan) -> None:
    # Report: only some draws diverged and the pack printed "between 8.0 and
    # 1,821,679,804,533,... beds".
    plan = wide_ranges(town)
    scenario = plan.scenarios[0]
    model = compile_scenario(plan, scenario, True)
    values = draw_values(plan, scenario, sample_quantiles(plan, 200))
    draws = simulate_draws(model, plan, values, dtype=np.float64)
    assert np.isfinite(draws.series).all() and np.isfinite(draws.finals).all()
    assert draws.series.min() >= -NEGATIVE_TOLERANCE * plan.population
    assert draws.peaks[:, :2].max() <= plan.population
    assert draws.substeps.max() > 1  # the fast draws took more steps
    # the fastest draws, where the old rule diverged, against the reference
    for d in np.argsort(draws.substeps)[-3:]:
        drawn = compile_scenario(plan, scenario, True, values.overrides(int(d)))
        ref = simulate_reference(drawn).states
        for k, block in enumerate((BLK_W, BLK_C)):
            expected = drawn.layout.block_total(ref, block).sum(axis=1).max()
            assert_allclose(draws.peaks[d, k], expected, rtol=1e-3, atol=1e-9 * plan.population)


def test_wide_ranges_give_a_finite_ensemble_summary(town: Plan) -> None:
    plan = wide_ranges(town)
    result = run_ensemble(plan, plan.scenarios[0], True, draws=64)
    numbers = result.daily.to_numpy(dtype=float)
    assert np.isfinite(numbers).all()
    top = float(result.summary.loc["peak_ward_demand_beds"].drop("scenario_run").max())
    assert top <= plan.population


# --------------------------------------------------------------------------- refusals


def contradictory(town: Plan) -> Plan:
    """Doubling time 0.5 days with 60-day latent and infectious periods in 10 and 2 stages: R0
    in the hundreds of billions (R0 from the growth rate with Erlang stages: Wallinga &
    Lipsitch 2007, Proc R Soc B 274:599)."""
    return with_disease(
        town,
        doubling_time_days=Range3.point(edge("disease.doubling_time_days", "minimum")),
        latent_period_days=Range3.point(edge("disease.latent_period_days", "maximum")),
        infectious_period_days=Range3.point(edge("disease.infectious_period_days", "maximum")),
        latent_stages=int(edge("disease.latent_stages", "maximum")),
    )


def test_contradictory_inputs_stop_with_their_cells_named(town: Plan) -> None:
    plan = contradictory(town)
    with pytest.raises(ModelError) as caught:
        run_scenario(plan, plan.scenarios[0], True)
    error = caught.value
    assert error.draw is None
    assert error.fields[:3] == ("Doubling time", "Latent period", "Infectious period")
    # and the band where the force of infection is largest, with what drives it there
    band = error.fields[3].split(", band ")[1]
    assert error.fields[3:] == (f"Relative susceptibility, band {band}",
                                f"Daily contacts, band {band}")
    cells = {p.field: (p.sheet, p.cell) for p in error.problems}
    records = {r.label: (r.sheet, r.cell) for r in plan.source.inputs}
    for label, where in cells.items():
        assert where == records[label]
        assert where[1]  # read from a workbook: the cell is known
    assert error.problems[0].found == "0.5 days"
    text = str(error)
    assert "Disease!C6 Doubling time = 0.5 days" in text
    assert f"at most {MAX_RATE_PER_DAY:,.0f} per day" in text
    assert "from memory" not in text


def test_a_failing_draw_stops_the_ensemble_naming_the_draw(town: Plan) -> None:
    plan = with_disease(contradictory(town),
                        latent_period_days=Range3(low=2.0, central=30.0, high=60.0))
    with pytest.raises(ModelError) as caught:
        run_ensemble(plan, plan.scenarios[0], True, draws=16)
    error = caught.value
    assert error.draw is not None and 0 <= error.draw < 16
    assert f"uncertainty draw {error.draw + 1}" in str(error)
    latent = next(p for p in error.problems if p.field == "Latent period")
    assert "in this draw (drawn between 2 and 60)" in latent.found


def test_a_stage_too_fast_names_its_input() -> None:
    from factories import make_plan, vaccination_measure

    plan = make_plan(interventions=(vaccination_measure(days_to_protection=1e-5),),
                     horizon=30)
    with pytest.raises(ModelError) as caught:
        run_scenario(plan, "base")
    (problem,) = caught.value.problems
    assert problem.field == "Days to protection, measure vaccine"
    assert problem.sheet == "Measures" and problem.cell == ""  # built in code, not read
    assert problem.expected.startswith("0 (protection at once) or at least")


def test_a_failed_check_is_an_error_not_a_result() -> None:
    # A state with a negative compartment (impossible from a plan) must fail the checks.
    from factories import compiled, make_plan

    model = compiled(make_plan(horizon=10))
    start = model.y0.copy()
    start[model.layout.stage(BLK_W)] = -1.0
    with pytest.raises(ModelError, match="a compartment fell to -1 people"):
        simulate(model, y0=start)


def test_model_errors_keep_their_problems_through_pickling(town: Plan) -> None:
    # Errors raised on a cluster worker reach the planner whole.
    with pytest.raises(ModelError) as caught:
        run_scenario(contradictory(town), town.scenarios[0], True)
    again = pickle.loads(pickle.dumps(caught.value))
    assert str(again) == str(caught.value)
    assert again.problems == caught.value.problems


def test_the_command_line_exits_2_and_leaves_the_workbook_alone(tmp_path: Path, town: Plan
                                                                ) -> None:
    import openpyxl

    from prepkit.cli.main import main

    where = {r.name: (r.sheet, r.cell) for r in town.source.inputs}
    workbook = tmp_path / "town.xlsx"
    shutil.copyfile(SAMPLE, workbook)
    book = openpyxl.load_workbook(workbook)
    for name, value in (("disease.doubling_time_days", 0.5), ("disease.latent_period_days", 60),
                        ("disease.infectious_period_days", 60),
                        ("disease.latent_stages", 10)):
        sheet, cell = where[name]
        book[sheet][cell] = value
    book.save(workbook)
    before = workbook.read_bytes()
    code = main(["run", str(workbook), "--draws", "0", "--summary-only", "--summary-json",
                 str(tmp_path / "summary.json"), "-q"])
    assert code == 2
    assert workbook.read_bytes() == before
    assert not (tmp_path / "summary.json").exists()


# --------------------------------------------------------------------------- step rule


def rk4_polynomial(z: np.ndarray) -> np.ndarray:
    """Stability function of classical RK4, the degree-4 Taylor polynomial of exp (Hairer,
    Norsett & Wanner 1993, Solving ODEs I, sec. IV.2, from memory)."""
    return 1 + z + z**2 / 2 + z**3 / 6 + z**4 / 24


def test_rk4_keeps_linear_flows_non_negative_exactly_up_to_rate_times_step_one() -> None:
    # Bolley & Crouzeix 1978 (RAIRO Anal. Numer. 12:237): R(hA) >= 0 for every A with
    # A + I/h >= 0 iff R is absolutely monotonic on [-1, 0] (from memory). The derivatives
    # of R are 1 + z + z^2/2 + z^3/6, 1 + z + z^2/2, 1 + z, 1: all >= 0 on [-1, 0], and
    # 1 + z < 0 just below -1.
    rng = np.random.default_rng(5)
    for limit, expect_negative in ((1.0, False), (1.3, True)):
        lowest = np.inf
        for _ in range(400):
            # an Erlang-like chain with random rates and splits: outflow k_i, part to i + 1
            rates = limit * rng.uniform(0.6, 1.0, 12)
            a = -np.diag(rates) + np.diag(rates[:-1] * rng.uniform(0.5, 1.0, 11), -1)
            step = sum(np.linalg.matrix_power(a, n) / math.factorial(n) for n in range(5))
            lowest = min(lowest, float(step.min()))
            assert_allclose(step[0, 0], rk4_polynomial(np.array(-rates[0])), rtol=1e-12)
        assert (lowest < -1e-6) == expect_negative


def test_steps_follow_the_force_of_infection_day_by_day(town: Plan) -> None:
    plan = with_disease(
        town,
        doubling_time_days=Range3.point(edge("disease.doubling_time_days", "minimum")),
        latent_period_days=Range3.point(5.0),
        infectious_period_days=Range3.point(5.0),
    )
    model = compile_scenario(plan, plan.scenarios[0], False)
    run = simulate(model)
    steps = run.substeps
    # quiet days take what the rates fixed for the run ask: the fewest steps, the growth
    # bound within its step (a rise by e^G in G / z steps loses G z^4 / 120: the Taylor
    # remainder of exp beyond the RK4 polynomial, common practice, no source), the stages
    sc = scalar_offset(model.layout.bands)
    growth = model.pc[sc + S_GROWTH_BOUND] / min(model.max_step_rate,
                                                 model.pc[sc + S_GROWTH_STEP])
    stages = model.pc[sc + S_LATENT_RATE] / model.max_step_rate
    assert steps.min() == max(model.substeps, math.ceil(growth), math.ceil(stages))
    busiest = int(np.argmax(steps))
    # more steps where the epidemic is fastest, i.e. near the peak of infections
    infections = np.diff(model.layout.block_total(run.states, BLK_CUM_INF).sum(axis=1))
    assert abs(busiest - int(np.argmax(infections))) <= 5
    # as accurate as taking the busiest day's steps every day (a tenth of the 1e-3 target)
    fixed = simulate(model, substeps=int(steps.max()), max_step_rate=np.inf)
    for block in (BLK_W, BLK_C):
        a = model.layout.block_total(run.states, block).sum(axis=1).max()
        b = model.layout.block_total(fixed.states, block).sum(axis=1).max()
        assert_allclose(a, b, rtol=1e-4)


@settings(max_examples=40, deadline=None)
@given(
    bands=st.integers(1, 3),
    r0=st.floats(0.5, 30.0),
    latent=st.floats(0.1, 20.0),
    latent_stages=st.integers(1, 6),
    infectious=st.floats(0.1, 20.0),
    infectious_stages=st.integers(1, 6),
    onset=st.floats(0.1, 20.0),
    wait_stages=st.integers(1, 4),
    rho=st.floats(0.0, 1.0),
    amplitude=st.floats(0.0, 0.9),
    admitted=st.floats(0.0, 1.0),
)
def test_the_growth_bound_is_never_below_the_growth_rate(
    bands: int, r0: float, latent: float, latent_stages: int, infectious: float,
    infectious_stages: int, onset: float, wait_stages: int, rho: float, amplitude: float,
    admitted: float,
) -> None:
    # The growth rate is the dominant eigenvalue of F - V (Wallinga & Lipsitch 2007, Proc R
    # Soc B 274:599); at the seasonal peak it is the largest the run can reach.
    import datetime as dt

    from factories import make_plan

    plan = make_plan(
        populations=tuple(1e5 * (i + 1) for i in range(bands)), r0=r0, latent_days=latent,
        latent_stages=latent_stages, infectious_days=infectious,
        infectious_stages=infectious_stages, symptomatic_share=0.7, rho=rho,
        admitted_share=0.7 * admitted, onset_to_admission=tuple(onset * (1 + i)
                                                               for i in range(bands)),
        wait_stages=wait_stages, seasonal_amplitude=amplitude,
        seasonal_peak=dt.date(2000, 1, 15), mean_daily=tuple(5.0 + 3 * i for i in range(bands)),
        horizon=10,
    )
    model = compile_scenario(plan, "base", True)
    bound = model.pc[scalar_offset(model.layout.bands) + S_GROWTH_BOUND]
    peak = growth_rate(model.pc, model.layout, season=1.0 + amplitude)
    assert bound >= peak - 1e-9 * max(1.0, abs(peak))


@pytest.mark.parametrize(("r0", "latent", "stages", "amplitude"),
                         [(2.5, 3.0, 2, 0.0), (30.0, 0.1, 1, 0.9), (1.2, 60.0, 10, 0.3)])
def test_the_growth_bound_is_exact_for_one_infectious_chain(
    r0: float, latent: float, stages: int, amplitude: float
) -> None:
    # Erlang SEIR in one band, nobody admitted, a slow onset-to-admission chain: the
    # Euler-Lotka relation (Wallinga & Lipsitch 2007, Proc R Soc B 274:599, for the SEIR with
    # Erlang stages) has one chain, so the bound is the growth rate itself.
    import datetime as dt

    from factories import make_plan

    plan = make_plan(r0=r0, latent_days=latent, latent_stages=stages, infectious_days=4.0,
                     infectious_stages=stages, symptomatic_share=1.0, admitted_share=0.0,
                     onset_to_admission=60.0, seasonal_amplitude=amplitude,
                     seasonal_peak=dt.date(2000, 1, 15), horizon=10)
    model = compile_scenario(plan, "base", True)
    bound = model.pc[scalar_offset(model.layout.bands) + S_GROWTH_BOUND]
    peak = growth_rate(model.pc, model.layout, season=1.0 + amplitude)
    assert_allclose(bound, peak, rtol=1e-6)
