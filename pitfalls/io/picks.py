"""Read an interpreter's pick file: a CSV with a header row, or a plain column file.

Two layouts are read (``CONTRACT.md``, section "Pick files"):

- **With a header row** (no ``--columns``): the first line that names at least one known
  column is the header. Known names are

  ========== ==========================================================
  column     meaning
  ========== ==========================================================
  horizon    name of the picked surface (none: the file is one horizon)
  trace      trace number on a 2-D line, 1-based, in file order
  cdp        CDP number of a 2-D line (trace header byte 21)
  shotpoint  shotpoint number of a 2-D line (trace header byte 17)
  inline     inline number as in the trace headers (with ``xline``)
  xline      crossline number as in the trace headers (with ``inline``)
  x, y       CDP X and Y, matched to the nearest trace
  twt_ms     two-way time in milliseconds
  twt_s      two-way time in seconds (converted to milliseconds)
  depth_m    a depth, carried along (the checks work in time)
  kind       ``horizon`` (default), ``contact`` or ``seafloor``
  ========== ==========================================================

- **Named on the command line** (``--columns NAMES``): the file's columns in order, ``-`` for
  one to skip. The first line whose cells fit those names starts the data.

Reading rules, each one a documented decision:

- **Row numbers.** ``row N`` is the N-th record of the file: normally line N. Comment and
  free-text lines count, as do blank lines, as an editor shows them.
- **Lines before the data.** Blank lines, lines starting with ``#`` and lines of free text
  (with a header: lines naming no known column; with ``--columns``: lines whose cells do not
  fit the names) before the header or the first pick are skipped and counted
  (:attr:`PickFile.n_skipped_lines`). A first line made of numbers with no ``--columns`` is an
  error: the columns cannot be guessed.
- **Delimiter**, from the header line (or the first data line): a semicolon if it has one
  (a comma beside it is a decimal comma), else a comma, else a tab, else runs of spaces.
- **Which position a pick has**: inline + xline if both are there, else trace, else cdp,
  else shotpoint, else x + y. Other columns are carried along for writing the rows back.
- **No horizon column**: every row is one horizon, named by ``--horizon`` or after the file
  (its name without the extension).
- **Gaps.** An empty cell, ``NaN`` and the trade's null values ``-999.25`` and ``-9999.25``
  (within 1e-6) are gaps (common practice): the time becomes NaN.
- **Negative-downward times.** When every time in the file is at or below zero and one is
  below, the times are counted downwards: they are flipped to positive two-way times, with a
  note. Otherwise a negative or infinite time is an error.
- **Times in seconds.** A ``twt_ms`` column whose largest time is above 0 but below
  ``SECONDS_LIMIT_MS`` (20) holds seconds: no reflection survey has every pick in the top
  20 ms, while 20 s is beyond the longest records (common practice). A ``twt_s`` column with
  a time above ``MILLISECONDS_LIMIT_S`` (100 s) holds milliseconds.
- **Kinds.** An empty ``kind`` cell states nothing: a horizon takes the kind its rows state,
  ``horizon`` when none does. Two different stated kinds for one horizon are an error.
- **Duplicates.** Two rows for the same horizon and position with the same time (within
  1e-6 ms, or both gaps) are merged: the first is kept, the later ones are listed in
  :attr:`PickFile.merged_rows`. Different times are an error naming both rows.
- Trace, CDP, shotpoint, inline and crossline numbers are whole numbers (``12`` or ``12.0``);
  trace numbers start at 1. X and Y are finite numbers.

The picks are held as numpy columns, one array per column, never one object per row; the
file is read in chunks so that a long file never holds all its cells as strings at once.
"""
from __future__ import annotations

import csv
import difflib
import hashlib
import itertools
import math
import os
import re
from dataclasses import dataclass, field
from typing import Iterable, Iterator, Sequence

import numpy as np

from pitfalls.errors import PitfallsInputError
from pitfalls.model import PICK_KINDS

NULL_VALUES = (-999.25, -9999.25)
"""Gap markers of the trade (common practice), matched within ``NULL_TOLERANCE``."""
NULL_TOLERANCE = 1e-6
SECONDS_LIMIT_MS = 20.0
"""A ``twt_ms`` column whose largest time is in (0, 20) holds seconds (see module notes)."""
MILLISECONDS_LIMIT_S = 100.0
"""A ``twt_s`` column with a time above 100 holds milliseconds (see module notes)."""
DUPLICATE_TOLERANCE_MS = 1e-6
"""Two picks of one position within this many ms of each other agree."""
KNOWN_COLUMNS = ("horizon", "trace", "cdp", "shotpoint", "inline", "xline", "x", "y",
                 "twt_ms", "twt_s", "depth_m", "kind")
