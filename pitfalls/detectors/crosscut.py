"""Reflectors that cut across strata: hydrate-like and diagenetic-like boundaries, and picks that follow them.

Some strong reflectors are not bedding but a boundary set by temperature and pressure: the
base of gas-hydrate stability (hydrate-bearing sediment over free gas) or a diagenetic front
such as the opal-A to opal-CT change. The front follows an isotherm; the hydrate base follows a
pressure-temperature boundary and lies deeper below the seafloor where the water is deeper. Both
keep a nearly constant time below the seafloor and cut across the layering. Read as stratigraphy they make false
unconformities and false closures, and a horizon that slides onto one is miscorrelated.

Seafloor-parallel events. The panel is mapped to two-way time below the seafloor, where such
an event is horizontal. Semblance along constant time below the seafloor is computed over
``window_traces`` traces and ``window_ms``; an event is a line of envelope maxima of the
seafloor-parallel stack with semblance of at least ``min_semblance`` and at least
``min_semblance_gain`` above the semblance along the stratal dip, an envelope of at least
``min_relative_amplitude`` of the seafloor amplitude, and strata around it (between
``guard_ms`` and ``band_ms`` above and below, structure-tensor dip weighted by its coherence,
dips steeper than ``max_stratal_dip_ms_per_trace`` left out as noise) that dip by at least
``min_angle_to_strata_deg`` relative to the seafloor. Where the strata themselves parallel the
seafloor nothing cuts across them and nothing is reported. An event proven this way is then
followed along the seafloor (hysteresis) through points with a seafloor-parallel semblance of at
least ``extend_min_semblance`` and the amplitude above, so that it also covers stretches where the
strata happen to parallel it or a canyon bends it; angle and coherence gain in the finding are
measured where it was seen to cut. Events within ``multiple_guard_ms`` of the first or second
seafloor multiple, and water-layer peg-legs, are left out: they are seafloor-parallel for a
different reason, and the multiples detector looks at them. A peg-leg repeats an event one
seafloor time later with amplitude ``-2 R_sf A``; an event is one when it lies one seafloor time
below a reported event, or when on most of its traces the seafloor-parallel stack one seafloor
time higher holds an event of the opposite sign at least ``peg_leg_min_parent_ratio`` times as
strong (the seafloor itself as that parent is the first seafloor multiple). The event's polarity relative to
the seafloor (per trace, then the majority) gives the class: reversed is
``crosscut.hydrate-like`` (hydrate over free gas lowers the impedance downward), the same as
the seafloor is ``crosscut.diagenetic-like`` (the opal-A to opal-CT change raises density
and velocity downward).

Hydrate stability check. From the water depth (seafloor time times the water velocity over
two), ``seafloor_temperature_c``, ``geothermal_gradient_c_per_km``, hydrostatic pressure and the
Dickens & Quinby-Hunt (1994) phase boundary, the base of the stability zone is predicted and
converted to time below the seafloor with the velocity model. The finding reports the
predicted time beside the observed one and the gradient that would put the base exactly at the
observed event. The two agree when they differ by no more than the larger of
``stability_tolerance_ms`` and ``stability_tolerance_fraction`` of the observed time.

Confidence of an event: ``0.75 * (semblance + angle_score + polarity_score) / 3``, with
semblance the median seafloor-parallel semblance, ``angle_score = min(1, angle / (2 *
min_angle_to_strata_deg))`` and ``polarity_score = 2 * share - 1`` (share of traces with the
majority polarity); a hydrate-like event that agrees with the predicted stability base gets
``+ 0.25``. The section alone can suggest a boundary; agreement with an independent physical
prediction is what makes it likely.

Picks. For each picked horizon (kind ``horizon``) the pick slope, averaged over
``pick_slope_traces``, is compared as an angle in depth with the reflection dip along it: the
structure-tensor dip of the section (trusted where its linearity is at least
``min_dip_linearity``), or, within ``band_ms`` of a seafloor-parallel event, the stratal dip
measured around the event, because there the event (and, under a hydrate boundary, the
free-gas base below it) would set the local dip. A pick lies on a boundary where it is within ``pick_on_event_ms`` of a
reported event, or where its own path shows one: its time below the seafloor constant (angle to
the seafloor within ``max_pick_angle_deg`` over ``pick_slope_traces``), the data at the pick of the
reverse polarity of the seafloor, the data aligned on the pick coherent (semblance at least
``min_semblance``), and not on a seafloor multiple or a water-layer peg-leg. This covers stretches
where the strata run too nearly parallel to the boundary for the section-wide search.
A run of at least ``min_pick_run_traces`` traces on a boundary is
``crosscut.pick-follows-boundary`` (high) when the pick departs from the strata by more than
``max_pick_angle_deg`` on most of it, or when the strata around the pick (weighted median dip
between ``guard_ms`` and ``band_ms`` above and below) drift from it by at least
``min_pick_divergence_ms`` over the run: a small angle kept over a long run still takes the pick
onto other cycles. The trace where the pick leaves the strata (``jump_trace``) is the bend in its
time below the seafloor (two-phase linear regression near the run's start).
Other runs where the pick departs by more than ``max_pick_angle_deg`` and the data aligned on it
are incoherent are ``pick.crosses-reflections``: medium when the run is at least
``medium_pick_run_traces`` long and the pick does not keep one phase (fewer than
``pick_phase_share`` of its traces share the majority sign; a pick cutting reflections samples
peaks and troughs alike), otherwise low: a pick that keeps its phase follows its reflection,
and the dip it disagrees with is then most likely set by a stronger crossing event such as a
multiple. The id ``pick.crosses-reflections`` belongs to the ``pick`` family but is made here,
because it comes from the same dip comparison. Confidence of a pick run:
``min(1, median |departure| / (3 * max_pick_angle_deg))``, scaled by ``1 - phase share`` when the
pick keeps its phase, and raised to at least the run's share on the boundary for
``crosscut.pick-follows-boundary``.

References
----------
.. [1] Dickens, G. R., and Quinby-Hunt, M. S., 1994, Methane hydrate stability in seawater,
       Geophysical Research Letters 21(19), 2115-2118.
.. [2] Berndt, C., Buenz, S., Clayton, T., Mienert, J., and Saunders, M., 2004, Seismic
       character of bottom simulating reflectors: examples from the mid-Norwegian margin,
       Marine and Petroleum Geology 21, 723-733.
.. [3] Hein, J. R., Scholl, D. W., Barron, J. A., Jones, M. G., and Miller, J., 1978,
       Diagenesis of late Cenozoic diatomaceous deposits and formation of the bottom
       simulating reflector in the southern Bering Sea, Sedimentology 25. (authors from memory)
.. [4] Neidell, N. S., and Taner, M. T., 1971, Semblance and other coherency measures for
       multichannel data, Geophysics 36(3), 482-497. (from memory)
.. [5] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261. (peg-leg times and amplitudes)
.. [6] Canny, J., 1986, A computational approach to edge detection, IEEE Transactions on
       Pattern Analysis and Machine Intelligence 8(6), 679-698. (hysteresis; from memory)
"""
from __future__ import annotations

