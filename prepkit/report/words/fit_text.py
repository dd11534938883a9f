"""The words of the fit: the page "What the local figures say", the leader line, the chart's words.

Every figure here comes from :class:`prepkit.fitting.project.FitReport`; the
same figures go to summary.json and results.xlsx (:mod:`prepkit.fitting.summary`).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from prepkit.fitting.diagnostics import (
    ACCEPTANCE_RANGE,
    MIN_COVERAGE,
    MIN_EFFECTIVE_DRAWS,
    P_VALUE_RANGE,
    RHAT_LIMIT,
)
from prepkit.fitting.findings import RULED_OUT_TAILS, FitReport, Growth
from prepkit.fitting.inputs import CHANGE, INITIAL, SEVERITY, TRANSMISSIBILITY
from prepkit.fitting.project import FitOutcome
from prepkit.plan import Plan
from prepkit.plan.fit import FEW_FIT_POINTS
from prepkit.report.words.chart_words import ChartWords
from prepkit.report.words.formatting import format_date, format_number, name_list

__all__ = ["FitRow", "FitWords", "few_figures_caution", "fit_chart_words", "fit_context",
           "fit_leader_line"]


@dataclass(frozen=True, kw_only=True)
class FitRow:
    """One row of a table on the fit page: plain text cells."""

    cells: tuple[str, ...]
    flag: bool = False


@dataclass(frozen=True, kw_only=True)
class FitWords:
    """Everything the fit page and the cover say about the fit (plain text).

    Attributes
    ----------
    as_of : str
        The last observed date, formatted; "" when there is no fit report.
    used : bool
        True when the projections start from the fit.
    lead : tuple of str
        The opening sentences: growth in plain words, what the projections do.
    reason : str
        Why the projections are not fitted ("" when they are).
    warnings : tuple of str
        Problems of the fit, for the warning box.
    estimates, growth, scenarios, diagnostics : tuple of FitRow
        The page's tables.
    scenario_rule : str
        The measure and threshold of the scenario check.
    narrowing : str
        How much the fit narrows the ranges.
    """

    as_of: str
    used: bool
    lead: tuple[str, ...]
    reason: str
    warnings: tuple[str, ...]
    estimates: tuple[FitRow, ...]
    growth: tuple[FitRow, ...]
    scenarios: tuple[FitRow, ...]
    diagnostics: tuple[FitRow, ...]
    scenario_rule: str
    narrowing: str


def _num(x: float, unit: str = "") -> str:
    """A fitted figure: whole persons, two decimals for ratios, three for rates."""
    if unit == "persons":
        return format_number(x)
    if unit == "per day":
        return f"{x:.3f}"
    return f"{x:.2f}"


def _days(x: float) -> str:
    return f"{x:.0f}" if x >= 10 else f"{x:.1f}"


def growth_phrase(g: Growth, what: str = "admissions") -> str:
    """The growth in words: doubling, halving or level.

    ``"admissions were doubling every 4.3 days (90% range 3.6 to 5.6)"``.
    """
    d = g.doubling_days
    if g.trend == "doubling" and d is not None:
        return (f"{what} were doubling every {_days(d[0])} days (90% range {_days(d[1])} to "
                f"{_days(d[2])})")
    if g.trend == "halving" and d is not None:
        return (f"{what} were halving every {_days(d[0])} days (90% range {_days(d[1])} to "
                f"{_days(d[2])})")
    mid, low, high = g.growth_rate
    return (f"{what} were roughly level (growth rate {mid:+.3f} a day, 90% range {low:+.3f} "
            f"to {high:+.3f}, which holds zero)")


def _r_phrase(g: Growth) -> str:
    mid, low, high = g.reproduction_number
    return f"the reproduction number was {mid:.2f} (90% range {low:.2f} to {high:.2f})"


def _lead(plan: Plan, fit: FitOutcome, report: FitReport) -> tuple[str, ...]:
    rows = int(report.fitted.data.admissions.size)
    period = "weekly totals" if plan.details.observed_period == "weekly" else "days"
    first = format_date(min(o.date for o in plan.observed))
    sentences = [f"prepkit fitted the model to {rows} {period} of new admissions from {first} "
                 f"to {format_date(report.as_of)}."]
    before = report.growth[0]
    change = plan.fit.change_date
    if len(report.growth) > 1 and change is not None:
        after = report.growth[1]
        sentences.append(f"Before {format_date(change)}, {growth_phrase(before, 'infections')} "
                         f"and {_r_phrase(before)}; since then "
                         f"{growth_phrase(after, 'infections')} and {_r_phrase(after)}.")
    else:
        sentences.append(f"Over those {period}, {growth_phrase(before, 'infections')}, and "
                         f"{_r_phrase(before)}.")
    if fit.used:
        sentences.append(
            "Every projection in this pack starts from this fit: each scenario now runs at the "
            "fitted spread and severity, so the scenarios differ only by their measures.")
        if fit.moved:
            sentences.append(
                f"The figures up to {format_date(report.as_of)} already hold whatever was done "
                "until then, so no measure acts before "
                f"{format_date(report.as_of + dt.timedelta(days=1))}: "
                f"{name_list([f'“{m}”' for m in fit.moved])} "
                f"{'starts' if len(fit.moved) == 1 else 'start'} that day in the projections "
                "instead of the date the workbook gives (give a measure already in force as "
                "the Observed sheet's change date).")
    return tuple(sentences)


def few_figures_caution(report: FitReport) -> str:
    """A caution when the fit rests on fewer rows than :data:`FEW_FIT_POINTS`; else ""."""
    data = report.fitted.data
    rows = int(data.admissions.size)
    if rows >= FEW_FIT_POINTS[data.period]:
        return ""
    unit = "weekly totals" if data.period == "weekly" else "days of figures"
    return (f"The fit rests on only {rows} {unit}: its ranges are wide, and the figures of "
            "the next days can move it a lot")


def _warnings(report: FitReport) -> tuple[str, ...]:
    """The fit's problems and the few-figures caution, for the warning box."""
    few = few_figures_caution(report)
    return report.problems + ((few,) if few else ())