"""Column names a pick file may use (``CONTRACT.md``)."""
KEYS = (("inline", "xline"), ("trace",), ("cdp",), ("shotpoint",), ("x", "y"))
"""The ways a pick names its trace, in order of preference."""
_WHOLE_COLUMNS = ("trace", "cdp", "shotpoint", "inline", "xline")
_REAL_COLUMNS = ("x", "y")
_NUMERIC_COLUMNS = _WHOLE_COLUMNS + _REAL_COLUMNS + ("twt_ms", "twt_s", "depth_m")
_SHOWN_CHARACTERS = 40
_SHOWN_ITEMS = 8
_CHUNK_RECORDS = 8192
_HEADER_SEARCH_LINES = 200
"""Without ``--columns``, the header must be among the first 200 lines that are not blank or comments."""


@dataclass(frozen=True, eq=False)
class PickFile:
    """A whole pick file, parsed and checked, held as numpy columns (one entry per kept pick)."""

    path: str
    """The file's path as given."""
    columns: tuple[str, ...]
    """The header as written, or the ``--columns`` names (``column_N`` for a skipped one)."""
    key: str
    """How picks name their trace: ``trace``, ``cdp``, ``shotpoint``, ``inline_xline`` or ``xy``."""
    horizons: tuple[str, ...]
    """Horizon names in the order they first appear."""
    kinds: tuple[str, ...]
    """The kind of each horizon in :attr:`horizons`."""
    row: np.ndarray
    """Row number of each kept pick, int64, increasing."""
    horizon_index: np.ndarray
    """Index into :attr:`horizons` of each kept pick, int32."""
    position: dict[str, np.ndarray]
    """The key columns: ``trace``/``cdp``/``shotpoint`` or ``inline`` + ``xline`` (int64), or ``x`` + ``y`` (float64)."""
    twt_ms: np.ndarray
    """Two-way time of each kept pick in ms, float64; NaN for a gap."""
    merged_rows: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    """Rows of agreeing duplicates that were merged, int64, so every input row can be written back."""
    merged_into: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    """For each merged row, the index of the kept pick it repeats."""
    n_skipped_lines: int = 0
    """Comment and free-text lines skipped: before the header or the first pick, and ``#`` lines among the picks."""
    notes: tuple[str, ...] = ()
    """What the reader did that the report should say (flipped times, a horizon named after the file)."""
    delimiter: str = ","
    """``,``, ``;``, ``\\t``, or ``" "`` for runs of spaces."""
    data_line: int = 1
    """Line number (1-based) of the first record after the header, or of the first pick without one."""
    sha256: str = ""
    """SHA-256 of the file's bytes, to refuse a file that changed before it is written back."""
    named: bool = False
    """True when the columns were named with ``--columns`` (no header row)."""
    text: str | None = None
    """The source text, kept only for picks that did not come from a file."""
    row_offset: int = 0
    """Subtracted from the text's record numbers to give :attr:`row` (a table numbered from 0 uses 2)."""
    horizon_column: bool = True
    """False when the file has no horizon column (its picks are one horizon named after it or by --horizon)."""

    @property
    def geometry(self) -> str:
        """``2d`` (trace, CDP or shotpoint numbers), ``3d`` (inline/xline) or ``xy`` (either)."""
        return {"inline_xline": "3d", "xy": "xy"}.get(self.key, "2d")

    @property
    def n_picks(self) -> int:
        return int(self.row.size)

    def horizon_of(self, index: int) -> str:
        return self.horizons[int(self.horizon_index[index])]

    def describe_position(self, index: int) -> str:
        """``trace 12``, ``inline 5, xline 6``, ``x 1000.5, y 20.25``: where a kept pick is."""
        if self.key == "inline_xline":
            return f"inline {self.position['inline'][index]}, xline {self.position['xline'][index]}"
        if self.key == "xy":
            return f"x {self.position['x'][index]:g}, y {self.position['y'][index]:g}"
        return f"{self.key} {self.position[self.key][index]}"

    def records(self) -> Iterator[tuple[int, list[str]]]:
        """Every pick row of the file again, as (row number, cells), in file order.

        The file is read a second time (nothing but the arrays is kept in memory); a file that
        changed since it was read is refused.
        """
        text = self.text if self.text is not None else _read_text(self.path)
        if hashlib.sha256(text.encode("utf-8")).hexdigest() != self.sha256:
            raise PitfallsInputError(self.path, "", "the pick file changed while the scan ran",
                                     fix="run the scan again on the saved file")
        for row, cells in _iter_records(self.path, text, self.delimiter, self.data_line):
            if not _blank(cells) and not (self.named and _comment(cells)):
                yield row - self.row_offset, cells


