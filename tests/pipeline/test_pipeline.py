"""The orchestrator end to end: both sample packs, hostile text, kills, broken workbooks.

The two sample packs are rendered once per session (Vellmora through ``prepkit
demo`` with a small uncertainty ensemble, Tamsett Hollow through ``prepkit
run`` without one) and shared by the tests that read them. Numbers in the
PDF are checked against the engine's metrics formatted by the same functions
the pack uses.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
import uuid
import zlib
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import openpyxl
import pytest
from conftest import Editor, small_plan
from pypdf import PdfReader
from pypdf.generic import ArrayObject, DictionaryObject

from prepkit import errors
from prepkit.cli.env import in_ci
from prepkit.cli.main import main
from prepkit.errors import InputChangedError
from prepkit.fitting.project import fit_stage
from prepkit.pipeline import demo, progress
from prepkit.pipeline import jobs as pipeline_jobs
from prepkit.pipeline import pack as pipeline_pack
from prepkit.pipeline import run as pipeline
from prepkit.pipeline.manifest import read_manifest, verify_pack
from prepkit.pipeline.outputs import MANIFEST_NAME, PAUSE_ENV
from prepkit.report.words.assumptions import assumption_groups
from prepkit.report.words.comparison import comparison_tables, transmissibility_rows
from prepkit.report.words.leader import (
    CAUTION_LINE,
    DECISIONS_LINE,
    bottom_line,
    certainty_sentences,
    headline_measures_text,
    measures_headline,
)
from prepkit.report.words.limitations import limitations
from prepkit.report.words.views import ScenarioView, brief_cells, scenario_views
from prepkit.scenarios.runs import run_plan
from prepkit.workbook.reader import read_plan
from prepkit.workbook.template import write_workbook

pytestmark = pytest.mark.slow  # renders whole packs

EPOCH = "1700000000"
SAMPLES = Path(__file__).resolve().parents[2] / "sample_workbooks"
ENSEMBLE_DRAWS = 40


def flat(text: str) -> str:
    """Text with every run of whitespace made one space (PDF lines wrap anywhere)."""
    return " ".join(text.split())


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@dataclasses.dataclass
class Rendered:
    workbook: Path
    outdir: Path
    report: str
    messages: list[str]
    digest_before: str
    plan: Any
    results: Any
    pages: list[str]
    reader: PdfReader

    @property
    def text(self) -> str:
        return flat("\n".join(self.pages))

    @property
    def views(self) -> tuple[ScenarioView, ...]:
        return scenario_views(self.plan, self.results)


def _rendered(workbook: Path, outdir: Path, report: str, messages: list[str], before: str
              ) -> Rendered:
    plan, _ = fit_stage(read_plan(workbook))  # the plan the pack projected (fitted if it can be)
    reader = PdfReader(outdir / "briefing-pack.pdf")
    return Rendered(
        workbook=workbook, outdir=outdir, report=report, messages=messages, digest_before=before,
        plan=plan, results=run_plan(plan), pages=[p.extract_text() or "" for p in reader.pages],
        reader=reader,
    )


@pytest.fixture(scope="session")
def vellmora(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Rendered]:
    """The city pack, made by ``run_demo`` with a small ensemble (A4)."""
    outdir = tmp_path_factory.mktemp("vellmora") / "demo"
    messages: list[str] = []
    source = demo.sample_workbook()
    before = sha(source)
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("SOURCE_DATE_EPOCH", EPOCH)
        mp.delenv("CI", raising=False)
        report = demo.run_demo(
            pipeline.RunOptions(outdir=outdir, draws=ENSEMBLE_DRAWS), messages.append
        )
    yield _rendered(source, outdir, report, messages, before)


@pytest.fixture(scope="session")
def tamsett(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Rendered]:
    """The town pack, made by ``run_workbook`` without an ensemble (Letter)."""
    folder = tmp_path_factory.mktemp("tamsett")
    workbook = folder / "tamsett_hollow.xlsx"
    shutil.copyfile(SAMPLES / "tamsett_hollow.xlsx", workbook)
    before = sha(workbook)
    messages: list[str] = []
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("SOURCE_DATE_EPOCH", EPOCH)
        report = pipeline.run_workbook(
            workbook, pipeline.RunOptions(outdir=None, draws=0, quiet=True,
                                          summary_json=folder / "out" / "summary.json"),
            messages.append,
        )
    yield _rendered(workbook, folder / "tamsett_hollow-pack", report, messages, before)


PACKS = ["vellmora", "tamsett"]


@pytest.fixture(params=PACKS)
def pack(request: pytest.FixtureRequest) -> Rendered:
    value: Rendered = request.getfixturevalue(request.param)
    return value


# ---- Files --------------------------------------------------------------------------------------


def test_pack_holds_every_file_and_its_manifest(pack: Rendered) -> None:
    names = {p.relative_to(pack.outdir).as_posix() for p in pack.outdir.rglob("*") if p.is_file()}
    expected = {
        "briefing-pack.pdf", "briefing-pack.html", "results.xlsx", "daily-series.csv",
        "daily-series-columns.csv", "summary.json", MANIFEST_NAME,
    }
    assert expected <= names
    charts = {n for n in names if n.startswith("charts/")}
    stems = {Path(n).stem for n in charts}
    assert charts == {f"charts/{s}.{ext}" for s in stems for ext in ("svg", "png")}
    assert {f"demand-scenario-{i}" for i in range(1, len(pack.plan.scenarios) + 1)} <= stems
    assert verify_pack(pack.outdir) == []


def test_demo_copies_its_workbook_and_runs_the_ensemble(vellmora: Rendered) -> None:
    copy = vellmora.outdir / demo.DEMO_WORKBOOK
    assert copy.read_bytes() == vellmora.workbook.read_bytes()
    assert (vellmora.outdir / pipeline_pack.UNCERTAINTY_CSV).is_file()
    manifest = read_manifest(vellmora.outdir)
    assert manifest is not None
    assert "charts/uncertainty-tornado.png" in {e.name for e in manifest.files}
    summary = json.loads((vellmora.outdir / "summary.json").read_text())
    assert summary["uncertainty"]["draws_per_scenario_variant_count"] == ENSEMBLE_DRAWS
    assert summary["run"]["input_sha256"] == vellmora.digest_before


def test_input_workbook_is_never_modified(pack: Rendered) -> None:
    assert sha(pack.workbook) == pack.digest_before


def test_run_writes_the_summary_json_asked_for(tamsett: Rendered) -> None:
    path = tamsett.workbook.parent / "out" / "summary.json"
    summary = json.loads(path.read_text())
    assert path.read_bytes() == (tamsett.outdir / "summary.json").read_bytes()
    assert [s["name"] for s in summary["scenarios"]] == [s.name for s in tamsett.plan.scenarios]
    first = summary["scenarios"][0]
    metrics = tamsett.results.scenarios[0].with_interventions.metrics
    assert first["with_interventions"]["ward"]["peak_demand_beds"] == pytest.approx(
        metrics.ward.peak_demand_beds
    )
    assert "uncertainty" not in summary


def test_closing_report_and_progress_messages(vellmora: Rendered, tamsett: Rendered) -> None:
    assert str(vellmora.outdir) in vellmora.report
    assert "Bottom line: " + " ".join(bottom_line(vellmora.views)) in vellmora.report
    assert any("Drawing the charts" in m for m in vellmora.messages)
    assert tamsett.messages == []  # quiet, as the command line runs under CI


# ---- What the PDF says --------------------------------------------------------------------------


def test_leader_page_has_the_bottom_line_first_then_the_decisions(pack: Rendered) -> None:
    # The first leader page: bottom line, decisions and dates (with an ensemble), the scenario
    # table and the caution; what the measures change and how certain this is follow on the
    # next page when the decisions take the room.
    page = next(i for i, text in enumerate(pack.pages) if "Summary for leaders" in text
                and "BOTTOM LINE" in text)
    leader = flat(pack.pages[page])
    both = flat(pack.pages[page] + " " + pack.pages[page + 1])
    summary = json.loads((pack.outdir / "summary.json").read_text(encoding="utf-8"))
    assert ("decisions" in summary) == ("uncertainty" in summary)  # the town's runs without
    if "decisions" in summary:
        assert "DECISIONS AND DATES" in leader
        assert leader.index("DECISIONS AND DATES") > leader.index("BOTTOM LINE")
    views = pack.views
    first = leader.index("BOTTOM LINE")
    for sentence in bottom_line(views):
        assert flat(sentence) in leader
        assert leader.index(flat(sentence)) > first
    year = pack.plan.details.day0.year
    for view in views:  # the leader table: name, ward and ICU beds, what the measures do
        assert flat(view.name) in leader
        for cell in brief_cells(view, year):
            assert flat(cell) in leader
    headline = measures_headline(views)
    assert headline is not None
    assert flat(headline_measures_text(headline)) in both
    assert "Read with care" in leader and flat(CAUTION_LINE) in leader


def test_leader_certainty_comes_from_the_ensemble(vellmora: Rendered, tamsett: Rendered) -> None:
    leader = flat(vellmora.pages[1] + " " + vellmora.pages[2])
    assert f"run {ENSEMBLE_DRAWS:,} times" in leader
    assert "plausible futures of" in leader
    town = flat(tamsett.pages[1])
    assert flat(" ".join(certainty_sentences(
        dataclasses.replace(tamsett.plan, details=dataclasses.replace(tamsett.plan.details,
                                                                     draws=0)),
        tamsett.views,
    ))) in town


def test_comparison_table_matches_the_engine(pack: Rendered) -> None:
    text = pack.text
    for table in comparison_tables(pack.views, pack.plan.details.day0.year):
        for row in table.rows:
            if row.group:
                assert flat(row.label) in text
            else:
                assert flat(f"{row.label} {' '.join(row.cells)}") in text, row.label


def test_scenario_pages_say_what_the_metrics_say(pack: Rendered) -> None:
    text = pack.text
    for view in pack.views:
        assert f"Scenario {view.number}: {flat(view.name)}" in text
        for sentence in (view.ward_sentence, view.icu_sentence, *view.surge_sentences,
                         view.measures_sentence):
            assert flat(sentence) in text


def test_every_input_appears_with_its_cell(pack: Rendered) -> None:
    start = next(i for i, t in enumerate(pack.pages) if "Appendix B. Every input" in t)
    appendix = flat("\n".join(pack.pages[start:]))
    groups = assumption_groups(pack.plan.source.inputs)
    assert sum(g.count for g in groups) == len(pack.plan.source.inputs)
    assert f"All {len(pack.plan.source.inputs):,} inputs read from" in appendix
    for group in groups:
        assert flat(group.sheet) in appendix
        for row in group.rows:
            expected = f"{row.cell} {row.label} {row.value}"
            assert flat(expected) in appendix, expected
        for grid in group.grids:
            for letter, _ in grid.columns:
                assert re.search(rf"\b{letter}\b", appendix)
            for number, label, cells in grid.rows:
                values = " ".join(c.value + (" †" if c.defaulted else "") for c in cells if c.value)
                expected = flat(" ".join(str(x) for x in (number, label, values) if x != ""))
                assert expected in appendix, (group.sheet, expected)


def test_cautions_limitations_methods_and_references(pack: Rendered) -> None:
    text = pack.text
    assert flat(CAUTION_LINE) in text and flat(DECISIONS_LINE) in text
    for heading, body in limitations(pack.plan, ensemble=pack is not None and
                                           "How certain the figures are" in text):
        assert flat(heading) in text and flat(body) in text
    for phrase in ("Appendix A. Methods", "Equations in words", "How transmissibility was derived",
                   "How the measures work", "Diekmann O, Heesterbeek JAP, Metz JAJ (1990)",
                   "Wallinga J, Lipsitch M (2007)", "Appendix C. Provenance and files",
                   pack.plan.source.sha256):
        assert flat(phrase) in text


def test_transmissibility_table(pack: Rendered) -> None:
    text = pack.text
    for row in transmissibility_rows(pack.plan, pack.results):
        assert flat(f"{row.label} {' '.join(row.cells)}") in text


def test_page_count_footer_and_paper(pack: Rendered) -> None:
    count = len(pack.pages)
    assert 15 <= count <= 40
    short_hash = pack.plan.source.sha256[:12]
    for number, page in enumerate(pack.pages, start=1):
        assert f"Page {number} of {count}" in page
        assert short_hash in flat(page) and f"seed {pack.plan.details.seed}" in flat(page)
    box = pack.reader.pages[0].mediabox
    size = (round(float(box.width)), round(float(box.height)))
    assert size == ({"A4": (595, 842), "Letter": (612, 792)}[pack.plan.details.page_size])


def _figures(reader: PdfReader) -> list[str]:
    alts: list[str] = []

    def walk(node: Any) -> None:
        node = node.get_object()
        if isinstance(node, ArrayObject):
            for kid in node:
                walk(kid)
        elif isinstance(node, DictionaryObject):
            if str(node.get("/S")) == "/Figure":
                alts.append(str(node.get("/Alt", "")))
            if "/K" in node:
                walk(node["/K"])

    walk(reader.trailer["/Root"]["/StructTreeRoot"]["/K"])
    return alts


def test_pdf_is_tagged_with_alt_text_on_every_figure(pack: Rendered) -> None:
    root = pack.reader.trailer["/Root"]
    assert "/StructTreeRoot" in root and bool(root["/MarkInfo"]["/Marked"])
    assert root["/Lang"] == "en"
    assert pack.reader.metadata is not None
    assert pack.reader.metadata.title == (
        f"{pack.plan.details.title} ({pack.plan.details.jurisdiction})"
    )
    alts = _figures(pack.reader)
    charts = [p for p in (pack.outdir / "charts").glob("*.png")]
    assert len(alts) == len(charts) and all(len(a) > 40 for a in alts)
    assert any(a.startswith("Two panels for the scenario") for a in alts)


def test_html_is_self_contained_with_the_same_content(pack: Rendered) -> None:
    html = (pack.outdir / "briefing-pack.html").read_text(encoding="utf-8")
    sources = re.findall(r'<img src="([^"]+)"', html)
    assert sources and all(s.startswith("data:image/svg+xml;base64,") for s in sources)
    assert 'href="pack.css"' not in html and "@font-face" not in html and "<style>" in html
    assert not re.search(r'(src|href)="(https?|file):', html)
    for sentence in bottom_line(pack.views):
        assert flat(sentence.replace("\u201c", "&#8220;")) in flat(html) or \
            flat(sentence) in flat(html)


def test_results_workbook_and_csv_of_the_sample(tamsett: Rendered) -> None:
    wb = openpyxl.load_workbook(tamsett.outdir / "results.xlsx")
    assert wb["Inputs"].max_row == len(tamsett.plan.source.inputs) + 1
    lines = (tamsett.outdir / "daily-series.csv").read_text(encoding="utf-8-sig").splitlines()
    days = tamsett.plan.details.horizon_days
    assert len(lines) == 1 + 2 * days * len(tamsett.plan.scenarios)


# ---- Reproducible -------------------------------------------------------------------------------


def test_rendering_twice_gives_identical_bytes(tamsett: Rendered, monkeypatch: pytest.MonkeyPatch
                                              ) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    plan = dataclasses.replace(
        read_plan(tamsett.workbook),
        details=dataclasses.replace(tamsett.plan.details, draws=0),
    )
    again = pipeline_pack.render_pack(plan, run_plan(plan))
    for name, data in again.files.items():
        assert (tamsett.outdir / name).read_bytes() == data, name


def test_parallel_and_serial_jobs_agree() -> None:
    jobs = [lambda k=k: bytes([k]) * 1000 for k in range(5)]
    assert pipeline_jobs.run_jobs(jobs, workers=2) == pipeline_jobs.run_jobs(jobs, workers=1)
    # A result that cannot travel back from a worker: the jobs run here instead.
    odd = [lambda: (lambda: 1), lambda: 2]
    got = pipeline_jobs.run_jobs(odd, workers=2)
    assert got[1] == 2 and callable(got[0])


# ---- Hostile text -------------------------------------------------------------------------------


@pytest.fixture
def no_network(monkeypatch: pytest.MonkeyPatch) -> list[object]:
    attempts: list[object] = []

    def refuse(*args: object, **kwargs: object) -> None:
        attempts.append(args[1:] if args else kwargs)
        raise OSError("network access attempted during a test")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket.socket, "connect_ex", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    return attempts


def _all_stream_bytes(pdf: bytes) -> bytes:
    chunks = [pdf]
    for match in re.finditer(rb"stream\r?\n(.*?)\r?\nendstream", pdf, re.DOTALL):
        try:
            chunks.append(zlib.decompress(match[1]))
        except zlib.error:
            pass
    return b"\n".join(chunks)


def test_hostile_workbook_text_is_shown_never_fetched(
    tmp_path: Path, no_network: list[object], monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("PREPKIT_WORKERS", "1")  # the socket guard lives in this process
    marker = f"PREPKIT-SECRET-{uuid.uuid4().hex}"
    secret = tmp_path / "secret.txt"
    secret.write_text(marker)
    link = secret.as_uri()
    hostile = (
        f'<img src="{link}"> <a rel="attachment" href="{link}">file</a> '
        f'<a href="http://example.invalid/x">web</a> <link rel="attachment" href="{link}">'
    )
    plan = small_plan()
    old = plan.interventions[0].name
    renamed = "@<b>" + old
    interventions = (dataclasses.replace(plan.interventions[0], name=renamed),
                     *plan.interventions[1:])
    scenarios = tuple(
        dataclasses.replace(
            s, description=hostile, name=("-" + s.name) if i == 0 else s.name,
            interventions=tuple(renamed if n == old else n for n in s.interventions),
        )
        for i, s in enumerate(plan.scenarios)
    )
    plan = dataclasses.replace(
        plan,
        details=dataclasses.replace(plan.details, jurisdiction="+Town " + hostile, draws=0),
        interventions=interventions,
        scenarios=scenarios,
    )
    workbook = tmp_path / "hostile.xlsx"
    write_workbook(workbook, plan)
    outdir = tmp_path / "pack"
    pipeline.run_workbook(workbook, pipeline.RunOptions(outdir=outdir, quiet=True),
                          lambda _m: None)

    pdf = (outdir / "briefing-pack.pdf").read_bytes()
    assert marker.encode() not in _all_stream_bytes(pdf)
    reader = PdfReader(io.BytesIO(pdf))
    assert reader.attachments == {}
    text = flat("\n".join(p.extract_text() or "" for p in reader.pages))
    squeezed = "".join(text.split())
    assert "".join(f'<img src="{link}">'.split()) in squeezed  # shown as the text it is
    assert "@<b>" + old in text
    assert no_network == []
    html = (outdir / "briefing-pack.html").read_text()
    assert marker not in html and "&lt;img src=" in html and f'src="{link}"' not in html

    wb = openpyxl.load_workbook(outdir / "results.xlsx", data_only=False)
    about = {r[0].value: r[1] for r in wb["About"].iter_rows(min_row=3, max_row=10)}
    jurisdiction = about["Jurisdiction"]
    assert jurisdiction.value.startswith("+Town") and jurisdiction.data_type == "s"
    first = wb["Summary"]["A2"]
    assert first.value == scenarios[0].name and first.data_type == "s"
    csv_text = (outdir / "daily-series.csv").read_text(encoding="utf-8-sig")
    assert "\n'-" + scenarios[0].name[1:] in csv_text


# ---- Killed, broken, changed --------------------------------------------------------------------


def _start_run(workbook: Path, outdir: Path, pause: float) -> subprocess.Popen[bytes]:
    env = {**os.environ, PAUSE_ENV: str(pause), "SOURCE_DATE_EPOCH": EPOCH, "CI": "1",
           "PREPKIT_WORKERS": "1"}
    return subprocess.Popen(
        [sys.executable, "-m", "prepkit.cli.main", "run", str(workbook), "-o", str(outdir),
         "--draws", "0", "-q"],
        env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
    )


def _kill_when_staging(process: subprocess.Popen[bytes], outdir: Path) -> None:
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline:
        staging = [p for p in outdir.parent.glob(f".{outdir.name}.prepkit-staging-*")]
        if staging and any(p.is_file() for p in staging[0].rglob("*")):
            process.send_signal(signal.SIGKILL)
            process.wait(30)
            return
        if process.poll() is not None:
            raise AssertionError(process.stderr.read().decode() if process.stderr else "ended")
        time.sleep(0.05)
    process.kill()
    raise AssertionError("the run never started writing")


@pytest.mark.slow
def test_killed_run_leaves_the_previous_pack_or_nothing(tmp_path: Path, plan_path: Path) -> None:
    plan = read_plan(plan_path)
    workbook = tmp_path / "town.xlsx"
    write_workbook(workbook, dataclasses.replace(
        plan, details=dataclasses.replace(plan.details, draws=0, horizon_days=60)))
    outdir = tmp_path / "pack"

    first = _start_run(workbook, outdir, pause=0.3)
    _kill_when_staging(first, outdir)
    assert not outdir.exists()  # killed before any pack: nothing, not half a pack

    done = _start_run(workbook, outdir, pause=0.0)
    assert done.wait(180) == 0, done.stderr.read().decode() if done.stderr else ""
    before = {p.name: p.read_bytes() for p in outdir.iterdir() if p.is_file()}
    assert verify_pack(outdir) == []

    second = _start_run(workbook, outdir, pause=0.3)
    _kill_when_staging(second, outdir)
    assert verify_pack(outdir) == []
    after = {p.name: p.read_bytes() for p in outdir.iterdir() if p.is_file()}
    assert after == before


def test_broken_workbook_exits_2_names_the_cell_and_writes_nothing(
    editor: Editor, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    editor.table("Population", "People [persons]", "18-64").value = "many"
    editor.item("Hospitals", "Staffed ward beds").value = -5
    workbook = editor.save()
    before = workbook.read_bytes()
    outdir = tmp_path / "never"
    json_path = tmp_path / "never.json"
    code = main(["run", str(workbook), "-o", str(outdir), "--summary-json", str(json_path)])
    err = capsys.readouterr().err
    assert code == 2
    assert "Population!D" in err and "Hospitals!" in err
    assert "Traceback" not in err
    assert not outdir.exists() and not json_path.exists()
    assert workbook.read_bytes() == before
    assert not list(tmp_path.glob(".never.prepkit-*"))


def test_missing_workbook_and_bad_draws_are_input_problems(
    plan_path: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["run", str(tmp_path / "absent.xlsx"), "-q"]) == 2
    assert main(["run", str(plan_path), "--draws", "-3", "-q"]) == 2
    assert "--draws" in capsys.readouterr().err


def test_outdir_holding_the_workbook_is_refused(plan_path: Path) -> None:
    with pytest.raises(errors.PipelineError, match="output folder"):
        pipeline.run_workbook(plan_path, pipeline.RunOptions(outdir=plan_path.parent, quiet=True),
                              lambda _m: None)


def test_workbook_changed_during_the_run_fails_and_writes_nothing(
    plan_path: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    plan = read_plan(plan_path)
    workbook = tmp_path / "short.xlsx"
    write_workbook(workbook, dataclasses.replace(
        plan, details=dataclasses.replace(plan.details, draws=0, horizon_days=60)))
    real = pipeline_pack.render_pack

    def render_then_edit(*args: Any, **kwargs: Any) -> Any:
        out = real(*args, **kwargs)
        with open(workbook, "ab") as handle:  # someone saves the workbook meanwhile
            handle.write(b"\0")
        return out

    monkeypatch.setattr(pipeline_pack, "render_pack", render_then_edit)
    outdir = tmp_path / "pack"
    with pytest.raises(InputChangedError, match="changed while prepkit was running"):
        pipeline.run_workbook(workbook, pipeline.RunOptions(outdir=outdir, quiet=True),
                              lambda _m: None)
    assert not outdir.exists()
    assert not list(tmp_path.glob(".pack.prepkit-*"))


def test_summary_only_writes_just_the_json(plan_path: Path, tmp_path: Path) -> None:
    json_path = tmp_path / "sub" / "summary.json"
    outdir = tmp_path / "not-made"
    report = pipeline.run_workbook(
        plan_path,
        pipeline.RunOptions(outdir=outdir, summary_json=json_path, draws=8, summary_only=True),
        lambda _m: None,
    )
    assert not outdir.exists()
    summary = json.loads(json_path.read_text())
    assert summary["uncertainty"]["draws_per_scenario_variant_count"] == 8
    assert len(summary["scenarios"]) == len(read_plan(plan_path).scenarios)
    assert str(json_path) in report


def test_demo_never_replaces_an_edited_copy_of_its_workbook(vellmora: Rendered, tmp_path: Path
                                                            ) -> None:
    outdir = tmp_path / "demo"
    shutil.copytree(vellmora.outdir, outdir)
    with open(outdir / demo.DEMO_WORKBOOK, "ab") as handle:
        handle.write(b"planner's edit")
    edited = (outdir / demo.DEMO_WORKBOOK).read_bytes()
    with pytest.raises(errors.PipelineError, match="edited"):
        demo.run_demo(pipeline.RunOptions(outdir=outdir, draws=0, quiet=True), lambda _m: None)
    assert (outdir / demo.DEMO_WORKBOOK).read_bytes() == edited


def test_steps_are_silent_when_quiet_or_in_ci(monkeypatch: pytest.MonkeyPatch) -> None:
    said: list[str] = []
    monkeypatch.delenv("CI", raising=False)
    progress.Steps(said.append, quiet=False)("one")
    progress.Steps(said.append, quiet=True)("two")
    assert not in_ci()
    monkeypatch.setenv("CI", "true")
    assert in_ci()  # the command line then runs quiet
    monkeypatch.setenv("CI", "false")
    assert not in_ci()
    assert said == ["one"]
    assert not progress.Steps(said.append, quiet=False).interactive  # no terminal given
    assert progress.Steps(said.append, quiet=False, terminal=True).interactive
    assert not progress.Steps(said.append, quiet=True, terminal=True).interactive
