"""JSON summary of plan results."""

from __future__ import annotations

import json

import numpy as np
from factories import banded_plan

from prepkit.base.json_values import jsonable
from prepkit.pipeline.summary import summary_dict
from prepkit.scenarios.runs import run_plan


def test_summary_is_strict_json_with_every_scenario_and_variant() -> None:
    plan = banded_plan(4, horizon=120)
    summary = summary_dict(plan, run_plan(plan))
    text = json.dumps(summary, allow_nan=False)  # raises on NaN or inf
    back = json.loads(text)
    assert back["plan"]["day0"] == "2025-01-01"
    assert set(back["transmissibility_by_level"]) == {"low", "central", "high"}
    names = [s["name"] for s in back["scenarios"]]
    assert names == [s.name for s in plan.scenarios]
    first = back["scenarios"][1]
    for key in ("with_interventions", "without_interventions"):
        metrics = first[key]
        assert "infections_persons" in metrics["total"]
        assert set(metrics["by_band"]) == {b.label for b in plan.bands}
        assert "unmet_bed_days_with_surge" in metrics["ward"]
        peak_date = metrics["ward"]["peak_date"]
        assert peak_date is None or len(peak_date) == 10
    assert "ward_peak_reduction_share" in first["intervention_effect"]
    assert first["transmissibility"]["r0"] > 1.0


def test_jsonable_drops_non_finite_numbers() -> None:
    assert jsonable({"a": float("nan"), "b": np.inf, "c": np.float32(2.5), "d": (np.int64(3),)}) \
        == {"a": None, "b": None, "c": 2.5, "d": [3]}
