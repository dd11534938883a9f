"""Simulation-based calibration of the fit: 90% intervals of the growth rate hold the truth.

Method: Talts S., Betancourt M., Simpson D., Vehtari A., Gelman A. (2018). Validating Bayesian
inference algorithms with simulation-based calibration. arXiv:1804.06788. Each replicate draws
true inputs from the fit's own prior, makes the model's admissions at those inputs noisy with
the negative binomial of the likelihood (its dispersion drawn from the fit's prior too), fits
the plan to them with :func:`prepkit.fitting.fit.fit_plan`, and compares the true early growth
rate (per day, before any change date) with the growth rates of the posterior draws. When
prior, data model and sampler agree, the rank of the truth among independent posterior draws is
uniform (Talts et al. 2018, Theorem 1), so a central 90% interval holds the truth in 90% of the
replicates.

The fit under test has no change date (3 fitted inputs and the dispersion), 30 daily rows and a
short chain, so one replicate takes a few seconds. Every replicate counts, including those
whose fit failed its own checks; their number is printed.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import time
from dataclasses import dataclass

import numba
import numpy as np
import pytest
from conftest import small_plan
from numpy.typing import NDArray
from scipy import stats

from prepkit.fitting.findings import CHECK_DRAWS, fit_report
from prepkit.fitting.fit import Fitted, fit_plan
from prepkit.fitting.growth import growth_rates
from prepkit.fitting.inputs import INITIAL, SEVERITY, TRANSMISSIBILITY, FitInputs, fit_inputs
from prepkit.fitting.likelihood import MEAN_FLOOR
from prepkit.fitting.sampler import dispersion_of
from prepkit.fitting.simulator import COURSE, course_plan, course_simulator
from prepkit.plan import Plan
from prepkit.plan.records import Observation
from prepkit.scenarios.runs import compile_scenario
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.draw_values import DrawValues
from prepkit.uncertainty.ensemble import calibrate_beta

pytestmark = pytest.mark.slow  # 100 MCMC fits through the compiled model

REPLICATES = 100
"""Simulated data sets, each fitted once [count]."""

SEED = 20180418
"""Seed of the true inputs and the noise of every replicate (replicate i uses [SEED, i])."""

FIRST_DAY, LAST_DAY = 20, 49
"""Model days of the first and last observed daily admissions [days since day 0]: 30 rows."""

SEASON_DAY = (FIRST_DAY + LAST_DAY) / 2.0
"""Model day whose seasonal multiplier the reported growth rate is taken at: the middle of the
observed days, as the pack's (:mod:`prepkit.fitting.findings`) [days since day 0]."""

WALKERS, STEPS, BURN = 32, 400, 40
"""Sampler settings [count]: 360 kept steps of 32 walkers (the fit's default keeps 700)."""

INTERVAL = 0.9
"""Central posterior interval checked [fraction]."""

COVERAGE_RANGE = (0.85, 0.95)
"""Accepted share of replicates whose interval holds the truth [fraction]: 0.9 within about
1.7 binomial standard deviations of 100 replicates (sqrt(0.9 x 0.1 / 100) = 0.03)."""

RANKED_DRAWS = 99
"""Posterior draws the truth is ranked among, L in Talts et al. (2018): ranks 0 to 99."""

RANK_BINS = 10
"""Bins of the rank histogram [count]: 10 ranks each, 10 replicates expected per bin."""

MIN_P_VALUE = 0.001
"""The rank histogram fails when Pearson's chi-square p-value is below this (lenient: the test
looks for gross departures; common practice, no source)."""

PERT_LAMBDA = 4.0
"""Shape of the beta-PERT prior (Malcolm, Roseboom, Clark & Fazar 1959, Oper. Res. 7:646)."""


@dataclass(frozen=True, kw_only=True)
class Calibration:
    """What the replicates measured.

    Attributes
    ----------
    truth : ndarray, shape (replicates,)
        True growth rate of each replicate [1/day].
    draws : ndarray, shape (replicates, CHECK_DRAWS)
        Growth rates of the posterior draws the pack reports from, in random order [1/day].
    failed, unconverged : int
        Replicates whose fit failed any of its checks, or its convergence checks [count].
    problems : tuple of str
        Every failed check, replicate by replicate.
    seconds : float
        Wall time of all replicates [s].
    """

    truth: NDArray[np.float64]
    draws: NDArray[np.float64]
    failed: int
    unconverged: int
    problems: tuple[str, ...]
    seconds: float


def _pert(rng: np.random.Generator, low: float, mode: float, high: float) -> float:
    """One beta-PERT draw on [low, high] with its mode at ``mode`` (Malcolm et al. 1959)."""
    width = high - low
    alpha = 1.0 + PERT_LAMBDA * (mode - low) / width
    beta = 1.0 + PERT_LAMBDA * (high - mode) / width
    return low + width * float(rng.beta(alpha, beta))


