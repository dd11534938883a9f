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
from dataclasses import replace
from typing import Any, Protocol

import numpy as np
from numpy.typing import NDArray

from prepkit.errors import ModelError
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
    S_GROWTH_BOUND,
    S_IMPORTS,
    S_TOTAL_POP,
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
from prepkit.simulation.suspects import (
    Suspect,
    band_suspects,
    most_exposed,
    number,
    problem_for,
    spread_suspects,
    stage_suspects,
)
from prepkit.simulation.transmissibility import reproduction_number


class DrawInputs(Protocol):
    """A block of ensemble draws that gives the inputs of each (the ensemble's draw values)."""

    def overrides(self, draw: int) -> dict[str, Any]:
        """Fields of :class:`~prepkit.simulation.inputs.ResolvedInputs` to the draw's values."""
        ...


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
    if check == "too_fast" and not (
        max(report[REPORT_RATE], report[REPORT_STAGES], report[REPORT_EXTRA]) > MAX_RATE_PER_DAY
    ):
        check = "not_finite"  # the day failed because its numbers did, not for its speed
    if check == "too_fast":
        summary, suspects, expected, tail = _too_fast(plan, model, report, what, pc, inputs,
                                                      ranged)
    else:
        summary, suspects, expected, tail = _failed_result(plan, model, report, what, pc,
                                                           inputs, check, ranged)
    problems = [problem_for(plan, s, expected, draw) for s in suspects]
    named = "; ".join(f"{p.where} {p.field} = {p.found}" for p in problems)
    message = (
        f"{summary}. Its results are not used. Inputs responsible: {named}{tail}. "
        "Check these figures."
    )
    return ModelError(message, problems=problems, draw=draw)


def _too_fast(
    plan: Plan,
    model: CompiledModel,
    report: NDArray[np.float64],
    what: str,
    pc: NDArray[np.float64],
    inputs: ResolvedInputs,
    ranged: bool,
) -> tuple[str, list[Suspect], str, str]:
    """Summary, suspects, expected values and note of a day too fast to follow."""
    sc = scalar_offset(model.layout.bands)
    population = float(pc[sc + S_TOTAL_POP])
    fastest = f"at most {number(MAX_RATE_PER_DAY)} per day"
    tail = ""
    day = int(report[REPORT_FAILED_DAY])
    rate = float(report[REPORT_RATE])
    stages = float(report[REPORT_STAGES])
    imports_rate = float(pc[sc + S_IMPORTS]) / population
    suspects = stage_suspects(plan, model, inputs) if stages > MAX_RATE_PER_DAY else []
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
        suspects = spread_suspects(plan, inputs, ranged)
        growth = float(pc[sc + S_GROWTH_BOUND])
        pace = "force of infection"
        if growth > MAX_RATE_PER_DAY:
            pace = "growth of infections"
            cause = (
                f"infections could grow at a rate of up to {number(growth)} per day "
                f"(tenfold every {number(math.log(10.0) / growth * 86_400.0)} seconds)"
            )
        else:
            band = most_exposed(plan, model, pc)
            cause = (
                f"a susceptible resident of band {plan.bands[band].label} would be infected "
                f"at a rate of {number(rate)} per day (the force of infection)"
            )
            suspects += band_suspects(plan, band)
        expected = (
            f"values that together keep the {pace} {fastest} (a shorter latent or "
            "infectious period, or a lower transmissibility)"
        )
        tail = _r0_note(model, pc, inputs)
    summary = (
        f"{what} cannot be simulated: on day {day} {cause}, faster than the model can "
        f"follow ({fastest})"
    )
    return summary, suspects, expected, tail


def _failed_result(
    plan: Plan,
    model: CompiledModel,
    report: NDArray[np.float64],
    what: str,
    pc: NDArray[np.float64],
    inputs: ResolvedInputs,
    check: str | None,
    ranged: bool,
) -> tuple[str, list[Suspect], str, str]:
    """Summary, suspects, expected values and note of a run whose results failed a check."""
    sc = scalar_offset(model.layout.bands)
    population = float(pc[sc + S_TOTAL_POP])
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
    suspects = spread_suspects(plan, inputs, ranged)
    suspects.append(Suspect(name="disease.daily_importations", suffix="",
                            value=float(pc[sc + S_IMPORTS]), unit="per day"))
    expected = "values the model can follow"
    summary = f"{what} failed a check of its results ({detail})"
    tail = _r0_note(model, pc, inputs)
    return summary, suspects, expected, tail


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
    part: DrawInputs,
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
    part : DrawInputs
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