# --- the options ------------------------------------------------------------------------
def parse_columns(text: str) -> tuple[str, ...]:
    """The ``--columns`` option as a tuple of names (``-`` kept for a skipped column).

    Raises
    ------
    PitfallsInputError
        For an unknown or repeated name, or names that give no position or no time.
    """
    names = tuple(part.strip().lower() for part in text.split(","))
    for number, name in enumerate(names, start=1):
        if name == "-":
            continue
        if name not in KNOWN_COLUMNS:
            close = difflib.get_close_matches(name, KNOWN_COLUMNS, n=1, cutoff=0.5)
            fix = f"did you mean {close[0]}? " if close else ""
            raise PitfallsInputError("--columns", f"name {number}", f"{_shown(name)} is not a known column name",
                                     fix=fix + f"use names from {', '.join(KNOWN_COLUMNS)}, or - to skip a column")
        if names.index(name) != number - 1:
            raise PitfallsInputError("--columns", f"name {number}", f"{name} is named twice",
                                     fix="name each column once; use - for a column to skip")
    present = set(names)
    if _key_of(present) is None:
        raise PitfallsInputError("--columns", "", "no column says which trace a pick is on",
                                 fix="name one of trace, cdp, shotpoint, inline and xline, or x and y")
    if not present & {"twt_ms", "twt_s"}:
        fix = "name the time column twt_ms (milliseconds) or twt_s (seconds)"
        if "depth_m" in present:
            fix += "; depth_m alone cannot be checked, the checks work in two-way time"
        raise PitfallsInputError("--columns", "", "no time column", fix=fix)
    return names


def _key_of(present: set[str]) -> str | None:
    for names in KEYS:
        if all(name in present for name in names):
            return "inline_xline" if names == ("inline", "xline") else "xy" if names == ("x", "y") else names[0]
    return None


# --- reading ----------------------------------------------------------------------------
def read_pick_file(path: str, columns: Sequence[str] | None = None, horizon: str | None = None) -> PickFile:
    """Read and check a pick file.

    Parameters
    ----------
    path : str
        The pick file.
    columns : sequence of str, optional
        The file's columns in order (from :func:`parse_columns`); None reads a header row.
    horizon : str, optional
        The horizon name for a file without a ``horizon`` column (default: the file's stem).

    Returns
    -------
    PickFile
        The picks as numpy columns, times in milliseconds with NaN for gaps.

    Raises
    ------
    PitfallsInputError
        For anything the module notes call an error, naming the file, the row (or
        ``header``) and what to fix.
    """
    path = str(path)
    return parse_pick_text(path, _read_text(path), columns, horizon)


def parse_pick_text(path: str, text: str, columns: Sequence[str] | None = None, horizon: str | None = None,
                    keep_text: bool = False, require_horizon: bool = False) -> PickFile:
    """Check and parse pick-file text already read, as :func:`read_pick_file` does.

    ``path`` names the source in messages and in :attr:`PickFile.path`. With ``keep_text`` the
    text is kept in the result (for a source that is not a file, so its rows can be written
    back); otherwise the file is read again when the rows are written back. With
    ``require_horizon`` a missing horizon column is an error (a source with no file name to
    name its horizon after).
    """
    if not text.strip():
        raise PitfallsInputError(path, "", "the file is empty",
                                 fix="write a header row (horizon,trace,twt_ms) and one row per pick")
    sha256 = hashlib.sha256(text.encode("utf-8")).hexdigest()
    lines = (line for line, _ in _lines(text))
    if columns is None:
        start, delimiter, header = _find_header(path, lines)
        names = _header_roles(path, header)
        if require_horizon and "horizon" not in names:
            raise _missing_column(path, header, "horizon", "there is no horizon column")
        data_line = start + 2
        header_row: int | None = start + 1
        written = tuple(header)
    else:
        columns = tuple(columns)
        start, delimiter = _find_first_pick(path, lines, columns)
        names = {name: position for position, name in enumerate(columns) if name != "-"}
        data_line = start + 1
        header_row = None
        written = tuple(name if name != "-" else f"column_{number}" for number, name in enumerate(columns, start=1))
    n_skipped = sum(1 for index, (line, _) in zip(range(start), _lines(text)) if line.strip())
    key = _key_of(set(names))
    assert key is not None  # _header_roles and parse_columns refuse files without one
    key_names = _key_columns(key)
    time_name = "twt_ms" if "twt_ms" in names else "twt_s"
    width = len(columns) if columns is not None else len(header)

    default_name = horizon if horizon else os.path.splitext(os.path.basename(path))[0] or "picks"
    parts = _Columns(key_names, "horizon" in names, "kind" in names, default_name)
    for chunk in _chunks(_iter_records(path, text, delimiter, data_line)):
        _parse_chunk(path, chunk, names, width, columns is not None, delimiter, key_names, time_name, parts)
    if not parts.rows:
        if header_row is not None:
            raise PitfallsInputError(path, f"row {header_row}", "the file has a header but no pick rows",
                                     fix="add one row per pick below the header")
        raise PitfallsInputError(path, "", "the file holds no pick rows", fix="add one row per pick")

    notes: list[str] = []
    if "horizon" in names:
        horizon_names = tuple(parts.horizon_names)
        horizon_index = np.concatenate(parts.horizon_index).astype(np.int32)
    else:
        name = default_name
        horizon_names = (name,)
        horizon_index = np.zeros(sum(len(r) for r in parts.rows), dtype=np.int32)
        notes.append(f"{os.path.basename(path)} has no horizon column: its picks are one horizon, "
                     f"{name!r}" + (" (--horizon)" if horizon else " (named after the file)"))
    row = np.concatenate(parts.rows).astype(np.int64)
    twt_ms = np.concatenate(parts.times)
    position = {name: np.concatenate(parts.position[name]) for name in key_names}
    n_skipped += parts.n_comments
    if n_skipped:
        notes.append(f"{os.path.basename(path)}: {n_skipped} comment or text "
                     f"line{'s' if n_skipped != 1 else ''} skipped")

    twt_ms, flipped = _signs(path, row, twt_ms, time_name)
    if flipped:
        notes.append(f"{os.path.basename(path)}: every time is at or below zero, so the times are taken as counted "
                     f"downwards and read as positive two-way times")
    _check_units(path, row, twt_ms, time_name)
    kinds = tuple(parts.kinds.get(index, ("horizon", 0))[0] for index in range(len(horizon_names)))
    keep, merged_rows, merged_into = _merge_duplicates(path, row, horizon_index, horizon_names, position, twt_ms,
                                                       key)
    return PickFile(
        path=path, columns=written, key=key, horizons=horizon_names, kinds=kinds, row=row[keep],
        horizon_index=horizon_index[keep], position={name: values[keep] for name, values in position.items()},
        twt_ms=twt_ms[keep], merged_rows=merged_rows, merged_into=merged_into, n_skipped_lines=n_skipped,
        notes=tuple(notes), delimiter=delimiter, data_line=data_line, sha256=sha256,
        named=columns is not None, text=text if keep_text else None, horizon_column="horizon" in names)


