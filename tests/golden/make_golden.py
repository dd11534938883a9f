"""Write the golden outputs of both samples: the summary JSON and the daily CSV.

Run from the repository root when a change of numbers is intended (say so in the
commit and in the issue note)::

    .venv/bin/python tests/golden/make_golden.py

``tests/pipeline/test_golden.py`` compares fresh runs with these files to 1e-12 relative.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
SAMPLES = ("vellmora_city", "tamsett_hollow")


def outputs(name: str) -> tuple[dict[str, object], bytes]:
    """Summary dict and daily CSV bytes of one sample, without the ensemble."""
    from prepkit.pipeline.summary import summary_dict
    from prepkit.report.tables import daily_csv
    from prepkit.scenarios.runs import run_plan
    from prepkit.workbook.reader import read_plan

    plan = read_plan(ROOT / "sample_workbooks" / f"{name}.xlsx")
    results = run_plan(plan)
    summary = summary_dict(plan, results)
    summary.pop("run", None)  # run time and version: not numbers of the model
    return summary, daily_csv(results)


def main() -> int:
    """Write ``<sample>.summary.json`` and ``<sample>.daily.csv`` beside this script."""
    for name in SAMPLES:
        summary, daily = outputs(name)
        (HERE / f"{name}.summary.json").write_text(
            json.dumps(summary, indent=1, sort_keys=True, allow_nan=False) + "\n",
            encoding="utf-8",
        )
        (HERE / f"{name}.daily.csv").write_bytes(daily)
        print(f"wrote tests/golden/{name}.summary.json and {name}.daily.csv")
    return 0


if __name__ == "__main__":
    sys.exit(main())
