"""The disease and its hospital pathway: what the Disease, Disease by age and Severity sheets say.

Re-exported by :mod:`prepkit.plan`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from typing import Literal

from prepkit.plan.ranges import Range3

__all__ = ["NO_BED_EXTRA_FATALITY", "Disease", "Severity"]


@dataclass(frozen=True, kw_only=True)
class Disease:
    """Natural history and transmissibility.

    Exactly one of ``r0``, ``doubling_time_days`` and ``growth_rate_per_day``
    is set.

    Attributes
    ----------
    r0 : Range3 or None
        Basic reproduction number [dimensionless].
    doubling_time_days : Range3 or None
        Early-epidemic doubling time [days].
    growth_rate_per_day : Range3 or None
        Early-epidemic exponential growth rate [1/day].
    latent_period_days : Range3
        Mean time from infection to becoming infectious [days].
    latent_stages : int
        Erlang stage count of the latent period.
    infectious_period_days : Range3
        Mean infectious period [days].
    infectious_stages : int
        Erlang stage count of the infectious period.
    symptomatic_share : tuple of Range3
        Per band, share of infections that become symptomatic [fraction].
    asymptomatic_relative_infectiousness : float
        Infectiousness of an asymptomatic case relative to a symptomatic one
        [fraction].
    relative_susceptibility : tuple of float
        Per band, susceptibility relative to the reference [dimensionless].
    prior_immunity : tuple of float
        Per band, share immune at day 0 [fraction].
    seasonal_amplitude : float
        Relative amplitude of seasonal forcing [fraction]; 0 for none.
    seasonal_peak : datetime.date or None
        Date of highest transmissibility; the year is ignored.
    initial_infections : float
        People newly infected at day 0 [persons].
    daily_importations : float
        Infections caught outside the jurisdiction each day [persons/day].
    """

    r0: Range3 | None
    doubling_time_days: Range3 | None
    growth_rate_per_day: Range3 | None
    latent_period_days: Range3
    latent_stages: int
    infectious_period_days: Range3
    infectious_stages: int
    symptomatic_share: tuple[Range3, ...]
    asymptomatic_relative_infectiousness: float
    relative_susceptibility: tuple[float, ...]
    prior_immunity: tuple[float, ...]
    seasonal_amplitude: float = 0.0
    seasonal_peak: dt.date | None = None
    initial_infections: float = 10.0
    daily_importations: float = 0.0

    @property
    def transmissibility_measure(self) -> Literal["r0", "doubling_time", "growth_rate"]:
        """Which of the three transmissibility measures the plan gives."""
        if self.r0 is not None:
            return "r0"
        if self.doubling_time_days is not None:
            return "doubling_time"
        return "growth_rate"


NO_BED_EXTRA_FATALITY: dict[str, float] = {"ward": 0.05, "icu": 0.25}
"""Default added chance of death of a patient without a ward or ICU bed [fraction]: typical
values for planning, to be replaced with the health authority's figures (the workbook's
defaults)."""


@dataclass(frozen=True, kw_only=True)
class Severity:
    """Hospital pathway by band.

    Attributes
    ----------
    admitted_share : tuple of Range3
        Share of infections admitted to hospital [fraction].
    icu_share : tuple of Range3
        Share of admissions that go to ICU [fraction].
    ward_fatality : tuple of float
        Share of ward stays ending in death [fraction].
    icu_fatality : tuple of float
        Share of ICU stays ending in death [fraction].
    onset_to_admission_days : tuple of float
        Mean delay from symptom onset to admission [days].
    ward_stay_days : tuple of Range3
        Mean ward length of stay [days].
    icu_stay_days : tuple of Range3
        Mean ICU length of stay [days].
    admission_delay_stages, ward_stages, icu_stages : int
        Erlang stage counts of the delay and the stays.
    ward_no_bed_extra_fatality, icu_no_bed_extra_fatality : Range3
        Added chance of death of a patient who needs a ward (ICU) bed and
        does not get one, over the usual deaths of such patients [fraction].
    """

    admitted_share: tuple[Range3, ...]
    icu_share: tuple[Range3, ...]
    ward_fatality: tuple[float, ...]
    icu_fatality: tuple[float, ...]
    onset_to_admission_days: tuple[float, ...]
    ward_stay_days: tuple[Range3, ...]
    icu_stay_days: tuple[Range3, ...]
    admission_delay_stages: int = 1
    ward_stages: int = 2
    icu_stages: int = 2
    ward_no_bed_extra_fatality: Range3 = Range3.point(NO_BED_EXTRA_FATALITY["ward"])
    icu_no_bed_extra_fatality: Range3 = Range3.point(NO_BED_EXTRA_FATALITY["icu"])
