"""The pick-file reader: the CSV format of CONTRACT.md "Pick files", its errors and its gaps."""
from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, read_pick_file
from pitfalls.model import PICK_KINDS

FUZZ = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def write(tmp_path, text: str | bytes, name: str = "picks.csv") -> str:
    path = tmp_path / name
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_bytes(text.encode("utf-8"))
    return str(path)


def refused(path: str) -> PitfallsInputError:
    with pytest.raises(PitfallsInputError) as caught:
        read_pick_file(path)
    return caught.value


def times(pick_file: PickFile) -> list[float]:
    return pick_file.twt_ms.tolist()


@dataclass
class Row:
    """One kept pick, gathered from the columns, for readable assertions."""

    row: int
    horizon: str
    kind: str
    trace: int | None
    inline: int | None
    xline: int | None
    twt_ms: float
    fields: dict


def rows_of(pick_file: PickFile) -> list[Row]:
    cells = dict(pick_file.records())
    out = []
    for i in range(pick_file.n_picks):
        horizon = pick_file.horizon_of(i)
        position = {name: int(values[i]) for name, values in pick_file.position.items()}
        row = int(pick_file.row[i])
        out.append(Row(row, horizon, pick_file.kinds[pick_file.horizons.index(horizon)], position.get("trace"),
                       position.get("inline"), position.get("xline"), float(pick_file.twt_ms[i]),
                       dict(zip(pick_file.columns, cells[row] + [""] * (len(pick_file.columns) - len(cells[row]))))))
    return out


