"""The beds and the workforce of a plan (see :mod:`prepkit.plan`)."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["STOCK_ITEMS", "Capacity", "StockItem", "Supplies", "Workforce"]


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
    crisis_ward_beds, crisis_icu_beds : int
        Further beds that crisis care could set up in space not built for
        patients, beyond the surge beds [beds] (Institute of Medicine 2012,
        Crisis Standards of Care); opened on the surge beds' schedule.
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
    crisis_ward_beds: int = 0
    crisis_icu_beds: int = 0


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


#: Items of personal protective equipment the plan follows, in the order of every table.
STOCK_ITEMS: tuple[str, ...] = ("gowns", "gloves", "respirators")

#: Items used per ward and per ICU patient-day [items per patient-day]. ICU gowns and glove
#: pairs: Johns Hopkins Center for Health Security (2020), Assumptions of US PPE needs for
#: COVID-19 (20 gown changes and 170 glove changes per ICU patient-day); ICU respirators and
#: every ward figure: typical values, to be replaced.
PPE_PER_PATIENT_DAY: dict[str, tuple[float, float]] = {
    "gowns": (10.0, 20.0), "gloves": (80.0, 170.0), "respirators": (5.0, 10.0),
}
assert tuple(PPE_PER_PATIENT_DAY) == STOCK_ITEMS

#: Patients per nurse and per doctor, ward and ICU [patients per person] (typical values).
WARD_PATIENTS_PER_NURSE = 5.0
ICU_PATIENTS_PER_NURSE = 1.0
WARD_PATIENTS_PER_DOCTOR = 15.0
ICU_PATIENTS_PER_DOCTOR = 8.0

#: Oxygen flow per patient on oxygen [litres per minute] (Hvarfner et al. 2022, PLOS ONE
#: 17:e0249984: mean 3.0 L/min to ward patients on oxygen; 10 L/min the World Health
#: Organization's estimate for severe patients, which the paper quotes).
WARD_OXYGEN_LPM = 3.0
ICU_OXYGEN_LPM = 10.0

#: Mean days a body stays in the mortuary before release [days] (typical value).
MORTUARY_DAYS = 7.0


@dataclass(frozen=True, kw_only=True)
class StockItem:
    """One item of personal protective equipment: use per patient-day, stock and resupply.

    Attributes
    ----------
    ward_per_patient_day, icu_per_patient_day : float
        Items used per outbreak patient-day on a ward and in ICU [items per
        patient-day].
    stock : float or None
        Items in stock on day 0 [items]; None when not known (not compared).
    resupply_per_day : float
        Items delivered each day [items per day].
    """

    ward_per_patient_day: float
    icu_per_patient_day: float
    stock: float | None = None
    resupply_per_day: float = 0.0


@dataclass(frozen=True, kw_only=True)
class Supplies:
    """Staff, oxygen, protective equipment and mortuary spaces (the Staff and supplies sheet).

    The defaults are the constants above, which the workbook's fields
    (:mod:`prepkit.workbook.fields_supplies`) show with their sources.

    Attributes
    ----------
    ward_nurses, icu_nurses, ward_doctors, icu_doctors : float or None
        Staff on duty per shift when none are absent [persons]; None means
        exactly as many as the staffed beds need at the ratios below.
    ward_patients_per_nurse, icu_patients_per_nurse : float
        Patients one nurse looks after [patients per nurse].
    ward_patients_per_doctor, icu_patients_per_doctor : float
        Patients one doctor looks after [patients per doctor].
    ward_oxygen_share, icu_oxygen_share : float
        Share of outbreak ward and ICU patients on oxygen [fraction].
    ward_oxygen_lpm, icu_oxygen_lpm : float
        Oxygen flow per patient on oxygen [litres per minute].
    oxygen_supply_lpm : float or None
        Oxygen flow the site can deliver to outbreak patients [litres per
        minute]; None when not known (not compared).
    gowns_ward_per_patient_day, gowns_icu_per_patient_day : float
        Gowns used per outbreak patient-day [items per patient-day]; the
        same four fields for ``gloves`` and ``respirators``.
    gowns_stock : float or None
        Gowns in stock on day 0 [items]; None when not known (not compared).
    gowns_resupply_per_day : float
        Gowns delivered each day [items per day].
    mortuary_spaces : int or None
        Spaces for the bodies of outbreak patients who die in these
        hospitals [spaces]; None when not known (not compared).
    mortuary_days : float
        Days a body stays before release [days].
    """

    ward_nurses: float | None = None
    icu_nurses: float | None = None
    ward_doctors: float | None = None
    icu_doctors: float | None = None
    ward_patients_per_nurse: float = WARD_PATIENTS_PER_NURSE
    icu_patients_per_nurse: float = ICU_PATIENTS_PER_NURSE
    ward_patients_per_doctor: float = WARD_PATIENTS_PER_DOCTOR
    icu_patients_per_doctor: float = ICU_PATIENTS_PER_DOCTOR
    ward_oxygen_share: float = 1.0
    icu_oxygen_share: float = 1.0
    ward_oxygen_lpm: float = WARD_OXYGEN_LPM
    icu_oxygen_lpm: float = ICU_OXYGEN_LPM
    oxygen_supply_lpm: float | None = None
    gowns_ward_per_patient_day: float = PPE_PER_PATIENT_DAY["gowns"][0]
    gowns_icu_per_patient_day: float = PPE_PER_PATIENT_DAY["gowns"][1]
    gowns_stock: float | None = None
    gowns_resupply_per_day: float = 0.0
    gloves_ward_per_patient_day: float = PPE_PER_PATIENT_DAY["gloves"][0]
    gloves_icu_per_patient_day: float = PPE_PER_PATIENT_DAY["gloves"][1]
    gloves_stock: float | None = None
    gloves_resupply_per_day: float = 0.0
    respirators_ward_per_patient_day: float = PPE_PER_PATIENT_DAY["respirators"][0]
    respirators_icu_per_patient_day: float = PPE_PER_PATIENT_DAY["respirators"][1]
    respirators_stock: float | None = None
    respirators_resupply_per_day: float = 0.0
    mortuary_spaces: int | None = None
    mortuary_days: float = MORTUARY_DAYS

    def stock_item(self, name: str) -> StockItem:
        """One of :data:`STOCK_ITEMS` with its use, stock and resupply."""
        return StockItem(
            ward_per_patient_day=getattr(self, f"{name}_ward_per_patient_day"),
            icu_per_patient_day=getattr(self, f"{name}_icu_per_patient_day"),
            stock=getattr(self, f"{name}_stock"),
            resupply_per_day=getattr(self, f"{name}_resupply_per_day"),
        )
