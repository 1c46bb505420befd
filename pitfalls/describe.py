"""``pitfalls describe``: the measured character of every interval between picks, and along each pick.

For each interval between consecutive picked horizons (the seafloor first; fluid contacts
are described along their pick but bound no interval) the four groups of
:mod:`pitfalls.physics.description` are measured: amplitude, frequency, continuity and
configuration with the terminations against the top and base. The line is also cut into
windows of ``window_traces`` traces, each classified on its own, so the report says where
along the line each class word holds. A 3-D volume is walked inline by inline and its
numbers are gathered over all inlines.

Numbers go into plain dicts (units in the keys) that the reports render; nothing here prints.
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from typing import Any, Mapping, Sequence

import numpy as np

from pitfalls.io.picks import read_pick_file
from pitfalls.io.placement import place_picks
from pitfalls.io.segy import DEFAULT_INLINE_BYTE, DEFAULT_XLINE_BYTE, SeismicFile
from pitfalls.model import Horizon, Picks, Section, SectionInfo
from pitfalls.physics import description as measure
from pitfalls.physics.dip import structure_tensor_dip
from pitfalls.physics.runs import true_runs
from pitfalls.physics.seafloor import dominant_frequency_hz, find_seafloor
from pitfalls.physics.velocity import VelocityModel

AUTOMATIC_SEAFLOOR = "seafloor (automatic)"


@dataclass(frozen=True)
class DescribeSettings:
    """The ``describe`` rules section as plain numbers (see ``rules/default.yaml``)."""

    guard_periods: float
    termination_guard_periods: float
    termination_band_periods: float
    min_coherence: float
    point_fraction: float
    window_traces: int
    reflection_free_max_rms: float
    chaotic_max_share: float
    divergent_min_fan_deg: float
    divergent_min_thickening: float
    parallel_max_spread_deg: float
    thickening_min_fraction: float
    concordant_max_deg: float
    flat_max_deg: float
    toplap_max_ratio: float
    pick_window_ms: float
    gradient_sigma_samples: float
    window_sigma_samples: float

    @classmethod
    def from_rules(cls, rules: Mapping[str, Any]) -> "DescribeSettings":
        return cls(**{key: rules["describe"][key] for key in cls.__dataclass_fields__})


@dataclass
class _IntervalParts:
    """Per-trace numbers of one interval gathered over the panels (3-D: over the inlines)."""

    top: str
    base: str
    rms: list[np.ndarray] = field(default_factory=list)
    peak: list[np.ndarray] = field(default_factory=list)
    spectrum: np.ndarray | None = None
    spectrum_traces: int = 0
    frequencies_hz: np.ndarray | None = None
    coherent: int = 0
    samples: int = 0
    lengths: list[np.ndarray] = field(default_factory=list)
    angles: list[np.ndarray] = field(default_factory=list)
    positions: list[np.ndarray] = field(default_factory=list)
    thickening: list[float] = field(default_factory=list)
    top_terms: list[np.ndarray] = field(default_factory=list)
    base_terms: list[np.ndarray] = field(default_factory=list)
    top_angle: list[np.ndarray] = field(default_factory=list)
    base_angle: list[np.ndarray] = field(default_factory=list)
    windows: list[dict[str, Any]] = field(default_factory=list)
    traces: list[int] = field(default_factory=list)
    inlines: list[int] = field(default_factory=list)


@dataclass
class _HorizonParts:
    name: str
    kind: str
    envelope: list[np.ndarray] = field(default_factory=list)
    rms: list[np.ndarray] = field(default_factory=list)
    coherence: list[np.ndarray] = field(default_factory=list)
    runs: list[np.ndarray] = field(default_factory=list)
    spectrum: np.ndarray | None = None
    spectrum_traces: int = 0
    frequencies_hz: np.ndarray | None = None
    traces: list[int] = field(default_factory=list)
    inlines: list[int] = field(default_factory=list)


@dataclass(frozen=True)
class Description:
    """What the description reports render."""

    section: SectionInfo
    reference_amplitude: float
    dominant_frequency_hz: float
    seafloor_source: str
    velocity: VelocityModel
    intervals: tuple[dict[str, Any], ...]
    horizons: tuple[dict[str, Any], ...]


def _bounding_order(picks: Picks, seafloor_name: str, seafloor_twt_ms: np.ndarray) -> list[tuple[str, np.ndarray]]:
    """The seafloor, then every stratigraphic horizon by median time (contacts bound no interval)."""
    others = [h for h in picks.horizons if h.kind == "horizon" and h.n_points > 0]
    others.sort(key=lambda h: float(np.nanmedian(h.twt_ms)))
    return [(seafloor_name, seafloor_twt_ms)] + [(h.name, h.twt_ms) for h in others]


def _add_spectrum(parts, frequencies_hz: np.ndarray, spectrum: np.ndarray, n_used: int) -> None:
    if n_used == 0:
        return
    if parts.spectrum is None:
        parts.frequencies_hz, parts.spectrum = frequencies_hz, spectrum * n_used
    elif parts.spectrum.size == spectrum.size:
        parts.spectrum = parts.spectrum + spectrum * n_used
    parts.spectrum_traces += n_used


def describe_panel(section: Section, picks: Picks, settings: DescribeSettings, velocity: VelocityModel,
                   seafloor_twt_ms: np.ndarray, seafloor_name: str, period_ms: float, reference: float,
                   intervals: dict[tuple[str, str], _IntervalParts], horizons: dict[str, _HorizonParts]) -> None:
    """Measure every interval and horizon of one panel and add the numbers to the accumulators."""
    data = np.nan_to_num(np.asarray(section.data, dtype=float), nan=0.0)
    n_traces, n_samples = data.shape
    dips = structure_tensor_dip(data, settings.gradient_sigma_samples, settings.window_sigma_samples)
    envelope = measure.envelope(data)
    coherence = dips.coherence
    dip_ms = dips.dip_ms_per_trace(section.dt_ms)
    twt = section.twt_ms[np.newaxis, :]
    guard_ms = settings.guard_periods * period_ms
    term_guard_ms = settings.termination_guard_periods * period_ms
    band_ms = settings.termination_band_periods * period_ms
    bounds = _bounding_order(picks, seafloor_name, seafloor_twt_ms)
    inline = section.inline_number
    numbers = np.asarray(section.trace_numbers)
    for (top_name, top), (base_name, base) in zip(bounds[:-1], bounds[1:]):
        parts = intervals.setdefault((top_name, base_name), _IntervalParts(top_name, base_name))
        mask = measure.interval_mask(n_samples, section.t0_ms, section.dt_ms, top, base, guard_ms)
        present = mask.any(axis=1)
        if not present.any():
            continue
        parts.traces.extend(int(n) for n in numbers[present])
        if inline is not None:
            parts.inlines.append(int(inline))
        rms = measure.trace_rms(data, mask)
        parts.rms.append(rms[present])
        parts.peak.append(measure.trace_peak(envelope, mask)[present])
        _add_spectrum(parts, *measure.mean_amplitude_spectrum(data, mask, section.dt_ms))
        coherent = mask & (coherence >= settings.min_coherence)
        parts.coherent += int(coherent.sum())
        parts.samples += int(mask.sum())
        points = measure.reflection_points(data, mask, settings.point_fraction * float(np.nanmedian(rms)))
        parts.lengths.append(measure.segment_lengths(data, points, dips.dip_samples_per_trace))
        below_seafloor = (top + base)[present] / 2 - seafloor_twt_ms[present]
        below_seafloor = below_seafloor[np.isfinite(below_seafloor)]
        mid_depth_m = float(velocity.depth_below_seafloor_m(np.median(below_seafloor))) if below_seafloor.size else 0.0
        velocity_m_s = float(velocity.interval_velocity_m_s(mid_depth_m))
        angle = measure.dip_angle_deg(dip_ms, velocity_m_s, section.trace_spacing_m)
        thickness = (base - top)[:, np.newaxis]
        with np.errstate(invalid="ignore", divide="ignore"):
            position = (twt - top[:, np.newaxis]) / thickness
        parts.angles.append(angle[coherent])
        parts.positions.append(position[coherent])
        parts.thickening.append(measure.relative_thickening(top, base))
        top_angle = measure.dip_angle_deg(measure.boundary_slope_ms_per_trace(top, 5), velocity_m_s, section.trace_spacing_m)
        base_angle = measure.dip_angle_deg(measure.boundary_slope_ms_per_trace(base, 5), velocity_m_s, section.trace_spacing_m)
        inside = measure.interval_mask(n_samples, section.t0_ms, section.dt_ms, top, base)
        base_band = inside & measure.interval_mask(n_samples, section.t0_ms, section.dt_ms, base - term_guard_ms - band_ms,
                                                   base - term_guard_ms) & (coherence >= settings.min_coherence)
        near_band = inside & measure.interval_mask(n_samples, section.t0_ms, section.dt_ms, top + term_guard_ms,
                                                   top + term_guard_ms + band_ms / 2) & (coherence >= settings.min_coherence)
        far_band = inside & measure.interval_mask(n_samples, section.t0_ms, section.dt_ms, top + term_guard_ms + band_ms / 2,
                                                  top + term_guard_ms + band_ms) & (coherence >= settings.min_coherence)
        reflection_base = measure.band_median(angle, base_band)
        reflection_near = measure.band_median(angle, near_band)
        reflection_far = measure.band_median(angle, far_band)
        base_terms = np.array([
            measure.base_termination(r, b, concordant_max_deg=settings.concordant_max_deg, flat_max_deg=settings.flat_max_deg)
            if np.isfinite(r) and np.isfinite(b) else "" for r, b in zip(reflection_base, base_angle)], dtype=object)
        top_terms = np.array([
            measure.top_termination(n, f, b, concordant_max_deg=settings.concordant_max_deg,
                                    toplap_max_ratio=settings.toplap_max_ratio)
            if np.isfinite(n) and np.isfinite(b) else "" for n, f, b in zip(reflection_near, reflection_far, top_angle)],
            dtype=object)
        parts.base_terms.append(base_terms[present])
        parts.top_terms.append(top_terms[present])
        parts.base_angle.append((reflection_base - base_angle)[present])
        parts.top_angle.append((reflection_near - top_angle)[present])
        _classify_windows(parts, settings, numbers, inline, present, rms, reference, coherence, coherent, mask, angle,
                          position, top, base, top_terms, base_terms)
    for horizon in picks.horizons:
        parts = horizons.setdefault(horizon.name, _HorizonParts(horizon.name, horizon.kind))
        _describe_horizon(parts, section, horizon.twt_ms, data, envelope, coherence, settings, period_ms)
    if seafloor_name == AUTOMATIC_SEAFLOOR:
        parts = horizons.setdefault(seafloor_name, _HorizonParts(seafloor_name, "seafloor"))
        _describe_horizon(parts, section, seafloor_twt_ms, data, envelope, coherence, settings, period_ms)


def _describe_horizon(parts: _HorizonParts, section: Section, twt_ms: np.ndarray, data: np.ndarray,
                      envelope: np.ndarray, coherence: np.ndarray, settings: DescribeSettings, period_ms: float) -> None:
    picked = np.isfinite(twt_ms)
    if not picked.any():
        return
    parts.traces.extend(int(n) for n in np.asarray(section.trace_numbers)[picked])
    if section.inline_number is not None:
        parts.inlines.append(int(section.inline_number))
    parts.envelope.append(measure.values_at_pick(envelope, twt_ms, section.t0_ms, section.dt_ms)[picked])
    along = measure.values_at_pick(coherence, twt_ms, section.t0_ms, section.dt_ms)
    parts.coherence.append(along[picked])
    runs = true_runs(np.nan_to_num(along, nan=0.0) >= settings.min_coherence)
    parts.runs.append(np.concatenate([np.full(last - first + 1, last - first + 1) for first, last in runs])
                      if runs else np.zeros(0, dtype=int))
    window = measure.window_around(section.n_samples, section.t0_ms, section.dt_ms, twt_ms,
                                   settings.pick_window_ms / 2)
    parts.rms.append(measure.trace_rms(data, window)[picked])
    _add_spectrum(parts, *measure.mean_amplitude_spectrum(data, window, section.dt_ms))


def _classify_windows(parts: _IntervalParts, settings: DescribeSettings, numbers: np.ndarray, inline: int | None,
                      present: np.ndarray, rms: np.ndarray, reference: float, coherence: np.ndarray,
                      coherent: np.ndarray, mask: np.ndarray, angle: np.ndarray, position: np.ndarray,
                      top: np.ndarray, base: np.ndarray, top_terms: np.ndarray, base_terms: np.ndarray) -> None:
    """Classify each window of ``window_traces`` traces on its own, for 'where along the line'."""
    width = settings.window_traces
    for start in range(0, present.size, width):
        stop = min(present.size, start + width)
        if stop - start < max(3, width // 3) and start > 0:
            continue  # a short remainder at the end of the line is too few traces to classify
        rows = slice(start, stop)
        if not present[rows].any():
            continue
        share = float(coherent[rows].sum() / max(1, mask[rows].sum()))
        rms_relative = float(np.nanmedian(rms[rows]) / reference)
        dips = measure.dip_statistics(angle[rows][coherent[rows]], position[rows][coherent[rows]])
        thickening = measure.relative_thickening(top[rows], base[rows])
        word = measure.configuration_class(
            rms_relative, share, dips, thickening, reflection_free_max_rms=settings.reflection_free_max_rms,
            chaotic_max_share=settings.chaotic_max_share, divergent_min_fan_deg=settings.divergent_min_fan_deg,
            divergent_min_thickening=settings.divergent_min_thickening,
            parallel_max_spread_deg=settings.parallel_max_spread_deg)
        parts.windows.append({
            "inline": inline,
            "traces": [int(numbers[rows][present[rows]][0]), int(numbers[rows][present[rows]][-1])],
            "class": word,
            "top_termination": _majority(top_terms[rows]),
            "base_termination": _majority(base_terms[rows]),
            "rms_relative": rms_relative,
            "coherent_share": share,
            "dip_spread_deg": dips.spread_deg if dips else float("nan"),
            "fan_deg": dips.fan_deg if dips else float("nan"),
        })


def _majority(terms: np.ndarray) -> str:
    measured = [t for t in terms if t]
    if not measured:
        return "concordant"
    return Counter(measured).most_common(1)[0][0]


def _weighted_lengths(lengths: np.ndarray, spacing_m: float) -> dict[str, float]:
    if lengths.size == 0:
        return {"segment_length_traces_median": 0.0, "segment_length_traces_mean": 0.0,
                "segment_length_m_median": 0.0, "segment_length_m_mean": 0.0}
    median, mean = float(np.median(lengths)), float(np.mean(lengths))
    return {"segment_length_traces_median": median, "segment_length_traces_mean": mean,
            "segment_length_m_median": median * spacing_m, "segment_length_m_mean": mean * spacing_m}


def _spectrum_dict(parts) -> dict[str, float]:
    if parts.spectrum is None or parts.spectrum_traces == 0:
        return {"dominant_hz": float("nan"), "centroid_hz": float("nan"), "bandwidth_hz": float("nan")}
    result = measure.spectrum_measures(parts.frequencies_hz, parts.spectrum / parts.spectrum_traces)
    return {"dominant_hz": result.dominant_hz, "centroid_hz": result.centroid_hz, "bandwidth_hz": result.bandwidth_hz}


def _merge_windows(windows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """Neighbouring windows on one inline with the same class and terminations become one stretch."""
    merged: list[dict[str, Any]] = []
    keys = ("inline", "class", "top_termination", "base_termination")
    for window in windows:
        if merged and all(merged[-1][k] == window[k] for k in keys) and merged[-1]["traces"][1] < window["traces"][0]:
            merged[-1]["traces"][1] = window["traces"][1]
            merged[-1]["n_windows"] += 1
        else:
            merged.append({**{k: window[k] for k in keys}, "traces": list(window["traces"]), "n_windows": 1})
    return merged


def _range(values: list[int]) -> list[int] | None:
    return [min(values), max(values)] if values else None


def summarise_interval(parts: _IntervalParts, settings: DescribeSettings, reference: float, spacing_m: float,
                       geometry: str) -> dict[str, Any]:
    """The interval's entry of the description report."""
    rms = np.concatenate(parts.rms) if parts.rms else np.zeros(0)
    peak = np.concatenate(parts.peak) if parts.peak else np.zeros(0)
    rms_relative = float(np.nanmedian(rms) / reference) if rms.size else float("nan")
    share = parts.coherent / parts.samples if parts.samples else float("nan")
    angles = np.concatenate(parts.angles) if parts.angles else np.zeros(0)
    positions = np.concatenate(parts.positions) if parts.positions else np.zeros(0)
    dips = measure.dip_statistics(angles, positions)
    thickening = float(np.mean(parts.thickening)) if parts.thickening else 0.0
    word = measure.configuration_class(
        rms_relative, share, dips, thickening, reflection_free_max_rms=settings.reflection_free_max_rms,
        chaotic_max_share=settings.chaotic_max_share, divergent_min_fan_deg=settings.divergent_min_fan_deg,
        divergent_min_thickening=settings.divergent_min_thickening, parallel_max_spread_deg=settings.parallel_max_spread_deg)
    top_terms = np.concatenate(parts.top_terms) if parts.top_terms else np.zeros(0, dtype=object)
    base_terms = np.concatenate(parts.base_terms) if parts.base_terms else np.zeros(0, dtype=object)
    top_angle = np.concatenate(parts.top_angle) if parts.top_angle else np.zeros(0)
    base_angle = np.concatenate(parts.base_angle) if parts.base_angle else np.zeros(0)
    lengths = np.concatenate(parts.lengths) if parts.lengths else np.zeros(0)
    entry: dict[str, Any] = {"top": parts.top, "base": parts.base}
    if geometry == "3d":
        entry.update({"traces": None, "inlines": _range(parts.inlines), "xlines": _range(parts.traces)})
    else:
        entry.update({"traces": _range(parts.traces), "inlines": None, "xlines": None})
    entry["amplitude"] = {
        "rms": float(np.nanmedian(rms)) if rms.size else float("nan"),
        "rms_relative": rms_relative,
        "envelope_peak_relative": float(np.nanmedian(peak) / reference) if peak.size else float("nan"),
        "rms_lateral_variation": measure.lateral_variation(rms),
        "envelope_peak_lateral_variation": measure.lateral_variation(peak),
    }
    entry["frequency"] = _spectrum_dict(parts)
    entry["continuity"] = {"coherent_share": share, **_weighted_lengths(lengths, spacing_m)}
    measured_top = [t for t in top_terms if t]
    measured_base = [t for t in base_terms if t]
    entry["configuration"] = {
        "class": word,
        "thickening": measure.thickening_direction(thickening, settings.thickening_min_fraction),
        "top_termination": _majority(top_terms),
        "base_termination": _majority(base_terms),
        "dip_spread_deg": dips.spread_deg if dips else float("nan"),
        "top_dip_deg": dips.top_dip_deg if dips else float("nan"),
        "base_dip_deg": dips.base_dip_deg if dips else float("nan"),
        "fan_deg": dips.fan_deg if dips else float("nan"),
        "relative_thickening": thickening,
        "top_angle_deg_median": float(np.nanmedian(top_angle)) if np.isfinite(top_angle).any() else float("nan"),
        "base_angle_deg_median": float(np.nanmedian(base_angle)) if np.isfinite(base_angle).any() else float("nan"),
        "top_termination_measured_share": len(measured_top) / top_terms.size if top_terms.size else 0.0,
        "base_termination_measured_share": len(measured_base) / base_terms.size if base_terms.size else 0.0,
        "stretches": _merge_windows(parts.windows),
    }
    return entry


