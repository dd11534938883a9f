"""Mutations that move workbook inputs across their documented ranges.

The reader fuzzer (``benchmarks/fuzz_workbooks.py``) breaks cells; most of
its workbooks never reach the model. The mutations here keep the layout and
put legal-looking values into the input cells instead, so that most mutated
workbooks still read as plans and go on to the model:

* every input cell of a base workbook is found from the schema
  (``prepkit/workbook/schema.py``): item rows by their label, table columns
  by their header text, contact-matrix cells by their band labels;
* a number goes to its schema range: the minimum, the maximum, a value
  drawn evenly or log-evenly between them, or the base value scaled by up
  to four either way (for a field without a maximum, the range is taken up
  to ten times the base value); shares are fractions in [0, 1] unless the
  schema says otherwise;
* an uncertain input gets one of its Low, Central or High cells moved, or
  all three set to sorted values of its range, or Low and High blanked;
* a choice cell gets any of its choices, a date cell a date from 30 days
  before day 0 to 30 days after the horizon [days];
* the transmissibility measure is switched (R0, doubling time, growth rate).

Every change is a ``Mutation(kind="set")`` of ``tests/workbook/test_workbook_fuzz.py``
aimed at the cell's place in the base workbook, applied before any layout
breaking mutation, so :func:`test_workbook_fuzz.mutated_file` applies both.
"""

from __future__ import annotations

import datetime as dt
import functools
import io
import math
import random
from dataclasses import dataclass, field
from pathlib import Path

import openpyxl
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.worksheet import Worksheet
from test_workbook_fuzz import Mutation

from prepkit.plan import Level
from prepkit.workbook import schema
from prepkit.workbook.field_types import Field
from prepkit.workbook.schema import normalise_header
from prepkit.workbook.sheets import (
    BAND_HEADER,
    CENTRAL_HEADER,
    HIGH_HEADER,
    ITEM_HEADER,
    LOW_HEADER,
    MATRIX_SHEETS,
    PLAN,
    VALUE_HEADER,
)

NUMERIC_TYPES = ("integer", "number", "share")
MUTABLE_TYPES = (*NUMERIC_TYPES, "date", "choice")
DATE_MARGIN_DAYS = 30
"""Dates are drawn from this many days before day 0 to as many after the horizon [days]."""
LEVELS: tuple[Level, ...] = ("low", "central", "high")
OPEN_RANGE_FACTOR = 10.0
"""A field without a schema maximum is moved up to this multiple of its base value."""


@dataclass(frozen=True)
class Target:
    """One input cell of a base workbook.

    Attributes
    ----------
    sheet : str
        Sheet name.
    sheet_index : int
        Position of the sheet in the workbook.
    pick : int
        Position of the cell in the sorted cells of its sheet (what
        :class:`Mutation` ``pick`` addresses).
    ref : str
        Cell reference, e.g. ``"D7"``.
    field : Field
        The schema field.
    level : {"low", "central", "high"}
        Column of an uncertain field ("central" for the rest).
    key : str
        Band, measure, scenario or matrix cell the row belongs to ("" for items).
    current : object
        Value in the base workbook.
    """

    sheet: str
    sheet_index: int
    pick: int
    ref: str
    field: Field
    level: Level
    key: str
    current: object


@dataclass(frozen=True)
class Base:
    """A valid base workbook and its input cells grouped by field and row."""

    name: str
    data: bytes
    day0: dt.date
    horizon_days: int
    groups: dict[tuple[str, str], dict[Level, Target]]
    by_field: dict[str, list[tuple[str, str]]] = field(default_factory=dict)


@dataclass(frozen=True)
class Change:
    """One mutation and what it does, in words."""

    mutation: Mutation
    text: str
    tag: str = ""
    """``field=kind`` of a range mutation (kind: min, max, inside, blank, choice, date)."""


def load_base(name: str, data: bytes) -> Base:
    """Find every input cell of a valid workbook (read once per base)."""
    wb = openpyxl.load_workbook(io.BytesIO(data))
    groups: dict[tuple[str, str], dict[Level, Target]] = {}
    for index, ws in enumerate(wb.worksheets):
        picks = {rc: i for i, rc in enumerate(sorted(ws._cells))}
        for (row, col), f, level, key in _input_cells(ws):
            if (row, col) not in picks:
                continue  # a cell openpyxl does not hold would shift every pick after it
            target = Target(sheet=ws.title, sheet_index=index, pick=picks[row, col],
                            ref=f"{get_column_letter(col)}{row}", field=f, level=level, key=key,
                            current=ws.cell(row, col).value)
            groups.setdefault((f.name, key), {})[level] = target
    by_field: dict[str, list[tuple[str, str]]] = {}
    for name_key in groups:
        by_field.setdefault(name_key[0], []).append(name_key)
    plan_sheet = wb[PLAN]
    values = {_text(plan_sheet.cell(r, 1).value): plan_sheet.cell(r, 2).value
              for r in range(1, plan_sheet.max_row + 1)}
    day0 = values.get(_text(schema.FIELDS_BY_NAME["details.day0"].label))
    horizon = values.get(_text(schema.FIELDS_BY_NAME["details.horizon_days"].label))
    return Base(name=name, data=data,
                day0=day0.date() if isinstance(day0, dt.datetime) else dt.date(2027, 1, 4),
                horizon_days=int(horizon) if isinstance(horizon, int | float) else 365,
                groups=groups, by_field=by_field)


