"""Fluid contacts that follow the strata, tilt, have the wrong polarity or leave the closure.

A hydrocarbon-water contact in static formation water is horizontal in depth, cuts across
the bedding, and, being an impedance increase downward (lighter fluid over water), reflects
with the sign of the seafloor. It lies below the crest and above the spill point of the
reservoir top that traps it. Each pick of kind ``contact`` is measured against these facts:

* tilt: a robust (Theil-Sen) line through the picked times gives the time tilt (ms per trace,
  ms per km); the same line through the depths from the velocity model (water down to the
  seafloor, then the sediment function) gives the depth tilt in m per km.
* ``conformable``: the stratal dip is read from the structure-tensor dip field in windows
  above and below the contact (``stratal_exclude_ms`` to ``stratal_window_ms`` away, so the
  contact's own reflection is left out), kept where the coherence reaches ``min_coherence``.
  Dips are turned into angles with the interval velocity at the contact. Where the strata
  dip by at least ``min_stratal_dip_deg``, the contact runs within the larger of
  ``conformable_max_angle_deg`` and ``conformable_relative_angle`` x the stratal dip of them,
  and the contact itself dips at least half as much as the strata, the pick is parallel to the
  bedding there: probably a stratigraphic reflector, not a fluid contact. Confidence = (share
  of dipping traces where the contact is parallel) x min(1, median coherence of the stratal
  samples / 0.5): on a noisy stack a coherence of 0.5 already gives a dependable dip.
* ``overburden-tilt``: flat in depth (tilt within ``max_depth_tilt_m_per_km``) but with a time
  relief of at least ``min_time_relief_ms``, and the contact time regressed on the seafloor time
  has the slope a flat reflector would have under this overburden, within
  ``overburden_slope_tolerance`` (for uniform sediment the slope is 1 - v_w / v_s). A note,
  not an error: the time tilt is the water's doing. Confidence = 1 - |slope observed - slope
  predicted| / tolerance, floored at 0.
* ``tilted``: depth tilt above ``max_depth_tilt_m_per_km`` and a depth change across the
  contact of at least ``min_depth_change_m``. Evidence gives the potentiometric gradient that a
  Hubbert (1953) hydrodynamic tilt would need with gas and with oil over water; high when even
  oil needs more than ``max_plausible_head_gradient_m_per_km``, medium when oil could do it,
  and low when the contact is flat in time (time relief under ``min_time_relief_ms``), because
  then the depth tilt rests on the velocity model alone. Confidence =
  |tilt| / (|tilt| + max_depth_tilt_m_per_km), one half at the threshold.
* ``polarity``: the sign of the strongest sample within ``polarity_snap_ms`` of the pick on each
  trace against the seafloor's sign. Confidence = share of traces with the reversed sign.
* A contact judged ``conformable`` (high) is following a bed, so its depth tilt and any breach of
  the closure are consequences of that, not further problems: those findings are capped at
  medium and carry ``explained_by: contact.conformable``.
* ``outside-closure``: the nearest picked horizon above the contact is taken as the reservoir
  top. Its crest is found by following the top uphill from its shallowest point over the
  contact's traces to the top of that structure. From the crest the top is
  followed to each side until it rises above the crest or the pick ends; the deepest depth met
  on a side is that side's spill, and the spill point is the shallower of the two sides (the
  deepest closing contour; a side whose pick ends before the top turns up counts its last
  point). Contact traces deeper than the spill point, shallower than the crest, or where the
  top lies below the contact (all by more than ``closure_tolerance_m``) are outside.
  Confidence = max(share of contact traces outside, excess / (excess + tolerance)) with the
  largest excess depth.
* ``unpicked-flat-event``: samples of the dip field with coherence of at least
  ``flat_min_coherence`` whose dip is within ``flat_max_angle_deg`` of flat in time, or of flat
  in depth after the overburden correction (dz/dx = v/2 (p - s) + v_w/2 s, s the seafloor time
  dip), form connected flat patches; samples within ``stratal_exclude_ms`` of any pick and above
  the seafloor are left out. A patch cuts the strata on a trace where the mean dip in both the
  window above and the window below differs from its own by at least ``min_stratal_dip_deg``
  (flat bedding never qualifies). Patches cutting the strata on traces spanning at least
  ``flat_min_length_m`` are reported, longest first, at most ``flat_max_findings``: low, or medium
  when their RMS amplitude is at least ``flat_bright_ratio`` times that of the surrounding window.
  Confidence = median coherence x min(1, length / (2 flat_min_length_m)). The evidence says
  whether the patch sits within ``stratal_exclude_ms`` of n times the seafloor time (n >= 2: a
  seafloor multiple) and of which order.

Depth here is only as good as the rules' velocity model: a velocity anomaly it does not know
(a gas column, a channel fill) shows up as a tilt.

References
----------
.. [1] Hubbert, M. K., 1953, Entrapment of petroleum under hydrodynamic conditions, AAPG
       Bulletin 37(8), 1954-2026. (issue and pages from memory)
.. [2] Bakker, P., 2002, Image structure analysis for seismic interpretation, PhD thesis, Delft
       University of Technology.
.. [3] Sen, P. K., 1968, Estimates of the regression coefficient based on Kendall's tau, Journal
       of the American Statistical Association 63, 1379-1389. (from memory)
"""
from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping

