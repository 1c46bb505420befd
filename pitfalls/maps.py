"""Map-view checks of a 3-D survey: the picks judged as surfaces, after every inline was scanned.

The detectors see one inline at a time; some questions are map questions. Once the engine has
read the whole volume it hands this module a :class:`SurveyView`: every horizon gridded on the
inline/crossline grid (gaps kept as gaps), the seafloor map every inline was measured
against, the grid's place on the map (fitted to CDP X/Y, or a square grid of the fallback
spacing), and the velocity function. From it:

* **Contacts** (detector ``contacts``). A plane is fitted to each picked contact in depth: its
  tilt and tilt azimuth. The structure it sits in is the reservoir top the rule
  ``contacts.reservoir_top`` names, or else the nearest picked horizon above it; the plane of
  that horizon under the contact gives the structural dip and its azimuth.

  - ``contact.conformable`` when the contact keeps a constant distance below that horizon
    across its map: the spread of the interval is at most ``maps.conformable_max_residual_share``
    of the horizon's own depth spread under the contact (which must reach
    ``maps.conformable_min_relief_m``). A contact that copies the structure in every direction
    is a bed; a flat contact under a structure has an interval as variable as the structure.
  - ``contact.tilted`` when the tilt exceeds ``max_depth_tilt_m_per_km`` and the depth change
    across the contact is at least ``min_depth_change_m``; graded by the potentiometric
    gradient flowing water would need (Hubbert 1953), as on a line, and low when the contact
    is flat in time (the tilt then rests on the velocity function alone).
  - ``contact.outside-closure`` from the reservoir top's map: the crest is the shallowest top
    position under the contact, the spill depth the minimax depth of every path from it to
    the edge of the mapped top (:func:`pitfalls.physics.closure.spill_point`). Contact
    positions deeper than the spill depth, outside the closing contour, or where the top lies
    below the contact (each by more than ``closure_tolerance_m``) are outside. Only a named top
    gives a finding above low: the nearest bed above a contact need not be its trap.

  On a volume the contacts detector leaves tilt and closure to this stage (a tilt seen along
  one inline, or a spill point that is only the lowest point of one inline, is not the answer).
* **Multiples** (detector ``multiples``). A horizon the inline scans found on a seafloor
  multiple gets the map-view evidence: the seafloor's true dip and its azimuth (from the
  seafloor map's gradient in both grid directions), the pick's dip azimuth, and the dip ratio
  measured in map view (the pick's time gradient projected on the seafloor's, about n for the
  n-bounce multiple).
* **Boundaries** (detector ``crosscut``). A seafloor-parallel boundary found on neighbouring
  inlines is one event: the inline scans' findings are joined into one with its inline and
  crossline extent, its area and the water depths under it.

References
----------
.. [1] Hubbert, M. K., 1953, Entrapment of petroleum under hydrodynamic conditions, AAPG
       Bulletin 37(8), 1954-2026. (from memory)
.. [2] Barnes, R., Lehman, C., and Mulla, D., 2014, Priority-flood: An optimal
       depression-filling and watershed-labeling algorithm for digital elevation models,
       Computers & Geosciences 62, 117-127. (from memory)
"""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any, Mapping, Sequence

import numpy as np

from pitfalls.detectors.contacts import named_reservoir_top
from pitfalls.model import Finding, Horizon
from pitfalls.physics.closure import spill_point
from pitfalls.physics.hydrodynamics import hubbert_head_gradient_m_per_km, tilt_angle_deg
from pitfalls.physics.surfaces import (GridGeometry, PlaneFit, azimuth_difference_deg, fit_grid_geometry, fit_plane,
                                      surface_dip)
from pitfalls.physics.velocity import VelocityModel

JUDGED_IN = "map view"


@dataclass(frozen=True)
class SurveyView:
    """Everything the map-view checks need, for one 3-D volume."""

    grid: GridGeometry
    seafloor_twt_ms: np.ndarray
    """(n_inlines, n_xlines) the seafloor every inline was measured against, NaN where unknown."""
    horizons: tuple[Horizon, ...]
    velocity: VelocityModel

    def horizon(self, name: str) -> Horizon | None:
        return next((h for h in self.horizons if h.name == name), None)

    def depth_m(self, twt_ms: np.ndarray) -> np.ndarray:
        """Depth below sea level of a time map through the scan's velocity function."""
        with np.errstate(invalid="ignore"):
            return self.velocity.depth_m(twt_ms, self.seafloor_twt_ms)

    def xy(self) -> tuple[np.ndarray, np.ndarray]:
        """Map coordinates of every grid position, each (n_inlines, n_xlines)."""
        rows, columns = np.indices((len(self.grid.inline_numbers), len(self.grid.xline_numbers)))
        return self.grid.xy(rows, columns)


