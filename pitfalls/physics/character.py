"""Sudden changes of reflection character along a pick that its neighbours do not share.

Along a pick three series are read per trace: the envelope at the pick (amplitude), the
local mean frequency (instantaneous frequency weighted by the squared envelope within a short
window around the pick; Taner, Koehler and Sheriff 1979, from memory) and the structure-tensor
coherence at the pick (continuity). The same three are read in two bands that follow the
pick above and below it, clear of its own wavelet: the neighbouring reflections.

A step is the difference of the medians of ``window`` traces after and before a trace (of
the logarithms for amplitude and frequency, i.e. a ratio). A step along the pick that reaches
its threshold, while neither band steps the same way by ``neighbour_fraction`` of that
threshold, is a change of character where the geology around the pick does not change: the
place where a pick most often leaves its reflector for another (common practice).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pitfalls.physics.description import interval_mask, step_size, values_at_pick, weighted_mean, window_around

MEASURES = ("amplitude", "frequency", "continuity")


@dataclass(frozen=True)
class CharacterSeries:
    """Amplitude, frequency and continuity per trace along one path, each shape (n_traces,)."""

    amplitude: np.ndarray
    frequency_hz: np.ndarray
    coherence: np.ndarray

    def of(self, measure: str) -> np.ndarray:
        return {"amplitude": self.amplitude, "frequency": self.frequency_hz, "continuity": self.coherence}[measure]


def along_pick(envelope: np.ndarray, frequency_hz: np.ndarray, power: np.ndarray, coherence: np.ndarray,
               twt_ms: np.ndarray, t0_ms: float, dt_ms: float, half_window_ms: float) -> CharacterSeries:
    """The three series on a pick: envelope and coherence interpolated at the pick, frequency
    weighted by the squared envelope within ``half_window_ms`` of it."""
    n_samples = envelope.shape[1]
    window = window_around(n_samples, t0_ms, dt_ms, twt_ms, half_window_ms)
    return CharacterSeries(values_at_pick(envelope, twt_ms, t0_ms, dt_ms),
                           weighted_mean(frequency_hz, power, window),
                           values_at_pick(coherence, twt_ms, t0_ms, dt_ms))


def in_band(envelope: np.ndarray, frequency_hz: np.ndarray, power: np.ndarray, coherence: np.ndarray,
            twt_ms: np.ndarray, t0_ms: float, dt_ms: float, near_ms: float, far_ms: float) -> CharacterSeries:
    """The three series as means over a band that follows the pick from ``near_ms`` to ``far_ms``
    away from it (negative = above)."""
    low, high = sorted((near_ms, far_ms))
    twt = np.asarray(twt_ms, dtype=float)
    band = interval_mask(envelope.shape[1], t0_ms, dt_ms, twt + low, twt + high)
    count = band.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        amplitude = np.where(count > 0, np.where(band, envelope, 0.0).sum(axis=1) / count, np.nan)
        continuity = np.where(count > 0, np.where(band, coherence, 0.0).sum(axis=1) / count, np.nan)
    return CharacterSeries(amplitude, weighted_mean(frequency_hz, power, band), continuity)


@dataclass(frozen=True)
class CharacterChange:
    """One change of character along a pick."""

    index: int
    """First trace index (0-based) after the change."""
    measure: str
    """``amplitude``, ``frequency`` or ``continuity``."""
    step: float
    """Step along the pick: natural-log ratio for amplitude and frequency, difference for coherence."""
    before: float
    """Median of the measure over the window before the change."""
    after: float
    """Median over the window after it."""
    neighbour_step: float
    """Largest same-direction step of the bands above and below, in the same units as ``step``."""


def _local_peaks(strength: np.ndarray, threshold: float, window: int) -> list[int]:
    """Indices where ``strength`` reaches ``threshold`` and is the largest within ``window`` either side."""
    values = np.nan_to_num(strength, nan=0.0)
    peaks = []
    for index in np.flatnonzero(values >= threshold):
        low, high = max(0, index - window), min(values.size, index + window + 1)
        if values[index] >= values[low:high].max() and (not peaks or index - peaks[-1] > window):
            peaks.append(int(index))
    return peaks


def character_changes(pick: CharacterSeries, neighbours: list[CharacterSeries], window: int,
                      thresholds: dict[str, float], neighbour_fraction: float) -> list[CharacterChange]:
    """Steps along the pick that the neighbouring bands do not share (module docstring).

    Parameters
    ----------
    pick : CharacterSeries
    neighbours : list of CharacterSeries
        The bands above and below the pick.
    window : int
        Traces either side compared.
    thresholds : dict
        ``{"amplitude": ln ratio, "frequency": ln ratio, "continuity": difference}``.
    neighbour_fraction : float
        A band that steps the same way by this fraction of the threshold (within ``window // 2``
        traces) makes the change a lateral change of the whole section, not of the pick.
    """
    changes: list[CharacterChange] = []
    for measure in MEASURES:
        log = measure != "continuity"
        threshold = thresholds[measure]
        steps = step_size(pick.of(measure), window, log=log)
        for index in _local_peaks(np.abs(steps), threshold, window):
            sign = np.sign(steps[index])
            low, high = max(0, index - window // 2), min(steps.size, index + window // 2 + 1)
            neighbour = 0.0
            for band in neighbours:
                band_steps = sign * step_size(band.of(measure), window, log=log)[low:high]
                if np.isfinite(band_steps).any():
                    neighbour = max(neighbour, float(np.nanmax(band_steps)))
            if neighbour >= neighbour_fraction * threshold:
                continue
            series = pick.of(measure)
            before = float(np.nanmedian(series[index - window:index]))
            after = float(np.nanmedian(series[index:index + window]))
            changes.append(CharacterChange(index, measure, float(steps[index]), before, after, neighbour))
    changes.sort(key=lambda change: change.index)
    return changes
