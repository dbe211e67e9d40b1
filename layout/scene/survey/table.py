"""The survey table: its columns, reading it from CSV or a DataFrame, and writing it out.

One row per obstruction, one column per field of a survey entry (:data:`SURVEY_COLUMNS`) and
one per tolerance, followed on output by the heights computed from the readings
(:data:`COMPUTED_COLUMNS`). Reading keeps the good rows and reports every bad cell as a
:class:`SurveyProblem` with its row and column, so a surveyor can fix the file in one pass.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ...errors import InputError, check_fields, check_finite, check_whole
from ...units import FOOT_M, INCH_M, parse_length
from .entry import SurveyEntry, _check_entries
from .geometry import entry_geometry, height_range
from .growth import GROWTH_CLASS_RATES_M_PER_YR
from .instruments import DEFAULT_EYE_HEIGHT_M, METHODS
from .kinds import SURVEY_KINDS
from .readings import _READINGS, _as_reading

__all__ = [
    "COMPUTED_COLUMNS",
    "LENGTH_UNITS",
    "SURVEY_COLUMNS",
    "SurveyProblem",
    "entries_from_table",
    "read_survey_csv",
    "survey_table",
]

#: Units a survey table's ``length_unit`` column may name.
LENGTH_UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "ft": FOOT_M, "in": INCH_M}


def _column_docs() -> dict[str, str]:
    docs = {
        "name": "label of the obstruction (text)",
        "kind": "one of " + ", ".join(SURVEY_KINDS),
        "method": "tangent (horizontal distance) or laser (slope distance to the top); "
                  "blank = tangent",
        "length_unit": "unit of bare numbers in the length columns of the row: "
                       + ", ".join(LENGTH_UNITS) + "; blank = m",
        "station_x_m": "observer's position, east [m]; blank = 0",
        "station_y_m": "observer's position, north [m]; blank = 0",
        "station_z_m": "ground level at the observer, site frame z [m]; blank = 0",
        "eye_height_m": f"eye height above the ground [m]; blank = {DEFAULT_EYE_HEIGHT_M}",
        "declination_deg": "magnetic declination, east positive [degrees]; blank = 0 (true)",
        "trunk_radius_m": "tree trunk radius [m]; blank = 0.2",
        "crown_shape": "tree crown: spheroid (rounded, broadleaf) or cone (conifer); "
                       "blank = spheroid",
        "axis_deg": "compass bearing of a block's width side [degrees]; blank = across the "
                    "line of sight",
        "deciduous": "tree loses its leaves: true/false; blank = false",
        "growth_m_per_yr": "tree growth: slow, medium, fast, or a rate [m/yr]; blank = none",
        "mature_height_m": "height the tree does not grow past [m]; blank = no cap",
    }
    for name, spec in _READINGS.items():
        docs[name] = f"reading [{spec.unit}]"
        docs[spec.tol_column] = f"tolerance of {name}, ± [{spec.unit}]; blank = default"
    return docs


_COLUMN_DOCS = _column_docs()

#: Input columns of a survey table, in order; each maps to its meaning and unit. Length
#: columns (``..._m``) hold metres unless the row's ``length_unit`` says otherwise; a text cell
#: with its own unit ("36 ft", "11 ft 6 in") is read in that unit.
SURVEY_COLUMNS: dict[str, str] = {
    name: _COLUMN_DOCS[name] for name in (
        "name", "kind", "method", "length_unit", "station_x_m", "station_y_m", "station_z_m",
        "eye_height_m", "declination_deg", "bearing_deg", "bearing_tol_deg", "distance_m",
        "distance_tol_m", "top_angle_deg", "top_angle_tol_deg", "base_angle_deg",
        "base_angle_tol_deg", "crown_radius_m", "crown_radius_tol_m", "crown_base_angle_deg",
        "crown_base_angle_tol_deg", "crown_base_m", "crown_base_tol_m", "trunk_radius_m",
        "crown_shape", "deciduous", "growth_m_per_yr", "mature_height_m", "width_m",
        "width_tol_m", "depth_m", "depth_tol_m", "axis_deg", "radius_m", "radius_tol_m",
    )
}

#: Columns :func:`survey_table` adds, computed from the nominal readings; ignored on reading.
COMPUTED_COLUMNS: dict[str, str] = {
    "x_m": "plan position of the object's axis, east [m]",
    "y_m": "plan position of the object's axis, north [m]",
    "top_z_m": "height of the top, site frame z [m]",
    "base_z_m": "height of the foot, site frame z [m]",
    "height_m": "top minus foot [m]",
    "height_min_m": "least height over the reading tolerances [m]",
    "height_max_m": "greatest height over the reading tolerances [m]",
}

_REQUIRED_COLUMNS = ("kind", "bearing_deg", "distance_m", "top_angle_deg")
_LENGTH_COLUMNS = {name for name in SURVEY_COLUMNS if name.endswith("_m")}
_TOL_TO_FIELD = {spec.tol_column: name for name, spec in _READINGS.items()}


@dataclass(frozen=True)
class SurveyProblem:
    """A bad cell or row of a survey table.

    Parameters
    ----------
    row : int
        Row number as in the file: the header is row 1, the first data row 2.
    column : str
        Column name ("" when the problem is the row as a whole).
    message : str
        What is wrong.
    value : str
        The cell as read ("" when blank or not applicable).
    allowed : str
        The allowed range or form.
    """

    row: int
    column: str
    message: str
    value: str = ""
    allowed: str = ""

    def __str__(self) -> str:
        text = f"row {self.row}, {self.column or 'row'}: {self.message}"
        details = [f"got {self.value!r}"] if self.value else []
        if self.allowed:
            details.append(f"allowed: {self.allowed}")
        return text + (f" ({'; '.join(details)})" if details else "")

    def to_dict(self) -> dict:
        """Plain-data form."""
        return {"row": self.row, "column": self.column, "message": self.message,
                "value": self.value, "allowed": self.allowed}

    @classmethod
    def from_dict(cls, data) -> SurveyProblem:
        """Inverse of :meth:`to_dict`; raises :class:`InputError` naming the bad field."""
        known = ("row", "column", "message", "value", "allowed")
        check_fields(data, known, required=("row", "column", "message"), what="survey problem")
        row = data["row"]
        check_whole("row", row, 1, problem="must be a row number", allowed=">= 1")
        for key in known[1:]:
            if not isinstance(data.get(key, ""), str):
                raise InputError(key, "must be text", value=data[key])
        return cls(row, data["column"], data["message"], data.get("value", ""),
                   data.get("allowed", ""))


def _blank(cell) -> bool:
    if cell is None:
        return True
    if isinstance(cell, float) and math.isnan(cell):
        return True
    return isinstance(cell, str) and not cell.strip()


def _parse_number(column: str, cell) -> float:
    if isinstance(cell, str):
        text = cell.strip()
        for suffix in ("°", "deg", "degrees"):
            if text.lower().endswith(suffix):
                text = text[: -len(suffix)].strip()
                break
        try:
            number = float(text)
        except ValueError:
            raise InputError(column, "must be a number", value=cell,
                             allowed="a number") from None
        return check_finite(column, number)
    if isinstance(cell, bool):
        raise InputError(column, "must be a number", value=cell)
    return check_finite(column, cell)


def _parse_length_cell(column: str, cell, unit: str) -> float:
    """Read a length cell: a plain number (also 1e-05) in ``unit``, or text with its unit."""
    if isinstance(cell, str):
        try:
            number = float(cell.strip())
        except ValueError:
            return parse_length(cell, default_unit=unit, field=column)
        cell = check_finite(column, number)
    if unit == "m":
        return check_finite(column, cell)  # exact: no multiplication by 1.0 needed
    return parse_length(cell, default_unit=unit, field=column)


def _parse_bool(column: str, cell) -> bool:
    if isinstance(cell, (bool, np.bool_)):
        return bool(cell)
    text = str(cell).strip().lower()
    if text in ("true", "yes", "y", "1"):
        return True
    if text in ("false", "no", "n", "0"):
        return False
    raise InputError(column, "must be true or false", value=cell, allowed="true/false, yes/no")


def _parse_row(cells: Mapping[str, Any]) -> dict:
    """Turn one row's cells into SurveyEntry keywords; collects every bad cell."""
    problems: list[InputError] = []
    unit = "m"
    if not _blank(cells.get("length_unit")):
        unit = str(cells["length_unit"]).strip().lower()
        if unit not in LENGTH_UNITS:
            problems.append(InputError("length_unit", "is not a length unit",
                                       value=cells["length_unit"],
                                       allowed=", ".join(LENGTH_UNITS)))
            unit = "m"
    values: dict[str, Any] = {}
    for column, cell in cells.items():
        if column == "name" and isinstance(cell, str) and cell:
            values[column] = cell  # a name is kept as typed, spaces and all
            continue
        if column == "length_unit" or column in COMPUTED_COLUMNS or _blank(cell):
            continue
        try:
            if column in ("kind", "method", "crown_shape"):
                values[column] = str(cell).strip().lower()
            elif column == "name":
                values[column] = str(cell)
            elif column == "deciduous":
                values[column] = _parse_bool(column, cell)
            elif column == "growth_m_per_yr":
                text = str(cell).strip().lower() if isinstance(cell, str) else None
                if text in GROWTH_CLASS_RATES_M_PER_YR:
                    values[column] = text
                else:
                    try:
                        values[column] = _parse_length_cell(column, cell, "m")
                    except InputError:
                        raise InputError(column, "is not a growth class or a rate", value=cell,
                                         allowed="slow, medium, fast, or 0 to 3 m/yr"
                                         ) from None
            elif column in _LENGTH_COLUMNS:
                values[column] = _parse_length_cell(column, cell, unit)
            else:
                values[column] = _parse_number(column, cell)
        except InputError as err:
            problems.append(err)
    kwargs: dict[str, Any] = {}
    method = values.get("method", "tangent")
    for name in _READINGS:
        tol_col = _READINGS[name].tol_column
        if name in values:
            if tol_col in values:
                kwargs[name] = {"value": values[name], "tolerance": values[tol_col]}
            else:
                kwargs[name] = values[name]  # the entry gives it the default tolerance
            try:  # check each reading on its own, so that every bad cell is reported
                _as_reading(name, kwargs[name], method if method in METHODS else "tangent")
            except InputError as err:
                problems.append(err)
        elif tol_col in values:
            problems.append(InputError(tol_col, "has no reading to belong to",
                                       value=values[tol_col], allowed=f"blank, or fill {name}"))
    if problems:
        raise _RowProblems(problems)
    for key, value in values.items():
        if key not in _READINGS and key not in _TOL_TO_FIELD:
            kwargs[key] = value
    return kwargs


