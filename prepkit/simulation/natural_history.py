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

from scipy.special import gammainc


def share_before_isolation(delay_days: float, mean_days: float, stages: int) -> float:
    """Share of a case's infectiousness spent before isolation.

    Parameters
    ----------
    delay_days : float
        Days from symptom onset to isolation [days].
    mean_days : float
        Mean infectious period from onset [days].
    stages : int
        Erlang stage count of the infectious period.

    Returns
    -------
    float
        ``theta = E[min(T, d)] / E[T]`` for ``T ~ Gamma(stages,
        mean_days / stages)`` [fraction].

    References
    ----------
    Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). Factors that
    make an infectious disease outbreak controllable. PNAS 101:6146-6151.
    doi:10.1073/pnas.0307506101
    """
    if delay_days <= 0.0:
        return 0.0
    scale = mean_days / stages
    x = delay_days / scale
    expected_min = mean_days * float(gammainc(stages + 1, x)) + delay_days * (
        1.0 - float(gammainc(stages, x))
    )
    return min(1.0, expected_min / mean_days)


def isolation_multiplier(
    isolated_share: float, delay_days: float, mean_days: float, stages: int
) -> float:
    """Multiplier of infectiousness ``1 - eps (1 - theta)`` under case isolation.

    Parameters
    ----------
    isolated_share : float
        Share of cases isolated, compliance included [fraction].
    delay_days, mean_days, stages : float, float, int
        Days from onset to isolation [days], mean infectious period from
        onset [days] and its Erlang stage count, as for
        :func:`share_before_isolation`.

    Returns
    -------
    float
        Multiplier of the compartment's infectiousness [fraction].

    References
    ----------
    Fraser C., Riley S., Anderson R.M., Ferguson N.M. (2004). PNAS
    101:6146-6151, equation for R under isolation.
    """
    theta = share_before_isolation(delay_days, mean_days, stages)
    return 1.0 - isolated_share * (1.0 - theta)
