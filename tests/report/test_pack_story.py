"""The pack tells one story: one headline per quantity, whole beds, labelled deaths, observations.

Both sample packs are rendered once (the city with a small ensemble, the town
without) and read back from the HTML file, whose structure is exact, and from
the PDF text.
"""

from __future__ import annotations

import csv
import datetime as dt
import json
import re
import shutil
from html.parser import HTMLParser
from pathlib import Path

import openpyxl
import pytest
from scipy import stats

from prepkit.fitting.project import fit_stage
from prepkit.pipeline import run as pipeline
from prepkit.report.observed import consistent_with
from prepkit.report.words.formatting import format_date, format_number
from prepkit.report.words.leader import deaths_note, observed_flag
from prepkit.report.words.scenario_text import bed_shortfall
from prepkit.report.words.views import ScenarioView, scenario_views, with_observations
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.workbook.reader import read_plan

pytestmark = pytest.mark.slow  # renders both samples' packs

SAMPLES = Path(__file__).resolve().parents[2] / "sample_workbooks"
DRAWS = 40


class _Text(HTMLParser):
    """Visible text by section id, and the cells of every table row."""

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[list[str]] = []
        self.row_sections: list[str] = []
        self._row: list[str] | None = None
        self._cell: list[str] | None = None
        self.sections: dict[str, list[str]] = {}
        self._section = "cover"
        self._skip = 0

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        found = dict(attrs)
        if tag in ("style", "script"):
            self._skip += 1
        if tag in ("section", "h2") and found.get("id"):
            self._section = str(found["id"])
        if tag == "tr":
            self._row = []
        if tag in ("td", "th") and self._row is not None:
            self._cell = []

    def handle_endtag(self, tag: str) -> None:
        if tag in ("style", "script"):
            self._skip -= 1
        if tag in ("td", "th") and self._row is not None and self._cell is not None:
            self._row.append(" ".join("".join(self._cell).split()))
            self._cell = None
        if tag == "tr" and self._row is not None:
            self.rows.append(self._row)
            self.row_sections.append(self._section)
            self._row = None

    def handle_data(self, data: str) -> None:
        if self._skip:
            return
        self.sections.setdefault(self._section, []).append(data)
        if self._cell is not None:
            self._cell.append(data)

    def section(self, name: str) -> str:
        return " ".join(" ".join(self.sections.get(name, [])).split())


def _render(workbook: Path, outdir: Path, draws: int) -> _Text:
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("SOURCE_DATE_EPOCH", "1700000000")
        mp.setenv("CI", "true")
        pipeline.run_workbook(workbook, pipeline.RunOptions(outdir=outdir, draws=draws),
                              lambda _message: None)
    parsed = _Text()
    parsed.feed((outdir / "briefing-pack.html").read_text(encoding="utf-8"))
    return parsed


@pytest.fixture(scope="module")
def city(tmp_path_factory: pytest.TempPathFactory) -> tuple[_Text, Path, object]:
    folder = tmp_path_factory.mktemp("story-city")
    workbook = folder / "vellmora_city.xlsx"
    shutil.copyfile(SAMPLES / "vellmora_city.xlsx", workbook)
    projected, _ = fit_stage(read_plan(workbook))  # the plan the pack projected: fitted
    return _render(workbook, folder / "pack", DRAWS), folder / "pack", projected


@pytest.fixture(scope="module")
def town(tmp_path_factory: pytest.TempPathFactory) -> tuple[_Text, Path, object]:
    folder = tmp_path_factory.mktemp("story-town")
    workbook = folder / "tamsett_hollow.xlsx"
    shutil.copyfile(SAMPLES / "tamsett_hollow.xlsx", workbook)
    return _render(workbook, folder / "pack", 0), folder / "pack", read_plan(workbook)