def _prior_draw(plan: Plan, rng: np.random.Generator) -> tuple[NDArray[np.float64], float]:
    """True inputs drawn from the fit's prior, written out from the plan here.

    The families are those :mod:`prepkit.fitting.priors` states, coded independently of it:
    R0 beta-PERT on the Disease sheet's range; infections at day 0 log-uniform between the
    figure divided and multiplied by the planner's factor; the admitted-share multiplier
    beta-PERT on the population-weighted admitted share's range over its Central value; the
    overdispersion ``phi = 1 / sqrt(k)`` half-normal of scale 1 (Gelman 2006, Bayesian Anal.
    1:515).

    Returns
    -------
    theta : ndarray, shape (3,)
        R0 [dimensionless], infections at day 0 [persons], admitted-share multiplier [ratio].
    phi : float
        Overdispersion [dimensionless].
    """
    r0 = plan.disease.r0
    assert r0 is not None
    seeds = plan.disease.initial_infections
    factor = plan.fit.initial_infections_factor
    people = np.array([b.people for b in plan.bands])
    weights = people / people.sum()
    share = {level: float(weights @ [s.at(level) for s in plan.severity.admitted_share])
             for level in ("low", "central", "high")}
    theta = np.array([
        _pert(rng, r0.low, r0.central, r0.high),
        seeds * factor ** rng.uniform(-1.0, 1.0),
        _pert(rng, share["low"] / share["central"], 1.0, share["high"] / share["central"]),
    ])
    return theta, abs(float(rng.normal(0.0, 1.0)))


def _growth_rates(model: CompiledModel, plan: Plan, values: DrawValues) -> NDArray[np.float64]:
    """Early growth rate of parameter sets before any change [1/day], by the pack's rule.

    Beta from each set's R0, the share susceptible at day 0 and the seasonal multiplier at
    :data:`SEASON_DAY` (no change date: one period); the fixture checks that the pack's
    reported median and 90% range of the same draws are these rates'.
    """
    beta = calibrate_beta(model, values)
    susceptible = 1.0 - np.asarray(plan.disease.prior_immunity, dtype=np.float64)
    season = np.full(values.size, model.season(SEASON_DAY))
    return growth_rates(model.pc, model.layout, values, beta, season, susceptible)


def _observed(plan: Plan, inputs: FitInputs, theta: NDArray[np.float64], phi: float,
              rng: np.random.Generator) -> Plan:
    """The plan with daily admissions made by the model at ``theta`` with negative binomial noise.

    Mean ``mu`` and variance ``mu + phi^2 mu^2`` (Lloyd-Smith 2007, PLoS ONE 2:e180), as the
    fit's likelihood; numpy's ``negative_binomial(k, k / (k + mu))`` has that mean and variance.
    """
    mu = course_simulator(plan, inputs, LAST_DAY + 1)(theta[None, :])[0]
    assert np.all(np.isfinite(mu))
    mu = np.maximum(mu, MEAN_FLOOR)
    k = float(dispersion_of(np.array([phi]))[0])
    counts = rng.negative_binomial(k, k / (k + mu))
    day0 = plan.details.day0
    return dataclasses.replace(plan, observed=tuple(
        Observation(date=day0 + dt.timedelta(days=d), admissions=float(counts[d]))
        for d in range(FIRST_DAY, LAST_DAY + 1)))


@pytest.fixture(scope="module")
def calibration() -> Calibration:
    # One numba thread: the sampler runs the model on 16 sets at a time, for which starting
    # the parallel loop costs more than it saves (twice the wall time on a busy two-core
    # machine); the numbers are the same for any thread count.
    threads = numba.get_num_threads()
    numba.set_num_threads(1)
    try:
        return _calibrate()
    finally:
        numba.set_num_threads(threads)