import numpy as np
from scipy.ndimage import gaussian_filter1d, label

from pitfalls.context import Context
from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics.dip import DipField
from pitfalls.physics.hydrodynamics import hubbert_head_gradient_m_per_km, tilt_angle_deg
from pitfalls.physics.robust import theil_sen_slope
from pitfalls.physics.seafloor import amplitude_at
from pitfalls.physics.velocity import VelocityModel

NAME = "contacts"
FAMILY = "contact"
KINDS = {
    "conformable": (
        "The picked contact runs parallel to the dipping strata around it.",
        "A fluid contact cuts across bedding; one that follows it is most likely a stratigraphic reflector, "
        "so the accumulation it was picked to prove may not exist.",
        "Compare the contact with the reflectors just above and below; look for the place where it should cross them.",
    ),
    "overburden-tilt": (
        "The contact is flat in depth; its tilt in time is what the water depth above it predicts.",
        "A time tilt explained by the overburden is not hydrodynamic flow or a miscorrelation; "
        "judging it in time would wrongly reject or re-pick a good contact.",
        "Map the contact in depth; check that the velocity model is the one used for the field.",
    ),
    "tilted": (
        "The contact tilts in depth by more than the rules allow; over a static aquifer a contact is level.",
        "A real tilt needs flowing water (Hubbert 1953) or a change in capillary entry pressure or reservoir "
        "quality along the contact; separate fault compartments with their own contacts, a depth-conversion "
        "(velocity) error or a miscorrelation look the same. Each changes the volume and where a well should go.",
        "Check the depth conversion for a velocity anomaly above; look for faults that could split the contact "
        "into compartments; compare reservoir quality along it; check pressure data for a potentiometric "
        "gradient; re-check the correlation of the flat event across the structure.",
    ),
    "polarity": (
        "The contact reflection has the opposite sign to the seafloor.",
        "Hydrocarbon over water is an impedance increase downward, like the seafloor; a reversed event "
        "is a different boundary or the wrong phase.",
        "Check which phase was picked; consider a hydrate base, a diagenetic front or a lithological boundary instead.",
    ),
    "outside-closure": (
        "The contact runs outside the closure of the reservoir top above it, as far as this line shows the closure.",
        "Fluid cannot stand below the spill point or outside the trap; the volume or the trap is wrong. On a 2-D "
        "line the spill point is only the lowest closing point seen on that line: the structure may spill "
        "elsewhere, deeper or shallower, off the line.",
        "Re-check the reservoir top and its spill point on a map or on crossing lines; check whether the event "
        "belongs to another trap or is not a contact.",
    ),
    "unpicked-flat-event": (
        "A coherent flat event cuts across dipping strata and is not picked.",
        "It may be an unmapped fluid contact or another cross-cutting event (multiple, diagenetic front) to be named.",
        "Look at the event on the section; check its polarity and whether it conforms to a closure.",
    ),
}
RULE_KEYS = {
    "gradient_sigma_samples": (float, 0.5, 10.0),
    "window_sigma_samples": (float, 0.5, 20.0),
    "min_coherence": (float, 0.0, 1.0),
    "stratal_exclude_ms": (float, 0.0, 500.0),
    "stratal_window_ms": (float, 4.0, 2000.0),
    "min_contact_traces": (int, 2, 1000000),
    "min_stratal_dip_deg": (float, 0.0, 45.0),
    "conformable_max_angle_deg": (float, 0.0, 45.0),
    "conformable_relative_angle": (float, 0.0, 1.0),
    "conformable_min_fraction": (float, 0.0, 1.0),
    "conformable_high_fraction": (float, 0.0, 1.0),
    "max_depth_tilt_m_per_km": (float, 0.0, 1000.0),
    "min_depth_change_m": (float, 0.0, 1000.0),
    "min_time_relief_ms": (float, 0.0, 1000.0),
    "overburden_slope_tolerance": (float, 0.0, 1.0),
    "water_density_kg_m3": (float, 900.0, 1300.0),
    "oil_density_kg_m3": (float, 400.0, 1000.0),
    "gas_density_kg_m3": (float, 1.0, 600.0),
    "max_plausible_head_gradient_m_per_km": (float, 0.0, 1000.0),
    "polarity_snap_ms": (float, 0.0, 50.0),
    "polarity_min_fraction": (float, 0.5, 1.0),
    "polarity_high_fraction": (float, 0.5, 1.0),
    "closure_tolerance_m": (float, 0.0, 1000.0),
    "closure_min_traces": (int, 1, 1000000),
    "flat_min_coherence": (float, 0.0, 1.0),
    "flat_max_angle_deg": (float, 0.0, 10.0),
    "flat_min_length_m": (float, 0.0, 1000000.0),
    "flat_bright_ratio": (float, 0.0, 100.0),
    "flat_max_findings": (int, 0, 1000),
}