import dataclasses
from typing import Any, Mapping

import numpy as np
from scipy.ndimage import map_coordinates, uniform_filter1d

from pitfalls.context import Context
from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics.crosscut import (
    EventSearch,
    SeafloorParallelEvent,
    dip_angle_deg,
    find_seafloor_parallel_events,
    gradient_for_event_c_per_km,
    path_slope_ms_per_trace,
    pick_departure_deg,
    semblance_along_path,
    predicted_stability_base_twt_ms,
    stability_tolerance_ms,
    stratal_dip_along_path,
    temperature_at_c,
    water_layer_peg_leg_flags,
    water_layer_peg_leg_share,
)
from pitfalls.physics.runs import true_runs
from pitfalls.physics.seafloor import Seafloor, amplitude_at
from pitfalls.physics.velocity import VelocityModel

NAME = "crosscut"
FAMILY = "crosscut"
KINDS = {
    "hydrate-like": (
        "A coherent event keeps a near-constant time below the seafloor, cuts the dipping strata and has the reverse polarity of the seafloor.",
        "It looks like the base of gas-hydrate stability (hydrate over free gas), a pressure-temperature boundary that lies deeper below the seafloor where the water is deeper, not bedding: mapped as a horizon it makes false unconformities and closures.",
        "Compare its depth with the predicted stability base and the gradient in the evidence; look for bright free-gas reflections and attenuation below it and blanking above it; do not correlate strata along it.",
    ),
    "diagenetic-like": (
        "A coherent event keeps a near-constant time below the seafloor, cuts the dipping strata and has the same polarity as the seafloor.",
        "It looks like a temperature-set diagenetic front (such as opal-A to opal-CT), not bedding: it can pass for a sequence boundary or a fluid indicator.",
        "Check the temperature at its depth in the evidence against the transition expected there; follow the strata through it; ask whether biosiliceous sediment is plausible.",
    ),
    "pick-follows-boundary": (
        "A picked horizon leaves the strata and runs along a seafloor-parallel event that cuts across them.",
        "The horizon is miscorrelated from that trace on: maps, thicknesses and closures built on it follow a pressure- or temperature-set boundary, not a bed.",
        "Go to the trace named in the evidence, follow the original reflection across the boundary and re-pick it; keep the boundary as a separate surface if it matters.",
    ),
    "pick.crosses-reflections": (
        "Over a run of traces the pick's slope differs from the dip of the reflections it sits on.",
        "A horizon that cuts reflections has jumped between events or follows noise or a fault trace: correlations and maps beyond that point are doubtful.",
        "Display the section along the run, check where the pick leaves the reflection it was following, and re-pick along the reflection dip.",
    ),
}
RULE_KEYS = {
    "seafloor_temperature_c": (float, -2.0, 30.0),
    "geothermal_gradient_c_per_km": (float, 1.0, 200.0),
    "search_from_ms": (float, 0.0, 2000.0),
    "search_to_ms": (float, 50.0, 10000.0),
    "window_traces": (int, 3, 501),
    "window_ms": (float, 0.0, 200.0),
    "min_semblance": (float, 0.0, 1.0),
    "min_semblance_gain": (float, -1.0, 1.0),
    "min_relative_amplitude": (float, 0.0, 10.0),
    "min_angle_to_strata_deg": (float, 0.1, 45.0),
    "guard_ms": (float, 4.0, 500.0),
    "band_ms": (float, 8.0, 2000.0),
    "min_extent_traces": (int, 2, 100000),
    "max_gap_traces": (int, 0, 1000),
    "max_stratal_dip_ms_per_trace": (float, 0.1, 100.0),
    "multiple_guard_ms": (float, 0.0, 500.0),
    "stability_tolerance_ms": (float, 0.0, 1000.0),
    "stability_tolerance_fraction": (float, 0.0, 1.0),
    "max_pick_angle_deg": (float, 0.1, 45.0),
    "pick_slope_traces": (int, 1, 101),
    "min_pick_run_traces": (int, 1, 100000),
    "pick_on_event_ms": (float, 0.0, 100.0),
    "min_dip_linearity": (float, 0.0, 1.0),
    "extend_min_semblance": (float, 0.0, 1.0),
    "peg_leg_min_parent_ratio": (float, 0.0, 10.0),
    "min_pick_divergence_ms": (float, 0.0, 500.0),
    "pick_phase_share": (float, 0.5, 1.0),
    "medium_pick_run_traces": (int, 1, 100000),
}

