"""The Python interface: one engine behind the command line and pitfalls.scan, sections in memory,
pick tables, rules mappings, the report object and its views, and the one user-error type."""
from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys

import jsonschema
import numpy as np
import pytest
import segyio

import pitfalls
from pitfalls.modelling.earth import EarthModel, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.segy_writer import write_picks_csv, write_section_segy, write_volume_segy

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
DEMO_SEGY = os.path.join(ROOT, "demo_data", "OT25-117.sgy")
DEMO_PICKS = os.path.join(ROOT, "demo_data", "OT25-117_picks.csv")


def run_cli(*args, cwd=None):
    env = {**os.environ, "COLUMNS": "120"}
    return subprocess.run([sys.executable, "-m", "pitfalls", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=300)


def without_timings(text: str) -> str:
    """The report with every detector's run time blanked: the only bytes two runs may differ in."""
    return re.sub(r'"seconds": [0-9.eE+-]+', '"seconds": 0', text)


# --- inputs: a modelled line and a modelled volume -------------------------------------------
DT_MS, N_SAMPLES = 4.0, 500


def _earth(n_traces: int, tilt_m: float) -> EarthModel:
    x = np.arange(n_traces, dtype=float)
    seafloor = 600.0 + 0.5 * x
    sand_top = 1050.0 + tilt_m * x + 25.0 * np.sin(x / 9.0)
    return EarthModel(1500.0, seafloor, (Unit("mud", seafloor, 1700.0), Unit("sand", sand_top, 2300.0)))


def _section(n_traces: int, seed: int, tilt_m: float = 0.3):
    return model_section(_earth(n_traces, tilt_m), dt_ms=DT_MS, n_samples=N_SAMPLES, snr=8.0, seed=seed,
                         name=f"model {seed}")


def _pick_rows(modelled, inline=None, xlines=None, skip=slice(0, 0)):
    """Seafloor and the sand top as picked on one panel; ``skip`` moves the sand pick down one cycle."""
    rows = []
    sand = np.round(modelled.surface_twt_ms["sand"].copy(), 2)
    sand[skip] += 40.0
    for index in range(modelled.section.n_traces):
        place = ({"trace": index + 1} if inline is None else {"inline": inline, "xline": int(xlines[index])})
        rows.append({"horizon": "Seafloor", **place, "twt_ms": round(float(modelled.seafloor_twt_ms[index]), 2),
                     "kind": "seafloor"})
    for index in range(modelled.section.n_traces):
        place = ({"trace": index + 1} if inline is None else {"inline": inline, "xline": int(xlines[index])})
        rows.append({"horizon": "Sand top", **place, "twt_ms": float(sand[index]), "kind": "horizon"})
    return rows


def _columns(rows):
    return {key: [row[key] for row in rows] for key in rows[0]}


@pytest.fixture(scope="module")
def line(tmp_path_factory):
    """A modelled 60-trace line written as IEEE SEG-Y, its picks as CSV, and both in memory."""
    folder = tmp_path_factory.mktemp("line")
    modelled = _section(60, seed=3)
    segy = write_section_segy(folder / "line.sgy", modelled.section, sample_format=5)
    rows = _pick_rows(modelled, skip=slice(20, 32))
    picks = write_picks_csv(folder / "line_picks.csv", rows)
    return {"segy": str(segy), "picks": str(picks), "data": modelled.section.data, "rows": rows,
            "x": 500000.0 + 12.5 * np.arange(60), "y": np.full(60, 6000000.0)}


@pytest.fixture(scope="module")
def volume(tmp_path_factory):
    """Three inlines (51-53) x 40 crosslines (300-339), modelled, IEEE SEG-Y, picks with a skip on two inlines."""
    folder = tmp_path_factory.mktemp("volume")
    inlines, xlines = [51, 52, 53], np.arange(300, 340)
    panels, rows = [], []
    for index, inline in enumerate(inlines):
        modelled = _section(len(xlines), seed=10 + index, tilt_m=0.3 + 0.05 * index)
        panels.append(modelled.section)
        rows += _pick_rows(modelled, inline, xlines, skip=slice(10, 22) if inline >= 52 else slice(0, 0))
    segy = write_volume_segy(folder / "cube.sgy", panels, inlines, xlines, sample_format=5)
    picks = write_picks_csv(folder / "cube_picks.csv", rows)
    data = np.stack([panel.data for panel in panels])
    return {"segy": str(segy), "picks": str(picks), "data": data, "rows": rows, "inlines": inlines, "xlines": xlines}


# --- the package itself ---------------------------------------------------------------------
def test_import_is_light_and_every_public_name_resolves():
    """`import pitfalls` loads none of the numerical or report libraries; every name in __all__ exists."""
    code = ("import sys, pitfalls; heavy = [m for m in ('numpy', 'scipy', 'segyio', 'rich', 'yaml', 'matplotlib') "
            "if m in sys.modules]; print(','.join(heavy))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0 and done.stdout.strip() == "", done.stdout + done.stderr
    for name in pitfalls.__all__:
        assert getattr(pitfalls, name) is not None, name
    assert pitfalls.Finding.__name__ == "Finding" and issubclass(pitfalls.PitfallsInputError, Exception)


def test_docstring_examples_run():
    import doctest
    outcome = doctest.testmod(pitfalls, optionflags=doctest.ELLIPSIS)
    assert outcome.failed == 0 and outcome.attempted >= 1


@pytest.mark.parametrize("name", ["scan", "load_rules", "explain", "finding_ids"])
def test_public_functions_have_numpydoc_sections(name):
    doc = getattr(pitfalls, name).__doc__
    assert "Returns\n    -------" in doc, name
    if name not in ("finding_ids",):
        assert "Parameters\n    ----------" in doc, name


# --- one engine: the command line and the API give the same bytes ----------------------------
@pytest.fixture(scope="module")
def demo_report():
    return pitfalls.scan(DEMO_SEGY, picks=DEMO_PICKS)


def test_cli_and_api_write_the_same_json_for_the_demo_line(demo_report):
    cli = run_cli("scan", DEMO_SEGY, "--picks", DEMO_PICKS, "--format", "json")
    assert cli.returncode == 1, cli.stderr  # the demo has high findings
    assert without_timings(demo_report.to_json()) == without_timings(cli.stdout)
    assert not demo_report.passes("high") and demo_report.summary["high"] >= 1


def test_cli_and_api_write_the_same_json_for_a_modelled_volume(volume, tmp_path):
    output = tmp_path / "report.json"
    cli = run_cli("scan", volume["segy"], "--picks", volume["picks"], "--format", "json", "--output", output)
    assert cli.returncode in (0, 1), cli.stderr
    report = pitfalls.scan(volume["segy"], picks=[volume["picks"]])
    assert without_timings(report.to_json()) == without_timings(output.read_text(encoding="utf-8"))
    document = json.loads(report.to_json())
    assert document["section"]["geometry"] == "3d"
    skips = [f for f in report.findings if f.id == "pick.cycle-skip"]
    assert skips and skips[0].inlines == (52, 53) and 300 <= skips[0].xlines[0] <= skips[0].xlines[1] <= 339


# --- sections in memory go through the same engine ------------------------------------------
def _same_findings(memory, from_file):
    assert memory.to_records() == from_file.to_records()
    assert len(memory.findings) > 0  # a comparison of two empty reports would prove nothing


def test_numpy_line_with_pick_columns_matches_the_same_data_as_segy(line):
    from_file = pitfalls.scan(line["segy"], picks=line["picks"])
    memory = pitfalls.scan(line["data"], picks=_columns(line["rows"]), dt_ms=DT_MS, coordinates=(line["x"], line["y"]))
    _same_findings(memory, from_file)
    assert [p.horizon for p in memory.picks] == ["Seafloor", "Sand top"]
    assert memory.section.trace_spacing_m == pytest.approx(12.5) and memory.section.spacing_from_headers
    assert memory.section.path == "(in memory)" and re.fullmatch("[0-9a-f]{64}", memory.section.sha256)
    assert any(f.id == "pick.cycle-skip" and f.horizon == "Sand top" for f in memory.findings)
    memory_json, file_json = json.loads(memory.to_json()), json.loads(from_file.to_json())
    with open(os.path.join(ROOT, "pitfalls", "data", "report.schema.json"), encoding="utf-8") as handle:
        jsonschema.validate(memory_json, json.load(handle))
    for document in (memory_json, file_json):
        document.pop("section"), document.pop("detectors")
    assert memory_json == file_json


def test_numpy_volume_matches_the_same_data_as_segy(volume):
    from_file = pitfalls.scan(volume["segy"], picks=volume["picks"])
    table = _columns(volume["rows"])
    nx = len(volume["xlines"])
    x = np.broadcast_to(500000.0 + 12.5 * np.arange(nx), (3, nx))
    y = np.broadcast_to(6000000.0 + 12.5 * np.arange(3)[:, None], (3, nx))
    memory = pitfalls.scan(volume["data"], picks=table, dt_ms=DT_MS, inline_numbers=volume["inlines"],
                           xline_numbers=volume["xlines"], coordinates=(x, y), name="cube in memory")
    _same_findings(memory, from_file)
    assert memory.section.path == "cube in memory" and memory.section.geometry == "3d"


def test_the_array_is_not_changed(line):
    data = line["data"].copy()
    data[5] = np.nan  # a dead trace
    before = data.copy()
    pitfalls.scan(data, picks=_columns(line["rows"]), dt_ms=DT_MS, only="pick_consistency")
    np.testing.assert_array_equal(data, before)


def test_pick_table_as_structured_array_and_dataframe_give_the_same_picks(line):
    rows = line["rows"]
    structured = np.array([(r["horizon"], r["trace"], r["twt_ms"], r["kind"]) for r in rows],
                          dtype=[("horizon", "U20"), ("trace", "i4"), ("twt_ms", "f8"), ("kind", "U10")])
    by_columns = pitfalls.scan(line["data"], picks=_columns(rows), dt_ms=DT_MS, only=["pick_consistency"])
    by_structured = pitfalls.scan(line["data"], picks=structured, dt_ms=DT_MS, only=["pick_consistency"])
    assert by_structured.to_records() == by_columns.to_records()
    pandas = pytest.importorskip("pandas", reason="pandas is not installed; the dict and structured-array tables are tested")
    by_frame = pitfalls.scan(line["data"], picks=pandas.DataFrame(rows), dt_ms=DT_MS, only=["pick_consistency"])
    assert by_frame.to_records() == by_columns.to_records()
    assert pandas.DataFrame(by_frame.to_records())["id"].tolist() == [f.id for f in by_frame.findings]


def test_xarray_line_and_volume(line, volume):
    xarray = pytest.importorskip("xarray", reason="xarray is not installed (optional extra: pip install 'pitfalls[xarray]')")
    twt = DT_MS * np.arange(N_SAMPLES)
    along = xarray.DataArray(line["data"], dims=("trace", "twt"),
                             coords={"trace": np.arange(1, 61), "twt": twt,
                                     "cdp_x": ("trace", line["x"]), "cdp_y": ("trace", line["y"])}, name="line 7")
    from_file = pitfalls.scan(line["segy"], picks=line["picks"])
    memory = pitfalls.scan(along, picks=_columns(line["rows"]))
    _same_findings(memory, from_file)
    assert memory.section.path == "line 7"
    # a volume stored time first, in seconds: the dimensions are found by name, not position
    cube = xarray.DataArray(np.transpose(volume["data"], (2, 0, 1)), dims=("twt_s", "iline", "xline"),
                            coords={"twt_s": twt / 1000.0, "iline": volume["inlines"], "xline": volume["xlines"]})
    report = pitfalls.scan(cube, picks=volume["picks"], only=["pick_consistency"])
    assert report.section.geometry == "3d" and report.section.dt_ms == pytest.approx(DT_MS)
    assert any(f.id == "pick.cycle-skip" and f.inlines == (52, 53) for f in report.findings)


# --- bad input: one error type, one clear line ----------------------------------------------
@pytest.mark.parametrize("make, keywords, fragments", [
    (lambda d: d[0], {}, ["shape (500,)", "(traces, samples)"]),
    (lambda d: d[None, None], {}, ["shape (1, 1, 60, 500)"]),
    (lambda d: d[:, :0], {}, ["shape (60, 0)"]),
    (lambda d: np.full_like(d, np.nan), {}, ["no live samples", "NaN"]),
    (lambda d: d.astype(complex), {}, ["complex"]),
    (lambda d: np.where(np.arange(500) == 7, np.inf, d), {}, ["infinite", "trace index 0, sample 7"]),
    (lambda d: d, {"trace_numbers": np.arange(1, 60)}, ["trace_numbers", "59 number(s) for 60 traces"]),
    (lambda d: d, {"trace_numbers": [1] * 60}, ["trace_numbers", "not strictly increasing"]),
    (lambda d: d, {"trace_numbers": np.arange(60) + 0.5}, ["trace_numbers", "not whole numbers"]),
    (lambda d: d, {"inline_numbers": [1]}, ["inline_numbers", "3-D array"]),
    (lambda d: d, {"dt_ms": None}, ["dt_ms", "missing"]),
    (lambda d: d, {"dt_ms": -4.0}, ["dt_ms", "-4.0", "positive"]),
    (lambda d: d, {"coordinates": (np.zeros(3), np.zeros(3))}, ["coordinates x", "shape (60,)"]),
    (lambda d: d, {"iline_byte": 9}, ["iline_byte", "SEG-Y header option"]),
])
def test_bad_arrays_raise_one_clear_error(line, make, keywords, fragments):
    options = {"dt_ms": DT_MS, **keywords}
    with pytest.raises(pitfalls.PitfallsInputError) as caught:
        pitfalls.scan(make(line["data"]), **options)
    message = str(caught.value)
    assert "\n" not in message
    for fragment in fragments:
        assert fragment in message, message


def test_mismatched_volume_numbers(volume):
    with pytest.raises(pitfalls.PitfallsInputError, match=r"xline_numbers: has 39 number\(s\) for 40 xlines"):
        pitfalls.scan(volume["data"], dt_ms=DT_MS, inline_numbers=volume["inlines"], xline_numbers=volume["xlines"][1:])


@pytest.mark.parametrize("change, fragments", [
    (lambda t: t["trace"].__setitem__(3, 61), ["picks table (rows counted from 0), row 3", "trace 61 is beyond the section (traces 1-60)"]),
    (lambda t: t["trace"].__setitem__(0, 0), ["row 0", "trace is 0"]),
    (lambda t: t["kind"].__setitem__(2, "fault"), ["row 2", "'fault'", "not a known kind"]),
    (lambda t: t["twt_ms"].__setitem__(4, 5000.0), ["row 4", "twt_ms 5000 is outside the traces (0-1996 ms)"]),
    (lambda t: t.pop("horizon"), ["column horizon", "no horizon column"]),
    (lambda t: t["twt_ms"].pop(), ["different lengths", "twt_ms 119"]),
])
def test_bad_pick_tables_name_the_row_from_zero(line, change, fragments):
    table = {key: list(values) for key, values in _columns(line["rows"]).items()}
    change(table)
    with pytest.raises(pitfalls.PitfallsInputError) as caught:
        pitfalls.scan(line["data"], picks=table, dt_ms=DT_MS)
    message = str(caught.value)
    for fragment in fragments:
        assert fragment in message, message


def test_picks_naming_positions_not_in_a_volume(volume):
    table = {key: list(values) for key, values in _columns(volume["rows"]).items()}
    table["xline"][0] = 299
    with pytest.raises(pitfalls.PitfallsInputError, match=r"row 0: inline 51 / xline 299 is not in the volume"):
        pitfalls.scan(volume["data"], picks=table, dt_ms=DT_MS, inline_numbers=volume["inlines"],
                      xline_numbers=volume["xlines"])


@pytest.mark.parametrize("section, fragments", [
    ([[0.0, 1.0]], ["section", "is a list"]),
    (42, ["is a int"]),
])
def test_section_of_the_wrong_kind(section, fragments):
    with pytest.raises(pitfalls.PitfallsInputError) as caught:
        pitfalls.scan(section)
    for fragment in fragments:
        assert fragment in str(caught.value)


def test_array_keywords_with_a_file_are_refused():
    with pytest.raises(pitfalls.PitfallsInputError, match="dt_ms: describes an array, but the section is a SEG-Y file"):
        pitfalls.scan(DEMO_SEGY, dt_ms=4.0)


# --- rules ---------------------------------------------------------------------------------
def test_rules_from_a_mapping_are_checked_and_merged(tmp_path):
    rules = pitfalls.load_rules({"velocity": {"water_velocity_m_s": 1480}, "crosscut.seafloor_temperature_c": 2.5})
    defaults = pitfalls.load_rules()
    assert rules["velocity"]["water_velocity_m_s"] == 1480.0 and isinstance(rules["velocity"]["water_velocity_m_s"], float)
    assert rules["crosscut"]["seafloor_temperature_c"] == 2.5
    assert rules["seafloor"] == defaults["seafloor"]
    with pytest.raises(TypeError):
        rules["velocity"]["water_velocity_m_s"] = 1.0  # read-only
    # the checksum is that of the overrides written as YAML, so a file with that text gives the same
    written = tmp_path / "mine.yaml"
    written.write_text("velocity:\n  water_velocity_m_s: 1480.0\ncrosscut:\n  seafloor_temperature_c: 2.5\n")
    assert pitfalls.load_rules(written).sha256 == rules.sha256
    assert pitfalls.load_rules(written).to_dict() == rules.to_dict()


@pytest.mark.parametrize("overrides, fragments", [
    ({"velocity": {"water_velocity": 1480.0}}, ["rules mapping, velocity.water_velocity: unknown key",
                                                "did you mean velocity.water_velocity_m_s?"]),
    ({"velocity.water_velocity_m_s": 900.0}, ["velocity.water_velocity_m_s", "outside the allowed range"]),
    ({"velocity": 3}, ["velocity", "not a section of keys"]),
    ([("velocity", {})], ["rules mapping", "not a mapping"]),
])
def test_bad_rules_mappings(overrides, fragments):
    with pytest.raises(pitfalls.PitfallsInputError) as caught:
        pitfalls.load_rules(overrides)
    for fragment in fragments:
        assert fragment in str(caught.value), str(caught.value)


def test_rules_change_the_scan_and_are_reported(line):
    report = pitfalls.scan(line["data"], picks=_columns(line["rows"]), dt_ms=DT_MS,
                           rules={"ranking.min_confidence": 1.0}, only="pick_consistency")
    assert all(f.confidence >= 1.0 for f in report.findings)
    assert json.loads(report.to_json())["rules"]["path"] == "rules mapping"


# --- the report object ---------------------------------------------------------------------
def test_report_findings_are_ranked_frozen_records(demo_report):
    import dataclasses
    findings = demo_report.findings
    assert [f.rank for f in findings] == list(range(1, len(findings) + 1))
    with pytest.raises(dataclasses.FrozenInstanceError):
        findings[0].severity = "low"
    with pytest.raises(TypeError):
        findings[0].evidence["injected"] = 1
    assert all(isinstance(f, pitfalls.Finding) for f in findings)


def test_gates(demo_report):
    severities = {f.severity for f in demo_report.findings}
    assert severities == {"high", "medium", "low"}
    assert [demo_report.passes(gate) for gate in pitfalls.GATES] == [False, False, False, True]
    with pytest.raises(pitfalls.PitfallsInputError, match="gate: is 'never'; choose one of high, medium, low, off"):
        demo_report.passes("never")


def test_records_are_plain_and_match_the_json(demo_report):
    records = demo_report.to_records()
    assert records == json.loads(demo_report.to_json())["findings"]
    assert json.loads(json.dumps(records)) == records  # nothing but plain values
    assert set(records[0]) >= {"rank", "id", "severity", "confidence", "score", "horizon", "traces", "twt_ms",
                               "title", "evidence", "advice"}


def test_html_lists_every_finding_in_rank_order_and_the_caution(demo_report):
    page = demo_report._repr_html_()
    rows = re.findall(r"<tr><td>(\d+)</td><td>(\w+)</td><td>([a-z0-9.-]+)</td>", page)
    assert rows == [(str(f.rank), f.severity, f.id) for f in demo_report.findings]
    assert "does not replace review" in page and "OT25-117.sgy" in page


def test_figure_is_a_matplotlib_figure_of_an_array(line):
    pytest.importorskip("matplotlib", reason="matplotlib is the figure extra")
    from matplotlib.figure import Figure
    report = pitfalls.scan(line["data"], picks=_columns(line["rows"]), dt_ms=DT_MS, only="pick_consistency")
    figure = report.figure()
    assert isinstance(figure, Figure)
    axes = figure.axes[0]
    assert axes.get_xlim() == (0.5, 60.5)
    assert {text.get_text().strip().split(" ")[0] for text in axes.texts} >= {"#1"}


def test_explain_matches_the_command_line():
    text = pitfalls.explain("multiple.seafloor")
    assert text.startswith("multiple.seafloor (detector multiples)")
    cli = run_cli("explain", "multiple.seafloor")
    assert " ".join(cli.stdout.split()) == " ".join(text.split())
    assert "multiple.seafloor" in pitfalls.finding_ids()
    with pytest.raises(pitfalls.PitfallsInputError, match="unknown finding id 'multiple.nothing'"):
        pitfalls.explain("multiple.nothing")


# --- the README's examples run as written ----------------------------------------------------
def _readme_examples():
    with open(os.path.join(ROOT, "README.md"), encoding="utf-8") as handle:
        text = handle.read()
    part = text.split("## Use from Python", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```python\n(.*?)```", part, re.S)


def test_readme_examples_run(volume, tmp_path, monkeypatch, capsys):
    on_demo, on_volume = _readme_examples()
    monkeypatch.chdir(ROOT)
    exec(compile(on_demo, "README example on the demo files", "exec"), {})
    printed = capsys.readouterr().out
    assert "<pitfalls.Report demo_data/OT25-117.sgy:" in printed and "What to check:" in printed
    assert "a high finding: look before the hand-over" in printed
    # the volume example names survey.sgy: give it the modelled volume under that name
    shutil.copyfile(volume["segy"], tmp_path / "survey.sgy")
    monkeypatch.chdir(tmp_path)
    exec(compile(on_volume, "README example reading a volume into memory", "exec"), {})
    printed = capsys.readouterr().out
    assert printed.startswith("# pitfalls scan") and "(in memory) (3D, 3 inlines x 40 crosslines" in printed
    assert "Rules: rules mapping" in printed


def test_array_volume_in_worker_processes_matches_one_process(volume):
    """The array source pickles into worker processes; any number of them gives the same report."""
    import pickle

    from pitfalls import engine
    from pitfalls.io.array import ArraySource
    from pitfalls.io.picks import read_pick_file
    rules = pitfalls.load_rules()
    source = ArraySource(volume["data"], dt_ms=DT_MS, fallback_spacing_m=12.5, inline_numbers=volume["inlines"],
                         xline_numbers=volume["xlines"])
    copy = pickle.loads(pickle.dumps(source.reader()))
    np.testing.assert_array_equal(copy.read_block(1, 3).panels[1].data, source.read_block(1, 3).panels[1].data)
    picks = [read_pick_file(volume["picks"])]
    runs = [engine.scan_source(source, picks, rules.to_dict(), rules.path, rules.sha256, engine.select_detectors(None),
                               jobs=jobs, inlines_per_block=1) for jobs in (1, 2)]
    assert [f.rank for f in runs[0].findings] and runs[0].findings == runs[1].findings
