"""A summary-only run loads neither the PDF renderer nor the charting library."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

from conftest import quick_workbook

PROBE = """
import sys
from prepkit.cli.main import main
code = main(["run", sys.argv[1], "--summary-only", "--summary-json", sys.argv[2], "--quiet",
             "--draws", "0"])
print(sorted(m for m in ("weasyprint", "matplotlib") if m in sys.modules), code)
"""


def test_summary_only_imports_no_renderer_and_still_writes_the_summary(tmp_path: Path) -> None:
    # Common practice, no source: a command loads only what it uses (issue 11, item 4).
    workbook = quick_workbook(tmp_path)
    out = tmp_path / "summary.json"
    done = subprocess.run([sys.executable, "-c", PROBE, str(workbook), str(out)],
                          capture_output=True, text=True, timeout=300, check=False)
    assert done.stdout.strip().splitlines()[-1] == "[] 0", done.stdout + done.stderr
    assert "scenarios" in json.loads(out.read_text(encoding="utf-8"))