ADVICE = {
    "conformable": (
        "This pick lies parallel to the beds around it, which a fluid contact does not do. Follow the event "
        "to where the beds above and below change dip: a real contact stays flat there, a bed keeps following "
        "the structure. Check whether it ends against the reservoir top, and whether it is brighter inside the "
        "closure than outside. Until then, treat the accumulation it supports as unproven."
    ),
    "overburden-tilt": (
        "The tilt in time is what the varying water depth predicts for a contact that is flat in depth, so it "
        "needs no flowing water or re-pick. Map it in depth, and make sure the velocity model used here is close "
        "to the one used for the field; a different water or sediment velocity changes the prediction."
    ),
    "tilted": (
        "Converted to depth, this contact is not level. Before accepting a hydrodynamic tilt, look for an "
        "unmodelled velocity anomaly above it (gas, a channel fill, a carbonate build-up), for faults that could "
        "split it into compartments with different contacts, and for changes in reservoir quality that move the "
        "contact through capillary pressure; check the correlation of the flat event across the structure. If it "
        "still tilts, pressure data from wells should show the potentiometric gradient quoted in the evidence; a "
        "gradient above the plausible limit points to a velocity, compartment or picking problem rather than flow."
    ),
    "polarity": (
        "A lighter fluid over water raises impedance downward, so its reflection should have the seafloor's "
        "sign. This one has the opposite sign. Check which phase was picked; if the event really is reversed, "
        "think of a gas-hydrate base, a diagenetic boundary or a bed with lower impedance before calling it a "
        "fluid contact."
    ),
    "outside-closure": (
        "Part of this contact lies where no trap can hold fluid: below the spill point of the reservoir top, "
        "above its crest, or where the top is below it. On a 2-D line the spill point is only the lowest closing "
        "point this line shows; the structure's real spill point may lie off the line. Re-check the reservoir top "
        "pick and its spill point on a map or on neighbouring lines; if both stand, the event is either in another "
        "trap or not a contact, and the volume computed from it is wrong."
    ),
    "unpicked-flat-event": (
        "A coherent flat event cuts across dipping beds here and nobody has picked it. Look at it: a fluid contact "
        "sits inside a closure, is flat in depth and reflects with the seafloor's sign; a multiple repeats a "
        "shallower event's shape; a diagenetic front follows temperature. Name it either way."
    ),
}


def detect(block: Section, context: Context, picks: Picks, rules: Mapping[str, Any]) -> list[Finding]:
    """Judge every picked contact and look for unpicked flat events on one panel."""
    section = block
    settings = rules[NAME]
    velocity = context.velocity
    seafloor = context.seafloor
    seafloor_twt_ms = context.seafloor_filled_twt_ms
    field = context.dip
    interval_velocity_m_s = _interval_velocity_field(section, seafloor_twt_ms, velocity)
    findings: list[Finding] = []
    for contact in picks.of_kind("contact"):
        picked = np.flatnonzero(np.isfinite(contact.twt_ms)
                                & (contact.twt_ms >= section.t0_ms)
                                & (contact.twt_ms <= section.twt_ms[-1]))
        if picked.size < int(settings["min_contact_traces"]):
            continue
        geometry = _ContactGeometry(section, contact, picked, seafloor_twt_ms, velocity)
        conformable = _conformable(section, geometry, field, interval_velocity_m_s, settings)
        consequences = _tilt(section, geometry, settings) + _closure(section, picks, geometry, seafloor_twt_ms,
                                                                      velocity, settings)
        if any(f.severity == "high" for f in conformable):
            consequences = [_explained_by_strata(f) for f in consequences]
        findings.extend(conformable)
        findings.extend(consequences)
        findings.extend(_polarity(section, geometry, seafloor.polarity, settings))
    findings.extend(_unpicked_flat_events(section, picks, field, interval_velocity_m_s, seafloor_twt_ms,
                                          velocity, settings))
    return findings


# --- shared measurements ---------------------------------------------------------------------

def _explained_by_strata(finding: Finding) -> Finding:
    """A tilt or closure breach of a contact that follows the strata is a consequence of that, not a
    second problem: at most medium, and saying so in its evidence."""
    severity = "medium" if finding.severity == "high" else finding.severity
    advice = ("This follows from the pick tracking a bed (see contact.conformable): settle that first. "
              + finding.advice)
    return replace(finding, severity=severity, advice=advice,
                   evidence={**finding.evidence, "explained_by": "contact.conformable"})


def _interval_velocity_field(section: Section, seafloor_twt_ms: np.ndarray, velocity: VelocityModel) -> np.ndarray:
    """Interval velocity at every sample from the rules' model, shape (n_traces, n_samples), float32."""
    below_ms = section.twt_ms[None, :] - seafloor_twt_ms[:, None]
    depth_below_m = velocity.depth_below_seafloor_m(below_ms)
    sediment = velocity.interval_velocity_m_s(depth_below_m)
    return np.where(below_ms > 0, sediment, velocity.water_velocity_m_s).astype(np.float32)


def _angle_deg(dip_ms_per_trace: np.ndarray, interval_velocity_m_s: np.ndarray, trace_spacing_m: float) -> np.ndarray:
    """Dip angle of a time dip seen through the local interval velocity: atan((dt/dx) v / 2)."""
    slope_m_per_m = dip_ms_per_trace / 1000.0 * interval_velocity_m_s / 2.0 / trace_spacing_m
    return np.degrees(np.arctan(slope_m_per_m))


def _theil_sen(x: np.ndarray, y: np.ndarray) -> float:
    """Theil-Sen slope (Sen 1968), robust to outlying picks; 0 when x does not vary."""
    if np.ptp(x) == 0:
        return 0.0
    return theil_sen_slope(x, y)


def _numbers(section: Section, first_index: int, last_index: int) -> tuple[int, int]:
    return int(section.trace_numbers[first_index]), int(section.trace_numbers[last_index])