def _key_columns(key: str) -> tuple[str, ...]:
    return {"inline_xline": ("inline", "xline"), "xy": ("x", "y")}.get(key, (key,))


# --- the text ---------------------------------------------------------------------------
def _read_text(path: str) -> str:
    try:
        with open(path, "rb") as handle:
            raw = handle.read()
    except FileNotFoundError as err:
        raise PitfallsInputError(path, "", "file not found",
                                 fix="check the path and the file name") from err
    except IsADirectoryError as err:
        raise PitfallsInputError(path, "", "this is a folder, not a pick file",
                                 fix="give the path of the pick file") from err
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


_LINE = re.compile("[^\n\r\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029]*"
                   "(?:\r\n|[\n\r\x0b\x0c\x1c\x1d\x1e\x85\u2028\u2029])?")


def _lines(text: str) -> Iterator[tuple[str, int]]:
    """(line with its end, offset of its start), lazily, split where ``str.splitlines`` splits."""
    for match in _LINE.finditer(text):
        if match.start() == match.end():
            return
        yield match.group(), match.start()


def delimiter_of(line: str) -> str:
    """Semicolon, else comma, else tab, else runs of spaces (see module notes)."""
    if ";" in line:
        return ";"
    if "," in line:
        return ","
    if "\t" in line:
        return "\t"
    return " "


def _split_line(line: str, delimiter: str) -> list[str]:
    """One line's cells, for deciding what the line is (quotes honoured for CSV delimiters)."""
    if delimiter == " ":
        return line.split()
    try:
        return next(csv.reader([line.rstrip("\r\n")], delimiter=delimiter), [])
    except csv.Error:
        return line.split(delimiter)


def _skippable(line: str) -> bool:
    stripped = line.strip()
    return not stripped or stripped.startswith("#")


def _iter_records(path: str, text: str, delimiter: str, first_row: int) -> Iterator[tuple[int, list[str]]]:
    """(row number, cells) for every record of ``text`` from line ``first_row`` (1-based) on.

    The lines are read lazily from the text, so no second copy of a long file is made.
    """
    row = first_row
    lines = itertools.islice((line for line, _ in _lines(text)), first_row - 1, None)
    if delimiter == " ":
        for line in lines:
            yield row, line.split()
            row += 1
        return
    reader = csv.reader(lines, delimiter=delimiter)
    try:
        for cells in reader:
            yield row, cells
            row += 1
    except csv.Error as err:
        raise PitfallsInputError(path, f"row {row}", f"not readable as CSV ({err})",
                                 fix="check the quotes in that row") from err


def _chunks(records: Iterator[tuple[int, list[str]]]) -> Iterator[list[tuple[int, list[str]]]]:
    chunk: list[tuple[int, list[str]]] = []
    for record in records:
        chunk.append(record)
        if len(chunk) >= _CHUNK_RECORDS:
            yield chunk
            chunk = []
    if chunk:
        yield chunk


def _blank(cells: list[str]) -> bool:
    return not "".join(cells).strip()


