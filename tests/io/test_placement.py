"""Matching picks to traces (trace, CDP, shotpoint, inline/xline, nearest X/Y) and the round trip of
every pick-file layout against the same picks given as the header CSV, on a modelled line and a
modelled volume: the same picks must give the same findings."""
from __future__ import annotations

import functools
import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import segyio

from pitfalls import detectors
from pitfalls.engine import scan
from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import parse_columns, read_pick_file
from pitfalls.io.placement import TraceKeys, place_picks, read_trace_keys
from pitfalls.io.rules import load_rules
from pitfalls.io.segy import TraceLayout
from pitfalls.model import SectionInfo
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.segy_writer import write_section_segy, write_volume_segy
from pitfalls.modelling.shapes import anticline

N_TRACES = 120
SPACING_M = 12.5
ORIGIN_X_M, ORIGIN_Y_M = 500000.0, 6000000.0
FIRST_CDP, FIRST_SHOTPOINT = 1001, 5001


# --- matching on a described section (no file) ----------------------------------------------------
def line_info(n: int = 5) -> tuple[SectionInfo, TraceLayout]:
    info = SectionInfo(path="line.sgy", sha256="0" * 64, geometry="2d", n_traces=n, n_samples=500, dt_ms=4.0,
                       t0_ms=0.0, n_xlines=n, trace_spacing_m=SPACING_M, spacing_from_headers=True)
    layout = TraceLayout("2d", n, np.arange(1, n + 1), np.ones(n, dtype=np.int64), np.arange(1, n + 1))
    return info, layout


def line_keys(n: int = 5, cdp=None, shotpoint=None, x=None, y=None, units: int = 1) -> TraceKeys:
    return TraceKeys(cdp=np.asarray(cdp if cdp is not None else FIRST_CDP + np.arange(n)),
                     shotpoint=np.asarray(shotpoint if shotpoint is not None else FIRST_SHOTPOINT + 2 * np.arange(n)),
                     x=np.asarray(x if x is not None else ORIGIN_X_M + SPACING_M * np.arange(n), dtype=float),
                     y=np.asarray(y if y is not None else np.full(n, ORIGIN_Y_M), dtype=float), coordinate_units=units)


def place(tmp_path, text: str, columns: str, keys: TraceKeys | None = None, n: int = 5):
    path = tmp_path / "H.txt"
    path.write_text(text)
    info, layout = line_info(n)
    return place_picks([read_pick_file(str(path), parse_columns(columns))], info, layout, keys or line_keys(n))


def placement_refused(tmp_path, text, columns, keys=None) -> PitfallsInputError:
    with pytest.raises(PitfallsInputError) as caught:
        place(tmp_path, text, columns, keys)
    assert caught.value.fix
    return caught.value


def test_cdp_and_shotpoint_numbers_find_their_traces(tmp_path):
    by_cdp = place(tmp_path, "1003 1500\n1001 1400\n", "cdp,twt_ms")
    np.testing.assert_array_equal(by_cdp.grids[0][0], [1400.0, np.nan, 1500.0, np.nan, np.nan])
    by_shotpoint = place(tmp_path, "5009 1500\n", "shotpoint,twt_ms")
    np.testing.assert_array_equal(by_shotpoint.grids[0][0], [np.nan] * 4 + [1500.0])
    assert "CDP number (trace header byte 21)" in by_cdp.matches[0].describe()


def test_xy_takes_the_nearest_trace_and_reports_the_largest_distance(tmp_path):
    text = f"{ORIGIN_X_M + 12.5 + 3.0} {ORIGIN_Y_M + 4.0} 1500\n{ORIGIN_X_M + 50.0} {ORIGIN_Y_M} 1510\n"
    placed = place(tmp_path, text, "x,y,twt_ms")
    np.testing.assert_array_equal(placed.grids[0][0], [np.nan, 1500.0, np.nan, np.nan, 1510.0])
    match = placed.matches[0]
    assert match.n_matched == 2 and match.largest_distance_m == pytest.approx(5.0)  # 3-4-5 triangle
    assert match.half_bin_m == pytest.approx(6.25)
    assert "largest distance 5.0 m" in match.describe() and "6.2 m" in match.describe()


