"""A modelled 3-D survey scanned end to end: each planted mistake found in map view with its
inline/crossline extent, the genuine contact clean, the spill depth against its analytic value,
and the GeoJSON and map figure written.

The survey (pitfalls.modelling.survey): a seafloor dipping obliquely to the inlines, thin beds
cut by a hydrate base that deepens with the water, and a dome with a flat gas-water contact.
The planted picks are a "contact" following a bed over the crest, a "contact" flat in depth
below the top's spill point, a horizon on the first seafloor multiple, and a horizon that
slides from a bed onto the hydrate base half-way across the survey.
"""
from __future__ import annotations

import json
import subprocess
import sys

import geojson
import numpy as np
import pytest
from shapely.geometry import Polygon, shape

from pitfalls import detectors as registry
from pitfalls.engine import scan
from pitfalls.io.rules import load_rules
from pitfalls.modelling import survey as modelled

ORDER = {"high": 0, "medium": 1, "low": 2}


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    return modelled.write_survey(str(tmp_path_factory.mktemp("survey")))


@pytest.fixture(scope="module")
def result(written):
    rules, path, digest = load_rules(written["rules"], registry.rule_keys())
    return scan(written["segy"], [written["picks"]], rules, path, digest)


def of(result, finding_id, horizon):
    return [f for f in result.findings if f.id == finding_id and f.horizon == horizon]


def at_least(findings, severity):
    return [f for f in findings if ORDER[f.severity] <= ORDER[severity]]


def test_every_detector_ran(result):
    assert [run.name for run in result.detectors if run.status != "ran"] == []


def test_genuine_picks_get_nothing_above_low(result):
    for name in (modelled.TOP_PICK, modelled.CONTACT_PICK, modelled.DEEP_PICK):
        above = at_least([f for f in result.findings if f.horizon == name], "medium")
        assert above == [], [(f.id, f.severity, f.title) for f in above]


def test_contact_following_a_bed_is_conformable_in_map_view(result, written):
    found = of(result, "contact.conformable", modelled.FALSE_CONTACT_PICK)
    assert [f.severity for f in found] == ["high"]
    evidence = found[0].evidence
    assert evidence["judged_in"] == "map view"
    assert evidence["thickness_spread_share"] < 0.35
    # Its footprint is the crest area it was picked over (the shallowest 35 % of the top), within two bins.
    survey = written["survey"]
    top = survey.surface_twt_ms[survey.reservoir]
    rows, columns = np.nonzero(top < np.nanpercentile(top, 35))
    inlines, xlines = survey.geometry.inline_numbers, survey.geometry.xline_numbers
    assert abs(found[0].inlines[0] - inlines[rows.min()]) <= 2 and abs(found[0].inlines[1] - inlines[rows.max()]) <= 2
    assert abs(found[0].xlines[0] - xlines[columns.min()]) <= 2 and abs(found[0].xlines[1] - xlines[columns.max()]) <= 2


def test_contact_below_spill_is_outside_closure_at_the_analytic_spill_depth(result, written):
    """The reservoir top is a dome on a regional dip whose depth rises monotonically towards its crest, so
    its spill depth is the shallowest depth on the border of the mapped top (analytic). The scan measures
    it on the top converted through the default velocity function, which the survey's velocities follow
    to within a few per cent: 10 m is allowed."""
    found = of(result, "contact.outside-closure", modelled.DEEP_CONTACT_PICK)
    assert [f.severity for f in found] == ["high"]
    top = written["survey"].surface_depth_m[written["survey"].reservoir]
    border_minimum = float(np.concatenate((top[0], top[-1], top[:, 0], top[:, -1])).min())
    assert found[0].evidence["spill_depth_m"] == pytest.approx(border_minimum, abs=10.0)
    assert found[0].evidence["below_spill_m"] > 20.0
    assert found[0].evidence["reservoir_top_named"] is True


def test_multiple_found_with_map_view_dip(result):
    """Seafloor 0.06 m/m east and 0.045 m/m north: true dip atan(0.075) = 4.29 deg towards azimuth
    atan2(0.06, 0.045) = 53.1 deg (analytic); the first multiple's time dips twice as fast."""
    found = at_least(of(result, "multiple.seafloor", modelled.MULTIPLE_PICK), "high")
    assert found
    evidence = found[0].evidence
    assert evidence["dip_ratio_map"] == pytest.approx(2.0, abs=0.3)
    assert evidence["seafloor_true_dip_deg"] == pytest.approx(4.29, abs=0.8)
    assert evidence["seafloor_dip_azimuth_deg"] == pytest.approx(53.1, abs=6.0)
    assert found[0].xlines[0] >= 5001 and found[0].xlines[1] <= 5029  # crossline numbers, not positions


def test_slide_onto_the_hydrate_base_and_the_boundary_reported_once(result):
    slide = at_least(of(result, "crosscut.pick-follows-boundary", modelled.SLIDE_PICK), "high")
    assert slide
    assert 5013 <= slide[0].xlines[0] <= 5018  # leaves the bed half-way across (crossline 5015)
    boundaries = [f for f in result.findings if f.id == "crosscut.hydrate-like" and f.horizon is None]
    assert len(boundaries) == 1
    assert boundaries[0].evidence["extent_inlines"] >= 15
    assert ORDER[boundaries[0].severity] <= ORDER["medium"]


def test_geojson_and_map_written_from_the_command_line(written, tmp_path):
    geo, figure = tmp_path / "findings.geojson", tmp_path / "map.png"
    run = subprocess.run([sys.executable, "-m", "pitfalls", "scan", written["segy"], "--picks", written["picks"],
                          "--rules", written["rules"], "--geojson", str(geo), "--map", str(figure), "--quiet",
                          "--gate", "off"], capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr
    collection = json.loads(geo.read_text())
    assert geojson.loads(geo.read_text()).is_valid
    assert collection["features"]
    survey = written["survey"].geometry
    x, y = survey.xy()
    half = survey.bin_m / 2 + 1e-6
    outline = Polygon([(x.min() - half, y.min() - half), (x.max() + half, y.min() - half),
                       (x.max() + half, y.max() + half), (x.min() - half, y.max() + half)])
    for feature in collection["features"]:
        assert outline.contains(shape(feature["geometry"])) or outline.buffer(1e-3).contains(shape(feature["geometry"]))
    assert figure.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