def _comment(cells: list[str]) -> bool:
    """A record that starts with ``#`` (skipped anywhere in a file read with ``--columns``)."""
    return bool(cells) and cells[0].lstrip().startswith("#")


def _shown(cell: str) -> str:
    cell = cell.strip()
    if len(cell) > _SHOWN_CHARACTERS:
        cell = cell[: _SHOWN_CHARACTERS - 3] + "..."
    return f"'{cell}'"


def shown_list(items: Sequence[str], limit: int = _SHOWN_ITEMS) -> str:
    """``a, b, c`` for a short list, ``a, b, ... and 12 more`` for a long one (messages stay one short line)."""
    items = [str(item) for item in items]
    if len(items) <= limit:
        return ", ".join(items)
    return ", ".join(items[:limit]) + f" and {len(items) - limit} more"


# --- finding the header or the first pick ---------------------------------------------------
def _looks_numeric(cell: str) -> bool:
    try:
        float(cell.strip())
    except ValueError:
        return False
    return True


def _find_header(path: str, lines: Iterable[str]) -> tuple[int, str, list[str]]:
    """(line index, delimiter, cells) of the header: the first line naming a known column."""
    first: tuple[int, list[str]] | None = None
    looked = 0
    for index, line in enumerate(lines):
        if _skippable(line):
            continue
        delimiter = delimiter_of(line)
        cells = _split_line(line, delimiter)
        if any(cell.strip().lower() in KNOWN_COLUMNS for cell in cells):
            return index, delimiter, cells
        filled = [cell for cell in cells if cell.strip()]
        if first is None:
            first = (index, cells)
        if filled and sum(_looks_numeric(cell) for cell in filled) * 2 >= len(filled) and len(filled) >= 2:
            raise PitfallsInputError(
                path, "header" if index == first[0] else f"row {index + 1}",
                "the first row holds numbers, not column names" if index == first[0] else
                "this row holds numbers but no header row names the columns above it",
                fix="add a header row such as horizon,trace,twt_ms above the picks, or name the file's columns "
                    "with --columns (for example --columns x,y,inline,xline,twt_ms)")
        looked += 1
        if looked >= _HEADER_SEARCH_LINES:
            break
    if first is None:
        raise _only_comments(path)
    shown = shown_list([cell.strip() for cell in first[1] if cell.strip()]) or "none"
    raise PitfallsInputError(
        path, "header", f"no line names the columns (first line: {shown})",
        fix="add a header row such as horizon,trace,twt_ms, or name the file's columns with --columns")


def _only_comments(path: str) -> PitfallsInputError:
    return PitfallsInputError(path, "", "the file holds only comment lines (starting with #)",
                              fix="export the picks into the file, one row per pick")


def _header_roles(path: str, header: list[str]) -> dict[str, int]:
    """Known column name -> position; refuses repeated names and files without a position or a time."""
    positions: dict[str, int] = {}
    for position, cell in enumerate(header):
        name = cell.strip().lower()
        if name in positions:
            first = positions[name] + 1
            problem = (f"column '{_shown(name)[1:-1]}' appears twice (columns {first} and {position + 1})" if name else
                       f"two columns have no name (columns {first} and {position + 1})")
            raise PitfallsInputError(path, "header", problem,
                                     fix="rename or delete one of them so every column name is different")
        positions[name] = position
    roles = {name: position for name, position in positions.items() if name in KNOWN_COLUMNS}
    if _key_of(set(roles)) is None:
        if "inline" in roles or "xline" in roles:
            lacking = "xline" if "inline" in roles else "inline"
            raise _missing_column(path, header, lacking,
                                  f"a 3-D pick file needs both inline and xline, and {lacking} is missing")
        if "x" in roles or "y" in roles:
            lacking = "y" if "x" in roles else "x"
            raise _missing_column(path, header, lacking, f"picks placed by coordinates need both x and y, "
                                                         f"and {lacking} is missing")
        raise _missing_column(path, header, "trace",
                              "there is no trace, cdp or shotpoint column (2-D), no inline and xline columns (3-D) "
                              "and no x and y columns")
    if "twt_ms" not in roles and "twt_s" not in roles:
        problem = "there is no time column: twt_ms (milliseconds) or twt_s (seconds)"
        if "depth_m" in roles:
            problem += "; depth_m alone cannot be checked, the checks work in two-way time"
        raise _missing_column(path, header, "twt_ms", problem)
    return roles


def _missing_column(path: str, header: list[str], wanted: str, problem: str) -> PitfallsInputError:
    found = [cell.strip() for cell in header if cell.strip()]
    others = [name.lower() for name in found if name.lower() not in KNOWN_COLUMNS]
    close = difflib.get_close_matches(wanted, others, n=1, cutoff=0.6)
    fix = f"name the column {wanted}"
    if close and close[0] != wanted:
        fix = f"rename column {_shown(close[0])} to {wanted}"
    shown = shown_list([_shown(name)[1:-1] for name in found]) if found else "none"
    return PitfallsInputError(path, f"column {wanted}", f"{problem} (columns found: {shown})", fix=fix)


