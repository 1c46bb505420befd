"""The rules loader: defaults merged with a user file, every key checked (CONTRACT.md "Rules file")."""
from __future__ import annotations

import copy
import hashlib
import math
import pathlib

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pitfalls.errors import PitfallsInputError
from pitfalls.io.rules import BUILT_IN, CORE_KEYS, default_rules_bytes, load_rules, render_rules

REPOSITORY_DEFAULTS = pathlib.Path(__file__).resolve().parents[2] / "rules" / "default.yaml"

FAKE_KEYS = {"fake": {"window_ms": (float, 0.0, 100.0), "orders": (int, 2, 10), "enabled": (bool, None, None)}}
FAKE_DEFAULTS = {"window_ms": 24.0, "orders": 3, "enabled": True}
FUZZ = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def core_defaults() -> dict:
    """The core sections of the shipped rules/default.yaml."""
    shipped = yaml.safe_load(default_rules_bytes().decode("utf-8"))
    return {section: shipped[section] for section in CORE_KEYS}


@pytest.fixture
def defaults(tmp_path):
    """A defaults file at <tmp>/rules/default.yaml: the shipped core sections plus the fake detector's."""
    folder = tmp_path / "rules"
    folder.mkdir()
    path = folder / "default.yaml"
    path.write_text(yaml.safe_dump({**core_defaults(), "fake": FAKE_DEFAULTS}, sort_keys=False), encoding="utf-8")
    return path


def user_file(tmp_path, text: str | bytes, name: str = "mine.yaml") -> str:
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return str(path)


def refused(path, defaults, keys=FAKE_KEYS) -> PitfallsInputError:
    with pytest.raises(PitfallsInputError) as caught:
        load_rules(path, keys, defaults_path=defaults)
    return caught.value


# --- the shipped defaults ---------------------------------------------------------------
def test_packaged_defaults_are_byte_identical_to_the_repository_copy():
    """Users read and copy rules/default.yaml; the scan uses the packaged file: they must not drift apart."""
    assert default_rules_bytes() == REPOSITORY_DEFAULTS.read_bytes(), \
        "copy rules/default.yaml over pitfalls/data/default_rules.yaml (edit both together)"


def test_core_keys_describe_exactly_the_core_sections_of_the_shipped_defaults():
    shipped = core_defaults()
    for section, keys in CORE_KEYS.items():
        assert list(shipped[section]) == list(keys), section
        for key, (kind, minimum, maximum) in keys.items():
            value = shipped[section][key]
            assert isinstance(value, kind) and not isinstance(value, bool), f"{section}.{key}"
            assert minimum <= value <= maximum, f"{section}.{key}"


def test_shipped_defaults_load_with_the_registered_detectors():
    from pitfalls import detectors
    rules, used, digest = load_rules(None, detectors.rule_keys())
    assert used == BUILT_IN == "built-in defaults"  # never a path inside the installation
    assert digest == hashlib.sha256(default_rules_bytes()).hexdigest()
    assert set(rules) == set(CORE_KEYS) | set(detectors.BY_NAME) | {m.NAME for m in detectors.PROJECT_CHECKS}


# --- merging ----------------------------------------------------------------------------
def test_no_user_file_gives_the_defaults_with_their_path_and_hash(defaults):
    rules, used, digest = load_rules(None, FAKE_KEYS, defaults_path=defaults)
    assert used == str(defaults)
    assert digest == hashlib.sha256(defaults.read_bytes()).hexdigest()
    assert rules == {**core_defaults(), "fake": FAKE_DEFAULTS}
    assert list(rules) == ["velocity", "section", "seafloor", "ranking", "maps", "describe", "fake"]


def test_user_file_overrides_a_subset_and_reports_its_own_path_and_hash(tmp_path, defaults):
    path = user_file(tmp_path, "fake:\n  orders: 5\nseafloor:\n  snap_ms: 4\n")
    rules, used, digest = load_rules(path, FAKE_KEYS, defaults_path=defaults)
    assert used == path
    assert digest == hashlib.sha256((tmp_path / "mine.yaml").read_bytes()).hexdigest()
    assert rules["fake"] == {"window_ms": 24.0, "orders": 5, "enabled": True}
    assert rules["seafloor"]["snap_ms"] == 4.0 and type(rules["seafloor"]["snap_ms"]) is float
    expected = core_defaults()
    expected["seafloor"]["snap_ms"] = 4.0
    assert {section: rules[section] for section in CORE_KEYS} == expected