# --- files that parse -------------------------------------------------------------------
def test_two_d_file_reads_rows_in_order_with_spreadsheet_row_numbers(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH1,1,1500\nH1,2,1502.5\nH2,1,2100\n")
    picks = read_pick_file(path)
    assert picks.geometry == "2d"
    assert picks.columns == ("horizon", "trace", "twt_ms")
    assert [(row.row, row.horizon, row.trace, row.twt_ms) for row in rows_of(picks)] == [
        (2, "H1", 1, 1500.0), (3, "H1", 2, 1502.5), (4, "H2", 1, 2100.0)]
    assert all(row.kind == "horizon" and row.inline is None and row.xline is None for row in rows_of(picks))
    assert picks.path == path


def test_three_d_file_reads_inline_and_xline(tmp_path):
    path = write(tmp_path, "horizon,inline,xline,twt_ms,kind\nTopA,1204,310,1800,\nTopA,1204,311,1801,\n"
                           "GWC,1204,310,1950,contact\n")
    picks = read_pick_file(path)
    assert picks.geometry == "3d"
    assert [(row.inline, row.xline, row.trace) for row in rows_of(picks)] == [
        (1204, 310, None), (1204, 311, None), (1204, 310, None)]
    assert [row.kind for row in rows_of(picks)] == ["horizon", "horizon", "contact"]


def test_trace_column_beside_inline_and_xline_is_kept_as_an_extra_column(tmp_path):
    path = write(tmp_path, "horizon,trace,inline,xline,twt_ms\nA,7,10,20,900\n")
    picks = read_pick_file(path)
    assert picks.geometry == "3d"
    assert rows_of(picks)[0].trace is None
    assert rows_of(picks)[0].fields["trace"] == "7"


@pytest.mark.parametrize("cell", ["", "NaN", "nan", " NAN ", "-999.25", "-999.2500004", "-9999.25"])
def test_gap_markers_become_nan(tmp_path, cell):
    path = write(tmp_path, f"horizon,trace,twt_ms\nH1,1,1500\nH1,2,{cell}\n")
    assert times(read_pick_file(path))[0] == 1500.0
    assert math.isnan(times(read_pick_file(path))[1])


def test_a_horizon_made_only_of_gaps_is_accepted(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH1,1,1500\nEmpty,1,\nEmpty,2,-999.25\n")
    picks = read_pick_file(path)
    assert [math.isnan(row.twt_ms) for row in rows_of(picks)] == [False, True, True]


def test_twt_s_is_converted_to_milliseconds(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_s\nH1,1,1.5\nH1,2,0.0015\nH1,3,-999.25\n")
    values = times(read_pick_file(path))
    assert values[:2] == [pytest.approx(1500.0, abs=1e-9), pytest.approx(1.5, abs=1e-12)]
    assert math.isnan(values[2])


def test_twt_ms_is_preferred_when_both_time_columns_exist(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms,twt_s\nH1,1,1500,9.9\n")
    picks = read_pick_file(path)
    assert times(picks) == [1500.0]
    assert rows_of(picks)[0].fields["twt_s"] == "9.9"


def test_column_names_ignore_case_and_spaces_and_keep_their_spelling(tmp_path):
    path = write(tmp_path, " Horizon ,TRACE, Twt_Ms,Note\nH1,1,1500, keep  this \n")
    picks = read_pick_file(path)
    assert picks.columns == (" Horizon ", "TRACE", " Twt_Ms", "Note")
    assert rows_of(picks)[0].fields == {" Horizon ": "H1", "TRACE": "1", " Twt_Ms": "1500", "Note": " keep  this "}


@pytest.mark.parametrize("delimiter", [";", "\t"])
def test_semicolon_and_tab_files_are_read_when_the_header_has_no_comma(tmp_path, delimiter):
    text = delimiter.join(["horizon", "trace", "twt_ms", "note"]) + "\n"
    text += delimiter.join(["H1", "1", "1500", "a, b"]) + "\n"
    picks = read_pick_file(write(tmp_path, text))
    assert times(picks) == [1500.0]
    assert rows_of(picks)[0].fields["note"] == "a, b"


def test_byte_order_mark_and_crlf_line_ends_are_accepted(tmp_path):
    path = write(tmp_path, "\ufeffhorizon,trace,twt_ms\r\nH1,1,1500\r\n")
    picks = read_pick_file(path)
    assert picks.columns == ("horizon", "trace", "twt_ms")
    assert times(picks) == [1500.0]


def test_whole_numbers_written_with_a_point_zero_are_trace_numbers(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH1,12.0,1500\n")
    assert rows_of(read_pick_file(path))[0].trace == 12


def test_empty_kind_cells_take_the_kind_another_row_states(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms,kind\nSF,1,800,\nSF,2,802,Seafloor\nH1,1,1500,\n")
    assert [row.kind for row in rows_of(read_pick_file(path))] == ["seafloor", "seafloor", "horizon"]


def test_agreeing_duplicates_are_merged_and_kept_for_writing_back(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH1,1,1500\nH1,2,\nH1,1,1500.0\nH1,2,NaN\nH2,1,1500\n")
    picks = read_pick_file(path)
    assert [row.row for row in rows_of(picks)] == [2, 3, 6]
    assert picks.merged_rows.tolist() == [4, 5]


def test_blank_rows_are_skipped_but_counted(tmp_path):
    picks = read_pick_file(write(tmp_path, "horizon,trace,twt_ms\n\nH1,1,1500\n,,\nH1,2,1501\n"))
    assert [row.row for row in rows_of(picks)] == [3, 5]
    error = refused(write(tmp_path, "horizon,trace,twt_ms\n\nH1,1,1500\n,,\nH1,2,oops\n"))
    assert error.where == "row 5"


def test_short_rows_read_missing_cells_as_empty(tmp_path):
    picks = read_pick_file(write(tmp_path, "horizon,trace,twt_ms,note\nH1,1\nH1,2,1500\n"))
    assert math.isnan(rows_of(picks)[0].twt_ms)
    assert rows_of(picks)[0].fields["note"] == ""


# --- files that are refused -------------------------------------------------------------
ERRORS = [
    # (id, file text, where, words the message must hold)
    ("empty", "", "", ["empty", "header"]),
    ("blank", "  \n\n", "", ["empty"]),
    ("numbers first", "1,1500\n2,1510\n", "header", ["numbers", "add a header row"]),
    ("only comments", "# picks\n# none yet\n", "", ["only comment lines"]),
    ("no header", "Exported picks\nfrom the workstation\n", "header", ["no line names the columns",
                                                                      "--columns"]),
    ("no trace", "horizon,twt_ms\nH1,1500\n", "column trace", ["inline and xline", "cdp", "name the column trace"]),
    ("inline only", "horizon,inline,twt_ms\nH1,5,1500\n", "column xline", ["both inline and xline",
                                                                           "name the column xline"]),
    ("close to inline", "horizon,inline,xlin,twt_ms\nH1,5,6,1500\n", "column xline",
     ["rename column 'xlin' to xline"]),
    ("no time", "horizon,trace\nH1,1\n", "column twt_ms", ["twt_s", "name the column twt_ms"]),
    ("close name", "horizon,trace,twt_msec\nH1,1,1500\n", "column twt_ms", ["rename column 'twt_msec' to twt_ms"]),
    ("repeated column", "horizon,trace,twt_ms,Trace\nH1,1,1500,2\n", "header", ["appears twice", "rename"]),
    ("header only", "horizon,trace,twt_ms\n", "row 1", ["no pick rows", "add one row per pick"]),
    ("not a number", "horizon,trace,twt_ms\nH1,1,1500\nH1,2,abc\n", "row 3", ["'abc'", "not a number",
                                                                              "plain number"]),
    ("decimal comma", "horizon;trace;twt_ms\nH1;1;1500,5\n", "row 2", ["decimal point"]),
    ("fractional trace", "horizon,trace,twt_ms\nH1,1.5,1500\n", "row 2", ["not a whole number"]),
    ("text trace", "horizon,trace,twt_ms\nH1,first,1500\n", "row 2", ["trace", "whole number"]),
    ("empty trace", "horizon,trace,twt_ms\nH1,,1500\n", "row 2", ["trace is empty"]),
    ("text inline", "horizon,inline,xline,twt_ms\nH1,x,3,1500\n", "row 2", ["inline", "whole number"]),
    ("trace zero", "horizon,trace,twt_ms\nH1,0,1500\n", "row 2", ["start at 1"]),
    ("unknown kind", "horizon,trace,twt_ms,kind\nH1,1,1500,fault\n", "row 2",
     ["'fault'", "horizon, contact, seafloor"]),
    ("negative time", "horizon,trace,twt_ms\nH1,1,1500\nH1,2,-12\n", "row 3", ["negative", "-999.25"]),
    ("near null", "horizon,trace,twt_ms\nH1,1,1500\nH1,2,-999.26\n", "row 3", ["negative"]),
    ("infinite time", "horizon,trace,twt_ms\nH1,1,inf\n", "row 2", ["not a finite time"]),
    ("seconds in ms", "horizon,trace,twt_ms\nH1,1,\nH1,2,1.42\nH1,3,1.45\n", "row 3",
     ["1.42", "looks like seconds", "multiply the times by 1000", "twt_s"]),
    ("ms in seconds", "horizon,trace,twt_s\nH1,1,1.5\nH1,2,1500\n", "row 3",
     ["looks like milliseconds", "divide the times by 1000"]),
    ("disagreeing duplicate", "horizon,trace,twt_ms\nH1,1,1500\nH1,2,1510\nH1,1,1520\n", "row 4",
     ["trace 1", "row 2", "row 4", "1500 ms", "1520 ms", "keep one"]),
    ("gap against time", "horizon,inline,xline,twt_ms\nH1,5,6,1500\nH1,5,6,\n", "row 3",
     ["inline 5, xline 6", "a gap", "row 2"]),
    ("two kinds", "horizon,trace,twt_ms,kind\nX,1,1500,contact\nX,2,1500,horizon\n", "row 3",
     ["contact in row 2", "one kind"]),
    ("extra cells", "horizon,trace,twt_ms\nH1,1,1500,oops\n", "row 2", ["4 cells", "3 columns", "header"]),
    ("empty horizon", "horizon,trace,twt_ms\n ,1,1500\n", "row 2", ["horizon is empty", "name"]),
    ("nul", "horizon,trace,twt_ms\nH1,1,15\x0000\n", "line 2", ["NUL", "CSV"]),
]


@pytest.mark.parametrize("text, where, words", [case[1:] for case in ERRORS], ids=[case[0] for case in ERRORS])
def test_bad_files_are_refused_naming_file_place_and_fix(tmp_path, text, where, words):
    path = write(tmp_path, text)
    error = refused(path)
    message = str(error)
    assert error.where == where
    assert message.startswith(path + (f", {where}:" if where else ":"))
    assert error.fix, "every refusal says what to fix"
    for word in words:
        assert word in message


def test_missing_file_is_refused(tmp_path):
    error = refused(str(tmp_path / "nowhere.csv"))
    assert "nowhere.csv" in str(error) and "not found" in str(error) and "check the path" in str(error)


def test_folder_is_refused(tmp_path):
    error = refused(str(tmp_path))
    assert "folder" in str(error) and str(tmp_path) in str(error)


def test_non_utf8_file_names_the_line(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH\xe9,1,1500\n".encode("latin-1"))
    error = refused(path)
    assert error.where == "line 2"
    assert "UTF-8" in str(error) and "picks.csv" in str(error)


def test_oversized_cell_is_refused_as_unreadable_csv(tmp_path):
    path = write(tmp_path, "horizon,trace,twt_ms\nH1,1,1500\n" + "H" * 200_000 + ",2,1500\n")
    error = refused(path)
    assert error.where == "row 3" and "not readable as CSV" in str(error)


def test_seconds_rule_leaves_all_zero_and_deep_files_alone(tmp_path):
    """The seconds rule flags only a file whose largest time is in (0, 20) ms."""
    assert times(read_pick_file(write(tmp_path, "horizon,trace,twt_ms\nSF,1,0\nSF,2,0\n"))) == [0.0, 0.0]
    assert times(read_pick_file(write(tmp_path, "horizon,trace,twt_ms\nSF,1,4\nH,1,20\n"))) == [4.0, 20.0]


# --- properties -------------------------------------------------------------------------
printable = st.characters(blacklist_categories=("Cs", "Cc"))
names = st.text(printable, min_size=1, max_size=10).map(str.strip).filter(bool)
gap_cells = st.sampled_from(["", "NaN", "-999.25", "-9999.25"])


@st.composite
def pick_tables(draw):
    """Picks as (horizon, kind, position, twt_ms or None) with unique positions per horizon."""
    three_d = draw(st.booleans())
    horizons = draw(st.lists(names, min_size=1, max_size=4, unique=True))
    kinds = {horizon: draw(st.sampled_from(PICK_KINDS)) for horizon in horizons}
    positions = st.tuples(st.integers(-5, 5000), st.integers(-5, 5000)) if three_d else st.integers(1, 10**6)
    picks = []
    for horizon in horizons:
        for position in draw(st.lists(positions, min_size=1, max_size=6, unique=True)):
            twt_ms = draw(st.none() | st.floats(0.0, 12000.0, allow_nan=False))
            picks.append((horizon, kinds[horizon], position, twt_ms))
    order = draw(st.permutations(range(len(picks))))
    return three_d, [picks[i] for i in order]


@FUZZ
@given(table=pick_tables(), kind_everywhere=st.booleans(), data=st.data())
def test_round_trip_generated_picks_through_csv(tmp_path, table, kind_everywhere, data):
    """Generated picks -> CSV -> read_pick_file gives the same picks, gaps as NaN."""
    three_d, picks = table
    values = [twt for *_, twt in picks if twt is not None]
    assume(not values or not 0.0 < max(values) < 20.0)  # the seconds rule refuses those (tested above)
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, lineterminator="\n")
    header = ["horizon", "inline", "xline"] if three_d else ["horizon", "trace"]
    writer.writerow(header + ["twt_ms", "kind", "note"])
    stated = set()
    written = []
    for horizon, kind, position, twt_ms in picks:
        where = [str(position[0]), str(position[1])] if three_d else [str(position)]
        time_cell = repr(twt_ms) if twt_ms is not None else data.draw(gap_cells)
        kind_cell = kind if kind_everywhere or horizon not in stated else ""
        stated.add(horizon)
        row = [horizon] + where + [time_cell, kind_cell, data.draw(st.text(printable, max_size=5))]
        written.append(row)
        writer.writerow(row)
    path = write(tmp_path, buffer.getvalue())

    picks_read = read_pick_file(path)

    assert picks_read.geometry == ("3d" if three_d else "2d")
    assert picks_read.n_picks == len(picks) and not picks_read.merged_rows.size
    for row, (horizon, kind, position, twt_ms), cells in zip(rows_of(picks_read), picks, written):
        assert (row.horizon, row.kind) == (horizon, kind)
        assert ((row.inline, row.xline) if three_d else row.trace) == position
        assert math.isnan(row.twt_ms) if twt_ms is None else row.twt_ms == twt_ms
        assert list(row.fields.values()) == cells


@FUZZ
@given(text=st.text(max_size=300))
def test_any_text_parses_or_is_refused_cleanly(tmp_path, text):
    try:
        picks = read_pick_file(write(tmp_path, text))
    except PitfallsInputError as error:
        assert error.path.endswith("picks.csv")
    else:
        assert picks.n_picks and picks.geometry in ("2d", "3d", "xy")


@FUZZ
@given(raw=st.binary(max_size=300))
def test_any_bytes_parse_or_are_refused_cleanly(tmp_path, raw):
    try:
        picks = read_pick_file(write(tmp_path, raw))
    except PitfallsInputError as error:
        assert error.path.endswith("picks.csv")
    else:
        assert picks.n_picks


junk_cells = st.sampled_from(["", " ", "12.0", "1.5", "0", "-3", "-999.25", "NaN", "inf", "1e3", "1,5", "fault",
                              '"', "H1"]) | st.text(max_size=4)
good_cells = {
    "horizon": st.sampled_from(["H1", "H2", "Sea floor"]),
    "trace": st.integers(1, 4).map(str),
    "inline": st.integers(1, 2).map(str),
    "xline": st.integers(1, 2).map(str),
    "twt_ms": st.sampled_from(["", "NaN", "-999.25", "0", "800", "1500.5", "1.5"]),
    "twt_s": st.sampled_from(["", "NaN", "-999.25", "0.8", "1.5", "1500"]),
    "kind": st.sampled_from(["", "horizon", "contact", "seafloor", "Contact"]),
    "note": st.text(max_size=4),
}
layouts = st.sampled_from([["horizon", "trace", "twt_ms"], ["horizon", "inline", "xline", "twt_ms"],
                           ["horizon", "trace", "twt_s", "kind"], ["horizon", "inline", "xline", "twt_s", "kind"],
                           ["horizon", "trace", "twt_ms", "kind", "note"], ["horizon", "trace"],
                           ["inline", "twt_ms", "horizon"]])


@st.composite
def near_valid_tables(draw):
    """Mostly well-formed tables with some cells, names and row lengths spoiled."""
    header = list(draw(st.permutations(draw(layouts))))
    if draw(st.integers(0, 9)) == 0:
        header[draw(st.integers(0, len(header) - 1))] = draw(st.sampled_from(["", "Trace", " TWT_MS", "1"]))
    body = []
    for _ in range(draw(st.integers(0, 6))):
        row = [draw(junk_cells if draw(st.integers(0, 9)) == 0 else good_cells.get(name.strip().lower(), junk_cells))
               for name in header]
        if draw(st.integers(0, 9)) == 0:
            row = row[: draw(st.integers(0, len(row)))] + draw(st.lists(junk_cells, max_size=2))
        body.append(row)
    return [header] + body


@FUZZ
@given(table=near_valid_tables(), delimiter=st.sampled_from(",;\t"))
def test_near_valid_tables_parse_or_are_refused_cleanly(tmp_path, table, delimiter):
    text = "\n".join(delimiter.join(row) for row in table) + "\n"
    try:
        picks = read_pick_file(write(tmp_path, text))
    except PitfallsInputError as error:
        assert error.fix
    else:
        for row in rows_of(picks):
            assert row.horizon and row.kind in PICK_KINDS
            assert math.isnan(row.twt_ms) or row.twt_ms >= 0.0
            assert row.trace is None or row.trace >= 1