def _fits(cells: list[str], columns: tuple[str, ...], delimiter: str) -> str:
    """Empty when a line's cells fit ``--columns``; else why not."""
    if len(cells) != len(columns):
        if not (delimiter != " " and len(cells) > len(columns) and _blank(cells[len(columns):])):
            return f"it has {len(cells)} cells but --columns names {len(columns)}"
    for name, cell in zip(columns, cells):
        if name in _NUMERIC_COLUMNS and cell.strip() and not _looks_numeric(cell):
            return f"its {name} cell is {_shown(cell)}, not a number"
        if name in _WHOLE_COLUMNS + _REAL_COLUMNS and not cell.strip():
            return f"its {name} cell is empty"
    return ""


def _find_first_pick(path: str, lines: Iterable[str], columns: tuple[str, ...]) -> tuple[int, str]:
    """(line index, delimiter) of the first line whose cells fit the ``--columns`` names."""
    first: tuple[int, str] | None = None
    for index, line in enumerate(lines):
        if _skippable(line):
            continue
        delimiter = delimiter_of(line)
        why = _fits(_split_line(line, delimiter), columns, delimiter)
        if not why:
            return index, delimiter
        if first is None:
            first = (index, why)
    if first is None:
        raise _only_comments(path)
    raise PitfallsInputError(path, f"row {first[0] + 1}",
                             f"no line of the file fits --columns {','.join(columns)} (row {first[0] + 1}: {first[1]})",
                             fix="give --columns the file's columns in order, - for each column to skip")


# --- the rows ---------------------------------------------------------------------------
class _Columns:
    """Arrays collected chunk by chunk."""

    def __init__(self, key_names: tuple[str, ...], has_horizon: bool, has_kind: bool, default_name: str) -> None:
        self.default_name = default_name
        self.rows: list[np.ndarray] = []
        self.times: list[np.ndarray] = []
        self.position: dict[str, list[np.ndarray]] = {name: [] for name in key_names}
        self.horizon_index: list[np.ndarray] = []
        self.horizon_names: list[str] = []
        self.lookup: dict[str, int] = {}
        self.kinds: dict[int, tuple[str, int]] = {}
        """Horizon index -> (first stated kind, its row)."""
        self.has_horizon = has_horizon
        self.has_kind = has_kind
        self.n_comments = 0
        """``#`` lines among the picks of a file read with ``--columns``."""


def _parse_chunk(path: str, chunk: list[tuple[int, list[str]]], names: dict[str, int], width: int,
                 named: bool, delimiter: str, key_names: tuple[str, ...], time_name: str, parts: _Columns) -> None:
    kept: list[tuple[int, list[str]]] = []
    strict = named and delimiter == " "
    for row, cells in chunk:
        if _blank(cells) or (named and _comment(cells)):
            parts.n_comments += bool(named and _comment(cells))
            continue
        if len(cells) > width and not _blank(cells[width:]):
            what = "--columns names" if named else "the header names"
            raise PitfallsInputError(path, f"row {row}", f"the row has {len(cells)} cells but {what} {width} columns",
                                     fix="delete the extra cells or add their column names to the "
                                         + ("--columns option" if named else "header"))
        if len(cells) < width:
            if strict:
                raise PitfallsInputError(path, f"row {row}",
                                         f"the row has {len(cells)} cells but --columns names {width} columns",
                                         fix="give every row all the columns --columns names, or separate the "
                                             "cells with commas so an empty cell can be a gap")
            cells = cells + [""] * (width - len(cells))
        kept.append((row, cells))
    if not kept:
        return
    rows = np.fromiter((row for row, _ in kept), dtype=np.int64, count=len(kept))
    parts.rows.append(rows)

    def column(name: str) -> list[str]:
        index = names[name]
        return [cells[index] for _, cells in kept]

    if parts.has_horizon:
        lookup = parts.lookup
        indices = np.empty(len(kept), dtype=np.int32)
        for i, cell in enumerate(column("horizon")):
            name = cell.strip()
            if not name:
                raise PitfallsInputError(path, f"row {rows[i]}", "horizon is empty",
                                         fix="write the name of the picked surface in every pick row")
            index = lookup.get(name)
            if index is None:
                index = lookup[name] = len(parts.horizon_names)
                parts.horizon_names.append(name)
            indices[i] = index
        parts.horizon_index.append(indices)
    else:
        indices = np.zeros(len(kept), dtype=np.int32)
    if parts.has_kind:
        for i, cell in enumerate(column("kind")):
            stated = cell.strip().lower()
            if not stated:
                continue
            if stated not in PICK_KINDS:
                raise PitfallsInputError(path, f"row {rows[i]}", f"kind is {_shown(cell)}, which is not a known kind",
                                         fix=f"use one of {', '.join(PICK_KINDS)}, or leave the cell empty for horizon")
            first = parts.kinds.setdefault(int(indices[i]), (stated, int(rows[i])))
            if first[0] != stated:
                name = parts.horizon_names[int(indices[i])] if parts.has_horizon else parts.default_name
                raise PitfallsInputError(
                    path, f"row {rows[i]}",
                    f"horizon '{name}' is a {stated} here but a {first[0]} in row {first[1]}",
                    fix="give each horizon one kind, or rename one of the surfaces")
    for name in key_names:
        if name in _WHOLE_COLUMNS:
            parts.position[name].append(_whole_numbers(path, rows, name, column(name)))
        else:
            parts.position[name].append(_coordinates(path, rows, name, column(name)))
    parts.times.append(_times(path, rows, time_name, column(time_name)))