class _ContactGeometry:
    """The contact's picked traces, times, depths and tilts."""

    def __init__(self, section: Section, contact: Horizon, picked: np.ndarray, seafloor_twt_ms: np.ndarray,
                 velocity: VelocityModel) -> None:
        self.contact = contact
        self.velocity = velocity
        self.indices = picked
        self.twt_ms = contact.twt_ms[picked].astype(float)
        self.seafloor_twt_ms = seafloor_twt_ms[picked]
        self.depth_m = velocity.depth_m(self.twt_ms, self.seafloor_twt_ms)
        self.distance_km = picked * section.trace_spacing_m / 1000.0
        self.extent_km = float(np.ptp(self.distance_km))
        self.time_tilt_ms_per_trace = _theil_sen(picked.astype(float), self.twt_ms)
        self.time_tilt_ms_per_km = _theil_sen(self.distance_km, self.twt_ms)
        self.depth_tilt_m_per_km = _theil_sen(self.distance_km, self.depth_m)
        self.time_relief_ms = float(np.percentile(self.twt_ms, 95) - np.percentile(self.twt_ms, 5))
        self.interval_velocity_m_s = velocity.interval_velocity_m_s(
            velocity.depth_below_seafloor_m(self.twt_ms - self.seafloor_twt_ms))

    @property
    def traces(self) -> tuple[int, int]:
        return int(self.indices[0]), int(self.indices[-1])

    @property
    def twt_range_ms(self) -> tuple[float, float]:
        return float(self.twt_ms.min()), float(self.twt_ms.max())


# --- contact.conformable ---------------------------------------------------------------------

def _stratal_dip(section: Section, geometry: _ContactGeometry, field: DipField,
                 settings: Mapping[str, Any]) -> tuple[np.ndarray, np.ndarray]:
    """Coherence-weighted mean dip (samples per trace) in the windows above and below the contact
    on each picked trace, excluding the contact's own samples; NaN where no sample qualifies.
    Also returns the median coherence of the samples used per trace."""
    exclude = int(np.ceil(settings["stratal_exclude_ms"] / section.dt_ms))
    reach = max(exclude + 1, int(round(settings["stratal_window_ms"] / section.dt_ms)))
    offsets = np.concatenate((np.arange(-reach, -exclude + 1), np.arange(exclude, reach + 1)))
    centre = np.rint(section.sample_of(geometry.twt_ms)).astype(int)
    rows = geometry.indices[:, None]
    columns = centre[:, None] + offsets[None, :]
    inside = (columns >= 0) & (columns < section.n_samples)
    columns = np.clip(columns, 0, section.n_samples - 1)
    below_seafloor = section.twt_ms[columns] > geometry.seafloor_twt_ms[:, None]
    coherence = field.coherence[rows, columns]
    dip = field.dip_samples_per_trace[rows, columns]
    use = inside & below_seafloor & (coherence >= settings["min_coherence"]) & np.isfinite(dip)
    weight = np.where(use, coherence, 0.0)
    total = weight.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_dip = np.where(total > 0, (weight * np.where(use, dip, 0.0)).sum(axis=1) / total, np.nan)
    median_coherence = np.array([np.median(c[u]) if u.any() else np.nan for c, u in zip(coherence, use)])
    return mean_dip, median_coherence


def _conformable(section: Section, geometry: _ContactGeometry, field: DipField, interval_velocity_m_s: np.ndarray,
                 settings: Mapping[str, Any]) -> list[Finding]:
    stratal_dip_samples, stratal_coherence = _stratal_dip(section, geometry, field, settings)
    stratal_ms_per_trace = stratal_dip_samples * section.dt_ms
    smoothed = gaussian_filter1d(geometry.twt_ms, float(settings["window_sigma_samples"]), mode="nearest")
    contact_ms_per_trace = np.gradient(smoothed, geometry.indices.astype(float)) if geometry.indices.size > 1 \
        else np.zeros(1)
    stratal_deg = _angle_deg(stratal_ms_per_trace, geometry.interval_velocity_m_s, section.trace_spacing_m)
    contact_deg = _angle_deg(contact_ms_per_trace, geometry.interval_velocity_m_s, section.trace_spacing_m)
    measured = np.isfinite(stratal_deg)
    if not measured.any():
        return []
    dipping = measured & (np.abs(stratal_deg) >= settings["min_stratal_dip_deg"])
    dipping_fraction = float(dipping.sum() / measured.sum())
    if dipping_fraction < settings["conformable_min_fraction"] or not dipping.any():
        return []
    angle_between = np.abs(contact_deg - stratal_deg)
    tolerance_deg = np.maximum(settings["conformable_max_angle_deg"],
                               settings["conformable_relative_angle"] * np.abs(stratal_deg))
    # parallel: close to the strata (absolute or relative tolerance) and dipping itself, so a
    # flat contact in gently dipping strata never counts as parallel to them
    parallel = dipping & (angle_between <= tolerance_deg) & (np.abs(contact_deg) >= 0.5 * np.abs(stratal_deg))
    parallel_fraction = float(parallel.sum() / dipping.sum())
    if parallel_fraction < settings["conformable_min_fraction"]:
        return []
    coherence = float(np.nanmedian(stratal_coherence[dipping]))
    confidence = float(np.clip(parallel_fraction * min(1.0, coherence / 0.5), 0.0, 1.0))
    severity = "high" if parallel_fraction >= settings["conformable_high_fraction"] else "medium"
    first, last = _numbers(section, *geometry.traces)
    evidence = {
        "angle_between_deg_median": float(np.median(angle_between[dipping])),
        "stratal_dip_deg_median": float(np.median(stratal_deg[dipping])),
        "contact_dip_deg_median": float(np.median(contact_deg[dipping])),
        "stratal_dip_ms_per_trace_median": float(np.median(stratal_ms_per_trace[dipping])),
        "contact_dip_ms_per_trace_median": float(np.median(contact_ms_per_trace[dipping])),
        "parallel_fraction": parallel_fraction,
        "dipping_fraction": dipping_fraction,
        "stratal_coherence_median": coherence,
        "interval_velocity_m_s_median": float(np.median(geometry.interval_velocity_m_s)),
    }
    return [Finding(
        id="contact.conformable", detector=NAME, severity=severity, confidence=confidence,
        title=(f"{geometry.contact.name} runs within {evidence['angle_between_deg_median']:.1f} deg of strata "
               f"dipping {abs(evidence['stratal_dip_deg_median']):.1f} deg over {100 * parallel_fraction:.0f} % "
               f"of traces {first}-{last}"),
        advice=ADVICE["conformable"], horizon=geometry.contact.name, traces=(first, last),
        twt_ms=geometry.twt_range_ms, evidence=evidence,
    )]