def _estimate_rows(report: FitReport) -> tuple[FitRow, ...]:
    out = []
    for e in report.estimates:
        if e.key not in (TRANSMISSIBILITY, CHANGE, INITIAL, SEVERITY):
            continue
        unit = "persons" if e.key == INITIAL else e.unit
        label = e.label + (f" [{e.unit}]" if e.unit and e.unit not in ("ratio",) else "")
        out.append(FitRow(cells=(
            label, _num(e.median, unit), f"{_num(e.low, unit)} to {_num(e.high, unit)}",
            f"{_num(e.prior_low, unit)} to {_num(e.prior_high, unit)}")))
    return tuple(out)


def _growth_rows(plan: Plan, report: FitReport) -> tuple[FitRow, ...]:
    out = []
    change = plan.fit.change_date
    for g in report.growth:
        when = ("Whole observed period" if change is None or len(report.growth) == 1
                else f"Before {format_date(change)}" if g.period == "before"
                else f"From {format_date(change)}")
        d = g.doubling_days
        kind = {"doubling": "doubling", "halving": "halving"}.get(g.trend, "")
        time = (f"{kind} {_days(d[0])} ({_days(d[1])} to {_days(d[2])})" if d is not None
                else "none: the range holds zero growth")
        mid, low, high = g.growth_rate
        r_mid, r_low, r_high = g.reproduction_number
        out.append(FitRow(cells=(
            when, f"{mid:+.3f} ({low:+.3f} to {high:+.3f})", time,
            f"{r_mid:.2f} ({r_low:.2f} to {r_high:.2f})")))
    return tuple(out)


def _scenario_rows(report: FitReport) -> tuple[FitRow, ...]:
    return tuple(
        FitRow(cells=(c.scenario, format_number(c.observed_total),
                      f"{format_number(c.low)} to {format_number(c.high)}",
                      "Consistent" if c.consistent else "Ruled out"),
               flag=not c.consistent)
        for c in report.consistency
    )


def _diagnostic_rows(report: FitReport) -> tuple[FitRow, ...]:
    checks = report.fitted.checks
    labels = [e.label for e in report.estimates]
    worst_rhat = max(checks.rhat)
    fewest = min(checks.effective)
    worst_label = labels[int(list(checks.rhat).index(worst_rhat))]
    fewest_label = labels[int(list(checks.effective).index(fewest))]
    return (
        FitRow(cells=("Agreement of the sampler's walkers (split R-hat, largest)",
                      f"{worst_rhat:.3f}", worst_label, f"at most {RHAT_LIMIT:.2f}"),
               flag=worst_rhat > RHAT_LIMIT),
        FitRow(cells=("Independent draws (effective sample size, fewest)", f"{fewest:,.0f}",
                      fewest_label, f"at least {MIN_EFFECTIVE_DRAWS}"),
               flag=fewest < MIN_EFFECTIVE_DRAWS),
        FitRow(cells=("Share of the sampler's moves accepted", f"{checks.acceptance:.0%}",
                      "all", f"{ACCEPTANCE_RANGE[0]:.0%} to {ACCEPTANCE_RANGE[1]:.0%}"),
               flag=not ACCEPTANCE_RANGE[0] <= checks.acceptance <= ACCEPTANCE_RANGE[1]),
        FitRow(cells=("Observed rows inside the fitted 90% range",
                      f"{checks.predictive.coverage:.0%}", "new admissions",
                      f"at least {MIN_COVERAGE:.0%}"),
               flag=checks.predictive.coverage < MIN_COVERAGE),
        FitRow(cells=("Posterior-predictive p-value of the scatter",
                      f"{checks.predictive.p_value:.2f}", "new admissions",
                      f"{P_VALUE_RANGE[0]:.3g} to {P_VALUE_RANGE[1]:.3g}"),
               flag=not P_VALUE_RANGE[0] <= checks.predictive.p_value <= P_VALUE_RANGE[1]),
    )


