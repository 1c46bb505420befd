"""The one YAML reader: plain documents load as with yaml.safe_load; anchors, aliases, duplicate keys,
deep nesting and oversized files are refused naming the file and line."""
import time

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pitfalls.errors import PitfallsInputError
from pitfalls.io.yaml_safe import MAX_DEPTH, parse_yaml, read_yaml

class _NoDates(yaml.SafeLoader):
    """yaml.safe_load's reading with dates as text, for comparison."""


_NoDates.yaml_implicit_resolvers = {
    first: [(tag, regexp) for tag, regexp in resolvers if not tag.endswith(":timestamp")]
    for first, resolvers in yaml.SafeLoader.yaml_implicit_resolvers.items()}

ALIAS_BOMB = "\n".join(
    ["a: &a [x, x, x, x, x, x, x, x, x]"]
    + [f"{chr(98 + i)}: &{chr(98 + i)} [{', '.join(['*' + chr(97 + i)] * 9)}]" for i in range(8)]
) + "\n"


def write(tmp_path, text, name="file.yaml"):
    path = tmp_path / name
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8"))
    return str(path)


def test_plain_documents_load_as_safe_load_gives_them():
    text = "velocity:\n  water_velocity_m_s: 1500\n  list: [1, 2.5, true, null, text]\nempty:\n"
    assert parse_yaml(text, "f.yaml") == yaml.safe_load(text)


def test_dates_stay_text():
    assert parse_yaml("date: 2026-05-01\n", "f.yaml") == {"date": "2026-05-01"}


def test_exponential_alias_file_is_refused_quickly_naming_the_line(tmp_path):
    assert len(ALIAS_BOMB) < 600
    path = write(tmp_path, ALIAS_BOMB)
    started = time.perf_counter()
    with pytest.raises(PitfallsInputError) as caught:
        read_yaml(path, what="rules file")
    assert time.perf_counter() - started < 5.0
    error = caught.value
    assert error.path == path and error.where == "line 1"
    assert "anchor &a" in error.problem and "not allowed" in error.fix


@pytest.mark.parametrize("text, where, words", [
    ("a: 1\nb: *a\n", "line 2", ["alias *a"]),
    ("a: &x 1\n", "line 1", ["anchor &x"]),
    ("sec:\n  k: 1\n  j: 2\n  k: 3\n", "line 4", ["repeats the key 'k'", "first given on line 2"]),
    ("a: 1\na: 1\n", "line 2", ["repeats the key 'a'"]),
    ("1: x\n1: y\n", "line 2", ["repeats the key 1"]),
    ("[" * (MAX_DEPTH + 1) + "]" * (MAX_DEPTH + 1) + "\n", "line 1", ["nested more than"]),
    ("a: [1\n", "line 2", ["not valid YAML"]),
    ("a: \x07\n", "line 1", ["not valid YAML"]),
    ("a: !!int many\n", "", ["not valid YAML", "tagged value"]),
    ("a: !!python/object:os.system x\n", "line 1", ["not valid YAML"]),
])
def test_refusals_name_the_line_and_a_fix(tmp_path, text, where, words):
    path = write(tmp_path, text)
    with pytest.raises(PitfallsInputError) as caught:
        read_yaml(path, what="velocity file")
    error = caught.value
    assert error.path == path and error.where == where and error.fix
    for word in words:
        assert word in str(error)
    assert "\n" not in error.one_line()


def test_oversized_files_are_refused_unparsed(tmp_path):
    path = write(tmp_path, "a: 1\n" + "#" * 2000 + "\n")
    with pytest.raises(PitfallsInputError, match="larger than 1 KiB"):
        read_yaml(path, what="rules file", max_bytes=1024)


def test_missing_folder_and_non_utf8_files(tmp_path):
    with pytest.raises(PitfallsInputError, match="project file not found"):
        read_yaml(tmp_path / "absent.yaml", what="project file")
    with pytest.raises(PitfallsInputError, match="folder, not a project file"):
        read_yaml(tmp_path, what="project file")
    with pytest.raises(PitfallsInputError, match="not UTF-8") as caught:
        read_yaml(write(tmp_path, b"a: 1\nb: \xff\n"))
    assert caught.value.where == "line 2"


def test_fix_text_can_be_rewritten(tmp_path):
    with pytest.raises(PitfallsInputError, match="restore it: write each value"):
        read_yaml(write(tmp_path, "a: *b\n"), fix=lambda fix: "restore it: " + fix)


@settings(max_examples=150, deadline=2000, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(text=st.text(st.sampled_from("ab:&*[]{}-,\n !#'\"<1."), max_size=120))
def test_any_text_is_a_document_or_one_line_refusal(text):
    """Fuzz over YAML's punctuation: a result or a PitfallsInputError, never another exception."""
    try:
        document = parse_yaml(text, "f.yaml")
    except PitfallsInputError as error:
        assert error.path == "f.yaml" and "\n" not in error.one_line()
    else:
        # What loads is what yaml.safe_load gives, dates kept as text.
        expected = yaml.load(text, Loader=_NoDates)
        assert document == expected