# --- contact.tilted and contact.overburden-tilt ------------------------------------------------

def _tilt(section: Section, geometry: _ContactGeometry, settings: Mapping[str, Any]) -> list[Finding]:
    first, last = _numbers(section, *geometry.traces)
    tilt_m_per_km = geometry.depth_tilt_m_per_km
    depth_change_m = abs(tilt_m_per_km) * geometry.extent_km
    base = {
        "time_tilt_ms_per_trace": geometry.time_tilt_ms_per_trace,
        "time_tilt_ms_per_km": geometry.time_tilt_ms_per_km,
        "depth_tilt_m_per_km": tilt_m_per_km,
        "depth_tilt_deg": float(tilt_angle_deg(tilt_m_per_km)),
        "depth_change_m": depth_change_m,
        "extent_km": geometry.extent_km,
    }
    limit = float(settings["max_depth_tilt_m_per_km"])
    if abs(tilt_m_per_km) > limit and depth_change_m >= settings["min_depth_change_m"]:
        water = float(settings["water_density_kg_m3"])
        gas_gradient = float(abs(hubbert_head_gradient_m_per_km(tilt_m_per_km, water, settings["gas_density_kg_m3"])))
        oil_gradient = float(abs(hubbert_head_gradient_m_per_km(tilt_m_per_km, water, settings["oil_density_kg_m3"])))
        plausible_limit = float(settings["max_plausible_head_gradient_m_per_km"])
        evidence = dict(base)
        evidence.update({
            "head_gradient_gas_m_per_km": gas_gradient,
            "head_gradient_oil_m_per_km": oil_gradient,
            "plausible_gas": gas_gradient <= plausible_limit,
            "plausible_oil": oil_gradient <= plausible_limit,
            "plausible_head_gradient_limit_m_per_km": plausible_limit,
        })
        severity = "medium" if oil_gradient <= plausible_limit else "high"
        if severity == "medium" and geometry.time_relief_ms < settings["min_time_relief_ms"]:
            severity = "low"  # flat in time: the depth tilt rests on the velocity model alone
        evidence["time_relief_ms"] = geometry.time_relief_ms
        return [Finding(
            id="contact.tilted", detector=NAME, severity=severity,
            confidence=float(abs(tilt_m_per_km) / (abs(tilt_m_per_km) + limit)),
            title=(f"{geometry.contact.name} tilts {abs(tilt_m_per_km):.1f} m/km in depth over traces {first}-{last}; "
                   f"flowing water would need a head gradient of {oil_gradient:.1f} m/km under oil, "
                   f"{gas_gradient:.1f} m/km under gas"),
            advice=ADVICE["tilted"], horizon=geometry.contact.name, traces=(first, last),
            twt_ms=geometry.twt_range_ms, evidence=evidence,
        )]
    if abs(tilt_m_per_km) > limit or geometry.time_relief_ms < settings["min_time_relief_ms"]:
        return []
    seafloor_relief_ms = float(np.ptp(geometry.seafloor_twt_ms))
    if seafloor_relief_ms < settings["min_time_relief_ms"]:
        return []
    return _overburden(section, geometry, base, seafloor_relief_ms, settings)