def _whole_numbers(path: str, rows: np.ndarray, name: str, cells: list[str]) -> np.ndarray:
    out = np.empty(len(cells), dtype=np.int64)
    for i, cell in enumerate(cells):
        try:
            out[i] = int(cell)
            continue
        except (ValueError, OverflowError):
            pass
        out[i] = _whole_number(path, int(rows[i]), name, cell)
    if name == "trace" and out.size and out.min() < 1:
        i = int(np.flatnonzero(out < 1)[0])
        raise PitfallsInputError(path, f"row {rows[i]}", f"trace is {out[i]}, but trace numbers start at 1",
                                 fix="number the traces 1, 2, 3 ... in file order, or name the column cdp")
    return out


_INT64_LIMIT = 2 ** 62


def _whole_number(path: str, row: int, column: str, cell: str) -> int:
    text = cell.strip()
    if not text:
        raise PitfallsInputError(path, f"row {row}", f"{column} is empty",
                                 fix=f"write the {column} number in every pick row")
    try:
        value = float(text)
    except ValueError:
        fix = f"write {column} as a whole number"
        if "," in text:
            fix += " without a decimal comma or thousands separator"
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a number", fix=fix) from None
    if not math.isfinite(value) or not value.is_integer() or abs(value) > _INT64_LIMIT:
        raise PitfallsInputError(path, f"row {row}", f"{column} is {_shown(cell)}, not a whole number",
                                 fix=f"write {column} as a whole number, as in the trace headers")
    return int(value)


def _coordinates(path: str, rows: np.ndarray, name: str, cells: list[str]) -> np.ndarray:
    out = np.empty(len(cells), dtype=np.float64)
    for i, cell in enumerate(cells):
        text = cell.strip()
        try:
            value = float(text)
        except ValueError:
            problem = f"{name} is empty" if not text else f"{name} is {_shown(cell)}, not a number"
            raise PitfallsInputError(path, f"row {rows[i]}", problem,
                                     fix=f"write {name} as a plain number with a decimal point in every pick row"
                                     ) from None
        if not math.isfinite(value) or (value < 0 and _is_null(value)):
            raise PitfallsInputError(path, f"row {rows[i]}", f"{name} is {_shown(cell)}, not a coordinate",
                                     fix=f"write {name} as the pick's CDP {name.upper()}, or delete the row")
        out[i] = value
    return out


def _is_null(value: float) -> bool:
    return any(abs(value - null) <= NULL_TOLERANCE for null in NULL_VALUES)




def _times(path: str, rows: np.ndarray, column: str, cells: list[str]) -> np.ndarray:
    """Times in ms with NaN for gaps; signs are checked later, over the whole file."""
    out = np.empty(len(cells), dtype=np.float64)
    for i, cell in enumerate(cells):
        text = cell.strip()
        if not text:
            out[i] = math.nan
            continue
        try:
            value = float(text)
        except ValueError:
            fix = f"write {column} as a plain number, or leave the cell empty for a gap"
            if "," in text:
                fix = f"write {column} with a decimal point, not a comma, or leave the cell empty for a gap"
            raise PitfallsInputError(path, f"row {rows[i]}", f"{column} is {_shown(cell)}, not a number",
                                     fix=fix) from None
        if math.isnan(value) or (value < 0 and _is_null(value)):
            out[i] = math.nan
            continue
        if math.isinf(value):
            raise PitfallsInputError(path, f"row {rows[i]}", f"{column} is {_shown(cell)}, not a finite time",
                                     fix="write the time as a number, or leave the cell empty for a gap")
        out[i] = value + 0.0  # -0.0 -> 0.0
    return out * 1000.0 if column == "twt_s" else out