def judge_survey(view: SurveyView, rules: Mapping[str, Any], detectors: Sequence[str],
                 texts: Mapping[str, Mapping[str, str]]) -> list[Finding]:
    """The map-view findings of the named detectors (``contacts`` is the only one that adds findings).

    ``texts`` maps a detector name to its advice texts by kind (the detectors' ``ADVICE``).
    """
    findings: list[Finding] = []
    if "contacts" in detectors:
        settings = rules["contacts"]
        for contact in view.horizons:
            if contact.kind == "contact" and contact.n_points >= int(settings["min_contact_traces"]):
                findings.extend(judge_contact(view, contact, settings, rules["maps"], texts.get("contacts", {})))
    return findings


# --- contacts ----------------------------------------------------------------------------

named_top = named_reservoir_top
"""The reservoir top the rule ``contacts.reservoir_top`` names for a contact (shared with the inline check)."""


def _nearest_above(view: SurveyView, contact: Horizon) -> Horizon | None:
    """The picked horizon with the smallest positive median time above the contact where both exist."""
    best, best_gap = None, np.inf
    for horizon in view.horizons:
        if horizon.kind != "horizon" or horizon.name == contact.name:
            continue
        both = np.isfinite(horizon.twt_ms) & np.isfinite(contact.twt_ms)
        if np.count_nonzero(both) < 3:
            continue
        gap = float(np.median(contact.twt_ms[both] - horizon.twt_ms[both]))
        if 0 < gap < best_gap:
            best, best_gap = horizon, gap
    return best


def judge_contact(view: SurveyView, contact: Horizon, settings: Mapping[str, Any],
                  maps_settings: Mapping[str, Any], advice: Mapping[str, str]) -> list[Finding]:
    """Tilt, conformity and closure of one picked contact in map view."""
    x_m, y_m = view.xy()
    depth = view.depth_m(contact.twt_ms)
    picked = np.isfinite(depth)
    try:
        plane = fit_plane(x_m[picked], y_m[picked], depth[picked])
    except ValueError:
        return []  # all points on one line: a 2-D question, answered by the inline scan
    rows, columns = np.nonzero(picked)
    place = {
        "inlines": (int(view.grid.inline_numbers[rows.min()]), int(view.grid.inline_numbers[rows.max()])),
        "xlines": (int(view.grid.xline_numbers[columns.min()]), int(view.grid.xline_numbers[columns.max()])),
        "twt_ms": (float(np.nanmin(contact.twt_ms)), float(np.nanmax(contact.twt_ms))),
    }
    rule_top = named_top(contact.name, str(settings.get("reservoir_top", "")))
    top = view.horizon(rule_top) if rule_top not in (None, "nearest-above") else None
    known_top = top is not None and top.kind == "horizon"
    structure = top if known_top else _nearest_above(view, contact)
    base = {
        "judged_in": JUDGED_IN,
        "contact_points": int(np.count_nonzero(picked)),
        "depth_tilt_m_per_km": plane.tilt_per_km,
        "depth_tilt_deg": float(tilt_angle_deg(plane.tilt_per_km)),
        "tilt_azimuth_deg": plane.azimuth_deg,
        "depth_residual_rms_m": plane.residual_rms,
        "bin_sizes_m": list(view.grid.bin_sizes_m),
        "coordinates_from_headers": view.grid.from_headers,
    }
    findings: list[Finding] = []
    conformable = None
    if structure is not None:
        conformable = _conformable(view, contact, structure, known_top, plane, base, place, maps_settings, advice)
        if conformable is not None:
            findings.append(conformable)
    tilt = _tilt(contact, plane, depth, base, place, settings, advice)
    closure = _closure(view, contact, top if known_top else structure, known_top, depth, base, place, settings, advice)
    consequences = [f for f in (tilt, closure) if f is not None]
    if conformable is not None and conformable.severity == "high":
        consequences = [_explained_by_structure(f) for f in consequences]
    return findings + consequences


