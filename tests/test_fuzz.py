"""Bounded fuzzing: any pick file, rules or project YAML, or damaged SEG-Y header gives a result or
the one-line user error (PitfallsInputError), never another exception and never a hang.

Small seeded runs with a per-case deadline; ``benchmarks/fuzz.py`` runs the same families at
full size through the whole command line and prints the outcome counts.
"""
import hashlib
import os
import tempfile

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fuzz_cases import HEADER_FIELDS, INTERESTING, N_TRACES, damaged, valid_line
from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import read_pick_file
from pitfalls.io.project import read_project
from pitfalls.io.rules import load_rules
from pitfalls.io.segy import SeismicFile
from pitfalls import detectors

FUZZ = settings(max_examples=40, deadline=5000, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

_FOLDER = tempfile.mkdtemp(prefix="pitfalls-fuzz-")
_ORIGINAL = valid_line(os.path.join(_FOLDER, "valid.sgy"))


def _write(name: str, content: bytes | str) -> str:
    path = os.path.join(_FOLDER, name)
    with open(path, "wb") as handle:
        handle.write(content.encode("utf-8", "surrogatepass") if isinstance(content, str) else content)
    return path


def _digest(path: str) -> str:
    with open(path, "rb") as handle:
        return hashlib.sha256(handle.read()).hexdigest()


def _refused_cleanly(error: PitfallsInputError, path: str) -> None:
    line = error.one_line()
    assert "\n" not in line and len(line) < 2000
    assert error.path


cells = st.sampled_from(["H1", "H2", "", "NaN", "-999.25", "1", "24", "0", "-5", "1e308", "inf", "abc", "1.5",
                         "400", "2.4", '"', "seafloor", "contact", ";", " ", "\t", "ö"])
headers = st.sampled_from(["horizon,trace,twt_ms", "horizon,trace,twt_ms,kind", "horizon,inline,xline,twt_ms",
                           "horizon,trace,twt_s", "trace,twt_ms", "horizon;trace;twt_ms", "", "x,y,z"])


@FUZZ
@given(header=headers, rows=st.lists(st.lists(cells, min_size=0, max_size=5), max_size=12))
def test_pick_files_give_picks_or_one_line_error(header, rows):
    path = _write("picks.csv", header + "\n" + "".join(",".join(row) + "\n" for row in rows))
    before = _digest(path)
    try:
        read_pick_file(path)
    except PitfallsInputError as error:
        _refused_cleanly(error, path)
    assert _digest(path) == before


@FUZZ
@given(raw=st.binary(max_size=300))
def test_pick_file_bytes_give_picks_or_one_line_error(raw):
    path = _write("raw.csv", raw)
    try:
        read_pick_file(path)
    except PitfallsInputError as error:
        _refused_cleanly(error, path)


yaml_atoms = st.sampled_from(["velocity:", "seafloor:", "  snap_ms: 2", "  snap_ms: 3", "&a", "*a", "<<: *a",
                              "  water_velocity_m_s: 1500", "- 1", "[", "{", "'x'", "!!int 3", "? a", "ranking:",
                              "  weight_severity: 0", "sections:", "  - section: a.sgy", "rules: r.yaml", "\t"])


@FUZZ
@given(lines=st.lists(yaml_atoms, max_size=10))
def test_rules_yaml_gives_rules_or_one_line_error(lines):
    path = _write("rules.yaml", "\n".join(lines) + "\n")
    try:
        load_rules(path, detectors.rule_keys())
    except PitfallsInputError as error:
        _refused_cleanly(error, path)


@FUZZ
@given(lines=st.lists(yaml_atoms | st.sampled_from(["    picks: [p.csv]", "    iline_byte: 9", "    velocity: v.yaml",
                                                     "  - section: valid.sgy", "    picks: []"]), max_size=10))
def test_project_yaml_gives_a_project_or_one_line_error(lines):
    path = _write("project.yaml", "\n".join(lines) + "\n")
    try:
        read_project(path)
    except PitfallsInputError as error:
        _refused_cleanly(error, path)


@FUZZ
@given(field=st.integers(0, len(HEADER_FIELDS) - 1),
       value=st.sampled_from(INTERESTING) | st.integers(0, 2**32 - 1),
       cut=st.none() | st.integers(0, len(_ORIGINAL)))
def test_damaged_segy_headers_read_or_give_one_line_error(field, value, cut):
    path = _write("damaged.sgy", damaged(_ORIGINAL, field, value, cut))
    before = _digest(path)
    try:
        with SeismicFile(path, 12.5) as seismic:
            info = seismic.info
            assert info.n_traces >= 2 and info.n_samples >= 2 and info.dt_ms > 0
            for first in range(0, seismic.n_panels, 8):
                block = seismic.read_block(first, min(seismic.n_panels, first + 8))
                for panel in block.panels:
                    assert panel.data.shape[1] == info.n_samples
                    assert panel.data.shape[0] <= max(N_TRACES, info.n_xlines)
    except PitfallsInputError as error:
        _refused_cleanly(error, path)
    assert _digest(path) == before


@pytest.mark.parametrize("field", range(len(HEADER_FIELDS)), ids=[name for name, _, _ in HEADER_FIELDS])
def test_each_header_field_at_its_extremes(field):
    """The edge values of every field, without hypothesis: read, or one line."""
    for value in (0, 1, 2**15, 2**16 - 1):
        path = _write("edge.sgy", damaged(_ORIGINAL, field, value))
        try:
            with SeismicFile(path, 12.5) as seismic:
                seismic.read_block(0, 1)
        except PitfallsInputError as error:
            _refused_cleanly(error, path)
