"""Fit a plan to its observed admissions: the one entry point of the fitting stage.

:func:`fit_plan` turns the plan's observations into counts
(:mod:`~prepkit.fitting.observations`), decides what is estimated and its
priors (:mod:`~prepkit.fitting.inputs`), samples the posterior through the
compiled model (:mod:`~prepkit.fitting.simulator`,
:mod:`~prepkit.fitting.sampler`), checks it
(:mod:`~prepkit.fitting.diagnostics`) and states the growth before and
after the change date (:mod:`~prepkit.fitting.growth`). Nothing is reported
from a fit that failed its checks without the problems beside it.
"""

from __future__ import annotations

import dataclasses
import hashlib
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.diagnostics import FitChecks, fit_checks, predictive_check
from prepkit.fitting.inputs import CHANGE, FitInputs, fit_inputs
from prepkit.fitting.observations import FitData, fit_data, too_few_points
from prepkit.fitting.sampler import (
    DEFAULT_BURN,
    DEFAULT_STEPS,
    DEFAULT_WALKERS,
    Posterior,
    dispersion_of,
    sample_posterior,
)
from prepkit.fitting.simulator import course_simulator
from prepkit.plan import FittedValues, Plan
from prepkit.plan.records import Source

__all__ = ["PREDICTIVE_DRAWS", "Fitted", "NotFitted", "fit_plan"]

PREDICTIVE_DRAWS = 400
"""Posterior draws simulated for the predictive check and the fitted bands [count]."""


@dataclass(frozen=True, kw_only=True)
class NotFitted:
    """Why a plan was not fitted, in plain words for the pack."""

    reason: str


@dataclass(frozen=True, kw_only=True, eq=False)
class Fitted:
    """A fit and what it says.

    Attributes
    ----------
    data : FitData
        The observations used.
    inputs : FitInputs
        What was estimated.
    posterior : Posterior
        The sampled posterior.
    checks : FitChecks
        Convergence and the posterior-predictive check.
    expected : ndarray, shape (PREDICTIVE_DRAWS, days)
        Model admissions of thinned posterior draws [persons/day].
    """

    data: FitData
    inputs: FitInputs
    posterior: Posterior
    checks: FitChecks
    expected: NDArray[np.float64]

    def interval(self, name: str, share: float = 0.9) -> tuple[float, float, float]:
        """Median and central ``share`` interval of an estimated input [its unit]."""
        draws = self.posterior.column(name)
        tail = (1.0 - share) / 2.0
        low, mid, high = np.quantile(draws, [tail, 0.5, 1.0 - tail])
        return float(mid), float(low), float(high)

    def draws(self, seed: int) -> FittedValues:
        """The kept posterior draws as fitted values, in a random order drawn with ``seed``."""
        kept = self.posterior.samples()[:, :-1]
        order = np.random.default_rng(seed).permutation(kept.shape[0])
        return self.inputs.fitted(kept[order])

    @property
    def has_change(self) -> bool:
        """True when the change after the change date was estimated."""
        return CHANGE in self.inputs.names


def fit_plan(
    plan: Plan,
    *,
    walkers: int = DEFAULT_WALKERS,
    steps: int = DEFAULT_STEPS,
    burn: int = DEFAULT_BURN,
    seed: int | None = None,
    before_sampling: Callable[[str], None] | None = None,
) -> Fitted | NotFitted:
    """Fit the plan's scenarios to its observed admissions.

    Parameters
    ----------
    plan : Plan
        The plan, with its observations and fit settings.
    walkers, steps, burn : int
        Sampler settings [count].
    seed : int, optional
        Seed; default the plan's seed (the same plan gives the same fit).
    before_sampling : callable, optional
        Told what is fitted just before the sampler starts.

    Returns
    -------
    Fitted or NotFitted
        The fit, or why there is none.
    """
    key = _fit_key(plan, walkers, steps, burn, seed)
    if key in _KNOWN:
        return _KNOWN[key]
    got = _fit_plan(plan, walkers=walkers, steps=steps, burn=burn, seed=seed,
                    before_sampling=before_sampling)
    _KNOWN[key] = got
    while len(_KNOWN) > KNOWN_FITS:
        del _KNOWN[next(iter(_KNOWN))]
    return got


KNOWN_FITS = 4
"""Fits kept in memory: the same plan fitted again in one process (``prepkit watch`` rerunning
after an edit elsewhere in the workbook, the tests) takes the fit already made [count]."""

_KNOWN: dict[str, Fitted | NotFitted] = {}


def _fit_key(plan: Plan, *settings: object) -> str:
    """Digest of everything a fit reads: the plan as the fit sees it and the sampler's settings.

    The plan's source record (file name and hash) is left out: a copy of a workbook fits the
    same; every number, date and name is in the plan's text form.
    """
    seen = dataclasses.replace(plan, source=Source())
    return hashlib.sha256(repr((seen, settings)).encode("utf-8")).hexdigest()


def _fit_plan(
    plan: Plan,
    *,
    walkers: int,
    steps: int,
    burn: int,
    seed: int | None,
    before_sampling: Callable[[str], None] | None,
) -> Fitted | NotFitted:
    """:func:`fit_plan` without the memory of known fits."""
    if plan.fit.method != "fit":
        return NotFitted(reason="The planner chose to draw the observed figures only.")
    data = fit_data(plan)
    refusal = too_few_points(data)
    if refusal is not None or data is None:
        return NotFitted(reason=refusal or "No observed figures are given.")
    inputs = fit_inputs(plan)
    simulate = course_simulator(plan, inputs, data.days_needed)
    use_seed = plan.details.seed if seed is None else seed
    if before_sampling is not None:
        count = f"{data.admissions.size} {'weeks' if data.period == 'weekly' else 'days'}"
        before_sampling(f"Fitting the scenarios to {count} of observed admissions")
    posterior = sample_posterior(simulate, data, inputs.priors, walkers=walkers, steps=steps,
                                 burn=burn, seed=use_seed)
    kept = posterior.samples()
    rows = np.linspace(0, kept.shape[0] - 1, min(PREDICTIVE_DRAWS, kept.shape[0])).astype(int)
    thinned = kept[rows]
    expected = np.asarray(simulate(thinned[:, :-1]), dtype=np.float64)
    predictive = predictive_check(data.admissions, data.expected(expected),
                                  dispersion_of(thinned[:, -1]), seed=use_seed)
    labels = tuple(p.label for p in posterior.priors)
    checks = fit_checks(posterior.chain[posterior.burn:], posterior.acceptance, predictive,
                        labels)
    return Fitted(data=data, inputs=inputs, posterior=posterior, checks=checks,
                  expected=expected)