def _overburden(section: Section, geometry: _ContactGeometry, base: dict[str, Any], seafloor_relief_ms: float,
                settings: Mapping[str, Any]) -> list[Finding]:
    velocity = geometry.velocity
    water_depth_m = velocity.water_depth_m(geometry.seafloor_twt_ms)
    flat_twt_ms = velocity.twt_ms(np.full_like(water_depth_m, np.median(geometry.depth_m)), water_depth_m)
    observed_slope = _theil_sen(geometry.seafloor_twt_ms, geometry.twt_ms)
    predicted_slope = _theil_sen(geometry.seafloor_twt_ms, flat_twt_ms)
    tolerance = float(settings["overburden_slope_tolerance"])
    misfit = abs(observed_slope - predicted_slope)
    if misfit > tolerance:
        return []
    first, last = _numbers(section, *geometry.traces)
    evidence = dict(base)
    evidence.update({
        "time_relief_ms": geometry.time_relief_ms,
        "predicted_time_relief_ms": float(np.percentile(flat_twt_ms, 95) - np.percentile(flat_twt_ms, 5)),
        "predicted_time_tilt_ms_per_km": _theil_sen(geometry.distance_km, flat_twt_ms),
        "seafloor_relief_ms": seafloor_relief_ms,
        "slope_on_seafloor_observed": observed_slope,
        "slope_on_seafloor_predicted": predicted_slope,
        "sediment_velocity_m_s_median": float(np.median(geometry.interval_velocity_m_s)),
    })
    confidence = float(np.clip(1.0 - misfit / tolerance, 0.0, 1.0)) if tolerance > 0 else 1.0
    return [Finding(
        id="contact.overburden-tilt", detector=NAME, severity="low", confidence=confidence,
        title=(f"{geometry.contact.name} is flat in depth; its {geometry.time_relief_ms:.0f} ms of time relief over "
               f"traces {first}-{last} matches the {evidence['predicted_time_relief_ms']:.0f} ms the water depth predicts"),
        advice=ADVICE["overburden-tilt"], horizon=geometry.contact.name, traces=(first, last),
        twt_ms=geometry.twt_range_ms, evidence=evidence,
    )]


# --- contact.polarity --------------------------------------------------------------------------

def _polarity(section: Section, geometry: _ContactGeometry, seafloor_polarity: int,
              settings: Mapping[str, Any]) -> list[Finding]:
    if seafloor_polarity == 0:
        return []
    amplitude = amplitude_at(section, geometry.contact.twt_ms, float(settings["polarity_snap_ms"]))[geometry.indices]
    signed = amplitude[np.isfinite(amplitude) & (amplitude != 0)]
    if signed.size == 0:
        return []
    reversed_fraction = float(np.mean(np.sign(signed) == -seafloor_polarity))
    if reversed_fraction < settings["polarity_min_fraction"]:
        return []
    severity = "high" if reversed_fraction >= settings["polarity_high_fraction"] else "medium"
    first, last = _numbers(section, *geometry.traces)
    return [Finding(
        id="contact.polarity", detector=NAME, severity=severity, confidence=reversed_fraction,
        title=(f"{geometry.contact.name} has the opposite sign to the seafloor on {100 * reversed_fraction:.0f} % "
               f"of traces {first}-{last}"),
        advice=ADVICE["polarity"], horizon=geometry.contact.name, traces=(first, last),
        twt_ms=geometry.twt_range_ms,
        evidence={"reversed_fraction": reversed_fraction, "seafloor_polarity": int(seafloor_polarity),
                  "contact_amplitude_median": float(np.median(signed)), "n_traces_measured": int(signed.size)},
    )]


# --- contact.outside-closure --------------------------------------------------------------------

def _reservoir_top(picks: Picks, geometry: _ContactGeometry) -> Horizon | None:
    """The picked horizon nearest above the contact (median time gap over shared traces)."""
    best, best_gap = None, np.inf
    for horizon in picks.of_kind("horizon"):
        above = horizon.twt_ms[geometry.indices]
        shared = np.isfinite(above)
        if shared.sum() < 2:
            continue
        gap = float(np.median(geometry.twt_ms[shared] - above[shared]))
        if 0.0 < gap < best_gap:
            best, best_gap = horizon, gap
    return best


def _climb(top_depth_m: np.ndarray, index: int) -> int:
    """Follow the top uphill (to shallower depth) from ``index`` to the crest of its structure."""
    while True:
        neighbours = [n for n in (index - 1, index + 1)
                      if 0 <= n < top_depth_m.size and np.isfinite(top_depth_m[n])
                      and top_depth_m[n] < top_depth_m[index]]
        if not neighbours:
            return index
        index = min(neighbours, key=lambda n: top_depth_m[n])


def _spill(top_depth_m: np.ndarray, crest_index: int) -> tuple[int, int]:
    """Indices of each side's spill from the crest: the deepest point before the top rises above the
    crest or its pick ends (a gap ends it too)."""
    crest_depth = top_depth_m[crest_index]
    sides = []
    for step in (-1, 1):
        deepest, index = crest_index, crest_index + step
        while 0 <= index < top_depth_m.size and np.isfinite(top_depth_m[index]) and top_depth_m[index] >= crest_depth:
            if top_depth_m[index] > top_depth_m[deepest]:
                deepest = index
            index += step
        sides.append(deepest)
    return sides[0], sides[1]


