"""Results as a JSON-serialisable dictionary.

Every metric of every scenario and variant, the interventions' effect and
the transmissibility table. Keys carry units; dates are ISO strings; NaN
and infinities become None; numpy numbers become Python numbers.
"""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path
from typing import Any

from prepkit import __version__
from prepkit.base.json_values import jsonable
from prepkit.fitting.project import FitOutcome
from prepkit.fitting.summary import fit_summary
from prepkit.plan import Plan
from prepkit.scenarios.runs import PlanResults, ScenarioRun
from prepkit.uncertainty.decide_results import DecisionResults
from prepkit.uncertainty.decide_summary import decisions_summary

SUMMARY_VERSION = 2  # 2: deaths keys say "hospital_deaths"
"""Bumped when keys are renamed or removed."""


def _run_dict(run: ScenarioRun) -> dict[str, Any]:
    out: dict[str, Any] = jsonable(run.metrics)
    out["substeps_per_day"] = run.substeps
    return out


def _transmissibility_dict(item: Any) -> dict[str, Any]:
    out: dict[str, Any] = jsonable(item)
    unit = {"r0": "dimensionless", "doubling_time": "days", "growth_rate": "per_day"}
    out["given_value_unit"] = unit.get(str(out.get("measure")), "")
    return out


def summary_dict(plan: Plan, results: PlanResults) -> dict[str, Any]:
    """Summarise plan results as a JSON-serialisable dictionary.

    Parameters
    ----------
    plan : Plan
        The plan that was run.
    results : PlanResults
        Its results from :func:`prepkit.scenarios.runs.run_plan`.

    Returns
    -------
    dict
        ``{"summary_version", "plan", "transmissibility_by_level",
        "scenarios"}``; each scenario holds its levels, interventions, the
        numbers picked for it (``"inputs_used"``), transmissibility, ``"with_interventions"`` and
        ``"without_interventions"`` metrics and ``"intervention_effect"``.
    """
    scenarios = []
    for item in results.scenarios:
        scenario = item.scenario
        scenarios.append(
            {
                "name": scenario.name,
                "description": scenario.description,
                "transmissibility_level": scenario.transmissibility_level,
                "severity_level": scenario.severity_level,
                "interventions": list(scenario.interventions),
                "inputs_used": jsonable(item.with_interventions.inputs),
                "transmissibility": _transmissibility_dict(item.transmissibility),
                "with_interventions": _run_dict(item.with_interventions),
                "without_interventions": _run_dict(item.without_interventions),
                "intervention_effect": jsonable(item.effect),
            }
        )
    details = plan.details
    return {
        "summary_version": SUMMARY_VERSION,
        "plan": {
            "jurisdiction": details.jurisdiction,
            "title": details.title,
            "day0": details.day0.isoformat(),
            "horizon_days": int(details.horizon_days),
            "review_by": plan.review_date.isoformat(),
            "population_persons": jsonable(plan.population),
            "bands": [b.label for b in plan.bands],
        },
        "transmissibility_by_level": {
            level: _transmissibility_dict(value)
            for level, value in results.transmissibility_by_level.items()
        },
        "scenarios": scenarios,
    }


def summary_payload(
    plan: Plan,
    results: PlanResults,
    ensemble_summary: dict[str, Any] | None,
    generated: dt.datetime,
    *,
    fit: FitOutcome | None = None,
    decisions: DecisionResults | None = None,
) -> dict[str, Any]:
    """``summary.json`` as a dictionary: every metric, the run, the ensemble, decisions, fit."""
    payload = summary_dict(plan, results)
    payload["run"] = {
        "prepkit_version": __version__,
        "generated": generated.astimezone(dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "input_file": Path(plan.source.path).name if plan.source.path else "",
        "input_sha256": plan.source.sha256,
        "seed": plan.details.seed,
        "draws": plan.details.draws,
    }
    if ensemble_summary is not None:
        payload["uncertainty"] = ensemble_summary
    if decisions is not None:
        payload["decisions"] = jsonable(decisions_summary(plan, decisions))
    fitted = fit_summary(fit)
    if fitted is not None:
        payload["fit"] = fitted
    return payload


def json_bytes(payload: Any) -> bytes:
    """A JSON file of the pack: indented, UTF-8, no NaN, ending with a newline."""
    return (json.dumps(payload, indent=2, ensure_ascii=False, allow_nan=False) + "\n").encode()