def test_whole_numbers_are_floats_where_floats_are_expected(tmp_path, defaults):
    rules, _, _ = load_rules(user_file(tmp_path, "fake:\n  window_ms: 5\n"), FAKE_KEYS, defaults_path=defaults)
    assert rules["fake"]["window_ms"] == 5.0 and type(rules["fake"]["window_ms"]) is float
    assert type(rules["fake"]["orders"]) is int


@pytest.mark.parametrize("text", ["", "# nothing to change\n", "fake:\n", "fake: {}\n"])
def test_empty_user_files_and_sections_change_nothing(tmp_path, defaults, text):
    rules, _, _ = load_rules(user_file(tmp_path, text), FAKE_KEYS, defaults_path=defaults)
    assert rules == load_rules(None, FAKE_KEYS, defaults_path=defaults)[0]


def test_each_call_returns_a_fresh_dict_and_leaves_the_defaults_file_alone(tmp_path, defaults):
    before = defaults.read_bytes()
    first, _, _ = load_rules(None, FAKE_KEYS, defaults_path=defaults)
    pristine = copy.deepcopy(first)
    first["fake"]["orders"] = 9
    first["velocity"].clear()
    load_rules(user_file(tmp_path, "fake:\n  orders: 7\n"), FAKE_KEYS, defaults_path=defaults)
    second, _, _ = load_rules(None, FAKE_KEYS, defaults_path=defaults)
    assert second == pristine
    assert defaults.read_bytes() == before


def test_render_rules_gives_yaml_that_loads_back_in_the_same_order(tmp_path, defaults):
    rules, _, _ = load_rules(user_file(tmp_path, "fake:\n  enabled: false\n"), FAKE_KEYS, defaults_path=defaults)
    text = render_rules(rules)
    again = yaml.safe_load(text)
    assert again == rules
    assert list(again) == list(rules) and list(again["velocity"]) == list(rules["velocity"])
    assert "enabled: false" in text
    assert load_rules(user_file(tmp_path, text, "rendered.yaml"), FAKE_KEYS, defaults_path=defaults)[0] == rules


# --- refusals ---------------------------------------------------------------------------
USER_ERRORS = [
    # (id, user file text, where, words the message must hold)
    ("not yaml", "fake:\n  orders: 3\n  window_ms [1\n", "line 4", ["not valid YAML", "indentation"]),
    ("bad indentation", "fake:\n  orders: 3\n window_ms: 2\n", "line 3", ["not valid YAML"]),
    ("control character", "fake:\n  orders: \x07\n", "line 2", ["not valid YAML", "control characters"]),
    ("bad tag", "fake:\n  orders: !!int many\n", "", ["not valid YAML", "!! tags"]),
    ("top level list", "- fake\n- orders\n", "", ["a list", "sections"]),
    ("top level text", "just words\n", "", ["text", "sections"]),
    ("unknown section", "fakes:\n  orders: 3\n", "fakes", ["unknown section 'fakes'", "did you mean 'fake'"]),
    ("key at top level", "snap_ms: 3\n", "snap_ms", ["unknown section", "seafloor.snap_ms"]),
    ("unknown key", "fake:\n  order: 3\n", "fake.order", ["unknown key", "did you mean fake.orders"]),
    ("key in wrong section", "velocity:\n  snap_ms: 3\n", "velocity.snap_ms",
     ["unknown key", "another section: seafloor.snap_ms"]),
    ("no close key", "fake:\n  zzz: 3\n", "fake.zzz", ["valid keys in fake are window_ms, orders, enabled"]),
    ("number key", "fake:\n  12: 3\n", "fake.12", ["unknown key"]),
    ("section not mapping", "fake: 3\n", "fake", ["not a section", "indent"]),
    ("text for float", "fake:\n  window_ms: '12'\n", "fake.window_ms", ["'12' (text)", "must be a number", "remove the quotes around 12"]),
    ("bool for float", "fake:\n  window_ms: true\n", "fake.window_ms", ["true", "must be a number"]),
    ("bool for int", "fake:\n  orders: yes\n", "fake.orders", ["true/false", "must be a whole number"]),
    ("float for int", "fake:\n  orders: 3.5\n", "fake.orders", ["3.5", "must be a whole number", "from 2 to 10"]),
    ("int for bool", "fake:\n  enabled: 1\n", "fake.enabled", ["must be true or false"]),
    ("text for bool", "fake:\n  enabled: 'on'\n", "fake.enabled", ["must be true or false"]),
    ("no value", "fake:\n  window_ms:\n", "fake.window_ms", ["has no value", "number"]),
    ("list value", "fake:\n  window_ms: [1, 2]\n", "fake.window_ms", ["a list"]),
    ("below range", "fake:\n  orders: 1\n", "fake.orders", ["outside the allowed range from 2 to 10"]),
    ("above range", "fake:\n  window_ms: 100.5\n", "fake.window_ms", ["100.5", "from 0 to 100"]),
    ("huge number", "fake:\n  window_ms: 1.0e+999\n", "fake.window_ms", ["not a finite number"]),
    ("exponent without point", "fake:\n  window_ms: 5e1\n", "fake.window_ms",
     ["YAML reads 5e1 as text", "1.0e+3"]),
    ("not a number", "fake:\n  window_ms: .nan\n", "fake.window_ms", ["not a finite number"]),
    ("core range", "velocity:\n  water_velocity_m_s: 2000\n", "velocity.water_velocity_m_s",
     ["2000", "from 1400 to 1600"]),
    ("all weights zero", "ranking:\n  weight_severity: 0\n  weight_confidence: 0\n  weight_extent: 0\n",
     "ranking", ["all ranking weights are zero", "above 0"]),
]


