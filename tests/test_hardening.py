"""Hostile inputs and hostile paths through the command line: exit 2 with one line, no traceback,
inputs unchanged, nothing overwritten."""
import hashlib
import os
import signal
import subprocess
import sys
import time

import json
import re

import numpy as np
import pytest
import segyio

from segy_files import write_segy

ALIAS_BOMB = "\n".join(
    ["velocity: &a [x, x, x, x, x, x, x, x, x]"]
    + [f"k{i}: &k{i} [{', '.join([('*a' if i == 0 else f'*k{i - 1}')] * 9)}]" for i in range(8)]
) + "\n"


def pitfalls(*args, cwd=None, timeout=120):
    env = {**os.environ, "COLUMNS": "120"}
    return subprocess.run([sys.executable, "-m", "pitfalls", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=timeout)


def sha256(path):
    with open(path, "rb") as handle:
        return hashlib.sha256(handle.read()).hexdigest()


def assert_one_line_error(result, *fragments):
    assert result.returncode == 2, result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("pitfalls: error: ")
    assert "Traceback" not in result.stderr
    for fragment in fragments:
        assert fragment in lines[0], lines[0]


# --- YAML -----------------------------------------------------------------------------
def test_alias_bomb_rules_file_is_refused_by_rules_and_scan(tmp_path):
    bomb = tmp_path / "bomb.yaml"
    bomb.write_text(ALIAS_BOMB)
    before = sha256(bomb)
    assert_one_line_error(pitfalls("rules", "--rules", bomb, timeout=30), str(bomb), "line 1", "anchor &a")
    assert_one_line_error(pitfalls("scan", tmp_path / "absent.sgy", "--rules", bomb, timeout=30), "anchor &a")
    assert sha256(bomb) == before


def test_duplicate_rules_key_is_refused(tmp_path):
    rules = tmp_path / "rules.yaml"
    rules.write_text("seafloor:\n  snap_ms: 2\n  snap_ms: 3\n")
    before = sha256(rules)
    assert_one_line_error(pitfalls("rules", "--rules", rules), "line 3", "repeats the key 'snap_ms'")
    assert sha256(rules) == before


# --- output paths ---------------------------------------------------------------------
@pytest.fixture
def run_files(tmp_path):
    """A tiny valid line, a pick file and a rules file; the checks must refuse before reading them."""
    twt = np.arange(200) * 4.0
    trace = np.exp(-((twt - 200.0) / 10.0) ** 2)
    section = write_segy(tmp_path / "line.sgy", np.tile(trace, (20, 1)))
    picks = tmp_path / "picks.csv"
    picks.write_text("horizon,trace,twt_ms\n" + "".join(f"H1,{t},400\n" for t in range(1, 21)))
    rules = tmp_path / "rules.yaml"
    rules.write_text("seafloor:\n  snap_ms: 2\n")
    return section, picks, rules


def hashes(*paths):
    return {str(p): sha256(p) for p in paths}


@pytest.mark.parametrize("case", ["output is rules", "output is section via ./", "figure is picks via link",
                                  "annotated is picks via hard link"])
def test_output_that_is_an_input_is_refused_before_any_work(tmp_path, run_files, case):
    section, picks, rules = run_files
    before = hashes(section, picks, rules)
    if case == "output is rules":
        args, words = ["--output", rules], ["--output is also the --rules input file"]
    elif case == "output is section via ./":
        args, words = ["--output", f"{tmp_path}/./sub/../line.sgy"], ["--output is also the SECTION input"]
        (tmp_path / "sub").mkdir()
    elif case == "figure is picks via link":
        os.symlink(picks, tmp_path / "link.png")
        args, words = ["--figure", tmp_path / "link.png"], ["--figure is also the --picks input"]
    else:
        os.link(picks, tmp_path / "hard.csv")
        args, words = ["--annotated-picks", tmp_path / "hard.csv"], ["--annotated-picks is also the --picks"]
    result = pitfalls("scan", section, "--picks", picks, "--rules", rules, *args)
    assert_one_line_error(result, *words, "somewhere else")
    assert hashes(section, picks, rules) == before


def test_two_outputs_on_one_path_are_refused(tmp_path, run_files):
    section, picks, _ = run_files
    target = tmp_path / "out.txt"
    result = pitfalls("scan", section, "--picks", picks, "--output", target, "--annotated-picks", f"{tmp_path}/./out.txt")
    assert_one_line_error(result, "--annotated-picks and --output name the same file", "its own path")
    assert not target.exists()


def test_same_pick_file_twice_is_refused(tmp_path, run_files):
    section, picks, _ = run_files
    before = hashes(picks)
    result = pitfalls("scan", section, "--picks", picks, "--picks", f"{tmp_path}/./picks.csv")
    assert_one_line_error(result, "given twice with --picks", "give each file once")
    assert hashes(picks) == before


@pytest.mark.parametrize("case", ["existing folder", "missing parent", "parent is a file", "virtual filesystem",
                                  "read-only filesystem", "name too long", "device"])
def test_impossible_outputs_are_refused_before_the_scan(tmp_path, run_files, case):
    section, picks, _ = run_files
    targets = {
        "existing folder": (tmp_path, "existing folder"),
        "missing parent": (tmp_path / "nowhere" / "r.json", "does not exist"),
        "parent is a file": (tmp_path / "picks.csv" / "r.json", "is a file, not a folder"),
        "virtual filesystem": ("/proc/r.json", "cannot be written in /proc"),
        "read-only filesystem": ("/sys/r.json", "cannot be written in /sys"),
        "name too long": (tmp_path / ("r" * 300 + ".json"), "longer than this folder allows"),
        "device": ("/dev/null", "not a regular file"),
    }
    target, words = targets[case]
    before = hashes(section, picks)
    result = pitfalls("scan", section, "--picks", picks, "--format", "json", "--output", target)
    assert_one_line_error(result, "--output", words)
    assert str(target) in result.stderr
    assert result.stdout == ""
    assert hashes(section, picks) == before
    assert not [name for name in os.listdir(tmp_path) if name.endswith(".part")]


def test_demo_out_naming_an_existing_file_is_refused(tmp_path):
    existing = tmp_path / "notes.txt"
    existing.write_text("keep me\n")
    before = sha256(existing)
    result = pitfalls("demo", "--out", existing)
    assert_one_line_error(result, str(existing), "--out names an existing file, not a folder")
    assert sha256(existing) == before


def test_iline_byte_zero_and_equal_bytes_are_refused(run_files):
    section, picks, _ = run_files
    assert_one_line_error(pitfalls("scan", section, "--iline-byte", "0", "--xline-byte", "193"), "byte 0")
    assert_one_line_error(pitfalls("scan", section, "--iline-byte", "189", "--xline-byte", "189"),
                          "both the inline and the crossline", "--2d")


# --- signals --------------------------------------------------------------------------
@pytest.mark.parametrize("signum, code", [(signal.SIGINT, 130), (signal.SIGTERM, 143)])
def test_signals_stop_cleanly_at_any_moment(tmp_path, run_files, signum, code):
    """Start-up, scan and writing: either the run finishes or it stops with one line, no traceback, no .part file."""
    section, picks, _ = run_files
    out = tmp_path / "out"
    out.mkdir()
    stopped = 0
    for delay in (0.15, 0.3, 0.6, 1.0, 1.5, 2.5):
        process = subprocess.Popen([sys.executable, "-m", "pitfalls", "scan", section, "--picks", picks,
                                    "--format", "json", "--output", out / "r.json",
                                    "--annotated-picks", out / "a.csv"],
                                   stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        time.sleep(delay)
        process.send_signal(signum)
        stdout, stderr = process.communicate(timeout=120)
        if "Traceback" in stderr and f"pitfalls{os.sep}" not in stderr:
            continue  # the signal came while the interpreter itself started, before any of the tool's code
        assert "Traceback" not in stderr, stderr
        assert not [name for name in os.listdir(out) if name.endswith(".part")]
        if process.returncode == code:
            stopped += 1
            assert len(stderr.strip().splitlines()) == 1 and "stopped" in stderr
        elif process.returncode == -signum:
            assert stderr == ""  # killed while the interpreter itself started, before any of the tool's code
        else:
            assert process.returncode in (0, 1), stderr  # it had finished
    assert stopped >= 1


def test_write_whole_leaves_no_temporary_file_when_interrupted(tmp_path):
    from pitfalls.cli import Terminated
    from pitfalls.io.output import write_whole
    target = tmp_path / "r.json"
    target.write_text("old\n")
    for stop in (KeyboardInterrupt, Terminated):
        def write_into(temporary, stop=stop):
            temporary.write_text("half")
            raise stop()
        with pytest.raises(stop):
            write_whole(target, write_into)
        assert os.listdir(tmp_path) == ["r.json"] and target.read_text() == "old\n"


# --- SEG-Y headers and data -----------------------------------------------------------
def _wavy(n_traces=30, n_samples=300, dt_ms=4.0):
    twt = np.arange(n_samples) * dt_ms
    trace = np.exp(-((twt - 300.0) / 8.0) ** 2) - 0.5 * np.exp(-((twt - 700.0) / 8.0) ** 2)
    rng = np.random.default_rng(5)
    return np.tile(trace, (n_traces, 1)) + 0.01 * rng.standard_normal((n_traces, n_samples))


def patched(path, offset, value, size=2, endian="big"):
    """Overwrite one header field of a test copy in place (the copy is the test's own input)."""
    with open(path, "r+b") as handle:
        handle.seek(offset)
        handle.write(int(value).to_bytes(size, endian, signed=value < 0))
    return path


def scan_refused(section, *fragments, extra=()):
    before = sha256(section)
    result = pitfalls("scan", section, *extra)
    assert_one_line_error(result, str(section), *fragments)
    assert sha256(section) == before
    return result


def test_folder_as_section_is_called_a_folder(tmp_path):
    assert_one_line_error(pitfalls("scan", tmp_path), "is a folder, not a SEG-Y file")


def test_binary_sample_count_disagreeing_with_the_traces_is_not_called_truncated(tmp_path):
    section = patched(write_segy(tmp_path / "s.sgy", _wavy()), 3220, 1)
    result = scan_refused(section, "binary header byte 3221", "says 1 samples per trace",
                          "first trace header (byte 115) says 300")
    assert "truncated" not in result.stderr


@pytest.mark.parametrize("interval_us, words", [(1, "1 us, finer than"), (2, "2 us, finer than"),
                                                (100, "resample the section"), (30000, "30000 us, coarser than")])
def test_absurd_sample_intervals_are_refused_before_any_allocation(tmp_path, interval_us, words):
    section = write_segy(tmp_path / "s.sgy", _wavy(), binary_dt_us=interval_us, trace_dt_us=interval_us)
    scan_refused(section, "byte 3217", words)


@pytest.mark.parametrize("n_traces, n_samples, words", [(1, 300, "holds 1 trace"), (30, 1, "says 1 sample per trace")])
def test_one_trace_and_one_sample_sections_are_refused(tmp_path, n_traces, n_samples, words):
    section = write_segy(tmp_path / "s.sgy", _wavy(n_traces, n_samples))
    scan_refused(section, words)


@pytest.mark.parametrize("fill", [np.nan, 0.0, np.inf])
def test_sections_without_live_samples_are_refused(tmp_path, fill):
    section = write_segy(tmp_path / "s.sgy", np.full((30, 300), fill, dtype=np.float32))
    scan_refused(section, "holds no live samples", "all 30 traces")


def test_partly_dead_section_says_how_much_and_checks_only_the_live_traces(tmp_path):
    data = _wavy()
    data[:12] = 0.0
    data[12:15] = np.nan
    data[20, 5] = np.inf
    section = write_segy(tmp_path / "s.sgy", data)
    before = sha256(section)
    result = pitfalls("scan", section, "--format", "json")
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""
    report = json.loads(result.stdout)
    notes = " ".join(report["section"]["notes"])
    assert "15 of 30 traces (50.0%) are dead" in notes and "1 samples in live traces are NaN or infinite" in notes
    assert sha256(section) == before


def test_little_endian_segy_is_read(tmp_path):
    spec = segyio.spec()
    spec.format, spec.samples, spec.tracecount, spec.endian = 5, np.arange(300) * 4.0, 30, "little"
    path = tmp_path / "little.sgy"
    data = _wavy().astype(np.float32)
    with segyio.create(str(path), spec) as out:
        out.bin.update({segyio.BinField.Interval: 4000, segyio.BinField.Samples: 300, segyio.BinField.Format: 5})
        for index in range(30):
            out.header[index] = {segyio.TraceField.TRACE_SAMPLE_COUNT: 300,
                                 segyio.TraceField.TRACE_SAMPLE_INTERVAL: 4000}
            out.trace[index] = data[index]
    with open(path, "rb") as handle:
        assert handle.read(3600)[3224:3226] == b"\x05\x00"  # written little-endian
    before = sha256(path)
    result = pitfalls("scan", path, "--format", "json")
    assert result.returncode == 0, result.stderr
    report = json.loads(result.stdout)
    assert report["section"]["n_samples"] == 300 and report["section"]["dt_ms"] == 4.0
    assert any("little-endian" in note for note in report["section"]["notes"])
    assert sha256(path) == before


def test_mostly_empty_header_grid_is_refused_with_the_share_and_2d(tmp_path):
    n = 40
    section = write_segy(tmp_path / "s.sgy", _wavy(n), inlines=np.arange(1, n + 1), xlines=np.arange(1, n + 1))
    scan_refused(section, "40 x 40 inline/crossline grid for 40 traces", "97.5% of its positions would be empty", "--2d")


@pytest.mark.parametrize("delay_ms", [-100, 100])
def test_sections_starting_before_or_after_time_zero_scan_with_every_detector(tmp_path, delay_ms):
    section = write_segy(tmp_path / "s.sgy", _wavy(), delay_ms=delay_ms)
    picks = tmp_path / "p.csv"
    picks.write_text("horizon,trace,twt_ms\n" + "".join(f"H1,{t},{700 + delay_ms}\n" for t in range(1, 31)))
    result = pitfalls("scan", section, "--picks", picks, "--format", "json", "--gate", "off")
    assert result.returncode == 0, result.stderr
    report = json.loads(result.stdout)
    assert report["section"]["t0_ms"] == delay_ms
    assert [run["status"] for run in report["detectors"]] == ["ran"] * len(report["detectors"])


# --- isolation of the steps after reading ---------------------------------------------
INJECT = """
import sys
import pitfalls.engine as engine
from pitfalls import detectors
from pitfalls.cli import exit_code, main
case = sys.argv.pop(1)
if case == "context":
    def broken_context(*args, **kwargs):
        raise FloatingPointError("seafloor step broke")
    engine.build_context = broken_context
else:
    module = detectors.DETECTORS[0]
    def malformed(*args, **kwargs):
        return [{"id": "not a finding"}] if case == "type" else [engine.Finding(
            id="multiple.seafloor", detector=module.NAME, severity="urgent", confidence=2.0, title="t", advice="a")]
    module.detect = malformed
sys.exit(exit_code(main()))
"""


@pytest.mark.parametrize("case, failed_name, words", [
    ("context", "shared measurements", "FloatingPointError: seafloor step broke"),
    ("type", None, "malformed finding: dict instead of a Finding"),
    ("severity", None, "malformed finding: multiple.seafloor: severity 'urgent'"),
])
def test_failures_after_reading_are_reported_not_raised(tmp_path, run_files, case, failed_name, words):
    section, picks, _ = run_files
    out = tmp_path / "r.json"
    result = subprocess.run([sys.executable, "-c", INJECT, case, "scan", str(section), "--picks", str(picks),
                             "--format", "json", "--output", str(out)], capture_output=True, text=True, timeout=300)
    assert result.returncode == 1, result.stderr
    assert result.stderr == ""
    report = json.loads(out.read_text())
    failed = [run for run in report["detectors"] if run["status"] == "failed"]
    assert len(failed) == 1 and words in failed[0]["message"]
    if failed_name:
        assert failed[0]["name"] == failed_name
    terminal = subprocess.run([sys.executable, "-c", INJECT, case, "scan", str(section), "--picks", str(picks)],
                              capture_output=True, text=True, timeout=300, env={**os.environ, "COLUMNS": "200"})
    assert terminal.returncode == 1 and "Traceback" not in terminal.stderr
    assert words.split(": ")[-1] in " ".join(terminal.stdout.replace("│", " ").split())


def test_json_report_carries_what_the_terminal_shows(tmp_path, run_files):
    section, picks, _ = run_files
    report = json.loads(pitfalls("scan", section, "--picks", picks, "--format", "json", "--gate", "off").stdout)
    assert set(report["seafloor"]) == {"source", "polarity", "n_traces_found", "twt_ms_median", "dominant_frequency_hz"}
    assert report["section"]["trace_spacing_m"] == pytest.approx(12.5)
    assert report["section"]["trace_spacing_from_headers"] is True
    assert isinstance(report["section"]["notes"], list)
    assert all("message" in run for run in report["detectors"])
    terminal = pitfalls("scan", section, "--picks", picks, "--gate", "off").stdout
    assert not re.search(r"\bnan\b", terminal, re.IGNORECASE)


def test_an_interruption_inside_a_library_import_counts_as_an_interruption():
    from pitfalls.cli import Terminated, _interruption_in
    for stop in (KeyboardInterrupt, Terminated):
        try:
            try:
                raise stop()
            except BaseException:
                raise ImportError("the library's own message")
        except ImportError as error:
            assert _interruption_in(error) is stop
    assert _interruption_in(ValueError("plain")) is None
