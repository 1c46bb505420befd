"""Picks that skip a cycle or flip polarity along a horizon.

A pick that jumps by about one dominant period between neighbouring traces, where the
horizon's own trend does not, has most likely slipped onto the next peak or trough of
the same wavelet train (a cycle skip): the map then carries a step of one period that
is not geology, and a closure or a throw can come from nothing else. A pick whose sample
polarity changes (peak here, trough there) over a stretch of traces has either moved to
a different reflector or crosses a real polarity change (a fluid effect, a tuning
change) that the interpreter should see and name.

Cycle skip: at each pair of neighbouring picked traces the step is compared with the
median step of the ``trend_traces`` neighbours either side; a residual between
``skip_min_periods`` and ``skip_max_periods`` dominant periods is a skip. A skip and a
later skip of opposite sign on the same horizon bound the skipped stretch; an unpaired
skip runs to the end of the continuous pick. Confidence is
``0.5 + 0.5 * (1 - |jump/period - 1| / half_width)`` times the share of that stretch
whose sample sign equals the sign before the skip, because a true cycle skip lands on
the same phase one cycle away.

Polarity flip: the sign of the sample at each pick (strongest sample within
``snap_ms``) against the horizon's majority sign, counted only where the amplitude is at
least ``min_amplitude_fraction`` of the horizon's median absolute amplitude (a pick on a
zero crossing is not a flip). Runs of at least ``min_run_traces`` reversed traces are
reported: medium from ``medium_min_traces`` traces on, low below that (short flips are
mostly interference with a crossing event). A flip is put as a question, not called a
picking error: gas below a reservoir top reverses its reflection. Where a picked contact lies
below the horizon on at least half of the flip's traces, the flip is graded low and its
evidence names the contact. Confidence is the run's share of reversed samples times a term
that grows with the amplitude ratio.

References
----------
.. [1] Sheriff, R. E., and Geldart, L. P., 1995, Exploration Seismology, 2nd ed.,
       Cambridge University Press (phase correlation and cycle skips in picking; from memory).
"""
from __future__ import annotations

from typing import Any, Mapping

import numpy as np
from scipy.ndimage import median_filter

from pitfalls.context import Context
from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics import character
from pitfalls.physics.description import instantaneous_frequency_hz
from pitfalls.physics.runs import true_runs
from pitfalls.physics.seafloor import amplitude_at, majority_sign

NAME = "pick_consistency"
FAMILY = "pick"
KINDS = {
    "cycle-skip": (
        "The pick jumps by about one dominant period between neighbouring traces where the horizon's trend does not.",
        "A skip onto the next cycle puts a step of one period into the map: false throws, false closures, wrong thickness.",
        "Follow the same peak or trough across the jump on the section; check whether a fault there is real; re-pick the stretch on one phase.",
    ),
    "polarity-flip": (
        "The sample at the pick changes sign (peak here, trough there) over a stretch of traces: has the pick moved to another reflector, or does the reflection itself reverse?",
        "A flip is not always a picking error: gas below a top reverses its reflection, and tuning or a lithology change can too. A pick that moved to another reflector misplaces the map; a real reversal is itself worth naming. A flip over a picked contact is graded one step lower, since a fluid is the likelier cause there.",
        "Look at the waveform along the horizon at the flip; if the event is the same and the polarity truly reverses, name the cause (a gas or fluid effect, tuning, lithology); if the pick has moved, re-pick one phase throughout.",
    ),
    "character-change": (
        "The amplitude, frequency or continuity along the pick changes suddenly at a trace where the reflections above and below it do not change.",
        "This is where a pick most often leaves its reflector for a neighbouring one (through a crossing event, a tuning zone or a gap); the map then joins two different surfaces. A real change of a single reflector (a fluid effect, a pinch-out) also shows here and is worth naming.",
        "Follow the reflector across the named trace on the section, flattened on the pick if you can; see whether the pick stays on the same event; if it does, look for a fluid, tuning or facies cause of the change.",
    ),
}
RULE_KEYS = {
    "trend_traces": (int, 1, 100),
    "skip_min_periods": (float, 0.3, 1.0),
    "skip_max_periods": (float, 1.0, 3.0),
    "high_min_traces": (int, 1, 100000),
    "snap_ms": (float, 0.0, 50.0),
    "min_amplitude_fraction": (float, 0.0, 1.0),
    "min_run_traces": (int, 1, 100000),
    "medium_min_traces": (int, 1, 100000),
    "max_gap_traces": (int, 0, 1000),
    "character_window_traces": (int, 2, 1000),
    "character_amplitude_ratio": (float, 1.0, 100.0),
    "character_frequency_ratio": (float, 1.0, 10.0),
    "character_coherence_change": (float, 0.0, 1.0),
    "character_half_window_ms": (float, 1.0, 500.0),
    "character_guard_ms": (float, 0.0, 1000.0),
    "character_band_ms": (float, 1.0, 5000.0),
    "character_neighbour_fraction": (float, 0.0, 1.0),
}


