"""Workbook fields of the Hospitals and Workforce sheets.

Each declared once; the layout rules are in :mod:`prepkit.workbook.schema`.
"""

from __future__ import annotations

from prepkit.workbook.field_types import Field
from prepkit.workbook.sheets import HOSPITALS, TYPICAL_VALUE, WORKFORCE

SERVICE_FIELDS: tuple[Field, ...] = (
    # ---- Hospitals ----------------------------------------------------------------------
    Field(name="capacity.ward_beds", target="capacity.ward_beds",
          sheet=HOSPITALS, label="Staffed ward beds", unit="beds",
          type="integer", minimum=0, maximum=1_000_000, required=True,
          help="General and acute beds that can be staffed today."),
    Field(name="capacity.icu_beds", target="capacity.icu_beds",
          sheet=HOSPITALS, label="Staffed ICU beds", unit="beds",
          type="integer", minimum=0, maximum=100_000, required=True,
          help="Adult and paediatric intensive care beds that can be staffed today."),
    Field(name="capacity.ventilators", target="capacity.ventilators",
          sheet=HOSPITALS, label="Ventilators", unit="devices",
          type="integer", minimum=0, maximum=100_000,
          help="Optional: mechanical ventilators available to outbreak patients. The pack "
               "compares them with the ICU patients who need one, day by day."),
    Field(name="capacity.ventilated_icu_share", target="capacity.ventilated_icu_share",
          sheet=HOSPITALS,
          label="ICU patients needing a ventilator", unit="%", type="share", default=0.5,
          help="Share of outbreak ICU patients on mechanical ventilation on any day. Default "
               "50%: 7.5% of hospitalised patients need ventilation and 15% need ICU care "
               "(US HHS Pandemic Influenza Plan 2005, Table 1)."),
    Field(name="capacity.ward_baseline_occupancy", target="capacity.ward_baseline_occupancy",
          sheet=HOSPITALS,
          label="Ward beds used by other patients", unit="%", type="share", default=0.85,
          help="Share of ward beds filled by patients without this disease. Default 85%: "
               "above this mean occupancy, the risk of finding no bed for an emergency "
               "admission rises (Bagust, Place & Posnett 1999, BMJ 319:155)."),
    Field(name="capacity.icu_baseline_occupancy", target="capacity.icu_baseline_occupancy",
          sheet=HOSPITALS,
          label="ICU beds used by other patients", unit="%", type="share", default=0.68,
          help="Share of ICU beds filled by other patients. Default 68%, the mean occupancy "
               "of 97 US ICUs in 2005-2007 (Wunsch et al. 2013, Crit Care Med 41:2712)."),
    Field(name="capacity.surge_ward_beds", target="capacity.surge_ward_beds",
          sheet=HOSPITALS, label="Surge ward beds",
          unit="beds", type="integer", minimum=0, maximum=1_000_000, default=0,
          help="Extra ward beds that can be opened under the surge plan."),
    Field(name="capacity.surge_icu_beds", target="capacity.surge_icu_beds",
          sheet=HOSPITALS, label="Surge ICU beds",
          unit="beds", type="integer", minimum=0, maximum=100_000, default=0,
          help="Extra ICU beds that can be opened under the surge plan."),
    Field(name="capacity.surge_days_to_open", target="capacity.surge_days_to_open",
          sheet=HOSPITALS, label="Days to open surge beds",
          unit="days", type="number", minimum=0, maximum=90, default=7.0,
          help="Days from the surge trigger until surge beds can take patients. Default 7: "
               + TYPICAL_VALUE + "."),
    Field(name="capacity.surge_trigger_occupancy", target="capacity.surge_trigger_occupancy",
          sheet=HOSPITALS,
          label="Surge trigger", unit="%", type="share", default=0.85,
          help="When outbreak patients fill this share of the beds available to them, the "
               "surge beds start to open. Default 85%: " + TYPICAL_VALUE + "."),
    Field(name="capacity.catchment_share", target="capacity.catchment_share",
          sheet=HOSPITALS,
          label="Residents' admissions to these hospitals", unit="%", type="share",
          minimum=0.01, default=1.0,
          help="Share of the jurisdiction's hospital patients that these beds receive."),
    # ---- Workforce ----------------------------------------------------------------------
    Field(name="workforce.working_age_min", target="workforce.working_age_min",
          sheet=WORKFORCE, label="Youngest working age",
          unit="years", type="integer", minimum=10, maximum=100, default=18,
          help="Youngest age counted in the workforce. Default 18: " + TYPICAL_VALUE + "."),
    Field(name="workforce.working_age_max", target="workforce.working_age_max",
          sheet=WORKFORCE, label="Oldest working age",
          unit="years", type="integer", minimum=10, maximum=100, default=64,
          help="Oldest age counted in the workforce. Default 64: " + TYPICAL_VALUE + "."),
    Field(name="workforce.employed_share", target="workforce.employed_share",
          sheet=WORKFORCE,
          label="Working-age people in work", unit="%", type="share", default=0.75,
          help="Share of working-age residents in paid work. Default 75%: " + TYPICAL_VALUE
               + "."),
    Field(name="workforce.days_absent_per_illness", target="workforce.days_absent_per_illness",
          sheet=WORKFORCE,
          label="Days off per illness", unit="days", type="number", minimum=0, maximum=60,
          default=5.0, help="Working days lost per symptomatic illness. Default 5: "
                            + TYPICAL_VALUE + "."),
    Field(name="workforce.carer_share_school_closure",
          target="workforce.carer_share_school_closure",
          sheet=WORKFORCE,
          label="Workers caring for children when schools close", unit="%", type="share",
          default=0.1,
          help="Share of workers who must stay home while schools are closed. Default 10%: "
               + TYPICAL_VALUE + "."),
    Field(name="workforce.open_band_width_years", target="workforce.open_band_width_years",
          sheet=WORKFORCE, label="Years spanned by the open top band", unit="years",
          type="integer", minimum=1, maximum=50, default=10,
          help="A top band with no highest age (such as 75+) is counted as this many years "
               "when working out how many of its people are of working age. Default 10: "
               + TYPICAL_VALUE + "."),
)