def _calibrate() -> Calibration:
    """Every replicate: truth from the prior, noisy admissions, the fit, the growth rates."""
    base = small_plan()
    inputs = fit_inputs(base)
    assert inputs.names == (TRANSMISSIBILITY, INITIAL, SEVERITY)  # no change date
    assert base.disease.transmissibility_measure == "r0"
    # the observations do not enter the model: one compiled course serves every replicate
    model = compile_scenario(course_plan(base, inputs, LAST_DAY + 1), COURSE, True)
    truth, draws, problems = [], [], []
    failed = unconverged = 0
    start = time.perf_counter()
    for i in range(REPLICATES):
        rng = np.random.default_rng([SEED, i])
        theta, phi = _prior_draw(base, rng)
        plan = _observed(base, inputs, theta, phi, rng)
        fitted = fit_plan(plan, walkers=WALKERS, steps=STEPS, burn=BURN, seed=SEED + i)
        assert isinstance(fitted, Fitted)
        failed += not fitted.checks.trusted
        unconverged += not fitted.checks.converged
        problems += [f"replicate {i}: {p}" for p in fitted.checks.problems]
        # the posterior draws the pack's growth is reported from (findings.fit_report)
        drawn = fitted.draws(plan.details.seed)
        kept = drawn.take(np.arange(min(CHECK_DRAWS, drawn.rows), dtype=np.int64))
        values = fitted.inputs.values(kept)
        rates = _growth_rates(model, plan, values)
        if i == 0:  # the test's rule is the pack's: the same median and 90% range
            (reported,) = fit_report(plan, fitted).growth
            assert reported.growth_rate == pytest.approx(
                (np.median(rates), *np.quantile(rates, [0.05, 0.95])), rel=1e-9)
        truth.append(_growth_rates(model, plan, inputs.sets(theta[None, :]))[0])
        draws.append(rates)
    seconds = time.perf_counter() - start
    got = Calibration(truth=np.array(truth), draws=np.array(draws), failed=failed,
                      unconverged=unconverged, problems=tuple(problems), seconds=seconds)
    print(f"\nSBC of the growth rate: {REPLICATES} replicates in {seconds:.0f} s "
          f"({seconds / REPLICATES:.1f} s each); {failed} failed the fit's checks "
          f"({unconverged} its convergence checks), all counted")
    for line in problems:
        print("  " + line)
    return got


def _coverage(truth: NDArray[np.float64], draws: NDArray[np.float64]) -> float:
    """Share of replicates whose central :data:`INTERVAL` posterior interval holds the truth."""
    tail = (1.0 - INTERVAL) / 2.0
    low, high = np.quantile(draws, [tail, 1.0 - tail], axis=1)
    return float(np.mean((low <= truth) & (truth <= high)))


def _rank_p_value(truth: NDArray[np.float64], draws: NDArray[np.float64]) -> float:
    """Pearson's chi-square p-value of the rank histogram of the truth among the first
    :data:`RANKED_DRAWS` posterior draws (already in random order)."""
    ranks = np.sum(draws[:, :RANKED_DRAWS] < truth[:, None], axis=1)
    width = (RANKED_DRAWS + 1) // RANK_BINS
    counts = np.bincount(ranks // width, minlength=RANK_BINS)
    print(f"rank histogram ({RANK_BINS} bins of {width} ranks): {counts.tolist()}")
    return float(stats.chisquare(counts).pvalue)


def test_growth_rate_intervals_hold_the_truth_90_percent_of_the_time(
    calibration: Calibration,
) -> None:
    # Talts et al. (2018), arXiv:1804.06788: with the truth drawn from the prior, a central 90%
    # posterior interval holds it in 90% of replicates; 85-95% over 100 replicates.
    coverage = _coverage(calibration.truth, calibration.draws)
    width = np.quantile(calibration.draws, [0.05, 0.95], axis=1)
    print(f"coverage of the 90% growth-rate intervals: {coverage:.2f} "
          f"(mean width {np.mean(width[1] - width[0]):.4f} per day; "
          f"true rates {calibration.truth.min():.3f} to {calibration.truth.max():.3f} per day)")
    assert calibration.draws.shape == (REPLICATES, CHECK_DRAWS)
    assert COVERAGE_RANGE[0] <= coverage <= COVERAGE_RANGE[1]


def test_the_rank_of_the_true_growth_rate_is_uniform(calibration: Calibration) -> None:
    # Talts et al. (2018), Theorem 1: the rank of the truth among L independent posterior draws
    # is uniform on 0..L. Pearson's chi-square on 10 bins (Pearson K. 1900, Phil. Mag. 50:157,
    # from memory), lenient threshold (common practice, no source).
    p_value = _rank_p_value(calibration.truth, calibration.draws)
    print(f"chi-square p-value of the rank histogram: {p_value:.3f}")
    assert p_value > MIN_P_VALUE


def test_a_miscalibrated_posterior_fails_both_checks(calibration: Calibration) -> None:
    # The checks can fail: the same draws shrunk to half their spread around their median (an
    # overconfident fit), or shifted by one posterior standard deviation (a biased fit), are
    # caught (common practice, no source).
    draws = calibration.draws
    median = np.median(draws, axis=1, keepdims=True)
    spread = np.std(draws, axis=1, keepdims=True)
    for name, wrong in (("shrunk", median + 0.5 * (draws - median)),
                        ("shifted", draws + spread)):
        coverage = _coverage(calibration.truth, wrong)
        p_value = _rank_p_value(calibration.truth, wrong)
        print(f"{name} posterior: coverage {coverage:.2f}, rank p-value {p_value:.2g}")
        assert not COVERAGE_RANGE[0] <= coverage <= COVERAGE_RANGE[1], name
        assert p_value <= MIN_P_VALUE, name
