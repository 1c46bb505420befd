"""Projects on a modelled grid of crossing lines and a small survey: planted mis-ties are found and
explained, a line static is not mistaken for one, and the report is the same however the sections run.

The grid (pitfalls.modelling.grid, invented): east-west lines QV26-101/102 and north-south lines
QV26-201/202 cross at four traces; survey QV26-3D is crossed by 101 and 201. Planted:
- QV26-102: a 12 ms line static (data and every pick later): must not be flagged;
- QV26-201: H2 picked one period (40 ms at 25 Hz) late: a mis-tie on another loop at each of its three ties;
- QV26-202: H1 picked on the first seafloor multiple (2 t_sf): a mis-tie on a multiple, placed on 202.
"""
import copy
import io
import json
import os
import subprocess
import sys

import pytest
from rich.console import Console

from pitfalls import detectors
from pitfalls.errors import PitfallsInputError
from pitfalls.io import scheduler
from pitfalls.io.project import read_project
from pitfalls.io.rules import load_rules
from pitfalls.io.scheduler import LocalRunner
from pitfalls.modelling.grid import GridVolume, grid_lines, write_grid, write_project_file
from pitfalls.project import run_project
from pitfalls.report.project import SCHEMA, render_markdown, render_terminal, report_dict

STATIC, SKIPPED, ON_MULTIPLE = "QV26-102", "QV26-201", "QV26-202"


@pytest.fixture(scope="module")
def grid(tmp_path_factory):
    folder = tmp_path_factory.mktemp("grid")
    lines = grid_lines(2, 2, 41, 25.0)
    written = write_grid(str(folder), lines, [GridVolume("QV26-3D", (300.0, 300.0), 8, 12, 25.0)],
                         static_ms={STATIC: 12.0}, pick_shift_ms={(SKIPPED, "H2"): 40.0},
                         pick_on_multiple=[(ON_MULTIPLE, "H1")])
    return written


@pytest.fixture(scope="module")
def report(grid):
    rules, path, sha = load_rules(None, detectors.rule_keys())
    with LocalRunner(1) as runner:
        result = run_project(read_project(grid.project), rules, path, sha, runner)
    return report_dict(result)


def pitfalls(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "pitfalls", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=600, env={**os.environ, "COLUMNS": "120"})


def misties(report):
    return [f for f in report["findings"] if f["id"] == "pick.mis-tie"]


def pair(finding):
    return {finding["evidence"]["section_a"], finding["evidence"]["section_b"]}


def test_every_crossing_and_survey_stretch_is_tied(report):
    ties = {(t["section_a"], t["section_b"]) for t in report["ties"]}
    assert ties == {("QV26-101.sgy", "QV26-201.sgy"), ("QV26-101.sgy", "QV26-202.sgy"), ("QV26-101.sgy", "QV26-3D.sgy"),
                    ("QV26-102.sgy", "QV26-201.sgy"), ("QV26-102.sgy", "QV26-202.sgy"), ("QV26-201.sgy", "QV26-3D.sgy")}
    for tie in report["ties"]:
        assert tie["seafloor_correlation"] > 0.9
        assert tie["horizons_compared"] == ["H1", "H2", "H3"]
        expected = -12.0 if tie["section_a"] == f"{STATIC}.sgy" else 0.0  # b minus a
        assert tie["seafloor_shift_ms"] == pytest.approx(expected, abs=1.0)
        assert tie["seafloor_phase_deg"] == pytest.approx(0.0, abs=5.0)


def test_a_horizon_picked_a_period_late_is_a_mis_tie_on_another_loop(report):
    """Line 201 mis-ties H2 at all three of its ties, the others only where they meet it: each finding is on 201."""
    found = [f for f in misties(report) if f["horizon"] == "H2"]
    assert len(found) == 3 and all(f"{SKIPPED}.sgy" in pair(f) for f in found)
    for finding in found:
        evidence = finding["evidence"]
        assert finding["severity"] == "high" and finding["section"] == f"{SKIPPED}.sgy"
        side = "a" if evidence["section_a"] == f"{SKIPPED}.sgy" else "b"
        other = "b" if side == "a" else "a"
        assert (evidence[f"misties_{side}"], evidence[f"ties_{side}"]) == (3, 3)
        assert evidence[f"misties_{other}"] == 1 and evidence[f"ties_{other}"] in (2, 3)
        assert evidence["explanation"] == "loop" and abs(evidence["loops"]) == 1
        later = 1 if evidence["section_b"] == f"{SKIPPED}.sgy" else -1  # the late pick is on b: positive residual
        assert evidence["residual_ms"] * later == pytest.approx(40.0, abs=4.0)
        assert evidence["twt_ms_b"] - evidence["twt_ms_a"] == pytest.approx(evidence["horizon_shift_ms"])
        for key in ("cdp_a", "cdp_b", "x_m", "y_m", "twt_ms_a", "twt_ms_b", "seafloor_phase_deg"):
            assert key in evidence