def _views(plan: object, draws: int) -> tuple[tuple[ScenarioView, ...], object]:
    results = run_plan(plan)  # type: ignore[arg-type]
    uncertainty = run_uncertainty(plan, results, draws=draws) if draws else None  # type: ignore[arg-type]
    views = with_observations(plan, scenario_views(plan, results), uncertainty)  # type: ignore[arg-type]
    return views, uncertainty


# ---- One headline -------------------------------------------------------------------------------


def test_each_peak_prints_the_same_number_on_every_page(city: tuple[_Text, Path, object]) -> None:
    parsed, _, plan = city
    views, _ = _views(plan, DRAWS)
    spread = {row[0]: row[1:] for row in parsed.rows if len(row) == 10 and row[0] != "Scenario"}
    assert set(spread) == {v.name for v in views}
    for view in views:
        for kind, offset in (("ward", 0), ("icu", 3)):
            peak = format_number(getattr(view.with_metrics, kind).peak_demand_beds)
            # The uncertainty table puts the central run first, beside median and range ...
            assert spread[view.name][offset] == peak
            # ... and the scenario page and the leader page quote that same run.
            page = parsed.section(f"scenario-{view.number}")
            assert f"peaking at {peak} " in page
        leader = parsed.section("summary")
        ward = view.with_metrics.ward
        if ward.days_over_capacity_days:
            assert f"; peak {format_number(ward.peak_demand_beds)} " in leader


def test_the_policy_is_said_where_the_two_kinds_of_figure_meet(
    city: tuple[_Text, Path, object]
) -> None:
    parsed, _, _ = city
    uncertainty = parsed.section("uncertainty")
    assert "Every figure outside this section comes from the central run" in uncertainty
    assert "Central run Median Range" in " ".join(" ".join(r) for r in parsed.rows)
    assert "central run quoted elsewhere in this pack" in parsed.section("summary")


# ---- Whole beds and people ----------------------------------------------------------------------

_DECIMAL_COUNT = re.compile(
    r"\b\d+\.\d+\s*(?:beds?|ward|ICU|patients|people|persons|admissions|deaths|bed-days|"
    r"available|more)\b"
)


@pytest.mark.parametrize("which", ["city", "town"])
def test_beds_and_people_are_whole_outside_the_methods(
    which: str, request: pytest.FixtureRequest
) -> None:
    parsed, _, _ = request.getfixturevalue(which)
    for name, texts in parsed.sections.items():
        if name in ("methods", "assumptions", "provenance"):
            continue
        text = " ".join(" ".join(texts).split())
        assert not _DECIMAL_COUNT.search(text), (name, _DECIMAL_COUNT.search(text))
    for row, where in zip(parsed.rows, parsed.row_sections, strict=True):
        if where in ("methods", "assumptions", "provenance"):
            continue
        # the fit's tables hold ratios and rates (R, growth per day) beside counts of persons
        counts = "persons" in row[0] or row[-1] in ("Consistent", "Ruled out")
        if where == "local-figures" and not counts:
            continue
        for cell in row[1:]:
            # Table cells of counts: whole numbers, "<1", dashes, dates, chances, percentages.
            if re.fullmatch(r"[\d,.]+", cell):
                assert "." not in cell, row


def test_town_sentences_add_up(town: tuple[_Text, Path, object]) -> None:
    parsed, _, plan = town
    views, _ = _views(plan, 0)
    for view in views:
        bed = view.with_metrics.icu
        if bed.days_over_capacity_days:
            short = bed_shortfall(bed)
            peak = round(bed.peak_demand_beds)
            available = round(bed.available_beds)
            assert short == peak - available
            assert f"peaking at {peak} beds" in parsed.section(f"scenario-{view.number}")


# ---- Deaths say what they are -------------------------------------------------------------------


KINDS_OF_DEATH = ("in hospital care", "when beds run short", "Additional deaths")
"""Every death figure says which it is: in hospital care (as if every patient had a bed) or
additional when beds run short."""


