"""The seafloor, its polarity, and the data's dominant period: what every detector measures against.

Every detector judges polarity relative to the seafloor reflection of the same data, never
absolutely: SEG-Y files come in both display conventions (common practice).

Automatic seafloor, per trace: the envelope (Hilbert transform) of the trace down to
``search_max_ms``; the onset is the first sample whose envelope reaches
``onset_fraction`` of that trace's maximum; the seafloor is the largest absolute sample
within ``lobe_window_ms`` after the onset, refined by a three-point parabola. A trace counts
only where its data begin (first non-zero sample) no more than ``late_start_ms`` below the
median start of the panel, and where the pick jumps no more than ``max_jump_ms`` from a running
median of ``continuity_traces`` traces: the first strong, laterally continuous event.
Exact-zero and NaN samples are no data, never a seafloor.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np
from pitfalls.model import Picks, Section
from pitfalls.physics.envelope import analytic_signal


@dataclass(frozen=True)
class Seafloor:
    """The seafloor on one panel."""

    twt_ms: np.ndarray
    """Seafloor two-way time per trace, shape (n_traces,); NaN where none was found."""
    amplitude: np.ndarray
    """Signed amplitude of the seafloor lobe per trace, shape (n_traces,); NaN where none."""
    polarity: int
    """+1 if the seafloor lobe is a positive number in this data, -1 if negative, 0 if unknown."""
    source: str
    """``picked`` (from a pick of kind seafloor), ``automatic``, or ``picked+automatic``."""

    @property
    def n_found(self) -> int:
        return int(np.count_nonzero(np.isfinite(self.twt_ms)))


def parabolic_peak(values: np.ndarray, index: int) -> tuple[float, float]:
    """Three-point parabola through ``values[index-1:index+2]``: fractional offset and height."""
    if index <= 0 or index >= len(values) - 1:
        return 0.0, float(values[index])
    y0, y1, y2 = float(values[index - 1]), float(values[index]), float(values[index + 1])
    denominator = y0 - 2.0 * y1 + y2
    if denominator == 0.0:
        return 0.0, y1
    offset = 0.5 * (y0 - y2) / denominator
    offset = float(np.clip(offset, -0.5, 0.5))
    return offset, y1 - 0.25 * (y0 - y2) * offset


def live_start_index(data: np.ndarray) -> np.ndarray:
    """Index of the first non-zero, finite sample of each trace; n_samples for a dead trace."""
    live = np.isfinite(data) & (data != 0)
    any_live = live.any(axis=1)
    start = np.argmax(live, axis=1)
    return np.where(any_live, start, data.shape[1])


def auto_seafloor(section: Section, rules: Mapping[str, Any]) -> np.ndarray:
    """Automatic seafloor two-way time per trace (NaN where none), as the module describes."""
    settings = rules["seafloor"]
    data = np.nan_to_num(section.data, nan=0.0)
    n_traces, n_samples = data.shape
    search = int(min(n_samples, max(8, round((settings["search_max_ms"] - section.t0_ms) / section.dt_ms))))
    lobe = max(1, int(round(settings["lobe_window_ms"] / section.dt_ms)))
    start = live_start_index(data)
    twt = np.full(n_traces, np.nan)
    live_traces = start < n_samples
    if not live_traces.any():
        return twt
    median_start = np.median(start[live_traces])
    late = start > median_start + settings["late_start_ms"] / section.dt_ms
    window = data[:, :search].astype(float)
    envelope = np.abs(analytic_signal(window, axis=1))
    peak = envelope.max(axis=1)
    rows = np.flatnonzero(live_traces & ~late & (peak > 0))
    if rows.size == 0:
        return _keep_continuous(twt, settings)
    magnitude = np.abs(window[rows])
    onset = np.argmax(envelope[rows] >= settings["onset_fraction"] * peak[rows, None], axis=1)
    # the lobe: the largest absolute sample from the onset to lobe samples after it (first one on ties)
    columns = onset[:, None] + np.arange(lobe + 1)[None, :]
    in_window = columns < search
    lobe_magnitude = np.where(in_window, magnitude[np.arange(rows.size)[:, None], np.minimum(columns, search - 1)], -1.0)
    best = onset + np.argmax(lobe_magnitude, axis=1)
    offset, _ = parabolic_peaks(magnitude, best)
    twt[rows] = section.t0_ms + (best + offset) * section.dt_ms
    return _keep_continuous(twt, settings)


def parabolic_peaks(values: np.ndarray, index: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`parabolic_peak` on every row of ``values`` (shape (n, m)) at its own ``index`` (shape (n,))."""
    rows = np.arange(values.shape[0])
    index = np.asarray(index, dtype=int)
    y1 = values[rows, index].astype(float)
    inside = (index > 0) & (index < values.shape[1] - 1)
    y0 = values[rows, np.clip(index - 1, 0, values.shape[1] - 1)].astype(float)
    y2 = values[rows, np.clip(index + 1, 0, values.shape[1] - 1)].astype(float)
    denominator = y0 - 2.0 * y1 + y2
    usable = inside & (denominator != 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        offset = np.where(usable, np.clip(0.5 * (y0 - y2) / np.where(usable, denominator, 1.0), -0.5, 0.5), 0.0)
    return offset, np.where(usable, y1 - 0.25 * (y0 - y2) * offset, y1)


def _keep_continuous(twt: np.ndarray, settings: Mapping[str, Any]) -> np.ndarray:
    """Drop picks that jump more than ``max_jump_ms`` from a running median of their neighbours."""
    found = np.isfinite(twt)
    if found.sum() < 3:
        return twt
    from scipy.ndimage import median_filter
    width = int(settings["continuity_traces"])
    filled = np.interp(np.arange(len(twt)), np.flatnonzero(found), twt[found])
    smooth = median_filter(filled, size=width, mode="nearest")
    keep = found & (np.abs(twt - smooth) <= settings["max_jump_ms"])
    return np.where(keep, twt, np.nan)


def amplitude_at(section: Section, twt_ms: np.ndarray, snap_ms: float = 0.0) -> np.ndarray:
    """Signed amplitude per trace at a time per trace, optionally snapped to the strongest
    absolute sample within ``snap_ms``; NaN where the time is NaN or outside the data."""
    data = section.data
    amplitude = np.full(section.n_traces, np.nan)
    samples = section.sample_of(twt_ms)
    snap = int(round(snap_ms / section.dt_ms))
    with np.errstate(invalid="ignore"):
        centre = np.rint(samples)
        rows = np.flatnonzero(np.isfinite(centre) & (centre >= 0) & (centre < section.n_samples))
    if rows.size == 0:
        return amplitude
    columns = centre[rows].astype(int)[:, None] + np.arange(-snap, snap + 1)[None, :]
    inside = (columns >= 0) & (columns < section.n_samples)
    values = data[rows[:, None], np.clip(columns, 0, section.n_samples - 1)]
    values = np.where(inside, values, np.nan)
    magnitude = np.abs(values)
    readable = np.isfinite(magnitude).any(axis=1)
    best = np.argmax(np.where(np.isfinite(magnitude), magnitude, -1.0), axis=1)  # first of the strongest
    amplitude[rows[readable]] = values[np.arange(rows.size), best][readable]
    return amplitude


def majority_sign(values: np.ndarray) -> int:
    """+1 or -1 for the sign most of the finite non-zero values share; 0 if none or a tie."""
    values = values[np.isfinite(values) & (values != 0)]
    if values.size == 0:
        return 0
    balance = int(np.sign(values).sum())
    return int(np.sign(balance))


def find_seafloor(section: Section, picks: Picks, rules: Mapping[str, Any]) -> Seafloor:
    """The seafloor on a panel: the interpreter's ``seafloor`` pick where there is one, else automatic.

    Where a seafloor pick has gaps, the automatic pick fills them.
    """
    snap_ms = float(rules["seafloor"]["snap_ms"])
    picked = [h for h in picks.horizons if h.kind == "seafloor"]
    automatic = auto_seafloor(section, rules)
    if picked:
        twt = np.array(picked[0].twt_ms, dtype=float)
        gaps = ~np.isfinite(twt)
        source = "picked"
        if gaps.any() and np.isfinite(automatic[gaps]).any():
            twt[gaps] = automatic[gaps]
            source = "picked+automatic"
    else:
        twt, source = automatic, "automatic"
    amplitude = amplitude_at(section, twt, snap_ms)
    twt = np.where(np.isfinite(amplitude) & (amplitude != 0), twt, np.nan)
    return Seafloor(twt_ms=twt, amplitude=amplitude, polarity=majority_sign(amplitude), source=source)


def dominant_frequency_hz(section: Section, seafloor_twt_ms: np.ndarray | None = None,
                          window_ms: float = 1000.0, max_traces: int = 200) -> float:
    """Peak of the mean amplitude spectrum of the live traces in a window of ``window_ms``
    below the seafloor (from the first sample where the seafloor is unknown).

    Uses up to ``max_traces`` evenly spaced traces; each trace is demeaned and Hann-tapered.
    Returns NaN for a panel with no live data.
    """
    chosen = np.unique(np.linspace(0, section.n_traces - 1, min(max_traces, section.n_traces)).astype(int))
    n_fft = int(2 ** np.ceil(np.log2(max(section.n_samples, 64))))
    window = int(round(window_ms / section.dt_ms))
    start = np.zeros(chosen.size, dtype=int)
    if seafloor_twt_ms is not None:
        below = np.isfinite(seafloor_twt_ms[chosen])
        start[below] = np.maximum(0.0, section.sample_of(seafloor_twt_ms[chosen][below])).astype(int)
    # each trace from its seafloor (or first sample) for window_ms, zeros past the end of the data
    columns = start[:, None] + np.arange(max(window, 0))[None, :]
    inside = columns < section.n_samples
    segment = np.where(inside, np.nan_to_num(section.data, nan=0.0)[chosen[:, None], np.minimum(columns, section.n_samples - 1)]
                       .astype(float), 0.0) if window > 0 else np.zeros((chosen.size, 0))
    live = segment != 0
    used = live.sum(axis=1) >= 16
    if not used.any():
        return float("nan")
    segment, live = segment[used], live[used]
    # trimmed to its first and last live sample, demeaned and Hann-tapered (np.hanning's formula)
    first = np.argmax(live, axis=1)
    length = segment.shape[1] - np.argmax(live[:, ::-1], axis=1) - first
    k = np.arange(segment.shape[1])[None, :]
    within = k < length[:, None]
    trimmed = np.where(within, segment[np.arange(segment.shape[0])[:, None], np.minimum(first[:, None] + k, segment.shape[1] - 1)], 0.0)
    mean = trimmed.sum(axis=1) / length
    n = 1 - length[:, None] + 2 * k
    hann = 0.5 + 0.5 * np.cos(np.pi * n / (length[:, None] - 1))
    tapered = np.where(within, (trimmed - mean[:, None]) * hann, 0.0)
    spectrum = np.abs(np.fft.rfft(tapered, n_fft, axis=1)).sum(axis=0)
    frequencies_hz = np.fft.rfftfreq(n_fft, section.dt_ms / 1000.0)
    width = max(1, int(round(2.0 / (frequencies_hz[1] - frequencies_hz[0]))))  # smooth over ~2 Hz
    smooth = np.convolve(spectrum, np.ones(width) / width, mode="same")
    smooth[frequencies_hz < 2.0] = 0.0  # ignore DC and drift
    return float(frequencies_hz[int(np.argmax(smooth))])
