"""The inputs an error names: where each sits in the workbook and what it holds.

Equations in words
------------------
No equations. :mod:`prepkit.simulation.diagnose` asks here for the inputs
behind a failed check (stage rates, importations, the speed of the
epidemic, the most exposed band) and for the words that place each in the
planner's workbook (sheet, cell and label).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import Problem
from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.health import (
    MAX_RATE_PER_DAY,
)
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.layout import (
    N_SETTINGS,
    P_SUSCEPTIBILITY,
    S_PROTECT_RATE,
    matrix_offset,
    scalar_offset,
)

TRANSMISSIBILITY_FIELDS: Mapping[str, tuple[str, str]] = MappingProxyType({
    "r0": ("disease.r0", ""),
    "doubling_time": ("disease.doubling_time_days", "days"),
    "growth_rate": ("disease.growth_rate_per_day", "per day"),
})



@dataclass(frozen=True, kw_only=True)
class Suspect:
    """One input named in an error: where it is and what it holds."""

    name: str
    suffix: str
    value: float
    unit: str
    low: float | None = None
    high: float | None = None


def number(x: float) -> str:
    """A value for a sentence: ``1,000,000``, ``0.5``, ``2.4e+11`` (from a billion up)."""
    if not math.isfinite(x):
        return "not a number" if math.isnan(x) else "infinite"
    if abs(x) >= 1e9:
        return f"{x:.2g}"
    if abs(x) >= 1000:
        return f"{x:,.0f}"
    return f"{x:.3g}"


def _where(plan: Plan, name: str, suffix: str) -> tuple[str, str, str]:
    """Sheet, cell and label of an input (cell ``""`` when the plan was not read)."""
    for record in plan.source.inputs:
        if record.name == name and (not suffix or record.label.endswith(suffix)):
            return record.sheet, record.cell, record.label
    from prepkit.workbook.schema import FIELDS_BY_NAME  # only on this error path

    field = FIELDS_BY_NAME.get(name)
    if field is None:
        return "", "", name + suffix
    return field.sheet, "", field.label + suffix


def problem_for(plan: Plan, suspect: Suspect, expected: str, draw: int | None) -> Problem:
    """The problem naming one suspect where the planner sees it (its range for a draw)."""
    sheet, cell, label = _where(plan, suspect.name, suspect.suffix)
    found = f"{number(suspect.value)} {suspect.unit}".strip()
    if draw is not None and suspect.low is not None and suspect.high is not None:
        found += (
            f" in this draw (drawn between {number(suspect.low)} and {number(suspect.high)})"
        )
    return Problem(sheet=sheet, cell=cell, field=label, expected=expected, found=found)


def spread_suspects(plan: Plan, inputs: ResolvedInputs, ranged: bool) -> list[Suspect]:
    """The inputs that drive the speed of the epidemic (with their ranges when ``ranged``)."""
    disease = plan.disease
    name, unit = TRANSMISSIBILITY_FIELDS[inputs.transmissibility_measure]
    given = {
        "r0": disease.r0,
        "doubling_time": disease.doubling_time_days,
        "growth_rate": disease.growth_rate_per_day,
    }[inputs.transmissibility_measure]
    out = []
    for key, value, unit_of, spread in (
        (name, inputs.transmissibility_value, unit, given),
        ("disease.latent_period_days", inputs.latent_period_days, "days",
         disease.latent_period_days),
        ("disease.infectious_period_days", inputs.infectious_period_days, "days",
         disease.infectious_period_days),
    ):
        low = spread.low if (ranged and spread is not None) else None
        high = spread.high if (ranged and spread is not None) else None
        out.append(Suspect(name=key, suffix="", value=float(value), unit=unit_of, low=low,
                           high=high))
    return out


def most_exposed(plan: Plan, model: CompiledModel, pc: NDArray[np.float64]) -> int:
    """The band with the largest ``sigma_i sum_j C_ij``: the force of infection is largest there."""
    nb = model.layout.bands
    mo = matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    return int(np.argmax(sigma * contacts.sum(axis=1)))


def band_suspects(plan: Plan, band: int) -> list[Suspect]:
    """Relative susceptibility and (simple contacts form) daily contacts of one band."""
    suffix = f", band {plan.bands[band].label}"
    out = [Suspect(name="band_disease.relative_susceptibility", suffix=suffix,
                   value=float(plan.disease.relative_susceptibility[band]), unit="")]
    contacts = plan.contacts
    if contacts.matrices is None and contacts.mean_daily is not None:
        out.append(Suspect(name="band_contacts.mean_daily", suffix=suffix,
                           value=float(contacts.mean_daily[band]), unit="per day"))
    return out


def stage_suspects(plan: Plan, model: CompiledModel, inputs: ResolvedInputs) -> list[Suspect]:
    """Every stage input with its stage rate above the limit, fastest first."""
    disease, severity = plan.disease, plan.severity
    found: list[tuple[float, Suspect]] = []

    def check(rate: float, suspect: Suspect) -> None:
        if rate > MAX_RATE_PER_DAY:
            found.append((rate, suspect))

    check(disease.latent_stages / inputs.latent_period_days,
          Suspect(name="disease.latent_period_days", suffix="",
                  value=inputs.latent_period_days, unit="days"))
    check(disease.infectious_stages / inputs.infectious_period_days,
          Suspect(name="disease.infectious_period_days", suffix="",
                  value=inputs.infectious_period_days, unit="days"))
    for i, band in enumerate(plan.bands):
        suffix = f", band {band.label}"
        for key, days, stages in (
            ("band_severity.onset_to_admission_days", severity.onset_to_admission_days[i],
             severity.admission_delay_stages),
            ("band_severity.ward_stay_days", inputs.ward_stay_days[i], severity.ward_stages),
            ("band_severity.icu_stay_days", inputs.icu_stay_days[i], severity.icu_stages),
        ):
            check(stages / days, Suspect(name=key, suffix=suffix, value=days, unit="days"))
    protect = float(model.pc[scalar_offset(model.layout.bands) + S_PROTECT_RATE])
    for name in model.intervention_names:
        item = plan.intervention(name)
        if item.vaccination is not None and item.vaccination.days_to_protection > 0.0:
            check(protect, Suspect(name="measure.days_to_protection",
                                   suffix=f", measure {name}",
                                   value=item.vaccination.days_to_protection, unit="days"))
    found.sort(key=lambda pair: -pair[0])
    return [suspect for _, suspect in found]


