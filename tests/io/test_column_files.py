"""Column files as interpreters export them: --columns names, delimiters, skipped lines, file-stem
horizons, negative-downward times, the other position keys, and their errors."""
from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import KNOWN_COLUMNS, parse_columns, read_pick_file

FUZZ = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def write(tmp_path, text: str | bytes, name: str = "Top_Reservoir.txt") -> str:
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return str(path)


def refused(path: str, columns=None, horizon=None) -> PitfallsInputError:
    with pytest.raises(PitfallsInputError) as caught:
        read_pick_file(path, columns, horizon)
    assert caught.value.fix, "every refusal says what to fix"
    return caught.value


# --- --columns --------------------------------------------------------------------------
def test_columns_option_keeps_order_and_skips():
    assert parse_columns(" X, y ,-,inline,xline,TWT_MS") == ("x", "y", "-", "inline", "xline", "twt_ms")


@pytest.mark.parametrize("text, where, words", [
    ("x,y,time", "name 3", ["'time'", "twt_ms", "- to skip"]),
    ("cdp,twt_mss", "name 2", ["did you mean twt_ms"]),
    ("cdp,twt_ms,cdp", "name 3", ["named twice"]),
    ("horizon,twt_ms", "", ["trace, cdp, shotpoint"]),
    ("x,twt_ms", "", ["x and y"]),
    ("cdp,depth_m", "", ["no time column", "depth_m alone"]),
])
def test_bad_columns_option_is_refused(text, where, words):
    with pytest.raises(PitfallsInputError) as caught:
        parse_columns(text)
    error = caught.value
    assert error.path == "--columns" and error.where == where and error.fix
    for word in words:
        assert word in str(error)


# --- the same picks, many layouts ------------------------------------------------------------
PICKS = [(101, 1500.0), (102, 1502.5), (103, math.nan), (104, 1507.0)]


def body(delimiter: str, sign: float = 1.0) -> str:
    lines = []
    for cdp, twt in PICKS:
        cell = "-999.25" if math.isnan(twt) else f"{sign * twt:g}"
        lines.append(delimiter.join([str(cdp), "17.5", cell]))
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("delimiter", [" ", "   ", "\t", ",", ";"])
def test_delimiters_are_detected(tmp_path, delimiter):
    picks = read_pick_file(write(tmp_path, body(delimiter)), parse_columns("cdp,-,twt_ms"))
    assert picks.key == "cdp" and picks.named and not picks.horizon_column
    assert picks.position["cdp"].tolist() == [101, 102, 103, 104]
    np.testing.assert_array_equal(picks.twt_ms, [1500.0, 1502.5, np.nan, 1507.0])
    assert picks.horizons == ("Top_Reservoir",)
    assert any("named after the file" in note for note in picks.notes)


def test_comment_and_free_text_lines_before_the_data_are_skipped_and_counted(tmp_path):
    text = ("# exported 2026-03-01\n# horizon: top reservoir\nLine QT24-117, interpretation of the east flank\n"
            "\n  CDP      SP     TIME\n" + body("  ") + "# end of export\n")
    picks = read_pick_file(write(tmp_path, text), parse_columns("cdp,-,twt_ms"))
    assert picks.n_skipped_lines == 5
    assert picks.row.tolist() == [6, 7, 8, 9]
    assert any("5 comment or text lines skipped" in note for note in picks.notes)
    assert [row for row, _ in picks.records()] == [6, 7, 8, 9]


def test_header_file_may_start_with_free_text(tmp_path):
    text = "Picks exported by the interpretation team\n# units ms\nhorizon,cdp,twt_ms\nH1,101,1500\n"
    picks = read_pick_file(write(tmp_path, text, "picks.csv"))
    assert picks.key == "cdp" and picks.n_skipped_lines == 2 and picks.row.tolist() == [4]


