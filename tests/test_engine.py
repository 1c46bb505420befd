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


# --- blocks, worker processes and 3-D locations on a modelled volume ----------------------------
MODEL_TRACES, MODEL_INLINES, FIRST_XLINE = 120, (51, 52, 53, 54), 300


@pytest.fixture(scope="module")
def modelled_volume(tmp_path_factory):
    """Four inlines of one modelled slope line (every multiple, Goupillaud recursion), crosslines
    numbered 300-419 with CDP X/Y every 12.5 m; picks: the seafloor, a primary with a one-cycle
    skip on inlines 52-53, and a pick on the first seafloor multiple (2 x the seafloor time)."""
    from pitfalls.model import Section
    from pitfalls.modelling.earth import EarthModel, Unit
    from pitfalls.modelling.section import model_section
    from pitfalls.modelling.segy_writer import write_volume_segy
    from pitfalls.modelling.shapes import dipping
    earth = EarthModel(water_velocity_m_s=1500.0, seafloor_depth_m=dipping(MODEL_TRACES, 420.0, 0.45),
                       units=(Unit("U1", dipping(MODEL_TRACES, 0.0, 0.0), 1700.0),
                              Unit("U2", dipping(MODEL_TRACES, 300.0, 0.3), 2100.0),
                              Unit("U3", dipping(MODEL_TRACES, 900.0, 0.6), 2500.0)), trace_spacing_m=12.5)
    line = model_section(earth, n_samples=450, snr=20.0, seed=3, name="volume line")
    folder = tmp_path_factory.mktemp("modelled")
    panels = []
    for number, seed in zip(MODEL_INLINES, range(4)):
        noise = 0.002 * np.random.default_rng(seed).standard_normal(line.section.data.shape)
        panels.append(Section(data=(line.section.data + noise).astype(np.float32), dt_ms=line.section.dt_ms,
                              t0_ms=0.0, trace_spacing_m=12.5, trace_numbers=np.arange(1, MODEL_TRACES + 1)))
    xlines = FIRST_XLINE + np.arange(MODEL_TRACES)
    segy = write_volume_segy(folder / "slope.sgy", panels, MODEL_INLINES, xlines, sample_format=5)
    rows = ["horizon,inline,xline,twt_ms,kind"]
    for inline in MODEL_INLINES:
        for index, xline in enumerate(xlines):
            skip = 40.0 if inline in (52, 53) and 40 <= index < 70 else 0.0
            rows.append(f"Seafloor,{inline},{xline},{line.seafloor_twt_ms[index]:.2f},seafloor")
            rows.append(f"U3,{inline},{xline},{line.surface_twt_ms['U3'][index] + skip:.2f},horizon")
            rows.append(f"M1,{inline},{xline},{2 * line.seafloor_twt_ms[index]:.2f},horizon")
    picks = folder / "slope_picks.csv"
    picks.write_text("\n".join(rows) + "\n")
    return str(segy), str(picks)


@pytest.fixture(scope="module")
def modelled_scans(modelled_volume, rules):
    """The same scan run here in blocks of 16 and 1 inlines, and in two worker processes in blocks of 1."""
    segy, picks = modelled_volume
    return {(jobs, block): scan(segy, [picks], *rules, jobs=jobs, inlines_per_block=block)
            for jobs, block in ((1, 16), (1, 1), (2, 1))}


def test_report_is_the_same_for_any_block_size_and_number_of_workers(modelled_scans):
    reference = modelled_scans[(1, 16)]
    assert len(reference.findings) >= 2
    for key, result in modelled_scans.items():
        assert result.findings == reference.findings, key
        assert result.seafloor == reference.seafloor, key
        assert [(run.name, run.status) for run in result.detectors] == [
            (run.name, run.status) for run in reference.detectors], key


def test_three_d_findings_name_crossline_numbers_and_their_map_footprint(modelled_scans):
    result = modelled_scans[(1, 16)]
    last_xline = FIRST_XLINE + MODEL_TRACES - 1
    # the survey's CDP X/Y as written: X from 500000 m every 12.5 m along the crosslines, Y every 12.5 m per inline
    assert result.section.coordinate_extent_xy == ((500000.0, 6000000.0), (500000.0 + 12.5 * (MODEL_TRACES - 1), 6000037.5))
    for finding in result.findings:
        assert finding.traces is None and FIRST_XLINE <= finding.xlines[0] <= finding.xlines[1] <= last_xline
        (x_min, y_min), (x_max, y_max) = finding.footprint_xy
        assert x_min == 500000.0 + 12.5 * (finding.xlines[0] - FIRST_XLINE)
        assert x_max == 500000.0 + 12.5 * (finding.xlines[1] - FIRST_XLINE)
        assert y_min == 6000000.0 + 12.5 * (finding.inlines[0] - MODEL_INLINES[0])
        assert y_max == 6000000.0 + 12.5 * (finding.inlines[1] - MODEL_INLINES[0])
    multiple = [f for f in result.findings if f.id == "multiple.seafloor" and f.horizon == "M1"]
    assert multiple and multiple[0].inlines == (51, 54) and multiple[0].xlines[0] <= FIRST_XLINE + 5
    skips = [f for f in result.findings if f.id == "pick.cycle-skip" and f.horizon == "U3"]
    assert len(skips) == 1 and skips[0].inlines == (52, 53) and skips[0].xlines == (FIRST_XLINE + 40, FIRST_XLINE + 69)


def test_progress_counts_panels_and_samples(modelled_volume, rules):
    segy, picks = modelled_volume
    calls = []
    scan(segy, [picks], *rules, only=["pick_consistency"], inlines_per_block=3,
         progress=lambda done, total, samples=0: calls.append((done, total, samples)))
    assert calls == [(3, 4, 3 * MODEL_TRACES * 450), (4, 4, 4 * MODEL_TRACES * 450)]
    two_arguments = []
    scan(segy, [picks], *rules, only=["pick_consistency"], inlines_per_block=3,
         progress=lambda done, total: two_arguments.append((done, total)))
    assert two_arguments == [(3, 4), (4, 4)]
