"""Words and table rows on hospital strain: days beds are more than 75% full, and more than full.

The rule is :func:`prepkit.metrics.beds.strain_limits` (occupancy of staffed
beds, other patients included, above 75%), shared by the central run and the
ensemble; a day more than full is a day short of beds. Strain is stated for
ICU and ward beds, with and without the measures; in the ensemble as the
median and the range of the plausible futures.

References
----------
French G., Hulse M., Nguyen D., et al. (2021). Impact of hospital strain on
excess deaths during the COVID-19 pandemic - United States, July 2020-July
2021. MMWR 70(46):1613-1616.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

from prepkit.metrics.beds import BED_KINDS, STRAIN_OCCUPANCY
from prepkit.metrics.capacity import BedMetrics
from prepkit.plan import Plan
from prepkit.report.words.comparison import TableRow
from prepkit.report.words.ensemble_format import band_columns, scenario_ensemble, summary_row
from prepkit.report.words.formatting import BED_NOUNS, format_number, format_percent
from prepkit.report.words.views import ScenarioView
from prepkit.uncertainty.results import EnsembleResult, UncertaintyResults

__all__ = ["StrainTable", "baseline_strain_note", "brief_heads", "strain_clauses",
           "strain_kinds", "strain_tables", "with_strain"]

STRAIN_WORDS = f"more than {format_percent(STRAIN_OCCUPANCY)} full"
"""How a strained day is named in the pack."""

FULL_WORDS = "more than full"
"""How a day short of beds is named beside strain (occupancy above 100%)."""


def _bed(metrics_kind: str, view: ScenarioView, variant: str) -> BedMetrics:
    m = view.with_metrics if variant == "with" else view.without_metrics
    bed: BedMetrics = getattr(m, metrics_kind)
    return bed


def strain_kinds(views: Sequence[ScenarioView]) -> tuple[str, ...]:
    """Bed types whose strain depends on the outbreak, ICU first (the same in every scenario)."""
    if not views:
        return ()
    first = views[0]
    return tuple(kind for kind in ("icu", "ward") if not _bed(kind, first, "with").always_strained)


def _range(result: EnsembleResult | None, metric: str, q_low: str, q_high: str) -> str:
    """``"30 to 52"``: the range of a number of days over the ensemble, or "" without one."""
    if result is None:
        return ""
    row = summary_row(result, metric)
    low, high = round(float(row[q_low])), round(float(row[q_high]))
    return f"{low:,}" if low == high else f"{low:,} to {high:,}"


def strain_clauses(
    view: ScenarioView, uncertainty: UncertaintyResults | None
) -> tuple[tuple[str, str], ...]:
    """Per bed type of :func:`strain_kinds`, the days more than 75% full, for the leader table.

    Returns
    -------
    tuple of (str, str)
        Days, e.g. ``(("icu", "52 (40 to 61); 63 without measures"),)``:
        central run with measures, in brackets the range over the ensemble,
        then the central run without the measures.
    """
    item = scenario_ensemble(uncertainty, view.name)
    clauses = []
    for kind in strain_kinds((view,)):
        text = f"{_bed(kind, view, 'with').days_strained_days:,}"
        if item is not None and uncertainty is not None:
            q_low, _, q_high = band_columns(uncertainty.quantiles)
            spread = _range(item.with_interventions, f"{kind}_days_strained_days", q_low, q_high)
            text += f" ({spread})"
        if view.item.scenario.interventions:
            text += f"; {_bed(kind, view, 'without').days_strained_days:,} without measures"
        clauses.append((kind, text))
    return tuple(clauses)


def with_strain(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults | None
) -> tuple[ScenarioView, ...]:
    """The views with their :func:`strain_clauses` filled in, for the leader briefs."""
    return tuple(replace(view, strain=strain_clauses(view, uncertainty)) for view in views)


def brief_heads(views: Sequence[ScenarioView]) -> tuple[str, ...]:
    """Heads of the leader table's columns after "Scenario" (cells: ``views.brief_cells``)."""
    if not views:
        return ()
    m = views[0].with_metrics
    beds = tuple(f"{BED_NOUNS[kind][0]} beds, {format_number(bed.available_beds, words=True)} "  # type: ignore[index]
                 "available" for kind, bed in (("ward", m.ward), ("icu", m.icu)))
    strain = tuple(f"Days {BED_NOUNS[kind][1]} more than {format_percent(STRAIN_OCCUPANCY)} full"  # type: ignore[index]
                   for kind in strain_kinds(views))
    return (*beds, *strain, "The measures")


def baseline_strain_note(plan: Plan, views: Sequence[ScenarioView]) -> str:
    """A sentence when other patients alone fill 75% or more of a bed type, else ""."""
    if not views:
        return ""
    capacity = plan.capacity
    shares = {"ward": capacity.ward_baseline_occupancy, "icu": capacity.icu_baseline_occupancy}
    full = [kind for kind in BED_KINDS if _bed(kind, views[0], "with").always_strained]
    if not full:
        return ""
    said = " and ".join(
        f"{format_percent(shares[k])} of {BED_NOUNS[k][1]} beds" for k in full)  # type: ignore[index]
    return (f"Other patients alone fill {said}, so any outbreak patient takes them over "
            f"{format_percent(STRAIN_OCCUPANCY)}.")


@dataclass(frozen=True, kw_only=True)
class StrainTable:
    """Days of strain of one bed type across the plausible futures.

    Attributes
    ----------
    kind : str
        ``"ward"`` or ``"icu"``.
    noun : str
        The bed type in a sentence ("ICU", "ward").
    rows : tuple of TableRow
        One per scenario: central run, median and range of the days more than
        75% full and more than full, with measures, and the median without.
    always : bool
        True when other patients alone fill 75% or more of these beds.
    """

    kind: str
    noun: str
    rows: tuple[TableRow, ...]
    always: bool


def strain_tables(
    views: Sequence[ScenarioView], uncertainty: UncertaintyResults
) -> tuple[StrainTable, ...]:
    """ICU and ward tables of the days of strain, with and without the measures."""
    q_low, q_mid, q_high = band_columns(uncertainty.quantiles)
    tables = []
    for kind in ("icu", "ward"):
        rows = []
        always = False
        for view in views:
            item = scenario_ensemble(uncertainty, view.name)
            if item is None:
                continue
            always = always or _bed(kind, view, "with").always_strained
            cells: list[str] = []
            for metric, attr in ((f"{kind}_days_strained_days", "days_strained_days"),
                                 (f"{kind}_days_over_capacity_days", "days_over_capacity_days")):
                central = getattr(_bed(kind, view, "with"), attr)
                with_row = summary_row(item.with_interventions, metric)
                without_row = summary_row(item.without_interventions, metric)
                cells += [f"{central:,}", f"{round(float(with_row[q_mid])):,}",
                          _range(item.with_interventions, metric, q_low, q_high),
                          f"{round(float(without_row[q_mid])):,}"]
            rows.append(TableRow(label=view.name, cells=tuple(cells)))
        if rows:
            noun = BED_NOUNS[kind][1]
            tables.append(StrainTable(kind=kind, noun=noun, rows=tuple(rows), always=always))
    return tuple(tables)