def _narrowing(report: FitReport) -> str:
    (a, b), (c, d) = report.narrowing
    before, after = b - a, d - c
    change = (f"{1.0 - after / before:.0%} narrower" if before > 0 and after < before
              else "no narrower")
    return ("If the spread stayed as the figures show, with no new measures, the highest "
            f"number of new admissions in a day would lie between {format_number(a)} and "
            f"{format_number(b)} (90% range) from the workbook's ranges alone, and between "
            f"{format_number(c)} and {format_number(d)} after the fit: {change}.")


def fit_context(plan: Plan, fit: FitOutcome | None) -> FitWords | None:
    """The words of the fit page; None when the plan has no observed figures.

    Parameters
    ----------
    plan : Plan
        The plan the projections ran (the fitted plan when the fit is used).
    fit : FitOutcome or None
        What came of the fit.

    Returns
    -------
    FitWords or None
        Plain text for the template.
    """
    if fit is None:
        return None
    report = fit.report
    if report is None:
        return FitWords(as_of="", used=False, lead=(), reason=fit.reason, warnings=(),
                        estimates=(), growth=(), scenarios=(), diagnostics=(),
                        scenario_rule="", narrowing="")
    low, high = RULED_OUT_TAILS
    rule = ("How each scenario is checked: 400 of its runs, as the workbook describes it "
            "(before the fit), over the observed days, with the counts' chance variation; "
            "a scenario is ruled out when the observed total of new admissions lies below "
            f"{low:.1%} or above {high:.1%} of its runs' totals (outside their central 95%).")
    return FitWords(
        as_of=format_date(report.as_of),
        used=fit.used,
        lead=_lead(plan, fit, report),
        reason=fit.reason,
        warnings=tuple(p[0].upper() + p[1:] + "." for p in _warnings(report)),
        estimates=_estimate_rows(report),
        growth=_growth_rows(plan, report),
        scenarios=_scenario_rows(report),
        diagnostics=_diagnostic_rows(report),
        scenario_rule=rule,
        narrowing=_narrowing(report),
    )


def fit_leader_line(plan: Plan, fit: FitOutcome | None) -> str:
    """The bottom line's sentence on the fit; "" without observed figures."""
    if fit is None:
        return ""
    report = fit.report
    if report is None or not fit.used:
        return ("The projections are not fitted to the local figures: " + fit.reason
                if fit.reason else "")
    latest = report.growth[-1]
    ruled = [f"“{c.scenario}”" for c in report.consistency if not c.consistent]
    text = (f"These projections are fitted to local hospital figures up to "
            f"{format_date(report.as_of)}: {growth_phrase(latest, 'infections')}. "
            "Every scenario runs at that spread and severity; they differ only by their "
            "measures.")
    if ruled:
        names = name_list(ruled)
        text += (f" The spread and severity the workbook gives {names} are already ruled out "
                 "by the figures.")
    few = few_figures_caution(report)
    if few:
        text += f" {few}."
    if report.problems:
        text += " The fit has warnings: see 'What the local figures say'."
    return text


def fit_chart_words(plan: Plan, report: FitReport) -> ChartWords:
    """Title, caption and alternate text of the fit chart."""
    last = int(report.days[-1])
    adm = report.bands["admissions"][:, last]
    ward = report.bands["ward"][:, last]
    return ChartWords(
        title="The local figures against the fitted model",
        caption=("Dots: the figures the workbook gives. Line: the fitted model's median; "
                 "darker band: its 50% range; lighter band: its 90% range (the model's "
                 "expected counts, without the day-to-day chance in the counts)."),
        alt=(f"Observed new admissions and patients in beds up to "
             f"{format_date(report.as_of)} with the fitted model. On the last day the model "
             f"gives {adm[2]:.1f} new admissions (90% range {adm[0]:.1f} to {adm[4]:.1f}) and "
             f"{ward[2]:.1f} ward patients (90% range {ward[0]:.1f} to {ward[4]:.1f})."),
    )