_EVENT_ADVICE = {
    "hydrate-like": ("Treat this event as a possible base of gas-hydrate stability, not a bed: follow the dipping reflections "
                     "through it, compare its depth with the predicted base and the implied gradient, and keep it out of "
                     "horizon correlation and closure mapping."),
    "diagenetic-like": ("Treat this event as a possible diagenetic front, not a bed: follow the dipping reflections through "
                        "it, check whether the temperature at its depth fits a silica or clay transition, and keep it out of "
                        "horizon correlation, closure mapping and fluid interpretation."),
}
_FOLLOWS_ADVICE = ("From the named trace on, the pick runs along a boundary that cuts the strata. Return to that trace, "
                   "follow the reflection the pick was on across the boundary, and re-pick it.")
_CROSSES_ADVICE = ("Over these traces the pick does not follow the reflection dip. Check for a jump between reflections, a "
                   "fault, or noise, and re-pick along the reflection.")
_CROSSES_ADVICE_PHASE = ("The measured dip disagrees with the pick here, but the pick keeps one phase, so it probably follows "
                         "its reflection where a stronger event (a multiple or a boundary) crosses it. A quick look is enough.")


def detect(block: Section, context: Context, picks: Picks, rules: Mapping[str, Any]) -> list[Finding]:
    """Seafloor-parallel events that cut the strata, and picks that cut the reflections or follow such events."""
    section = block
    settings = rules[NAME]
    velocity = context.velocity
    seafloor = context.seafloor
    if seafloor.n_found < max(3, int(settings["window_traces"])) or seafloor.polarity == 0:
        return []
    search = _search_events(section, seafloor, velocity, settings)
    findings = [_event_finding(event, section, seafloor, velocity, settings) for event in search.events]
    horizons = [horizon for horizon in picks.horizons if horizon.kind == "horizon" and horizon.n_points >= 2]
    if horizons:
        field = context.dip
        for horizon in horizons:
            findings.extend(_pick_findings(horizon, section, seafloor, search, field, velocity, settings))
    return findings


