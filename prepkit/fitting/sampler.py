"""The posterior of the fitted inputs, sampled with emcee's affine-invariant ensemble sampler.

The log posterior of a parameter set ``theta`` (the fitted inputs, then
``phi = 1 / sqrt(k)``) is the sum of the priors' log densities and the
negative binomial log likelihood of the observed admissions given the
simulator's expected admissions (:mod:`prepkit.fitting.likelihood`). Every
walker of a step is simulated in one call (``vectorize=True``), which is
what the compiled ensemble kernel is fast at.

References
----------
Foreman-Mackey D., Hogg D.W., Lang D., Goodman J. (2013). emcee: the MCMC
hammer. PASP 125:306-312. doi:10.1086/670067

Goodman J., Weare J. (2010). Ensemble samplers with affine invariance.
Comm. App. Math. Comp. Sci. 5:65-80.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import emcee
import numpy as np
from numpy.typing import NDArray

from prepkit.fitting.likelihood import nb_log_likelihood
from prepkit.fitting.observations import FitData
from prepkit.fitting.priors import Prior, dispersion_prior

__all__ = ["DEFAULT_BURN", "DEFAULT_STEPS", "DEFAULT_WALKERS", "Posterior", "Simulator",
           "dispersion_of", "sample_posterior"]

Simulator = Callable[[NDArray[np.float64]], NDArray[np.float64]]
"""Parameter sets, shape (sets, inputs), to model admissions during each day, shape (sets,
days) [persons/day], ``days >= FitData.days_needed``; a set it cannot simulate comes back as a
row of NaN (the sampler then rejects it)."""

DEFAULT_WALKERS = 32
"""Walkers of the ensemble sampler [count]: several times the number of fitted inputs, as the
emcee authors advise (Foreman-Mackey et al. 2013, sec. 4)."""

DEFAULT_STEPS = 1000
"""Steps of every walker [count], burn-in included."""

DEFAULT_BURN = 300
"""Steps dropped from the start of every walker [count]."""

PHI_FLOOR = 1e-6
"""Smallest ``phi`` used to compute ``k = 1 / phi^2`` (a count almost exactly Poisson)."""


def dispersion_of(phi: NDArray[np.float64]) -> NDArray[np.float64]:
    """Dispersion ``k = 1 / phi^2`` of the counts [dimensionless]."""
    return np.asarray(1.0 / np.maximum(np.asarray(phi), PHI_FLOOR) ** 2, dtype=np.float64)


@dataclass(frozen=True, kw_only=True, eq=False)
class Posterior:
    """The sampled posterior.

    Attributes
    ----------
    priors : tuple of Prior
        The fitted inputs, the dispersion ``phi`` last.
    chain : ndarray, shape (steps, walkers, inputs)
        Every position of every walker, in the inputs' own units.
    log_prob : ndarray, shape (steps, walkers)
        Log posterior of each position.
    acceptance : ndarray, shape (walkers,)
        Share of proposals each walker accepted [fraction].
    burn : int
        Steps dropped as burn-in [count].
    """

    priors: tuple[Prior, ...]
    chain: NDArray[np.float64]
    log_prob: NDArray[np.float64]
    acceptance: NDArray[np.float64]
    burn: int

    @property
    def names(self) -> tuple[str, ...]:
        """Keys of the fitted inputs, in column order."""
        return tuple(p.name for p in self.priors)

    def samples(self) -> NDArray[np.float64]:
        """Positions after burn-in, walkers and steps flattened, shape (draws, inputs)."""
        kept = self.chain[self.burn:]
        return np.asarray(kept.reshape(-1, kept.shape[-1]), dtype=np.float64)

    def column(self, name: str) -> NDArray[np.float64]:
        """Posterior draws of one input after burn-in, shape (draws,)."""
        return self.samples()[:, self.names.index(name)]


def _logged(priors: Sequence[Prior]) -> NDArray[np.bool_]:
    """Which inputs are sampled as their logarithm (the log-uniform ones)."""
    return np.array([p.kind == "log_uniform" for p in priors])


def to_inputs(walk: NDArray[np.float64], priors: Sequence[Prior]) -> NDArray[np.float64]:
    """Inputs from sampler coordinates: log-uniform inputs are walked as their logarithm."""
    x = np.array(walk, dtype=np.float64)
    logged = _logged(priors)
    x[..., logged] = np.exp(x[..., logged])
    return x


def log_posterior(
    simulate: Simulator, data: FitData, priors: Sequence[Prior]
) -> Callable[[NDArray[np.float64]], NDArray[np.float64]]:
    """The vectorised log posterior of sampler coordinates (the last column is ``phi``).

    A log-uniform input is walked as its logarithm ``u = log x``, whose
    density is flat: ``p(u) = p(x) x``, so ``log p(x) + u`` is added.
    """
    logged = _logged(priors)

    def log_prob(walk: NDArray[np.float64]) -> NDArray[np.float64]:
        coordinates = np.atleast_2d(np.asarray(walk, dtype=np.float64))
        sets = to_inputs(coordinates, priors)
        total = coordinates[:, logged].sum(axis=1)
        for j, prior in enumerate(priors):
            total = total + prior.log_density(sets[:, j])
        out = np.full(sets.shape[0], -np.inf)
        alive = np.isfinite(total)
        if np.any(alive):
            daily = np.asarray(simulate(sets[alive, :-1]), dtype=np.float64)
            expected = data.expected(daily)
            fine = np.all(np.isfinite(expected), axis=1)
            got = np.full(expected.shape[0], -np.inf)
            if np.any(fine):
                got[fine] = nb_log_likelihood(
                    data.admissions, expected[fine], dispersion_of(sets[alive, -1][fine]))
            out[alive] = total[alive] + got
        return out

    return log_prob


def sample_posterior(
    simulate: Simulator,
    data: FitData,
    priors: Sequence[Prior],
    *,
    walkers: int = DEFAULT_WALKERS,
    steps: int = DEFAULT_STEPS,
    burn: int = DEFAULT_BURN,
    seed: int = 0,
) -> Posterior:
    """Sample the posterior of the fitted inputs and the counts' dispersion.

    Parameters
    ----------
    simulate : Simulator
        Expected daily admissions of parameter sets (columns in the order of
        ``priors``).
    data : FitData
        The observations.
    priors : sequence of Prior
        Priors of the fitted inputs (the dispersion prior is added last).
    walkers, steps, burn : int
        Walkers, steps per walker and burn-in steps [count].
    seed : int
        Seed of the start positions and of the sampler's proposals; the same
        seed gives the same draws.

    Returns
    -------
    Posterior
        The chain and its bookkeeping.
    """
    every = (*priors, dispersion_prior())
    dims = len(every)
    rng = np.random.default_rng(seed)
    # Start inside the bulk of each prior, so no walker starts where the model is absurd.
    start = rng.uniform(0.1, 0.9, size=(walkers, dims))
    p0 = np.column_stack([p.quantile(start[:, j]) for j, p in enumerate(every)])
    p0[:, _logged(every)] = np.log(p0[:, _logged(every)])
    # Differential-evolution moves follow the strong correlations between the size at day 0,
    # the spread and the severity better than the stretch move (emcee's documentation
    # suggests this mixture; ter Braak & Vrugt 2008, Stat. Comput. 18:435).
    moves = [(emcee.moves.DEMove(), 0.8), (emcee.moves.DESnookerMove(), 0.2)]
    sampler = emcee.EnsembleSampler(walkers, dims, log_posterior(simulate, data, every),
                                    moves=moves, vectorize=True)
    sampler.random_state = np.random.RandomState(seed).get_state()
    sampler.run_mcmc(p0, steps, progress=False)
    return Posterior(
        priors=every,
        chain=to_inputs(np.asarray(sampler.get_chain(), dtype=np.float64), every),
        log_prob=np.asarray(sampler.get_log_prob(), dtype=np.float64),
        acceptance=np.asarray(sampler.acceptance_fraction, dtype=np.float64),
        burn=int(burn),
    )
