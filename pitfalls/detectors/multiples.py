"""Picks that follow predicted seafloor, peg-leg or interbed multiples, and sections that reverberate.

What is measured
----------------
The seafloor comes from `find_seafloor` (the seafloor pick, else automatic); its polarity in the
data is the reference for every sign below, so the data's display convention never matters.
From it the detector predicts, at zero offset (the near-offset approximation of a stack):

* seafloor multiples at ``n * t_sf`` for n = 2 .. ``highest_multiplier``, and, where the seafloor
  dips by xi (from its time-dip), at ``t_sf sin(n xi) / sin(xi)`` as on an unmigrated section; the
  band between the two predictions, widened by the tolerance, counts as "on the multiple";
* peg-legs ``t_r + j * t_sf`` (j = 1 .. ``peg_leg_round_trips``) of every other picked horizon and
  of the ``auto_reflectors`` strongest envelope peaks per trace below the seafloor that reach
  ``auto_reflector_fraction`` of the seafloor's envelope and do not sit on a seafloor multiple;
* with ``interbed`` on, interbed multiples ``2 t2 - t1`` of every pair of those surfaces (the
  seafloor included as the upper one).

For each picked horizon (kind horizon or contact), a run is a stretch of traces, bridging gaps of
up to ``max_gap_traces``, where the pick lies within the tolerance of a prediction; the tolerance
is ``tolerance_periods`` of the dominant period of the data below the seafloor, at least one
sample. Runs shorter than ``min_run_traces`` are dropped: a primary that merely crosses a
multiple is not reported. Each run is measured:

* ``misfit_ms_median``, ``misfit_ms_p90``: distance of the pick from the predicted band, ms;
* ``dip_ratio``: Theil-Sen slope (median of pairwise slopes, robust to a few bad picks) of the
  pick time (minus the generating reflector's time for a peg-leg) on the seafloor time over the
  run; expected n for a seafloor multiple of n bounces (n x the seafloor's time-dip) and j for a
  peg-leg; for an interbed multiple the slope on the predicted time, expected 1. Measured only
  when the seafloor (or predicted) times vary by at least ``min_relief_ms`` over the run;
* ``drift_ms``: change of the pick-minus-prediction residual from one end of the run to the other
  (Theil-Sen slope against trace times run length). A primary that crosses a multiple at an angle
  drifts through the whole tolerance band; a pick that follows the multiple does not;
* ``polarity_vs_primary`` (+1/-1): majority sign of the pick's amplitude over the generating
  primary's (seafloor, or reflector), against the expected ``(-1)^(n-1)`` for seafloor multiples,
  ``(-1)^j`` for peg-legs and ``-sign(R1) sign(R2)`` for interbed multiples; and
  ``polarity_agreement_fraction``, the share of traces with the expected sign;
* ``amplitude_ratio`` (median pick over primary amplitude) and the seafloor reflection
  coefficient it implies under a ``t^gain_exponent`` gain (Warner 1990 method), with
  ``seafloor_reflection_coefficient_plausible`` true between
  ``min_plausible_seafloor_reflection_coefficient`` and
  ``max_plausible_seafloor_reflection_coefficient`` (a pick on a near-silent stretch implies
  almost no seafloor reflection, an implausibly strong event more than a seafloor can give);
* ``periodicity_strength``: the section's reverberation strength (below) in the window holding
  the pick, median over the run.

Section-level periodicity: on every trace, windows of ``window_periods`` seafloor periods (at
least ``min_window_ms``) start one guard (``guard_periods`` dominant periods) below the seafloor
and step by half a window. In each, the normalised biased autocorrelation is computed and the
strength is the depth of its negative peak within the tolerance of the trace's seafloor period
(water reverberations repeat with reversed sign). Connected areas of windows and traces, at least
``min_run_traces`` traces wide, where the strength reaches ``periodicity_threshold``, become
``multiple.periodic`` findings with no horizon.

Confidence
----------
For a pick run, with factors in [0, 1]:

    f_misfit   = 1 - misfit_ms_median / tolerance_ms
    f_coverage = min(1, run traces / full_coverage_traces)
    f_dip      = max(0, 1 - |dip_ratio / expected - 1| / dip_ratio_tolerance); 0.5 if not measured
    f_polarity = polarity_agreement_fraction; 0.5 if no amplitude could be read
    f_amplitude = 1 if the implied seafloor R is plausible, else 0 (0.5 if unmeasured)
    f_periodic = min(1, periodicity_strength / periodicity_threshold); 0.5 if unmeasured
    confidence = (2 f_misfit + 2 f_coverage + 2 f_dip + 2 f_polarity + f_amplitude + f_periodic) / 10

Timing, coverage, dip and polarity are the kinematic and physical fingerprints of a multiple and
weigh double; the amplitude check depends on unknown processing gain and the periodicity on the
whole section, so they weigh single. Severity is ``high`` at ``high_confidence`` or more, ``medium``
at ``medium_confidence`` or more, else ``low``, but any contradiction caps it at ``low``: a dip
ratio outside the tolerance, a drift above ``max_drift_tolerances`` tolerances, or a majority
polarity opposite to the expected one. A periodic finding has confidence
``0.5 min(1, strength / (2 threshold)) + 0.5 f_coverage`` and is at most ``medium``: it warns that
multiples are in the data, not that a pick is wrong.

What to look at
---------------
Overlay the seafloor times multiplied by n on the pick; compare near- and far-offset stacks
(multiples have more moveout than primaries); ask whether demultiple processing was applied; tie
the horizon to wells.

References
----------
.. [1] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261.
.. [2] Sheriff, R. E., and Geldart, L. P., 1995, Exploration Seismology, 2nd ed., Cambridge
       University Press, chapter on multiples. (from memory)
.. [3] Warner, M., 1990, Absolute reflection coefficients from deep seismic reflections,
       Tectonophysics 173, 15-23. (from memory; journal not confirmed)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np
from scipy.ndimage import label

from pitfalls.context import Context, SeafloorMultiple
from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics.autocorrelation import periodicity_strength, windowed_autocorrelation
from pitfalls.physics.multiples import (
    interbed_multiple_twt_ms,
    interbed_polarity,
    peak_amplitude,
    peg_leg_polarity,
    peg_leg_twt_ms,
    seafloor_multiple_polarity,
    seafloor_reflection_coefficient,
    seafloor_reflection_coefficient_from_peg_leg,
    time_dip_ratio,
)
from pitfalls.physics.runs import true_runs

NAME = "multiples"
FAMILY = "multiple"
KINDS = {
    "seafloor": (
        "The pick follows a predicted seafloor multiple (n times the seafloor time).",
        "Energy that bounced between the seafloor and the sea surface builds structures and sequences that do not exist.",
        "Overlay n times the seafloor times on the section; compare the pick's shape with the seafloor's; look at near- "
        "and far-offset stacks (a multiple moves out more); ask whether demultiple processing was run; tie to wells.",
    ),
    "peg-leg": (
        "The pick follows a peg-leg: a shallower reflector's time plus whole seafloor periods.",
        "A peg-leg copies the shape of a real reflector deeper down and looks like a conformable horizon.",
        "Compare the pick with the generating reflector shifted down by the seafloor time; check offset stacks and "
        "well ties.",
    ),
    "interbed": (
        "The pick follows a predicted interbed multiple between two strong reflectors (2 t2 - t1).",
        "Interbed multiples survive surface-multiple removal and mimic deeper layering.",
        "Check whether the two generating reflectors are strong enough to make it; compare with well synthetics.",
    ),
    "periodic": (
        "The section reverberates at the seafloor period in this time window.",
        "Picks inside the window may be multiples even where no single pick follows a predicted time.",
        "Ask whether demultiple processing was applied; treat continuous events in the window with suspicion and "
        "check them against the seafloor's shape.",
    ),
}
RULE_KEYS = {
    "highest_multiplier": (int, 2, 10),
    "peg_leg_round_trips": (int, 0, 5),
    "interbed": (bool, None, None),
    "tolerance_periods": (float, 0.0, 2.0),
    "max_gap_traces": (int, 0, 1000),
    "min_run_traces": (int, 2, 100000),
    "full_coverage_traces": (int, 1, 100000),
    "min_relief_ms": (float, 0.0, 10000.0),
    "dip_ratio_tolerance": (float, 0.01, 10.0),
    "max_drift_tolerances": (float, 0.0, 100.0),
    "auto_reflectors": (int, 0, 10),
    "auto_reflector_fraction": (float, 0.0, 10.0),
    "guard_periods": (float, 0.0, 20.0),
    "dip_smoothing_traces": (int, 1, 1001),
    "gain_exponent": (float, 0.0, 3.0),
    "min_plausible_seafloor_reflection_coefficient": (float, 0.0, 1.0),
    "max_plausible_seafloor_reflection_coefficient": (float, 0.0, 1.0),
    "window_periods": (float, 1.0, 20.0),
    "min_window_ms": (float, 0.0, 20000.0),
    "periodicity_threshold": (float, 0.0, 1.0),
    "high_confidence": (float, 0.0, 1.0),
    "medium_confidence": (float, 0.0, 1.0),
}

ORDINALS = {2: "first", 3: "second", 4: "third", 5: "fourth", 6: "fifth", 7: "sixth", 8: "seventh",
            9: "eighth", 10: "ninth"}
SEVERITY_ORDER = {"high": 2, "medium": 1, "low": 0}
KIND_PREFERENCE = {"seafloor": 2, "peg-leg": 1, "interbed": 0}


@dataclass(frozen=True)
class _Surface:
    """A generating surface per trace: time, signed amplitude and a name (per trace for automatic ones)."""

    name: str
    twt_ms: np.ndarray
    amplitude: np.ndarray


@dataclass(frozen=True)
class _Prediction:
    """A predicted multiple per trace, ready to be compared with a pick."""

    kind: str
    multiplier: int
    low_ms: np.ndarray
    high_ms: np.ndarray
    generator_twt_ms: np.ndarray
    generator_amplitude: np.ndarray
    generator_name: np.ndarray
    expected_polarity: np.ndarray
    upper_name: np.ndarray | None = None


@dataclass(frozen=True)
class _Periodicity:
    strength: np.ndarray        # (n_traces, n_windows)
    lag_ms: np.ndarray          # (n_traces, n_windows)
    start_ms: np.ndarray        # (n_traces, n_windows)
    window_ms: float


def detect(block: Section, context: Context, picks: Picks, rules: Mapping[str, Any]) -> list[Finding]:
    """Findings for picks on predicted multiples and for reverberating windows of the panel."""
    section = block
    settings = rules[NAME]
    seafloor = context.seafloor
    if seafloor.n_found < settings["min_run_traces"] or seafloor.polarity == 0:
        return []
    frequency_hz = context.dominant_frequency_hz
    if not np.isfinite(frequency_hz) or frequency_hz <= 0:
        return []
    period_ms = 1000.0 / frequency_hz
    tolerance_ms = max(section.dt_ms, settings["tolerance_periods"] * period_ms)
    guard_ms = settings["guard_periods"] * period_ms
    data = context.live_data
    snap_ms = float(rules["seafloor"]["snap_ms"])
    seafloor_surface = _Surface("seafloor", seafloor.twt_ms, context.seafloor_peak_amplitude)
    dip_angle_deg = context.seafloor_dip_deg

    periodicity = _periodicity(section, data, seafloor.twt_ms, settings, tolerance_ms, guard_ms)
    findings = _periodic_findings(section, periodicity, settings)

    shared = dict(section=section, data=data, seafloor=seafloor_surface, settings=settings,
                  tolerance_ms=tolerance_ms, snap_ms=snap_ms, periodicity=periodicity,
                  dip_angle_deg=dip_angle_deg)
    automatic = _automatic_reflectors(section, data, context.envelope, seafloor_surface, settings, tolerance_ms,
                                      guard_ms, snap_ms)
    for horizon in picks.horizons:
        if horizon.kind == "seafloor" or horizon.n_points < settings["min_run_traces"]:
            continue
        others = [_horizon_surface(h, data, section, snap_ms) for h in picks.horizons
                  if h.name != horizon.name and h.kind != "seafloor" and h.n_points > 0]
        predictions = _predictions(seafloor_surface, context.seafloor_multiples, others + automatic, settings)
        findings.extend(_horizon_findings(horizon, predictions, shared))
    return findings


# --- predictions ------------------------------------------------------------------------------

def _horizon_surface(horizon: Horizon, data: np.ndarray, section: Section, snap_ms: float) -> _Surface:
    amplitude, _ = peak_amplitude(data, section.t0_ms, section.dt_ms, horizon.twt_ms, snap_ms)
    return _Surface(horizon.name, np.asarray(horizon.twt_ms, dtype=float), amplitude)


def _automatic_reflectors(section: Section, data: np.ndarray, envelope: np.ndarray, seafloor: _Surface,
                          settings: Mapping[str, Any], tolerance_ms: float, guard_ms: float,
                          snap_ms: float) -> list[_Surface]:
    """The strongest envelope peaks per trace below the seafloor (not on a seafloor multiple)."""
    count = int(settings["auto_reflectors"])
    if count == 0:
        return []
    n_traces, n_samples = data.shape
    twt = section.twt_ms
    seafloor_sample = np.rint(section.sample_of(seafloor.twt_ms))
    known = np.isfinite(seafloor_sample)
    rows = np.arange(n_traces)
    seafloor_envelope = np.where(known, envelope[rows, np.clip(np.nan_to_num(seafloor_sample), 0, n_samples - 1).astype(int)], np.inf)
    below = twt[None, :] > (seafloor.twt_ms[:, None] + guard_ms)
    for multiplier in range(2, int(settings["highest_multiplier"]) + 1):
        below &= np.abs(twt[None, :] - multiplier * seafloor.twt_ms[:, None]) > tolerance_ms + guard_ms / 2
    peaks = np.zeros_like(envelope, dtype=bool)
    peaks[:, 1:-1] = (envelope[:, 1:-1] >= envelope[:, :-2]) & (envelope[:, 1:-1] > envelope[:, 2:])
    strong = envelope >= settings["auto_reflector_fraction"] * seafloor_envelope[:, None]
    score = np.where(below & peaks & strong & known[:, None], envelope, 0.0)
    half = max(1, int(round(guard_ms / section.dt_ms)))
    surfaces = []
    for rank in range(count):
        best = np.argmax(score, axis=1)
        found = score[rows, best] > 0
        times = np.where(found, section.t0_ms + best * section.dt_ms, np.nan)
        amplitude, peak_twt = peak_amplitude(data, section.t0_ms, section.dt_ms, times, snap_ms)
        surfaces.append(_Surface(f"automatic reflector {rank + 1}", np.where(found, peak_twt, np.nan), amplitude))
        columns = np.arange(n_samples)[None, :]
        score = np.where(np.abs(columns - best[:, None]) <= half, 0.0, score)
    return surfaces


def _band_misfit(twt_ms: np.ndarray, low_ms: np.ndarray, high_ms: np.ndarray) -> np.ndarray:
    """Distance of a time from the band [low, high] (0 inside); NaN where any of them is NaN."""
    distance = np.maximum(np.maximum(low_ms - twt_ms, twt_ms - high_ms), 0.0)
    return np.where(np.isfinite(twt_ms) & np.isfinite(low_ms) & np.isfinite(high_ms), distance, np.nan)


def _nearest(candidates: list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, str, np.ndarray]],
             pick_twt_ms: np.ndarray):
    """Per trace, the candidate prediction whose band is nearest the pick."""
    lows = np.stack([c[0] for c in candidates])
    highs = np.stack([c[1] for c in candidates])
    distance = _band_misfit(pick_twt_ms[None, :], lows, highs)
    distance = np.where(np.isfinite(distance), distance, np.inf)
    choice = np.argmin(distance, axis=0)
    columns = np.arange(pick_twt_ms.size)
    return choice, columns, lows[choice, columns], highs[choice, columns]


def _predictions(seafloor: _Surface, seafloor_multiples: tuple[SeafloorMultiple, ...], surfaces: list[_Surface],
                 settings: Mapping[str, Any]) -> list[tuple[str, int, list]]:
    """Candidate sets ``(kind, multiplier, [(low, high, generator time, amplitude, name, polarity), ...])``."""
    sets = []
    ones = np.ones_like(seafloor.twt_ms)
    for predicted in seafloor_multiples:
        multiplier = predicted.multiplier
        low, high = predicted.low_twt_ms, predicted.high_twt_ms
        polarity = seafloor_multiple_polarity(multiplier) * ones
        sets.append(("seafloor", multiplier, [(low, high, seafloor.twt_ms, seafloor.amplitude, "seafloor", polarity, None)]))
    for round_trips in range(1, int(settings["peg_leg_round_trips"]) + 1):
        members = []
        for surface in surfaces:
            time = peg_leg_twt_ms(surface.twt_ms, seafloor.twt_ms, round_trips)
            members.append((time, time, surface.twt_ms, surface.amplitude, surface.name,
                            peg_leg_polarity(round_trips) * ones, None))
        if members:
            sets.append(("peg-leg", round_trips, members))
    if settings["interbed"]:
        members = []
        generators = [seafloor] + surfaces
        for upper in generators:
            for lower in generators:
                if upper is lower:
                    continue
                ordered = lower.twt_ms > upper.twt_ms
                time = np.where(ordered, interbed_multiple_twt_ms(upper.twt_ms, lower.twt_ms), np.nan)
                polarity = interbed_polarity(upper.amplitude, lower.amplitude)
                members.append((time, time, lower.twt_ms, lower.amplitude, lower.name, polarity, upper.name))
        if members:
            sets.append(("interbed", 1, members))
    return sets


# --- runs of a pick on a prediction -------------------------------------------------------------

def _horizon_findings(horizon: Horizon, candidate_sets, shared) -> list[Finding]:
    settings = shared["settings"]
    tolerance_ms = shared["tolerance_ms"]
    pick = np.asarray(horizon.twt_ms, dtype=float)
    section = shared["section"]
    pick_amplitude, _ = peak_amplitude(shared["data"], section.t0_ms, section.dt_ms, pick, shared["snap_ms"])
    proposals = []
    for kind, multiplier, members in candidate_sets:
        choice, columns, low, high = _nearest(members, pick)
        misfit = _band_misfit(pick, low, high)
        within = np.isfinite(pick) & np.isfinite(misfit) & (misfit <= tolerance_ms)
        for first, last in true_runs(within, settings["max_gap_traces"], settings["min_run_traces"]):
            run = np.arange(first, last + 1)
            matched = run[within[run]]
            if matched.size < settings["min_run_traces"] // 2 + 1:
                continue
            chosen = choice[matched]
            generator_twt = np.stack([m[2] for m in members])[chosen, matched]
            generator_amplitude = np.stack([m[3] for m in members])[chosen, matched]
            expected = np.stack([m[5] for m in members])[chosen, matched]
            names = [members[c][4] for c in chosen]
            upper_names = [members[c][6] for c in chosen]
            proposals.append((_measure(horizon, kind, multiplier, matched, pick, pick_amplitude, low[matched],
                                       high[matched], misfit[matched], generator_twt, generator_amplitude,
                                       expected, names, upper_names, shared), (int(matched[0]), int(matched[-1]))))
    # strongest first; at equal severity a seafloor multiple explains a run more simply than a
    # peg-leg of another pick that is itself a multiple, and a peg-leg more simply than an interbed
    proposals.sort(key=lambda p: (SEVERITY_ORDER[p[0].severity], KIND_PREFERENCE[p[0].id.split(".")[1]],
                                  p[0].confidence), reverse=True)
    kept: list[tuple[Finding, tuple[int, int]]] = []
    for finding, (a, b) in proposals:  # overlap counted in panel traces, whatever their numbering
        overlap = max((min(b, span[1]) - max(a, span[0]) + 1 for _, span in kept), default=0)
        if overlap <= 0.5 * (b - a + 1):
            kept.append((finding, (a, b)))
    return [finding for finding, _ in kept]


def _measure(horizon, kind, multiplier, matched, pick, pick_amplitude, low, high, misfit, generator_twt,
             generator_amplitude, expected, names, upper_names, shared) -> Finding:
    settings = shared["settings"]
    tolerance_ms = shared["tolerance_ms"]
    seafloor: _Surface = shared["seafloor"]
    pick_run = pick[matched]
    seafloor_run = seafloor.twt_ms[matched]
    centre = 0.5 * (low + high)

    evidence: dict[str, Any] = {
        "misfit_ms_median": float(np.median(misfit)),
        "misfit_ms_p90": float(np.percentile(misfit, 90)),
        "tolerance_ms": float(tolerance_ms),
        "run_traces": int(matched.size),
        "fraction_of_pick": float(matched.size / max(1, horizon.n_points)),
        "seafloor_twt_ms_median": float(np.nanmedian(seafloor_run)),
    }
    if kind == "seafloor":
        evidence["time_multiplier"] = int(multiplier)
        evidence["multiple_order"] = int(multiplier - 1)
        evidence["seafloor_dip_deg_median"] = float(np.nanmedian(shared["dip_angle_deg"][matched]))
        dip_base, dip_reference, expected_dip = np.zeros_like(pick_run), seafloor_run, float(multiplier)
    elif kind == "peg-leg":
        evidence["round_trips"] = int(multiplier)
        evidence["generator"] = _most_common(names)
        dip_base, dip_reference, expected_dip = generator_twt, seafloor_run, float(multiplier)
    else:
        evidence["generator_lower"] = _most_common(names)
        evidence["generator_upper"] = _most_common([n or "" for n in upper_names])
        dip_base, dip_reference, expected_dip = np.zeros_like(pick_run), centre, 1.0

    # dip ratio: Theil-Sen slope of (pick - base) on the reference time over the run
    reference_relief = np.nanpercentile(dip_reference, 95) - np.nanpercentile(dip_reference, 5)
    contradictions = []
    if reference_relief >= max(settings["min_relief_ms"], 2 * shared["section"].dt_ms):
        dip_ratio = time_dip_ratio(pick_run - dip_base, dip_reference)
    else:
        dip_ratio = float("nan")
    evidence["dip_ratio_measured"] = bool(np.isfinite(dip_ratio))
    evidence["dip_ratio_expected"] = expected_dip
    evidence["reference_relief_ms"] = float(reference_relief)
    if np.isfinite(dip_ratio):
        evidence["dip_ratio"] = float(dip_ratio)
        f_dip = max(0.0, 1.0 - abs(dip_ratio / expected_dip - 1.0) / settings["dip_ratio_tolerance"])
        if f_dip == 0.0:
            contradictions.append("dip")
    else:
        f_dip = 0.5

    # drift of the residual along the run: a crossing primary sweeps through the tolerance band
    residual = pick_run - centre
    drift_ms = time_dip_ratio(residual, matched.astype(float)) * float(matched[-1] - matched[0])
    drift_ms = float(drift_ms) if np.isfinite(drift_ms) else 0.0
    evidence["drift_ms"] = drift_ms
    if abs(drift_ms) > settings["max_drift_tolerances"] * tolerance_ms:
        contradictions.append("drift")

    # polarity relative to the generating primary
    product = np.sign(pick_amplitude[matched]) * np.sign(generator_amplitude)
    readable = np.isfinite(product) & (product != 0) & np.isfinite(expected) & (expected != 0)
    if readable.any():
        agreement = float(np.mean(product[readable] == expected[readable]))
        balance = int(np.sign(np.sum(product[readable])))
        evidence["polarity_vs_primary"] = balance
        evidence["polarity_expected"] = int(np.sign(np.sum(expected[readable]))) or int(expected[readable][0])
        evidence["polarity_agreement_fraction"] = agreement
        evidence["polarity_vs_seafloor"] = int(np.sign(np.nansum(np.sign(pick_amplitude[matched]))
                                                       * np.sign(np.nanmedian(seafloor.amplitude))))
        f_polarity = agreement
        if agreement < 0.5:
            contradictions.append("polarity")
    else:
        f_polarity = 0.5

    # amplitude ratio and the seafloor reflection coefficient it implies
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = pick_amplitude[matched] / generator_amplitude
    ratio = ratio[np.isfinite(ratio)]
    f_amplitude = 0.5
    if ratio.size and kind in ("seafloor", "peg-leg"):
        amplitude_ratio = float(np.median(ratio))
        evidence["amplitude_ratio"] = amplitude_ratio
        gain = settings["gain_exponent"]
        if kind == "seafloor":
            implied = seafloor_reflection_coefficient(amplitude_ratio, np.median(pick_run), np.nanmedian(seafloor_run),
                                                      gain, multiplier)
        else:
            implied = seafloor_reflection_coefficient_from_peg_leg(amplitude_ratio, np.median(pick_run),
                                                                   np.nanmedian(generator_twt), gain, multiplier)
        implied = float(implied)
        plausible = bool(settings["min_plausible_seafloor_reflection_coefficient"] <= implied
                         <= settings["max_plausible_seafloor_reflection_coefficient"])
        evidence["seafloor_reflection_coefficient_implied"] = implied
        evidence["seafloor_reflection_coefficient_plausible"] = plausible
        evidence["gain_exponent_assumed"] = float(gain)
        evidence["seafloor_reflection_coefficient_basis"] = (
            "qualitative: assumes the stated gain; a stack's real gain (AGC, spreading correction, demultiple) "
            "is unknown")
        f_amplitude = 1.0 if plausible else 0.0
    elif ratio.size:
        evidence["amplitude_ratio"] = float(np.median(ratio))

    strength = _strength_at(shared["periodicity"], matched, pick_run)
    if np.isfinite(strength):
        evidence["periodicity_strength"] = float(strength)
        f_periodic = min(1.0, strength / settings["periodicity_threshold"]) if settings["periodicity_threshold"] > 0 else 1.0
    else:
        f_periodic = 0.5

    f_misfit = 1.0 - evidence["misfit_ms_median"] / tolerance_ms
    f_coverage = min(1.0, matched.size / settings["full_coverage_traces"])
    confidence = (2 * f_misfit + 2 * f_coverage + 2 * f_dip + 2 * f_polarity + f_amplitude + f_periodic) / 10.0
    confidence = float(np.clip(confidence, 0.0, 1.0))
    evidence["contradictions"] = ",".join(contradictions) if contradictions else "none"
    severity = _severity(confidence, settings, bool(contradictions))

    section = shared["section"]
    first, last = int(section.trace_numbers[matched[0]]), int(section.trace_numbers[matched[-1]])
    name = horizon.name
    if kind == "seafloor":
        title = (f"{name} follows the predicted {ORDINALS.get(multiplier, f'{multiplier - 1}th')} seafloor multiple "
                 f"over traces {first}-{last} ({_dip_ratio_words(evidence, multiplier)})")
        advice = (f"Multiply the seafloor times by {multiplier} and lay them over {name}: a multiple copies the "
                  f"seafloor's shape with {multiplier} times its dip. Compare near- and far-offset stacks "
                  "(the multiple keeps more moveout), ask whether demultiple processing was applied, and tie "
                  "the horizon to a well before mapping it.")
    elif kind == "peg-leg":
        title = (f"{name} follows a peg-leg of {evidence['generator']} ({multiplier} extra water round trip"
                 f"{'s' if multiplier > 1 else ''}) over traces {first}-{last}")
        advice = (f"Shift {evidence['generator']} down by {multiplier} x the seafloor time and compare it with "
                  f"{name}: a peg-leg repeats the generating reflector's shape. Check offset stacks, the "
                  "demultiple history and a well tie before treating it as a layer.")
    else:
        title = (f"{name} follows a predicted interbed multiple of {evidence['generator_upper']} and "
                 f"{evidence['generator_lower']} over traces {first}-{last}")
        advice = ("Check that both generating reflectors are strong, compare the pick with 2 x the lower minus "
                  "the upper reflector time, and compare with a well synthetic that includes multiples.")
    return Finding(id=f"{FAMILY}.{kind}", detector=NAME, severity=severity, confidence=confidence,
                   title=title, advice=advice, horizon=name, traces=(first, last),
                   twt_ms=(float(np.min(pick_run)), float(np.max(pick_run))), evidence=evidence)


def _dip_ratio_words(evidence: Mapping[str, Any], multiplier: int) -> str:
    """The dip ratio for a title; never "nan": says why it could not be measured."""
    if "dip_ratio" in evidence and np.isfinite(evidence["dip_ratio"]):
        return f"dip ratio {evidence['dip_ratio']:.2f}, expected {multiplier}"
    return (f"dip ratio not measured: the seafloor has {evidence.get('reference_relief_ms', 0.0):.0f} ms of relief "
            f"here, too flat to compare dips; expected {multiplier}")


def _most_common(names: list[str]) -> str:
    values, counts = np.unique(np.asarray(names, dtype=object).astype(str), return_counts=True)
    return str(values[int(np.argmax(counts))])


def _severity(confidence: float, settings: Mapping[str, Any], contradicted: bool) -> str:
    if contradicted:
        return "low"
    if confidence >= settings["high_confidence"]:
        return "high"
    if confidence >= settings["medium_confidence"]:
        return "medium"
    return "low"


# --- section-level periodicity ----------------------------------------------------------------

def _periodicity(section: Section, data: np.ndarray, seafloor_twt_ms: np.ndarray, settings: Mapping[str, Any],
                 tolerance_ms: float, guard_ms: float) -> _Periodicity:
    """Reverberation strength per trace and window, windows stepping by half a window below the seafloor."""
    n_traces = section.n_traces
    median_seafloor_ms = float(np.nanmedian(seafloor_twt_ms))
    window_ms = max(settings["min_window_ms"], settings["window_periods"] * median_seafloor_ms)
    window_samples = int(round(window_ms / section.dt_ms))
    step_ms = window_ms / 2.0
    last_ms = section.t0_ms + (section.n_samples - 1) * section.dt_ms
    first_start_ms = median_seafloor_ms + guard_ms
    n_windows = max(0, int(np.floor((last_ms - first_start_ms - window_ms) / step_ms)) + 1)
    half_width = max(1, int(round(tolerance_ms / section.dt_ms)))
    period_samples = seafloor_twt_ms / section.dt_ms
    max_lag = int(np.nanmax(period_samples)) + half_width + 1 if np.isfinite(period_samples).any() else 1
    max_lag = min(max_lag, window_samples - 1)
    strength = np.full((n_traces, n_windows), np.nan)
    lag_ms = np.full((n_traces, n_windows), np.nan)
    start_ms = np.full((n_traces, n_windows), np.nan)
    for window in range(n_windows):
        start_ms[:, window] = seafloor_twt_ms + guard_ms + window * step_ms
        start_index = section.sample_of(start_ms[:, window])
        rho = windowed_autocorrelation(data, start_index, window_samples, max_lag)
        strength[:, window], lag = periodicity_strength(rho, period_samples, half_width)
        lag_ms[:, window] = lag * section.dt_ms
    return _Periodicity(strength=strength, lag_ms=lag_ms, start_ms=start_ms, window_ms=window_ms)


def _strength_at(periodicity: _Periodicity, traces: np.ndarray, twt_ms: np.ndarray) -> float:
    """Median over traces of the strength in the window whose centre is nearest each time."""
    if periodicity.strength.shape[1] == 0:
        return float("nan")
    centres = periodicity.start_ms[traces] + periodicity.window_ms / 2.0
    distance = np.where(np.isfinite(centres), np.abs(centres - twt_ms[:, None]), np.inf)
    nearest = np.argmin(distance, axis=1)
    values = periodicity.strength[traces, nearest]
    values = values[np.isfinite(values)]
    return float(np.median(values)) if values.size else float("nan")


def _periodic_findings(section: Section, periodicity: _Periodicity, settings: Mapping[str, Any]) -> list[Finding]:
    strength = periodicity.strength
    if strength.size == 0:
        return []
    threshold = settings["periodicity_threshold"]
    above = np.nan_to_num(strength, nan=0.0) >= threshold
    # bridge short gaps along the traces in every window
    bridged = np.zeros_like(above)
    for window in range(above.shape[1]):
        for first, last in true_runs(above[:, window], settings["max_gap_traces"], 1):
            bridged[first:last + 1, window] = True
    labels, count = label(bridged, structure=np.ones((3, 3), dtype=bool))
    findings = []
    for component in range(1, count + 1):
        traces, windows = np.nonzero(labels == component)
        first, last = int(traces.min()), int(traces.max())
        if last - first + 1 < settings["min_run_traces"]:
            continue
        inside = above & (labels == component)
        values = strength[inside]
        starts = periodicity.start_ms[inside]
        median_strength = float(np.median(values))
        covered = np.unique(traces[inside[traces, windows]])
        coverage = min(1.0, covered.size / settings["full_coverage_traces"])
        confidence = float(0.5 * min(1.0, median_strength / (2 * threshold)) + 0.5 * coverage) if threshold > 0 else 1.0
        severity = "medium" if confidence >= settings["medium_confidence"] else "low"
        window_start_ms = float(np.nanmin(starts))
        window_end_ms = float(np.nanmax(starts) + periodicity.window_ms)
        evidence = {
            "periodicity_strength_median": median_strength,
            "periodicity_strength_max": float(np.max(values)),
            "periodicity_threshold": float(threshold),
            "peak_lag_ms_median": float(np.nanmedian(periodicity.lag_ms[inside])),
            "window_ms": float(periodicity.window_ms),
            "traces_above_threshold": int(covered.size),
            "fraction_of_section": float(covered.size / section.n_traces),
        }
        first_number, last_number = int(section.trace_numbers[first]), int(section.trace_numbers[last])
        title = (f"The section reverberates at the seafloor period (strength {median_strength:.2f}) over traces "
                 f"{first_number}-{last_number}, {window_start_ms:.0f}-{window_end_ms:.0f} ms")
        advice = ("Events in this window repeat one seafloor period later with reversed sign. Ask whether "
                  "demultiple processing was applied, and before mapping a continuous event here, check that "
                  "it is not the seafloor or a shallow reflector repeated; compare near- and far-offset stacks.")
        findings.append(Finding(id=f"{FAMILY}.periodic", detector=NAME, severity=severity, confidence=confidence,
                                title=title, advice=advice, horizon=None, traces=(first_number, last_number),
                                twt_ms=(window_start_ms, window_end_ms), evidence=evidence))
    return findings
