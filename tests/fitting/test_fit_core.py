"""The statistical core of the fit, against reference libraries and hand-worked values."""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest
import statsmodels.api as sm
from numpy.testing import assert_allclose
from scipy import stats

from prepkit.errors import ModelError
from prepkit.fitting.diagnostics import fit_checks, predictive_check, split_rhat
from prepkit.fitting.likelihood import nb_log_likelihood, nb_logpmf
from prepkit.fitting.observations import FitData, too_few_points
from prepkit.fitting.priors import Prior, dispersion_prior
from prepkit.fitting.sampler import dispersion_of, sample_posterior


def _data(counts: np.ndarray, period: str = "daily") -> FitData:
    step = 7 if period == "weekly" else 1
    days = np.arange(counts.size, dtype=np.int64) * step + (step - 1)
    return FitData(period=period, end_days=days, admissions=counts.astype(float),
                   census_days={"ward": np.empty(0, np.int64), "icu": np.empty(0, np.int64)},
                   census={"ward": np.empty(0), "icu": np.empty(0)},
                   as_of=dt.date(2027, 2, 1))


# ---- Likelihood -----------------------------------------------------------------------------


def test_negative_binomial_matches_scipy() -> None:
    # scipy.stats.nbinom with n = k and p = k / (k + mu) is the mean-dispersion form
    # (Lloyd-Smith 2007, PLoS ONE 2:e180).
    y = np.arange(0, 60)
    for mu in (0.3, 4.0, 25.0):
        for k in (0.5, 3.0, 80.0):
            expected = stats.nbinom.logpmf(y, k, k / (k + mu))
            assert_allclose(nb_logpmf(y, mu, k), expected, rtol=1e-10, atol=1e-10)


def test_negative_binomial_tends_to_poisson_for_large_dispersion() -> None:
    # Var = mu + mu^2 / k -> mu: the Poisson limit (scipy.stats.poisson).
    # The gap shrinks like 1 / k.
    y = np.arange(0, 40)
    poisson = stats.poisson.logpmf(y, 9.0)
    gaps = [np.abs(nb_logpmf(y, 9.0, k) - poisson).max() for k in (1e4, 1e5)]
    assert 8.0 < gaps[0] / gaps[1] < 12.0
    assert_allclose(nb_logpmf(y, 9.0, 1e9), poisson, atol=1e-5)


def test_weekly_rows_sum_seven_model_days() -> None:
    # Hand-worked: a week ending on model day 6 sums days 0-6; one ending on day 13, days 7-13.
    data = _data(np.array([10.0, 20.0]), "weekly")
    daily = np.arange(14, dtype=float)[None, :]
    assert_allclose(data.expected(daily), [[21.0, 70.0]])
    assert data.days_needed == 14


def test_the_sum_of_row_log_likelihoods_is_the_likelihood() -> None:
    observed = np.array([3.0, 0.0, 7.0])
    expected = np.array([[2.5, 0.4, 6.0], [1.0, 1.0, 1.0]])
    got = nb_log_likelihood(observed, expected, np.array([5.0, 2.0]))
    by_hand = [stats.nbinom.logpmf(observed, k, k / (k + mu)).sum()
               for mu, k in ((expected[0], 5.0), (expected[1], 2.0))]
    assert_allclose(got, by_hand, rtol=1e-12)


# ---- Priors ---------------------------------------------------------------------------------


def test_pert_prior_density_integrates_to_one_with_its_mode_at_central() -> None:
    # Beta-PERT with lambda = 4 (Malcolm et al. 1959, Operations Research 7:646).
    prior = Prior(name="r0", label="R0", unit="", kind="pert", low=1.2, mode=1.8, high=3.0)
    x = np.linspace(1.2, 3.0, 20001)
    density = np.exp(prior.log_density(x))
    assert_allclose(np.trapezoid(density, x), 1.0, atol=1e-6)
    assert abs(x[np.argmax(density)] - 1.8) < 1e-3
    assert prior.log_density(np.array([1.1, 3.1])).tolist() == [-np.inf, -np.inf]


def test_log_uniform_and_half_normal_priors_match_scipy() -> None:
    seed = Prior(name="seed", label="Infected at day 0", unit="persons", kind="log_uniform",
                 low=2.0, mode=10.0, high=200.0)
    x = np.array([2.0, 15.0, 200.0])
    assert_allclose(seed.log_density(x), stats.loguniform.logpdf(x, 2.0, 200.0), rtol=1e-12)
    phi = dispersion_prior()
    assert_allclose(phi.log_density(x / 100), stats.halfnorm.logpdf(x / 100), rtol=1e-12)
    assert_allclose(seed.quantile(np.array([0.5])), [20.0])


def test_a_fitted_input_needs_a_range() -> None:
    with pytest.raises(ModelError, match="Low below High"):
        Prior(name="r0", label="R0", unit="", kind="pert", low=2.0, mode=2.0, high=2.0)


# ---- Diagnostics ----------------------------------------------------------------------------


def test_split_rhat_matches_a_hand_worked_example() -> None:
    # Gelman et al. 2013, BDA3 eq. 11.4 with split chains: walkers [1,2,3,4] and [5,6,7,8]
    # split into [1,2], [3,4], [5,6], [7,8]: B = 2/3 x 20, W = 0.5,
    # var+ = 0.5 x 0.5 + B / 2, R = sqrt(var+ / W) = sqrt(13.8333...).
    chain = np.array([[1.0, 5.0], [2.0, 6.0], [3.0, 7.0], [4.0, 8.0]])
    assert_allclose(split_rhat(chain), math.sqrt((0.25 + 20.0 / 3.0) / 0.5), rtol=1e-12)


