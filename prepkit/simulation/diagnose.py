"""Plain-words errors for a run or a draw that fails its checks.

Equations in words
------------------
No equations. When a run or an ensemble draw fails a check of
:mod:`prepkit.simulation.health`, this module finds the inputs responsible and
names them as the planner sees them (sheet, cell and label from the plan's
record of where each input was read, else the sheet and label the workbook
declares):

* a day too fast because of a stage: the latent, infectious,
  onset-to-admission, ward or ICU stage, or the days to protection, whose
  stage rate ``stages / mean`` exceeds the limit;
* too fast because of importations: infections from outside per resident;
* too fast because of the growth of infections: the transmissibility input
  with the latent and infectious periods (and the R0 they imply);
* too fast because of the force of infection: the same, with the relative
  susceptibility and daily contacts of the band where it is largest;
* any other failed check: the inputs that drive the speed of the epidemic.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError, Problem
from prepkit.plan import Plan
from prepkit.simulation.compile import CompiledModel
from prepkit.simulation.health import (
    DRIFT_TOLERANCE,
    MAX_RATE_PER_DAY,
    NEGATIVE_TOLERANCE,
    failed_check,
)
from prepkit.simulation.inputs import ResolvedInputs
from prepkit.simulation.layout import (
    N_SETTINGS,
    P_SUSCEPTIBILITY,
    S_GROWTH_BOUND,
    S_IMPORTS,
    S_PROTECT_RATE,
    S_TOTAL_POP,
    matrix_offset,
    scalar_offset,
)
from prepkit.simulation.run_checks import (
    REPORT_DRIFT,
    REPORT_EXTRA,
    REPORT_FAILED_DAY,
    REPORT_LOWEST,
    REPORT_RATE,
    REPORT_STAGES,
)
from prepkit.simulation.transmissibility import reproduction_number

if TYPE_CHECKING:  # the ensemble module imports this one
    from prepkit.uncertainty.ensemble import DrawValues

TRANSMISSIBILITY_FIELDS = {
    "r0": ("disease.r0", ""),
    "doubling_time": ("disease.doubling_time_days", "days"),
    "growth_rate": ("disease.growth_rate_per_day", "per day"),
}


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


def _problem(plan: Plan, suspect: Suspect, expected: str, draw: int | None) -> Problem:
    sheet, cell, label = _where(plan, suspect.name, suspect.suffix)
    found = f"{number(suspect.value)} {suspect.unit}".strip()
    if draw is not None and suspect.low is not None and suspect.high is not None:
        found += (
            f" in this draw (drawn between {number(suspect.low)} and {number(suspect.high)})"
        )
    return Problem(sheet=sheet, cell=cell, field=label, expected=expected, found=found)


def _spread_suspects(plan: Plan, inputs: ResolvedInputs, ranged: bool) -> list[Suspect]:
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


def _most_exposed(plan: Plan, model: CompiledModel, pc: NDArray[np.float64]) -> int:
    """The band with the largest ``sigma_i sum_j C_ij``: the force of infection is largest there."""
    nb = model.layout.bands
    mo = matrix_offset(nb)
    contacts = pc[mo : mo + N_SETTINGS * nb * nb].reshape(N_SETTINGS, nb, nb).sum(axis=0)
    sigma = pc[P_SUSCEPTIBILITY * nb : (P_SUSCEPTIBILITY + 1) * nb]
    return int(np.argmax(sigma * contacts.sum(axis=1)))


def _band_suspects(plan: Plan, band: int) -> list[Suspect]:
    """Relative susceptibility and (simple contacts form) daily contacts of one band."""
    suffix = f", band {plan.bands[band].label}"
    out = [Suspect(name="band_disease.relative_susceptibility", suffix=suffix,
                   value=float(plan.disease.relative_susceptibility[band]), unit="")]
    contacts = plan.contacts
    if contacts.matrices is None and contacts.mean_daily is not None:
        out.append(Suspect(name="band_contacts.mean_daily", suffix=suffix,
                           value=float(contacts.mean_daily[band]), unit="per day"))
    return out


def _stage_suspects(plan: Plan, model: CompiledModel, inputs: ResolvedInputs) -> list[Suspect]:
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


def run_error(
    plan: Plan,
    model: CompiledModel,
    report: NDArray[np.float64],
    *,
    what: str,
    pc: NDArray[np.float64] | None = None,
    inputs: ResolvedInputs | None = None,
    draw: int | None = None,
) -> ModelError:
    """The error for a run or a draw whose report fails a check.

    Parameters
    ----------
    plan : Plan
        The plan.
    model : CompiledModel
        The compiled run (for a draw: the compiled central run of its
        variant).
    report : ndarray, shape (REPORT_SIZE,)
        The run's checks, as filled by the kernels.
    what : str
        What failed, as a sentence subject (e.g. ``"Scenario 'Base' with its
        measures"``).
    pc : ndarray, optional
        The run's parameter vector; default the model's.
    inputs : ResolvedInputs, optional
        The numbers the run used; default the model's.
    draw : int, optional
        The uncertainty draw (from 0); its inputs are shown with their
        ranges.

    Returns
    -------
    ModelError
        Its message names the inputs responsible; ``problems`` carries them.
    """
    pc = model.pc if pc is None else pc
    inputs = model.inputs if inputs is None else inputs
    check = failed_check(report)
    ranged = draw is not None
    sc = scalar_offset(model.layout.bands)
    population = float(pc[sc + S_TOTAL_POP])
    if check == "too_fast" and not (
        max(report[REPORT_RATE], report[REPORT_STAGES], report[REPORT_EXTRA]) > MAX_RATE_PER_DAY
    ):
        check = "not_finite"  # the day failed because its numbers did, not for its speed
    fastest = f"at most {number(MAX_RATE_PER_DAY)} per day"
    tail = ""
    if check == "too_fast":
        day = int(report[REPORT_FAILED_DAY])
        rate = float(report[REPORT_RATE])
        stages = float(report[REPORT_STAGES])
        imports_rate = float(pc[sc + S_IMPORTS]) / population
        suspects = _stage_suspects(plan, model, inputs) if stages > MAX_RATE_PER_DAY else []
        if suspects:
            cause = (
                f"a stage of the disease or the hospital stay is passed at a rate of "
                f"{number(stages)} per day"
            )
            expected = f"a time long enough for a stage rate {fastest} (stages / time)"
            if suspects[0].name == "measure.days_to_protection":
                expected = (f"0 (protection at once) or at least "
                            f"{number(1.0 / MAX_RATE_PER_DAY)} days")
        elif imports_rate > MAX_RATE_PER_DAY or report[REPORT_EXTRA] > MAX_RATE_PER_DAY:
            suspects = [Suspect(name="disease.daily_importations", suffix="",
                                value=float(pc[sc + S_IMPORTS]), unit="per day")]
            cause = (
                f"infections from outside reach {number(imports_rate)} per resident per day "
                f"among {number(population)} residents"
            )
            expected = f"at most {number(MAX_RATE_PER_DAY * population)} per day"
        else:
            suspects = _spread_suspects(plan, inputs, ranged)
            growth = float(pc[sc + S_GROWTH_BOUND])
            pace = "force of infection"
            if growth > MAX_RATE_PER_DAY:
                pace = "growth of infections"
                cause = (
                    f"infections could grow at a rate of up to {number(growth)} per day "
                    f"(tenfold every {number(math.log(10.0) / growth * 86_400.0)} seconds)"
                )
            else:
                band = _most_exposed(plan, model, pc)
                cause = (
                    f"a susceptible resident of band {plan.bands[band].label} would be infected "
                    f"at a rate of {number(rate)} per day (the force of infection)"
                )
                suspects += _band_suspects(plan, band)
            expected = (
                f"values that together keep the {pace} {fastest} (a shorter latent or "
                "infectious period, or a lower transmissibility)"
            )
            tail = _r0_note(model, pc, inputs)
        problems = [_problem(plan, s, expected, draw) for s in suspects]
        summary = (
            f"{what} cannot be simulated: on day {day} {cause}, faster than the model can "
            f"follow ({fastest})"
        )
    else:
        detail = {
            "not_finite": "a number stopped being finite",
            "negative": (
                f"a compartment fell to {number(float(report[REPORT_LOWEST]) * population)} "
                f"people, below the allowed {number(-NEGATIVE_TOLERANCE * population)}"
            ),
            "drift": (
                f"the number of people changed by {float(report[REPORT_DRIFT]):.2g} of "
                f"itself, more than the allowed {DRIFT_TOLERANCE:.0e}"
            ),
        }.get(check or "", "a check failed")
        suspects = _spread_suspects(plan, inputs, ranged)
        suspects.append(Suspect(name="disease.daily_importations", suffix="",
                                value=float(pc[sc + S_IMPORTS]), unit="per day"))
        expected = "values the model can follow"
        problems = [_problem(plan, s, expected, draw) for s in suspects]
        summary = f"{what} failed a check of its results ({detail})"
        tail = _r0_note(model, pc, inputs)
    named = "; ".join(f"{p.where} {p.field} = {p.found}" for p in problems)
    message = (
        f"{summary}. Its results are not used. Inputs responsible: {named}{tail}. "
        "Check these figures."
    )
    return ModelError(message, problems=problems, draw=draw)


def _r0_note(model: CompiledModel, pc: NDArray[np.float64], inputs: ResolvedInputs) -> str:
    if inputs.transmissibility_measure == "r0":
        return ""
    try:
        r0 = reproduction_number(pc, model.layout)
    except (ValueError, np.linalg.LinAlgError):  # pragma: no cover - only a note
        return ""
    return f" (together they mean each case infects about {number(r0)} others, R0)"


def draw_error(
    model: CompiledModel,
    plan: Plan,
    part: DrawValues,
    pcs: NDArray[np.float64],
    reports: NDArray[np.float64],
    row: int,
    *,
    first: int,
    what: str,
) -> ModelError:
    """The error naming a failed draw and its inputs.

    Parameters
    ----------
    model : CompiledModel
        Compiled central run of the variant.
    plan : Plan
        The plan.
    part : prepkit.uncertainty.ensemble.DrawValues
        The block of draws that holds the failed one.
    pcs : ndarray, shape (block draws, parameters)
        Their parameter vectors.
    reports : ndarray, shape (block draws, REPORT_SIZE)
        Their checks.
    row : int
        Row of the failed draw in the block.
    first : int
        Index of the block's first draw in the ensemble.
    what : str
        What a draw is called.

    Returns
    -------
    ModelError
        Names the draw (counted from 1 in the message) and its inputs.
    """
    draw = first + row
    inputs = replace(model.inputs, **part.overrides(row))
    return run_error(
        plan, model, reports[row], what=f"{model.description}, {what} {draw + 1}",
        pc=pcs[row], inputs=inputs, draw=draw,
    )
