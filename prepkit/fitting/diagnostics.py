"""Is the fit to be trusted: convergence of the sampler and a posterior-predictive check.

* **Split R-hat** of every input: each walker's kept steps are split in two
  halves and the between- and within-half variances compared (Gelman et al.
  2013, Bayesian Data Analysis, 3rd ed., eq. 11.4 with split chains, sec.
  11.4). Near 1 when the walkers agree; the fit is flagged above
  :data:`RHAT_LIMIT`.
* **Effective sample size** from the integrated autocorrelation time of the
  ensemble (emcee's estimator; Foreman-Mackey et al. 2013, sec. 3); flagged
  below :data:`MIN_EFFECTIVE_DRAWS`.
* **Acceptance**: the emcee authors give 0.2 to 0.5 as a rule of thumb for
  the mean acceptance share (Foreman-Mackey et al. 2013, sec. 4); with few
  fitted inputs healthy runs accept more, so only clear departures
  (:data:`ACCEPTANCE_RANGE`) are flagged.
* **Posterior-predictive check**: replicated counts are drawn from the
  negative binomial at each posterior draw; the share of observed rows
  inside their central 90% predictive interval should be near 0.9, and the
  posterior-predictive p-value of the chi-square discrepancy
  ``T = sum (y - mu)^2 / (mu + mu^2 / k)`` should not be extreme (Gelman,
  Meng & Stern 1996, Statistica Sinica 6:733-807).
"""

from __future__ import annotations

from dataclasses import dataclass

import emcee
import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.likelihood import MEAN_FLOOR

__all__ = ["ACCEPTANCE_RANGE", "MIN_COVERAGE", "MIN_EFFECTIVE_DRAWS", "P_VALUE_RANGE",
           "RHAT_LIMIT", "FitChecks", "PredictiveCheck", "effective_draws", "fit_checks",
           "predictive_check", "split_rhat"]

RHAT_LIMIT = 1.05
"""Largest split R-hat of a trusted fit [dimensionless]; Gelman et al. (2013, sec. 11.4)
suggest 1.1 as a rough bound, and the ensemble's walkers are not independent chains, so the
bound is kept tighter."""

MIN_EFFECTIVE_DRAWS = 400
"""Fewest effective draws of a trusted fit [count] (Vehtari A., Gelman A., Simpson D.,
Carpenter B., Buerkner P.-C. 2021, Rank-normalization, folding and localization: an improved
R-hat, Bayesian Analysis 16:667-718, recommend at least 400)."""

ACCEPTANCE_RANGE = (0.15, 0.8)
"""Mean acceptance shares of a trusted fit [fraction]: below, walkers are stuck; above, they
barely move. Wider than the 0.2-0.5 rule of thumb of Foreman-Mackey et al. (2013), which
low-dimensional fits exceed while mixing well."""

MIN_COVERAGE = 0.7
"""Smallest share of observed rows inside their 90% predictive interval of a trusted fit
[fraction]; a well-calibrated fit covers about 0.9."""

P_VALUE_RANGE = (0.025, 0.975)
"""Posterior-predictive p-values outside this range flag a misfit [fraction]."""


def split_rhat(chain: NDArray[np.float64]) -> float:
    """Split R-hat of one input.

    Parameters
    ----------
    chain : ndarray, shape (steps, walkers)
        Kept steps of every walker.

    Returns
    -------
    float
        ``sqrt(var+ / W)`` with ``var+ = (n - 1) / n W + B / n`` over the
        ``2 x walkers`` half-chains of ``n`` steps [dimensionless].
    """
    x = np.asarray(chain, dtype=np.float64)
    n = x.shape[0] // 2
    halves = np.concatenate([x[:n], x[x.shape[0] - n:]], axis=1)
    means = halves.mean(axis=0)
    within = float(halves.var(axis=0, ddof=1).mean())
    between = n * float(means.var(ddof=1))
    if within <= 0.0:
        return 1.0 if between <= 0.0 else float("inf")
    pooled = (n - 1) / n * within + between / n
    return float(np.sqrt(pooled / within))


def effective_draws(chain: NDArray[np.float64]) -> NDArray[np.float64]:
    """Effective number of independent draws of each input [count].

    Parameters
    ----------
    chain : ndarray, shape (steps, walkers, inputs)
        Kept steps.

    Returns
    -------
    ndarray, shape (inputs,)
        ``steps x walkers / tau`` with ``tau`` the integrated
        autocorrelation time of the walkers' mean (emcee's estimator).
    """
    x = np.asarray(chain, dtype=np.float64)
    # tol=0: emcee's own length rule (steps above 50 tau) would only log a warning to the
    # terminal; the fit's rule is the effective draws' floor, checked by fit_checks
    tau = emcee.autocorr.integrated_time(x, tol=0)
    return np.asarray(x.shape[0] * x.shape[1] / np.maximum(tau, 1.0), dtype=np.float64)


@dataclass(frozen=True, kw_only=True, eq=False)
class PredictiveCheck:
    """Observed rows against replicated counts.

    Attributes
    ----------
    lower, upper : ndarray, shape (rows,)
        Central 90% predictive interval of each row [persons].
    median : ndarray, shape (rows,)
        Predictive median [persons].
    coverage : float
        Share of observed rows inside their interval [fraction].
    p_value : float
        Posterior-predictive p-value of the chi-square discrepancy [fraction].
    """

    lower: NDArray[np.float64]
    upper: NDArray[np.float64]
    median: NDArray[np.float64]
    coverage: float
    p_value: float


