"""Erlang-distributed delays and the effect of isolating symptomatic cases.

Equations in words
------------------
A delay of mean ``T`` split into ``q`` exponential stages, each left at rate
``q / T``, has a Gamma (Erlang) distribution with shape ``q`` and scale
``T / q``: the share of a cohort still in the chain at time ``t`` is the
Gamma survival function.

Infectiousness starts at symptom onset (no presymptomatic transmission) and
is constant until the end of the infectious period ``T``. If a share
``eps`` of symptomatic cases is isolated ``d`` days after onset, a case
transmits before isolation a share ``theta = E[min(T, d)] / E[T]`` of its
infectiousness. The model multiplies the infectiousness of the compartment
by ``1 - eps (1 - theta)``, which keeps the expected number of infections
per case exact (so the reproduction number becomes
``R = R0 [1 - eps (1 - theta)]`` for an all-symptomatic disease) while
spreading the reduction evenly over the infectious period.

For ``T ~ Gamma(q, s)`` with ``s = T_mean / q``:
``E[min(T, d)] = q s G_{q+1}(d / s) + d (1 - G_q(d / s))`` where ``G_a`` is
the regularised lower incomplete gamma function.

References
----------
Hurtado P.J., Kirosingh A.S. (2019). Generalizations of the 'Linear Chain
Trick': incorporating more flexible dwell time distributions into mean field
ODE models. J. Math. Biol. 79:1831-1883. doi:10.1007/s00285-019-01412-w

Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). Factors that make an
infectious disease outbreak controllable. PNAS 101:6146-6151.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.special import gammainc


def shares_before_isolation(
    delay_days: float, mean_days: ArrayLike, stages: int
) -> NDArray[np.float64]:
    """Share of a case's infectiousness spent before isolation, for one or many means.

    Parameters
    ----------
    delay_days : float
        Days from symptom onset to isolation [days].
    mean_days : float or ndarray
        Mean infectious period from onset (or of the delay chain) [days].
    stages : int
        Erlang stage count of the chain.

    Returns
    -------
    ndarray, shaped as ``mean_days``
        ``theta = E[min(T, d)] / E[T]`` for ``T ~ Gamma(stages,
        mean_days / stages)`` [fraction].

    References
    ----------
    Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). Factors that
    make an infectious disease outbreak controllable. PNAS 101:6146-6151.
    doi:10.1073/pnas.0307506101
    """
    means = np.asarray(mean_days, dtype=np.float64)
    if delay_days <= 0.0:
        return np.zeros_like(means)
    scale = means / stages
    x = delay_days / scale
    expected_min = means * gammainc(stages + 1, x) + delay_days * (1.0 - gammainc(stages, x))
    return np.asarray(np.minimum(1.0, expected_min / means), dtype=np.float64)


def share_before_isolation(delay_days: float, mean_days: float, stages: int) -> float:
    """:func:`shares_before_isolation` for one mean [fraction]."""
    return float(shares_before_isolation(delay_days, mean_days, stages))