@pytest.mark.parametrize("text, where, words", [case[1:] for case in USER_ERRORS],
                         ids=[case[0] for case in USER_ERRORS])
def test_bad_user_files_are_refused_naming_file_key_and_fix(tmp_path, defaults, text, where, words):
    path = user_file(tmp_path, text)
    error = refused(path, defaults)
    message = str(error)
    assert error.where == where
    assert message.startswith(path + (f", {where}:" if where else ":"))
    assert error.fix, "every refusal says what to fix"
    for word in words:
        assert word in message


def test_missing_user_file_is_refused(tmp_path, defaults):
    error = refused(str(tmp_path / "absent.yaml"), defaults)
    assert "absent.yaml" in str(error) and "not found" in str(error) and "check the path" in str(error)


def test_folder_as_user_file_is_refused(tmp_path, defaults):
    assert "folder" in str(refused(str(tmp_path), defaults))


def test_non_utf8_user_file_names_the_line(tmp_path, defaults):
    error = refused(user_file(tmp_path, "fake:\n  # r\xe9glage\n".encode("latin-1")), defaults)
    assert error.where == "line 2" and "UTF-8" in str(error) and "mine.yaml" in str(error)


DEFAULT_ERRORS = [
    ("not yaml", "velocity: [\n", "line 2", ["not valid YAML"]),
    ("empty", "", "", ["empty"]),
    ("missing key", None, "fake.enabled", ["missing from the defaults"]),
    ("unknown section", "extra", "extra", ["unknown section 'extra'"]),
    ("bad value", "bad", "fake.orders", ["outside the allowed range"]),
]


@pytest.mark.parametrize("case, where, words", [case[1:] for case in DEFAULT_ERRORS],
                         ids=[case[0] for case in DEFAULT_ERRORS])
def test_broken_defaults_are_refused_naming_rules_default_yaml(tmp_path, defaults, case, where, words):
    document = {**core_defaults(), "fake": dict(FAKE_DEFAULTS)}
    if case is None:
        del document["fake"]["enabled"]
    elif case == "extra":
        document["extra"] = {"a": 1}
    elif case == "bad":
        document["fake"]["orders"] = 11
    text = case if case not in (None, "extra", "bad") else yaml.safe_dump(document, sort_keys=False)
    defaults.write_text(text, encoding="utf-8")
    error = refused(None, defaults)
    message = str(error)
    assert "rules/default.yaml" in message.replace("\\", "/")
    assert error.where == where
    assert "reinstall pitfalls" in message
    for word in words:
        assert word in message


