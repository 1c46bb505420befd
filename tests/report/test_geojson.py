"""Findings as GeoJSON: valid RFC 7946 objects whose footprints lie inside the survey.

Validity is checked by two registry libraries used only in tests: ``geojson`` (RFC 7946
object rules: closed rings of four or more positions, LineStrings of two or more) and
``shapely`` (geometric validity and containment).
"""
from __future__ import annotations

import json

import geojson
import numpy as np
import pytest
from shapely.geometry import Polygon, shape

from pitfalls.model import Finding
from pitfalls.physics.surfaces import fit_grid_geometry
from pitfalls.report.geojson import SurveyCoordinates, feature_collection, footprint_xy


def rotated_survey(n_inlines=20, n_xlines=30, bin_m=25.0, rotation_deg=25.0):
    angle = np.radians(rotation_deg)
    rows, columns = np.indices((n_inlines, n_xlines), dtype=float)
    x = 431000.0 + bin_m * (columns * np.cos(angle) + rows * np.sin(angle))
    y = 7213000.0 + bin_m * (-columns * np.sin(angle) + rows * np.cos(angle))
    inlines, xlines = np.arange(300, 300 + n_inlines), np.arange(1100, 1100 + n_xlines)
    return SurveyCoordinates("3d", grid=fit_grid_geometry(inlines, xlines, x, y, 12.5), from_headers=True), x, y


def finding(rank, **where):
    return Finding(id="contact.tilted", detector="contacts", severity="medium", confidence=0.7, title="t",
                   advice="a", horizon="GWC", rank=rank, **where)


def test_volume_findings_are_valid_polygons_inside_the_survey():
    survey, x, y = rotated_survey()
    findings = [finding(1, inlines=(305, 310), xlines=(1105, 1120), twt_ms=(1500.0, 1510.0)),
                finding(2, inlines=(300, 300), xlines=(1100, 1100)),  # one bin in the corner
                finding(3, inlines=(300, 319), xlines=(1100, 1129))]  # the whole survey
    collection = feature_collection(findings, survey, "survey.sgy")
    parsed = geojson.loads(json.dumps(collection))
    assert parsed.is_valid, parsed.errors()
    outline = Polygon(np.array(survey.grid.xy(np.array([-0.5, -0.5, 19.5, 19.5]), np.array([-0.5, 29.5, 29.5, -0.5]))).T)
    for feature in collection["features"]:
        polygon = shape(feature["geometry"])
        assert polygon.is_valid and polygon.area > 0
        assert outline.buffer(0.01).contains(polygon)  # corners are written to the centimetre
        ring = np.array(feature["geometry"]["coordinates"][0])
        # RFC 7946 section 3.1.6: the exterior ring is counterclockwise (positive shoelace area).
        assert 0.5 * np.sum(ring[:-1, 0] * ring[1:, 1] - ring[1:, 0] * ring[:-1, 1]) > 0
    # The corner bin is one bin square: 25 m x 25 m.
    assert shape(collection["features"][1]["geometry"]).area == pytest.approx(625.0, abs=0.5)  # corners to the cm
    # The whole-survey footprint is the survey outline.
    assert shape(collection["features"][2]["geometry"]).area == pytest.approx(outline.area, rel=1e-4)
    assert collection["features"][0]["properties"]["inlines"] == [305, 310]
    assert collection["features"][0]["properties"]["rank"] == 1


def test_footprint_extent_contains_the_trace_coordinates_it_covers():
    survey, x, y = rotated_survey()
    extent = footprint_xy(finding(1, inlines=(305, 310), xlines=(1105, 1120)), survey)
    covered_x, covered_y = x[5:11, 5:21], y[5:11, 5:21]
    assert extent[0][0] < covered_x.min() and covered_x.max() < extent[1][0]
    assert extent[0][1] < covered_y.min() and covered_y.max() < extent[1][1]


def test_line_findings_are_linestrings_along_their_traces():
    numbers = np.arange(1, 101)
    x = 431000.0 + 12.5 * (numbers - 1)
    y = np.full(100, 7213000.0)
    survey = SurveyCoordinates("2d", trace_numbers=numbers, trace_x_m=x, trace_y_m=y, from_headers=True)
    collection = feature_collection([finding(1, traces=(11, 40)), finding(2, traces=(50, 50))], survey, "line.sgy")
    assert geojson.loads(json.dumps(collection)).is_valid
    line = collection["features"][0]["geometry"]
    assert line["type"] == "LineString"
    assert line["coordinates"][0] == [x[10], y[10]] and line["coordinates"][-1] == [x[39], y[39]]
    assert shape(line).length == pytest.approx(29 * 12.5)
    assert len(collection["features"][1]["geometry"]["coordinates"]) == 2  # a one-trace finding still has two positions


def test_without_coordinates_no_place_is_made_up():
    zeros = np.zeros((4, 5))
    survey = SurveyCoordinates("3d", grid=fit_grid_geometry(np.arange(4), np.arange(5), zeros, zeros, 12.5),
                               from_headers=False)
    collection = feature_collection([finding(1, inlines=(0, 1), xlines=(0, 1))], survey, "survey.sgy")
    assert collection["features"] == [] and collection["findings_without_geometry"] == 1
    assert survey.extent() is None
