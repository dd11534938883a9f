"""Programmatic Plan builders for tests: minimal parameter sets, no place data."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from typing import Any

from prepkit.plan import (
    AgeBand,
    Contacts,
    Disease,
    End,
    Intervention,
    Isolation,
    Level,
    Plan,
    Range3,
    Scenario,
    Setting,
    Severity,
    Start,
    Vaccination,
)
from prepkit.plan.details import Details
from prepkit.plan.resources import Capacity, Workforce

DAY0 = dt.date(2025, 1, 1)


def as_range(value: float | Range3) -> Range3:
    return value if isinstance(value, Range3) else Range3.point(float(value))


def per_band(value: Any, bands: int) -> tuple[Any, ...]:
    if isinstance(value, Sequence) and not isinstance(value, str):
        assert len(value) == bands
        return tuple(value)
    return (value,) * bands


def make_bands(populations: Sequence[float]) -> tuple[AgeBand, ...]:
    n = len(populations)
    out = []
    for i, people in enumerate(populations):
        lower = 10 * i
        upper = None if i == n - 1 else lower + 9
        label = f"{lower}+" if upper is None else f"{lower}-{upper}"
        out.append(AgeBand(label=label, lower_age=lower, upper_age=upper, people=float(people)))
    return tuple(out)


def make_capacity(**changes: Any) -> Capacity:
    values: dict[str, Any] = dict(
        ward_beds=400,
        icu_beds=40,
        ventilators=None,
        ward_baseline_occupancy=0.8,
        icu_baseline_occupancy=0.7,
        surge_ward_beds=100,
        surge_icu_beds=20,
        surge_days_to_open=3.0,
        surge_trigger_occupancy=0.8,
        catchment_share=1.0,
    )
    values.update(changes)
    return Capacity(**values)


def make_workforce(**changes: Any) -> Workforce:
    values: dict[str, Any] = dict(
        working_age_min=20,
        working_age_max=64,
        employed_share=0.7,
        days_absent_per_illness=5.0,
        carer_share_school_closure=0.1,
    )
    values.update(changes)
    return Workforce(**values)


def make_plan(
    *,
    populations: Sequence[float] = (1e6,),
    r0: float | Range3 | None = 2.0,
    doubling_time: float | Range3 | None = None,
    growth_rate: float | Range3 | None = None,
    latent_days: float | Range3 = 3.0,
    latent_stages: int = 1,
    infectious_days: float | Range3 = 4.0,
    infectious_stages: int = 1,
    symptomatic_share: Any = 1.0,
    rho: float = 0.5,
    susceptibility: Any = 1.0,
    prior_immunity: Any = 0.0,
    admitted_share: Any = 0.0,
    icu_share: Any = 0.0,
    ward_fatality: Any = 0.0,
    icu_fatality: Any = 0.0,
    onset_to_admission: Any = 3.0,
    ward_stay: Any = 7.0,
    icu_stay: Any = 10.0,
    wait_stages: int = 1,
    ward_stages: int = 2,
    icu_stages: int = 2,
    mean_daily: Any = 10.0,
    assortativity: float = 0.5,
    setting_shares: tuple[dict[Setting, float], ...] | None = None,
    matrices: dict[Setting, tuple[tuple[float, ...], ...]] | None = None,
    initial_infections: float = 10.0,
    importations: float = 0.0,
    seasonal_amplitude: float = 0.0,
    seasonal_peak: dt.date | None = None,
    horizon: int = 365,
    day0: dt.date = DAY0,
    interventions: Sequence[Intervention] = (),
    scenarios: Sequence[Scenario] | None = None,
    capacity: Capacity | None = None,
    workforce: Workforce | None = None,
) -> Plan:
    nb = len(populations)
    if doubling_time is not None or growth_rate is not None:
        r0 = None
    disease = Disease(
        r0=None if r0 is None else as_range(r0),
        doubling_time_days=None if doubling_time is None else as_range(doubling_time),
        growth_rate_per_day=None if growth_rate is None else as_range(growth_rate),
        latent_period_days=as_range(latent_days),
        latent_stages=latent_stages,
        infectious_period_days=as_range(infectious_days),
        infectious_stages=infectious_stages,
        symptomatic_share=tuple(as_range(x) for x in per_band(symptomatic_share, nb)),
        asymptomatic_relative_infectiousness=rho,
        relative_susceptibility=tuple(float(x) for x in per_band(susceptibility, nb)),
        prior_immunity=tuple(float(x) for x in per_band(prior_immunity, nb)),
        seasonal_amplitude=seasonal_amplitude,
        seasonal_peak=seasonal_peak,
        initial_infections=initial_infections,
        daily_importations=importations,
    )
    severity = Severity(
        admitted_share=tuple(as_range(x) for x in per_band(admitted_share, nb)),
        icu_share=tuple(as_range(x) for x in per_band(icu_share, nb)),
        ward_fatality=tuple(float(x) for x in per_band(ward_fatality, nb)),
        icu_fatality=tuple(float(x) for x in per_band(icu_fatality, nb)),
        onset_to_admission_days=tuple(float(x) for x in per_band(onset_to_admission, nb)),
        ward_stay_days=tuple(as_range(x) for x in per_band(ward_stay, nb)),
        icu_stay_days=tuple(as_range(x) for x in per_band(icu_stay, nb)),
        admission_delay_stages=wait_stages,
        ward_stages=ward_stages,
        icu_stages=icu_stages,
    )
    if matrices is not None:
        contacts = Contacts(matrices=matrices)
    else:
        contacts = Contacts(
            mean_daily=tuple(float(x) for x in per_band(mean_daily, nb)),
            assortativity=assortativity,
            setting_shares=setting_shares,
        )
    if scenarios is None:
        scenarios = (
            Scenario(
                name="base",
                transmissibility_level="central",
                severity_level="central",
                interventions=tuple(item.name for item in interventions),
            ),
        )
    return Plan(
        details=Details(
            jurisdiction="Test",
            title="Test plan",
            prepared_by="tests",
            day0=day0,
            horizon_days=horizon,
            draws=0,
            seed=1,
            page_size="A4",
        ),
        bands=make_bands(populations),
        contacts=contacts,
        disease=disease,
        severity=severity,
        capacity=capacity or make_capacity(),
        workforce=workforce or make_workforce(),
        interventions=tuple(interventions),
        scenarios=tuple(scenarios),
    )


def contact_measure(
    name: str = "distancing",
    *,
    kept: dict[Setting, float] | None = None,
    compliance: float = 1.0,
    start: Start | None = None,
    end: End | None = None,
) -> Intervention:
    return Intervention(
        name=name,
        kind="contacts",
        start=start or Start(kind="date", date=DAY0 + dt.timedelta(days=20)),
        end=end or End(kind="horizon"),
        contacts_kept=kept if kept is not None else {"community": 0.5, "work": 0.7},
        compliance=Range3.point(compliance),
    )


def vaccination_measure(
    name: str = "vaccine",
    *,
    doses_per_day: float = 5000.0,
    priority: tuple[int, ...] = (0,),
    uptake: float = 0.8,
    efficacy_infection: float | Range3 = 0.6,
    efficacy_severe: float | Range3 = 0.8,
    days_to_protection: float = 14.0,
    compliance: float = 1.0,
    start: Start | None = None,
    end: End | None = None,
) -> Intervention:
    return Intervention(
        name=name,
        kind="vaccination",
        start=start or Start(kind="date", date=DAY0 + dt.timedelta(days=10)),
        end=end or End(kind="horizon"),
        vaccination=Vaccination(
            doses_per_day=doses_per_day,
            priority=priority,
            uptake_ceiling=uptake,
            efficacy_infection=as_range(efficacy_infection),
            efficacy_severe=as_range(efficacy_severe),
            days_to_protection=days_to_protection,
        ),
        compliance=Range3.point(compliance),
    )


def isolation_measure(
    name: str = "isolation",
    *,
    isolated_share: float = 0.5,
    days_from_onset: float = 1.0,
    compliance: float = 1.0,
    start: Start | None = None,
    end: End | None = None,
) -> Intervention:
    return Intervention(
        name=name,
        kind="isolation",
        start=start or Start(kind="date", date=DAY0),
        end=end or End(kind="horizon"),
        isolation=Isolation(isolated_share=isolated_share, days_from_onset=days_from_onset),
        compliance=Range3.point(compliance),
    )


def scenario(
    name: str,
    interventions: Sequence[str] = (),
    transmissibility: Level = "central",
    severity: Level = "central",
) -> Scenario:
    return Scenario(
        name=name,
        transmissibility_level=transmissibility,
        severity_level=severity,
        interventions=tuple(interventions),
    )


def banded_plan(bands: int = 10, *, horizon: int = 365, **changes: Any) -> Plan:
    """A many-band plan with a rising severity gradient, settings and interventions."""
    pops = tuple(60_000.0 + 5_000.0 * ((3 * i) % 7) for i in range(bands))
    admitted = tuple(
        Range3(low=0.5 * x, central=x, high=min(1.5 * x, 0.5))
        for x in (0.002 * 1.6**i for i in range(bands))
    )
    icu = tuple(Range3(low=0.1, central=0.15 + 0.01 * i, high=0.3) for i in range(bands))
    shares = tuple(
        {"home": 0.3, "school": 0.4 if i < 2 else 0.0, "work": 0.3 if 2 <= i < 7 else 0.0}
        for i in range(bands)
    )
    trigger = contact_measure(
        "distancing",
        kept={"community": 0.4, "work": 0.6, "school": 0.5},
        compliance=0.8,
        start=Start(kind="ward_occupancy", level=0.5),
        end=End(kind="release", level=0.2),
    )
    schools = contact_measure(
        "school closure",
        kept={"school": 0.1},
        compliance=0.9,
        start=Start(kind="date", date=DAY0 + dt.timedelta(days=40)),
        end=End(kind="duration", duration_days=42),
    )
    vaccine = vaccination_measure(
        "vaccine",
        doses_per_day=3000.0,
        priority=tuple(range(bands - 1, -1, -1)),
        start=Start(kind="date", date=DAY0 + dt.timedelta(days=30)),
    )
    isolation = isolation_measure("isolation", isolated_share=0.4, days_from_onset=1.0)
    values: dict[str, Any] = dict(
        populations=pops,
        r0=Range3(low=1.4, central=1.8, high=2.3),
        latent_days=Range3(low=2.0, central=2.5, high=3.0),
        latent_stages=2,
        infectious_days=Range3(low=3.0, central=3.5, high=4.0),
        infectious_stages=2,
        symptomatic_share=tuple(0.5 + 0.03 * i for i in range(bands)),
        rho=0.5,
        susceptibility=tuple(1.2 if i < 2 else 1.0 for i in range(bands)),
        prior_immunity=tuple(0.05 * (i % 3) for i in range(bands)),
        admitted_share=admitted,
        icu_share=icu,
        ward_fatality=tuple(0.01 * (i + 1) for i in range(bands)),
        icu_fatality=tuple(0.1 + 0.03 * i for i in range(bands)),
        onset_to_admission=tuple(4.0 - 0.2 * i for i in range(bands)),
        ward_stay=tuple(5.0 + 0.5 * i for i in range(bands)),
        icu_stay=tuple(8.0 + 0.5 * i for i in range(bands)),
        wait_stages=2,
        mean_daily=tuple(14.0 - 0.8 * i for i in range(bands)),
        assortativity=0.4,
        setting_shares=shares,
        initial_infections=20.0,
        importations=1.0,
        seasonal_amplitude=0.15,
        seasonal_peak=dt.date(2000, 1, 15),
        horizon=horizon,
        interventions=(trigger, schools, vaccine, isolation),
        scenarios=(
            scenario("no measures", (), "central", "central"),
            scenario("all measures", ("distancing", "school closure", "vaccine", "isolation")),
            scenario("severe", ("distancing", "vaccine"), "high", "high"),
        ),
        capacity=make_capacity(
            ward_beds=600, icu_beds=60, surge_ward_beds=150, surge_icu_beds=30
        ),
    )
    values.update(changes)
    return make_plan(**values)


def compiled(plan: Plan, scenario_name: str | None = None, with_interventions: bool = True,
             substeps: int | None = None) -> Any:
    """Compile a scenario of a plan (first scenario by default)."""
    from prepkit.scenarios.runs import compile_scenario

    name = scenario_name or plan.scenarios[0].name
    return compile_scenario(plan, name, with_interventions, substeps=substeps)


def totals(model: Any, states: Any, block: int) -> Any:
    """Per-band totals of a block over time, shape (days + 1, bands)."""
    return model.layout.block_total(states, block)