def test_xy_gap_rows_off_the_section_are_ignored_and_counted(tmp_path):
    placed = place(tmp_path, f"{ORIGIN_X_M} {ORIGIN_Y_M} 1500\n{ORIGIN_X_M - 900} {ORIGIN_Y_M} -999.25\n",
                   "x,y,twt_ms")
    assert placed.matches[0].n_unmatched_gaps == 1 and placed.n_gaps == (1,)


@pytest.mark.parametrize("text, columns, keys, where, words", [
    ("7 1500\n", "trace,twt_ms", None, "row 1", ["trace 7 is beyond the section (traces 1-5)"]),
    ("1001 1500\n999 1500\n998 1500\n", "cdp,twt_ms", None, "row 2",
     ["cdp 999 is on no trace", "1001-1005", "2 pick rows in all match no trace"]),
    ("5003 1500\n", "shotpoint,twt_ms", line_keys(shotpoint=[5001, 5003, 5003, 5005, 5005]), "row 1",
     ["shotpoint 5003 is on 2 traces", "2, 3", "ambiguous", "cdp"]),
    ("1002 1500\n", "cdp,twt_ms", line_keys(cdp=[1001, 1002, 1002, 1003, 1004]), "row 1", ["ambiguous"]),
    (f"{ORIGIN_X_M + 6.25} {ORIGIN_Y_M} 1500\n", "x,y,twt_ms", None, "row 1", ["equally near traces 1 and 2"]),
    (f"{ORIGIN_X_M + 12.5} {ORIGIN_Y_M + 6.3} 1500\n{ORIGIN_X_M} {ORIGIN_Y_M + 90} 1500\n", "x,y,twt_ms", None,
     "row 1", ["6.3 m from the nearest trace", "half a bin (6.2 m)", "2 pick rows in all", "coordinate system"]),
    (f"{ORIGIN_X_M} {ORIGIN_Y_M} 1500\n", "x,y,twt_ms", line_keys(x=np.zeros(5), y=np.zeros(5)), "header",
     ["no spacing"]),
    (f"{ORIGIN_X_M} {ORIGIN_Y_M} 1500\n", "x,y,twt_ms", line_keys(units=2), "header", ["byte 89 is 2"]),
    (f"{ORIGIN_X_M} {ORIGIN_Y_M} 1500\n{ORIGIN_X_M + 2} {ORIGIN_Y_M} 1504\n", "x,y,twt_ms", None, "row 2",
     ["rows 1 and 2 both fall on trace 1", "ambiguous match"]),
    ("1001 2500\n", "cdp,twt_ms", None, "row 1", ["outside the traces (0-1996 ms)"]),
])
def test_matching_errors_name_the_row_and_the_fix(tmp_path, text, columns, keys, where, words):
    error = placement_refused(tmp_path, text, columns, keys)
    assert error.where == where and error.path.endswith("H.txt")
    for word in words:
        assert word in str(error)


def test_cdp_picks_are_refused_on_a_volume(tmp_path):
    path = tmp_path / "H.txt"
    path.write_text("1001 1500\n")
    info = SectionInfo(path="cube.sgy", sha256="0" * 64, geometry="3d", n_traces=4, n_samples=500, dt_ms=4.0,
                       t0_ms=0.0, n_inlines=2, n_xlines=2)
    layout = TraceLayout("3d", 4, np.arange(1, 5), np.array([1, 1, 2, 2]), np.array([1, 2, 1, 2]),
                         np.array([1, 2]), np.array([1, 2]), np.arange(4).reshape(2, 2))
    with pytest.raises(PitfallsInputError, match="3-D volume"):
        place_picks([read_pick_file(str(path), parse_columns("cdp,twt_ms"))], info, layout, line_keys(4))


