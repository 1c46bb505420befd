"""Read an interpreter's pick file: CSV with a header row, one pick per row.

The format is the one ``CONTRACT.md`` fixes (section "Pick files"):

========== ======== ==========================================================
column     required meaning
========== ======== ==========================================================
horizon    yes      name of the picked surface
trace      2-D      trace number, 1-based, in file order
inline     3-D      inline number as in the trace headers (with ``xline``)
xline      3-D      crossline number as in the trace headers (with ``inline``)
twt_ms     one of   two-way time in milliseconds
twt_s      one of   two-way time in seconds (converted to milliseconds)
kind       no       ``horizon`` (default), ``contact`` or ``seafloor``
========== ======== ==========================================================

Reading rules, each one a documented decision:

- **Row numbers.** ``row N`` is the N-th record of the file counting the header, so the
  header is normally row 1 and the first pick row 2. Blank lines count, as a spreadsheet
  shows them. Unless a quoted cell holds a line break, row N is also line N of the file.
- **Column names** are matched case-insensitively after trimming spaces. Other columns are
  kept untouched in :attr:`PickRow.fields`. When both ``twt_ms`` and ``twt_s`` exist,
  ``twt_ms`` is used. When both ``trace`` and ``inline`` + ``xline`` exist the file is 3-D
  and ``trace`` is an extra column.
- **Delimiter.** A comma, unless the header line has no comma: then a semicolon if it has
  one, else a tab if it has one.
- **Gaps.** An empty cell, ``NaN`` and the trade's null values ``-999.25`` and ``-9999.25``
  (within 1e-6) are gaps (common practice): the time becomes NaN. Any other negative or
  infinite time is an error.
- **Times in seconds.** A ``twt_ms`` column whose largest time is above 0 but below
  ``SECONDS_LIMIT_MS`` (20) holds seconds, not milliseconds: no reflection survey has every
  pick in the top 20 ms, while 20 s is beyond the longest records (common practice). A
  ``twt_s`` column with a time above ``MILLISECONDS_LIMIT_S`` (100 s) holds milliseconds.
- **Kinds.** An empty ``kind`` cell states nothing: a horizon takes the kind its rows state,
  ``horizon`` when none does. Two different stated kinds for one horizon are an error.
- **Duplicates.** Two rows for the same horizon and trace (or inline and crossline) with the
  same time (within 1e-6 ms, or both gaps) are merged: the first stays in
  :attr:`PickFile.rows`, the later ones go to :attr:`PickFile.merged_rows`. Different
  times are an error naming both rows.
- Rows whose cells are all empty are skipped. Trace, inline and crossline numbers must be
  whole numbers (``12`` or ``12.0``); trace numbers start at 1.
"""
from __future__ import annotations

import csv
import difflib
import io
import math
from dataclasses import dataclass, field

from pitfalls.errors import PitfallsInputError, listed
from pitfalls.model import PICK_KINDS

NULL_VALUES = (-999.25, -9999.25)
"""Gap markers of the trade (common practice), matched within ``NULL_TOLERANCE``."""
NULL_TOLERANCE = 1e-6
SECONDS_LIMIT_MS = 20.0
"""A ``twt_ms`` column whose largest time is in (0, 20) holds seconds (see module notes)."""
MILLISECONDS_LIMIT_S = 100.0
"""A ``twt_s`` column with a time above 100 holds milliseconds (see module notes)."""
DUPLICATE_TOLERANCE_MS = 1e-6
"""Two picks of one trace within this many ms of each other agree."""
_SHOWN_CHARACTERS = 40
_KNOWN_COLUMNS = ("horizon", "trace", "inline", "xline", "twt_ms", "twt_s", "kind")


