"""Uncertainty ensemble: sampling properties, agreement with the engine, output invariants."""

from __future__ import annotations

import datetime as dt
import json
import math
from dataclasses import replace

import numpy as np
import pytest
from factories import (
    DAY0,
    banded_plan,
    contact_measure,
    isolation_measure,
    make_capacity,
    make_plan,
    scenario,
    vaccination_measure,
)
from numpy.testing import assert_allclose, assert_array_equal
from numpy.typing import NDArray

from prepkit.errors import ModelError
from prepkit.plan import Range3, Start
from prepkit.scenarios.runs import compile_scenario, run_plan, run_scenario
from prepkit.simulation.layout import S_BETA, StateLayout, scalar_offset
from prepkit.simulation.natural_history import share_before_isolation, shares_before_isolation
from prepkit.simulation.next_generation import (
    infected_subsystem,
    next_generation_matrix,
    spectral_radius,
)
from prepkit.simulation.transmissibility import reproduction_number
from prepkit.uncertainty.ensemble import calibrate_beta, simulate_draws
from prepkit.uncertainty.fields import plan_dimensions, sample_quantiles, scenario_fields
from prepkit.uncertainty.parameters import build_parameters
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.uncertainty.results import quantile_label
from prepkit.uncertainty.run import draw_values, run_ensemble
from prepkit.uncertainty.sampling import latin_hypercube, pert_mean, pert_parameters, pert_ppf
from prepkit.uncertainty.summary_json import uncertainty_summary_dict


def with_draws(plan, draws=40, seed=7, horizon=None):
    details = replace(plan.details, draws=draws, seed=seed)
    if horizon is not None:
        details = replace(details, horizon_days=horizon)
    return replace(plan, details=details)


@pytest.fixture(scope="module")
def uncertain_plan():
    """Ten bands, every Low/Central/High range open, triggers and all measure kinds."""
    plan = banded_plan(10, horizon=160)
    disease = replace(
        plan.disease,
        symptomatic_share=tuple(
            Range3(low=0.9 * x.central, central=x.central, high=min(1.0, 1.08 * x.central))
            for x in plan.disease.symptomatic_share
        ),
    )
    severity = replace(
        plan.severity,
        ward_stay_days=tuple(Range3(low=0.8 * x.central, central=x.central, high=1.3 * x.central)
                             for x in plan.severity.ward_stay_days),
        icu_stay_days=tuple(Range3(low=0.8 * x.central, central=x.central, high=1.25 * x.central)
                            for x in plan.severity.icu_stay_days),
    )
    measures = []
    for item in plan.interventions:
        opened = replace(item, compliance=Range3(low=0.6, central=0.8, high=0.95))
        if item.vaccination is not None:
            opened = replace(opened, vaccination=replace(
                item.vaccination,
                efficacy_infection=Range3(low=0.4, central=0.6, high=0.7),
                efficacy_severe=Range3(low=0.7, central=0.8, high=0.9),
            ))
        measures.append(opened)
    plan = replace(plan, disease=replace(disease, latent_period_days=Range3(
        low=2.0, central=2.5, high=3.0)), severity=severity, interventions=tuple(measures))
    return with_draws(plan)


# --------------------------------------------------------------------------- sampling


# The independent reference: beta from the full infected subsystem's next-generation matrix
# (Diekmann, Heesterbeek & Metz 1990, J. Math. Biol. 28:365; Wallinga & Lipsitch 2007,
# Proc. R. Soc. B 274:599), not the per-band shortcut of prepkit.simulation.beta_scaling.


def beta_for_r0(target_r0: float, pc: NDArray[np.float64], layout: StateLayout) -> float:
    """Transmission scale giving a target R0 (fully susceptible, season 1).

    Parameters
    ----------
    target_r0 : float
        Basic reproduction number [dimensionless].
    pc : ndarray
        Parameter vector (its beta is ignored).
    layout : StateLayout
        State layout.

    Returns
    -------
    float
        beta [per contact].
    """
    unit = reproduction_number(pc, layout, beta=1.0)
    if not (unit > 0.0 and math.isfinite(float(target_r0) / unit)):
        raise ModelError("nobody can infect anybody")
    return float(target_r0) / unit


