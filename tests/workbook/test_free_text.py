"""Text is text everywhere: every free-text field through every output, unchanged and inert.

The characters below mean something to matplotlib (``$`` mathematics, ``^``,
``_``, ``\\``), HTML (``<``, ``&``, quotes), CSS (``}``, ``;``), Jinja2
(``{{ }}``, ``{% %}``), Excel (a leading ``=``, ``+``, ``-``, ``@``) and CSV
(commas, quotes). Each must come out as the same characters the planner typed.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import json
from pathlib import Path

import matplotlib
import matplotlib.text
import openpyxl
import pytest
from conftest import small_plan
from pypdf import PdfReader

from prepkit.pipeline import run as pipeline
from prepkit.report.style import chart_rcparams
from prepkit.workbook.template import write_workbook

pytestmark = pytest.mark.slow  # renders packs of hostile text

BUDGET = "Budget $5m vs $10m"
TRICKY = {
    "scenario": "=Ward ^peak_ $x$ {{ 1+1 }}",
    "second": "Budget $5m vs $10m: a&b <c>",
    # "$\\closure$" and "$_$" are mathematics matplotlib cannot parse: with mathematics on,
    # drawing them raises ValueError ("Unknown symbol"), which stopped the run.
    "measure": "@School $\\closure$ {% if %} 10% \"quoted\" $_$",
    "jurisdiction": "+Town of {Curly}; x: y } $",
    "title": "Plan -1 & \"test\" $2$",
    "prepared_by": "O'Hara, <team> {{ name }}",
    "description": "Uses $ signs, ^carets^ and _underscores_ {# not a comment #}.",
}


def _flat(text: str) -> str:
    return " ".join(text.split())


@pytest.fixture(scope="module")
def pack(tmp_path_factory: pytest.TempPathFactory) -> Path:
    plan = small_plan()
    old = plan.interventions[0].name
    interventions = (dataclasses.replace(plan.interventions[0], name=TRICKY["measure"]),
                     *plan.interventions[1:])
    names = (TRICKY["scenario"], TRICKY["second"])
    scenarios = tuple(
        dataclasses.replace(
            s, name=names[i], description=TRICKY["description"],
            interventions=tuple(TRICKY["measure"] if n == old else n for n in s.interventions),
        )
        for i, s in enumerate(plan.scenarios)
    )
    plan = dataclasses.replace(
        plan,
        details=dataclasses.replace(
            plan.details, jurisdiction=TRICKY["jurisdiction"], title=TRICKY["title"],
            prepared_by=TRICKY["prepared_by"], draws=12,
        ),
        interventions=interventions, scenarios=scenarios,
    )
    folder = tmp_path_factory.mktemp("free-text")
    workbook = folder / "tricky.xlsx"
    write_workbook(workbook, plan)
    outdir = folder / "pack"
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("SOURCE_DATE_EPOCH", "1700000000")
        mp.setenv("CI", "true")
        pipeline.run_workbook(workbook, pipeline.RunOptions(outdir=outdir, quiet=True),
                              lambda _m: None)
    return outdir


def test_charts_draw_dollar_signs_as_text() -> None:
    # matplotlib reads "$...$" as mathematics unless text.parse_math is off (matplotlib docs,
    # "Writing mathematical expressions"); the pack's chart settings turn it off.
    settings = chart_rcparams()
    assert settings["text.parse_math"] is False and settings["text.usetex"] is False
    with matplotlib.rc_context(settings):
        text = matplotlib.text.Text(text=BUDGET)
        assert text.get_parse_math() is False


def test_pdf_and_html_show_every_text_as_typed(pack: Path) -> None:
    reader = PdfReader(pack / "briefing-pack.pdf")
    squeezed = "".join("".join(p.extract_text() or "" for p in reader.pages).split())
    html = (pack / "briefing-pack.html").read_text(encoding="utf-8")
    for value in TRICKY.values():
        assert "".join(value.split()) in squeezed, value
    # Jinja2 did not evaluate the planner's braces, and HTML special characters are escaped.
    assert "=Ward ^peak_ $x$ {{ 1+1 }}" in html and "=Ward ^peak_ $x$ 2" not in html
    assert "&lt;c&gt;" in html and "<c>" not in html
    assert "&lt;team&gt;" in html


def test_results_workbook_holds_text_not_formulas(pack: Path) -> None:
    book = openpyxl.load_workbook(pack / "results.xlsx")
    found: set[str] = set()
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if isinstance(cell.value, str):
                    assert cell.data_type == "s", (ws.title, cell.coordinate, cell.value)
                    for value in TRICKY.values():
                        if value in cell.value:
                            found.add(value)
    assert {TRICKY["scenario"], TRICKY["second"], TRICKY["measure"],
            TRICKY["jurisdiction"]} <= found


def test_csv_and_json_round_trip_the_text(pack: Path) -> None:
    with (pack / "daily-series.csv").open(encoding="utf-8-sig", newline="") as handle:
        rows = list(csv.reader(handle))
    cells = {cell for row in rows[1:] for cell in row}
    # A leading formula character is neutralised with a quote (OWASP, "CSV Injection");
    # the rest of the text is unchanged.
    assert "'" + TRICKY["scenario"] in cells
    assert TRICKY["second"] in cells
    summary = json.loads((pack / "summary.json").read_text(encoding="utf-8"))
    names = [s["name"] for s in summary["scenarios"]]
    assert names == [TRICKY["scenario"], TRICKY["second"]]
    text = io.StringIO()
    json.dump(summary, text, allow_nan=False)
