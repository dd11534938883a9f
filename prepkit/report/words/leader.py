"""The leader page: the bottom line, the measures, how certain the figures are."""

from __future__ import annotations

from collections.abc import Sequence

from prepkit.base.plural import all_of
from prepkit.metrics.beds import no_bed_extra_fatality
from prepkit.plan import Plan, Severity
from prepkit.report.words.ensemble_format import (
    band_columns,
    range_tenths,
    scenario_ensemble,
    summary_row,
)
from prepkit.report.words.formatting import (
    BED_NOUNS,
    count_phrase,
    format_date,
    format_days,
    format_number,
    format_percent,
    name_list,
    quoted,
)
from prepkit.report.words.scenario_text import measures_sentence
from prepkit.report.words.uncertainty_text import EnsembleWords
from prepkit.report.words.views import ScenarioView
from prepkit.uncertainty.results import UncertaintyResults

#: Caution printed on the cover, the leader page and the limitations page.
CAUTION_LINE = (
    "A planning aid, not a forecast: these figures show what follows from the assumptions in "
    "the planning workbook. Real outbreaks will differ."
)


def deaths_note(views: Sequence[ScenarioView], uncertainty: UncertaintyResults | None,
                severity: Severity) -> str:
    """The leader page's sentence on the two kinds of death the pack counts.

    Deaths in hospital care are counted as if every patient had a bed; the
    additional deaths when beds run short (:func:`prepkit.metrics.beds.shortage_deaths`)
    are named for the scenario with the most, with the ensemble's range.

    Returns
    -------
    str
        E.g. "Running short of beds adds about 40 deaths in “Central
        figures, vaccine only” (19 to 66 in 9 of 10 futures), at an added
        25% chance of dying without an ICU bed, beyond the deaths in hospital
        care (counted as if every patient had a bed)."
    """
    care = "Deaths in hospital care are counted as if every patient had a bed."
    if not views:
        return care
    worst = max(views, key=lambda v: v.with_metrics.shortage_deaths_persons)
    added = worst.with_metrics.shortage_deaths_persons
    if added < 0.5:
        return f"{care} No scenario runs short enough of beds to add a death."
    spread = ""
    item = scenario_ensemble(uncertainty, worst.name)
    if item is not None and uncertainty is not None:
        q_low, _, q_high = band_columns(uncertainty.quantiles)
        row = summary_row(item.with_interventions, "shortage_deaths_persons")
        spread = (f" ({format_number(float(row[q_low]), words=True)} to "
                  f"{format_number(float(row[q_high]), words=True)} in "
                  f"{range_tenths(uncertainty.quantiles)} of 10 futures)")
    extra = no_bed_extra_fatality(severity)
    return (f"Running short of beds adds {count_phrase(added, 'death', 'deaths')} in "
            f"{quoted(worst.name)}{spread}, at an added {format_percent(extra['icu'])} chance "
            "of dying without an ICU bed, beyond the deaths in hospital care (counted as if "
            "every patient had a bed).")



DECISIONS_LINE = (
    "Decisions rest with the local health authority and with licensed clinical practice."
)


def observed_flag(views: Sequence[ScenarioView]) -> str:
    """The leader page's sentence on scenarios the observations already contradict.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario, checked by :func:`with_observations`.

    Returns
    -------
    str
        "" without observations; otherwise which scenarios the latest
        observed census rules out, or that it fits them all.
    """
    checked = [v for v in views if v.observed]
    if not checked:
        return ""
    date = format_date(max(c.date for v in checked for c in v.observed))
    off = [v for v in checked if v.contradicted]
    if not off:
        return (
            f"The hospital figures observed up to {date} fit the plausible range of "
            f"{all_of(len(checked), 'scenario')}."
        )
    names = name_list([quoted(v.name) for v in off])
    ahead = all(c.above for v in off for c in v.observed if not c.consistent)
    if len(off) == len(checked):
        where = "ahead of" if ahead else "apart from"
        return (
            f"The hospital figures observed up to {date} already lie outside the plausible "
            f"range of every scenario: the outbreak is running {where} all of them, so read "
            "their dates and peaks with care."
        )
    which = "that scenario" if len(off) == 1 else "those scenarios"
    return (
        f"The hospital figures observed up to {date} already lie outside the plausible range "
        f"of {names}; read {which} with care."
    )


