"""Reading project files: paths relative to the project file, and one clear error per bad entry."""
import os

import pytest

from pitfalls.errors import PitfallsInputError
from pitfalls.io.project import read_project


@pytest.fixture
def folder(tmp_path):
    (tmp_path / "lines").mkdir()
    for name in ("lines/L1.sgy", "lines/L2.sgy", "picks.csv", "other.csv", "rules.yaml", "velocity.yaml"):
        (tmp_path / name).write_bytes(b"x")
    return tmp_path


def write(folder, text):
    path = folder / "project.yaml"
    path.write_text(text)
    return str(path)


def test_paths_are_relative_to_the_project_file(folder, monkeypatch):
    monkeypatch.chdir("/")
    project = read_project(write(folder, """
rules: rules.yaml
sections:
  - section: lines/L1.sgy
    picks: [picks.csv, other.csv]
  - section: lines/L2.sgy
    picks: picks.csv
    iline_byte: 9
    xline_byte: 21
    velocity: velocity.yaml
"""))
    assert project.rules_path == os.path.join(str(folder), "rules.yaml")
    first, second = project.sections
    assert first.label == "lines/L1.sgy" and first.path == os.path.join(str(folder), "lines", "L1.sgy")
    assert first.pick_paths == (str(folder / "picks.csv"), str(folder / "other.csv"))
    assert (second.iline_byte, second.xline_byte, second.force_2d) == (9, 21, False)
    assert second.velocity_path == str(folder / "velocity.yaml")


@pytest.mark.parametrize("text, where, words", [
    ("- a\n- b\n", "", "sections:"),
    ("sections: []\n", "sections", "at least one"),
    ("section: lines/L1.sgy\n", "top level", "unknown key 'section'"),
    ("sections:\n  - picks: [picks.csv]\n", "sections[0]", "no `section:`"),
    ("sections:\n  - section: lines/L1.sgy\n  - section: lines/L9.sgy\n", "sections[1].section", "does not exist"),
    ("sections:\n  - section: lines/L1.sgy\n    picks: [picks.csv, nothere.csv]\n", "sections[0].picks[1]", "does not exist"),
    ("sections:\n  - section: lines/L1.sgy\n    pick: [picks.csv]\n", "sections[0]", "did you mean 'picks'"),
    ("sections:\n  - section: lines/L1.sgy\n    iline_byte: 300\n", "sections[0].iline_byte", "outside"),
    ("sections:\n  - section: lines/L1.sgy\n    xline_byte: '21'\n", "sections[0].xline_byte", "whole number"),
    ("sections:\n  - section: lines/L1.sgy\n    2d: true\n    iline_byte: 9\n", "sections[0]", "cannot be combined"),
    ("sections:\n  - section: lines/L1.sgy\n  - section: ./lines/L1.sgy\n", "sections[1]", "already sections[0]"),
    ("sections:\n  - section: lines\n", "sections[0].section", "folder"),
    ("rules: none.yaml\nsections:\n  - section: lines/L1.sgy\n", "rules", "does not exist"),
    ("sections:\n  - section: lines/L1.sgy\n   picks: [a]\n", "line 3", "not valid YAML"),
    ("sections:\n  - section: lines/L1.sgy\n    picks: [picks.csv]\n    picks: [other.csv]\n", "line 4", "repeats"),
    ("sections:\n  - &one {section: lines/L1.sgy}\n  - *one\n", "line", "alias"),
])
def test_bad_entries_name_the_entry(folder, text, where, words):
    with pytest.raises(PitfallsInputError) as caught:
        read_project(write(folder, text))
    message = caught.value.one_line()
    assert message.startswith(str(folder / "project.yaml"))
    assert where in message and words in message, message


def test_missing_project_file(tmp_path):
    with pytest.raises(PitfallsInputError, match="project file not found"):
        read_project(str(tmp_path / "none.yaml"))