def summarise_horizon(parts: _HorizonParts, settings: DescribeSettings, reference: float, spacing_m: float,
                      geometry: str) -> dict[str, Any]:
    """The horizon's entry of the description report: amplitude, frequency and continuity along the pick."""
    envelope = np.concatenate(parts.envelope) if parts.envelope else np.zeros(0)
    rms = np.concatenate(parts.rms) if parts.rms else np.zeros(0)
    coherence = np.concatenate(parts.coherence) if parts.coherence else np.zeros(0)
    runs = np.concatenate(parts.runs) if parts.runs else np.zeros(0)
    entry: dict[str, Any] = {"horizon": parts.name, "kind": parts.kind}
    if geometry == "3d":
        entry.update({"traces": None, "inlines": _range(parts.inlines), "xlines": _range(parts.traces)})
    else:
        entry.update({"traces": _range(parts.traces), "inlines": None, "xlines": None})
    finite = envelope[np.isfinite(envelope)]
    entry["amplitude"] = {
        "rms_relative": float(np.nanmedian(rms) / reference) if np.isfinite(rms).any() else float("nan"),
        "rms_lateral_variation": measure.lateral_variation(rms),
        "envelope_median_relative": float(np.median(finite) / reference) if finite.size else float("nan"),
        "envelope_peak_relative": float(np.max(finite) / reference) if finite.size else float("nan"),
        "envelope_lateral_variation": measure.lateral_variation(envelope),
    }
    entry["frequency"] = _spectrum_dict(parts)
    coherent = coherence[np.isfinite(coherence)]
    entry["continuity"] = {
        "coherent_share": float(np.mean(coherent >= settings.min_coherence)) if coherent.size else float("nan"),
        **_weighted_lengths(runs, spacing_m),
    }
    return entry