def test_a_pick_on_the_seafloor_multiple_is_named_and_placed_on_its_line(report):
    found = [f for f in misties(report) if f["horizon"] == "H1"]
    assert len(found) == 2
    for finding in found:
        assert finding["section"] == f"{ON_MULTIPLE}.sgy" and finding["severity"] == "high"
        assert finding["evidence"]["explanation"] == "multiple"
        assert finding["evidence"]["multiple"] == "seafloor multiple"
        assert finding["evidence"]["multiple_on"] == f"{ON_MULTIPLE}.sgy"


def test_a_line_static_alone_is_not_a_mis_tie(report):
    """Every mis-tie is explained by a planted mis-pick: none comes from the static line's own picks."""
    assert len(misties(report)) == 5
    for finding in misties(report):
        assert {f"{SKIPPED}.sgy", f"{ON_MULTIPLE}.sgy"} & pair(finding)
        assert not (finding["horizon"] == "H3")


def test_report_layout(report):
    assert report["schema"] == SCHEMA and report["caution"]
    assert [s["path"] for s in report["sections"]] == ["QV26-101.sgy", "QV26-102.sgy", "QV26-201.sgy",
                                                       "QV26-202.sgy", "QV26-3D.sgy"]
    assert all(s["status"] == "ran" and s["error"] is None for s in report["sections"])
    assert [f["rank"] for f in report["findings"]] == list(range(1, len(report["findings"]) + 1))
    assert all(f["section"] in {s["path"] for s in report["sections"]} for f in report["findings"])
    order = [({"high": 0, "medium": 1, "low": 2}[f["severity"]], -f["score"]) for f in report["findings"]]
    assert order == sorted(order)  # severity first, then score
    assert report["summary"]["high"] == sum(f["severity"] == "high" for f in report["findings"])


def test_json_schema(report):
    """The report validates against the shipped JSON Schema (jsonschema as the validator)."""
    jsonschema = pytest.importorskip("jsonschema")
    schema_path = os.path.join(os.path.dirname(__file__), "..", "pitfalls", "data", "project.schema.json")
    with open(schema_path) as handle:
        jsonschema.validate(report, json.load(handle))


def without_timing(report):
    report = copy.deepcopy(report)
    for section in report["sections"]:
        section.pop("seconds")
    return report


def test_two_worker_processes_give_the_same_report(grid, report):
    result = pitfalls("project", grid.project, "--format", "json", "--jobs", "2", "--gate", "off")
    assert result.returncode == 0, result.stderr
    assert without_timing(json.loads(result.stdout)) == without_timing(report)


def test_a_dask_local_cluster_gives_the_same_report(grid, report):
    pytest.importorskip("dask.distributed", reason='the optional Dask extra is not installed (pip install -e ".[dask]")')
    result = pitfalls("project", grid.project, "--format", "json", "--jobs", "2", "--scheduler", "local", "--gate", "off")
    assert result.returncode == 0, result.stderr
    assert without_timing(json.loads(result.stdout)) == without_timing(report)


def test_gate_and_markdown(grid, tmp_path):
    out = tmp_path / "review.md"
    result = pitfalls("project", grid.project, "--format", "markdown", "--output", out, "--jobs", "1")
    assert result.returncode == 1, result.stderr  # high mis-ties reach the default gate
    text = out.read_text()
    assert "## Sections" in text and "## Ties" in text and "pick.mis-tie" in text and "## Caution" in text