# --- a modelled line and volume -------------------------------------------------------------------
def earth(n_traces: int) -> EarthModel:
    """Water 600 m deep over beds folded into an anticline, with a gas-water contact flat at 1150 m."""
    units = [Unit("overburden", np.full(n_traces, 600.0), 2000.0, 2000.0)]
    for k, crest_m in enumerate((900.0, 1000.0)):
        units.append(Unit(f"bed{k}", anticline(n_traces, n_traces / 2, crest_m, 120.0, n_traces / 4), 2000.0,
                          (2150.0, 2000.0)[k]))
    units.append(Unit("reservoir", anticline(n_traces, n_traces / 2, 1100.0, 120.0, n_traces / 4), 2000.0, 2150.0))
    units.append(Unit("deep", anticline(n_traces, n_traces / 2, 1250.0, 120.0, n_traces / 4), 2000.0, 2000.0))
    gwc = Overprint("gwc", "gas", np.full(n_traces, 1150.0), -300.0, units=("reservoir",))
    return EarthModel(1500.0, np.full(n_traces, 600.0), tuple(units), (gwc,))


@functools.lru_cache(maxsize=None)
def modelled():
    return model_section(earth(N_TRACES), dt_ms=4.0, n_samples=400, snr=8.0, seed=2, name="QL-7")


def picked_surfaces() -> dict[str, tuple[str, np.ndarray]]:
    """Horizon -> (kind, times): the reservoir top with a 40 ms cycle skip on traces 61-80, the contact, a bed."""
    model = modelled()
    top = model.surface_twt_ms["reservoir"].copy()
    top[60:80] += 40.0
    bed = model.surface_twt_ms["bed1"].copy()
    bed[5:9] = np.nan
    return {"Top Reservoir": ("horizon", top), "GWC": ("contact", model.surface_twt_ms["gwc"]),
            "Bed One": ("horizon", bed)}


def cell(twt_ms: float, sign: float = 1.0) -> str:
    return "-999.25" if math.isnan(twt_ms) else f"{sign * twt_ms:.3f}"


@pytest.fixture(scope="module")
def line(tmp_path_factory):
    folder = tmp_path_factory.mktemp("line")
    path = folder / "QL-7.sgy"
    write_section_segy(path, modelled().section, origin_x_m=ORIGIN_X_M, origin_y_m=ORIGIN_Y_M)
    with segyio.open(str(path), "r+", ignore_geometry=True) as handle:  # the test's own file: add CDP and shotpoint
        for index in range(handle.tracecount):
            handle.header[index] = {segyio.TraceField.CDP: FIRST_CDP + index,
                                    segyio.TraceField.EnergySourcePoint: FIRST_SHOTPOINT + 2 * index}
    return folder, str(path)


@pytest.fixture(scope="module")
def rules():
    return load_rules(None, detectors.rule_keys())


def signature(result):
    return [(f.id, f.severity, f.horizon, f.traces, f.inlines, f.xlines, f.twt_ms, round(f.confidence, 9))
            for f in result.findings]


def test_trace_keys_are_read_with_the_scalar(line):
    _, path = line
    keys = read_trace_keys(path)
    assert keys.cdp[:3].tolist() == [1001, 1002, 1003] and keys.shotpoint[:2].tolist() == [5001, 5003]
    # write_section_segy stores X/Y in centimetres with scalar -100 (SEG-Y rev 1 byte 71: negative divides);
    # the line runs east from the origin
    assert keys.x[0] == pytest.approx(ORIGIN_X_M) and keys.x[1] - keys.x[0] == pytest.approx(SPACING_M)
    assert keys.y[1] - keys.y[0] == pytest.approx(0.0)


