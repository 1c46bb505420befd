"""The command line as a hand-over pipeline sees it: exit codes, stdout, stderr, files written."""
import hashlib
import json
import os
import subprocess
import sys

import numpy as np
import pytest

from pitfalls import __version__
from segy_files import write_segy

N_TRACES, N_SAMPLES, DT_MS = 80, 400, 2.0


def pitfalls(*args, cwd=None):
    env = {**os.environ, "COLUMNS": "120"}
    return subprocess.run([sys.executable, "-m", "pitfalls", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=300)


def _wave_train():
    twt = np.arange(N_SAMPLES) * DT_MS
    trace = np.cos(2 * np.pi * 25.0 * (twt - 500.0) / 1000.0) * np.exp(-((twt - 500.0) / 100.0) ** 2)
    trace += 2.0 * np.exp(-((twt - 150.0) / 6.0) ** 2)
    rng = np.random.default_rng(11)
    return np.tile(trace, (N_TRACES, 1)) + 0.02 * rng.standard_normal((N_TRACES, N_SAMPLES))


@pytest.fixture
def line(tmp_path):
    return write_segy(tmp_path / "line.sgy", _wave_train(), dt_us=int(DT_MS * 1000))


def write_picks(path, rows, header="horizon,trace,twt_ms,kind"):
    path.write_text(header + "\n" + "\n".join(rows) + "\n")
    return path


@pytest.fixture
def skipped_picks(tmp_path):
    """H1 skips one cycle (40 ms) on traces 21-40: a high pick.cycle-skip."""
    rows = [f"H1,{t},{500.0 + (40.0 if 21 <= t <= 40 else 0.0)},horizon" for t in range(1, N_TRACES + 1)]
    rows.append("H2,5,-999.25,horizon")
    rows += [f"H2,{t},{460.0}," for t in range(6, 30)]
    return write_picks(tmp_path / "picks.csv", rows)


def sha256(path):
    with open(path, "rb") as handle:
        return hashlib.sha256(handle.read()).hexdigest()


def read_bytes(path):
    with open(path, "rb") as handle:
        return handle.read()


def assert_one_line_error(result, *fragments):
    assert result.returncode == 2, result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("pitfalls: error: ")
    assert "Traceback" not in result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


def test_version():
    result = pitfalls("--version")
    assert result.returncode == 0 and result.stdout.startswith("pitfalls ")


def test_terminal_report_and_exit_code(line, skipped_picks):
    result = pitfalls("scan", line, "--picks", skipped_picks)
    assert result.returncode == 1, result.stderr  # a high finding reaches the default --gate high
    assert "pick.cycle-skip" in result.stdout
    words = " ".join(result.stdout.replace("│", " ").split())
    assert "Caution" in words and "does not replace review of the interpretation by qualified interpreters" in words
    assert result.stderr == ""


def test_gate_off_and_quiet(line, skipped_picks):
    result = pitfalls("scan", line, "--picks", skipped_picks, "--gate", "off", "--quiet")
    assert (result.returncode, result.stdout, result.stderr) == (0, "", "")


@pytest.mark.parametrize("gate, code", [("high", 1), ("medium", 1), ("low", 1), ("off", 0)])
def test_gate_levels(line, skipped_picks, gate, code):
    result = pitfalls("scan", line, "--picks", skipped_picks, "--gate", gate, "--quiet")
    assert (result.returncode, result.stderr) == (code, "")


def test_the_retired_gate_spelling_is_refused_and_help_names_the_gate(line, skipped_picks):
    assert_one_line_error(pitfalls("scan", line, "--picks", skipped_picks, "--fail-on", "never"), "--fail-on")
    assert_one_line_error(pitfalls("scan", line, "--picks", skipped_picks, "--gate", "never"), "never")
    help_text = pitfalls("scan", "--help").stdout
    assert "--gate {high,medium,low,off}" in help_text and "fail-on" not in help_text


def test_rules_are_named_as_typed_or_as_built_in_defaults(line, skipped_picks, tmp_path):
    own = tmp_path / "mine.yaml"
    own.write_text("velocity:\n  water_velocity_m_s: 1480.0\n")
    report = json.loads(pitfalls("scan", line, "--picks", skipped_picks, "--format", "json").stdout)
    assert report["rules"]["path"] == "built-in defaults"
    report = json.loads(pitfalls("scan", "line.sgy", "--picks", "picks.csv", "--rules", "mine.yaml", "--format",
                                 "json", cwd=tmp_path).stdout)
    assert report["rules"]["path"] == "mine.yaml" and report["section"]["path"] == "line.sgy"
    assert str(tmp_path) not in json.dumps(report)


def test_a_scan_without_findings_says_it_is_not_a_clearance(line, tmp_path):
    jsonschema = pytest.importorskip("jsonschema")
    clean = write_picks(tmp_path / "clean.csv", [f"H1,{t},500.0,horizon" for t in range(1, N_TRACES + 1)])
    result = pitfalls("scan", line, "--picks", clean, "--format", "json")
    report = json.loads(result.stdout)
    assert result.returncode == 0 and report["findings"] == []
    with open(os.path.join(os.path.dirname(__file__), "..", "pitfalls", "data", "report.schema.json")) as handle:
        schema = json.load(handle)
    assert "caution" in schema["required"]
    jsonschema.validate(report, schema)
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate({key: value for key, value in report.items() if key != "caution"}, schema)
    caution = report["caution"]
    for words in ("not a clearance", "marine post-stack", "stated velocity function", "1500 m/s",
                  "qualified interpreters"):
        assert words in caution, words
    for fmt in ("terminal", "markdown"):
        text = " ".join(pitfalls("scan", line, "--picks", clean, "--format", fmt).stdout.replace("│", " ").split())
        assert "This is not a clearance" in text and "marine post-stack" in text, fmt


def test_json_is_one_document_valid_against_schema(line, skipped_picks):
    jsonschema = pytest.importorskip("jsonschema")
    result = pitfalls("scan", line, "--picks", skipped_picks, "--format", "json")
    report = json.loads(result.stdout)  # exactly one document: json.loads refuses trailing data
    with open(os.path.join(os.path.dirname(__file__), "..", "pitfalls", "data", "report.schema.json")) as handle:
        jsonschema.validate(report, json.load(handle))
    assert report["schema"] == "pitfalls-report/1"
    assert report["section"]["n_traces"] == N_TRACES and report["section"]["dt_ms"] == DT_MS
    assert report["picks"] == [{"horizon": "H1", "kind": "horizon", "n_points": 80, "n_gaps": 0},
                               {"horizon": "H2", "kind": "horizon", "n_points": 24, "n_gaps": 1}]
    skip = report["findings"][0]
    assert (skip["rank"], skip["id"], skip["horizon"], skip["traces"]) == (1, "pick.cycle-skip", "H1", [21, 40])
    assert report["summary"]["high"] >= 1
    assert [f["rank"] for f in report["findings"]] == list(range(1, len(report["findings"]) + 1))


def test_markdown_and_output_file(line, skipped_picks, tmp_path):
    out = tmp_path / "report.md"
    result = pitfalls("scan", line, "--picks", skipped_picks, "--format", "markdown", "--output", out)
    assert result.returncode == 1 and result.stdout == ""
    text = out.read_text()
    assert text.startswith("# pitfalls scan") and "`pick.cycle-skip`" in text and "## Caution" in text
    assert not [name for name in os.listdir(tmp_path) if name.endswith(".part")]


def test_annotated_picks_keep_every_row_in_order(line, skipped_picks, tmp_path):
    out = tmp_path / "annotated.csv"
    result = pitfalls("scan", line, "--picks", skipped_picks, "--annotated-picks", out, "--gate", "off")
    assert result.returncode == 0, result.stderr
    lines = out.read_text().splitlines()
    assert lines[0] == "horizon,trace,twt_ms,kind,finding_ids,worst_severity,top_rank"
    assert len(lines) == 1 + len(skipped_picks.read_text().splitlines()) - 1
    assert lines[21].startswith("H1,21,540.0,horizon,pick.cycle-skip,high,1")
    assert lines[1].endswith(",,")  # trace 1 of H1 is clean


def test_input_files_are_not_modified(line, skipped_picks):
    before = [sha256(p) for p in (line, skipped_picks)]
    pitfalls("scan", line, "--picks", skipped_picks, "--format", "json")
    after = [sha256(p) for p in (line, skipped_picks)]
    assert before == after


def test_failed_output_leaves_no_file(line, tmp_path):
    bad_picks = write_picks(tmp_path / "bad.csv", ["H1,1,100.0,horizon", "H1,999,100.0,horizon"])
    out = tmp_path / "report.json"
    result = pitfalls("scan", line, "--picks", bad_picks, "--format", "json", "--output", out)
    assert_one_line_error(result, "bad.csv", "row 3", "999")
    assert os.listdir(tmp_path) == sorted(os.listdir(tmp_path)) and not out.exists()
    assert not [name for name in os.listdir(tmp_path) if name.startswith(".pitfalls-")]


def test_only_selects_and_unknown_is_usage_error(line, skipped_picks):
    result = pitfalls("scan", line, "--picks", skipped_picks, "--only", "pick_consistency", "--format", "json")
    assert [d["name"] for d in json.loads(result.stdout)["detectors"]] == ["pick_consistency"]
    assert_one_line_error(pitfalls("scan", line, "--only", "nonesuch"), "nonesuch", "pick_consistency")


def test_rules_command_and_override(tmp_path):
    result = pitfalls("rules")
    assert result.returncode == 0 and "water_velocity_m_s: 1500.0" in result.stdout
    user = tmp_path / "mine.yaml"
    user.write_text("velocity:\n  water_velocity_m_s: 1490\n")
    assert "water_velocity_m_s: 1490" in pitfalls("rules", "--rules", user).stdout


def test_explain():
    listing = pitfalls("explain", "--list")
    assert listing.returncode == 0 and "pick.cycle-skip" in listing.stdout
    one = pitfalls("explain", "pick.polarity-flip")
    assert one.returncode == 0 and "What to check" in one.stdout
    assert_one_line_error(pitfalls("explain", "pick.nonesuch"), "pick.nonesuch", "explain --list")


# --- every bad input: exit 2, one line naming the file and the row/trace/key, no traceback -------------

def test_truncated_segy(line, tmp_path):
    data = read_bytes(line)
    cut = tmp_path / "cut.sgy"
    cut.write_bytes(data[:-300])
    assert_one_line_error(pitfalls("scan", cut), "cut.sgy", f"trace {N_TRACES}", "truncated")


def test_not_segy(tmp_path):
    text = tmp_path / "picks_by_mistake.sgy"
    text.write_text("horizon,trace,twt_ms\n" * 400)
    assert_one_line_error(pitfalls("scan", text), "picks_by_mistake.sgy", "is a text file", "not SEG-Y")


def test_zero_traces(line, tmp_path):
    empty = tmp_path / "empty.sgy"
    empty.write_bytes(read_bytes(line)[:3600])
    assert_one_line_error(pitfalls("scan", empty), "empty.sgy", "no traces")


def test_missing_section(tmp_path):
    assert_one_line_error(pitfalls("scan", tmp_path / "nowhere.sgy"), "nowhere.sgy", "no such file")


@pytest.mark.parametrize("rows, header, fragments", [
    (["H1,81,100.0,horizon"], "horizon,trace,twt_ms,kind", ["row 2", "trace 81", "beyond"]),
    (["H1,1,1.42,horizon", "H1,2,1.43,horizon"], "horizon,trace,twt_ms,kind", ["row 2", "seconds"]),
    (["H1,1,9000,horizon"], "horizon,trace,twt_ms,kind", ["row 2", "outside"]),
    (["1,1,100"], "1,2,300", ["header"]),
    (["H1,1"], "horizon,trace", ["twt_ms"]),
    (["H1,1,100,fault"], "horizon,trace,twt_ms,kind", ["row 2", "fault"]),
    (["H1,1,100", "H1,1,120"], "horizon,trace,twt_ms", ["row 3", "row 2"]),
])
def test_bad_pick_files(line, tmp_path, rows, header, fragments):
    picks = write_picks(tmp_path / "p.csv", rows, header)
    assert_one_line_error(pitfalls("scan", line, "--picks", picks), "p.csv", *fragments)


def test_empty_pick_file(line, tmp_path):
    empty = tmp_path / "empty.csv"
    empty.write_text("")
    assert_one_line_error(pitfalls("scan", line, "--picks", empty), "empty.csv")


def test_three_d_picks_not_in_volume(tmp_path):
    inlines = np.repeat([10, 11, 12], 5)
    xlines = np.tile(np.arange(100, 105), 3)
    volume = write_segy(tmp_path / "cube.sgy", _wave_train()[:15], inlines=inlines, xlines=xlines, dt_us=2000)
    picks = write_picks(tmp_path / "p3.csv", ["H1,10,100,500", "H1,13,100,500"], "horizon,inline,xline,twt_ms")
    assert_one_line_error(pitfalls("scan", volume, "--picks", picks), "p3.csv", "row 3", "inline 13")


@pytest.mark.parametrize("text, fragments", [
    ("velocity:\n  water_speed: 1500\n", ["velocity.water_speed"]),
    ("velocity:\n  water_velocity_m_s: fast\n", ["velocity.water_velocity_m_s"]),
    ("velocity:\n  water_velocity_m_s: -5\n", ["velocity.water_velocity_m_s"]),
    ("velocity: [1, 2\n", ["rules.yaml"]),
])
def test_bad_rules(line, tmp_path, text, fragments):
    rules = tmp_path / "rules.yaml"
    rules.write_text(text)
    assert_one_line_error(pitfalls("scan", line, "--rules", rules), "rules.yaml", *fragments)


def test_two_d_and_byte_options_conflict(line):
    assert_one_line_error(pitfalls("scan", line, "--2d", "--iline-byte", "9"), "--2d")


def test_usage_error_is_one_line():
    assert_one_line_error(pitfalls("scan"), "SECTION")


def test_version_is_answered_before_numpy_scipy_or_rich_load():
    code = ("import sys\nfrom pitfalls.cli import main\nassert main(['--version']) == 0\n"
            "print(sorted(m for m in ('numpy', 'scipy', 'rich', 'segyio') if m in sys.modules))\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.splitlines() == [f"pitfalls {__version__}", "[]"]


def test_jobs_must_be_a_positive_number(line, skipped_picks):
    result = pitfalls("scan", line, "--picks", skipped_picks, "--jobs", "0")
    assert result.returncode == 2 and result.stdout == ""
    assert result.stderr.count("\n") == 1 and "--jobs" in result.stderr and "Traceback" not in result.stderr