def test_a_detector_missing_from_the_defaults_is_refused(defaults):
    keys = {**FAKE_KEYS, "other": {"gain": (float, 0.0, 1.0)}}
    error = refused(None, defaults, keys)
    assert error.where == "other.gain" and "missing from the defaults" in str(error)


def test_a_broken_default_is_reported_before_a_user_file_is_read(tmp_path, defaults):
    defaults.write_text("velocity: [\n", encoding="utf-8")
    error = refused(str(tmp_path / "absent.yaml"), defaults)
    assert str(defaults) in str(error)


# --- properties -------------------------------------------------------------------------
@FUZZ
@given(text=st.text(max_size=200))
def test_any_text_loads_or_is_refused_cleanly(tmp_path, defaults, text):
    path = user_file(tmp_path, text)
    try:
        rules, _, _ = load_rules(path, FAKE_KEYS, defaults_path=defaults)
    except PitfallsInputError as error:
        assert error.path == path and error.fix
    else:
        assert set(rules) == set(CORE_KEYS) | set(FAKE_KEYS)


@FUZZ
@given(raw=st.binary(max_size=200))
def test_any_bytes_load_or_are_refused_cleanly(tmp_path, defaults, raw):
    path = user_file(tmp_path, raw)
    try:
        load_rules(path, FAKE_KEYS, defaults_path=defaults)
    except PitfallsInputError as error:
        assert error.path == path


junk_values = (st.none() | st.booleans() | st.integers(-10**6, 10**6) | st.floats(allow_nan=True)
               | st.text(max_size=5) | st.lists(st.integers(), max_size=2))
plausible_values = st.floats(0.0, 3000.0) | st.integers(0, 2000) | st.booleans()
tagged = st.sampled_from(["!!int x", "!!float y", "!!bool maybe", "!!timestamp 2020-13-45", "!!binary '%'",
                          "!!set {1}", "*nowhere", "&a 3", "{a: 1}", "!!float 5"])


def valid_value(spec):
    """Values a key accepts, ints included where floats are expected."""
    kind, minimum, maximum = spec
    if kind is bool:
        return st.booleans()
    whole = st.integers(math.ceil(minimum), math.floor(maximum))
    return whole if kind is int else whole | st.floats(minimum, maximum)


@st.composite
def rules_documents(draw):
    """User rules documents: mostly known sections and keys with plausible values, some spoiled."""
    schema = {**CORE_KEYS, **FAKE_KEYS}
    document = {}
    for section in draw(st.lists(st.sampled_from([*schema, *schema, *schema, "fak", "other"]), max_size=3, unique=True)):
        if draw(st.integers(0, 19)) == 0:
            document[section] = draw(junk_values)
            continue
        known = list(schema.get(section, {"window_ms": None}))
        chosen = draw(st.lists(st.sampled_from(known) | st.sampled_from(["nope", "snap_ms"]), max_size=3, unique=True))
        document[section] = {key: draw(junk_values if draw(st.integers(0, 9)) == 0 else
                                       valid_value(schema[section][key]) if key in schema.get(section, {}) else
                                       plausible_values)
                             for key in chosen}
    return document


@FUZZ
@given(document=rules_documents(), tag=st.none() | st.none() | tagged)
def test_generated_documents_load_within_their_key_ranges_or_are_refused(tmp_path, defaults, document, tag):
    """Whatever a user file holds, the merged rules obey every key's type and range."""
    text = yaml.safe_dump(document, sort_keys=False)
    if tag is not None:
        text += f"fake: {tag}\n"
    try:
        rules, _, _ = load_rules(user_file(tmp_path, text), FAKE_KEYS, defaults_path=defaults)
    except PitfallsInputError as error:
        assert error.fix
    else:
        schema = {**CORE_KEYS, **FAKE_KEYS}
        assert set(rules) == set(schema)
        for section, keys in schema.items():
            assert set(rules[section]) == set(keys)
            for key, (kind, minimum, maximum) in keys.items():
                value = rules[section][key]
                assert type(value) is kind
                if kind is not bool:
                    assert math.isfinite(value) and minimum <= value <= maximum