@dataclass(frozen=True)
class PickRow:
    """One pick: a row of the pick file, parsed and checked."""

    file: str
    """The pick file's path as given."""
    row: int
    """Row number as a spreadsheet counts it: the header is row 1, the first pick usually row 2."""
    horizon: str
    """Name of the picked surface, spaces trimmed."""
    kind: str
    """``horizon``, ``contact`` or ``seafloor``."""
    trace: int | None
    """1-based trace number on a 2-D line; None in a 3-D file."""
    inline: int | None
    """Inline number in a 3-D file; None on a 2-D line."""
    xline: int | None
    """Crossline number in a 3-D file; None on a 2-D line."""
    twt_ms: float
    """Two-way time in milliseconds; NaN for a gap."""
    fields: dict[str, str] = field(default_factory=dict)
    """The row's original cells keyed by the original column names, to write the row back."""


@dataclass(frozen=True)
class PickFile:
    """A whole pick file, parsed and checked."""

    path: str
    """The file's path as given."""
    columns: tuple[str, ...]
    """The header as written (original spelling and order)."""
    rows: tuple[PickRow, ...]
    """One row per pick, in file order; agreeing duplicates appear once."""
    geometry: str
    """``"2d"`` (a ``trace`` column) or ``"3d"`` (``inline`` and ``xline`` columns)."""
    merged_rows: tuple[PickRow, ...] = ()
    """Later copies of agreeing duplicate rows, so that every input row can be written back."""


def read_pick_file(path: str) -> PickFile:
    """Read and check a CSV pick file.

    Parameters
    ----------
    path : str
        The pick file.

    Returns
    -------
    PickFile
        The parsed rows, times in milliseconds with NaN for gaps.

    Raises
    ------
    PitfallsInputError
        For anything the module notes call an error, naming the file, the row (or
        ``header``) and what to fix.
    """
    path = str(path)
    return parse_pick_text(path, _read_text(path))


def parse_pick_text(path: str, text: str) -> PickFile:
    """Check and parse pick-file text already read, as :func:`read_pick_file` does.

    ``path`` names the source in messages and in :attr:`PickFile.path`; a table of columns
    given in memory is turned into this text so it passes the same checks as a file.
    """
    records = _records(path, text)
    header_index = next((i for i, cells in enumerate(records) if not _blank(cells)), None)
    if header_index is None:
        raise PitfallsInputError(path, "", "the file is empty",
                                 fix="write a header row (horizon,trace,twt_ms) and one row per pick")
    header_row = header_index + 1
    header = records[header_index]
    columns = _columns(path, header)
    geometry, roles = _roles(path, header, columns)

    parsed: list[_Parsed] = []
    for index in range(header_index + 1, len(records)):
        cells = records[index]
        if _blank(cells):
            continue
        parsed.append(_parse_row(path, index + 1, cells, header, roles))
    if not parsed:
        raise PitfallsInputError(path, f"row {header_row}", "the file has a header but no pick rows",
                                 fix="add one row per pick below the header")

    kinds = _resolve_kinds(path, parsed)
    rows, merged = _merge_duplicates(path, parsed, kinds, geometry)
    _check_units(path, rows, roles)
    return PickFile(path=path, columns=tuple(header), rows=tuple(rows), geometry=geometry,
                    merged_rows=tuple(merged))


# --- reading the text -------------------------------------------------------------------
def _read_text(path: str) -> str:
    try:
        with open(path, "rb") as handle:
            raw = handle.read()
    except FileNotFoundError as err:
        raise PitfallsInputError(path, "", "file not found",
                                 fix="check the path and the file name") from err
    except IsADirectoryError as err:
        raise PitfallsInputError(path, "", "this is a folder, not a pick file",
                                 fix="give the path of the CSV file") from err
    except OSError as err:
        raise PitfallsInputError(path, "", f"cannot be read ({err.strerror or err})",
                                 fix="check the path and that you may read the file") from err
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = raw[: err.start].count(b"\n") + 1
        raise PitfallsInputError(path, f"line {line}", f"byte {err.start} is not UTF-8 text",
                                 fix="save the pick file as UTF-8 CSV text") from err
    if "\x00" in text:
        line = text[: text.index("\x00")].count("\n") + 1
        raise PitfallsInputError(path, f"line {line}", "the file holds a NUL character, so it is not CSV text",
                                 fix="export the picks as UTF-8 CSV text")
    if not text.strip():
        raise PitfallsInputError(path, "", "the file is empty",
                                 fix="write a header row (horizon,trace,twt_ms) and one row per pick")
    return text