def test_deaths_are_labelled_everywhere(city: tuple[_Text, Path, object]) -> None:
    parsed, outdir, plan = city
    views, uncertainty = _views(plan, DRAWS)
    note = deaths_note(views, uncertainty, plan.severity)  # type: ignore[attr-defined]
    assert "Running short of beds adds" in note and " ".join(note.split()) in parsed.section(
        "summary")
    for row in parsed.rows:
        for cell in row[:1]:
            if "eath" in cell:
                assert any(kind in cell for kind in KINDS_OF_DEATH), cell

    def keys(node: object) -> list[str]:
        if isinstance(node, dict):
            return [k for k in node] + [k2 for v in node.values() for k2 in keys(v)]
        if isinstance(node, list):
            return [k for v in node for k in keys(v)]
        return []

    summary = json.loads((outdir / "summary.json").read_text(encoding="utf-8"))
    death_keys = {k for k in keys(summary) if "death" in k}
    assert death_keys and all("hospital_deaths" in k or "shortage_deaths" in k
                              for k in death_keys), death_keys
    book = openpyxl.load_workbook(outdir / "results.xlsx", read_only=True)
    for ws in book.worksheets:
        for row in ws.iter_rows(max_row=6, values_only=True):
            for value in row:
                if isinstance(value, str) and "eath" in value and "[" in value:
                    assert any(kind in value for kind in KINDS_OF_DEATH), (ws.title, value)
    header = (outdir / "daily-series.csv").read_text(encoding="utf-8").splitlines()[0]
    deaths = [c for c in header.split(",") if "death" in c]
    assert deaths and all("hospital_deaths" in c or "shortage_deaths" in c for c in deaths)


# ---- Observed figures ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("observed", "low", "high", "expected"),
    [
        (5.0, 1.0, 10.0, True),     # inside the range
        # Above: P(X >= 5 | Poisson(2)) = 0.0527 >= 0.05; P(X >= 6 | 2) = 0.0166 < 0.05.
        (5.0, 0.0, 2.0, True),
        (6.0, 0.0, 2.0, False),
        (15.0, 1.0, 2.0, False),
        # Below: P(X <= 1 | Poisson(5)) = 0.0404 < 0.05; P(X <= 2 | 5) = 0.125.
        (1.0, 5.0, 9.0, False),
        (2.0, 5.0, 9.0, True),
    ],
)
def test_consistency_rule_uses_poisson_tails(
    observed: float, low: float, high: float, expected: bool
) -> None:
    # Poisson tail probabilities computed independently with scipy.stats.poisson
    # (the rule itself: common practice, no source).
    assert consistent_with(observed, low, high) is expected
    if observed > high:
        assert bool(stats.poisson.sf(observed - 1, high) >= 0.05) is expected


def test_scenario_pages_compare_with_the_observations(city: tuple[_Text, Path, object]) -> None:
    parsed, _, plan = city
    views, _ = _views(plan, DRAWS)
    flagged = []
    for view in views:
        page = parsed.section(f"scenario-{view.number}")
        assert view.observed_sentence and view.observed_sentence in page
        assert f"Observed on {format_date(view.observed[0].date)}: " in page
        ward = next(c for c in view.observed if c.kind == "ward")
        assert f"this scenario: {format_number(ward.central_beds, words=True)}" in page
        if view.contradicted:
            flagged.append(view.name)
            assert "already lie" in page
    # The city's projections are fitted, so its leader page speaks of the fit: which scenarios
    # the figures rule out as the workbook describes them (the census check of each fitted
    # projection stays on its scenario page).
    leader = parsed.section("summary")
    assert "fitted to local hospital figures up to 7 Feb 2027" in leader
    assert "“Slow spread, mild, isolation only” are already ruled out" in leader
    assert observed_flag(views) not in leader or not observed_flag(views)
    assert not flagged  # fitted to admissions, every projection also fits the ward census