def test_a_section_that_fails_to_read_is_reported_and_fails_the_gate(grid, tmp_path):
    folder = os.path.dirname(grid.project)
    (tmp_path / "broken.sgy").write_text("not a seismic file\n" * 300)
    project = write_project_file(str(tmp_path / "project.yaml"), [
        (os.path.join(folder, "QV26-101.sgy"), [os.path.join(folder, "QV26-101_picks.csv")]),
        ("broken.sgy", []),
        (os.path.join(folder, "QV26-201.sgy"), [os.path.join(folder, "QV26-201_picks.csv")]),
    ])
    result = pitfalls("project", project, "--format", "json", "--gate", "off", "--jobs", "1")
    assert result.returncode == 1, result.stderr
    report = json.loads(result.stdout)
    status = {s["path"]: (s["status"], s["error"]) for s in report["sections"]}
    assert status["broken.sgy"][0] == "failed" and "text file" in status["broken.sgy"][1]
    assert status[os.path.join(folder, "QV26-101.sgy")][0] == "ran"
    assert len(report["ties"]) == 1 and len(misties(report)) == 1  # 101 and 201 still tied


def test_bad_project_entries_exit_2_naming_the_entry(tmp_path):
    project = tmp_path / "project.yaml"
    project.write_text("sections:\n  - section: nothere.sgy\n")
    result = pitfalls("project", project)
    assert result.returncode == 2 and result.stdout == ""
    assert "sections[0].section" in result.stderr and "nothere.sgy" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.stderr


def test_an_unreachable_scheduler_is_an_input_error(monkeypatch):
    pytest.importorskip("dask.distributed", reason='the optional Dask extra is not installed (pip install -e ".[dask]")')
    monkeypatch.setattr(scheduler, "CONNECT_TIMEOUT_S", 1)
    with pytest.raises(PitfallsInputError, match="no Dask scheduler answers at tcp://127.0.0.1:9"):
        scheduler.open_runner(1, "tcp://127.0.0.1:9")


def test_jobs_below_one_is_an_input_error():
    with pytest.raises(PitfallsInputError, match="--jobs"):
        scheduler.open_runner(0, None)


def test_markdown_and_terminal_name_the_section_of_every_finding(grid):
    rules, path, sha = load_rules(None, detectors.rule_keys())
    with LocalRunner(1) as runner:
        result = run_project(read_project(grid.project), rules, path, sha, runner)
    text = render_markdown(result)
    for item in result.findings:
        assert f"on {item.section}" in text
    buffer = io.StringIO()
    Console(file=buffer, width=160, color_system=None, force_terminal=False).print(render_terminal(result))
    terminal = buffer.getvalue()
    assert terminal.index("Sections") < terminal.index("Ties") < terminal.index("Findings across the project")
    assert "QV26-3D.sgy IL 103 XL 301" in terminal and "Caution" in terminal
    assert terminal.count("pick.mis-tie") == 5


def test_a_survey_listed_before_a_line_ties_the_same_way(grid, tmp_path):
    """The survey as section a and the late-picked line as b: the same tie, the residual's sign reversed."""
    folder = os.path.dirname(grid.project)
    project = write_project_file(str(tmp_path / "project.yaml"), [
        (os.path.join(folder, "QV26-3D.sgy"), [os.path.join(folder, "QV26-3D_picks.csv")]),
        (os.path.join(folder, f"{SKIPPED}.sgy"), [os.path.join(folder, f"{SKIPPED}_picks.csv")]),
    ])
    rules, path, sha = load_rules(None, detectors.rule_keys())
    with LocalRunner(1) as runner:
        report = report_dict(run_project(read_project(project), rules, path, sha, runner))
    assert len(report["ties"]) == 1
    tie = report["ties"][0]
    assert tie["location_a"] == "IL 103 XL 301" and tie["location_b"] == "tr 16"
    (finding,) = misties(report)
    assert finding["horizon"] == "H2" and finding["evidence"]["residual_ms"] == pytest.approx(40.0, abs=4.0)
    assert finding["evidence"]["explanation"] == "loop" and finding["evidence"]["loops"] == 1


def test_the_caution_states_scope_and_that_no_finding_is_no_clearance(grid, tmp_path):
    """A project whose one line has no picks finds nothing: the report says this is not a clearance."""
    folder = os.path.dirname(grid.project)
    project = write_project_file(str(tmp_path / "project.yaml"), [(os.path.join(folder, "QV26-101.sgy"), [])])
    rules, path, sha = load_rules(None, detectors.rule_keys())
    with LocalRunner(1) as runner:
        result = run_project(read_project(project), rules, path, sha, runner)
    report = report_dict(result)
    assert report["findings"] == []
    assert "does not replace review" in report["caution"] and "marine post-stack" in report["caution"]
    assert "not a clearance" in report["caution"] and "not a clearance" in render_markdown(result)