def _explained_by_structure(finding: Finding) -> Finding:
    severity = "medium" if finding.severity == "high" else finding.severity
    return replace(finding, severity=severity,
                   advice="This follows from the pick tracking a bed (see contact.conformable): settle that first. "
                          + finding.advice,
                   evidence={**finding.evidence, "explained_by": "contact.conformable"})


def _conformable(view: SurveyView, contact: Horizon, structure: Horizon, known_top: bool, plane: PlaneFit,
                 base: dict[str, Any], place: dict[str, Any], maps_settings: Mapping[str, Any],
                 advice: Mapping[str, str]) -> Finding | None:
    """A contact that keeps a constant distance below a horizon over its whole map follows that bed.

    Measured as the spread (standard deviation) of the contact's depth minus the horizon's depth,
    as a share of the spread of the horizon's depth under the contact: near 0 when the contact
    copies the structure, near 1 when it is flat across it. Needs structure to compare against:
    the horizon's depth must vary by ``maps.conformable_min_relief_m`` under the contact.
    """
    x_m, y_m = view.xy()
    structure_depth = view.depth_m(structure.twt_ms)
    contact_depth = view.depth_m(contact.twt_ms)
    under = np.isfinite(structure_depth) & np.isfinite(contact_depth)
    if np.count_nonzero(under) < 3:
        return None
    structure_spread_m = float(np.std(structure_depth[under]))
    if structure_spread_m < float(maps_settings["conformable_min_relief_m"]):
        return None  # no structure under the contact: a flat contact and a flat bed cannot be told apart
    residual_spread_m = float(np.std(contact_depth[under] - structure_depth[under]))
    share = residual_spread_m / structure_spread_m
    limit = float(maps_settings["conformable_max_residual_share"])
    if share > limit:
        return None
    try:
        structure_plane = fit_plane(x_m[under], y_m[under], structure_depth[under])
    except ValueError:
        return None
    evidence = {**base, "structure_horizon": structure.name, "structure_is_named_top": known_top,
                "structure_depth_spread_m": structure_spread_m, "thickness_spread_m": residual_spread_m,
                "thickness_spread_share": share, "max_thickness_spread_share": limit,
                "structure_dip_deg": float(tilt_angle_deg(structure_plane.tilt_per_km)),
                "structure_dip_azimuth_deg": structure_plane.azimuth_deg,
                "azimuth_difference_deg": azimuth_difference_deg(plane.azimuth_deg, structure_plane.azimuth_deg)}
    return Finding(
        id="contact.conformable", detector="contacts", severity="high", confidence=float(1.0 - share / limit),
        title=(f"{contact.name} keeps a constant distance below {structure.name} across its map: the interval "
               f"varies by {residual_spread_m:.1f} m where {structure.name} varies by {structure_spread_m:.1f} m"),
        advice=advice.get("conformable", ""), horizon=contact.name, evidence=evidence, **place)


def _tilt(contact: Horizon, plane: PlaneFit, depth: np.ndarray, base: dict[str, Any], place: dict[str, Any],
          settings: Mapping[str, Any], advice: Mapping[str, str]) -> Finding | None:
    limit = float(settings["max_depth_tilt_m_per_km"])
    tilt = plane.tilt_per_km
    depth_change_m = float(np.nanpercentile(depth, 95) - np.nanpercentile(depth, 5))
    if tilt <= limit or depth_change_m < float(settings["min_depth_change_m"]):
        return None
    water = float(settings["water_density_kg_m3"])
    gas = float(abs(hubbert_head_gradient_m_per_km(tilt, water, settings["gas_density_kg_m3"])))
    oil = float(abs(hubbert_head_gradient_m_per_km(tilt, water, settings["oil_density_kg_m3"])))
    plausible = float(settings["max_plausible_head_gradient_m_per_km"])
    time_relief_ms = float(np.nanpercentile(contact.twt_ms, 95) - np.nanpercentile(contact.twt_ms, 5))
    severity = "medium" if oil <= plausible else "high"
    if severity == "medium" and time_relief_ms < float(settings["min_time_relief_ms"]):
        severity = "low"  # flat in time: the depth tilt rests on the velocity function alone
    evidence = {**base, "depth_change_m": depth_change_m, "time_relief_ms": time_relief_ms,
                "head_gradient_gas_m_per_km": gas, "head_gradient_oil_m_per_km": oil,
                "plausible_gas": gas <= plausible, "plausible_oil": oil <= plausible}
    return Finding(
        id="contact.tilted", detector="contacts", severity=severity, confidence=float(tilt / (tilt + limit)),
        title=(f"{contact.name} tilts {tilt:.1f} m/km in depth towards {plane.azimuth_deg:.0f} deg in map view; "
               f"flowing water would need a head gradient of {oil:.1f} m/km under oil, {gas:.1f} m/km under gas"),
        advice=advice.get("tilted", ""), horizon=contact.name, evidence=evidence, **place)