def _text(value: object) -> str:
    return normalise_header(value) if isinstance(value, str) else ""


def _input_cells(ws: Worksheet) -> list[tuple[tuple[int, int], Field, Level, str]]:
    texts = {rc: _text(cell.value) for rc, cell in ws._cells.items() if _text(cell.value)}
    by_row: dict[int, dict[int, str]] = {}
    for (row, col), text in texts.items():
        by_row.setdefault(row, {})[col] = text
    if ws.title in MATRIX_SHEETS.values():
        return _matrix_cells(ws, by_row)
    return [*_item_cells(ws, by_row), *_table_cells(ws, by_row)]


def _item_cells(ws: Worksheet, by_row: dict[int, dict[int, str]]
                ) -> list[tuple[tuple[int, int], Field, Level, str]]:
    fields = [f for f in schema.sheet_fields(ws.title) if f.type in MUTABLE_TYPES]
    heads = {_text(VALUE_HEADER): "central", _text(CENTRAL_HEADER): "central",
             _text(LOW_HEADER): "low", _text(HIGH_HEADER): "high"}
    for row in sorted(by_row):
        texts = by_row[row]
        item_col = next((c for c, t in sorted(texts.items()) if t == _text(ITEM_HEADER)),
                        None)
        if item_col is None:
            continue
        cols: dict[Level, int] = {}
        for c, t in sorted(texts.items()):
            if c > item_col and t in heads and heads[t] not in cols:
                cols[heads[t]] = c  # type: ignore[index]
        labels = {by_row[r].get(item_col, ""): r for r in by_row if r > row}
        out = []
        for f in fields:
            r = labels.get(_text(f.label))
            if r is not None:
                levels = LEVELS if f.uncertain else LEVELS[1:2]
                out += [((r, cols[lv]), f, lv, "") for lv in levels if lv in cols]
        return out
    return []


def _table_cells(ws: Worksheet, by_row: dict[int, dict[int, str]]
                 ) -> list[tuple[tuple[int, int], Field, Level, str]]:
    out = []
    for table in schema.TABLES.values():
        if table.sheet != ws.title:
            continue
        headings = {_text(schema.header_text(f, lv)): (f, lv)
                    for f, lv in schema.table_columns(table.name)}
        key = schema.FIELDS_BY_NAME[table.key]
        best: tuple[int, dict[int, tuple[Field, Level]]] | None = None
        for row, texts in sorted(by_row.items()):
            cols = {c: headings[t] for c, t in texts.items() if t in headings}
            if any(f is key for f, _ in cols.values()) and (best is None
                                                               or len(cols) > len(best[1])):
                best = (row, cols)
        if best is None:
            continue
        header_row, cols = best
        key_col = next(c for c, (f, _) in cols.items() if f is key)
        for row in range(header_row + 1, ws.max_row + 1):
            name = ws.cell(row, key_col).value
            if name is None or name == "":
                continue
            for col, (f, level) in cols.items():
                if f.type in MUTABLE_TYPES:
                    out.append(((row, col), f, level, str(name)))
    return out


def _matrix_cells(ws: Worksheet, by_row: dict[int, dict[int, str]]
                  ) -> list[tuple[tuple[int, int], Field, Level, str]]:
    setting = next(s for s, sheet in MATRIX_SHEETS.items() if sheet == ws.title)
    f = schema.MATRIX_FIELDS[setting]
    band = _text(BAND_HEADER)
    for row, texts in sorted(by_row.items()):
        band_col = next((c for c, t in texts.items() if t == band), None)
        if band_col is None:
            continue
        columns = {c: ws.cell(row, c).value for c in texts if c > band_col}
        out: list[tuple[tuple[int, int], Field, Level, str]] = []
        for r in range(row + 1, ws.max_row + 1):
            label = ws.cell(r, band_col).value
            for c, other in columns.items():
                value = ws.cell(r, c).value
                if label and isinstance(value, int | float) and not isinstance(value, bool):
                    out.append(((r, c), f, "central", f"{label} meets {other}"))
        return out
    return []


# ---- values ---------------------------------------------------------------------------------

