"""Both samples give the stored golden outputs: a redesign must not change a number.

The golden files are written by ``tests/golden/make_golden.py``; a deliberate
change of numbers rewrites them in the same commit. Numbers are compared to
1e-12 relative (bit-for-bit equality is not required across machines: BLAS and
compiled code may round the last bit differently); text, dates and keys exactly.
"""

from __future__ import annotations

import csv
import io
import json
import math
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parents[1] / "golden"
sys.path.insert(0, str(HERE))

from make_golden import SAMPLES, outputs  # noqa: E402

RTOL = 1e-12


def _same(found: object, expected: object, where: str) -> None:
    if isinstance(expected, dict):
        assert isinstance(found, dict) and found.keys() == expected.keys(), where
        for key in expected:
            _same(found[key], expected[key], f"{where}.{key}")
    elif isinstance(expected, list):
        assert isinstance(found, list) and len(found) == len(expected), where
        for i, (a, b) in enumerate(zip(found, expected, strict=True)):
            _same(a, b, f"{where}[{i}]")
    elif isinstance(expected, float) and not isinstance(expected, bool):
        assert isinstance(found, int | float), where
        assert math.isclose(found, expected, rel_tol=RTOL, abs_tol=1e-9), (where, found, expected)
    else:
        assert found == expected, (where, found, expected)


def _number(text: str) -> float | str:
    try:
        return float(text)
    except ValueError:
        return text


@pytest.mark.parametrize("name", SAMPLES)
def test_sample_outputs_match_the_golden_files(name: str) -> None:
    golden_json = HERE / f"{name}.summary.json"
    golden_csv = HERE / f"{name}.daily.csv"
    if not golden_json.exists():
        pytest.fail(f"missing golden file {golden_json.name}: run tests/golden/make_golden.py")
    summary, daily = outputs(name)
    _same(json.loads(json.dumps(summary)), json.loads(golden_json.read_text("utf-8")), name)
    found = list(csv.reader(io.StringIO(daily.decode("utf-8-sig"))))
    expected = list(csv.reader(io.StringIO(golden_csv.read_bytes().decode("utf-8-sig"))))
    assert found[0] == expected[0]
    assert len(found) == len(expected)
    for row, (a, b) in enumerate(zip(found[1:], expected[1:], strict=True), start=2):
        _same([_number(x) for x in a], [_number(x) for x in b], f"{name}.daily.csv row {row}")
