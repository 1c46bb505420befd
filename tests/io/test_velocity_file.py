"""--velocity files: YAML (linear or tabled sediment function, per line or survey-wide) and two-column tables."""
from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pitfalls import detectors
from pitfalls.errors import PitfallsInputError
from pitfalls.io.rules import load_rules
from pitfalls.io.velocity import read_velocity_file

FUZZ = settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


@pytest.fixture(scope="module")
def rules():
    return load_rules(None, detectors.rule_keys())[0]


def write(tmp_path, name: str, text: str | bytes) -> str:
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return str(path)


def test_linear_yaml_fills_in_the_rules_cap(tmp_path, rules):
    path = write(tmp_path, "v.yaml", "water_velocity_m_s: 1485\nsediment:\n  seafloor_velocity_m_s: 1620\n"
                                     "  gradient_per_s: 0.7\n")
    model = read_velocity_file(path, rules)
    assert (model.water_velocity_m_s, model.seafloor_velocity_m_s, model.gradient_per_s) == (1485.0, 1620.0, 0.7)
    assert model.max_velocity_m_s == rules["velocity"]["max_velocity_m_s"] and not model.is_table
    assert model.source == path and path in model.describe()


def test_table_yaml_and_line_entries(tmp_path, rules):
    path = write(tmp_path, "v.yml", "sediment:\n  twt_below_seafloor_ms: [0, 200]\n"
                                    "  interval_velocity_m_s: [1600, 2000]\n"
                                    "lines:\n  QT24-117:\n    water_velocity_m_s: 1490\n"
                                    "    sediment: {seafloor_velocity_m_s: 1550, gradient_per_s: 1.1}\n")
    survey = read_velocity_file(path, rules, "QT24-200")
    assert survey.is_table and survey.depth_below_seafloor_m(300.0) == pytest.approx(260.0)
    assert survey.water_velocity_m_s == rules["velocity"]["water_velocity_m_s"]
    line = read_velocity_file(path, rules, "QT24-117")
    assert not line.is_table and line.water_velocity_m_s == 1490.0 and "(line QT24-117)" in line.source


def test_average_table_yaml_in_seconds(tmp_path, rules):
    path = write(tmp_path, "v.yaml", "sediment:\n  twt_below_seafloor_s: [0.1, 0.2]\n"
                                     "  average_velocity_m_s: [1600, 1700]\n")
    model = read_velocity_file(path, rules)
    assert model.depth_below_seafloor_m(200.0) == pytest.approx(170.0) and model.table_kind == "average"


@pytest.mark.parametrize("separator", [",", ";", "\t", "   "])
def test_two_column_table(tmp_path, rules, separator):
    text = (f"# checkshot below the seafloor\nKnots from the QT-3 well\n"
            f"twt_below_seafloor_ms{separator}interval_velocity_m_s\n0{separator}1600\n200{separator}2000\n")
    model = read_velocity_file(write(tmp_path, "v.txt", text), rules)
    assert model.depth_below_seafloor_m(300.0) == pytest.approx(260.0)
    assert model.water_velocity_m_s == rules["velocity"]["water_velocity_m_s"]