def test_split_rhat_is_one_for_agreeing_walkers_and_large_for_stuck_ones() -> None:
    rng = np.random.default_rng(3)
    assert split_rhat(rng.normal(size=(2000, 16))) < 1.01
    stuck = rng.normal(size=(2000, 16)) + np.arange(16)[None, :]
    assert split_rhat(stuck) > 2.0


def test_the_predictive_check_covers_about_ninety_percent_of_well_modelled_counts() -> None:
    rng = np.random.default_rng(11)
    mu = np.linspace(2.0, 40.0, 200)
    k = 6.0
    y = rng.negative_binomial(k, k / (k + mu))
    good = predictive_check(y, np.repeat(mu[None, :], 400, axis=0), np.full(400, k), seed=2)
    assert 0.85 <= good.coverage <= 0.97
    assert 0.025 < good.p_value < 0.975
    bad = predictive_check(y, np.repeat(3 * mu[None, :], 400, axis=0), np.full(400, k), seed=2)
    assert bad.coverage < 0.5


def test_the_fewest_points_rule_is_a_clear_sentence() -> None:
    assert "Only 4 days of observed admissions" in str(too_few_points(_data(np.ones(4))))
    assert too_few_points(_data(np.ones(5))) is None
    assert "at least 3 are needed" in str(too_few_points(_data(np.ones(2), "weekly")))
    assert too_few_points(_data(np.ones(3), "weekly")) is None
    assert too_few_points(None) is not None


# ---- The sampler against a maximum-likelihood fit from statsmodels ---------------------------


def _exponential(theta: np.ndarray, days: int) -> np.ndarray:
    """Admissions exp(a + r t): theta columns are (level a, growth rate r)."""
    t = np.arange(days)[None, :]
    return np.exp(theta[:, [0]] + theta[:, [1]] * t)


def test_posterior_recovers_the_statsmodels_maximum_likelihood_fit() -> None:
    # Counts NB(mu_t = exp(a + r t), k = 12) on 40 days. With wide priors the posterior median
    # lies near the maximum-likelihood estimate of statsmodels' negative binomial regression
    # (statsmodels.discrete.discrete_model.NegativeBinomial, NB2: var = mu + alpha mu^2).
    rng = np.random.default_rng(5)
    days, a_true, r_true, k_true = 40, 0.5, 0.08, 12.0
    mu = np.exp(a_true + r_true * np.arange(days))
    y = rng.negative_binomial(k_true, k_true / (k_true + mu)).astype(float)
    data = _data(y)
    priors = [
        Prior(name="a", label="level", unit="", kind="pert", low=-3.0, mode=0.0, high=3.0),
        Prior(name="r", label="growth rate", unit="1/day", kind="pert",
              low=-0.2, mode=0.05, high=0.4),
    ]
    posterior = sample_posterior(lambda th: _exponential(th, days), data, priors,
                                 walkers=24, steps=2500, burn=800, seed=9)
    mle = sm.NegativeBinomial(y, sm.add_constant(np.arange(days, dtype=float))).fit(disp=0)
    for name, value in zip(("a", "r"), mle.params[:2], strict=True):
        draws = posterior.column(name)
        assert abs(np.median(draws) - value) < 0.25 * draws.std(), name
    k = dispersion_of(posterior.column("dispersion_phi"))
    assert abs(np.log(np.median(k)) - np.log(1.0 / mle.params[2])) < 0.6
    # the truth lies inside the 90% posterior interval
    r_lo, r_hi = np.quantile(posterior.column("r"), [0.05, 0.95])
    assert r_lo < r_true < r_hi
    kept = posterior.chain[posterior.burn:]
    expected = data.expected(_exponential(posterior.samples()[::20, :2], days))
    checks = fit_checks(kept, posterior.acceptance,
                        predictive_check(y, expected, k[::20]), ("level", "growth rate",
                                                                 "overdispersion"))
    assert checks.trusted, checks.problems


def test_the_same_seed_gives_the_same_draws() -> None:
    y = np.array([1, 2, 2, 4, 5, 7, 9, 12, 15, 21], dtype=float)
    priors = [Prior(name="a", label="level", unit="", kind="pert", low=-2.0, mode=0.0, high=2.0),
              Prior(name="r", label="growth", unit="1/day", kind="pert",
                    low=0.0, mode=0.2, high=0.6)]
    runs = [sample_posterior(lambda th: _exponential(th, 10), _data(y), priors,
                             walkers=12, steps=60, burn=20, seed=4) for _ in range(2)]
    assert np.array_equal(runs[0].chain, runs[1].chain)
    other = sample_posterior(lambda th: _exponential(th, 10), _data(y), priors,
                             walkers=12, steps=60, burn=20, seed=5)
    assert not np.array_equal(runs[0].chain, other.chain)


def test_a_badly_mixed_short_run_is_reported_in_words() -> None:
    y = np.array([1, 2, 2, 4, 5, 7, 9, 12, 15, 21], dtype=float)
    priors = [Prior(name="a", label="level", unit="", kind="pert", low=-2.0, mode=0.0, high=2.0),
              Prior(name="r", label="growth", unit="1/day", kind="pert",
                    low=0.0, mode=0.2, high=0.6)]
    posterior = sample_posterior(lambda th: _exponential(th, 10), _data(y), priors,
                                 walkers=12, steps=30, burn=0, seed=4)
    k = dispersion_of(posterior.column("dispersion_phi"))
    expected = _data(y).expected(_exponential(posterior.samples()[:, :2], 10))
    checks = fit_checks(posterior.chain, posterior.acceptance,
                        predictive_check(y, expected, k), ("level", "growth", "overdispersion"))
    assert not checks.trusted
    assert any("independent draws" in p for p in checks.problems)
