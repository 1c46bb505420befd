"""`pitfalls describe` from the command line: one JSON document valid against its schema, the
other formats, the output file, and one-line errors with exit code 2."""
from __future__ import annotations

import json
import os

import numpy as np
import pytest

from segy_files import write_segy
from test_cli import assert_one_line_error, pitfalls, read_bytes, write_picks
from test_describe import N_TRACES, background, bound, section_of

SCHEMA_PATH = os.path.join(os.path.dirname(__file__), "..", "pitfalls", "data", "description.schema.json")


@pytest.fixture
def files(tmp_path):
    base = np.full(N_TRACES, 800.0)
    section = section_of(bound(background(), base))
    segy = write_segy(tmp_path / "unit.sgy", section.data, dt_us=4000)
    rows = [f"SF,{t},200.0,seafloor" for t in range(1, N_TRACES + 1)]
    rows += [f"top,{t},400.0,horizon" for t in range(1, N_TRACES + 1)]
    rows += [f"base,{t},800.0,horizon" for t in range(1, N_TRACES + 1)]
    return segy, write_picks(tmp_path / "picks.csv", rows)


def test_json_is_one_document_valid_against_the_schema(files):
    jsonschema = pytest.importorskip("jsonschema")
    segy, picks = files
    result = pitfalls("describe", segy, "--picks", picks, "--format", "json")
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    with open(SCHEMA_PATH) as handle:
        jsonschema.validate(document, json.load(handle))
    assert document["schema"] == "pitfalls-description/1"
    assert [(i["top"], i["base"]) for i in document["intervals"]] == [("SF", "top"), ("top", "base")]
    assert document["intervals"][1]["configuration"]["class"] == "parallel"
    assert document["intervals"][1]["traces"] == [1, N_TRACES]
    assert document["caution"]
    assert document["rules"]["path"] == "built-in defaults" and len(document["rules"]["sha256"]) == 64


def test_markdown_and_terminal(files, tmp_path):
    segy, picks = files
    markdown = pitfalls("describe", segy, "--picks", picks, "--format", "markdown")
    assert markdown.returncode == 0, markdown.stderr
    assert "### top to base (tr 1-200)" in markdown.stdout and "parallel" in markdown.stdout
    assert "does not replace review" in markdown.stdout
    terminal = pitfalls("describe", segy, "--picks", picks)
    assert terminal.returncode == 0 and "Intervals" in terminal.stdout and "top to base" in terminal.stdout


def test_output_file_is_written_and_inputs_untouched(files, tmp_path):
    segy, picks = files
    before = read_bytes(segy), read_bytes(picks)
    target = tmp_path / "description.json"
    result = pitfalls("describe", segy, "--picks", picks, "--format", "json", "--output", target)
    assert result.returncode == 0 and result.stdout == ""
    assert json.loads(target.read_text())["schema"] == "pitfalls-description/1"
    assert (read_bytes(segy), read_bytes(picks)) == before


def test_bad_input_is_one_line_with_exit_2(files, tmp_path):
    segy, picks = files
    assert_one_line_error(pitfalls("describe", segy), "--picks")
    bad = write_picks(tmp_path / "bad.csv", ["top,999,400.0,horizon"])
    assert_one_line_error(pitfalls("describe", segy, "--picks", bad), "bad.csv")
    assert_one_line_error(pitfalls("describe", segy, "--picks", picks, "--output", picks), "input")


def test_volume_is_described_over_all_inlines(tmp_path):
    """Three inlines of the parallel-layer panel as a 3-D volume: one interval entry over inlines 1-3
    and crosslines 1-200, parallel, stretches named by inline."""
    jsonschema = pytest.importorskip("jsonschema")
    base = np.full(N_TRACES, 800.0)
    panel = section_of(bound(background(), base)).data
    data = np.concatenate([panel, panel, panel])
    inlines = np.repeat([1, 2, 3], N_TRACES)
    xlines = np.tile(np.arange(1, N_TRACES + 1), 3)
    segy = write_segy(tmp_path / "cube.sgy", data, dt_us=4000, inlines=inlines, xlines=xlines,
                      cdp_x=500000.0 + 12.5 * (xlines - 1), cdp_y=6000000.0 + 12.5 * (inlines - 1))
    rows = [f"{name},{il},{xl},{twt},{kind}" for name, twt, kind in (("SF", 200.0, "seafloor"), ("top", 400.0, "horizon"),
                                                                      ("base", 800.0, "horizon"))
            for il in (1, 2, 3) for xl in range(1, N_TRACES + 1)]
    picks = write_picks(tmp_path / "cube_picks.csv", rows, header="horizon,inline,xline,twt_ms,kind")
    result = pitfalls("describe", segy, "--picks", picks, "--format", "json")
    assert result.returncode == 0, result.stderr
    document = json.loads(result.stdout)
    with open(SCHEMA_PATH) as handle:
        jsonschema.validate(document, json.load(handle))
    unit = document["intervals"][1]
    assert document["section"]["geometry"] == "3d"
    assert unit["inlines"] == [1, 3] and unit["xlines"] == [1, N_TRACES] and unit["traces"] is None
    assert unit["configuration"]["class"] == "parallel"
    assert {stretch["inline"] for stretch in unit["configuration"]["stretches"]} == {1, 2, 3}
