"""Next-generation matrix: closed form, scaling and consistency with the simulated equations."""

from __future__ import annotations

import numpy as np
from factories import compiled, make_plan
from numpy.testing import assert_allclose

from prepkit.simulation.contacts import preferential_mixing
from prepkit.simulation.decisions import decide_day
from prepkit.simulation.flows import rhs
from prepkit.simulation.layout import BLK_E, BLK_S, BLK_V, BLK_W, daily_size
from prepkit.simulation.next_generation import infected_subsystem, next_generation_matrix
from prepkit.simulation.transmissibility import reproduction_number

POPS = (2e5, 4e5, 3e5, 1e5)
SYM = (0.3, 0.6, 0.8, 0.9)
SIGMA = (1.4, 1.0, 0.9, 1.1)
CONTACTS = (16.0, 12.0, 9.0, 5.0)


def four_band_plan(**changes: object) -> object:
    values: dict[str, object] = dict(
        populations=POPS, r0=2.0, symptomatic_share=SYM, rho=0.4, susceptibility=SIGMA,
        mean_daily=CONTACTS, assortativity=0.3, infectious_days=5.0, infectious_stages=3,
        latent_stages=2,
    )
    values.update(changes)
    return make_plan(**values)  # type: ignore[arg-type]


def test_ngm_matches_closed_form() -> None:
    model = compiled(four_band_plan())
    f_mat, v_mat, entries = infected_subsystem(model.pc, model.layout)
    k = next_generation_matrix(f_mat, v_mat, entries)[:4, :4]
    pops = np.array(POPS)
    c = preferential_mixing(CONTACTS, POPS, 0.3)
    h = np.array(SYM) + (1 - np.array(SYM)) * 0.4
    # Diekmann, Heesterbeek & Metz 1990, J Math Biol 28:365; van den Driessche & Watmough
    # 2002, Math Biosci 180:29: K_ij = D a_i C_ij h_j N_i / N_j (times the scale beta).
    expected = model.beta * 5.0 * np.array(SIGMA)[:, None] * c * h[None, :] * (
        pops[:, None] / pops[None, :]
    )
    assert_allclose(k, expected, rtol=1e-12)
    assert_allclose(np.max(np.abs(np.linalg.eigvals(expected))), 2.0, rtol=1e-12)


def test_scaling_all_contacts_scales_r0() -> None:
    # Invariant of every compartment model (common practice, no source): scaling all contacts by m
    # scales R0 by m (R0 linear in C).
    model = compiled(four_band_plan())
    for factor in (0.3, 1.7, 4.0):
        scaled = reproduction_number(model.pc, model.layout, contact_multipliers=np.full(4, factor))
        assert_allclose(scaled, 2.0 * factor, rtol=1e-12)
    doubled = compiled(four_band_plan(mean_daily=tuple(2 * c for c in CONTACTS)))
    assert_allclose(reproduction_number(doubled.pc, doubled.layout, beta=model.beta), 4.0,
                    rtol=1e-12)


def test_f_minus_v_is_the_jacobian_of_the_simulated_equations() -> None:
    # van den Driessche & Watmough 2002: F - V is the Jacobian of the infected subsystem
    # at the disease-free state; checked here against the kernel right-hand side.
    plan = four_band_plan(admitted_share=(0.01, 0.02, 0.05, 0.2), wait_stages=2)
    model = compiled(plan)
    layout = model.layout
    pops = model.population
    protected = np.array([0.0, 0.2, 0.4, 0.6])
    y = np.zeros(layout.size)
    y[layout.stage(BLK_S)] = pops * (1 - protected)
    y[layout.stage(BLK_V)] = pops * protected
    pd = np.zeros(daily_size(4))
    decide_day(0, y, y, model.pc, model.lay, model.itab, model.iprio, model.cap,
               np.zeros(0, np.int64), np.zeros(0), pd)
    lo, hi = layout.offsets[BLK_E], layout.offsets[BLK_W]
    base = np.empty(layout.size)
    scratch = np.empty(5 * layout.bands)
    rhs(0.0, y, model.pc, pd, model.lay, base, scratch)
    jac = np.empty((hi - lo, hi - lo))
    for col in range(hi - lo):
        bumped = y.copy()
        bumped[lo + col] += 1.0
        out = np.empty(layout.size)
        rhs(0.0, bumped, model.pc, pd, model.lay, out, scratch)
        jac[:, col] = (out - base)[lo:hi]
    f_mat, v_mat, _ = infected_subsystem(
        model.pc, layout, unprotected_share=1 - protected, protected_share=protected
    )
    assert_allclose(jac, f_mat - v_mat, rtol=1e-9, atol=1e-12)