def _delimiter(text: str) -> str:
    """Comma, unless the header line has none: then semicolon, else tab (see module notes)."""
    header_line = next((line for line in text.splitlines() if line.strip(" \t,;")), "")
    if "," in header_line:
        return ","
    if ";" in header_line:
        return ";"
    if "\t" in header_line:
        return "\t"
    return ","


def _records(path: str, text: str) -> list[list[str]]:
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=_delimiter(text))
    records: list[list[str]] = []
    try:
        for cells in reader:
            records.append(cells)
    except csv.Error as err:
        raise PitfallsInputError(path, f"row {len(records) + 1}", f"not readable as CSV ({err})",
                                 fix="check the quotes in that row") from err
    return records


def _blank(cells: list[str]) -> bool:
    return all(not cell.strip() for cell in cells)


def _shown(cell: str) -> str:
    cell = cell.strip()
    if len(cell) > _SHOWN_CHARACTERS:
        cell = cell[: _SHOWN_CHARACTERS - 3] + "..."
    return f"'{cell}'"


# --- the header -------------------------------------------------------------------------
def _looks_numeric(cell: str) -> bool:
    try:
        float(cell.strip())
    except ValueError:
        return False
    return True


def _columns(path: str, header: list[str]) -> dict[str, int]:
    """Normalised column name -> position; refuses a numeric first row and repeated names."""
    filled = [cell for cell in header if cell.strip()]
    if filled and all(_looks_numeric(cell) for cell in filled):
        raise PitfallsInputError(path, "header", "the first row holds numbers, not column names",
                                 fix="add a header row such as horizon,trace,twt_ms above the picks")
    columns: dict[str, int] = {}
    for position, cell in enumerate(header):
        name = cell.strip().lower()
        if name in columns:
            first = columns[name] + 1
            problem = (f"column '{name}' appears twice (columns {first} and {position + 1})" if name else
                       f"two columns have no name (columns {first} and {position + 1})")
            raise PitfallsInputError(path, "header", problem,
                                     fix="rename or delete one of them so every column name is different")
        columns[name] = position
    return columns


def _missing_column(path: str, header: list[str], wanted: str, problem: str) -> PitfallsInputError:
    found = [cell.strip() for cell in header if cell.strip()]
    others = [name.lower() for name in found if name.lower() not in _KNOWN_COLUMNS]
    close = difflib.get_close_matches(wanted, others, n=1, cutoff=0.6)
    fix = f"name the column {wanted}"
    if close:
        fix = f"rename column '{close[0]}' to {wanted}" if close[0] != wanted else fix
    shown = listed(found) if found else "none"
    return PitfallsInputError(path, f"column {wanted}", f"{problem} (columns found: {shown})", fix=fix)


def _roles(path: str, header: list[str], columns: dict[str, int]) -> tuple[str, dict[str, int]]:
    """The geometry and the position of each column the parser reads."""
    if "horizon" not in columns:
        raise _missing_column(path, header, "horizon", "there is no horizon column")
    roles = {"horizon": columns["horizon"]}
    if "inline" in columns and "xline" in columns:
        geometry = "3d"
        roles["inline"], roles["xline"] = columns["inline"], columns["xline"]
    elif "trace" in columns:
        geometry = "2d"
        roles["trace"] = columns["trace"]
    elif "inline" in columns or "xline" in columns:
        lacking = "xline" if "inline" in columns else "inline"
        raise _missing_column(path, header, lacking,
                              f"a 3-D pick file needs both inline and xline, and {lacking} is missing")
    else:
        raise _missing_column(path, header, "trace",
                              "there is no trace column (2-D) and no inline and xline columns (3-D)")
    if "twt_ms" in columns:
        roles["twt_ms"] = columns["twt_ms"]
    elif "twt_s" in columns:
        roles["twt_s"] = columns["twt_s"]
    else:
        raise _missing_column(path, header, "twt_ms",
                              "there is no time column: twt_ms (milliseconds) or twt_s (seconds)")
    if "kind" in columns:
        roles["kind"] = columns["kind"]
    return geometry, roles