def line_layouts(folder) -> dict[str, tuple[str, dict]]:
    """The same picks in each layout: file path and the scan's pick options."""
    surfaces = picked_surfaces()
    layouts = {}

    def put(name, text, **options):
        path = folder / name
        path.write_text(text)
        layouts[name] = (str(path), options)

    rows = ["horizon,trace,twt_ms,kind"]
    for horizon, (kind, twt) in surfaces.items():
        rows += [f"{horizon},{i + 1},{cell(t)},{kind}" for i, t in enumerate(twt)]
    put("reference.csv", "\n".join(rows) + "\n")
    rows = ["# Quillon Trough line QL-7, all horizons", "Exported for review", "HORIZON;CDP;SP;TIME;KIND"]
    for horizon, (kind, twt) in surfaces.items():
        rows += [f"{horizon};{FIRST_CDP + i};{FIRST_SHOTPOINT + 2 * i};{cell(t)};{kind}" for i, t in enumerate(twt)]
    put("semicolon_cdp.txt", "\n".join(rows) + "\n", pick_columns=parse_columns("horizon,cdp,-,twt_ms,kind"))
    rows = ["horizon\tshotpoint\ttwt_s\tkind"]
    for horizon, (kind, twt) in surfaces.items():
        rows += [f"{horizon}\t{FIRST_SHOTPOINT + 2 * i}\t{'' if math.isnan(t) else f'{t / 1000:.6f}'}\t{kind}"
                 for i, t in enumerate(twt)]
    put("tab_shotpoint.tsv", "\n".join(rows) + "\n")
    rows = ["horizon,x,y,twt_ms,kind"]
    for horizon, (kind, twt) in surfaces.items():
        rows += [f"{horizon},{ORIGIN_X_M + SPACING_M * i + 2.0:.2f},{ORIGIN_Y_M - 1.5:.2f},{cell(t)},{kind}"
                 for i, t in enumerate(twt)]
    put("xy.csv", "\n".join(rows) + "\n")
    # one file per horizon, named after it, whitespace, no header, negative-downward times
    for index, (horizon, (kind, twt)) in enumerate(surfaces.items()):
        rows = ["# exported horizon", "  cdp      time"]
        rows += [f"  {FIRST_CDP + i}   {cell(t, -1.0)}" for i, t in enumerate(twt)]
        put(f"{horizon}.dat", "\n".join(rows) + "\n", pick_columns=parse_columns("cdp,twt_ms"))
    return layouts


def test_every_layout_gives_the_same_findings_on_a_modelled_line(line, rules):
    folder, path = line
    layouts = line_layouts(folder)
    reference = scan(path, [layouts["reference.csv"][0]], *rules)
    expected = signature(reference)
    assert any(f[0] == "pick.cycle-skip" and f[2] == "Top Reservoir" for f in expected), expected
    for name in ("semicolon_cdp.txt", "tab_shotpoint.tsv", "xy.csv"):
        pick_path, options = layouts[name]
        result = scan(path, [pick_path], *rules, **options)
        assert signature(result) == expected, name
        assert [(p.horizon, p.kind, p.n_points, p.n_gaps) for p in result.picks] == \
            [(p.horizon, p.kind, p.n_points, p.n_gaps) for p in reference.picks]
    xy = scan(path, [layouts["xy.csv"][0]], *rules, only=["pick_consistency"])
    assert any("largest distance 2.5 m" in note for note in xy.pick_notes)


def test_one_file_per_horizon_named_after_the_file_gives_the_same_findings(line, rules):
    """Plain files, one per horizon, named after it, no header, negative-downward times."""
    folder, path = line
    layouts = line_layouts(folder)
    files = [layouts[name][0] for name in ("Top Reservoir.dat", "Bed One.dat")]
    plain = scan(path, files, *rules, pick_columns=parse_columns("cdp,twt_ms"))
    reference = scan(path, [_without(layouts["reference.csv"][0], "GWC", folder)], *rules)
    assert signature(plain) == signature(reference)
    assert [p.horizon for p in plain.picks] == ["Top Reservoir", "Bed One"]
    assert any("counted downwards" in note for note in plain.pick_notes)
    assert any("named after the file" in note for note in plain.pick_notes)
    assert any("2 comment or text lines skipped" in note for note in plain.pick_notes)


def _without(csv_path: str, horizon: str, folder) -> str:
    rows = [row for row in Path(csv_path).read_text().splitlines() if not row.startswith(horizon + ",")]
    out = folder / f"reference_without_{horizon}.csv"
    out.write_text("\n".join(rows) + "\n")
    return str(out)


# --- the volume -----------------------------------------------------------------------------------
INLINES = (31, 32, 33)
XLINES = 201 + np.arange(60)