def _closure(view: SurveyView, contact: Horizon, top: Horizon | None, known_top: bool, depth: np.ndarray,
             base: dict[str, Any], place: dict[str, Any], settings: Mapping[str, Any],
             advice: Mapping[str, str]) -> Finding | None:
    if top is None:
        return None
    top_depth = view.depth_m(top.twt_ms)
    under = np.isfinite(top_depth) & np.isfinite(depth)
    if not under.any():
        return None
    crest = tuple(int(v) for v in np.argwhere(under)[np.argmin(top_depth[under])])
    closure = spill_point(top_depth, crest)
    tolerance = float(settings["closure_tolerance_m"])
    picked = np.isfinite(depth)
    below_spill = picked & (depth > closure.spill_depth_m + tolerance)
    top_below = under & (top_depth > depth + tolerance)
    beyond_contour = picked & ~closure.inside & ~below_spill & ~top_below & (depth > closure.spill_depth_m - tolerance)
    outside = below_spill | top_below | beyond_contour
    n_outside = int(np.count_nonzero(outside))
    if n_outside < int(settings["closure_min_traces"]):
        return None
    share = n_outside / int(np.count_nonzero(picked))
    contact_depth_m = float(np.nanmedian(depth))
    excess_m = max(contact_depth_m - closure.spill_depth_m, 0.0)
    severity = "high" if share >= 0.5 else "medium"
    if not known_top:
        severity = "low"
    spill_at = None
    if closure.spill_index is not None:
        spill_at = [int(view.grid.inline_numbers[closure.spill_index[0]]),
                    int(view.grid.xline_numbers[closure.spill_index[1]])]
    evidence = {**base, "reservoir_top": top.name, "reservoir_top_named": known_top,
                "crest_depth_m": closure.crest_depth_m,
                "crest_inline_xline": [int(view.grid.inline_numbers[crest[0]]), int(view.grid.xline_numbers[crest[1]])],
                "spill_depth_m": closure.spill_depth_m, "spill_inline_xline": spill_at,
                "closure_relief_m": closure.relief_m, "closing_area_bins": int(np.count_nonzero(closure.inside)),
                "contact_depth_m_median": contact_depth_m, "below_spill_m": excess_m,
                "outside_points": n_outside, "outside_share": share,
                "below_spill_points": int(np.count_nonzero(below_spill)),
                "top_below_contact_points": int(np.count_nonzero(top_below))}
    qualifier = "" if known_top else " (against the nearest horizon above; no reservoir top is named)"
    return Finding(
        id="contact.outside-closure", detector="contacts", severity=severity,
        confidence=float(max(share, excess_m / (excess_m + tolerance))),
        title=(f"{share:.0%} of {contact.name} lies outside the closure of {top.name} in map view: "
               f"spill at {closure.spill_depth_m:.0f} m, contact at {contact_depth_m:.0f} m{qualifier}"),
        advice=advice.get("outside-closure", ""), horizon=contact.name, evidence=evidence, **place)


# --- multiples -----------------------------------------------------------------------------

