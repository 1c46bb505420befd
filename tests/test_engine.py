"""The engine on 3-D volumes (per-inline panels merged into ranges), failing detectors, the figure."""
import json
import subprocess
import sys
import types

import numpy as np
import pytest

from pitfalls import detectors
from pitfalls.engine import merge_inlines, scan
from pitfalls.io.rules import load_rules
from pitfalls.model import Finding
from segy_files import write_segy

N_XLINES, N_SAMPLES, DT_MS = 60, 400, 2.0
INLINES = (21, 22, 23, 24)


def _wave_train(n_traces, seed):
    twt = np.arange(N_SAMPLES) * DT_MS
    trace = np.cos(2 * np.pi * 25.0 * (twt - 500.0) / 1000.0) * np.exp(-((twt - 500.0) / 100.0) ** 2)
    trace += 2.0 * np.exp(-((twt - 150.0) / 6.0) ** 2)
    rng = np.random.default_rng(seed)
    return np.tile(trace, (n_traces, 1)) + 0.02 * rng.standard_normal((n_traces, N_SAMPLES))


@pytest.fixture
def volume(tmp_path):
    """Four inlines x 60 crosslines (numbered 101, 103, ...), written crossline-major, one trace missing."""
    xlines = 101 + 2 * np.arange(N_XLINES)
    positions = [(il, xl) for xl in xlines for il in INLINES if (il, xl) != (24, xlines[-1])]
    data = _wave_train(len(positions), seed=5)
    path = write_segy(tmp_path / "cube.sgy", data, dt_us=2000, inlines=[p[0] for p in positions],
                      xlines=[p[1] for p in positions])
    picks = tmp_path / "cube_picks.csv"
    rows = ["horizon,inline,xline,twt_ms"]
    for il in INLINES:
        for xl in xlines:
            if (il, xl) == (24, xlines[-1]):
                continue
            skipped = il in (22, 23, 24) and 121 <= xl <= 141
            rows.append(f"H1,{il},{xl},{540.0 if skipped else 500.0}")
    picks.write_text("\n".join(rows) + "\n")
    return path, picks


@pytest.fixture(scope="module")
def rules():
    return load_rules(None, detectors.rule_keys())


def test_three_d_findings_merge_across_inlines(volume, rules):
    path, picks = volume
    result = scan(str(path), [str(picks)], *rules, only=["pick_consistency"])
    assert result.section.geometry == "3d" and result.section.n_missing_traces == 1
    skips = [f for f in result.findings if f.id == "pick.cycle-skip"]
    assert len(skips) == 1
    assert skips[0].inlines == (22, 24) and skips[0].xlines == (121, 141) and skips[0].traces is None
    assert skips[0].evidence["inlines_merged"] == 3


def test_merge_keeps_separate_ranges_apart():
    def at(inline, xlines, confidence=0.5):
        return Finding(id="pick.cycle-skip", detector="d", severity="medium", confidence=confidence, title="t",
                       advice="a", horizon="H", inlines=(inline, inline), xlines=xlines)
    merged = merge_inlines([[at(1, (10, 20))], [at(2, (15, 25), 0.9), at(2, (40, 50))], [], [at(4, (10, 20))]])
    ranges = sorted((f.inlines, f.xlines) for f in merged)
    assert ranges == [((1, 2), (10, 25)), ((2, 2), (40, 50)), ((4, 4), (10, 20))]
    assert max(f.confidence for f in merged) == 0.9


def test_failing_detector_is_reported_and_others_run(volume, rules, monkeypatch):
    path, picks = volume
    broken = types.SimpleNamespace(NAME="broken", FAMILY="pick", KINDS={}, RULE_KEYS={},
                                   detect=lambda block, context, picks, rules: 1 / 0)
    monkeypatch.setattr(detectors, "DETECTORS", (broken,) + detectors.DETECTORS)
    monkeypatch.setitem(detectors.BY_NAME, "broken", broken)
    result = scan(str(path), [str(picks)], *rules, only=["broken", "pick_consistency"])
    assert [(run.name, run.status) for run in result.detectors] == [("broken", "failed"), ("pick_consistency", "ran")]
    assert "ZeroDivisionError" in result.failed[0].message
    assert any(f.id == "pick.cycle-skip" for f in result.findings)
    assert result.reaches("off") is False  # the CLI still exits 1 because a detector failed


def test_figure_is_a_png(volume, tmp_path):
    pytest.importorskip("matplotlib")
    path, picks = volume
    figure = tmp_path / "cube.png"
    done = subprocess.run([sys.executable, "-m", "pitfalls", "scan", str(path), "--picks", str(picks), "--figure",
                           str(figure), "--only", "pick_consistency", "--quiet"], capture_output=True, text=True)
    assert done.returncode == 1, done.stderr  # the skip is high
    assert figure.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_figure_without_matplotlib_is_a_clear_error(volume, tmp_path):
    path, picks = volume
    code = ("import sys; sys.modules['matplotlib'] = None\n"
            "from pitfalls.cli import main\n"
            f"sys.exit(main(['scan', {str(path)!r}, '--figure', {str(tmp_path / 'f.png')!r}]))\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert done.returncode == 2
    assert "matplotlib" in done.stderr and "pip install" in done.stderr and "Traceback" not in done.stderr
    assert not (tmp_path / "f.png").exists()


def test_real_line_scans_both_ways_without_echoing_its_text_header(real_line_path):
    import segyio
    with segyio.open(real_line_path, ignore_geometry=True) as handle:
        header_lines = [line.strip() for line in segyio.tools.wrap(handle.text[0].decode("ascii", "replace")).splitlines()]
    for extra in ([], ["--2d"]):
        done = subprocess.run([sys.executable, "-m", "pitfalls", "scan", real_line_path, "--format", "json", *extra],
                              capture_output=True, text=True)
        assert done.returncode == 0, done.stderr
        report = json.loads(done.stdout)
        assert report["section"]["n_traces"] == 601 and report["section"]["geometry"] == "2d"
        # the line is a negative control for the section-level checks (its README): nothing above low
        assert [f["id"] for f in report["findings"] if f["severity"] != "low"] == []
        for line in header_lines:
            if len(line) > 12:
                assert line[4:].strip() not in done.stdout