def bounds(f: Field, current: object) -> tuple[float, float]:
    """Documented range of a numeric field [its internal unit]; see the module docstring."""
    lo = f.minimum if f.minimum is not None else 0.0
    if f.maximum is not None:
        hi = f.maximum
    elif f.type == "share":
        hi = 1.0
    else:
        base = abs(float(current)) if isinstance(current, int | float) else 0.0
        hi = max(OPEN_RANGE_FACTOR * base, OPEN_RANGE_FACTOR, lo)
    return float(lo), float(hi)


def range_value(rng: random.Random, f: Field, current: object) -> tuple[float | int, str]:
    """A value of a numeric field inside its range, and which part of the range it is."""
    lo, hi = bounds(f, current)
    pick = rng.random()
    kind = "inside"
    if pick < 0.15:
        x, kind = lo, "min"
    elif pick < 0.30:
        x, kind = hi, "max"
    elif pick < 0.55:
        x = rng.uniform(lo, hi)
    elif pick < 0.80 or not isinstance(current, int | float) or current <= 0:
        floor = lo if lo > 0 else max(hi * 1e-6, 1e-9)
        x = math.exp(rng.uniform(math.log(floor), math.log(hi)))
    else:
        x = min(hi, max(lo, float(current) * 2 ** rng.uniform(-2, 2)))
    value: float | int = x
    if f.type == "integer":
        value = max(math.ceil(lo), min(math.floor(hi), round(x)))
    return value, "min" if value == lo else "max" if value == hi else kind


def cell_value(rng: random.Random, target: Target, base: Base) -> tuple[object, str]:
    """A legal-looking value for one input cell, and its kind."""
    f = target.field
    if f.type == "choice":
        return rng.choice(list(f.choices or {})), "choice"
    if f.type == "date":
        if f.name == "details.day0":
            day = base.day0 + dt.timedelta(days=rng.randint(-60, 60))
        else:
            day = base.day0 + dt.timedelta(
                days=rng.randint(-DATE_MARGIN_DAYS, base.horizon_days + DATE_MARGIN_DAYS))
        return dt.datetime.combine(day, dt.time()), "date"
    return range_value(rng, f, target.current)


def _set(target: Target, value: object, tag: str) -> Change:
    where = f"{target.sheet}!{target.ref}"
    what = target.field.label + ("" if target.level == "central" or not target.field.uncertain
                                 else f", {target.level}")
    row = f" [{target.key}]" if target.key else ""
    shown = value.date().isoformat() if isinstance(value, dt.datetime) else repr(value)
    return Change(
        mutation=Mutation(kind="set", sheet=target.sheet_index, pick=target.pick, other=0,
                          value=value),
        text=f"{where} {what}{row} = {shown} ({tag})",
        tag=f"{target.field.name}={tag}",
    )


def range_changes(rng: random.Random, base: Base) -> list[Change]:
    """One range mutation of a random input (a field first, then one of its rows)."""
    name = rng.choice(sorted(base.by_field))
    if name in schema.TRANSMISSIBILITY_FIELDS and rng.random() < 0.3:
        return _switch_measure(rng, base)
    group = base.groups[rng.choice(base.by_field[name])]
    if len(group) == 3 and rng.random() < 0.6:
        if rng.random() < 0.2:
            return [_set(group[lv], None, "blank") for lv in LEVELS if lv != "central"]
        return _triple(rng, base, group)
    target = group[rng.choice(sorted(group))]
    value, tag = cell_value(rng, target, base)
    return [_set(target, value, tag)]


def _triple(rng: random.Random, base: Base, group: dict[Level, Target]) -> list[Change]:
    drawn = [cell_value(rng, group[lv], base) for lv in LEVELS]
    drawn.sort(key=lambda item: float(item[0]))  # type: ignore[arg-type]
    return [_set(group[lv], value, tag) for lv, (value, tag) in zip(LEVELS, drawn, strict=True)]


def _switch_measure(rng: random.Random, base: Base) -> list[Change]:
    present = [n for n in schema.TRANSMISSIBILITY_FIELDS if (n, "") in base.groups]
    if len(present) < 2:
        return []
    chosen = rng.choice(present)
    out = [_set(t, None, "blank") for n in present if n != chosen
           for t in base.groups[n, ""].values()]
    return out + _triple(rng, base, base.groups[chosen, ""])


@functools.cache
def load_bases(names: tuple[str, ...], folder: Path) -> tuple[Base, ...]:
    """The named base workbooks: ``*.xlsx`` files of ``folder`` or fixture plans of the tests."""
    from test_workbook_fuzz import _matrix_plan, _plan, base_workbook

    makers = {"small_plan": lambda: base_workbook(_plan()),
              "small_matrix_plan": lambda: base_workbook(_matrix_plan())}
    out = []
    for name in names:
        data = makers[name]() if name in makers else (folder / f"{name}.xlsx").read_bytes()
        out.append(load_base(name, data))
    return tuple(out)