class _RowProblems(Exception):
    def __init__(self, errors: list[InputError]):
        super().__init__(errors)
        self.errors = errors


def _column_of(field: str) -> str:
    head, _, rest = field.partition(".")
    if rest == "tolerance" and head in _READINGS:
        return _READINGS[head].tol_column
    return head


def _problem(row: int, err: InputError, cells: Mapping[str, Any] | None = None
             ) -> SurveyProblem:
    column = _column_of(err.field)
    if cells is not None and column in cells and not _blank(cells[column]):
        value = str(cells[column])  # the cell as in the file
    else:
        value = "" if err.value is None else str(err.value)
    return SurveyProblem(row, column, err.problem, value, err.allowed or "")


def _entries_from_records(header: list[str], records) -> tuple[list[SurveyEntry],
                                                                list[SurveyProblem]]:
    problems: list[SurveyProblem] = []
    allowed = ", ".join([*SURVEY_COLUMNS, *COMPUTED_COLUMNS])
    use = []
    seen = set()
    for name in header:
        key = str(name).strip()
        if key in seen:
            problems.append(SurveyProblem(1, key, "column appears twice", key, "each once"))
            use.append(None)
        elif key not in SURVEY_COLUMNS and key not in COMPUTED_COLUMNS:
            problems.append(SurveyProblem(1, key, "is not a survey column", key, allowed))
            use.append(None)
        else:
            use.append(key)
        seen.add(key)
    missing = [c for c in _REQUIRED_COLUMNS if c not in seen]
    for c in missing:
        problems.append(SurveyProblem(1, c, "required column is missing", "",
                                      ", ".join(_REQUIRED_COLUMNS)))
    if missing:
        return [], problems
    entries = []
    for row, cells in records:
        if all(_blank(c) for c in cells):
            continue
        if len(cells) != len(header):
            problems.append(SurveyProblem(row, "", "has a different number of cells than the "
                                          "header", str(len(cells)), f"{len(header)} cells"))
            continue
        mapping = {key: cell for key, cell in zip(use, cells, strict=True) if key is not None}
        try:
            kwargs = _parse_row(mapping)
        except _RowProblems as bad:
            found = [_problem(row, err, mapping) for err in bad.errors]
            order = {key: i for i, key in enumerate(use) if key is not None}
            problems.extend(sorted(found, key=lambda p: order.get(p.column, len(order))))
            continue
        for key in _REQUIRED_COLUMNS:
            if key not in kwargs:
                problems.append(SurveyProblem(row, key, "is empty", "",
                                              _COLUMN_DOCS[key]))
        if any(key not in kwargs for key in _REQUIRED_COLUMNS):
            continue
        try:
            entries.append(SurveyEntry.from_dict(kwargs))
        except InputError as err:
            problems.append(_problem(row, err, mapping))
    return entries, problems


