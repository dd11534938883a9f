"""The limitations and cautions page."""

from __future__ import annotations

from prepkit.plan import Plan
from prepkit.report.words.formatting import format_days, format_number

#: Population below which chance events dominate a local outbreak [persons]
#: (a judgement for the wording, no source).
SMALL_POPULATION = 20_000


def _range_text(low: float, high: float, unit: str = "", digits: int = 1) -> str:
    return f"{low:.{digits}f} to {high:.{digits}f}{unit}"


def _spread_clause(plan: Plan) -> str:
    """The first main uncertainty: how fast the disease spreads, with its range when given."""
    d = plan.disease
    if d.r0 is not None and not d.r0.is_point:
        return f"how fast the disease spreads (R0 from {_range_text(d.r0.low, d.r0.high)})"
    if d.doubling_time_days is not None and not d.doubling_time_days.is_point:
        dt_ = d.doubling_time_days
        return f"how fast the disease spreads (doubling time {_range_text(dt_.low, dt_.high)} days)"
    return "how fast the disease spreads"


def limitations(plan: Plan, *, ensemble: bool = False) -> tuple[tuple[str, str], ...]:
    """The limitations and cautions page: (heading, text) pairs.

    Parameters
    ----------
    plan : Plan
        The plan; some points depend on its size and inputs.
    ensemble : bool, optional
        True when uncertainty ranges were computed.

    Returns
    -------
    tuple of (str, str)
        Plain-language points, the general ones first.
    """
    points: list[tuple[str, str]] = [
        (
            "A planning aid, not a forecast",
            "The pack shows what would follow if the assumptions in the planning workbook held. "
            "It does not predict what will happen, and its dates and numbers should not be "
            "quoted as predictions.",
        ),
        (
            "Who decides",
            "Decisions on measures, hospital surge and clinical care rest with the local health "
            "authority and with licensed clinical practice. This pack informs those decisions; "
            "it does not make them.",
        ),
    ]
    main = [_spread_clause(plan)]
    main += [
        "how many infected people need a hospital bed, and for how long",
        "how many beds other patients need at the same time",
        "how closely people follow the measures",
    ]
    points.append(
        (
            "The main uncertainties",
            "The results depend most on " + ", ".join(main[:-1]) + " and " + main[-1] + ". "
            + (
                "The uncertainty ranges sample these from the workbook's Low to High values."
                if ensemble
                else "The scenarios show a few combinations of these; they do not bracket every "
                "plausible outcome."
            ),
        )
    )
    points.append(
        (
            "What the model leaves out",
            "People within an age band are treated alike and mix at random; immunity does not "
            "wane within the period; nobody transmits before symptoms start; people in hospital "
            "do not transmit; the population does not change; and hospitals elsewhere are "
            "assumed to take the share of patients stated in the workbook.",
        )
    )
    if plan.population < SMALL_POPULATION:
        points.append(
            (
                "Chance in a small population",
                f"With {format_number(plan.population)} residents, chance events matter: a real "
                "outbreak may die out early, arrive later, or peak higher than these smooth "
                "averages. Bed figures below one or two are averages, not predictions of single "
                "patients.",
            )
        )
    if plan.observed and plan.fitted is not None:
        points.append(
            (
                "Fitted to observed figures",
                f"The projections are fitted to the {_observed_span(plan)} of observed new "
                "admissions. A fit to a few weeks of early figures says how fast the outbreak "
                "grew then, not how people will behave next: the ranges carry the fit's "
                "uncertainty, not surprises. Admissions are fitted; patients in beds are shown "
                "as a check only. Rerun the pack as new figures arrive.",
            )
        )
    elif plan.observed:
        points.append(
            (
                "Observed figures",
                f"The {_observed_span(plan)} of observed hospital figures are drawn "
                "beside the model curves for comparison only; the model is not fitted to them.",
            )
        )
    return tuple(points)


def _observed_span(plan: Plan) -> str:
    """How much was observed: ``10 days`` of daily figures, ``1 week`` or ``6 weeks`` of totals."""
    count = len(plan.observed)
    if plan.details.observed_period == "weekly":
        return "1 week" if count == 1 else f"{count:,} weeks"
    return format_days(count)