def multiple_evidence(view: SurveyView, horizon_name: str, multiplier: int = 2) -> dict[str, Any]:
    """Map-view evidence for a horizon found on the n-bounce seafloor multiple.

    The dip ratio is the least-squares factor between the pick's and the seafloor's time
    gradients where both are known (``sum(g_pick . g_sf) / sum(|g_sf|^2)``): about n on the
    n-bounce multiple of a gently dipping seafloor, about 1 or less for a primary that drapes it.
    The seafloor's true dip comes from the magnitude of its time gradient,
    ``sin(xi) = (v / 2) |grad t|`` (zero-offset time-dip of a plane reflector).
    """
    horizon = view.horizon(horizon_name)
    if horizon is None:
        return {}
    seafloor_dip = surface_dip(view.seafloor_twt_ms, view.grid)
    pick_dip = surface_dip(horizon.twt_ms, view.grid)
    both = (np.isfinite(pick_dip.gradient_x) & np.isfinite(seafloor_dip.gradient_x)
            & np.isfinite(pick_dip.gradient_y) & np.isfinite(seafloor_dip.gradient_y))
    if np.count_nonzero(both) < 3:
        return {}
    gx_s, gy_s = seafloor_dip.gradient_x[both], seafloor_dip.gradient_y[both]
    gx_p, gy_p = pick_dip.gradient_x[both], pick_dip.gradient_y[both]
    power = float(np.sum(gx_s ** 2 + gy_s ** 2))
    evidence: dict[str, Any] = {"map_points": int(np.count_nonzero(both))}
    gradient_s_per_m = np.hypot(gx_s, gy_s) / 1000.0
    sine = np.clip(0.5 * view.velocity.water_velocity_m_s * gradient_s_per_m, 0.0, 1.0)
    evidence["seafloor_true_dip_deg"] = float(np.degrees(np.arcsin(np.median(sine))))
    mean_s = (float(np.mean(gx_s)), float(np.mean(gy_s)))
    mean_p = (float(np.mean(gx_p)), float(np.mean(gy_p)))
    if np.hypot(*mean_s) > 0:
        evidence["seafloor_dip_azimuth_deg"] = float(np.degrees(np.arctan2(*mean_s)) % 360.0)
    if np.hypot(*mean_p) > 0:
        evidence["pick_dip_azimuth_deg"] = float(np.degrees(np.arctan2(*mean_p)) % 360.0)
    if power > 0:
        evidence["dip_ratio_map"] = float(np.sum(gx_p * gx_s + gy_p * gy_s) / power)
    evidence["expected_dip_ratio"] = float(multiplier)
    return evidence


# --- from the scan to the view, and back -----------------------------------------------------

MAP_VIEW_CONTACT_IDS = ("contact.tilted", "contact.outside-closure")
"""On a volume these come from the map view only; the inline scans' versions are dropped."""
BOUNDARY_IDS = ("crosscut.hydrate-like", "crosscut.diagenetic-like")


def survey_view(layout: Any, placed: Any, seafloor_rows: Sequence[np.ndarray], velocity: VelocityModel,
                fallback_spacing_m: float) -> SurveyView:
    """The view of a scanned 3-D volume.

    Parameters
    ----------
    layout : TraceLayout
        The volume's layout: ``grid`` (file trace index per inline/crossline position, -1 where
        missing), ``inline_numbers``, ``xline_numbers``, and ``trace_x``/``trace_y`` (CDP X/Y per
        trace, scalar applied; None when the headers hold none).
    placed : PlacedPicks
        Every horizon as an (n_inlines, n_xlines) grid of times.
    seafloor_rows : sequence of ndarray
        The seafloor time of every inline, in inline order, each (n_xlines,).
    """
    grid = grid_geometry(layout, fallback_spacing_m)
    horizons = tuple(Horizon(name, kind, np.asarray(times, dtype=float))
                     for name, kind, times in zip(placed.names, placed.kinds, placed.grids))
    return SurveyView(grid, np.vstack([np.asarray(row, dtype=float) for row in seafloor_rows]), horizons, velocity)


def grid_geometry(layout: Any, fallback_spacing_m: float) -> GridGeometry:
    """The volume's inline/crossline grid fitted to the CDP X/Y of its traces (``layout.trace_x`` and
    ``trace_y``, scalar applied), or a square grid of the fallback spacing without coordinates."""
    grid_index = np.asarray(layout.grid)
    x_m = np.full(grid_index.shape, np.nan)
    y_m = np.full(grid_index.shape, np.nan)
    trace_x, trace_y = getattr(layout, "trace_x", None), getattr(layout, "trace_y", None)
    present = grid_index >= 0
    if trace_x is not None and trace_y is not None:
        x_m[present] = np.asarray(trace_x, dtype=float)[grid_index[present]]
        y_m[present] = np.asarray(trace_y, dtype=float)[grid_index[present]]
    return fit_grid_geometry(np.asarray(layout.inline_numbers), np.asarray(layout.xline_numbers), x_m, y_m,
                             fallback_spacing_m)


