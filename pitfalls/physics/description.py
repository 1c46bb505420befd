"""The four measured groups of seismic character: amplitude, frequency, continuity, configuration.

Interpreters describe a seismic unit by its amplitude, frequency, continuity and the
geometry of its reflections (configuration), and by how the reflections end against the
unit's top and base (terminations). These are the parameters of a seismic facies in the
trade's terms (Mitchum, Vail and Sangree 1977, from memory). Every function here turns
arrays into numbers; none of them reads the rules.

Conventions: panels are ``(n_traces, n_samples)``, time last. An interval is a boolean
mask of the same shape. Dips are in samples per trace (positive = later with increasing
trace number), as :mod:`pitfalls.physics.dip` returns them.

- Amplitude: RMS of the samples per trace, and the peak of the envelope (modulus of the
  analytic signal; Taner, Koehler and Sheriff 1979, from memory) per trace, both divided by
  the section's reference amplitude (the median envelope below the seafloor). For a
  sinusoid of amplitude A the RMS is A / sqrt(2) and the envelope is A (definition).
- Frequency: the mean amplitude spectrum of the interval's traces (each demeaned and
  Tukey-tapered); dominant = its peak, centroid = amplitude-weighted mean frequency,
  bandwidth = amplitude-weighted standard deviation about the centroid. For a Ricker wavelet
  of peak frequency f these are f, 2 f / sqrt(pi) = 1.128 f (Ricker wavelet formula) and
  sqrt(3/2 - 4/pi) f = 0.4762 f (from the spectrum (nu/f)^2 exp(-(nu/f)^2), derived in the tests).
- Continuity: the share of samples whose structure-tensor coherence reaches a threshold,
  and the lateral length of continuous reflection segments: extrema of the trace (peaks and
  troughs) linked from trace to trace along the local dip, same sign, within one sample.
- Configuration: from the dip field's statistics (the spread of dips, and the change of dip
  from top to base that makes reflections fan out, i.e. divergence) and the amplitude
  (reflection-free) and coherence (chaotic). Terminations from the angle between the
  reflections just inside the unit and its bounding pick.

References
----------
.. [1] Mitchum, R. M., Jr., Vail, P. R., and Sangree, J. B., 1977, Seismic stratigraphy and
       global changes of sea level, Part 6: Stratigraphic interpretation of seismic reflection
       patterns in depositional sequences, in Payton, C. E., ed., AAPG Memoir 26, 117-133.
       (from memory)
.. [2] Taner, M. T., Koehler, F., and Sheriff, R. E., 1979, Complex seismic trace analysis,
       Geophysics 44(6), 1041-1063. (from memory)
.. [3] Ricker, N., 1953, The form and laws of propagation of seismic wavelets, Geophysics
       18(1), 10-40. (from memory)
"""
from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from scipy.signal import hilbert

CONFIGURATION_CLASSES = ("parallel", "subparallel", "divergent", "chaotic", "reflection-free")
TERMINATIONS = ("concordant", "onlap", "downlap", "toplap", "truncation")
THICKENING = ("increasing-trace", "decreasing-trace", "none")


# --- masks and amplitude ----------------------------------------------------------------
def envelope(data: np.ndarray) -> np.ndarray:
    """Envelope (modulus of the analytic signal, Taner et al. 1979) of every trace, same shape; NaN as 0."""
    return np.abs(hilbert(np.nan_to_num(np.asarray(data, dtype=float), nan=0.0), axis=-1))


def interval_mask(n_samples: int, t0_ms: float, dt_ms: float, top_twt_ms: np.ndarray, base_twt_ms: np.ndarray,
                  guard_ms: float = 0.0) -> np.ndarray:
    """Samples strictly inside an interval, ``top + guard <= t <= base - guard``, shape (n_traces, n_samples).

    Traces where either bound is NaN, or the guarded interval is empty, have no samples.
    """
    twt = t0_ms + dt_ms * np.arange(n_samples)[np.newaxis, :]
    top = np.asarray(top_twt_ms, dtype=float)[:, np.newaxis] + guard_ms
    base = np.asarray(base_twt_ms, dtype=float)[:, np.newaxis] - guard_ms
    with np.errstate(invalid="ignore"):
        return (twt >= top) & (twt <= base)