def _closure(section: Section, picks: Picks, geometry: _ContactGeometry, seafloor_twt_ms: np.ndarray,
             velocity: VelocityModel, settings: Mapping[str, Any]) -> list[Finding]:
    top = _reservoir_top(picks, geometry)
    if top is None:
        return []
    top_twt_ms = np.asarray(top.twt_ms, dtype=float)
    top_depth_m = velocity.depth_m(top_twt_ms, seafloor_twt_ms)
    under = geometry.indices[np.isfinite(top_depth_m[geometry.indices])]
    if under.size == 0:
        return []
    crest_index = _climb(top_depth_m, int(under[np.argmin(top_depth_m[under])]))
    left, right = _spill(top_depth_m, crest_index)
    spill_index = left if top_depth_m[left] <= top_depth_m[right] else right
    spill_depth_m = float(top_depth_m[spill_index])
    crest_depth_m = float(top_depth_m[crest_index])
    tolerance = float(settings["closure_tolerance_m"])
    below_spill = geometry.depth_m > spill_depth_m + tolerance
    above_crest = geometry.depth_m < crest_depth_m - tolerance
    top_here = top_depth_m[geometry.indices]
    beyond_top = np.isfinite(top_here) & (top_here > geometry.depth_m + tolerance)
    outside = below_spill | above_crest | beyond_top
    if outside.sum() < settings["closure_min_traces"]:
        return []
    excess_m = float(max(np.max(geometry.depth_m - spill_depth_m), np.max(crest_depth_m - geometry.depth_m),
                         np.max(np.where(np.isfinite(top_here), top_here - geometry.depth_m, -np.inf)), 0.0))
    outside_fraction = float(outside.mean())
    confidence = float(np.clip(max(outside_fraction, excess_m / (excess_m + tolerance) if excess_m > 0 else 0.0),
                               0.0, 1.0))
    severity = "high" if (below_spill.sum() + above_crest.sum()) >= settings["closure_min_traces"] else "medium"
    outside_indices = geometry.indices[outside]
    first, last = _numbers(section, int(outside_indices[0]), int(outside_indices[-1]))
    spill_twt_ms = float(top_twt_ms[spill_index])
    evidence = {
        "reservoir_top": top.name,
        "spill_point_twt_ms": spill_twt_ms,
        "spill_point_depth_m": spill_depth_m,
        "spill_point_trace": int(section.trace_numbers[spill_index]),
        "crest_twt_ms": float(top_twt_ms[crest_index]),
        "crest_depth_m": crest_depth_m,
        "crest_trace": int(section.trace_numbers[crest_index]),
        "contact_depth_m_max": float(geometry.depth_m.max()),
        "contact_depth_m_min": float(geometry.depth_m.min()),
        "excess_m_max": excess_m,
        "traces_below_spill": int(below_spill.sum()),
        "traces_above_crest": int(above_crest.sum()),
        "traces_beyond_top": int(beyond_top.sum()),
        "outside_fraction": outside_fraction,
    }
    times = geometry.twt_ms[outside]
    return [Finding(
        id="contact.outside-closure", detector=NAME, severity=severity, confidence=confidence,
        title=(f"{geometry.contact.name} runs outside the closure of {top.name} on {int(outside.sum())} traces "
               f"({first}-{last}); spill point {spill_twt_ms:.0f} ms at trace {evidence['spill_point_trace']}"),
        advice=ADVICE["outside-closure"], horizon=geometry.contact.name, traces=(first, last),
        twt_ms=(float(times.min()), float(times.max())), evidence=evidence,
    )]


# --- contact.unpicked-flat-event ----------------------------------------------------------------

def _window_mean(values: np.ndarray, weights: np.ndarray, start: int, stop: int) -> tuple[np.ndarray, np.ndarray]:
    """Weighted mean along time of ``values`` over samples [t + start, t + stop] and the summed weight,
    for every sample t; windows reaching outside the panel count only their inside part."""
    n_samples = values.shape[1]
    padded_values = np.concatenate((np.zeros((values.shape[0], 1)), np.cumsum(values * weights, axis=1)), axis=1)
    padded_weights = np.concatenate((np.zeros((values.shape[0], 1)), np.cumsum(weights, axis=1)), axis=1)
    t = np.arange(n_samples)
    low = np.clip(t + start, 0, n_samples)
    high = np.clip(t + stop + 1, 0, n_samples)
    total_weight = padded_weights[:, high] - padded_weights[:, low]
    total = padded_values[:, high] - padded_values[:, low]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(total_weight > 0, total / np.where(total_weight > 0, total_weight, 1.0), np.nan)
    return mean, total_weight