def beta_for_growth_rate(target_r: float, pc: NDArray[np.float64], layout: StateLayout) -> float:
    """Transmission scale giving a target early growth rate.

    Uses ``beta = 1 / rho(F_1 (V + r I)^-1)``, which makes ``r`` the dominant
    eigenvalue of ``F - V`` (``V + r I`` stays a non-singular M-matrix for
    ``r`` above minus the slowest exit rate).

    Parameters
    ----------
    target_r : float
        Growth rate [1/day].
    pc, layout
        As for :func:`beta_for_r0`; returns beta [per contact] likewise.

    References
    ----------
    Wallinga J., Lipsitch M. (2007). Proc. R. Soc. B 274:599-604.
    Wearing H.J., Rohani P., Keeling M.J. (2005). Appropriate models for the
    management of infectious diseases. PLoS Medicine 2:e174.
    doi:10.1371/journal.pmed.0020174
    """
    f_mat, v_mat, entries = infected_subsystem(pc, layout, beta=1.0)
    slowest = float(np.min(np.diag(v_mat)))
    if target_r <= -slowest:
        raise ModelError(
            f"growth rate {target_r:.4g}/day is below what any transmission can give "
            f"(-{slowest:.4g}/day)"
        )
    shifted = v_mat + target_r * np.eye(v_mat.shape[0])
    unit = spectral_radius(next_generation_matrix(f_mat, shifted, entries))
    if not (unit > 0.0 and math.isfinite(1.0 / unit)):
        raise ModelError("nobody can infect anybody")
    return 1.0 / unit


def test_latin_hypercube_hits_every_stratum_once():
    # McKay, Beckman & Conover 1979, Technometrics 21:239: each of the n equal strata of
    # every dimension holds exactly one point.
    n, d = 97, 7
    sample = latin_hypercube(n, d, seed=11)
    assert sample.shape == (n, d)
    for column in sample.T:
        assert_array_equal(np.sort(np.floor(column * n).astype(int)), np.arange(n))


def test_plan_sample_is_a_latin_hypercube(uncertain_plan):
    sample = sample_quantiles(uncertain_plan, 40)
    assert sample.shape == (40, len(plan_dimensions(uncertain_plan)))
    for column in sample.T:
        assert_array_equal(np.sort(np.floor(column * 40).astype(int)), np.arange(40))


def test_sampling_is_reproducible_and_seed_dependent(uncertain_plan):
    first = draw_values(uncertain_plan, "all measures", sample_quantiles(uncertain_plan, 30))
    again = draw_values(uncertain_plan, "all measures", sample_quantiles(uncertain_plan, 30))
    other = draw_values(uncertain_plan, "all measures",
                        sample_quantiles(uncertain_plan, 30, seed=8))
    for name in ("transmissibility_value", "symptomatic_share", "ward_stay_days"):
        assert_array_equal(getattr(first, name), getattr(again, name))
        assert not np.array_equal(getattr(first, name), getattr(other, name))


def test_pert_shape_parameters():
    # Malcolm et al. 1959 (lambda 4): a = 0, c = 0.25, b = 1 gives alpha = 2, beta = 4.
    alpha, beta = pert_parameters(0.0, 0.25, 1.0)
    assert_allclose([alpha, beta], [2.0, 4.0], rtol=1e-15)


@pytest.mark.parametrize("low, mode, high", [(1.4, 1.8, 2.3), (2.0, 2.0, 5.0), (0.1, 0.6, 0.6)])
def test_pert_mean(low, mode, high):
    # Malcolm, Roseboom, Clark & Fazar 1959, Oper. Res. 7:646: mean (a + 4c + b) / 6;
    # variance of the lambda-4 PERT (mu - a)(b - mu) / 7.
    n = 20_000
    u = latin_hypercube(n, 1, seed=3)[:, 0]
    values = pert_ppf(u, low, mode, high)
    mean = float(pert_mean(low, mode, high))
    sd = np.sqrt((mean - low) * (high - mean) / 7.0)
    assert abs(values.mean() - mean) < 4.0 * sd / np.sqrt(n)
    assert values.min() >= low and values.max() <= high


def test_point_mass_when_low_equals_high():
    u = latin_hypercube(10, 1, seed=1)[:, 0]
    assert_array_equal(pert_ppf(u, 0.3, 0.3, 0.3), np.full(10, 0.3))
    mixed = pert_ppf(u, np.array([0.3, 0.1]), np.array([0.3, 0.2]), np.array([0.3, 0.4]))
    assert_array_equal(mixed[:, 0], 0.3)
    assert np.ptp(mixed[:, 1]) > 0.0


