"""The beds and the workforce of a plan (see :mod:`prepkit.plan`)."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Capacity", "Workforce"]


@dataclass(frozen=True, kw_only=True)
class Capacity:
    """Hospital beds serving the jurisdiction.

    Attributes
    ----------
    ward_beds, icu_beds : int
        Staffed beds [beds].
    ventilators : int or None
        Ventilators available to outbreak patients [devices], if known.
    ventilated_icu_share : float
        Share of outbreak ICU patients on a ventilator on any day [fraction]
        (the workbook's default when not given).
    ward_baseline_occupancy, icu_baseline_occupancy : float
        Share of beds used by other patients [fraction].
    surge_ward_beds, surge_icu_beds : int
        Extra beds that can be opened [beds].
    surge_days_to_open : float
        Days from the surge trigger until surge beds are usable [days].
    surge_trigger_occupancy : float
        Occupancy share of available beds that triggers opening surge beds
        [fraction].
    catchment_share : float
        Share of the jurisdiction's patients these hospitals receive
        [fraction].
    """

    ward_beds: int
    icu_beds: int
    ventilators: int | None
    ventilated_icu_share: float = 0.5
    ward_baseline_occupancy: float
    icu_baseline_occupancy: float
    surge_ward_beds: int
    surge_icu_beds: int
    surge_days_to_open: float
    surge_trigger_occupancy: float
    catchment_share: float


@dataclass(frozen=True, kw_only=True)
class Workforce:
    """Inputs for workforce absence.

    Attributes
    ----------
    working_age_min, working_age_max : int
        Working ages [years], inclusive.
    employed_share : float
        Share of working-age people in work [fraction].
    days_absent_per_illness : float
        Days off work per symptomatic illness [days].
    carer_share_school_closure : float
        Share of workers who stay home to care for children while schools
        are closed [fraction].
    open_band_width_years : int
        Ages an open top band (no highest age) is taken to span when its
        overlap with the working ages is counted [years] (the workbook's
        default when not given).
    """

    working_age_min: int
    working_age_max: int
    employed_share: float
    days_absent_per_illness: float
    carer_share_school_closure: float
    open_band_width_years: int = 10
