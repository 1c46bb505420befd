"""Findings as GeoJSON (RFC 7946) in the survey's CDP X/Y, to lay beside well and licence maps.

A 3-D finding becomes a Polygon around its inline/crossline footprint (the outer edges of the
bins, so a finding on one inline still has an area); a 2-D finding becomes a LineString along
its traces. Properties: rank, id, severity, horizon, title, the line ranges and two-way times.

SEG-Y carries no coordinate reference system, and RFC 7946 assumes longitude/latitude on
WGS 84. The coordinates written here are the file's projected CDP X/Y (scalar applied), so the
collection says so in a ``coordinate_units`` member (RFC 7946 section 7.1 keeps ``coordinates`` out of a FeatureCollection); a GIS must be told the survey's projected CRS
when the layer is loaded (the README says how).

References
----------
.. [1] Butler, H., Daly, M., Doyle, A., Gillies, S., Hagen, S., and Schaub, T., 2016,
       The GeoJSON Format, IETF RFC 7946. (sections 3.1.4, 3.1.6, 3.2, 3.3, 6.1)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from pitfalls.model import Finding
from pitfalls.physics.surfaces import GridGeometry

MAX_LINE_VERTICES = 500
"""A 2-D LineString keeps at most this many trace positions (evenly chosen, ends kept)."""


@dataclass(frozen=True)
class SurveyCoordinates:
    """Where the section's traces lie on the map, for footprints and map figures."""

    geometry: str
    """``2d`` or ``3d``."""
    grid: GridGeometry | None = None
    """3-D: the inline/crossline grid fitted to CDP X/Y."""
    trace_numbers: np.ndarray | None = None
    """2-D: the 1-based trace numbers, shape (n_traces,)."""
    trace_x_m: np.ndarray | None = None
    """2-D: CDP X of each trace, scalar applied; NaN where unknown."""
    trace_y_m: np.ndarray | None = None
    from_headers: bool = False
    """True when the coordinates come from the trace headers (False: none usable)."""

    def extent(self) -> tuple[tuple[float, float], tuple[float, float]] | None:
        """((x_min, y_min), (x_max, y_max)) of the survey, or None without coordinates."""
        if not self.from_headers:
            return None
        if self.geometry == "3d" and self.grid is not None:
            n_i, n_j = len(self.grid.inline_numbers), len(self.grid.xline_numbers)
            xs, ys = self.grid.xy(np.array([-0.5, -0.5, n_i - 0.5, n_i - 0.5]), np.array([-0.5, n_j - 0.5, -0.5, n_j - 0.5]))
        else:
            xs, ys = self.trace_x_m, self.trace_y_m
        return (float(np.nanmin(xs)), float(np.nanmin(ys))), (float(np.nanmax(xs)), float(np.nanmax(ys)))


def finding_geometry(finding: Finding, survey: SurveyCoordinates) -> dict[str, Any] | None:
    """The GeoJSON geometry of one finding's footprint, or None when it has no place on the map."""
    if not survey.from_headers:
        return None
    if survey.geometry == "3d":
        if survey.grid is None or finding.inlines is None or finding.xlines is None:
            return None
        return _footprint_polygon(finding.inlines, finding.xlines, survey.grid)
    if finding.traces is None or survey.trace_numbers is None:
        return None
    return _trace_line(finding.traces, survey)


def footprint_xy(finding: Finding, survey: SurveyCoordinates) -> list[list[float]] | None:
    """``[[x_min, y_min], [x_max, y_max]]`` of a finding's footprint, or None without coordinates."""
    geometry = finding_geometry(finding, survey)
    if geometry is None:
        return None
    points = np.array(geometry["coordinates"][0] if geometry["type"] == "Polygon" else geometry["coordinates"], dtype=float)
    return [[float(points[:, 0].min()), float(points[:, 1].min())], [float(points[:, 0].max()), float(points[:, 1].max())]]


def _footprint_polygon(inlines: tuple[int, int], xlines: tuple[int, int], grid: GridGeometry) -> dict[str, Any]:
    i0, j0 = grid.index_of(inlines[0], xlines[0])
    i1, j1 = grid.index_of(inlines[1], xlines[1])
    i_low, i_high = min(i0, i1) - 0.5, max(i0, i1) + 0.5
    j_low, j_high = min(j0, j1) - 0.5, max(j0, j1) + 0.5
    corners_i = np.array([i_low, i_low, i_high, i_high, i_low])
    corners_j = np.array([j_low, j_high, j_high, j_low, j_low])
    xs, ys = grid.xy(corners_i, corners_j)
    ring = [[round(float(x), 2), round(float(y), 2)] for x, y in zip(xs, ys)]  # centimetres
    if _signed_area(ring) < 0:  # RFC 7946 section 3.1.6: exterior rings counterclockwise
        ring.reverse()
    return {"type": "Polygon", "coordinates": [ring]}


def _signed_area(ring: Sequence[Sequence[float]]) -> float:
    """Shoelace formula; positive for a counterclockwise ring."""
    points = np.asarray(ring, dtype=float)
    x, y = points[:-1, 0], points[:-1, 1]
    x_next, y_next = points[1:, 0], points[1:, 1]
    return 0.5 * float(np.sum(x * y_next - x_next * y))


def _trace_line(traces: tuple[int, int], survey: SurveyCoordinates) -> dict[str, Any] | None:
    numbers = np.asarray(survey.trace_numbers)
    chosen = np.flatnonzero((numbers >= traces[0]) & (numbers <= traces[1]))
    x = np.asarray(survey.trace_x_m)[chosen]
    y = np.asarray(survey.trace_y_m)[chosen]
    known = np.isfinite(x) & np.isfinite(y)
    x, y = x[known], y[known]
    if x.size == 0:
        return None
    if x.size > MAX_LINE_VERTICES:
        keep = np.unique(np.linspace(0, x.size - 1, MAX_LINE_VERTICES).round().astype(int))
        x, y = x[keep], y[keep]
    points = [[float(a), float(b)] for a, b in zip(x, y)]
    if len(points) == 1:  # a LineString needs two positions (RFC 7946 section 3.1.4)
        points.append(list(points[0]))
    return {"type": "LineString", "coordinates": points}


def feature_collection(findings: Sequence[Finding], survey: SurveyCoordinates, section_path: str) -> dict[str, Any]:
    """Every finding with a place on the map as a Feature, ranked order kept.

    Findings without a footprint (no coordinates for their traces) are counted in
    ``findings_without_geometry`` rather than given a made-up place.
    """
    features = []
    skipped = 0
    for finding in findings:
        geometry = finding_geometry(finding, survey)
        if geometry is None:
            skipped += 1
            continue
        features.append({
            "type": "Feature",
            "id": f"{finding.rank}",
            "geometry": geometry,
            "properties": {
                "rank": finding.rank, "id": finding.id, "severity": finding.severity, "horizon": finding.horizon,
                "title": finding.title, "traces": _pair(finding.traces), "inlines": _pair(finding.inlines),
                "xlines": _pair(finding.xlines), "twt_ms": _pair(finding.twt_ms),
            },
        })
    return {
        "type": "FeatureCollection",
        "coordinate_units": ("projected CDP X/Y of the SEG-Y trace headers, scalar applied, in the survey's own "
                        "units; no CRS is stored in SEG-Y: assign the survey's projected CRS when loading"),
        "section": section_path,
        "findings_without_geometry": skipped,
        "features": features,
    }


def _pair(value: tuple | None) -> list | None:
    return None if value is None else [value[0], value[1]]