def describe_file(section_path: str, pick_paths: Sequence[str], rules: Mapping[str, Any],
                  iline_byte: int = DEFAULT_INLINE_BYTE, xline_byte: int = DEFAULT_XLINE_BYTE,
                  force_2d: bool = False) -> Description:
    """Describe a SEG-Y section between its picks (module docstring).

    Raises
    ------
    PitfallsInputError
        For any problem with the section or the picks.
    """
    settings = DescribeSettings.from_rules(rules)
    velocity = VelocityModel.from_rules(rules)
    pick_files = [read_pick_file(path) for path in pick_paths]
    intervals: dict[tuple[str, str], _IntervalParts] = {}
    horizons: dict[str, _HorizonParts] = {}
    with SeismicFile(section_path, rules["section"]["fallback_trace_spacing_m"], iline_byte, xline_byte,
                     force_2d) as seismic:
        info = seismic.info
        placed = place_picks(pick_files, info, seismic.layout)
        first = seismic.inline_panel(info.n_inlines // 2) if info.geometry == "3d" else next(iter(seismic.panels()))
        first_seafloor = find_seafloor(first, placed.panel(info.n_inlines // 2 if info.geometry == "3d" else 0), rules)
        frequency_hz = dominant_frequency_hz(first, first_seafloor.twt_ms)
        period_ms = 1000.0 / frequency_hz if np.isfinite(frequency_hz) and frequency_hz > 0 else 40.0
        reference = measure.reference_amplitude(measure.envelope(first.data), first_seafloor.twt_ms, first.t0_ms,
                                                first.dt_ms)
        sources = set()
        for panel_index, panel in enumerate(seismic.panels()):
            picks = placed.panel(panel_index)
            seafloor = find_seafloor(panel, picks, rules)
            sources.add(seafloor.source)
            picked_seafloor = picks.of_kind("seafloor")
            name = picked_seafloor[0].name if picked_seafloor else AUTOMATIC_SEAFLOOR
            describe_panel(panel, picks, settings, velocity, seafloor.twt_ms, name, period_ms, reference,
                           intervals, horizons)
    spacing = info.trace_spacing_m
    return Description(
        section=info, reference_amplitude=reference, dominant_frequency_hz=frequency_hz,
        seafloor_source="+".join(sorted(sources)), velocity=velocity,
        intervals=tuple(summarise_interval(p, settings, reference, spacing, info.geometry) for p in intervals.values()),
        horizons=tuple(summarise_horizon(p, settings, reference, spacing, info.geometry) for p in horizons.values()))


def describe_section(section: Section, picks: Picks, rules: Mapping[str, Any]) -> Description:
    """Describe one in-memory panel (a 2-D line) between its picks; the same numbers as :func:`describe_file`."""
    settings = DescribeSettings.from_rules(rules)
    velocity = VelocityModel.from_rules(rules)
    seafloor = find_seafloor(section, picks, rules)
    frequency_hz = dominant_frequency_hz(section, seafloor.twt_ms)
    period_ms = 1000.0 / frequency_hz if np.isfinite(frequency_hz) and frequency_hz > 0 else 40.0
    reference = measure.reference_amplitude(measure.envelope(section.data), seafloor.twt_ms, section.t0_ms,
                                            section.dt_ms)
    picked_seafloor = picks.of_kind("seafloor")
    name = picked_seafloor[0].name if picked_seafloor else AUTOMATIC_SEAFLOOR
    intervals: dict[tuple[str, str], _IntervalParts] = {}
    horizons: dict[str, _HorizonParts] = {}
    describe_panel(section, picks, settings, velocity, seafloor.twt_ms, name, period_ms, reference, intervals, horizons)
    info = SectionInfo(path=section.name, sha256="0" * 64, geometry="2d", n_traces=section.n_traces,
                       n_samples=section.n_samples, dt_ms=section.dt_ms, t0_ms=section.t0_ms,
                       trace_spacing_m=section.trace_spacing_m)
    return Description(
        section=info, reference_amplitude=reference, dominant_frequency_hz=frequency_hz, seafloor_source=seafloor.source,
        velocity=velocity,
        intervals=tuple(summarise_interval(p, settings, reference, section.trace_spacing_m, "2d")
                        for p in intervals.values()),
        horizons=tuple(summarise_horizon(p, settings, reference, section.trace_spacing_m, "2d") for p in horizons.values()))