# --- events ----------------------------------------------------------------------------------
def _search_events(section: Section, seafloor: Seafloor, velocity: VelocityModel,
                   settings: Mapping[str, Any]) -> EventSearch:
    """Run the seafloor-parallel event search with the rules, then drop water-layer peg-legs."""
    dt_ms = section.dt_ms
    search_to_ms = float(settings["search_to_ms"])
    rows_ms = np.arange(int(round((search_to_ms + settings["band_ms"]) / dt_ms)) + 1) * dt_ms
    interval_velocity = velocity.interval_velocity_m_s(velocity.depth_below_seafloor_m(rows_ms))
    min_dip_ms = (2000.0 * section.trace_spacing_m * np.tan(np.radians(settings["min_angle_to_strata_deg"]))
                  / interval_velocity)  # inverse of tan(angle) = (v/2) dt / dx
    seafloor_twt = seafloor.twt_ms
    multiples = np.column_stack([seafloor_twt * order for order in (1.0, 2.0)])  # first and second multiple, below seafloor
    search = find_seafloor_parallel_events(
        section.data, dt_ms, section.t0_ms, seafloor_twt, float(np.nanmedian(np.abs(seafloor.amplitude))),
        search_from_ms=float(settings["search_from_ms"]),
        search_to_ms=search_to_ms,
        window_traces=int(settings["window_traces"]),
        window_ms=float(settings["window_ms"]),
        min_semblance=float(settings["min_semblance"]),
        min_semblance_gain=float(settings["min_semblance_gain"]),
        min_relative_amplitude=float(settings["min_relative_amplitude"]),
        min_rms_dip_samples_per_trace=min_dip_ms / dt_ms,
        guard_ms=float(settings["guard_ms"]),
        band_ms=float(settings["band_ms"]),
        min_extent_traces=int(settings["min_extent_traces"]),
        max_gap_traces=int(settings["max_gap_traces"]),
        max_dip_samples_per_trace=float(settings["max_stratal_dip_ms_per_trace"]) / dt_ms,
        exclude_twt_below_seafloor_ms=multiples,
        exclude_half_width_ms=float(settings["multiple_guard_ms"]),
        extend_min_semblance=float(settings["extend_min_semblance"]),
    )
    guard_ms = float(settings["multiple_guard_ms"])
    kept: list[SeafloorParallelEvent] = []
    for event in search.events:  # shallowest first
        if any(_is_peg_leg(event, parent, seafloor_twt, guard_ms) for parent in kept):
            continue
        share = water_layer_peg_leg_share(search.stack, search.stack_envelope, dt_ms, seafloor_twt, event,
                                          float(settings["peg_leg_min_parent_ratio"]), guard_ms)
        if share < 0.5:  # most of it sits one seafloor time below a stronger event of opposite sign
            kept.append(event)
    return dataclasses.replace(search, events=tuple(kept))


def _is_peg_leg(event: SeafloorParallelEvent, parent: SeafloorParallelEvent, seafloor_twt_ms: np.ndarray,
                half_width_ms: float) -> bool:
    """True when most of ``event`` lies one seafloor time below ``parent`` (t_r + t_sf, Backus 1959)."""
    shared, in_event, in_parent = np.intersect1d(event.trace_index, parent.trace_index, return_indices=True)
    if shared.size < 0.5 * event.trace_index.size or half_width_ms <= 0:
        return False
    predicted = parent.twt_below_seafloor_ms[in_parent] + seafloor_twt_ms[shared]  # peg-leg at t_r + t_sf
    return bool(np.mean(np.abs(event.twt_below_seafloor_ms[in_event] - predicted) <= half_width_ms) >= 0.5)


