"""User-facing guidance cites a published source or says the value is typical.

No text a planner reads (schema help and notes, every cell and input message
of a fresh template and of both sample workbooks, the sample README) may say
"from memory" or "no source"; every default that stands for a fact about the
world names its source or says "typical value; replace with your health
authority's figure". Tests keep their own "from memory" marks.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from pathlib import Path

import openpyxl
import pytest
from openpyxl.workbook.workbook import Workbook

from prepkit.workbook.field_types import Field
from prepkit.workbook.instructions import (
    INSTRUCTIONS_CAUTION,
    INSTRUCTIONS_HOW,
    INSTRUCTIONS_PURPOSE,
    INSTRUCTIONS_TITLE,
    MATRIX_NOTE,
    MATRIX_TITLE,
    NOTE_HELP,
)
from prepkit.workbook.schema import FIELDS, MATRIX_FIELDS, TABLES
from prepkit.workbook.sheets import SHEET_PURPOSE, TYPICAL_VALUE
from prepkit.workbook.template import build_workbook

SAMPLES = Path(__file__).resolve().parents[2] / "sample_workbooks"
FORBIDDEN = ("from memory", "no source")
# "(Author ... 2008, Journal ...)": a parenthesis naming a year.
CITATION = re.compile(r"\([A-Z][^()]*\b(?:19|20)\d{2}\b[^()]*\)")

#: Defaults that are settings or "nothing changes", not figures about the world.
NEUTRAL_DEFAULTS = {
    "details.title": "text of the cover",
    "details.horizon_days": "a run setting",
    "details.draws": "a run setting",
    "details.seed": "a run setting",
    "details.page_size": "a run setting",
    "details.observed_period": "how the planner's figures are kept",
    "fit.method": "a choice",
    "decide_by.within_beds_share": "a policy choice, agreed with the health authority",
    "supplies.gowns_resupply_per_day": "0: no deliveries",
    "supplies.gloves_resupply_per_day": "0: no deliveries",
    "supplies.respirators_resupply_per_day": "0: no deliveries",
    "fit.change_factor": "1: no change",
    "fit.initial_infections_factor": "a run setting: how widely the fit searches",
    "band_contacts.home_share": "0%: the rest are community contacts",
    "band_contacts.school_share": "0%: the rest are community contacts",
    "band_contacts.work_share": "0%: the rest are community contacts",
    "disease.seasonal_amplitude": "0%: no season",
    "disease.daily_importations": "none from outside",
    "band_disease.relative_susceptibility": "1: the same as other bands",
    "band_disease.prior_immunity": "0%: nobody immune",
    "capacity.surge_ward_beds": "none",
    "capacity.surge_icu_beds": "none",
    "capacity.catchment_share": "100%: all residents' patients",
    "measure.start_rule": "a choice",
    "measure.end_rule": "a choice",
    "measure.home_kept": "100%: no change",
    "measure.school_kept": "100%: no change",
    "measure.work_kept": "100%: no change",
    "measure.community_kept": "100%: no change",
    "measure.compliance": "100%: the full effect",
    "scenario.transmissibility_level": "a choice",
    "scenario.severity_level": "a choice",
    "scenario.interventions": "no measures",
    "scenario.description": "no text",
}


def _schema_texts() -> Iterator[tuple[str, str]]:
    for f in (*FIELDS, *MATRIX_FIELDS.values()):
        yield f.name, f.help
    for t in TABLES.values():
        yield f"table {t.name}", t.help
    for sheet, text in SHEET_PURPOSE.items():
        yield f"purpose of {sheet}", text
    yield "note help", NOTE_HELP
    yield "matrix title", MATRIX_TITLE
    yield "matrix note", MATRIX_NOTE
    yield "instructions", " ".join((INSTRUCTIONS_TITLE, INSTRUCTIONS_PURPOSE,
                                    *INSTRUCTIONS_HOW, INSTRUCTIONS_CAUTION))


def _workbook_texts(wb: Workbook) -> Iterator[tuple[str, str]]:
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str):
                    yield f"{ws.title}!{cell.coordinate}", cell.value
        for dv in ws.data_validations.dataValidation:
            for text in (dv.promptTitle, dv.prompt, dv.errorTitle, dv.error):
                if text:
                    yield f"{ws.title} input message {dv.sqref}", text


def _offending(texts: Iterator[tuple[str, str]]) -> list[str]:
    return [f"{where}: {text}" for where, text in texts
            if any(word in text.lower() for word in FORBIDDEN)]


def test_schema_guidance_never_says_from_memory_or_no_source() -> None:
    assert not _offending(_schema_texts())


def test_fresh_template_never_says_from_memory_or_no_source() -> None:
    texts = list(_workbook_texts(build_workbook()))
    assert len(texts) > 100  # the help of every field is among them
    assert not _offending(iter(texts))


@pytest.mark.parametrize("filename", ["vellmora_city.xlsx", "tamsett_hollow.xlsx"])
def test_sample_workbook_cells_never_say_from_memory_or_no_source(filename: str) -> None:
    wb = openpyxl.load_workbook(SAMPLES / filename)
    texts = list(_workbook_texts(wb))
    assert any("Invented" in text for _, text in texts)  # the notes are among them
    assert not _offending(iter(texts))


def test_sample_readme_never_says_from_memory_or_no_source() -> None:
    text = (SAMPLES / "README.md").read_text(encoding="utf-8")
    assert not _offending(iter([("README.md", text)]))


def test_neutral_defaults_are_fields_with_defaults() -> None:
    defaults = {f.name for f in FIELDS if f.default is not None}
    assert set(NEUTRAL_DEFAULTS) <= defaults


@pytest.mark.parametrize(
    "f", [f for f in FIELDS if f.default is not None and f.name not in NEUTRAL_DEFAULTS],
    ids=lambda f: f.name)
def test_every_default_names_its_source_or_says_it_is_typical(f: Field) -> None:
    assert TYPICAL_VALUE in f.help or CITATION.search(f.help), f.help


def test_typical_value_wording_is_the_one_planners_are_told() -> None:
    assert TYPICAL_VALUE == "typical value; replace with your health authority's figure"
    typical = [f.name for f in FIELDS if TYPICAL_VALUE in f.help]
    cited = [f.name for f in FIELDS if f.default is not None and CITATION.search(f.help)]
    # Published sources: Carrat et al. 2008 (share with symptoms), Bagust, Place & Posnett
    # 1999 (ward occupancy), Wunsch et al. 2013 (ICU occupancy), US HHS Pandemic Influenza
    # Plan 2005, Table 1 (share of ICU patients ventilated: 7.5% / 15% of admissions),
    # Institute of Medicine 2012 (crisis space, default none), Hvarfner et al. 2022, PLOS ONE
    # 17:e0249984 (oxygen flow: 3.0 L/min on the ward; 10 L/min, the WHO estimate it quotes),
    # Johns Hopkins Center for Health Security 2020 (20 gown and 170 glove changes per ICU
    # patient-day).
    assert set(cited) == {"band_disease.symptomatic_share", "capacity.ward_baseline_occupancy",
                          "capacity.icu_baseline_occupancy", "capacity.ventilated_icu_share",
                          "capacity.crisis_ward_beds", "capacity.crisis_icu_beds",
                          "supplies.ward_oxygen_lpm", "supplies.icu_oxygen_lpm",
                          "supplies.gowns_icu_per_patient_day",
                          "supplies.gloves_icu_per_patient_day"}
    assert len(typical) >= 15