def detect(block: Section, context: Context, picks: Picks, rules: Mapping[str, Any]) -> list[Finding]:
    """Cycle skips, polarity flips and changes of character on every picked horizon of one panel."""
    section = block
    settings = rules[NAME]
    frequency_hz = context.dominant_frequency_hz
    findings: list[Finding] = []
    for horizon in picks.horizons:
        if horizon.n_points < 3:
            continue
        if np.isfinite(frequency_hz) and frequency_hz > 0:
            findings.extend(_cycle_skips(section, horizon, 1000.0 / frequency_hz, settings))
        if horizon.kind != "seafloor":
            contacts = [other for other in picks.of_kind("contact") if other is not horizon]
            findings.extend(_polarity_flips(section, horizon, contacts, settings))
    window = int(settings["character_window_traces"])
    followed = [h for h in picks.horizons if h.kind != "seafloor" and h.n_points >= 2 * window + 1]
    if followed:
        frequency, power = instantaneous_frequency_hz(context.live_data, section.dt_ms)
        for horizon in followed:
            findings.extend(_character_changes(section, context, horizon, frequency, power, settings))
    return findings


def _character_changes(section: Section, context: Context, horizon: Horizon, frequency: np.ndarray,
                       power: np.ndarray, settings: Mapping[str, Any]) -> list[Finding]:
    """Low notes where the pick's character steps and the bands above and below it do not."""
    window = int(settings["character_window_traces"])
    envelope, coherence = context.envelope, context.dip.coherence
    twt = horizon.twt_ms
    args = (envelope, frequency, power, coherence, twt, section.t0_ms, section.dt_ms)
    pick = character.along_pick(*args, float(settings["character_half_window_ms"]))
    guard, band = float(settings["character_guard_ms"]), float(settings["character_band_ms"])
    neighbours = [character.in_band(*args, -band, -guard), character.in_band(*args, guard, band)]
    thresholds = {"amplitude": float(np.log(settings["character_amplitude_ratio"])),
                  "frequency": float(np.log(settings["character_frequency_ratio"])),
                  "continuity": float(settings["character_coherence_change"])}
    changes = character.character_changes(pick, neighbours, window, thresholds,
                                          float(settings["character_neighbour_fraction"]))
    findings: list[Finding] = []
    groups: list[list[character.CharacterChange]] = []
    for change in changes:  # changes of several measures at about one trace make one note
        if groups and change.index - groups[-1][0].index <= window // 2:
            groups[-1].append(change)
        else:
            groups.append([change])
    for group in groups:
        index = group[0].index
        first, last = max(0, index - window), min(section.n_traces - 1, index + window - 1)
        change_number = int(section.trace_numbers[index])
        evidence: dict[str, Any] = {"change_trace": change_number, "window_traces": window,
                                    "measures": ",".join(c.measure for c in group)}
        strength = 0.0
        for change in group:
            threshold = thresholds[change.measure]
            strength = max(strength, abs(change.step) / threshold)
            if change.measure == "amplitude":
                evidence.update(amplitude_before=change.before, amplitude_after=change.after,
                                amplitude_ratio=float(np.exp(change.step)))
            elif change.measure == "frequency":
                evidence.update(frequency_before_hz=change.before, frequency_after_hz=change.after)
            else:
                evidence.update(coherence_before=change.before, coherence_after=change.after)
        strongest = max(group, key=lambda c: abs(c.step) / thresholds[c.measure])
        evidence["step"] = strongest.step
        evidence["neighbour_step"] = strongest.neighbour_step
        quiet = 1.0 - min(1.0, max(0.0, strongest.neighbour_step) / abs(strongest.step))
        confidence = float(np.clip(0.5 * min(2.0, strength) * quiet, 0.0, 1.0))
        times = twt[first:last + 1][np.isfinite(twt[first:last + 1])]
        findings.append(Finding(
            id="pick.character-change", detector=NAME, severity="low", confidence=confidence,
            title=(f"{horizon.name} changes {' and '.join(c.measure for c in group)} at trace {change_number} "
                   "where the reflections above and below do not"),
            advice=KINDS["character-change"][2], horizon=horizon.name,
            traces=(int(section.trace_numbers[first]), int(section.trace_numbers[last])),
            twt_ms=(float(times.min()), float(times.max())) if times.size else None, evidence=evidence))
    return findings