def apply_map_view(view: SurveyView, findings: Sequence[Finding], rules: Mapping[str, Any], detectors: Sequence[str],
                   texts: Mapping[str, Mapping[str, str]]) -> list[Finding]:
    """The inline scans' findings of a volume, with the map view's judgement put in.

    Contact tilt and closure come from the map view; a seafloor-multiple finding gets the
    map-view dip evidence of its horizon; boundary findings get their extent and area, and a
    boundary seen on too few inlines to be a surface is graded low.
    """
    kept: list[Finding] = []
    evidence_cache: dict[str, dict[str, Any]] = {}
    minimum_inlines = int(rules["maps"]["min_boundary_inlines"])
    for finding in findings:
        if "contacts" in detectors and finding.id in MAP_VIEW_CONTACT_IDS:
            continue
        if finding.id == "multiple.seafloor" and finding.horizon is not None:
            multiplier = int(finding.evidence.get("time_multiplier", 2))
            key = f"{finding.horizon}/{multiplier}"
            if key not in evidence_cache:
                evidence_cache[key] = multiple_evidence(view, finding.horizon, multiplier)
            if evidence_cache[key]:
                finding = replace(finding, evidence={**finding.evidence, **evidence_cache[key]})
        if finding.id in BOUNDARY_IDS and finding.horizon is None and finding.inlines is not None:
            finding = _boundary_extent(view, finding, minimum_inlines)
        kept.append(finding)
    judged = judge_survey(view, rules, detectors, texts)
    # A contact the map view finds conformable is judged over its whole map: the inline scans'
    # conformable findings on single inlines of it say the same thing less well.
    conformable_in_map = {f.horizon for f in judged if f.id == "contact.conformable"}
    kept = [f for f in kept if not (f.id == "contact.conformable" and f.horizon in conformable_in_map)]
    return kept + judged


def _boundary_extent(view: SurveyView, finding: Finding, minimum_inlines: int) -> Finding:
    n_inlines = int(np.count_nonzero((view.grid.inline_numbers >= finding.inlines[0])
                                     & (view.grid.inline_numbers <= finding.inlines[1])))
    n_xlines = len(view.grid.xline_numbers) if finding.xlines is None else int(np.count_nonzero(
        (view.grid.xline_numbers >= finding.xlines[0]) & (view.grid.xline_numbers <= finding.xlines[1])))
    bin_inline_m, bin_xline_m = view.grid.bin_sizes_m
    rows = (view.grid.inline_numbers >= finding.inlines[0]) & (view.grid.inline_numbers <= finding.inlines[1])
    columns = (np.ones(len(view.grid.xline_numbers), dtype=bool) if finding.xlines is None else
               (view.grid.xline_numbers >= finding.xlines[0]) & (view.grid.xline_numbers <= finding.xlines[1]))
    seafloor = view.seafloor_twt_ms[np.ix_(rows, columns)]
    water_depth = view.velocity.water_depth_m(seafloor[np.isfinite(seafloor)])
    evidence = {**finding.evidence, "judged_in": JUDGED_IN, "extent_inlines": n_inlines, "extent_xlines": n_xlines,
                "area_km2": n_inlines * n_xlines * bin_inline_m * bin_xline_m / 1e6,
                "survey_inline_share": n_inlines / len(view.grid.inline_numbers)}
    if water_depth.size:
        evidence["water_depth_m_range"] = [float(water_depth.min()), float(water_depth.max())]
    severity = finding.severity
    if n_inlines < minimum_inlines:
        severity = "low"  # seen on too few inlines to be a surface across the survey
        evidence["too_few_inlines"] = True
    return replace(finding, severity=severity, evidence=evidence)


def inline_rules(rules: Mapping[str, Any], n_xlines: int) -> Mapping[str, Any]:
    """The rules an inline of a volume is scanned with: a boundary needs only
    ``maps.inline_extent_share`` of the inline's length on one inline (at most the line rule),
    since its extent is judged across inlines in map view."""
    crosscut = rules.get("crosscut")
    if crosscut is None:
        return rules
    share = float(rules["maps"]["inline_extent_share"])
    shorter = max(2, min(int(crosscut["min_extent_traces"]), int(np.ceil(share * n_xlines))))
    if shorter == int(crosscut["min_extent_traces"]):
        return rules
    return {**rules, "crosscut": {**crosscut, "min_extent_traces": shorter}}