def test_per_band_fields_are_comonotone(uncertain_plan):
    values = draw_values(uncertain_plan, "no measures", sample_quantiles(uncertain_plan, 40))
    order = np.argsort(values.ward_stay_days[:, 0])
    for band in range(values.ward_stay_days.shape[1]):
        assert np.all(np.diff(values.ward_stay_days[order, band]) >= 0.0)


def test_levels_set_the_range_of_transmissibility_and_severity():
    plan = make_plan(
        r0=Range3(low=1.2, central=1.5, high=2.0),
        admitted_share=Range3(low=0.01, central=0.02, high=0.04),
        latent_days=Range3(low=2.0, central=3.0, high=4.0),
        scenarios=(scenario("low", (), "low", "low"), scenario("mid"),
                   scenario("high", (), "high", "high")),
    )
    got = {s.name: {f.key: f for f in scenario_fields(plan, s)} for s in plan.scenarios}
    expect = {"low": (1.2, 1.2, 1.5), "mid": (1.2, 1.5, 2.0), "high": (1.5, 2.0, 2.0)}
    for name, (a, c, b) in expect.items():
        item = got[name]["transmissibility"]
        assert (item.low[0], item.mode[0], item.high[0]) == (a, c, b)
        assert got[name]["latent_period_days"].low[0] == 2.0
        assert got[name]["latent_period_days"].high[0] == 4.0
    assert tuple(got["high"]["admitted_share"].low) == (0.02,)
    # a doubling time is read inverted: high transmissibility = short doubling time
    fast = make_plan(doubling_time=Range3(low=3.0, central=4.0, high=6.0),
                     scenarios=(scenario("fast", (), "high"),))
    item = scenario_fields(fast, "fast")[0]
    assert (item.low[0], item.mode[0], item.high[0]) == (3.0, 3.0, 4.0)


def test_quantile_labels():
    assert [quantile_label(q) for q in (0.05, 0.5, 0.95, 0.025)] == [
        "q05", "q50", "q95", "q02_5"]


# --------------------------------------------------------------------------- per-draw arrays


@pytest.mark.parametrize("measure", ["r0", "doubling_time", "growth_rate"])
def test_beta_calibration_matches_the_engine(uncertain_plan, measure):
    # Diekmann, Heesterbeek & Metz 1990 (R0 = spectral radius of the NGM); Wallinga &
    # Lipsitch 2007 (growth rate): the closed form must equal the full infected subsystem.
    disease = uncertain_plan.disease
    if measure == "doubling_time":
        disease = replace(disease, r0=None, doubling_time_days=Range3(low=3.0, central=4.0,
                                                                       high=6.0))
    elif measure == "growth_rate":
        disease = replace(disease, r0=None, growth_rate_per_day=Range3(low=0.1, central=0.15,
                                                                        high=0.2))
    plan = replace(uncertain_plan, disease=disease)
    model = compile_scenario(plan, "no measures", False)
    values = draw_values(plan, "no measures", sample_quantiles(plan, 5))
    betas = calibrate_beta(model, values)
    for d in range(5):
        drawn = compile_scenario(plan, "no measures", False, values.overrides(d))
        value = values.transmissibility_value[d]
        if measure == "r0":
            expected = beta_for_r0(value, drawn.pc, drawn.layout)
        else:
            rate = np.log(2.0) / value if measure == "doubling_time" else value
            expected = beta_for_growth_rate(rate, drawn.pc, drawn.layout)
        assert_allclose(betas[d], expected, rtol=1e-12)


def test_per_draw_arrays_equal_compiled_arrays(uncertain_plan):
    model = compile_scenario(uncertain_plan, "all measures", True)
    values = draw_values(uncertain_plan, "all measures", sample_quantiles(uncertain_plan, 4))
    pcs, itabs, steps = build_parameters(model, uncertain_plan, values,
                                         calibrate_beta(model, values), min_substeps=None)
    beta_at = scalar_offset(model.layout.bands) + S_BETA
    for d in range(4):
        drawn = compile_scenario(uncertain_plan, "all measures", True, values.overrides(d))
        assert_array_equal(np.delete(pcs[d], beta_at), np.delete(drawn.pc, beta_at))
        assert_allclose(pcs[d, beta_at], drawn.pc[beta_at], rtol=1e-12)
        assert_array_equal(itabs[d], drawn.itab)
        assert steps[d] == drawn.substeps