def test_no_observations_no_sentence(town: tuple[_Text, Path, object]) -> None:
    parsed, _, plan = town
    assert not plan.observed  # type: ignore[attr-defined]
    assert "Observed on" not in " ".join(" ".join(t) for t in parsed.sections.values())


# ---- Decisions and dates ------------------------------------------------------------------------

_VERDICT_OPENINGS = {
    "date": "Decide ",
    "too_late": "Too late: ",
    "not_enough": "No date is enough: ",
    "not_needed": "Not needed for beds: ",
    "no_measures": "Nothing to ",
}


def test_the_leader_page_shows_the_decide_by_dates_of_summary_json(
    city: tuple[_Text, Path, object],
) -> None:
    # Every number that appears twice agrees (common practice, no source): the leader's
    # decisions table says each scenario's verdict and date as summary.json and results.xlsx
    # hold them.
    parsed, pack, plan = city
    decisions = json.loads((pack / "summary.json").read_text(encoding="utf-8"))["decisions"]
    rows = [row for row, where in zip(parsed.rows, parsed.row_sections, strict=True)
            if where == "decisions" and len(row) == 4]
    leader = [row for row, where in zip(parsed.rows, parsed.row_sections, strict=True)
              if where == "summary" and row[0] in {s["scenario"] for s in decisions["scenarios"]}]
    by_name = {row[0]: row for row in rows}
    assert "Decisions and dates" in parsed.section("summary").replace("DECISIONS", "Decisions")
    sheet = openpyxl.load_workbook(pack / "results.xlsx", read_only=True)["Decide-by"]
    sheet_rows = {r[0]: r for r in sheet.iter_rows(min_row=4, values_only=True) if r[0]}
    for item in decisions["scenarios"]:
        cell = by_name[item["scenario"]][1]
        assert cell.startswith(_VERDICT_OPENINGS[item["measures_verdict"]]), cell
        latest = item["latest_decision_date"]
        if latest is not None:
            shown = format_date(dt.date.fromisoformat(latest), year=False)
            assert shown in cell
        assert sheet_rows[item["scenario"]][5] == item["measures_verdict"]
        if latest is not None:  # the leader's short cells give the same date
            assert any(shown in " ".join(row) for row in leader if row[0] == item["scenario"])
    assert decisions["ensemble_runs_count"] > len(decisions["scenarios"])
    assert "decide-by.csv" in {p.name for p in pack.iterdir()}


@pytest.mark.parametrize("which", ["city", "town"])
def test_what_runs_short_agrees_with_resources_csv_and_the_bed_metrics(
    which: str, request: pytest.FixtureRequest,
) -> None:
    # Every number that appears twice agrees (common practice, no source): the page's days
    # short are resources.csv's, and its staffed-bed rows are the beds' own days short.
    parsed, pack, _plan = request.getfixturevalue(which)
    summary = json.loads((pack / "summary.json").read_text(encoding="utf-8"))
    with open(pack / "resources.csv", encoding="utf-8-sig", newline="") as handle:
        rows = [r for r in csv.DictReader(handle) if r["variant"] == "with measures"]
    table = [row for row, where in zip(parsed.rows, parsed.row_sections, strict=True)
             if where == "resources"]
    names = [s["name"] for s in summary["scenarios"]]
    conventional = [row for row in table if row and row[0] == "Staffed beds (conventional)"]
    assert len(conventional) == 2  # ward, then ICU
    for kind, row in zip(("ward", "icu"), conventional, strict=True):
        for i, name in enumerate(names):
            days = next(s for s in summary["scenarios"] if s["name"] == name)[
                "with_interventions"][kind]["days_over_capacity_days"]
            listed = next(int(r["days_short_days"]) for r in rows
                          if r["scenario"] == name and r["resource"] == f"{kind}_beds_conventional")
            assert listed == days
            cell = row[2 + i]
            assert cell.startswith(f"{days} days short" if days > 1 else
                                   "1 day short" if days == 1 else "enough"), cell