def test_horizon_option_names_a_file_without_a_horizon_column(tmp_path):
    picks = read_pick_file(write(tmp_path, body(" ")), parse_columns("cdp,-,twt_ms"), horizon="GWC")
    assert picks.horizons == ("GWC",) and any("--horizon" in note for note in picks.notes)


def test_negative_downward_times_are_flipped_with_a_note(tmp_path):
    picks = read_pick_file(write(tmp_path, body(" ", sign=-1.0)), parse_columns("cdp,-,twt_ms"))
    np.testing.assert_array_equal(picks.twt_ms, [1500.0, 1502.5, np.nan, 1507.0])
    assert any("counted downwards" in note for note in picks.notes)


def test_negative_downward_seconds_are_flipped_then_converted(tmp_path):
    text = "101 -1.5\n102 -1.5025\n"
    picks = read_pick_file(write(tmp_path, text), parse_columns("cdp,twt_s"))
    np.testing.assert_allclose(picks.twt_ms, [1500.0, 1502.5])


def test_negative_downward_seconds_in_a_millisecond_column_are_still_an_error(tmp_path):
    error = refused(write(tmp_path, "101 -1.5\n102 -1.52\n"), parse_columns("cdp,twt_ms"))
    assert error.where == "row 1" and "looks like seconds" in str(error) and "twt_s" in error.fix


@pytest.mark.parametrize("columns, text, key, position", [
    ("trace,twt_ms", "1 1500\n2 1501\n", "trace", {"trace": [1, 2]}),
    ("shotpoint,twt_ms", "2001 1500\n2002 1501\n", "shotpoint", {"shotpoint": [2001, 2002]}),
    ("inline,xline,twt_ms", "10 20 1500\n10 21 1501\n", "inline_xline", {"inline": [10, 10], "xline": [20, 21]}),
    ("x,y,twt_ms", "500000.5 6000000 1500\n500012.5 6000000 1501\n", "xy",
     {"x": [500000.5, 500012.5], "y": [6000000.0, 6000000.0]}),
    ("x,y,inline,xline,twt_ms", "1 2 10 20 1500\n", "inline_xline", {"inline": [10], "xline": [20]}),
])
def test_each_position_key(tmp_path, columns, text, key, position):
    picks = read_pick_file(write(tmp_path, text), parse_columns(columns))
    assert picks.key == key
    assert {name: values.tolist() for name, values in picks.position.items()} == position


def test_extra_columns_and_depth_are_carried_for_writing_back(tmp_path):
    picks = read_pick_file(write(tmp_path, "TopA 101 1500 1234.5 good\n"), parse_columns("horizon,cdp,twt_ms,depth_m,-"))
    assert picks.columns == ("horizon", "cdp", "twt_ms", "depth_m", "column_5")
    assert list(picks.records()) == [(1, ["TopA", "101", "1500", "1234.5", "good"])]


def test_header_csv_reads_the_new_key_columns_too(tmp_path):
    picks = read_pick_file(write(tmp_path, "horizon,x,y,twt_ms\nH,500000.5,6000000,1500\n", "p.csv"))
    assert picks.key == "xy" and picks.position["x"].tolist() == [500000.5]


def test_decimal_comma_in_a_semicolon_file_is_refused_with_the_fix(tmp_path):
    error = refused(write(tmp_path, "horizon;x;y;twt_ms\nH;500000,5;6000000;1500\n", "p.csv"))
    assert error.where == "row 2" and "'500000,5'" in str(error) and "decimal point" in error.fix