def entries_from_table(table: pd.DataFrame) -> tuple[list[SurveyEntry], list[SurveyProblem]]:
    """Read survey entries from a DataFrame with the columns of :data:`SURVEY_COLUMNS`.

    Cells may be numbers or text (text lengths may carry a unit, "36 ft"); blank cells (NaN,
    None, "") take their defaults. Rows are numbered as if the table were written to CSV with
    its header: the first data row is row 2.

    Parameters
    ----------
    table : pandas.DataFrame
        One row per obstruction.

    Returns
    -------
    entries : list of SurveyEntry
        The good rows, in order.
    problems : list of SurveyProblem
        Every bad cell or row, with its row number and column.
    """
    if not isinstance(table, pd.DataFrame):
        raise InputError("table", "must be a pandas DataFrame", value=type(table).__name__)
    header = [str(c) for c in table.columns]
    records = [(i + 2, list(row)) for i, row in enumerate(table.itertuples(index=False))]
    return _entries_from_records(header, records)


def read_survey_csv(path_or_buffer) -> tuple[list[SurveyEntry], list[SurveyProblem]]:
    """Read a survey table from CSV; keep the good rows and report every bad one.

    The first line is the header (row 1) with columns from :data:`SURVEY_COLUMNS` (the
    required ones: kind, bearing_deg, distance_m, top_angle_deg) and optionally
    :data:`COMPUTED_COLUMNS`, which are ignored, so the output of :func:`survey_table`
    written with ``DataFrame.to_csv(index=False)`` reads back. Blank lines are skipped.

    Parameters
    ----------
    path_or_buffer : str, os.PathLike or text file object
        The CSV file (UTF-8, a byte-order mark is allowed) or an open text stream.

    Returns
    -------
    entries : list of SurveyEntry
        The good rows, in file order.
    problems : list of SurveyProblem
        Every bad cell with its row number (header = row 1) and column, and the allowed
        range; every row with a wrong number of cells; unknown or missing columns (row 1).
    """
    if hasattr(path_or_buffer, "read"):
        text = path_or_buffer.read()
    else:
        with open(path_or_buffer, newline="", encoding="utf-8-sig") as handle:
            text = handle.read()
    if isinstance(text, bytes):
        text = text.decode("utf-8-sig")
    reader = csv.reader(io.StringIO(text.lstrip("\ufeff"), newline=""))
    try:
        header = next(reader)
    except StopIteration:
        return [], [SurveyProblem(1, "", "the file is empty", "",
                                  "a header row: " + ", ".join(_REQUIRED_COLUMNS) + ", ...")]
    records = []
    row = 1
    for cells in reader:
        row += 1
        records.append((row, cells))
    return _entries_from_records(header, records)


