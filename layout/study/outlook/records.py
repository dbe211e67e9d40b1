"""The plain-data form of outlook results: numbers and tables as JSON-ready values.

Part of :mod:`layout.study.outlook`, whose notes say how a sampled project is built and
which year is which.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ...errors import InputError, check_fields, check_whole


def plain_number(value):
    """Return a number as plain JSON data: a float, or None for NaN; text and None as they are."""
    if isinstance(value, (str, bool)) or value is None:
        return value
    if isinstance(value, (int, np.integer)):
        return int(value)
    number = float(value)
    return None if math.isnan(number) else number


def frame_to_dict(frame: pd.DataFrame) -> dict:
    """Return a DataFrame of numbers (or text) with a flat index as plain lists."""
    return {
        "index_name": frame.index.name,
        "columns_name": frame.columns.name,
        "index": [plain_number(v) for v in frame.index],
        "columns": [plain_number(c) for c in frame.columns],
        "data": [[plain_number(v) for v in frame[c].tolist()] for c in frame.columns],
    }


def frame_from_dict(field: str, data) -> pd.DataFrame:
    """Rebuild a table from :func:`frame_to_dict`'s form; errors name ``field``."""
    try:
        check_fields(data, ("index_name", "columns_name", "index", "columns", "data"),
                     required=("index", "columns", "data"), what="table")
    except InputError as err:
        raise err.at(field) from None
    index, columns, values = data["index"], data["columns"], data["data"]
    if not (isinstance(index, list) and isinstance(columns, list) and isinstance(values, list)):
        raise InputError(field, "index, columns and data must be lists")
    if len(values) != len(columns) or any(not isinstance(v, list) or len(v) != len(index)
                                          for v in values):
        raise InputError(f"{field}.data", "needs one list per column, one value per row",
                         allowed=f"{len(columns)} lists of {len(index)} values")
    out = {}
    for c, column in zip(columns, values, strict=True):
        if column and all(isinstance(v, str) for v in column):
            out[c] = pd.Series(column, dtype=object).astype("str")
            continue
        try:
            out[c] = np.array([np.nan if v is None else v for v in column], dtype=float)
        except (TypeError, ValueError):
            raise InputError(f"{field}.data", "must hold numbers or null", value=c) from None
    frame = pd.DataFrame(out, columns=pd.Index(columns) if columns else None)
    frame.index = pd.Index(index, name=data.get("index_name"))
    if not columns:
        frame = pd.DataFrame(index=frame.index)
    frame.columns.name = data.get("columns_name")
    return frame


def float_or_none(field: str, value):
    """Read a number from plain data, None standing for NaN; errors name ``field``."""
    if value is None:
        return math.nan
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(field, "must be a number or null", value=value)
    return float(value)


def whole_number(field: str, value, low: int) -> int:
    """Check a whole number of at least ``low``; errors name ``field``."""
    return check_whole(field, value, low, allowed=f">= {low}")


def layout_figures(result) -> dict:
    """Return the layout's annual energy, unshaded energy, energy lost and shade loss."""
    totals = result.totals
    energy, unshaded = totals["energy_kwh"], totals["energy_unshaded_kwh"]
    return {"energy_kwh": energy, "energy_unshaded_kwh": unshaded,
            "energy_lost_kwh": unshaded - energy, "shade_loss_pct": totals["shade_loss_pct"]}