def bottom_line(views: Sequence[ScenarioView]) -> tuple[str, ...]:
    """The leader page's first paragraph: whether demand exceeds beds, where worst.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    tuple of str
        Two or three sentences.
    """
    total = len(views)
    if total == 0:
        return ("The plan has no scenarios.",)
    short = [v for v in views if v.short_of_beds]
    if not short:
        top = max(views, key=lambda v: v.with_metrics.ward.peak_demand_beds)
        ward = top.with_metrics.ward
        scope = all_of(total, "scenario")
        return (
            f"With the planned measures, outbreak patients stay within the available ward and "
            f"ICU beds in {scope}.",
            f"The highest ward demand is {format_number(ward.peak_demand_beds, words=True)} beds "
            f"({quoted(top.name)}, {format_date(ward.peak_date)}) against "
            f"{format_number(ward.available_beds, words=True)} available.",
        )
    if total == 1:
        first = "Outbreak patients would need more hospital beds than are available, even with "
        first += "the planned measures."
    elif len(short) == total:
        first = (
            f"In {all_of(total, 'scenario')}, outbreak patients would need more "
            "hospital beds than are available, even with the planned measures."
        )
    else:
        first = (
            f"In {len(short)} of the {total} scenarios, outbreak patients would need more "
            "hospital beds than are available, even with the planned measures."
        )
    worst = max(short, key=lambda v: v.unmet_bed_days)
    m = worst.with_metrics
    clauses = []
    for kind, bed in (("ward", m.ward), ("icu", m.icu)):
        _, noun = BED_NOUNS[kind]  # type: ignore[index]
        if bed.days_over_capacity_days > 0:
            clauses.append(
                f"{noun} beds run short on {format_days(bed.days_over_capacity_days)} from "
                f"{format_date(bed.first_over_capacity_date)} (peak "
                f"{format_number(bed.peak_demand_beds, words=True)} beds, "
                f"{format_number(bed.available_beds, words=True)} available)"
            )
    lead = "The hardest case is" if total > 1 else "In"
    second = f"{lead} {quoted(worst.name)}: " + "; ".join(clauses) + "."
    return (first, second)


def measures_headline(views: Sequence[ScenarioView]) -> ScenarioView | None:
    """The scenario whose measures the leader page describes.

    Parameters
    ----------
    views : sequence of ScenarioView
        Every scenario.

    Returns
    -------
    ScenarioView or None
        Among scenarios with measures, the one that would be shortest of
        beds without them (unmet ward plus ICU bed-days); the first scenario
        when none has measures; None when there are no scenarios.
    """
    with_measures = [v for v in views if v.item.scenario.interventions]
    if not with_measures:
        return views[0] if views else None

    def unmet_without(view: ScenarioView) -> float:
        m = view.without_metrics
        return m.ward.unmet_bed_days + m.icu.unmet_bed_days

    return max(with_measures, key=unmet_without)


def headline_measures_text(view: ScenarioView) -> str:
    """The leader page's paragraph on what the measures change.

    Parameters
    ----------
    view : ScenarioView
        The scenario chosen by :func:`measures_headline`.

    Returns
    -------
    str
        ``Take “<name>”.`` followed by :func:`measures_sentence`.
    """
    return f"Take {quoted(view.name)}. {measures_sentence(view.item)}"


def certainty_sentences(
    plan: Plan,
    views: Sequence[ScenarioView],
    ensemble: EnsembleWords | None = None,
) -> tuple[str, ...]:
    """How certain the figures are, in words.

    Parameters
    ----------
    plan : Plan
        The plan (for the number of draws asked for).
    views : sequence of ScenarioView
        Every scenario.
    ensemble : EnsembleWords, optional
        The words of the uncertainty ensemble (its ``sentences``); None
        when no ensemble was run.

    Returns
    -------
    tuple of str
        Two or three sentences.
    """
    if ensemble is not None and ensemble.sentences:
        return ensemble.sentences
    out = [
        "Each figure here comes from one run at the scenario's own assumptions; it is not a "
        "range."
    ]
    peaks = [v.with_metrics.ward.peak_demand_beds for v in views]
    if len(views) > 1:
        out.append(
            f"The spread between the scenarios is the best guide to the uncertainty: ward peaks "
            f"run from {format_number(min(peaks), words=True)} to "
            f"{format_number(max(peaks), words=True)} beds."
        )
    if plan.details.draws == 0:
        out.append("Uncertainty ranges were switched off for this pack (0 uncertainty draws).")
    else:
        out.append("Uncertainty ranges were not computed for this pack.")
    return tuple(out)

