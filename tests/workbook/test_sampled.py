"""Uncertain inputs of the ensemble, their labels and units: from the schema declarations."""

from __future__ import annotations

from prepkit.plan import Plan
from prepkit.report.results_workbook_columns_uncertainty import INPUT_UNITS
from prepkit.uncertainty.fields import plan_dimensions, scenario_fields
from prepkit.workbook.schema import FIELDS


def test_every_uncertain_field_says_how_it_is_drawn() -> None:
    # Common practice, no source: an uncertain field the ensemble ignored would be silent.
    # The fit's ranges (section "fit") are its priors: the fit draws them, and its posterior
    # reaches the ensemble instead (prepkit.fitting.project).
    for f in FIELDS:
        drawn_by_ensemble = f.uncertain and not f.name.startswith("fit.")
        assert (f.sampled is not None) == drawn_by_ensemble, f.name
        if f.sampled is not None:
            assert f.sampled.unit in INPUT_UNITS, f.name


def test_ranks_give_one_column_order() -> None:
    # Common practice, no source: fields sharing a rank share a key (the three
    # transmissibility measures, of which a plan gives one).
    by_rank: dict[int, set[str]] = {}
    for f in FIELDS:
        if f.sampled is not None:
            by_rank.setdefault(f.sampled.rank, set()).add(f.sampled.key)
    assert all(len(keys) == 1 for keys in by_rank.values())
    assert sorted(by_rank) == list(range(len(by_rank)))


def test_sampled_fields_carry_the_declared_labels_and_units(plan: Plan) -> None:
    # Common practice, no source: the tornado shows what the schema declares.
    declared = {f.sampled.key.split("[")[0]: f.sampled for f in FIELDS if f.sampled is not None}
    keys = plan_dimensions(plan)
    assert keys[0] == "transmissibility" and len(set(keys)) == len(keys)
    for scenario in plan.scenarios:
        for item in scenario_fields(plan, scenario):
            sampled = declared[item.key.split("[")[0]]
            if item.key == "transmissibility":
                assert item.unit in {"dimensionless", "days", "1/day"}
                continue
            name = item.key[item.key.find("[") + 1:-1] if "[" in item.key else ""
            assert item.label == sampled.label.format(name=name)
            assert item.unit == sampled.unit
            assert item.column == keys.index(item.key)