YAML_ERRORS = [
    ("list", "- 1\n- 2\n", "", ["holds no settings"]),
    ("unknown top", "sediments: {}\n", "sediments", ["not a velocity-file key", "sediment"]),
    ("missing sediment", "water_velocity_m_s: 1500\n", "sediment", ["missing"]),
    ("water range", "water_velocity_m_s: 15000\nsediment: {seafloor_velocity_m_s: 1600, gradient_per_s: 0.8}\n",
     "water_velocity_m_s", ["outside 1400-1600"]),
    ("mixed", "sediment: {seafloor_velocity_m_s: 1600, gradient_per_s: 0.8, twt_below_seafloor_ms: [0],"
              " interval_velocity_m_s: [1600]}\n", "sediment", ["mixes a linear function and a table"]),
    ("text gradient", "sediment: {seafloor_velocity_m_s: 1600, gradient_per_s: fast}\n", "sediment.gradient_per_s",
     ["not a number"]),
    ("lengths", "sediment: {twt_below_seafloor_ms: [0, 100], interval_velocity_m_s: [1600]}\n", "sediment",
     ["2 values", "1"]),
    ("order", "sediment: {twt_below_seafloor_ms: [0, 100, 50], interval_velocity_m_s: [1600, 1700, 1800]}\n",
     "sediment", ["entry 3: the times must increase"]),
    ("slow", "sediment: {twt_below_seafloor_ms: [0], interval_velocity_m_s: [300]}\n",
     "sediment.interval_velocity_m_s[1]", ["outside 1000-7000"]),
    ("no line", "lines:\n  L1:\n    sediment: {seafloor_velocity_m_s: 1600, gradient_per_s: 0.8}\n", "lines",
     ["no entry for line 'L2'", "L1"]),
    ("alias", "base: &b {seafloor_velocity_m_s: 1600, gradient_per_s: 0.8}\nsediment: *b\n", "line 1", ["anchor"]),
    ("duplicate", "sediment: {seafloor_velocity_m_s: 1600, gradient_per_s: 0.8}\n"
                  "sediment: {seafloor_velocity_m_s: 1700, gradient_per_s: 0.8}\n", "line 2", ["sediment"]),
]


@pytest.mark.parametrize("text, where, words", [case[1:] for case in YAML_ERRORS], ids=[c[0] for c in YAML_ERRORS])
def test_bad_yaml_is_refused(tmp_path, rules, text, where, words):
    path = write(tmp_path, "v.yaml", text)
    with pytest.raises(PitfallsInputError) as caught:
        read_velocity_file(path, rules, "L2")
    error = caught.value
    assert error.path == path and error.where == where and error.fix
    for word in words:
        assert word in str(error)


TABLE_ERRORS = [
    ("no header", "0 1600\n200 2000\n", "header", ["no row names the columns", "twt_below_seafloor_ms"]),
    ("datum times", "twt_ms,interval_velocity_m_s\n0,1600\n", "row 1", ["measured from the seafloor"]),
    ("three columns", "twt_below_seafloor_ms,interval_velocity_m_s,x\n0,1600,1\n", "row 1", ["the header is"]),
    ("text", "twt_below_seafloor_ms,interval_velocity_m_s\n0,fast\n", "row 2", ["not a number"]),
    ("short row", "twt_below_seafloor_ms,interval_velocity_m_s\n0\n", "row 2", ["1 cells, not 2"]),
    ("no rows", "twt_below_seafloor_ms,interval_velocity_m_s\n", "row 1", ["no rows"]),
    ("decreasing", "twt_below_seafloor_ms,interval_velocity_m_s\n100,1600\n50,1700\n", "",
     ["knot 2: the times must increase"]),
]


@pytest.mark.parametrize("text, where, words", [case[1:] for case in TABLE_ERRORS], ids=[c[0] for c in TABLE_ERRORS])
def test_bad_tables_are_refused(tmp_path, rules, text, where, words):
    path = write(tmp_path, "v.csv", text)
    with pytest.raises(PitfallsInputError) as caught:
        read_velocity_file(path, rules)
    assert caught.value.where == where and caught.value.fix
    for word in words:
        assert word in str(caught.value)


def test_missing_file(tmp_path, rules):
    for name in ("none.yaml", "none.csv"):
        with pytest.raises(PitfallsInputError, match="not found"):
            read_velocity_file(str(tmp_path / name), rules)


@FUZZ
@given(raw=st.binary(max_size=200), name=st.sampled_from(["v.yaml", "v.csv"]))
def test_any_bytes_give_a_model_or_the_user_error(tmp_path, rules, raw, name):
    try:
        model = read_velocity_file(write(tmp_path, name, raw), rules)
    except PitfallsInputError as error:
        assert error.fix
    else:
        assert model.water_velocity_m_s > 0 and model.describe()