def _unpicked_flat_events(section: Section, picks: Picks, field: DipField, interval_velocity_m_s: np.ndarray,
                          seafloor_twt_ms: np.ndarray, velocity: VelocityModel,
                          settings: Mapping[str, Any]) -> list[Finding]:
    if int(settings["flat_max_findings"]) == 0:
        return []
    dt_ms, spacing_m = section.dt_ms, section.trace_spacing_m
    dip_ms_per_trace = field.dip_samples_per_trace * dt_ms
    time_deg = _angle_deg(dip_ms_per_trace, interval_velocity_m_s, spacing_m)
    if section.n_traces > 1:
        seafloor_dip_ms_per_trace = np.gradient(gaussian_filter1d(seafloor_twt_ms, 3.0, mode="nearest"))[:, None]
    else:
        seafloor_dip_ms_per_trace = np.zeros((1, 1))
    # dz/dx = v/2 (p - s) + v_w/2 s, s = seafloor time dip (chain rule on z(t, x) of the velocity model)
    depth_slope = (interval_velocity_m_s / 2.0 * (dip_ms_per_trace - seafloor_dip_ms_per_trace)
                   + velocity.water_velocity_m_s / 2.0 * seafloor_dip_ms_per_trace) / 1000.0 / spacing_m
    depth_deg = np.degrees(np.arctan(depth_slope))
    exclude = int(np.ceil(settings["stratal_exclude_ms"] / dt_ms))
    reach = max(exclude + 1, int(round(settings["stratal_window_ms"] / dt_ms)))
    usable = (field.coherence >= settings["min_coherence"]).astype(float)
    above_deg, above_weight = _window_mean(time_deg, usable, -reach, -exclude)
    below_deg, below_weight = _window_mean(time_deg, usable, exclude, reach)
    enough = 0.5 * (reach - exclude + 1)
    minimum_dip = float(settings["min_stratal_dip_deg"])
    flat_limit = float(settings["flat_max_angle_deg"])
    twt_grid = section.twt_ms[None, :]
    flat = ((field.coherence >= settings["flat_min_coherence"])
            & ((np.abs(time_deg) <= flat_limit) | (np.abs(depth_deg) <= flat_limit))
            & (twt_grid > seafloor_twt_ms[:, None] + settings["stratal_exclude_ms"]))
    for horizon in picks.horizons:
        with np.errstate(invalid="ignore"):
            near = np.abs(twt_grid - horizon.twt_ms[:, None]) <= settings["stratal_exclude_ms"]
        flat &= ~near
    with np.errstate(invalid="ignore"):
        cutting = (flat & (above_weight >= enough) & (below_weight >= enough)
                   & (np.abs(above_deg - time_deg) >= minimum_dip) & (np.abs(below_deg - time_deg) >= minimum_dip))
    if not cutting.any():
        return []
    labels, _ = label(flat, structure=np.ones((3, 3)))
    # traces on which each flat patch cuts the strata: unique (patch, trace) pairs
    trace_of, sample_of = np.nonzero(cutting)
    patch_of = labels[trace_of, sample_of]
    pairs = np.unique(patch_of.astype(np.int64) * section.n_traces + trace_of)
    patches, n_cutting_traces = np.unique(pairs // section.n_traces, return_counts=True)
    min_length_m = float(settings["flat_min_length_m"])
    long_enough = n_cutting_traces * spacing_m >= min_length_m
    order = np.argsort(-n_cutting_traces[long_enough], kind="stable")
    chosen = patches[long_enough][order][:int(settings["flat_max_findings"])]
    data = np.nan_to_num(section.data, nan=0.0)
    findings = []
    for patch in chosen:
        here = patch_of == patch
        trace_index, sample_index = trace_of[here], sample_of[here]
        n_traces = int(np.unique(trace_index).size)
        length_m = n_traces * spacing_m
        coherence = float(np.median(field.coherence[trace_index, sample_index]))
        event_rms = float(np.sqrt(np.mean(data[trace_index, sample_index] ** 2)))
        first_index, last_index = int(trace_index.min()), int(trace_index.max())
        low = max(0, int(sample_index.min()) - reach)
        high = min(section.n_samples, int(sample_index.max()) + reach + 1)
        window_rms = float(np.sqrt(np.mean(data[first_index:last_index + 1, low:high] ** 2)))
        amplitude_ratio = event_rms / window_rms if window_rms > 0 else 0.0
        twt_ms = section.twt_ms[sample_index]
        median_twt = float(np.median(twt_ms))
        seafloor_here_ms = seafloor_twt_ms[trace_index]
        ratio = twt_ms[seafloor_here_ms > 0] / seafloor_here_ms[seafloor_here_ms > 0]
        order = int(np.rint(np.median(ratio))) if ratio.size else 0
        # order-n surface multiple of the seafloor arrives at n x t_sf (flat-layer rule, common practice)
        multiple_misfit_ms = float(np.median(np.abs(twt_ms - order * seafloor_here_ms))) if order >= 2 else np.inf
        on_multiple = multiple_misfit_ms <= settings["stratal_exclude_ms"]
        evidence = {
            "twt_ms_median": median_twt,
            "length_m": float(length_m),
            "n_traces": n_traces,
            "coherence_median": coherence,
            "dip_ms_per_km_median": float(np.median(dip_ms_per_trace[trace_index, sample_index]) * 1000.0 / spacing_m),
            "dip_deg_median": float(np.median(time_deg[trace_index, sample_index])),
            "stratal_dip_deg_above_median": float(np.median(above_deg[trace_index, sample_index])),
            "stratal_dip_deg_below_median": float(np.median(below_deg[trace_index, sample_index])),
            "flat_in_time_fraction": float(np.mean(np.abs(time_deg[trace_index, sample_index]) <= flat_limit)),
            "amplitude_ratio": amplitude_ratio,
            "near_seafloor_multiple": bool(on_multiple),
            "seafloor_multiple_order": order if on_multiple else 0,
        }
        severity = "medium" if amplitude_ratio >= settings["flat_bright_ratio"] else "low"
        scale = min(1.0, length_m / (2.0 * min_length_m)) if min_length_m > 0 else 1.0
        first, last = _numbers(section, first_index, last_index)
        findings.append(Finding(
            id="contact.unpicked-flat-event", detector=NAME, severity=severity,
            confidence=float(np.clip(coherence * scale, 0.0, 1.0)),
            title=(f"An unpicked flat event near {median_twt:.0f} ms cuts dipping strata on {n_traces} traces "
                   f"between {first} and {last} ({length_m:.0f} m)"),
            advice=ADVICE["unpicked-flat-event"], horizon=None, traces=(first, last),
            twt_ms=(float(twt_ms.min()), float(twt_ms.max())), evidence=evidence,
        ))
    return findings
