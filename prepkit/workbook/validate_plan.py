"""Checks across sheets that only the whole plan can answer, each named by sheet and field.

Every input may be in range while the plan as a whole cannot be run. The
model would then stop with a sentence naming no cell
(:class:`~prepkit.errors.ModelError`); these checks find the same conditions
first and name the sheets, cells and fields involved:

* **Nobody can infect anybody**: no chain of infection leads from a band
  back to itself, because contacts, susceptibility or infectiousness are
  zero where it matters (:func:`check_transmission`). For a nonnegative
  next-generation matrix, R0 (its spectral radius) is above 0 exactly when
  the graph of possible infections has a cycle (Perron-Frobenius; Berman &
  Plemmons 1994, Nonnegative Matrices in the Mathematical Sciences,
  ch. 2), so only which entries are zero matters.
* **More people than a band holds**: immune at day 0 plus the band's share
  of the day-0 infections (:func:`check_seeding`).
* **Two vaccines in one scenario** (:func:`check_one_vaccine`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from prepkit.errors import Problem
from prepkit.plan import Plan
from prepkit.workbook.cells import Got, Key, TableRow
from prepkit.workbook.schema import FIELDS_BY_NAME, TABLES
from prepkit.workbook.sheets import MATRIX_SHEETS
from prepkit.workbook.validate import problem

__all__ = ["check_one_vaccine", "check_plan", "check_review", "check_seeding",
           "check_transmission"]


def _label(name: str) -> str:
    return FIELDS_BY_NAME[name].label


def _on(name: str) -> str:
    f = FIELDS_BY_NAME[name]
    return f"{f.label} ({f.sheet})"


def _has_cycle(edges: Sequence[Sequence[bool]]) -> bool:
    """True when the directed graph ``edges[i][j]`` (i infected by j) has a cycle."""
    n = len(edges)
    state = [0] * n  # 0 unseen, 1 on the path, 2 done

    def visit(i: int) -> bool:
        state[i] = 1
        for j in range(n):
            if edges[i][j] and (state[j] == 1 or (state[j] == 0 and visit(j))):
                return True
        state[i] = 2
        return False

    return any(state[i] == 0 and visit(i) for i in range(n))


def check_transmission(plan: Plan) -> list[Problem]:
    """Refuse a plan in which no infection chain can sustain itself (R0 would be 0).

    Band ``i`` can be infected by band ``j`` when ``i`` is susceptible
    (relative susceptibility above 0), has contacts with ``j``, and ``j`` is
    infectious (a central share with symptoms above 0, which every draw of the
    range then has too, or infectiousness without symptoms above 0).

    Parameters
    ----------
    plan : Plan
        The plan as read.

    Returns
    -------
    list of Problem
        One problem naming the sheets and fields involved, or none.
    """
    bands = len(plan.bands)
    disease, contacts = plan.disease, plan.contacts
    susceptible = [s > 0.0 for s in disease.relative_susceptibility]
    rho = disease.asymptomatic_relative_infectiousness
    infectious = [p.central > 0.0 or rho > 0.0 for p in disease.symptomatic_share]
    if contacts.matrices is not None:
        contact = [[any(m[i][j] > 0.0 for m in contacts.matrices.values()) for j in range(bands)]
                   for i in range(bands)]
        contact_fields = " and ".join(
            f"the {sheet} matrix" for sheet in MATRIX_SHEETS.values())
        contact_sheet = next(iter(MATRIX_SHEETS.values()))
    else:
        daily = contacts.mean_daily or (0.0,) * bands
        eps = contacts.assortativity
        people = [b.people for b in plan.bands]
        mixed = sum(c * n for c, n in zip(daily, people, strict=True)) > 0.0 and eps < 1.0
        contact = [[daily[i] > 0.0 and ((i == j and eps > 0.0)
                                        or (mixed and daily[j] * people[j] > 0.0))
                    for j in range(bands)] for i in range(bands)]
        contact_fields = _on("band_contacts.mean_daily") + " and " + _on("mixing.assortativity")
        contact_sheet = FIELDS_BY_NAME["band_contacts.mean_daily"].sheet
    edges = [[susceptible[i] and contact[i][j] and infectious[j] for j in range(bands)]
             for i in range(bands)]
    if _has_cycle(edges):
        return []
    if not any(susceptible):
        why = f"'{_label('band_disease.relative_susceptibility')}' is 0 in every band"
        sheet = FIELDS_BY_NAME["band_disease.relative_susceptibility"].sheet
    elif not any(infectious):
        why = (f"'{_label('band_disease.symptomatic_share')}' is 0 in every band, and "
               f"'{_label('disease.asymptomatic_relative_infectiousness')}' is 0")
        sheet = FIELDS_BY_NAME["band_disease.symptomatic_share"].sheet
    elif not any(any(row) for row in contact):
        why = "every contact is 0"
        sheet = contact_sheet
    else:
        why = ("the bands that are susceptible, meet others and are infectious form no chain "
               "of infection that leads back to a band")
        sheet = contact_sheet
    fields = ", ".join([
        contact_fields,
        _on("band_disease.relative_susceptibility"),
        _on("band_disease.symptomatic_share"),
        _on("disease.asymptomatic_relative_infectiousness"),
    ])
    return [Problem(
        sheet=sheet, cell="", field=fields,
        expected="inputs with which the disease can spread (susceptible people who meet "
                 "infectious people), so that R0 is above 0",
        found=f"nobody can infect anybody: {why}",
    )]


def check_seeding(plan: Plan, disease_rows: Mapping[str, TableRow],
                  items: Mapping[Key, Got]) -> list[Problem]:
    """Refuse a band whose immune share plus its day-0 infections exceed its people.

    Day-0 infections are spread over the bands in proportion to their
    people, as the model seeds them.

    Parameters
    ----------
    plan : Plan
        The plan as read.
    disease_rows : mapping of str to TableRow
        Disease-by-age rows by band label.
    items : mapping
        The item inputs (for the cell of the day-0 infections).

    Returns
    -------
    list of Problem
        One problem per band, at its immune-share cell.
    """
    population = plan.population
    if population <= 0.0:
        return []
    seeded_share = plan.disease.initial_infections / population
    seed = items.get(("disease.initial_infections", "central"))
    seed_where = f" ({seed.sheet}!{seed.cell})" if seed is not None and seed.cell else ""
    problems = []
    for band, immune in zip(plan.bands, plan.disease.prior_immunity, strict=True):
        if immune + seeded_share <= 1.0 + 1e-12:
            continue
        row = disease_rows.get(band.label)
        got = row.get("band_disease.prior_immunity") if row is not None else None
        problems.append(Problem(
            sheet=got.sheet if got is not None else TABLES["band_disease"].sheet,
            cell=got.cell if got is not None else "",
            field=(f"{_label('band_disease.prior_immunity')}, band {band.label}, with "
                   f"{_label('disease.initial_infections')}{seed_where}"),
            expected="immune people plus the band's share of the day-0 infections at most "
                     "the band's people",
            found=(f"{100 * immune:.4g}% immune plus {seeded_share * band.people:,.4g} of "
                   f"the day-0 infections, more than its {band.people:,.0f} people"),
        ))
    return problems


def check_one_vaccine(plan: Plan, scenario_rows: Sequence[TableRow]) -> list[Problem]:
    """Refuse a scenario whose vaccination measures use different vaccines.

    Parameters
    ----------
    plan : Plan
        The plan as read.
    scenario_rows : sequence of TableRow
        The Scenarios rows, in the order of ``plan.scenarios``.

    Returns
    -------
    list of Problem
        One problem per such scenario, at its measures cell.
    """
    problems = []
    for scenario, row in zip(plan.scenarios, scenario_rows, strict=False):
        vaccines: dict[tuple[object, ...], str] = {}
        for name in scenario.interventions:
            measure = plan.intervention(name)
            if measure.vaccination is None:
                continue
            v = measure.vaccination
            vaccines.setdefault((v.efficacy_infection, v.efficacy_severe, v.days_to_protection),
                                name)
        if len(vaccines) <= 1:
            continue
        got = row.get("scenario.interventions")
        names = " and ".join(vaccines.values())
        fields = ", ".join(_on(n) for n in ("measure.efficacy_infection",
                                            "measure.efficacy_severe",
                                            "measure.days_to_protection"))
        problems.append(Problem(
            sheet=got.sheet, cell=got.cell,
            field=f"{_label('scenario.interventions')}, scenario {scenario.name}; {fields}",
            expected="vaccination measures that all use one vaccine (the same efficacies and "
                     "days to protection) in one scenario",
            found=f"{names}, which differ",
        ))
    return problems


def check_plan(plan: Plan, *, items: Mapping[Key, Got], disease_rows: Mapping[str, TableRow],
               scenario_rows: Sequence[TableRow]) -> list[Problem]:
    """Every whole-plan check, in sheet order.

    Parameters
    ----------
    plan : Plan
        The plan as read.
    items : mapping
        The item inputs.
    disease_rows : mapping of str to TableRow
        Disease-by-age rows by band label.
    scenario_rows : sequence of TableRow
        The Scenarios rows.

    Returns
    -------
    list of Problem
        Every problem found.
    """
    return [*check_review(plan, items), *check_transmission(plan),
            *check_seeding(plan, disease_rows, items), *check_one_vaccine(plan, scenario_rows)]


def check_review(plan: Plan, items: Mapping[Key, Got]) -> list[Problem]:
    """A review date the planner gives lies after day 0."""
    got = items.get(("details.review_by", "central"))
    given = plan.details.review_by
    if got is None or given is None or given > plan.details.day0:
        return []
    return [problem(got, f"a date after day 0 ({plan.details.day0.isoformat()}): the date by "
                         "which these figures are checked again")]
