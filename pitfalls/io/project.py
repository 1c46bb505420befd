"""Reading a project file: many sections, their pick files and geometry options, shared rules.

```yaml
rules: rules.yaml                 # optional, shared by every section
sections:
  - section: lines/L1.sgy         # paths are relative to the project file
    picks: [picks/L1.csv]
  - section: survey.sgy
    picks: [picks/top.csv, picks/gwc.csv]
    iline_byte: 9                 # optional, as the scan options
    xline_byte: 21
    velocity: velocity.yaml       # optional
  - section: lines/L2.sgy
    2d: true                      # optional: read the file as a line in trace order
```

The file is read with the one safe YAML loader (``pitfalls.io.yaml_safe``: no anchors,
aliases or repeated keys). Every path is taken relative to the folder of the project file (an absolute path stays as
it is). Each problem is one :class:`~pitfalls.errors.PitfallsInputError` naming the project
file and the entry (``sections[3].picks[1]``): an unknown or missing key, a wrong type, a
byte outside the trace header, byte options together with ``2d``, the same section listed
twice, or a named file that does not exist. A file that exists but cannot be read as SEG-Y is
not an error here: the project run reports that section as failed and goes on.
"""
from __future__ import annotations

import difflib
import os
from dataclasses import dataclass
from typing import Any

from pitfalls.errors import PitfallsInputError
from pitfalls.io.yaml_safe import read_yaml

TOP_KEYS = ("rules", "sections")
SECTION_KEYS = ("section", "picks", "iline_byte", "xline_byte", "2d", "velocity")


@dataclass(frozen=True)
class ProjectSection:
    """One section of a project, its paths resolved against the project file's folder."""

    label: str
    """The section path as written in the project file (how reports name the section)."""
    path: str
    """The section path to open."""
    pick_paths: tuple[str, ...] = ()
    iline_byte: int | None = None
    xline_byte: int | None = None
    force_2d: bool = False
    velocity_path: str | None = None


@dataclass(frozen=True)
class Project:
    """A project file as read: the shared rules file (or None for the defaults) and the sections."""

    path: str
    rules_path: str | None
    sections: tuple[ProjectSection, ...]


def _read_document(path: str) -> Any:
    _, document = read_yaml(path, what="project file")
    return document


def _unknown(path: str, where: str, key: Any, allowed: tuple[str, ...]) -> PitfallsInputError:
    close = difflib.get_close_matches(str(key), allowed, n=1, cutoff=0.6)
    hint = f"did you mean '{close[0]}'?" if close else "allowed keys are " + ", ".join(allowed)
    return PitfallsInputError(path, where, f"unknown key {key!r}", hint)


def _file(project_path: str, folder: str, where: str, value: Any, what: str) -> tuple[str, str]:
    """(as written, resolved path) of a file entry, which must exist."""
    if not isinstance(value, str) or not value.strip():
        raise PitfallsInputError(project_path, where, f"must be the path of the {what} as text",
                                 f"write the {what} path relative to the project file")
    resolved = value if os.path.isabs(value) else os.path.normpath(os.path.join(folder, value))
    if not os.path.exists(resolved):
        raise PitfallsInputError(project_path, where, f"{what} {value} does not exist (looked for {resolved})",
                                 "paths are relative to the project file's folder; check the name")
    if os.path.isdir(resolved):
        raise PitfallsInputError(project_path, where, f"{value} is a folder, not a {what}", f"name the {what} itself")
    return value, resolved


def _byte(project_path: str, where: str, value: Any) -> int:
    if isinstance(value, bool) or not isinstance(value, int):
        raise PitfallsInputError(project_path, where, f"must be a whole number, not {value!r}",
                                 "give the trace-header byte where the number starts, e.g. 189")
    if not 1 <= value <= 237:
        raise PitfallsInputError(project_path, where, f"byte {value} is outside the 240-byte trace header",
                                 "give a byte position from 1 to 237")
    return value


def read_project(path: str) -> Project:
    """Read and check a project file; see the module docstring.

    Raises
    ------
    PitfallsInputError
        Naming the project file and the entry, for every problem listed above.
    """
    path = str(path)
    document = _read_document(path)
    folder = os.path.dirname(os.path.abspath(path))
    if not isinstance(document, dict):
        raise PitfallsInputError(path, "", "must be a mapping with a `sections:` list",
                                 "start the file with `sections:` and one `- section: FILE` entry per section")
    for key in document:
        if key not in TOP_KEYS:
            raise _unknown(path, "top level", key, TOP_KEYS)
    rules_path = None
    if document.get("rules") is not None:
        _, rules_path = _file(path, folder, "rules", document["rules"], "rules file")
    sections_value = document.get("sections")
    if not isinstance(sections_value, list) or not sections_value:
        raise PitfallsInputError(path, "sections", "must be a list with at least one section",
                                 "write `sections:` and under it `- section: FILE` for each section")
    sections: list[ProjectSection] = []
    seen: dict[str, int] = {}
    for number, entry in enumerate(sections_value):
        where = f"sections[{number}]"
        if not isinstance(entry, dict):
            raise PitfallsInputError(path, where, "must be a mapping such as `- section: FILE`",
                                     "give each section as `- section: FILE` with its options indented below")
        for key in entry:
            if key not in SECTION_KEYS:
                raise _unknown(path, where, key, SECTION_KEYS)
        if "section" not in entry:
            raise PitfallsInputError(path, where, "has no `section:` key", "name the SEG-Y file with `section: FILE`")
        label, resolved = _file(path, folder, f"{where}.section", entry["section"], "SEG-Y section")
        key = os.path.realpath(resolved)
        if key in seen:
            raise PitfallsInputError(path, where, f"{label} is already sections[{seen[key]}]",
                                     "list each section once; give all its pick files in one `picks:` list")
        seen[key] = number
        picks_value = entry.get("picks", [])
        if isinstance(picks_value, str):
            picks_value = [picks_value]
        if picks_value is None:
            picks_value = []
        if not isinstance(picks_value, list):
            raise PitfallsInputError(path, f"{where}.picks", "must be a list of pick files",
                                     "write `picks: [a.csv, b.csv]`")
        pick_paths = tuple(_file(path, folder, f"{where}.picks[{index}]", value, "pick file")[1]
                           for index, value in enumerate(picks_value))
        iline = _byte(path, f"{where}.iline_byte", entry["iline_byte"]) if entry.get("iline_byte") is not None else None
        xline = _byte(path, f"{where}.xline_byte", entry["xline_byte"]) if entry.get("xline_byte") is not None else None
        force_2d = entry.get("2d", False)
        if not isinstance(force_2d, bool):
            raise PitfallsInputError(path, f"{where}.2d", f"must be true or false, not {force_2d!r}", "write `2d: true`")
        if force_2d and (iline is not None or xline is not None):
            raise PitfallsInputError(path, where, "`2d: true` cannot be combined with iline_byte/xline_byte",
                                     "use `2d` for a line, or the byte options for a 3-D volume")
        velocity = None
        if entry.get("velocity") is not None:
            _, velocity = _file(path, folder, f"{where}.velocity", entry["velocity"], "velocity file")
        sections.append(ProjectSection(label=label, path=resolved, pick_paths=pick_paths, iline_byte=iline,
                                       xline_byte=xline, force_2d=force_2d, velocity_path=velocity))
    return Project(path=path, rules_path=rules_path, sections=tuple(sections))