# --- the rows ---------------------------------------------------------------------------
@dataclass
class _Parsed:
    row: int
    horizon: str
    stated_kind: str
    trace: int | None
    inline: int | None
    xline: int | None
    twt_ms: float
    fields: dict[str, str]


def _whole_number(path: str, row: int, column: str, cell: str) -> int:
    text = cell.strip()
    if not text:
        raise PitfallsInputError(path, f"row {row}", f"{column} is empty",
                                 fix=f"write the {column} number in every pick row")
    try:
        return int(text)
    except ValueError:
        pass
    try:
        value = float(text)
    except ValueError:
        value = None
    if value is None:
        fix = f"write {column} as a whole number"
        if "," in text:
            fix += " without a decimal comma or thousands separator"
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a number", fix=fix)
    if not math.isfinite(value) or not value.is_integer():
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a whole number",
                                 fix=f"write {column} as a whole number, as in the trace headers")
    return int(value)


def _is_null(value: float) -> bool:
    return any(abs(value - null) <= NULL_TOLERANCE for null in NULL_VALUES)


def _time_ms(path: str, row: int, column: str, cell: str) -> float:
    text = cell.strip()
    if not text:
        return math.nan
    try:
        value = float(text)
    except ValueError:
        fix = f"write {column} as a plain number, or leave the cell empty for a gap"
        if "," in text:
            fix = f"write {column} with a decimal point, not a comma, or leave the cell empty for a gap"
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a number",
                                 fix=fix) from None
    if math.isnan(value) or (value < 0 and _is_null(value)):
        return math.nan
    if math.isinf(value):
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a finite time",
                                 fix="write the time as a number, or leave the cell empty for a gap")
    if value < 0:
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, a negative time",
                                 fix="two-way times count down from zero; for a gap leave the cell "
                                     "empty or write NaN or -999.25")
    value = value + 0.0  # -0.0 -> 0.0
    return value * 1000.0 if column == "twt_s" else value


def _parse_row(path: str, row: int, cells: list[str], header: list[str], roles: dict[str, int]) -> _Parsed:
    extra = [cell for cell in cells[len(header):] if cell.strip()]
    if extra:
        raise PitfallsInputError(path, f"row {row}",
                                 f"the row has {len(cells)} cells but the header names {len(header)} columns",
                                 fix="delete the extra cells or add their column names to the header")
    if len(cells) < len(header):
        cells = cells + [""] * (len(header) - len(cells))
    horizon = cells[roles["horizon"]].strip()
    if not horizon:
        raise PitfallsInputError(path, f"row {row}", "horizon is empty",
                                 fix="write the name of the picked surface in every pick row")
    stated_kind = ""
    if "kind" in roles:
        kind_cell = cells[roles["kind"]]
        stated_kind = kind_cell.strip().lower()
        if stated_kind and stated_kind not in PICK_KINDS:
            raise PitfallsInputError(path, f"row {row}", f"kind is {_shown(kind_cell)}, which is not a known kind",
                                     fix=f"use one of {', '.join(PICK_KINDS)}, or leave the cell empty for horizon")
    trace = inline = xline = None
    if "trace" in roles:
        trace = _whole_number(path, row, "trace", cells[roles["trace"]])
        if trace < 1:
            raise PitfallsInputError(path, f"row {row}", f"trace is {trace}, but trace numbers start at 1",
                                     fix="number the traces 1, 2, 3 ... in file order")
    else:
        inline = _whole_number(path, row, "inline", cells[roles["inline"]])
        xline = _whole_number(path, row, "xline", cells[roles["xline"]])
    column = "twt_ms" if "twt_ms" in roles else "twt_s"
    twt_ms = _time_ms(path, row, column, cells[roles[column]])
    fields = dict(zip(header, cells))
    return _Parsed(row, horizon, stated_kind, trace, inline, xline, twt_ms, fields)