# --- checks across rows -----------------------------------------------------------------
def _signs(path: str, rows: np.ndarray, twt_ms: np.ndarray, column: str) -> tuple[np.ndarray, bool]:
    """Flip all-negative (downward-counted) times; refuse a negative time among positive ones."""
    finite = np.isfinite(twt_ms)
    negative = finite & (twt_ms < 0)
    if not negative.any():
        return twt_ms, False
    if not np.any(finite & (twt_ms > 0)):
        return np.where(finite, -twt_ms + 0.0, twt_ms), True
    i = int(np.flatnonzero(negative)[0])
    value = twt_ms[i] / 1000.0 if column == "twt_s" else twt_ms[i]
    raise PitfallsInputError(path, f"row {rows[i]}", f"{column} is {value:g}, a negative time among positive ones",
                             fix="two-way times count down from zero (a file of only negative times is read as "
                                 "counted downwards); for a gap leave the cell empty or write NaN or -999.25")


def _check_units(path: str, rows: np.ndarray, twt_ms: np.ndarray, column: str) -> None:
    """Refuse seconds in a ``twt_ms`` column and milliseconds in a ``twt_s`` column."""
    finite = np.flatnonzero(np.isfinite(twt_ms))
    if not finite.size:
        return
    if column == "twt_ms":
        largest = float(twt_ms[finite].max())
        if 0.0 < largest < SECONDS_LIMIT_MS:
            first = int(finite[0])
            raise PitfallsInputError(
                path, f"row {rows[first]}",
                f"twt_ms is {twt_ms[first]:g}, which looks like seconds: every time in the file is below "
                f"{SECONDS_LIMIT_MS:g} ms (largest {largest:g})",
                fix="multiply the times by 1000 or name the column twt_s")
    else:
        too_long = finite[twt_ms[finite] / 1000.0 > MILLISECONDS_LIMIT_S]
        if too_long.size:
            first = int(too_long[0])
            raise PitfallsInputError(
                path, f"row {rows[first]}",
                f"twt_s is {twt_ms[first] / 1000.0:g}, which looks like milliseconds: no record is longer than "
                f"{MILLISECONDS_LIMIT_S:g} s",
                fix="divide the times by 1000 or name the column twt_ms")


def _shown_time(twt_ms: float) -> str:
    return "a gap" if math.isnan(twt_ms) else f"{twt_ms:g} ms"


def _distinct_times(first: float, second: float) -> tuple[str, str]:
    """Two different times shown so that they read differently (full precision when rounding hides it)."""
    shown = _shown_time(first), _shown_time(second)
    if shown[0] == shown[1]:
        shown = tuple("a gap" if math.isnan(t) else f"{t!r} ms" for t in (first, second))
    return shown


def _merge_duplicates(path: str, rows: np.ndarray, horizon_index: np.ndarray, names: tuple[str, ...],
                      position: dict[str, np.ndarray], twt_ms: np.ndarray,
                      key: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(indices kept, rows merged, index of the kept pick each merged row repeats); refuses disagreements."""
    n = rows.size
    keys = [position[name] for name in _key_columns(key)][::-1] + [horizon_index]
    order = np.lexsort([np.arange(n)] + keys)
    same = np.ones(max(n - 1, 0), dtype=bool)
    for values in keys:
        sorted_values = values[order]
        same &= sorted_values[1:] == sorted_values[:-1]
    if not same.any():
        return np.arange(n), np.empty(0, dtype=np.int64), np.empty(0, dtype=np.int64)
    group_start = np.zeros(n, dtype=np.int64)
    starts = np.concatenate([[True], ~same])
    group_start[:] = np.maximum.accumulate(np.where(starts, np.arange(n), 0))
    first = order[group_start]          # for each sorted element, the first (by row) of its group
    later = np.flatnonzero(np.concatenate([[False], same]))
    mine, theirs = order[later], first[later]
    a, b = twt_ms[mine], twt_ms[theirs]
    agree = (np.isnan(a) & np.isnan(b)) | (np.abs(a - b) <= DUPLICATE_TOLERANCE_MS)
    if not agree.all():
        bad = np.flatnonzero(~agree)
        pick = int(bad[np.argmin(mine[bad])])
        i, j = int(mine[pick]), int(theirs[pick])
        where = _where(position, key, j)
        raise PitfallsInputError(
            path, f"row {rows[i]}",
            f"horizon '{names[horizon_index[i]]}' at {where} is picked twice with different times: "
            f"{_distinct_times(twt_ms[j], twt_ms[i])[0]} in row {rows[j]} and "
            f"{_distinct_times(twt_ms[j], twt_ms[i])[1]} in row {rows[i]}",
            fix="keep one of the two rows")
    keep_mask = np.ones(n, dtype=bool)
    keep_mask[mine] = False
    kept = np.flatnonzero(keep_mask)
    new_index = np.cumsum(keep_mask) - 1
    by_row = np.argsort(mine, kind="stable")
    return kept, rows[mine[by_row]], new_index[theirs[by_row]]


def _where(position: dict[str, np.ndarray], key: str, index: int) -> str:
    if key == "inline_xline":
        return f"inline {position['inline'][index]}, xline {position['xline'][index]}"
    if key == "xy":
        return f"x {position['x'][index]:g}, y {position['y'][index]:g}"
    return f"{key} {position[key][index]}"