def _event_finding(event: SeafloorParallelEvent, section: Section, seafloor: Seafloor, velocity: VelocityModel,
                   settings: Mapping[str, Any]) -> Finding:
    traces = event.trace_index
    below_ms = event.twt_below_seafloor_ms
    seafloor_twt = seafloor.twt_ms[traces]
    relative_sign = np.sign(event.amplitude) * np.sign(seafloor.amplitude[traces])
    polarity = 1 if np.sum(relative_sign) >= 0 else -1
    polarity_share = float(np.mean(relative_sign == polarity))
    kind = "hydrate-like" if polarity < 0 else "diagenetic-like"

    median_below_ms = float(np.median(below_ms))
    median_seafloor_ms = float(np.median(seafloor_twt))
    depth_below_m = float(velocity.depth_below_seafloor_m(median_below_ms))
    interval_velocity = float(velocity.interval_velocity_m_s(depth_below_m))
    cutting = event.cutting  # the angle and the coherence gain are judged where the event was seen to cut
    dip_ms = float(np.median(event.stratal_rms_dip_samples_per_trace[cutting])) * section.dt_ms
    angle_deg = float(dip_angle_deg(dip_ms, interval_velocity, section.trace_spacing_m))
    semblance = float(np.median(event.semblance_seafloor_parallel))
    amplitude_ratio = float(np.median(np.abs(event.amplitude) / np.abs(seafloor.amplitude[traces])))
    quartiles = np.percentile(below_ms, [25.0, 75.0])

    seafloor_temperature_c = float(settings["seafloor_temperature_c"])
    gradient_c_per_km = float(settings["geothermal_gradient_c_per_km"])
    evidence: dict[str, Any] = {
        "twt_below_seafloor_ms_median": median_below_ms,
        "twt_below_seafloor_ms_iqr": float(quartiles[1] - quartiles[0]),
        "twt_below_seafloor_ms_min": float(below_ms.min()),
        "twt_below_seafloor_ms_max": float(below_ms.max()),
        "depth_below_seafloor_m": depth_below_m,
        "angle_to_strata_deg": angle_deg,
        "extent_traces": event.extent_traces,
        "cutting_traces": int(np.sum(cutting)),
        "polarity_vs_seafloor": polarity,
        "polarity_share": polarity_share,
        "amplitude_vs_seafloor": amplitude_ratio,
        "semblance_seafloor_parallel": semblance,
        "semblance_along_strata": float(np.median(event.semblance_along_strata[cutting])),
        "water_depth_m": float(velocity.water_depth_m(median_seafloor_ms)),
        "seafloor_temperature_c": seafloor_temperature_c,
        "geothermal_gradient_c_per_km": gradient_c_per_km,
        "temperature_at_event_c": temperature_at_c(median_below_ms, velocity, seafloor_temperature_c, gradient_c_per_km),
    }
    sample_traces = traces[np.unique(np.linspace(0, traces.size - 1, min(traces.size, 25)).astype(int))]
    predicted_ms = predicted_stability_base_twt_ms(seafloor.twt_ms[sample_traces], velocity,
                                                   seafloor_temperature_c, gradient_c_per_km)
    agrees = False
    evidence["stability_zone_predicted"] = bool(np.isfinite(predicted_ms).any())
    if np.isfinite(predicted_ms).any():
        predicted_median_ms = float(np.nanmedian(predicted_ms))
        tolerance_ms = stability_tolerance_ms(median_below_ms, float(settings["stability_tolerance_ms"]),
                                              float(settings["stability_tolerance_fraction"]))
        agrees = abs(median_below_ms - predicted_median_ms) <= tolerance_ms
        evidence["predicted_base_twt_below_seafloor_ms"] = predicted_median_ms
        evidence["predicted_misfit_ms"] = median_below_ms - predicted_median_ms
        evidence["stability_tolerance_ms"] = tolerance_ms
    evidence["matches_stability_base"] = bool(agrees)
    gradient_for_event = gradient_for_event_c_per_km(median_below_ms, median_seafloor_ms, velocity, seafloor_temperature_c)
    if np.isfinite(gradient_for_event):
        evidence["gradient_for_event_c_per_km"] = float(gradient_for_event)

    angle_score = min(1.0, angle_deg / (2.0 * float(settings["min_angle_to_strata_deg"])))
    confidence = 0.75 * (semblance + angle_score + (2.0 * polarity_share - 1.0)) / 3.0
    if kind == "hydrate-like" and agrees:
        confidence += 0.25
    first, last = int(traces[0]), int(traces[-1])
    absolute = seafloor_twt + below_ms
    polarity_words = "the opposite polarity to" if polarity < 0 else "the same polarity as"
    title = (f"Event {median_below_ms:.0f} ms below the seafloor over traces {section.trace_numbers[first]}-"
             f"{section.trace_numbers[last]} cuts the strata at {angle_deg:.1f} deg with {polarity_words} "
             f"the seafloor")
    return Finding(
        id=f"{FAMILY}.{kind}",
        detector=NAME,
        severity="medium",
        confidence=float(np.clip(confidence, 0.0, 1.0)),
        title=title,
        advice=_EVENT_ADVICE[kind],
        horizon=None,
        traces=(int(section.trace_numbers[first]), int(section.trace_numbers[last])),
        twt_ms=(float(np.min(absolute)), float(np.max(absolute))),
        evidence=evidence,
    )