def reference_amplitude(envelope_panel: np.ndarray, seafloor_twt_ms: np.ndarray | None, t0_ms: float,
                        dt_ms: float) -> float:
    """The section's median envelope over the live samples below the seafloor (all live samples
    where the seafloor is unknown): the yardstick relative amplitudes are measured against."""
    n_traces, n_samples = envelope_panel.shape
    below = np.ones((n_traces, n_samples), dtype=bool)
    if seafloor_twt_ms is not None:
        seafloor = np.nan_to_num(np.asarray(seafloor_twt_ms, dtype=float), nan=t0_ms)
        below = (t0_ms + dt_ms * np.arange(n_samples))[np.newaxis, :] >= seafloor[:, np.newaxis]
    live = below & (envelope_panel > 0)
    return float(np.median(envelope_panel[live])) if live.any() else float("nan")


def trace_rms(data: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """RMS of each trace's samples inside the mask, shape (n_traces,); NaN where the mask is empty."""
    values = np.where(mask, np.nan_to_num(np.asarray(data, dtype=float), nan=0.0), 0.0)
    count = mask.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(count > 0, np.sqrt((values ** 2).sum(axis=1) / np.maximum(count, 1)), np.nan)


def trace_peak(values: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """Largest value of each trace inside the mask, shape (n_traces,); NaN where the mask is empty."""
    peak = np.where(mask, values, -np.inf).max(axis=1)
    return np.where(mask.any(axis=1), peak, np.nan)


def lateral_variation(values: np.ndarray) -> float:
    """Coefficient of variation (standard deviation over mean) of the finite values; NaN if fewer than 2."""
    finite = np.asarray(values, dtype=float)
    finite = finite[np.isfinite(finite)]
    if finite.size < 2 or finite.mean() == 0:
        return float("nan")
    return float(finite.std() / abs(finite.mean()))


# --- frequency --------------------------------------------------------------------------
def tukey_taper(length: np.ndarray, width: int, fraction: float = 0.2) -> np.ndarray:
    """Tukey (tapered cosine) windows of different lengths, one per row, zero beyond each length.

    Parameters
    ----------
    length : ndarray of shape (n,), int
        Samples in each window.
    width : int
        Columns of the result (at least ``length.max()``).
    fraction : float
        Share of each window inside the two cosine tapers (0 = boxcar, 1 = Hann).
    """
    position = np.arange(width)[np.newaxis, :].astype(float)
    span = np.maximum(length[:, np.newaxis] - 1, 1).astype(float)
    u = position / span
    taper = np.ones_like(u)
    if fraction > 0:
        edge = fraction / 2.0
        rising = u < edge
        falling = u > 1.0 - edge
        taper = np.where(rising, 0.5 * (1 - np.cos(np.pi * u / edge)), taper)
        taper = np.where(falling, 0.5 * (1 - np.cos(np.pi * (1 - u) / edge)), taper)
    return np.where(position < length[:, np.newaxis], taper, 0.0)


def gather_windows(data: np.ndarray, mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each trace's masked samples, from its first to its last masked sample, packed to the left.

    Returns
    -------
    windows : ndarray of shape (n_traces, max_length), zero-padded
    length : ndarray of shape (n_traces,), int
    """
    any_sample = mask.any(axis=1)
    first = np.argmax(mask, axis=1)
    last = mask.shape[1] - 1 - np.argmax(mask[:, ::-1], axis=1)
    length = np.where(any_sample, last - first + 1, 0)
    width = int(max(1, length.max(initial=0)))
    index = np.minimum(first[:, np.newaxis] + np.arange(width)[np.newaxis, :], mask.shape[1] - 1)
    windows = np.take_along_axis(np.nan_to_num(np.asarray(data, dtype=float), nan=0.0), index, axis=1)
    return np.where(np.arange(width)[np.newaxis, :] < length[:, np.newaxis], windows, 0.0), length


def mean_amplitude_spectrum(data: np.ndarray, mask: np.ndarray, dt_ms: float, min_samples: int = 8,
                            taper_fraction: float = 0.2) -> tuple[np.ndarray, np.ndarray, int]:
    """Mean amplitude spectrum of the masked part of every trace that has at least ``min_samples``.

    Each window is demeaned, Tukey-tapered and zero-padded to at least 1024 samples (about
    0.25 Hz at 4 ms) before its FFT.

    Returns
    -------
    frequencies_hz : ndarray of shape (n_frequencies,)
    spectrum : ndarray of shape (n_frequencies,), the mean of the traces' amplitude spectra
    n_used : int
        Traces that entered the mean (0 gives a zero spectrum).
    """
    windows, length = gather_windows(data, mask)
    use = length >= min_samples
    n_fft = int(2 ** np.ceil(np.log2(max(1024, 4 * windows.shape[1]))))
    frequencies_hz = np.fft.rfftfreq(n_fft, dt_ms / 1000.0)
    if not use.any():
        return frequencies_hz, np.zeros(frequencies_hz.size), 0
    windows, length = windows[use], length[use]
    inside = np.arange(windows.shape[1])[np.newaxis, :] < length[:, np.newaxis]
    means = windows.sum(axis=1) / length
    windows = np.where(inside, windows - means[:, np.newaxis], 0.0) * tukey_taper(length, windows.shape[1], taper_fraction)
    spectrum = np.abs(np.fft.rfft(windows, n_fft, axis=1)).mean(axis=0)
    return frequencies_hz, spectrum, int(use.sum())


@dataclass(frozen=True)
class SpectrumMeasures:
    dominant_hz: float
    """Peak of the amplitude spectrum (three-point parabola between bins)."""
    centroid_hz: float
    """Amplitude-weighted mean frequency, sum(f A) / sum(A)."""
    bandwidth_hz: float
    """Amplitude-weighted standard deviation of frequency about the centroid."""


def spectrum_measures(frequencies_hz: np.ndarray, spectrum: np.ndarray) -> SpectrumMeasures:
    """Dominant frequency, centroid and bandwidth of an amplitude spectrum (module docstring)."""
    total = float(spectrum.sum())
    if total <= 0:
        return SpectrumMeasures(float("nan"), float("nan"), float("nan"))
    peak = int(np.argmax(spectrum))
    offset = 0.0
    if 0 < peak < spectrum.size - 1:
        y0, y1, y2 = spectrum[peak - 1], spectrum[peak], spectrum[peak + 1]
        denominator = y0 - 2 * y1 + y2
        offset = float(np.clip(0.5 * (y0 - y2) / denominator, -0.5, 0.5)) if denominator != 0 else 0.0
    step = float(frequencies_hz[1] - frequencies_hz[0])
    centroid = float((frequencies_hz * spectrum).sum() / total)  # sum(f A) / sum(A)
    spread = float(np.sqrt(((frequencies_hz - centroid) ** 2 * spectrum).sum() / total))
    return SpectrumMeasures(float(frequencies_hz[peak] + offset * step), centroid, spread)


# --- continuity -------------------------------------------------------------------------
def reflection_points(data: np.ndarray, mask: np.ndarray, min_amplitude: float) -> np.ndarray:
    """Peaks and troughs inside the mask: samples whose absolute value is a local maximum in time
    and at least ``min_amplitude``. Shape (n_traces, n_samples), bool."""
    magnitude = np.abs(np.nan_to_num(np.asarray(data, dtype=float), nan=0.0))
    extremum = np.zeros_like(mask)
    extremum[:, 1:-1] = (magnitude[:, 1:-1] > magnitude[:, :-2]) & (magnitude[:, 1:-1] >= magnitude[:, 2:])
    return extremum & mask & (magnitude >= min_amplitude)


def segment_lengths(data: np.ndarray, points: np.ndarray, dip_samples_per_trace: np.ndarray) -> np.ndarray:
    """Lateral length, in traces, of the continuous reflection segment each point belongs to.

    A point on trace i at sample k links to a point of the same sign on trace i + 1 at
    ``k + round(dip)``, or one sample either side of it. Linked points form segments
    (connected components); a segment's length is its last trace minus its first, plus one.

    Returns
    -------
    ndarray of shape (n_points,), int
        One length per point, in the row-major order of ``np.flatnonzero(points)``.
    """
    n_traces, n_samples = points.shape
    flat = np.flatnonzero(points)
    if flat.size == 0:
        return np.zeros(0, dtype=int)
    node = np.full(points.size, -1, dtype=np.int64)
    node[flat] = np.arange(flat.size)
    trace_index, sample_index = np.divmod(flat, n_samples)
    sign = np.sign(np.nan_to_num(np.asarray(data, dtype=float), nan=0.0).ravel()[flat])
    step = np.rint(np.nan_to_num(dip_samples_per_trace.ravel()[flat], nan=0.0)).astype(np.int64)
    sources, targets = [], []
    has_next = trace_index < n_traces - 1
    linked = np.zeros(flat.size, dtype=bool)
    for shift in (0, -1, 1):
        target_sample = sample_index + step + shift
        ok = has_next & ~linked & (target_sample >= 0) & (target_sample < n_samples)
        target_flat = np.where(ok, (trace_index + 1) * n_samples + np.clip(target_sample, 0, n_samples - 1), 0)
        target_node = np.where(ok, node[target_flat], -1)
        ok &= target_node >= 0
        ok &= sign[np.maximum(target_node, 0)] == sign
        sources.append(np.flatnonzero(ok))
        targets.append(target_node[ok])
        linked |= ok
    source = np.concatenate(sources)
    target = np.concatenate(targets)
    graph = coo_matrix((np.ones(source.size), (source, target)), shape=(flat.size, flat.size))
    _, label = connected_components(graph, directed=False)
    first = np.full(label.max() + 1, n_traces, dtype=np.int64)
    last = np.full(label.max() + 1, -1, dtype=np.int64)
    np.minimum.at(first, label, trace_index)
    np.maximum.at(last, label, trace_index)
    return (last - first + 1)[label]


# --- configuration and terminations ------------------------------------------------------
def dip_angle_deg(dip_ms_per_trace: np.ndarray | float, velocity_m_s: float, trace_spacing_m: float) -> np.ndarray:
    """Apparent dip angle in depth of a time dip: ``atan((dt/dx) v / 2)`` with dt/dx in s per m (vertical rays)."""
    slope = np.asarray(dip_ms_per_trace, dtype=float) / 1000.0 / trace_spacing_m * velocity_m_s / 2.0
    return np.degrees(np.arctan(slope))


@dataclass(frozen=True)
class DipStatistics:
    """The dips of a unit's coherent samples, fitted as a straight function of relative position."""

    n_samples: int
    """Coherent samples used."""
    top_dip_deg: float
    """Fitted reflection dip at the top of the unit (relative position 0), degrees."""
    base_dip_deg: float
    """Fitted reflection dip at the base (relative position 1), degrees."""
    spread_deg: float
    """Robust standard deviation (1.4826 x median absolute deviation) of the dips about the fit, degrees."""

    @property
    def fan_deg(self) -> float:
        """Base dip minus top dip: how much the reflections fan out across the unit."""
        return self.base_dip_deg - self.top_dip_deg


def dip_statistics(angle_deg: np.ndarray, relative_position: np.ndarray) -> DipStatistics | None:
    """Least-squares line of dip angle against relative position in the unit (0 top, 1 base), and
    the robust spread about it. ``None`` for fewer than 10 samples."""
    angle = np.asarray(angle_deg, dtype=float)
    position = np.asarray(relative_position, dtype=float)
    if angle.size < 10:
        return None
    if np.ptp(position) > 0:
        slope, intercept = np.polyfit(position, angle, 1)
    else:
        slope, intercept = 0.0, float(np.median(angle))
    residual = angle - (intercept + slope * position)
    spread = 1.4826 * float(np.median(np.abs(residual - np.median(residual))))  # MAD -> sigma for a normal law
    return DipStatistics(int(angle.size), float(intercept), float(intercept + slope), spread)


def configuration_class(rms_relative: float, coherent_share: float, dips: DipStatistics | None,
                        relative_thickening: float, *, reflection_free_max_rms: float, chaotic_max_share: float,
                        divergent_min_fan_deg: float, divergent_min_thickening: float,
                        parallel_max_spread_deg: float) -> str:
    """One of :data:`CONFIGURATION_CLASSES`, tested in this order:

    reflection-free (RMS below ``reflection_free_max_rms`` of the section's reference);
    chaotic (coherent share below ``chaotic_max_share``, or too few coherent dips);
    divergent (reflections fan by at least ``divergent_min_fan_deg`` from top to base in the
    direction the unit thickens, and it thickens by at least ``divergent_min_thickening`` of its
    mean thickness); parallel (dip spread at most ``parallel_max_spread_deg``); else subparallel.
    """
    if not np.isfinite(rms_relative) or rms_relative < reflection_free_max_rms:
        return "reflection-free"
    if dips is None or not np.isfinite(coherent_share) or coherent_share < chaotic_max_share:
        return "chaotic"
    if (abs(relative_thickening) >= divergent_min_thickening and abs(dips.fan_deg) >= divergent_min_fan_deg
            and np.sign(dips.fan_deg) == np.sign(relative_thickening)):
        return "divergent"
    return "parallel" if dips.spread_deg <= parallel_max_spread_deg else "subparallel"


def relative_thickening(top_twt_ms: np.ndarray, base_twt_ms: np.ndarray) -> float:
    """Change of thickness across the traces given, as a fraction of the mean thickness, from a
    least-squares line of thickness on trace index: positive = thicker with increasing trace."""
    thickness = np.asarray(base_twt_ms, dtype=float) - np.asarray(top_twt_ms, dtype=float)
    use = np.isfinite(thickness)
    if use.sum() < 3:
        return 0.0
    position = np.flatnonzero(use).astype(float)
    slope = np.polyfit(position, thickness[use], 1)[0]
    mean = float(np.mean(thickness[use]))
    return float(slope * (position[-1] - position[0]) / mean) if mean > 0 else 0.0


def thickening_direction(relative: float, min_fraction: float) -> str:
    """``increasing-trace``, ``decreasing-trace`` or ``none`` from :func:`relative_thickening`."""
    if relative >= min_fraction:
        return "increasing-trace"
    if relative <= -min_fraction:
        return "decreasing-trace"
    return "none"


def base_termination(reflection_angle_deg: float, boundary_angle_deg: float, *, concordant_max_deg: float,
                     flat_max_deg: float) -> str:
    """How reflections end against the unit's base (Mitchum et al. 1977 terms).

    Angles are apparent dips, positive = deeper with increasing trace. Within
    ``concordant_max_deg`` of the base: concordant. Otherwise the gap between a reflection and
    the base closes in the direction ``sign(reflection - boundary)``; a reflection that ends at
    its own down-dip end (dipping more than ``flat_max_deg``) downlaps; one that ends at its
    up-dip end, or is flat, onlaps.
    """
    difference = reflection_angle_deg - boundary_angle_deg
    if not np.isfinite(difference) or abs(difference) < concordant_max_deg:
        return "concordant"
    ends_towards = np.sign(difference)
    if abs(reflection_angle_deg) > flat_max_deg and np.sign(reflection_angle_deg) == ends_towards:
        return "downlap"
    return "onlap"


def top_termination(near_angle_deg: float, far_angle_deg: float, boundary_angle_deg: float, *,
                    concordant_max_deg: float, toplap_max_ratio: float) -> str:
    """How reflections end against the unit's top (Mitchum et al. 1977 terms).

    ``near`` is the reflection dip just below the top, ``far`` a little deeper. Within
    ``concordant_max_deg`` of the top: concordant. Reflections that bend towards the top
    (their angle to it just below it is at most ``toplap_max_ratio`` times the angle deeper
    down) toplap; reflections that meet it at an undiminished angle are truncated.
    """
    near = near_angle_deg - boundary_angle_deg
    far = far_angle_deg - boundary_angle_deg
    if not np.isfinite(near):
        return "concordant"
    if abs(near) < concordant_max_deg:
        return "concordant"
    if np.isfinite(far) and abs(near) <= toplap_max_ratio * abs(far):
        return "toplap"
    return "truncation"


def band_median(values: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """Median of each trace's values inside the mask, shape (n_traces,); NaN where the mask is empty."""
    filled = np.where(mask, values, np.nan)
    out = np.full(values.shape[0], np.nan)
    has = mask.any(axis=1)
    if has.any():
        out[has] = np.nanmedian(filled[has], axis=1)
    return out


def boundary_slope_ms_per_trace(twt_ms: np.ndarray, smooth_traces: int) -> np.ndarray:
    """Slope of a pick, ms per trace, by central differences of its running mean (NaN stays NaN)."""
    twt = np.asarray(twt_ms, dtype=float)
    known = np.isfinite(twt)
    if known.sum() < 2:
        return np.full(twt.shape, np.nan)
    filled = np.interp(np.arange(twt.size), np.flatnonzero(known), twt[known])
    width = max(1, int(smooth_traces))
    kernel = np.ones(width) / width
    padded = np.pad(filled, width, mode="edge")
    smooth = np.convolve(padded, kernel, mode="same")[width:-width]
    return np.where(known, np.gradient(smooth), np.nan)


# --- along a pick -----------------------------------------------------------------------
def values_at_pick(values: np.ndarray, twt_ms: np.ndarray, t0_ms: float, dt_ms: float) -> np.ndarray:
    """A panel's values linearly interpolated at a time per trace, shape (n_traces,); NaN outside or at gaps."""
    position = (np.asarray(twt_ms, dtype=float) - t0_ms) / dt_ms
    n_samples = values.shape[1]
    ok = np.isfinite(position) & (position >= 0) & (position <= n_samples - 1)
    lower = np.clip(np.floor(np.nan_to_num(position)), 0, n_samples - 2).astype(int)
    fraction = np.where(ok, np.nan_to_num(position) - lower, 0.0)
    rows = np.arange(values.shape[0])
    value = values[rows, lower] * (1 - fraction) + values[rows, lower + 1] * fraction
    return np.where(ok, value, np.nan)


def window_around(n_samples: int, t0_ms: float, dt_ms: float, twt_ms: np.ndarray, half_ms: float,
                  offset_ms: float = 0.0) -> np.ndarray:
    """Mask of the samples within ``half_ms`` of ``twt_ms + offset_ms`` on each trace."""
    centre = np.asarray(twt_ms, dtype=float) + offset_ms
    return interval_mask(n_samples, t0_ms, dt_ms, centre - half_ms, centre + half_ms)


def instantaneous_frequency_hz(data: np.ndarray, dt_ms: float) -> tuple[np.ndarray, np.ndarray]:
    """Instantaneous frequency (derivative of the analytic signal's phase, Taner et al. 1979) and
    the squared envelope, each (n_traces, n_samples). Averages weighted by the squared envelope
    give a local mean frequency."""
    analytic = hilbert(np.nan_to_num(np.asarray(data, dtype=float), nan=0.0), axis=-1)
    real, imaginary = analytic.real, analytic.imag
    d_real = np.gradient(real, axis=-1)
    d_imaginary = np.gradient(imaginary, axis=-1)
    power = real ** 2 + imaginary ** 2
    with np.errstate(invalid="ignore", divide="ignore"):
        frequency = (real * d_imaginary - imaginary * d_real) / (2 * np.pi * power) / (dt_ms / 1000.0)
    return np.where(power > 0, frequency, 0.0), power


def weighted_mean(values: np.ndarray, weights: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """Per-trace weighted mean of ``values`` inside the mask; NaN where the weights sum to zero."""
    w = np.where(mask, weights, 0.0)
    total = w.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(total > 0, (w * np.where(mask, values, 0.0)).sum(axis=1) / total, np.nan)


def step_size(series: np.ndarray, window: int, log: bool = False) -> np.ndarray:
    """Difference between the medians of the ``window`` values after and before each position.

    ``log=True`` measures ratios (difference of natural logs). NaN where either side has fewer
    than ``window // 2 + 1`` finite values. Position i compares ``[i, i + window)`` with
    ``[i - window, i)``.
    """
    values = np.asarray(series, dtype=float)
    if log:
        with np.errstate(divide="ignore", invalid="ignore"):
            values = np.where(values > 0, np.log(values), np.nan)
    n = values.size
    out = np.full(n, np.nan)
    if n < 2 * window:
        return out
    blocks = sliding_window_view(values, window)  # block j = values[j:j + window]
    finite = np.isfinite(blocks).sum(axis=1)
    with warnings.catch_warnings():  # an all-NaN block is expected at gaps; it gives NaN
        warnings.simplefilter("ignore", RuntimeWarning)
        medians = np.nanmedian(blocks, axis=1)
    medians = np.where(finite >= window // 2 + 1, medians, np.nan)
    positions = np.arange(window, n - window + 1)
    out[positions] = medians[positions] - medians[positions - window]
    return out