def survey_table(entries) -> pd.DataFrame:
    """Return the survey table of ``entries``: readings, tolerances and computed heights.

    Parameters
    ----------
    entries : sequence of SurveyEntry
        The surveyed obstructions.

    Returns
    -------
    pandas.DataFrame
        One row per entry; the columns of :data:`SURVEY_COLUMNS` (lengths in metres,
        ``length_unit`` "m", every tolerance written out, absent readings as None) followed by
        :data:`COMPUTED_COLUMNS`. ``to_csv(index=False)`` of it reads back with
        :func:`read_survey_csv` to the same entries.
    """
    entries = _check_entries(entries)
    rows = []
    for e in entries:
        row: dict[str, Any] = {}
        for column in SURVEY_COLUMNS:
            if column == "length_unit":
                row[column] = "m"
            elif column in _READINGS:
                reading = getattr(e, column)
                row[column] = None if reading is None else reading.value
            elif column in _TOL_TO_FIELD:
                reading = getattr(e, _TOL_TO_FIELD[column])
                row[column] = None if reading is None else reading.tolerance
            else:
                row[column] = getattr(e, column)
        g = entry_geometry(e)
        low, high = height_range(e)
        row.update({"x_m": g["x_m"], "y_m": g["y_m"], "top_z_m": g["top_z_m"],
                    "base_z_m": g["base_z_m"], "height_m": g["height_m"],
                    "height_min_m": low, "height_max_m": high})
        rows.append(row)
    columns = [*SURVEY_COLUMNS, *COMPUTED_COLUMNS]
    frame = pd.DataFrame(rows, columns=columns)
    return frame.astype(object).where(frame.notna(), None) if len(frame) else frame