def test_vectorised_isolation_share_matches_scalar():
    # Fraser et al. 2004, PNAS 101:6146: theta = E[min(T, d)] / E[T].
    means = np.array([2.0, 3.3, 4.0, 7.5])
    for stages in (1, 2, 4):
        got = shares_before_isolation(1.5, means, stages)
        assert_array_equal(got, [share_before_isolation(1.5, m, stages) for m in means])


# --------------------------------------------------------------------------- agreement


def test_point_ranges_reproduce_the_single_run_exactly():
    # Low = Central = High everywhere: every draw is the engine's run (same kernels).
    trigger = contact_measure(
        "distancing", kept={"community": 0.4, "school": 0.3}, compliance=0.8,
        start=Start(kind="ward_occupancy", level=0.3),
    )
    plan = make_plan(
        populations=(2e5, 3e5, 1e5), r0=1.9, latent_stages=2, infectious_stages=2,
        symptomatic_share=(0.5, 0.6, 0.8), admitted_share=(0.005, 0.01, 0.05),
        icu_share=(0.1, 0.2, 0.3), ward_fatality=0.05, icu_fatality=0.3,
        setting_shares=tuple({"home": 0.3, "school": 0.3 if i == 0 else 0.0, "work": 0.3}
                             for i in range(3)),
        interventions=(trigger, vaccination_measure(priority=(2, 1, 0)), isolation_measure()),
        capacity=make_capacity(ward_beds=100, icu_beds=10),
        horizon=200,
    )
    plan = with_draws(plan, draws=6)
    for flag in (True, False):
        run = run_scenario(plan, "base", flag)
        result = run_ensemble(plan, "base", flag, min_substeps=None, dtype=np.float64)
        scale = {c: float(np.abs(run.daily[c]).max()) for c in run.daily.columns
                 if run.daily[c].dtype.kind == "f"}
        for series in ("ward_census_persons", "icu_census_persons", "ward_demand_beds",
                       "icu_demand_beds", "admissions_per_day", "absence_share"):
            for label in ("q05", "q50", "q95"):
                assert_allclose(result.daily[f"{series}_{label}"], run.daily[series],
                                rtol=1e-12, atol=1e-12 * scale[series])
        table = result.per_draw
        assert np.ptp(table["peak_icu_census_persons"]) == 0.0
        assert_allclose(table["peak_icu_census_persons"], run.metrics.icu.peak_census_persons,
                        rtol=1e-12)
        assert_allclose(table["hospital_deaths_persons"],
                        run.metrics.total.hospital_deaths_persons, rtol=1e-12)
        assert_allclose(table["icu_unmet_bed_days_with_surge"],
                        run.metrics.icu.unmet_bed_days_with_surge, rtol=1e-12)
        assert (table["ward_days_over_capacity_days"]
                == run.metrics.ward.days_over_capacity_days).all()
        assert result.tornado_peak_icu.empty


def test_draws_agree_with_engine_runs_of_the_same_inputs(uncertain_plan):
    model = compile_scenario(uncertain_plan, "all measures", True)
    values = draw_values(uncertain_plan, "all measures", sample_quantiles(uncertain_plan, 40))
    exact = simulate_draws(model, uncertain_plan, values, min_substeps=None, dtype=np.float64)
    fast = simulate_draws(model, uncertain_plan, values)
    result = run_ensemble(uncertain_plan, "all measures", min_substeps=None,
                          dtype=np.float64)
    for d in (0, 17, 33):
        run = run_scenario(uncertain_plan, "all measures", True, values.overrides(d))
        m = run.metrics
        expected = [m.ward.peak_census_persons, m.icu.peak_census_persons,
                    m.peak_admissions_per_day]
        # same kernels, same decisions: near exact
        assert_allclose(exact.peaks[d], expected, rtol=1e-9)
        # production step (fewer RK4 substeps): within the 1e-3 accuracy budget
        assert_allclose(fast.peaks[d], expected, rtol=1e-3)
        row = result.per_draw.loc[d]
        assert_allclose(row["ward_unmet_bed_days"], m.ward.unmet_bed_days, rtol=1e-9)
        assert_allclose(row["icu_unmet_bed_days_with_surge"], m.icu.unmet_bed_days_with_surge,
                        rtol=1e-9, atol=1e-9)
        assert_allclose(row["peak_absence_share"], m.peak_absence_share, rtol=1e-9)
        assert row["icu_demand_peak_date"] == m.icu.peak_date


# --------------------------------------------------------------------------- outputs


