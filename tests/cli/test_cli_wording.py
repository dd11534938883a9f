"""Counting words in messages: "both scenarios", never "all 2 scenarios"."""

from __future__ import annotations

import inspect
import re
from pathlib import Path

import pytest

from prepkit.errors import Problem, WorkbookError
from prepkit.workbook.describe import all_of, counted, describe_problems

ROOT = Path(__file__).parents[2]


@pytest.mark.parametrize(("count", "words"), [
    (0, "no scenarios"), (1, "the scenario"), (2, "both scenarios"), (3, "all 3 scenarios"),
    (1200, "all 1,200 scenarios"),
])
def test_all_of_says_both_for_two_and_all_n_from_three(count: int, words: str) -> None:
    assert all_of(count, "scenario") == words


def test_all_of_and_counted_take_an_irregular_plural() -> None:
    assert all_of(2, "age band") == "both age bands"
    assert all_of(4, "analysis", "analyses") == "all 4 analyses"
    assert counted(1, "problem") == "1 problem"
    assert counted(2, "problem") == "2 problems"


def test_one_problem_is_not_counted_as_problems() -> None:
    problem = Problem(sheet="Hospitals", cell="B5", field="Staffed ward beds",
                      expected="a whole number", found='"many"')
    text = describe_problems(WorkbookError([problem], [problem]))
    assert text.splitlines()[0] == "1 problem found; the workbook cannot be used yet:"
    assert "1 warning:" in text


def test_no_message_in_these_modules_counts_with_all_n_or_brackets() -> None:
    # The helper is the one way to say "every one of N": a bare f"all {n} ..." would say
    # "all 2 scenarios", and "scenario(s)" reads as a form.
    mine = sorted(str(path.relative_to(ROOT)) for path in (ROOT / "prepkit").rglob("*.py")
                  if path.name != "plural.py")
    for name in mine:
        text = (ROOT / name).read_text(encoding="utf-8").replace(inspect.getsource(all_of), "")
        assert not re.search(r'f"[^"]*\ball \{', text), name
        assert not re.search(r"\b[a-z]{4,}\(s\)", text), name