def _cycle_skips(section: Section, horizon: Horizon, period_ms: float, settings: Mapping[str, Any]) -> list[Finding]:
    twt = horizon.twt_ms
    picked = np.flatnonzero(np.isfinite(twt))
    steps = np.diff(twt[picked])
    neighbours = np.diff(picked) == 1
    if steps.size < 3:
        return []
    trend = median_filter(steps, size=2 * int(settings["trend_traces"]) + 1, mode="nearest")
    residual = steps - trend
    size = np.abs(residual) / period_ms
    is_skip = neighbours & (size >= settings["skip_min_periods"]) & (size <= settings["skip_max_periods"])
    skips = [(int(k), float(residual[k])) for k in np.flatnonzero(is_skip)]
    findings = []
    used: set[int] = set()
    sign_before = np.sign(amplitude_at(section, twt, settings["snap_ms"]))
    for position, (k, jump_ms) in enumerate(skips):
        if k in used:
            continue
        first_index = int(picked[k + 1])
        back = next(((k2, j2) for k2, j2 in skips[position + 1:] if np.sign(j2) != np.sign(jump_ms)), None)
        if back is not None:
            used.add(back[0])
            last_index = int(picked[back[0]])
        else:
            segment_end = k + 1
            while segment_end + 1 < len(picked) and picked[segment_end + 1] == picked[segment_end] + 1:
                segment_end += 1
            last_index = int(picked[segment_end])
        stretch = slice(first_index, last_index + 1)
        before = sign_before[int(picked[k])]
        same_phase = float(np.mean(sign_before[stretch] == before)) if np.isfinite(before) else 0.0
        jump_periods = abs(jump_ms) / period_ms
        half_width = max(settings["skip_max_periods"] - 1.0, 1.0 - settings["skip_min_periods"])
        closeness = 1.0 - min(1.0, abs(jump_periods - 1.0) / half_width)
        confidence = float(np.clip((0.5 + 0.5 * closeness) * same_phase, 0.0, 1.0))
        n_traces = last_index - first_index + 1
        severity = "high" if n_traces >= settings["high_min_traces"] and confidence >= 0.5 else "medium"
        first_number = int(section.trace_numbers[first_index])
        last_number = int(section.trace_numbers[last_index])
        times = twt[stretch][np.isfinite(twt[stretch])]
        findings.append(Finding(
            id="pick.cycle-skip", detector=NAME, severity=severity, confidence=confidence,
            title=(f"{horizon.name} jumps {jump_ms:+.0f} ms (about {jump_periods:.1f} period) at trace {first_number} "
                   f"and stays on the other cycle to trace {last_number}"),
            advice=KINDS["cycle-skip"][2], horizon=horizon.name, traces=(first_number, last_number),
            twt_ms=(float(times.min()), float(times.max())),
            evidence={"jump_ms": jump_ms, "dominant_period_ms": period_ms, "jump_in_periods": jump_periods,
                      "skip_trace": first_number, "traces_on_other_cycle": n_traces,
                      "same_phase_fraction": same_phase, "returns": back is not None},
        ))
    return findings


def _contact_below(horizon: Horizon, contacts: list[Horizon], stretch: slice) -> str | None:
    """The picked contact lying below the horizon on at least half of the stretch, if any (a fluid there
    can reverse the horizon's reflection)."""
    n_traces = stretch.stop - stretch.start
    for contact in contacts:
        below = np.isfinite(contact.twt_ms[stretch]) & (contact.twt_ms[stretch] > horizon.twt_ms[stretch])
        if np.count_nonzero(below) >= 0.5 * n_traces:
            return contact.name
    return None


def _polarity_flips(section: Section, horizon: Horizon, contacts: list[Horizon],
                    settings: Mapping[str, Any]) -> list[Finding]:
    amplitude = amplitude_at(section, horizon.twt_ms, settings["snap_ms"])
    strong = np.abs(amplitude) >= settings["min_amplitude_fraction"] * np.nanmedian(np.abs(amplitude))
    usual = majority_sign(amplitude[strong])
    if usual == 0:
        return []
    reversed_ = strong & (np.sign(amplitude) == -usual)
    findings = []
    for first, last in true_runs(reversed_, int(settings["max_gap_traces"]), int(settings["min_run_traces"])):
        stretch = slice(first, last + 1)
        share = float(np.mean(reversed_[stretch][np.isfinite(amplitude[stretch])]))
        ratio = float(np.nanmedian(np.abs(amplitude[stretch])) / np.nanmedian(np.abs(amplitude[strong & ~reversed_])))
        confidence = float(np.clip(share * min(1.0, 0.5 + 0.5 * ratio), 0.0, 1.0))
        severity = "medium" if last - first + 1 >= settings["medium_min_traces"] else "low"
        first_number, last_number = int(section.trace_numbers[first]), int(section.trace_numbers[last])
        times = horizon.twt_ms[stretch][np.isfinite(horizon.twt_ms[stretch])]
        evidence = {"horizon_polarity": usual, "reversed_fraction": share, "n_traces": last - first + 1,
                    "amplitude_ratio_to_rest": ratio}
        contact = _contact_below(horizon, contacts, stretch)
        if contact is None:
            title = (f"Has {horizon.name} moved to another reflector over traces {first_number}-{last_number}? "
                     "Its pick there has the opposite polarity to the rest of the horizon")
        else:
            severity = "low"  # one step below medium: a fluid under the horizon is the likelier cause
            evidence["over_picked_contact"] = contact
            title = (f"{horizon.name} reverses polarity over traces {first_number}-{last_number}, above the picked "
                     f"contact {contact}: a fluid effect (gas reverses a top) or a move to another reflector?")
        findings.append(Finding(
            id="pick.polarity-flip", detector=NAME, severity=severity, confidence=confidence,
            title=title, advice=KINDS["polarity-flip"][2], horizon=horizon.name, traces=(first_number, last_number),
            twt_ms=(float(times.min()), float(times.max())), evidence=evidence,
        ))
    return findings