def test_exceedance_is_one_when_every_draw_exceeds_and_zero_when_none_does(uncertain_plan):
    full = replace(uncertain_plan, capacity=make_capacity(ward_beds=1, icu_beds=1,
                                                           surge_ward_beds=0, surge_icu_beds=0))
    result = run_ensemble(full, "no measures", False, draws=20)
    assert (result.exceedance_any_day["any_day_probability"] == 1.0).all()
    assert (result.exceedance_any_day["any_day_with_surge_probability"] == 1.0).all()
    empty = replace(uncertain_plan, capacity=make_capacity(ward_beds=10**9, icu_beds=10**9))
    result = run_ensemble(empty, "no measures", False, draws=20)
    assert (result.exceedance_any_day.to_numpy() == 0.0).all()
    assert (result.exceedance.to_numpy() == 0.0).all()
    assert (result.per_draw["total_unmet_bed_days"] == 0.0).all()


def test_quantile_bands_are_ordered(uncertain_plan):
    result = run_ensemble(uncertain_plan, "severe", quantiles=(0.05, 0.25, 0.95))
    for series in ("ward_demand_beds", "icu_demand_beds", "admissions_per_day", "absence_share"):
        low, q25, mid, high = (result.daily[f"{series}_{q}"].to_numpy()
                               for q in ("q05", "q25", "q50", "q95"))
        assert np.all(low <= q25) and np.all(q25 <= mid) and np.all(mid <= high)
    summary = result.summary
    assert (summary["q05"] <= summary["q50"]).all() and (summary["q50"] <= summary["q95"]).all()
    dates = result.peak_dates
    assert all(dates.loc[s, "q05"] <= dates.loc[s, "q50"] <= dates.loc[s, "q95"]
               for s in dates.index)
    hist = result.peak_date_histogram
    assert (hist.sum() == dates["draws_with_peak_count"].to_numpy()).all()
    probability = result.exceedance.to_numpy()
    assert np.all((probability >= 0.0) & (probability <= 1.0))
    assert (result.exceedance["ward_exceedance_with_surge_probability"]
            <= result.exceedance["ward_exceedance_probability"]).all()


def test_tornado_is_sorted_and_swings_about_the_scenario_run(uncertain_plan):
    result = run_ensemble(uncertain_plan, "all measures", draws=8, min_substeps=None)
    run = run_scenario(uncertain_plan, "all measures")
    for table, swing in ((result.tornado_peak_icu, "swing_beds"),
                         (result.tornado_unmet, "swing_bed_days")):
        assert list(table[swing]) == sorted(table[swing], reverse=True)
        assert "transmissibility" in set(table["field"])
        assert "compliance[vaccine]" in set(table["field"])
    assert_allclose(result.tornado_peak_icu["peak_icu_demand_baseline_beds"],
                    run.metrics.icu.peak_demand_beds, rtol=1e-9)
    top = result.tornado_peak_icu.iloc[0]
    assert top["swing_beds"] > 0.0
    without = run_ensemble(uncertain_plan, "all measures", False, draws=8)
    assert not any(k.startswith(("compliance", "efficacy"))
                   for k in without.tornado_unmet["field"])


def test_run_uncertainty_covers_every_scenario_and_serialises(uncertain_plan):
    plan = with_draws(uncertain_plan, draws=16, horizon=120)
    results = run_plan(plan)
    ticks = []
    got = run_uncertainty(plan, results, progress=lambda done, total: ticks.append((done, total)))
    assert [s.scenario for s in got] == [s.name for s in plan.scenarios]
    assert ticks[-1] == (16 * 2 * len(plan.scenarios),) * 2
    first = got[plan.scenarios[0].name]
    assert first.variant("without").variant == "without"
    assert_allclose(first.with_interventions.summary.loc["hospital_deaths_persons", "scenario_run"],
                    results.scenarios[0].with_interventions.metrics.total.hospital_deaths_persons)
    summary = uncertainty_summary_dict(got)
    text = json.dumps(summary, allow_nan=False)
    assert "NaN" not in text
    peak = summary["scenarios"][0]["with_interventions"]["peak_dates"]["icu_demand"]["q50"]
    assert dt.date.fromisoformat(peak) >= DAY0
    assert run_uncertainty(plan, draws=0).scenarios == ()


def test_run_uncertainty_is_reproducible(uncertain_plan):
    plan = with_draws(uncertain_plan, draws=12, horizon=100)
    a = run_uncertainty(plan)
    b = run_uncertainty(plan)
    left = a.scenarios[1].with_interventions.per_draw
    right = b.scenarios[1].with_interventions.per_draw
    assert left.equals(right)
