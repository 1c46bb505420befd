"""Picks given in memory as a table of columns: a dict of sequences, a pandas DataFrame or a
numpy structured array, with the pick file's column names (``horizon``, ``trace`` or
``inline`` + ``xline``, ``twt_ms`` or ``twt_s``, optional ``kind``).

The table is written out as pick-file text and read by the pick-file parser, so a table and
a file holding the same picks pass exactly the same checks and give the same picks. Rows are
counted from 0, as in numpy and pandas: messages say ``row 3`` for the table's fourth row,
and the source is named :data:`TABLE_LABEL` so that is plain.
"""
from __future__ import annotations

import csv
import io
import math
import re
from dataclasses import replace
from typing import Any, Mapping

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, parse_pick_text

TABLE_LABEL = "picks table (rows counted from 0)"
"""How messages and reports name a pick table."""
_ROWS_BEFORE_FIRST = 2
"""In pick-file text the header is row 1, so the table's row 0 is text row 2."""


def is_table(picks: Any) -> bool:
    """True for a mapping of columns, a pandas DataFrame or a numpy structured array."""
    if isinstance(picks, Mapping):
        return True
    if hasattr(picks, "columns") and hasattr(picks, "__getitem__") and not isinstance(picks, (str, bytes)):
        return True
    dtype = getattr(picks, "dtype", None)
    return getattr(dtype, "names", None) is not None


def _columns(picks: Any, label: str) -> dict[str, list]:
    if isinstance(picks, Mapping):
        names = list(picks.keys())
        getter = picks.__getitem__
    elif hasattr(picks, "columns"):
        names = list(picks.columns)
        getter = picks.__getitem__
    else:
        names = list(picks.dtype.names)
        getter = picks.__getitem__
    if not names:
        raise PitfallsInputError(label, "", "has no columns",
                                 "give columns horizon, trace (or inline and xline) and twt_ms, one entry per pick")
    columns: dict[str, list] = {}
    for name in names:
        if not isinstance(name, str):
            raise PitfallsInputError(label, f"column {name!r}", "column names must be text",
                                     "name the columns horizon, trace (or inline and xline), twt_ms and kind")
        values = getter(name)
        if hasattr(values, "tolist"):
            values = values.tolist()
        elif isinstance(values, (str, bytes)) or not hasattr(values, "__len__"):
            raise PitfallsInputError(label, f"column {name}", f"is {type(values).__name__}, not a column of values",
                                     "give a list or array with one entry per pick")
        else:
            values = list(values)
        if any(isinstance(value, (list, tuple, dict)) for value in values):
            raise PitfallsInputError(label, f"column {name}", "holds lists, not one value per pick",
                                     "give a flat list or 1-D array with one entry per pick")
        columns[name] = values
    lengths = {name: len(values) for name, values in columns.items()}
    if len(set(lengths.values())) > 1:
        shown = ", ".join(f"{name} {length}" for name, length in lengths.items())
        raise PitfallsInputError(label, "", f"the columns have different lengths ({shown})",
                                 "give every column one entry per pick")
    if not next(iter(lengths.values())):
        raise PitfallsInputError(label, "", "has no rows", "give at least one pick")
    return columns


def _cell(value: Any) -> str:
    if value is None or type(value).__name__ in ("NAType", "NaTType"):  # pandas' missing-value markers
        return ""
    if isinstance(value, bool):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        return str(int(value)) if value.is_integer() and abs(value) < 1e15 else repr(value)
    if isinstance(value, bytes):
        return value.decode("utf-8", errors="replace")
    return str(value)


def read_pick_table(picks: Any, label: str = TABLE_LABEL) -> PickFile:
    """Check and parse picks given as a table of columns.

    Parameters
    ----------
    picks : mapping of str to sequence, pandas DataFrame or numpy structured array
        One entry per pick in every column; column names as in a pick file. ``None`` and
        NaN times are gaps, as empty cells are in a file.
    label : str
        The name messages and the report give the table.

    Returns
    -------
    PickFile
        As :func:`pitfalls.io.picks.read_pick_file` returns it, with ``path`` set to
        ``label`` and every row numbered from 0 in table order.

    Raises
    ------
    PitfallsInputError
        For anything a pick file would be refused for, naming the column or the row.
    """
    columns = _columns(picks, label)
    names = list(columns)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(names)
    for values in zip(*(columns[name] for name in names)):
        writer.writerow([_cell(value) for value in values])
    try:
        parsed = parse_pick_text(label, buffer.getvalue())
    except PitfallsInputError as err:
        raise PitfallsInputError(err.path, _from_zero(err.where), _from_zero(err.problem), err.fix) from None
    return replace(parsed,
                   rows=tuple(replace(row, row=row.row - _ROWS_BEFORE_FIRST) for row in parsed.rows),
                   merged_rows=tuple(replace(row, row=row.row - _ROWS_BEFORE_FIRST) for row in parsed.merged_rows))


def _from_zero(text: str) -> str:
    """``row N`` of the pick-file text as the table's 0-based row number."""
    return re.sub(r"\brow (\d+)\b", lambda m: f"row {int(m.group(1)) - _ROWS_BEFORE_FIRST}"
                  if int(m.group(1)) >= _ROWS_BEFORE_FIRST else "header", text)
