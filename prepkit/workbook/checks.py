"""Checks across fields, rows and sheets, run once every input has been read."""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping
from dataclasses import dataclass

from prepkit.workbook import schema, validate, validate_measures, validate_observed
from prepkit.workbook.cells import Got, Key, TableRow, normalise_key
from prepkit.workbook.load import Grid
from prepkit.workbook.matrices import Matrix, MatrixReader
from prepkit.workbook.schema import FIELDS_BY_NAME, TABLES
from prepkit.workbook.sheets import POPULATION, SCENARIOS

__all__ = ["Checked", "CrossChecks"]


@dataclass(frozen=True)
class Checked:
    """What the plan is built from once every check has passed."""

    bands: list[TableRow]
    per_band: dict[str, Mapping[str, TableRow]]
    matrices: dict[str, Matrix] | None


class CrossChecks(MatrixReader):
    """A reader's inputs (items and table rows) and the checks across them."""

    def __init__(self, book: dict[str, Grid], other_sheets: Mapping[str, str]) -> None:
        super().__init__(book, other_sheets)
        self.items: dict[Key, Got] = {}
        self.tables: dict[str, list[TableRow]] = {name: [] for name in TABLES}
        self.table_found: dict[str, bool] = {name: False for name in TABLES}
        self.empty_cells: dict[str, str] = {name: "" for name in TABLES}

    def check(self) -> Checked | None:
        """Run every check across fields, rows and sheets; None when an error stops the plan."""
        items = self.items
        self.problems += validate.check_levels(items)
        for rows in self.tables.values():
            for row in rows:
                self.problems += validate.check_levels(row.gots)
        self.problems += validate.check_transmissibility(items)
        self.problems += validate.check_working_ages(items)
        self.problems += validate.check_seasonal_peak(items)

        band_rows: list[TableRow] = []
        bands: list[str] | None = None
        if self.table_found["bands"]:
            found, band_rows = validate.check_bands(
                self.tables["bands"], self.empty_cells["bands"], self.title(POPULATION))
            self.problems += found
            # Labels good enough to match the per-band tables and matrices by, even when
            # the ages have problems: every problem is then found in one pass.
            keys = [normalise_key(row.key) for row in band_rows]
            if (all(keys) and len(set(keys)) == len(keys)
                    and len(keys) <= schema.MAX_BANDS):
                bands = [row.key for row in band_rows]
        per_band: dict[str, Mapping[str, TableRow]] = {}
        matrices = self.read_matrices(bands)
        for table in ("band_contacts", "band_disease", "band_severity"):
            if table == "band_contacts" and self.matrices_intended:
                if any(not g.blank for row in self.tables[table] for (name, _), g in
                       row.gots.items() if name != TABLES[table].key):
                    first = self.tables[table][0]
                    self.report(first.sheet, first.key_cell,
                                FIELDS_BY_NAME["band_contacts.mean_daily"].label,
                                "blank simple contacts when the contact-matrix sheets are "
                                "filled (the matrices are used)", "numbers in the table",
                                warning=True)
                continue
            if bands is None or not self.table_found[table]:
                continue
            found_rows, by_band = validate.check_band_rows(
                self.tables[table], bands, TABLES[table].key, self.empty_cells[table],
                self.title(TABLES[table].sheet))
            self.problems += found_rows
            per_band[table] = by_band
        if "band_contacts" in per_band:
            contact_rows = list(per_band["band_contacts"].values())
            self.problems += validate.check_setting_shares(contact_rows)
            self.problems += validate.check_daily_contacts(contact_rows)
        if "band_severity" in per_band and "band_disease" in per_band:
            self.problems += validate.check_admitted_vs_symptomatic(
                per_band["band_severity"], per_band["band_disease"])
        day0 = items[("details.day0", "central")].value
        horizon = items[("details.horizon_days", "central")].value
        measure_rows = self.tables["measures"]
        self.problems += validate_measures.check_measures(
            measure_rows, bands,
            day0 if isinstance(day0, dt.date) else None,
            horizon if isinstance(horizon, int) else None)
        measure_names = [row.key for row in measure_rows if row.key]
        if self.table_found["scenarios"]:
            self.problems += validate_measures.check_scenarios(
                self.tables["scenarios"], measure_names, self.empty_cells["scenarios"],
                self.title(SCENARIOS))
        self.problems += validate_observed.check_observed(
            self.tables["observed"], items,
            day0 if isinstance(day0, dt.date) else None,
            horizon if isinstance(horizon, int) else None)
        if self.errors or bands is None:
            return None
        return Checked(bands=band_rows, per_band=per_band, matrices=matrices)


# ---- Helpers ---------------------------------------------------------------------------------