@pytest.mark.parametrize("text, columns, where, words", [
    ("101 17.5\n", "cdp,-,twt_ms", "row 1", ["no line of the file fits", "2 cells", "names 3"]),
    ("cdp sp time\nCDP SP TIME\n", "cdp,-,twt_ms", "row 1", ["no line of the file fits"]),
    ("101 1500\n102 abc\n", "cdp,twt_ms", "row 2", ["'abc'", "not a number"]),
    ("101 1500\n102 1500 7\n", "cdp,twt_ms", "row 2", ["3 cells", "--columns names 2"]),
    ("101 1500\n102\n", "cdp,twt_ms", "row 2", ["1 cells", "--columns names 2"]),
    ("101 1500\n101.5 1501\n", "cdp,twt_ms", "row 2", ["not a whole number"]),
    ("101 1500\n102 -1500\n", "cdp,twt_ms", "row 2", ["negative time among positive ones"]),
    ("101 1500\n101 1510\n", "cdp,twt_ms", "row 2", ["cdp 101", "picked twice", "row 1", "row 2"]),
    ("1 nan 1500\n", "x,y,twt_ms", "row 1", ["y is 'nan'", "not a coordinate"]),
    ("# nothing\n# yet\n", "cdp,twt_ms", "", ["only comment lines"]),
])
def test_column_file_errors_name_the_row_and_the_fix(tmp_path, text, columns, where, words):
    path = write(tmp_path, text)
    error = refused(path, parse_columns(columns))
    assert error.where == where
    assert str(error).startswith(path)
    for word in words:
        assert word in str(error)


def test_header_less_file_without_columns_points_at_the_option(tmp_path):
    error = refused(write(tmp_path, "101 17.5 1500\n102 17.5 1501\n"))
    assert "--columns" in error.fix and error.where == "header"


def test_a_long_header_is_shown_capped(tmp_path):
    """A header of many unknown names gives a short message (the first few, then how many more)."""
    header = ",".join(f"col{i}" for i in range(5000)) + ",trace\n"
    error = refused(write(tmp_path, header + ",".join(["1"] * 5001) + "\n", "p.csv"))
    assert "and 4993 more" in str(error) and len(str(error)) < 400


# --- properties ---------------------------------------------------------------------------
column_sets = st.sampled_from(["cdp,twt_ms", "x,y,twt_ms", "horizon,trace,twt_s,kind", "inline,xline,-,twt_ms",
                               "shotpoint,twt_ms,depth_m"])


@FUZZ
@given(raw=st.binary(max_size=300), columns=column_sets)
def test_any_bytes_parse_or_are_refused_cleanly(tmp_path, raw, columns):
    """Any bytes with any --columns: parsed picks, or the one user error; nothing else."""
    try:
        picks = read_pick_file(write(tmp_path, raw), parse_columns(columns))
    except PitfallsInputError as error:
        assert error.path.endswith("Top_Reservoir.txt") and error.fix
    else:
        assert picks.n_picks >= 1
        finite = picks.twt_ms[np.isfinite(picks.twt_ms)]
        assert np.all(finite >= 0.0)


number_cells = st.sampled_from(["101", "102", "-5", "1500", "-1500", "1.5", "-999.25", "NaN", "", "abc", "1e3",
                                "500000.25", "#", "x"])


@FUZZ
@given(rows=st.lists(st.lists(number_cells, min_size=1, max_size=4), max_size=8),
       preamble=st.lists(st.sampled_from(["# comment", "free text here", "", "CDP TIME"]), max_size=3),
       delimiter=st.sampled_from([" ", "\t", ",", ";"]), columns=column_sets)
def test_near_valid_column_files_parse_or_are_refused_cleanly(tmp_path, rows, preamble, delimiter, columns):
    text = "\n".join(preamble + [delimiter.join(row) for row in rows]) + "\n"
    try:
        picks = read_pick_file(write(tmp_path, text), parse_columns(columns))
    except PitfallsInputError as error:
        assert error.fix
    else:
        assert picks.n_picks == picks.row.size == picks.twt_ms.size
        assert np.all(np.diff(picks.row) > 0)
        assert all(values.size == picks.n_picks for values in picks.position.values())


def test_every_known_name_is_a_column_name():
    assert set(KNOWN_COLUMNS) == {"horizon", "trace", "cdp", "shotpoint", "inline", "xline", "x", "y", "twt_ms",
                                  "twt_s", "depth_m", "kind"}
