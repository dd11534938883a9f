"""``prepkit run --no-fit``: the observed figures are drawn, not fitted, and the run says so."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from prepkit.cli.main import main
from prepkit.fitting.project import NOT_ASKED

CITY = Path(__file__).resolve().parents[2] / "sample_workbooks" / "vellmora_city.xlsx"


def test_no_fit_skips_the_fit_and_says_why(tmp_path: Path,
                                           capsys: pytest.CaptureFixture[str],
                                           monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.delenv("CI", raising=False)  # CI leaves step messages out
    summary_path = tmp_path / "summary.json"
    code = main(["run", str(CITY), "--no-fit", "--summary-only", "--summary-json",
                 str(summary_path), "--draws", "0"])
    assert code == 0
    said = capsys.readouterr()
    assert "Fitting the scenarios" not in said.out + said.err
    assert f"Note: {NOT_ASKED}" in said.out + said.err
    fit = json.loads(summary_path.read_text())["fit"]
    assert fit["projections_fitted"] is False
    assert fit["reason"] == NOT_ASKED
    assert not CITY.with_name("vellmora_city-pack").exists()
