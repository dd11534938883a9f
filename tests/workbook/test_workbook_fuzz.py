"""Property tests: a mutated valid workbook reads as a plan or as a located error, never a crash.

The mutations are what planners (and their spreadsheets) do to workbooks:
wrong types, negatives, blanks, huge values, text in number cells, NaN and
infinity, long strings, booleans, formulas, deleted or inserted rows and
columns, deleted or renamed sheets. ``benchmarks/fuzz_workbooks.py`` runs
the same mutations many more times.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import io
import math
import re
import tempfile
import warnings
from dataclasses import dataclass
from pathlib import Path

import openpyxl
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from openpyxl.utils.exceptions import IllegalCharacterError
from openpyxl.workbook.workbook import Workbook

from prepkit.errors import WorkbookError
from prepkit.plan import Contacts, Plan
from prepkit.workbook.reader import read_plan
from prepkit.workbook.template import build_workbook

pytestmark = pytest.mark.slow  # hundreds of mutated workbooks

MUTATION_KINDS = ("set", "set", "set", "set", "swap", "delete_row", "insert_row",
                  "delete_col", "delete_sheet", "rename_sheet")

#: Values planners type, paste or leave behind, good and bad.
SPECIAL_VALUES: tuple[object, ...] = (
    None, "", "   ", "nan", "NaN", "inf", "-inf", "Infinity", "1e999", "-1", "0", "1", "25",
    "25%", "250%", "-5%", "0.25", "1,200", "1,2", "12.5.1", "=A1*2", "=SUM(B5:B9)",
    "#DIV/0!", "#N/A", "2027-01-15", "2027-02-30", "15/01/2027", "x" * 5000, "On a date",
    "Vaccination", "Fewer contacts", "When the level falls to", "Ward occupancy reaches",
    "Central", "High", "0-17", "65+", "18-64", "Item", "Band", "Value", "Central", "Measure",
    "School closure; Vaccine", "Vaccine, Nothing", ";;", True, False, 0, -1, 1, 2.5, 1e308,
    -1e308, 10**15, 0.999999, 1.0000001, float("nan"), float("inf"),
    dt.datetime(2027, 1, 15), dt.datetime(1899, 12, 31), dt.datetime(2300, 1, 1),
    dt.date(2027, 3, 1), dt.time(12, 30),
)

values = st.one_of(
    st.sampled_from(SPECIAL_VALUES),
    st.integers(min_value=-10**12, max_value=10**12),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=40),
    st.booleans(),
    st.datetimes(min_value=dt.datetime(1800, 1, 1), max_value=dt.datetime(2300, 1, 1)),
)


@dataclass(frozen=True)
class Mutation:
    """One change to a workbook: what, on which sheet, where, with what value."""

    kind: str
    sheet: int
    pick: int
    other: int
    value: object


mutations = st.builds(
    Mutation,
    kind=st.sampled_from(MUTATION_KINDS),
    sheet=st.integers(min_value=0, max_value=40),
    pick=st.integers(min_value=0, max_value=10_000),
    other=st.integers(min_value=0, max_value=10_000),
    value=values,
)


def apply_mutation(wb: Workbook, m: Mutation) -> None:
    """Apply one mutation; ones openpyxl itself refuses are skipped."""
    sheets = wb.worksheets
    if not sheets:
        return
    ws = sheets[m.sheet % len(sheets)]
    cells = sorted(ws._cells)
    try:
        if m.kind == "set" and cells:
            row, col = cells[m.pick % len(cells)]
            ws.cell(row, col).value = m.value  # type: ignore[assignment]
        elif m.kind == "swap" and cells:
            a = ws.cell(*cells[m.pick % len(cells)])
            b = ws.cell(*cells[m.other % len(cells)])
            a.value, b.value = b.value, a.value
        elif m.kind == "delete_row":
            ws.delete_rows(1 + m.pick % max(1, ws.max_row), 1 + m.other % 3)
        elif m.kind == "insert_row":
            ws.insert_rows(1 + m.pick % max(1, ws.max_row), 1 + m.other % 3)
        elif m.kind == "delete_col":
            ws.delete_cols(1 + m.pick % max(1, ws.max_column))
        elif m.kind == "delete_sheet" and len(sheets) > 1:
            wb.remove(ws)
        elif m.kind == "rename_sheet":
            ws.title = str(m.value)[:31] or "Sheet"
    except (ValueError, TypeError, KeyError, IndexError, AttributeError,
            IllegalCharacterError):
        pass  # openpyxl refused the mutation (illegal characters, merged cells, bad titles)


def mutated_file(base: bytes, changes: list[Mutation], folder: Path) -> Path | None:
    """The base workbook with the mutations applied, saved in ``folder``."""
    wb = openpyxl.load_workbook(io.BytesIO(base))
    for m in changes:
        apply_mutation(wb, m)
    path = folder / "mutated.xlsx"
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            wb.save(path)
    except (ValueError, TypeError, KeyError, IndexError, AttributeError):
        return None  # openpyxl cannot write this workbook at all; nothing to read
    return path


_CELL = re.compile(r"^[A-Z]{1,3}[1-9]\d*$")


def check_outcome(path: Path) -> Plan | WorkbookError:
    """Read a mutated workbook; assert the outcome is a sound plan or a located error."""
    try:
        plan = read_plan(path)
    except WorkbookError as error:
        assert error.problems
        if error.problems[0].sheet == "" and not _openpyxl_can_load(path):
            return error  # the mutation made openpyxl write a file it cannot read itself
        for p in [*error.problems, *error.warnings]:
            assert p.sheet, str(p)
            assert p.cell == "" or _CELL.match(p.cell), str(p)
            assert p.field and p.expected and p.found, str(p)
            assert p.severity in ("error", "warning")
        assert all(p.severity == "error" for p in error.problems)
        return error
    check_plan_invariants(plan)
    return plan


def _openpyxl_can_load(path: Path) -> bool:
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            openpyxl.load_workbook(path)
    except Exception:  # any failure means the written file is unreadable
        return False
    return True


def check_plan_invariants(plan: Plan) -> None:
    """What the model may rely on in a plan the reader accepted."""
    n = len(plan.bands)
    assert 1 <= n <= 20
    assert plan.bands[0].lower_age == 0
    for prev, nxt in zip(plan.bands, plan.bands[1:], strict=False):
        assert prev.upper_age is not None and nxt.lower_age == prev.upper_age + 1
    d, s = plan.disease, plan.severity
    per_band = (d.symptomatic_share, d.relative_susceptibility, d.prior_immunity,
                s.admitted_share, s.icu_share, s.ward_fatality, s.icu_fatality,
                s.onset_to_admission_days, s.ward_stay_days, s.icu_stay_days)
    assert all(len(values) == n for values in per_band)
    assert sum(x is not None for x in (d.r0, d.doubling_time_days, d.growth_rate_per_day)) == 1
    for a, sym in zip(s.admitted_share, d.symptomatic_share, strict=True):
        assert a.low <= sym.low and a.central <= sym.central and a.high <= sym.high
    c = plan.contacts
    if c.matrices is not None:
        assert all(len(m) == n and all(len(r) == n and min(r) >= 0 for r in m)
                   for m in c.matrices.values())
    else:
        assert c.mean_daily is not None and len(c.mean_daily) == n
        assert c.setting_shares is not None
        assert all(sum(x.values()) <= 1 + 1e-9 for x in c.setting_shares)
    names = {m.name for m in plan.interventions}
    assert len(names) == len(plan.interventions)
    assert plan.scenarios and all(set(sc.interventions) <= names for sc in plan.scenarios)
    for m in plan.interventions:
        if m.vaccination is not None:
            assert all(0 <= i < n for i in m.vaccination.priority)
    for value in _floats(plan):
        assert math.isfinite(value)


def _floats(obj: object) -> list[float]:
    if isinstance(obj, bool):
        return []
    if isinstance(obj, int | float):
        return [float(obj)]
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        return [x for f in dataclasses.fields(obj) for x in _floats(getattr(obj, f.name))]
    if isinstance(obj, tuple | list):
        return [x for item in obj for x in _floats(item)]
    if isinstance(obj, dict):
        return [x for item in obj.values() for x in _floats(item)]
    return []


def base_workbook(plan: Plan) -> bytes:
    """A valid filled workbook as bytes."""
    buffer = io.BytesIO()
    build_workbook(plan).save(buffer)
    return buffer.getvalue()


def _plan() -> Plan:
    from conftest import small_plan

    return small_plan()


def _matrix_plan() -> Plan:
    plan = _plan()
    matrices = {s: ((2.0, 1.0, 0.5), (1.0, 3.0, 1.0), (0.5, 1.0, 1.5))
                for s in ("home", "school", "work", "community")}
    return dataclasses.replace(plan, contacts=Contacts(matrices=matrices))  # type: ignore[arg-type]


_BASE = base_workbook(_plan())
_MATRIX_BASE = base_workbook(_matrix_plan())


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(changes=st.lists(mutations, min_size=1, max_size=5))
def test_mutated_workbook_reads_as_plan_or_located_error(changes: list[Mutation]) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = mutated_file(_BASE, changes, Path(folder))
        if path is not None:
            check_outcome(path)


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(changes=st.lists(mutations, min_size=1, max_size=4))
def test_mutated_matrix_workbook_reads_as_plan_or_located_error(changes: list[Mutation]) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = mutated_file(_MATRIX_BASE, changes, Path(folder))
        if path is not None:
            check_outcome(path)


def test_unmutated_base_workbooks_are_valid(tmp_path: Path) -> None:
    for base in (_BASE, _MATRIX_BASE):
        path = tmp_path / "base.xlsx"
        path.write_bytes(base)
        assert isinstance(check_outcome(path), Plan)