# --- checks across rows -----------------------------------------------------------------
def _resolve_kinds(path: str, parsed: list[_Parsed]) -> dict[str, str]:
    """Each horizon's kind: the one its rows state, ``horizon`` if none states one."""
    stated: dict[str, tuple[str, int]] = {}
    for pick in parsed:
        if not pick.stated_kind:
            continue
        first = stated.setdefault(pick.horizon, (pick.stated_kind, pick.row))
        if first[0] != pick.stated_kind:
            raise PitfallsInputError(
                path, f"row {pick.row}",
                f"horizon '{pick.horizon}' is a {pick.stated_kind} here but a {first[0]} in row {first[1]}",
                fix="give each horizon one kind, or rename one of the surfaces")
    return {pick.horizon: stated.get(pick.horizon, ("horizon", 0))[0] for pick in parsed}


def _where(pick: _Parsed, geometry: str) -> str:
    if geometry == "2d":
        return f"trace {pick.trace}"
    return f"inline {pick.inline}, xline {pick.xline}"


def _shown_time(twt_ms: float) -> str:
    return "a gap" if math.isnan(twt_ms) else f"{twt_ms:g} ms"


def _distinct_times(first: float, second: float) -> tuple[str, str]:
    """Two different times shown so that they read differently (full precision when rounding hides it)."""
    shown = _shown_time(first), _shown_time(second)
    if shown[0] == shown[1]:
        shown = tuple("a gap" if math.isnan(t) else f"{t!r} ms" for t in (first, second))
    return shown


def _merge_duplicates(path: str, parsed: list[_Parsed], kinds: dict[str, str],
                      geometry: str) -> tuple[list[PickRow], list[PickRow]]:
    first_of: dict[tuple, _Parsed] = {}
    rows: list[PickRow] = []
    merged: list[PickRow] = []
    for pick in parsed:
        key = (pick.horizon, pick.trace, pick.inline, pick.xline)
        row = PickRow(file=path, row=pick.row, horizon=pick.horizon, kind=kinds[pick.horizon],
                      trace=pick.trace, inline=pick.inline, xline=pick.xline,
                      twt_ms=pick.twt_ms, fields=pick.fields)
        first = first_of.get(key)
        if first is None:
            first_of[key] = pick
            rows.append(row)
            continue
        both_gaps = math.isnan(first.twt_ms) and math.isnan(pick.twt_ms)
        if both_gaps or abs(first.twt_ms - pick.twt_ms) <= DUPLICATE_TOLERANCE_MS:
            merged.append(row)
            continue
        raise PitfallsInputError(
            path, f"row {pick.row}",
            f"horizon '{pick.horizon}' at {_where(pick, geometry)} is picked twice with different times: "
            f"{_distinct_times(first.twt_ms, pick.twt_ms)[0]} in row {first.row} and "
            f"{_distinct_times(first.twt_ms, pick.twt_ms)[1]} in row {pick.row}",
            fix="keep one of the two rows")
    return rows, merged


def _check_units(path: str, rows: list[PickRow], roles: dict[str, int]) -> None:
    """Refuse seconds in a ``twt_ms`` column and milliseconds in a ``twt_s`` column."""
    times = [row.twt_ms for row in rows if not math.isnan(row.twt_ms)]
    if not times:
        return
    if "twt_ms" in roles:
        largest = max(times)
        if 0.0 < largest < SECONDS_LIMIT_MS:
            first = next(row for row in rows if not math.isnan(row.twt_ms))
            raise PitfallsInputError(
                path, f"row {first.row}",
                f"twt_ms is {first.twt_ms:g}, which looks like seconds: every time in the file is below "
                f"{SECONDS_LIMIT_MS:g} ms (largest {largest:g})",
                fix="multiply the times by 1000 or name the column twt_s")
    else:
        for row in rows:
            seconds = row.twt_ms / 1000.0
            if seconds > MILLISECONDS_LIMIT_S:
                raise PitfallsInputError(
                    path, f"row {row.row}",
                    f"twt_s is {seconds:g}, which looks like milliseconds: no record is longer than "
                    f"{MILLISECONDS_LIMIT_S:g} s",
                    fix="divide the times by 1000 or name the column twt_ms")
