"""Pick the numbers a scenario run uses and check that the plan can be simulated.

Equations in words
------------------
No equations. A scenario names a transmissibility level and a severity
level. The transmissibility level picks low, central or high of the
measure the plan gives (R0, growth rate or doubling time). A higher
transmissibility means a higher R0, a higher growth rate and a *shorter*
doubling time, so "high" picks the *low* doubling time. The severity level
picks the admitted share and the ICU share of admissions. Everything else
given as a range (latent and infectious periods, symptomatic shares, stays,
compliance, vaccine efficacies) takes its central value. The ensemble can
replace any of these numbers through ``overrides``.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, fields, replace
from types import MappingProxyType
from typing import Any, Literal

from prepkit.errors import ModelError
from prepkit.plan import LEVELS, Level, Plan, Scenario

Measure = Literal["r0", "doubling_time", "growth_rate"]

DOUBLING_TIME_LEVEL: Mapping[Level, Level] = MappingProxyType(
    {"low": "high", "central": "central", "high": "low"}
)
"""Doubling-time level used for each transmissibility level (inverted)."""


@dataclass(frozen=True, kw_only=True)
class ResolvedInputs:
    """The single numbers one run uses where the plan gives ranges.

    Attributes
    ----------
    transmissibility_level, severity_level : {"low", "central", "high"}
        Levels of the scenario.
    transmissibility_measure : {"r0", "doubling_time", "growth_rate"}
        Which measure sets transmissibility.
    transmissibility_value : float
        Its value [dimensionless, days or 1/day].
    latent_period_days, infectious_period_days : float
        Means [days].
    symptomatic_share, admitted_share, icu_share : tuple of float
        Per band [fraction].
    ward_stay_days, icu_stay_days : tuple of float
        Per band [days].
    compliance : mapping of str to float
        Per intervention name [fraction].
    efficacy_infection, efficacy_severe : float
        Vaccine efficacy against infection and against admission [fraction]
        (0 when the scenario has no vaccination).
    """

    transmissibility_level: Level
    severity_level: Level
    transmissibility_measure: Measure
    transmissibility_value: float
    latent_period_days: float
    infectious_period_days: float
    symptomatic_share: tuple[float, ...]
    admitted_share: tuple[float, ...]
    icu_share: tuple[float, ...]
    ward_stay_days: tuple[float, ...]
    icu_stay_days: tuple[float, ...]
    compliance: Mapping[str, float]
    efficacy_infection: float
    efficacy_severe: float


def transmissibility_value(plan: Plan, level: Level) -> tuple[Measure, float]:
    """Measure and value of transmissibility at a level.

    Parameters
    ----------
    plan : Plan
        The plan.
    level : {"low", "central", "high"}
        Transmissibility level; "high" means faster spread.

    Returns
    -------
    tuple
        Measure name and value [dimensionless, days or 1/day].
    """
    disease = plan.disease
    measure = disease.transmissibility_measure
    if measure == "r0" and disease.r0 is not None:
        return "r0", disease.r0.at(level)
    if measure == "doubling_time" and disease.doubling_time_days is not None:
        return "doubling_time", disease.doubling_time_days.at(DOUBLING_TIME_LEVEL[level])
    if disease.growth_rate_per_day is None:
        raise ModelError("disease: none of R0, doubling time and growth rate is given")
    return "growth_rate", disease.growth_rate_per_day.at(level)


def resolve_inputs(
    plan: Plan,
    scenario: Scenario,
    overrides: Mapping[str, Any] | None = None,
) -> ResolvedInputs:
    """Pick the values a scenario run uses.

    Parameters
    ----------
    plan : Plan
        The plan.
    scenario : Scenario
        The scenario (its levels and interventions).
    overrides : mapping, optional
        Field name of :class:`ResolvedInputs` to the value to use instead.

    Returns
    -------
    ResolvedInputs
        The numbers of the run.
    """
    disease = plan.disease
    severity = plan.severity
    measure, value = transmissibility_value(plan, scenario.transmissibility_level)
    sev = scenario.severity_level
    compliance: dict[str, float] = {}
    ve_inf = 0.0
    ve_sev = 0.0
    for name in scenario.interventions:
        item = _intervention(plan, name)
        compliance[name] = item.compliance.central
        if item.vaccination is not None:
            ve_inf = item.vaccination.efficacy_infection.central
            ve_sev = item.vaccination.efficacy_severe.central
    resolved = ResolvedInputs(
        transmissibility_level=scenario.transmissibility_level,
        severity_level=sev,
        transmissibility_measure=measure,
        transmissibility_value=value,
        latent_period_days=disease.latent_period_days.central,
        infectious_period_days=disease.infectious_period_days.central,
        symptomatic_share=tuple(x.central for x in disease.symptomatic_share),
        admitted_share=tuple(x.at(sev) for x in severity.admitted_share),
        icu_share=tuple(x.at(sev) for x in severity.icu_share),
        ward_stay_days=tuple(x.central for x in severity.ward_stay_days),
        icu_stay_days=tuple(x.central for x in severity.icu_stay_days),
        compliance=compliance,
        efficacy_infection=ve_inf,
        efficacy_severe=ve_sev,
    )
    if overrides:
        known = {f.name for f in fields(ResolvedInputs)}
        unknown = sorted(set(overrides) - known)
        if unknown:
            raise ModelError(f"unknown overrides {unknown}; expected some of {sorted(known)}")
        resolved = replace(resolved, **dict(overrides))
    return resolved


def _intervention(plan: Plan, name: str) -> Any:
    try:
        return plan.intervention(name)
    except KeyError:
        raise ModelError(f"scenario names intervention {name!r}, which the plan lacks") from None


def validate_plan(plan: Plan) -> None:
    """Check that every scenario of the plan can be simulated.

    Checks made here (the workbook reader checks ranges and types):
    admitted share at every level at most the central symptomatic share,
    positive periods and stage counts, intervention start and end kinds
    that fit together, release level at most the start level, vaccination
    campaigns of one scenario using one vaccine, day-0 seeding and prior
    immunity within the band population, seasonal amplitude in [0, 1).

    Parameters
    ----------
    plan : Plan
        The plan.

    Raises
    ------
    ModelError
        Listing every problem found.
    """
    problems = _band_count_problems(plan)
    if problems:
        raise ModelError("; ".join(problems))
    problems += _band_problems(plan)
    problems += _disease_problems(plan)
    bands = len(plan.bands)
    for item in plan.interventions:
        problems.extend(_intervention_problems(item, bands))
    for scenario in plan.scenarios:
        vaccines = set()
        for name in scenario.interventions:
            try:
                item = plan.intervention(name)
            except KeyError:
                problems.append(f"scenario {scenario.name!r} names unknown intervention {name!r}")
                continue
            if item.vaccination is not None:
                v = item.vaccination
                vaccines.add(
                    (v.efficacy_infection, v.efficacy_severe, v.days_to_protection)
                )
        if len(vaccines) > 1:
            problems.append(
                f"scenario {scenario.name!r}: vaccination campaigns must use one vaccine "
                "(same efficacies and days to protection)"
            )
    if problems:
        raise ModelError("; ".join(problems))


def _band_count_problems(plan: Plan) -> list[str]:
    """Per-band inputs with a value count other than the number of bands."""
    problems: list[str] = []
    bands = len(plan.bands)
    disease = plan.disease
    severity = plan.severity
    per_band = {
        "symptomatic share": disease.symptomatic_share,
        "relative susceptibility": disease.relative_susceptibility,
        "prior immunity": disease.prior_immunity,
        "admitted share": severity.admitted_share,
        "ICU share": severity.icu_share,
        "ward fatality": severity.ward_fatality,
        "ICU fatality": severity.icu_fatality,
        "onset to admission": severity.onset_to_admission_days,
        "ward stay": severity.ward_stay_days,
        "ICU stay": severity.icu_stay_days,
    }
    for label, values in per_band.items():
        if len(values) != bands:
            problems.append(f"{label} has {len(values)} values; expected {bands}")
    return problems


def _band_problems(plan: Plan) -> list[str]:
    """Admitted shares above the symptomatic share, delays and stays, day-0 people per band."""
    problems: list[str] = []
    disease = plan.disease
    severity = plan.severity
    for i, band in enumerate(plan.bands):
        p_central = disease.symptomatic_share[i].central
        for level in LEVELS:
            h = severity.admitted_share[i].at(level)
            if h > p_central + 1e-12:
                problems.append(
                    f"admitted share ({level}) of band {band.label} is {h:.4g}; expected at most "
                    f"the symptomatic share {p_central:.4g}"
                )
        if severity.onset_to_admission_days[i] <= 0.0:
            problems.append(f"onset to admission of band {band.label} must be positive")
        if min(severity.ward_stay_days[i].low, severity.icu_stay_days[i].low) <= 0.0:
            problems.append(f"ward and ICU stays of band {band.label} must be positive")
        seeded = disease.initial_infections * band.people / max(plan.population, 1e-300)
        if disease.prior_immunity[i] * band.people + seeded > band.people * (1 + 1e-12):
            problems.append(
                f"prior immunity plus day-0 infections exceed the population of band {band.label}"
            )
    return problems


def _disease_problems(plan: Plan) -> list[str]:
    """Periods, stage counts, seasonality and horizon."""
    problems: list[str] = []
    disease = plan.disease
    severity = plan.severity
    if min(disease.latent_period_days.low, disease.infectious_period_days.low) <= 0.0:
        problems.append("latent and infectious periods must be positive")
    stage_counts = (
        disease.latent_stages,
        disease.infectious_stages,
        severity.admission_delay_stages,
        severity.ward_stages,
        severity.icu_stages,
    )
    if min(stage_counts) < 1:
        problems.append("every Erlang stage count must be at least 1")
    if not 0.0 <= disease.seasonal_amplitude < 1.0:
        problems.append(
            f"seasonal amplitude is {disease.seasonal_amplitude:.4g}; expected in [0, 1)"
        )
    if disease.seasonal_amplitude > 0.0 and disease.seasonal_peak is None:
        problems.append("seasonal amplitude is set but the seasonal peak date is not")
    if plan.details.horizon_days < 1:
        problems.append("horizon must be at least 1 day")
    return problems


def _intervention_problems(item: Any, bands: int) -> list[str]:
    out: list[str] = []
    where = f"intervention {item.name!r}"
    start, end = item.start, item.end
    if start.kind == "date" and start.date is None:
        out.append(f"{where}: start kind 'date' needs a start date")
    if start.kind != "date" and start.level is None:
        out.append(f"{where}: trigger start needs a level")
    if end.kind == "date" and end.date is None:
        out.append(f"{where}: end kind 'date' needs an end date")
    if end.kind == "duration" and (end.duration_days is None or end.duration_days < 0):
        out.append(f"{where}: end kind 'duration' needs a duration of at least 0 days")
    if end.kind == "release":
        if start.kind == "date":
            out.append(f"{where}: a 'release' end needs a trigger start, not a date")
        elif end.level is None:
            out.append(f"{where}: a 'release' end needs a release level")
        elif start.level is not None and end.level > start.level:
            out.append(
                f"{where}: release level {end.level:.4g} is above the start level "
                f"{start.level:.4g}; expected at most the start level"
            )
    if item.kind == "vaccination":
        v = item.vaccination
        if v is None:
            out.append(f"{where}: kind 'vaccination' needs vaccination inputs")
        else:
            if any(i < 0 or i >= bands for i in v.priority):
                out.append(f"{where}: priority names a band outside 0..{bands - 1}")
            if v.days_to_protection < 0:
                out.append(f"{where}: days to protection must be at least 0")
            for level in LEVELS:
                if v.efficacy_severe.at(level) < v.efficacy_infection.at(level) - 1e-12:
                    out.append(
                        f"{where}: efficacy against admission ({level}) is below efficacy "
                        "against infection; expected at least it"
                    )
    if item.kind == "isolation" and item.isolation is None:
        out.append(f"{where}: kind 'isolation' needs isolation inputs")
    return out