# --- picks -----------------------------------------------------------------------------------
def _event_time_per_trace(search: EventSearch, seafloor: Seafloor, n_traces: int) -> list[tuple[np.ndarray, np.ndarray]]:
    """For each event, (absolute time per trace with NaN off the event, stratal dip ms-free samples per trace)."""
    per_event = []
    for event in search.events:
        twt = np.full(n_traces, np.nan)
        dip = np.full(n_traces, np.nan)
        twt[event.trace_index] = seafloor.twt_ms[event.trace_index] + event.twt_below_seafloor_ms
        dip[event.trace_index] = event.stratal_dip_samples_per_trace
        per_event.append((twt, dip))
    return per_event


def _pick_findings(horizon: Horizon, section: Section, seafloor: Seafloor, search: EventSearch, field: Any,
                   velocity: VelocityModel, settings: Mapping[str, Any]) -> list[Finding]:
    dt_ms = section.dt_ms
    n_traces = section.n_traces
    pick_twt = np.asarray(horizon.twt_ms, dtype=float)
    picked = np.flatnonzero(np.isfinite(pick_twt))
    sample = section.sample_of(pick_twt)
    inside = np.isfinite(sample) & (sample >= 0) & (sample <= section.n_samples - 1)
    coordinates = [np.arange(n_traces, dtype=float), np.where(inside, sample, 0.0)]
    local_dip_ms = map_coordinates(field.dip_samples_per_trace, coordinates, order=1, mode="nearest") * dt_ms
    linearity = map_coordinates(field.linearity, coordinates, order=1, mode="nearest")
    trusted = (inside & (linearity >= float(settings["min_dip_linearity"]))
               & (np.abs(local_dip_ms) <= float(settings["max_stratal_dip_ms_per_trace"])))
    reference_ms = np.where(trusted, local_dip_ms, np.nan)

    smooth = int(settings["pick_slope_traces"])
    seafloor_twt = seafloor.twt_ms
    finite_seafloor = np.isfinite(seafloor_twt)
    seafloor_slope = np.full(n_traces, np.nan)
    if finite_seafloor.sum() >= 2:
        filled = np.interp(np.arange(n_traces), np.flatnonzero(finite_seafloor), seafloor_twt[finite_seafloor])
        seafloor_slope = uniform_filter1d(np.gradient(filled), smooth, mode="nearest")
    below_ms = pick_twt - seafloor_twt
    near_seafloor = ~(below_ms > settings["search_from_ms"])
    reference_ms = np.where(near_seafloor, np.nan, reference_ms)  # the seafloor wavelet sets the dip there
    on_event = np.zeros(n_traces, dtype=bool)
    for event_twt, event_dip in _event_time_per_trace(search, seafloor, n_traces):
        distance_ms = np.abs(pick_twt - event_twt)
        near = np.isfinite(distance_ms) & (distance_ms <= settings["band_ms"])  # where the stratal dip was measured
        reference_ms = np.where(near, event_dip * dt_ms + seafloor_slope, reference_ms)  # stratal dip, not the event's
        on_event |= near & (distance_ms <= settings["pick_on_event_ms"])

    depth_below_m = velocity.depth_below_seafloor_m(np.nan_to_num(below_ms, nan=0.0))
    interval_velocity = velocity.interval_velocity_m_s(depth_below_m)
    departure = pick_departure_deg(pick_twt, reference_ms, interval_velocity, section.trace_spacing_m, smooth)
    limit = float(settings["max_pick_angle_deg"])
    window_samples = max(1, int(round(settings["window_ms"] / dt_ms)) | 1)
    path_semblance = semblance_along_path(section.data, dt_ms, section.t0_ms, pick_twt, int(settings["window_traces"]),
                                          window_samples)
    coherent = path_semblance >= settings["min_semblance"]  # a pick on one coherent reflection follows something
    pick_sign = np.sign(np.nan_to_num(amplitude_at(section, pick_twt), nan=0.0))

    # The pick's own path: a constant time below the seafloor, on a coherent event of the reverse polarity of
    # the seafloor (hydrate over free gas), is a boundary the pick may follow even where the panel-wide
    # search found no event (strata nearly parallel to it there).
    below_slope_ms = path_slope_ms_per_trace(below_ms, smooth)
    parallel = np.abs(np.nan_to_num(dip_angle_deg(below_slope_ms, interval_velocity, section.trace_spacing_m),
                                    nan=90.0)) <= limit
    reversed_polarity = pick_sign * seafloor.polarity < 0
    on_path_boundary = parallel & reversed_polarity & coherent & ~near_seafloor
    guard_ms = float(settings["multiple_guard_ms"])
    for order in (2.0, 3.0):  # the first and second seafloor multiples parallel the seafloor too
        on_path_boundary &= ~(np.abs(pick_twt - order * seafloor_twt) <= guard_ms)
    candidates = np.flatnonzero(on_path_boundary)
    if candidates.size and search.stack is not None and search.stack_envelope is not None:
        peg_leg = water_layer_peg_leg_flags(search.stack, search.stack_envelope, dt_ms, seafloor_twt, candidates,
                                            below_ms[candidates], pick_sign[candidates],
                                            float(settings["peg_leg_min_parent_ratio"]), guard_ms)
        on_path_boundary[candidates[peg_leg]] = False  # a water-layer peg-leg of a stronger event above
    on_boundary = on_event | on_path_boundary
    strata_ms = stratal_dip_along_path(search, below_ms, dt_ms, np.flatnonzero(on_boundary),
                                       int(settings["window_traces"]) // 2, float(settings["guard_ms"]),
                                       float(settings["band_ms"]))
    divergence_ms = below_slope_ms - strata_ms  # pick slope minus stratal dip, both relative to the seafloor

    beyond = np.abs(np.nan_to_num(departure, nan=0.0)) > limit
    departs = beyond & (on_boundary | ~coherent)
    min_run = int(settings["min_pick_run_traces"])
    runs = true_runs(departs, max_gap=2, min_length=min_run)
    min_divergence_ms = float(settings["min_pick_divergence_ms"])
    spans: list[tuple[int, int, bool]] = []  # (first, last, follows the boundary)
    for first, last in true_runs(on_boundary, max_gap=2, min_length=min_run):
        cut_ms = float(np.nansum(divergence_ms[first:last + 1]))  # how far the strata drift from the pick over the run
        if np.mean(beyond[first:last + 1]) < 0.5 and abs(cut_ms) < min_divergence_ms:
            continue  # the pick crosses the event with the strata, or the strata parallel it
        for run_first, run_last in runs:  # join the ramp onto the event and any departures along it
            if run_first <= last + 3 and run_last >= first - 3:
                first, last = min(first, run_first), max(last, run_last)
        spans.append((first, last, True))
    for run_first, run_last in runs:
        if not any(run_first <= last and run_last >= first for first, last, _ in spans):
            spans.append((run_first, run_last, False))
    findings: list[Finding] = []
    phase_limit = float(settings["pick_phase_share"])
    medium_run = int(settings["medium_pick_run_traces"])
    for first, last, follows in sorted(spans):
        span = slice(first, last + 1)
        run_departure = np.abs(departure[span][np.isfinite(departure[span])])
        median_departure = float(np.median(run_departure)) if run_departure.size else 0.0
        share_on_boundary = float(np.mean(on_boundary[span]))
        confidence = min(1.0, median_departure / (3.0 * limit))
        first_number, last_number = int(section.trace_numbers[first]), int(section.trace_numbers[last])
        times = pick_twt[span][np.isfinite(pick_twt[span])]
        signs = pick_sign[span][pick_sign[span] != 0]
        phase_share = float(max(np.mean(signs > 0), np.mean(signs < 0))) if signs.size else 0.0
        evidence: dict[str, Any] = {
            "departure_deg_median": median_departure,
            "departure_deg_max": float(run_departure.max()) if run_departure.size else 0.0,
            "run_traces": last - first + 1,
            "share_on_boundary": share_on_boundary,
            "semblance_along_pick": float(np.nanmedian(path_semblance[span])) if np.isfinite(path_semblance[span]).any() else 0.0,
            "phase_share": phase_share,
            "max_departure_deg": limit,
        }
        if follows:
            if first > picked[0]:
                jump_index = _kink_index(below_ms, first, last, int(settings["window_traces"]))
                first = max(first, jump_index)  # before the bend the pick is still on its reflection
                span = slice(first, last + 1)
                first_number = int(section.trace_numbers[first])
                times = pick_twt[span][np.isfinite(pick_twt[span])]
                evidence["run_traces"] = last - first + 1
            else:
                jump_index = min(last + 1, picked[-1])
            evidence["jump_trace"] = int(section.trace_numbers[jump_index])
            evidence["jump_twt_ms"] = float(pick_twt[jump_index])
            evidence["share_on_section_event"] = float(np.mean(on_event[span]))
            evidence["share_reversed_polarity"] = float(np.mean(reversed_polarity[span]))
            evidence["divergence_from_strata_ms"] = float(np.nansum(divergence_ms[span]))
            evidence["twt_below_seafloor_ms_median"] = float(np.nanmedian(below_ms[span]))
            findings.append(Finding(
                id=f"{FAMILY}.pick-follows-boundary",
                detector=NAME,
                severity="high",
                confidence=float(np.clip(max(confidence, share_on_boundary), 0.0, 1.0)),
                title=(f"{horizon.name} leaves the strata at trace {evidence['jump_trace']} and follows a "
                       f"seafloor-parallel event over traces {first_number}-{last_number}"
                       + (" with reversed polarity: a hydrate-like boundary, not a sequence boundary"
                          if evidence["share_reversed_polarity"] >= 0.5 else
                          " with the seafloor's polarity: a diagenetic-like boundary, not a sequence boundary")),
                advice=_FOLLOWS_ADVICE,
                horizon=horizon.name,
                traces=(first_number, last_number),
                twt_ms=(float(times.min()), float(times.max())),
                evidence=evidence,
            ))
        else:
            # A pick that keeps one phase over the run follows a reflection: the dip it disagrees with is then
            # most likely set by a stronger event crossing it (a multiple, a boundary), so it is only a note.
            keeps_phase = phase_share >= phase_limit
            severity = "low" if keeps_phase or last - first + 1 < medium_run else "medium"
            evidence["keeps_phase"] = bool(keeps_phase)
            findings.append(Finding(
                id="pick.crosses-reflections",
                detector=NAME,
                severity=severity,
                confidence=float(np.clip(confidence * (1.0 - phase_share if keeps_phase else 1.0), 0.0, 1.0)),
                title=(f"{horizon.name} cuts across the reflections by {median_departure:.1f} deg over traces "
                       f"{first_number}-{last_number}"),
                advice=_CROSSES_ADVICE_PHASE if keeps_phase else _CROSSES_ADVICE,
                horizon=horizon.name,
                traces=(first_number, last_number),
                twt_ms=(float(times.min()), float(times.max())),
                evidence=evidence,
            ))
    return findings


def _kink_index(below_ms: np.ndarray, first: int, last: int, half_traces: int) -> int:
    """Where a pick's time below the seafloor changes slope near the start of a run: two-phase linear
    regression over a fixed window, the break that leaves the least squared misfit (common practice).

    The run's first trace is where the pick came within reach of the boundary; the pick leaves its
    reflection where its path bends onto the boundary's slope. The window reaches ``half_traces``
    before that trace and ``2 * half_traces`` after it (never past the run).
    """
    window_first, window_last = max(first - half_traces, 0), min(first + 2 * half_traces, last)
    positions = np.arange(below_ms.size)
    best_index, best_misfit = first, np.inf
    for index in range(window_first + 3, window_last - 2):
        misfit = 0.0
        for segment in (slice(window_first, index), slice(index, window_last + 1)):
            x, y = positions[segment], below_ms[segment]
            finite = np.isfinite(y)
            if finite.sum() < 3:
                misfit = np.inf
                break
            coefficients = np.polyfit(x[finite], y[finite], 1)
            misfit += float(np.sum((y[finite] - np.polyval(coefficients, x[finite])) ** 2))
        if misfit < best_misfit:
            best_index, best_misfit = index, misfit
    return best_index
