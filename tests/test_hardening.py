"""Hostile inputs and hostile paths through the command line: exit 2 with one line, no traceback,
inputs unchanged, nothing overwritten."""
import hashlib
import os
import signal
import subprocess
import sys
import time

import numpy as np
import pytest

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
