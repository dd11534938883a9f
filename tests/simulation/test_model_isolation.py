"""Case isolation against the reproduction-number formula."""

from __future__ import annotations

import pytest
from factories import compiled, isolation_measure, make_plan
from numpy.testing import assert_allclose
from scipy.integrate import quad
from scipy.stats import gamma

from prepkit.simulation.layout import IT_ISO_SYMPTOMATIC
from prepkit.simulation.natural_history import share_before_isolation
from prepkit.simulation.transmissibility import reproduction_number


def theta_by_quadrature(delay: float, mean: float, stages: int) -> float:
    # E[min(T, d)] = integral_0^d P(T > t) dt (common practice, no source).
    value, _ = quad(lambda t: gamma.sf(t, stages, scale=mean / stages), 0.0, delay)
    return value / mean


@pytest.mark.parametrize("stages", [1, 2, 4])
@pytest.mark.parametrize("delay", [0.0, 1.0, 2.5])
@pytest.mark.parametrize("share", [0.3, 0.9])
def test_isolation_scales_r_as_fraser(stages: int, delay: float, share: float) -> None:
    measure = isolation_measure(isolated_share=share, days_from_onset=delay, compliance=0.8)
    plan = make_plan(r0=2.4, infectious_days=5.0, infectious_stages=stages,
                     interventions=(measure,))
    model = compiled(plan)
    theta = theta_by_quadrature(delay, 5.0, stages)
    assert_allclose(share_before_isolation(delay, 5.0, stages), theta, rtol=1e-9, atol=1e-12)
    eps = share * 0.8
    r_iso = reproduction_number(
        model.pc, model.layout, symptomatic_multiplier=float(model.itab[0, IT_ISO_SYMPTOMATIC])
    )
    # Fraser, Riley, Anderson & Ferguson 2004, PNAS 101:6146: R = R0 [1 - eps (1 - theta)].
    assert_allclose(r_iso, 2.4 * (1 - eps * (1 - theta)), rtol=1e-9)
