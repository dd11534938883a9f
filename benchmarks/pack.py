"""The city pack, warm: a baseline revision against the working tree, side by side in one run.

Run with ``.venv/bin/python benchmarks/pack.py [--baseline REV] [--passes N]``.

The baseline revision (default: the commit where this branch left ``main``,
``git merge-base HEAD main``) is exported with ``git archive`` into a
temporary folder. One worker process per tree is started with this venv's
Python and ``PYTHONPATH`` set to that tree, so both trees run with the same
libraries. Each worker imports prepkit (its import time is printed), makes
one warm-up pack (which also compiles and caches the baseline's kernels),
then the two workers are asked in turn for one timed pack each, ``--passes``
times (default 3), and the best pass of each tree is kept.

A pack is ``prepkit demo`` in process: the bundled Vellmora workbook (1,000
draws per scenario and variant) read, run, the ensemble, charts, PDF,
HTML, results workbook and data files made and written into a temporary
folder (:func:`prepkit.pipeline.demo.run_demo`). After the timed passes
each worker times the stages one after the other in its own process, best
of two: scenarios and ensemble, the charts (all jobs, serially), the PDF
(:func:`prepkit.report.render.html_to_pdf` of the pack's HTML) and the
results workbook (:func:`prepkit.report.results_workbook.results_workbook_bytes`).
The pack itself runs charts and documents in parallel worker processes, so
the stages add up to more than the pack.

The machine may be shared; the one-minute load average is printed. The last
line is ``pack: before_s=<s> after_s=<s> ratio=<before/after> load=<1-min load>``.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tarfile
import tempfile
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

# The worker: reads commands from stdin ("pack", "stages", "quit"), answers one JSON line each.
_WORKER = textwrap.dedent(
    r'''
    import json, os, sys, tempfile, time
    from pathlib import Path
    t0 = time.perf_counter()
    import prepkit
    from prepkit.pipeline.demo import run_demo
    from prepkit.pipeline.run import RunOptions
    import_s = time.perf_counter() - t0
    out = Path(tempfile.mkdtemp(prefix="packbench-")) / "pack"

    def pack():
        start = time.perf_counter()
        run_demo(RunOptions(outdir=out, quiet=True, force=True), lambda _m: None)
        return time.perf_counter() - start

    def best(fn, n=2):
        times = []
        for _ in range(n):
            start = time.perf_counter()
            value = fn()
            times.append(time.perf_counter() - start)
        return min(times), value

    def stages():
        from prepkit import __version__
        from prepkit.pipeline import pack as packmod
        from prepkit.pipeline.demo import sample_workbook
        from prepkit.report.charts import chart_jobs, uncertainty_chart_jobs
        from prepkit.report.render import html_to_pdf, render_html
        from prepkit.report.results_workbook import results_workbook_bytes, uncertainty_sheets
        from prepkit.report.words.pack import build_context
        from prepkit.report.words.uncertainty_text import ensemble_context
        from prepkit.report.words.views import scenario_views
        from prepkit.scenarios.runs import run_plan
        from prepkit.uncertainty.plan_runs import run_uncertainty
        from prepkit.workbook.reader import read_plan_with_warnings
        from prepkit.base.files import source_date

        plan, _w = read_plan_with_warnings(sample_workbook())
        times = {}
        times["scenarios_s"], results = best(lambda: run_plan(plan))
        times["ensemble_s"], ens = best(lambda: run_uncertainty(plan, results))
        views = scenario_views(plan, results)
        words = ensemble_context(plan, views, ens)

        def charts():
            jobs = chart_jobs(plan, views)
            jobs += uncertainty_chart_jobs(plan, views, ens, focus=words.focus)
            return tuple(job() for job in jobs)

        times["charts_s"], drawn = best(charts)
        when = source_date()
        fmt = getattr(packmod, "PDF_CHART_FORMAT", "png")
        context = build_context(
            plan, results, figures=packmod._figures(views, drawn, fmt), version=__version__,
            generated=when, files=list(packmod.PACK_FILES), uncertainty=ens, notes=(),
        )
        times["html_s"], html = best(lambda: render_html("pack.html.j2", context))
        times["pdf_s"], pdf = best(lambda: html_to_pdf(
            html, page_size=plan.details.page_size, title="t", lang="en", created=when))
        times["xlsx_s"], _x = best(lambda: results_workbook_bytes(
            plan, results, version=__version__, generated=when,
            extra_sheets=uncertainty_sheets(ens)))
        times["pdf_kb"] = len(pdf) / 1024
        return times

    print(json.dumps({"ready": True, "import_s": import_s, "file": prepkit.__file__}), flush=True)
    for line in sys.stdin:
        cmd = line.strip()
        if cmd == "pack":
            print(json.dumps({"pack_s": pack()}), flush=True)
        elif cmd == "stages":
            print(json.dumps(stages()), flush=True)
        else:
            break
    '''
)


def _export(rev: str, into: Path) -> Path:
    """The tree of ``rev`` (``git archive``) unpacked under ``into``."""
    tree = into / "baseline"
    tree.mkdir()
    archive = into / "baseline.tar"
    subprocess.run(["git", "-C", str(ROOT), "archive", "-o", str(archive), rev], check=True)
    with tarfile.open(archive) as tar:
        tar.extractall(tree, filter="data")
    # The editable install maps the package prepkit.templates onto this checkout's
    # templates/ folder; a link inside the exported package makes the baseline find its own.
    link = tree / "prepkit" / "templates"
    if not link.exists():
        link.symlink_to(tree / "templates", target_is_directory=True)
    return tree


class _Worker:
    """One long-lived Python process running packs from one tree."""

    def __init__(self, name: str, tree: Path) -> None:
        env = {**os.environ, "PYTHONPATH": str(tree), "SOURCE_DATE_EPOCH": "1796000000"}
        self.name = name
        self.proc = subprocess.Popen(
            [sys.executable, "-c", _WORKER], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
            text=True, env=env, cwd=str(tree),
        )
        self.hello = self._read()
        if not Path(self.hello["file"]).resolve().is_relative_to(tree.resolve()):
            raise SystemExit(f"{name}: imported prepkit from {self.hello['file']}, not {tree}")

    def _read(self) -> dict[str, float]:
        assert self.proc.stdout is not None
        line = self.proc.stdout.readline()
        if not line:
            raise SystemExit(f"{self.name}: worker stopped")
        answer: dict[str, float] = json.loads(line)
        return answer

    def ask(self, command: str) -> dict[str, float]:
        assert self.proc.stdin is not None
        self.proc.stdin.write(command + "\n")
        self.proc.stdin.flush()
        return self._read()

    def close(self) -> None:
        assert self.proc.stdin is not None
        self.proc.stdin.write("quit\n")
        self.proc.stdin.close()
        self.proc.wait(timeout=60)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--baseline", default=None,
                        help="revision to compare with (default: git merge-base HEAD main)")
    parser.add_argument("--passes", type=int, default=3, help="timed packs per tree")
    parser.add_argument("--no-stages", action="store_true", help="skip the per-stage timings")
    args = parser.parse_args()
    rev = args.baseline or subprocess.run(
        ["git", "-C", str(ROOT), "merge-base", "HEAD", "main"], check=True, capture_output=True,
        text=True,
    ).stdout.strip()
    with tempfile.TemporaryDirectory(prefix="packbench-") as tmp:
        before = _Worker("before", _export(rev, Path(tmp)))
        after = _Worker("after", ROOT)
        workers = (before, after)
        for worker in workers:
            print(f"{worker.name}: import {worker.hello['import_s']:.2f} s", flush=True)
            warm = worker.ask("pack")["pack_s"]
            print(f"{worker.name}: warm-up pack {warm:.2f} s", flush=True)
        best = {worker.name: float("inf") for worker in workers}
        for number in range(args.passes):
            for worker in workers if number % 2 == 0 else workers[::-1]:
                took = worker.ask("pack")["pack_s"]
                best[worker.name] = min(best[worker.name], took)
                print(f"pass {number + 1} {worker.name}: pack {took:.2f} s", flush=True)
        if not args.no_stages:
            for worker in workers:
                stages = worker.ask("stages")
                shown = " ".join(f"{key}={value:.2f}" for key, value in stages.items())
                print(f"{worker.name} stages (serial, best of 2): {shown}", flush=True)
        for worker in workers:
            worker.close()
    load = os.getloadavg()[0]
    ratio = best["before"] / best["after"]
    print(f"baseline {rev[:12]} against the working tree of {ROOT}")
    print(f"pack: before_s={best['before']:.2f} after_s={best['after']:.2f} ratio={ratio:.2f} "
          f"load={load:.2f}")


if __name__ == "__main__":
    main()
