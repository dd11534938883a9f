"""Plain JSON values: the one conversion used by every JSON summary of a run.

Dates become ISO strings, NaN, infinities and missing values become None,
numpy numbers become Python numbers, dataclasses and mappings become dicts
and sequences lists.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Mapping
from dataclasses import asdict, is_dataclass
from typing import Any

import numpy as np
import pandas as pd


def jsonable(value: Any) -> Any:
    """Convert a value to plain JSON types (dates to ISO strings, NaN/inf to None).

    Parameters
    ----------
    value : object
        Dataclass, mapping, sequence, number, date, string or missing value.

    Returns
    -------
    object
        The same content built from dict, list, str, int, float, bool and None.
    """
    if value is None:
        return None
    if is_dataclass(value) and not isinstance(value, type):
        return jsonable(asdict(value))
    if isinstance(value, Mapping):
        return {str(k): jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return [jsonable(v) for v in value.tolist()]
    if isinstance(value, dt.datetime):
        return value.date().isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, bool | np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, str):
        return value
    try:
        if pd.isna(value):
            return None
    except (TypeError, ValueError):
        pass
    return value