def predictive_check(
    observed: NDArray[np.float64],
    expected: NDArray[np.float64],
    k: NDArray[np.float64],
    seed: int = 0,
) -> PredictiveCheck:
    """Posterior-predictive check of the observed counts.

    Parameters
    ----------
    observed : ndarray, shape (rows,)
        Observed admissions [persons].
    expected : ndarray, shape (draws, rows)
        Model admissions of each row at each posterior draw [persons].
    k : ndarray, shape (draws,)
        Dispersion at each draw [dimensionless].
    seed : int
        Seed of the replicated counts.

    Returns
    -------
    PredictiveCheck
        Intervals, coverage and p-value.
    """
    rng = np.random.default_rng(seed)
    mu = np.maximum(np.asarray(expected, dtype=np.float64), MEAN_FLOOR)
    size = np.asarray(k, dtype=np.float64)[:, None]
    replicated = rng.negative_binomial(np.minimum(size, 1e12), size / (size + mu))
    lower, median, upper = np.quantile(replicated, [0.05, 0.5, 0.95], axis=0)
    y = np.asarray(observed, dtype=np.float64)
    variance = mu + mu**2 / size
    t_observed = ((y[None, :] - mu) ** 2 / variance).sum(axis=1)
    t_replicated = ((replicated - mu) ** 2 / variance).sum(axis=1)
    return PredictiveCheck(
        lower=np.asarray(lower, dtype=np.float64), upper=np.asarray(upper, dtype=np.float64),
        median=np.asarray(median, dtype=np.float64),
        coverage=float(np.mean((y >= lower) & (y <= upper))),
        p_value=float(np.mean(t_replicated >= t_observed)),
    )


@dataclass(frozen=True, kw_only=True, eq=False)
class FitChecks:
    """Everything a reviewer asks of a fit, and the plain-words problems found.

    Attributes
    ----------
    rhat, effective : ndarray, shape (inputs,)
        Split R-hat [dimensionless] and effective draws [count] of each input.
    acceptance : float
        Mean acceptance share [fraction].
    predictive : PredictiveCheck
        The posterior-predictive check.
    problems : tuple of str
        What is wrong, in words for the pack; empty when the fit can be used.
    converged : bool
        True when the sampler's checks passed (R-hat, effective draws,
        acceptance): the posterior can be used, with a warning when only the
        predictive check failed.
    """

    rhat: NDArray[np.float64]
    effective: NDArray[np.float64]
    acceptance: float
    predictive: PredictiveCheck
    problems: tuple[str, ...]
    converged: bool = True

    @property
    def trusted(self) -> bool:
        """True when no check failed."""
        return not self.problems


def fit_checks(
    chain: NDArray[np.float64],
    acceptance: NDArray[np.float64],
    predictive: PredictiveCheck,
    labels: tuple[str, ...],
) -> FitChecks:
    """Run the convergence checks on the kept chain and collect the problems in words.

    Parameters
    ----------
    chain : ndarray, shape (steps, walkers, inputs)
        Kept steps.
    acceptance : ndarray, shape (walkers,)
        Acceptance share of each walker [fraction].
    predictive : PredictiveCheck
        The posterior-predictive check.
    labels : tuple of str
        Plain-words name of each input.

    Returns
    -------
    FitChecks
        The figures and the problems.
    """
    rhat = np.array([split_rhat(chain[:, :, j]) for j in range(chain.shape[2])])
    effective = effective_draws(chain)
    mean_acceptance = float(np.mean(acceptance))
    problems = [
        f"the sampler's walkers disagree about {label} (split R-hat {r:.2f}, above "
        f"{RHAT_LIMIT:.2f})" for label, r in zip(labels, rhat, strict=True) if r > RHAT_LIMIT
    ]
    problems += [
        f"too few independent draws of {label} ({e:.0f}, fewer than {MIN_EFFECTIVE_DRAWS})"
        for label, e in zip(labels, effective, strict=True) if e < MIN_EFFECTIVE_DRAWS
    ]
    low, high = ACCEPTANCE_RANGE
    if not low <= mean_acceptance <= high:
        problems.append(f"the sampler accepted {mean_acceptance:.0%} of its moves (a trusted "
                        f"fit accepts {low:.0%} to {high:.0%})")
    converged = not problems
    if predictive.coverage < MIN_COVERAGE:
        problems.append(f"only {predictive.coverage:.0%} of the observed figures lie inside "
                        "the fitted model's 90% range")
    if not P_VALUE_RANGE[0] <= predictive.p_value <= P_VALUE_RANGE[1]:
        problems.append("the observed figures scatter around the fitted model "
                        + ("more" if predictive.p_value < P_VALUE_RANGE[0] else "less")
                        + " than chance allows (posterior-predictive p-value "
                        f"{predictive.p_value:.3f})")
    return FitChecks(rhat=rhat, effective=effective, acceptance=mean_acceptance,
                     predictive=predictive, problems=tuple(problems), converged=converged)