@pytest.fixture(scope="module")
def volume(tmp_path_factory):
    folder = tmp_path_factory.mktemp("volume")
    section = modelled().section
    panels = []
    for _ in INLINES:
        panels.append(type(section)(data=section.data[30:90].copy(), dt_ms=section.dt_ms, t0_ms=section.t0_ms,
                                    trace_spacing_m=SPACING_M, trace_numbers=XLINES, name="panel"))
    path = folder / "QL-cube.sgy"
    write_volume_segy(path, panels, list(INLINES), XLINES, inline_spacing_m=25.0, origin_x_m=ORIGIN_X_M,
                      origin_y_m=ORIGIN_Y_M)
    return folder, str(path)


def test_every_layout_gives_the_same_findings_on_a_modelled_volume(volume, rules):
    folder, path = volume
    surfaces = {name: (kind, twt[30:90]) for name, (kind, twt) in picked_surfaces().items()}
    header = ["horizon,inline,xline,twt_ms,kind"]
    plain = ["# inline xline x y time (negative down)"]
    xy = ["horizon,x,y,twt_ms,kind"]
    for horizon, (kind, twt) in surfaces.items():
        for k, inline in enumerate(INLINES):
            for j, xline in enumerate(XLINES):
                header.append(f"{horizon},{inline},{xline},{cell(twt[j])},{kind}")
                x, y = ORIGIN_X_M + SPACING_M * j, ORIGIN_Y_M + 25.0 * k
                plain.append(f"{horizon.replace(' ', '_')} {inline} {xline} {x:.2f} {y:.2f} {cell(twt[j], -1.0)} {kind}")
                xy.append(f"{horizon},{x + 3.0:.2f},{y - 4.0:.2f},{cell(twt[j])},{kind}")
    files = {}
    for name, rows in (("header.csv", header), ("plain.txt", plain), ("xy.csv", xy)):
        files[name] = folder / name
        files[name].write_text("\n".join(rows) + "\n")
    reference = scan(path, [str(files["header.csv"])], *rules, only=["pick_consistency", "contacts"])
    expected = signature(reference)
    assert any(f[0] == "pick.cycle-skip" and f[4] == (31, 33) for f in expected), expected
    by_xy = scan(path, [str(files["xy.csv"])], *rules, only=["pick_consistency", "contacts"])
    assert signature(by_xy) == expected
    assert any("largest distance 5.0 m" in note and "refused beyond" in note for note in by_xy.pick_notes)
    numbered = scan(path, [str(files["plain.txt"])], *rules, only=["pick_consistency", "contacts"],
                    pick_columns=parse_columns("horizon,inline,xline,-,-,twt_ms,kind"))
    renamed = [(f[0], f[1], f[2].replace("_", " ") if f[2] else f[2], *f[3:]) for f in signature(numbered)]
    assert renamed == expected


def test_annotated_rows_of_a_column_file_carry_their_findings(line, tmp_path):
    folder, path = line
    layouts = line_layouts(folder)
    pick_path, _ = layouts["semicolon_cdp.txt"]
    out = tmp_path / "flagged.csv"
    command = [sys.executable, "-m", "pitfalls", "scan", path, "--picks", pick_path, "--columns",
               "horizon,cdp,-,twt_ms,kind", "--annotated-picks", str(out), "--format", "json", "--gate", "off",
               "--only", "pick_consistency"]
    done = subprocess.run(command, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    report = json.loads(done.stdout)
    assert any("3 comment or text lines skipped" in note for note in report["pick_notes"])
    lines = out.read_text().splitlines()
    assert lines[0] == "horizon,cdp,column_3,twt_ms,kind,finding_ids,worst_severity,top_rank"
    assert len(lines) == 1 + 3 * N_TRACES
    flagged = [row for row in lines[1:] if "pick.cycle-skip" in row]
    assert flagged and all(row.startswith("Top Reservoir,") for row in flagged)
    cdps = sorted(int(row.split(",")[1]) for row in flagged)
    assert cdps[0] >= FIRST_CDP + 55 and cdps[-1] <= FIRST_CDP + 85


def test_cli_refuses_a_bad_columns_option_in_one_line(line):
    _, path = line
    done = subprocess.run([sys.executable, "-m", "pitfalls", "scan", path, "--picks", path, "--columns", "cdp,time"],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "--columns" in done.stderr and "Traceback" not in done.stderr
