"""--velocity through the whole scan: a genuine contact flat in depth under a canyon, in rock much
faster than the built-in function, is reported tilted until the true velocity is given; every
report header names the function used.

The earth: water 1500 m/s, 600 m deep with a 200 m canyon, over beds at 2400 m/s folded into an
anticline, and a gas-water contact flat at 1150 m. With the built-in function (1600 m/s + 0.8/s
below the seafloor) the canyon's time pull-down maps into a false depth tilt; with the table
(2400 m/s throughout) the contact is flat in depth (common practice: vertical-ray depth
conversion; REFERENCES item 6b gives the overburden relation).
"""
from __future__ import annotations

import functools
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from pitfalls import detectors
from pitfalls.engine import scan
from pitfalls.io.rules import load_rules
from pitfalls.io.velocity import read_velocity_file
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.segy_writer import write_picks_csv, write_section_segy
from pitfalls.modelling.shapes import anticline, canyon
from pitfalls.report.markdown import render as render_markdown
from pitfalls.report.text import section_lines

N_TRACES = 300
ROCK_VELOCITY_M_S = 2400.0


@functools.lru_cache(maxsize=None)
def modelled():
    seafloor = 600.0 + canyon(N_TRACES, 120, 100, 200.0)
    units = [Unit("overburden", seafloor.copy(), ROCK_VELOCITY_M_S, 2000.0)]
    for k, crest_m in enumerate((900.0, 950.0, 1000.0, 1050.0)):
        units.append(Unit(f"bed{k}", anticline(N_TRACES, 150, crest_m, 150.0, 60), ROCK_VELOCITY_M_S,
                          (2150.0, 2000.0)[k % 2]))
    units.append(Unit("reservoir", anticline(N_TRACES, 150, 1100.0, 150.0, 60), ROCK_VELOCITY_M_S, 2150.0))
    for k, crest_m in enumerate((1200.0, 1250.0, 1300.0, 1350.0)):
        units.append(Unit(f"deep{k}", anticline(N_TRACES, 150, crest_m, 150.0, 60), ROCK_VELOCITY_M_S,
                          (2000.0, 2150.0)[k % 2]))
    gwc = Overprint("gwc", "gas", np.full(N_TRACES, 1150.0), -300.0, units=("reservoir",))
    earth = EarthModel(1500.0, seafloor, tuple(units), (gwc,))
    return model_section(earth, dt_ms=4.0, n_samples=390, snr=8.0, seed=1, name="QT24-305")


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("velocity")
    model = modelled()
    section = folder / "QT24-305.sgy"
    write_section_segy(section, model.section)
    rows = [{"horizon": name, "trace": index + 1, "twt_ms": twt, "kind": kind}
            for name, kind, surface in (("Top Reservoir", "horizon", "reservoir"), ("GWC", "contact", "gwc"))
            for index, twt in enumerate(model.surface_twt_ms[surface])]
    picks = folder / "QT24-305_picks.csv"
    write_picks_csv(picks, rows)
    table = folder / "rock.csv"
    table.write_text(f"# the rock velocity below the seafloor\ntwt_below_seafloor_ms,interval_velocity_m_s\n"
                     f"0,{ROCK_VELOCITY_M_S:g}\n")
    return str(section), str(picks), str(table)


@pytest.fixture(scope="module")
def rules():
    return load_rules(None, detectors.rule_keys())


def contact_ids(result) -> dict[str, str]:
    return {f.id: f.severity for f in result.findings if f.horizon == "GWC"}


def test_velocity_table_removes_the_false_tilt_of_a_genuine_contact(files, rules):
    section, picks, table = files
    built_in = scan(section, [picks], *rules, only=["contacts"])
    assert contact_ids(built_in).get("contact.tilted") in ("high", "medium"), contact_ids(built_in)
    model = read_velocity_file(table, rules[0], "QT24-305")
    measured = scan(section, [picks], *rules, only=["contacts"], velocity=model)
    assert "contact.tilted" not in contact_ids(measured), contact_ids(measured)
    overburden = [f for f in measured.findings if f.id == "contact.overburden-tilt"]
    assert overburden and abs(overburden[0].evidence["depth_tilt_m_per_km"]) < 2.0
    assert measured.velocity is model


def test_reports_name_the_built_in_function_when_no_file_is_given(files, rules):
    section, picks, _ = files
    result = scan(section, [picks], *rules, only=["pick_consistency"])
    velocity_lines = [line for line in section_lines(result) if line.startswith("Velocity:")]
    assert len(velocity_lines) == 1 and "built-in function" in velocity_lines[0]
    assert "Velocity: water 1500 m/s" in render_markdown(result)


def test_cli_names_the_velocity_file_in_every_format(files, tmp_path):
    section, picks, table = files
    base = [sys.executable, "-m", "pitfalls", "scan", section, "--picks", picks, "--only", "contacts",
            "--velocity", table, "--gate", "off"]
    as_json = subprocess.run(base + ["--format", "json"], capture_output=True, text=True, timeout=300)
    assert as_json.returncode == 0, as_json.stderr
    report = json.loads(as_json.stdout)
    assert report["velocity"]["source"] == table and "2400 m/s throughout" in report["velocity"]["function"]
    assert "contact.tilted" not in {f["id"] for f in report["findings"]}
    for fmt in ("terminal", "markdown"):
        done = subprocess.run(base + ["--format", fmt], capture_output=True, text=True, timeout=300,
                              env={"COLUMNS": "400", "PATH": ""})
        assert done.returncode == 0, done.stderr
        text = " ".join(done.stdout.split())
        assert "Velocity: water 1500 m/s, sediment 2400 m/s throughout" in text and "rock.csv" in text


def test_cli_refuses_a_bad_velocity_file_in_one_line(files, tmp_path):
    section, picks, _ = files
    bad = tmp_path / "v.yaml"
    bad.write_text("sediment: {gradient_per_s: 0.8}\n")
    done = subprocess.run([sys.executable, "-m", "pitfalls", "scan", section, "--picks", picks, "--velocity", str(bad)],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 2 and done.stderr.count("\n") == 1 and "Traceback" not in done.stderr
    assert "sediment.seafloor_velocity_m_s" in done.stderr


def test_a_project_section_uses_its_velocity_file(files, tmp_path):
    """``velocity:`` in a project entry reaches that section's scan; a bad one fails only that section."""
    section, picks, table = files
    bad = tmp_path / "bad.yaml"
    bad.write_text("sediment: {gradient_per_s: 0.8}\n")
    copy = tmp_path / "QT24-306.sgy"
    copy.write_bytes(Path(section).read_bytes())
    project = tmp_path / "project.yaml"
    project.write_text(f"sections:\n  - section: {section}\n    picks: [{picks}]\n    velocity: {table}\n"
                       f"  - section: {copy}\n    picks: [{picks}]\n    velocity: {bad}\n")
    done = subprocess.run([sys.executable, "-m", "pitfalls", "project", str(project), "--format", "json", "--gate",
                           "off", "--jobs", "1"], capture_output=True, text=True, timeout=600)
    report = json.loads(done.stdout)
    assert [s["status"] for s in report["sections"]] == ["ran", "failed"], done.stderr
    assert "sediment.seafloor_velocity_m_s" in report["sections"][1]["error"]
    assert "2400 m/s" in report["sections"][0]["velocity"] and report["sections"][1]["velocity"] is None
    assert "contact.tilted" not in {f["id"] for f in report["findings"] if f["horizon"] == "GWC"}
