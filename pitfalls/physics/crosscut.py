"""Seafloor-parallel reflectors that cut across strata, and the hydrate stability base they may mark.

Bottom-simulating events keep a nearly constant two-way time below the seafloor while the
bedding around them dips at its own angle: a diagenetic front (opal-A to opal-CT) follows an
isotherm, and the base of gas-hydrate stability follows a pressure-temperature boundary, so it
lies deeper below the seafloor where the water is deeper. The section is
mapped to time below the seafloor (each trace shifted so that the seafloor is at zero);
there a bottom-simulating event is horizontal. Two lateral coherences are compared:

- semblance along constant time below the seafloor (horizontal in the mapped panel), over
  a window of traces and a short window of samples (Neidell & Taner 1971, semblance);
- semblance along the local stratal dip, the dip of the gradient structure tensor
  (``pitfalls.physics.dip``) measured in bands above and below the event, so that the
  event itself does not set the dip it is compared with; the band average is weighted by
  the tensor's coherence, and dips steeper than a limit are left out as noise.

An event is a line of envelope maxima of the laterally averaged mapped panel where the
seafloor-parallel semblance is high and exceeds the semblance along the stratal dip, the
event stands out in amplitude, and the strata around it dip at more than a threshold angle
relative to the seafloor.

The predicted base of methane-hydrate stability (``pitfalls.physics.hydrate``) is turned
into time below the seafloor with the project's velocity model, so that it can be set
beside an observed event; and the geothermal gradient that would put the base exactly at
the observed event is found by the inverse.

References
----------
.. [1] Neidell, N. S., and Taner, M. T., 1971, Semblance and other coherency measures for
       multichannel data, Geophysics 36(3), 482-497. (from memory)
.. [2] Dickens, G. R., and Quinby-Hunt, M. S., 1994, Methane hydrate stability in seawater,
       Geophysical Research Letters 21(19), 2115-2118.
.. [3] Berndt, C., Buenz, S., Clayton, T., Mienert, J., and Saunders, M., 2004, Seismic
       character of bottom simulating reflectors: examples from the mid-Norwegian margin,
       Marine and Petroleum Geology 21, 723-733. (reversed polarity, cuts strata)
.. [4] Canny, J., 1986, A computational approach to edge detection, IEEE Transactions on
       Pattern Analysis and Machine Intelligence 8(6), 679-698. (hysteresis; from memory)
.. [5] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261. (peg-leg at t_r + t_sf with amplitude -2 R A)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.ndimage import binary_dilation, correlate1d, label, map_coordinates, maximum_filter1d, uniform_filter1d

from pitfalls.physics.dip import structure_tensor_dip
from pitfalls.physics.envelope import envelope as envelope_of
from pitfalls.physics.hydrate import gradient_for_base_c_per_km, stability_base_depth_m
from pitfalls.physics.velocity import VelocityModel

_TINY = 1e-30


# --- mapping to time below the seafloor ------------------------------------------------------
def flatten_on_seafloor(data: np.ndarray, dt_ms: float, t0_ms: float, seafloor_twt_ms: np.ndarray,
                        length_ms: float) -> tuple[np.ndarray, np.ndarray]:
    """Map a panel to two-way time below the seafloor by linear interpolation (datum shift).

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
        Amplitudes; NaN is treated as no data.
    dt_ms, t0_ms : float
        Sample interval and time of the first sample.
    seafloor_twt_ms : ndarray of shape (n_traces,)
        Seafloor time per trace; NaN where unknown.
    length_ms : float
        How far below the seafloor to map.

    Returns
    -------
    flattened : ndarray of shape (n_traces, n_below)
        ``flattened[i, k]`` is the amplitude at ``seafloor_twt_ms[i] + k * dt_ms``; 0 where
        outside the data or on a trace without a seafloor.
    valid : ndarray of shape (n_traces,), bool
        Traces with a seafloor and live data.
    """
    n_traces, n_samples = data.shape
    n_below = max(1, int(round(length_ms / dt_ms)) + 1)
    image = np.nan_to_num(np.asarray(data, dtype=np.float64), nan=0.0)
    seafloor_sample = (np.asarray(seafloor_twt_ms, dtype=float) - t0_ms) / dt_ms
    valid = np.isfinite(seafloor_sample) & np.isfinite(data).all(axis=1) & (np.abs(image).sum(axis=1) > 0)
    rows = np.repeat(np.arange(n_traces, dtype=float)[:, None], n_below, axis=1)
    columns = np.where(valid, seafloor_sample, -10.0 * n_below)[:, None] + np.arange(n_below)[None, :]
    flattened = map_coordinates(image, [rows, columns], order=1, mode="constant", cval=0.0)
    flattened[~valid] = 0.0
    return flattened, valid


# --- lateral coherence ---------------------------------------------------------------------
def seafloor_parallel_semblance(flattened: np.ndarray, valid: np.ndarray, window_traces: int,
                                window_samples: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Semblance along constant time below the seafloor (Neidell & Taner 1971), in sliding windows.

    Parameters
    ----------
    flattened : ndarray of shape (n_traces, n_below)
        Panel mapped to time below the seafloor.
    valid : ndarray of shape (n_traces,), bool
        Traces that carry data.
    window_traces, window_samples : int
        Window size across traces and along time (odd numbers work best).

    Returns
    -------
    semblance : ndarray of shape (n_traces, n_below), in [0, 1]
        ``(sum_j f_j)^2 / (N sum_j f_j^2)`` summed over the time window.
    lateral_mean : ndarray of shape (n_traces, n_below)
        Mean of the valid traces in the window at each time: the seafloor-parallel stack.
    valid_fraction : ndarray of shape (n_traces,)
        Share of valid traces in each window.
    """
    live = valid.astype(np.float64)
    mean = uniform_filter1d(flattened, window_traces, axis=0, mode="constant")
    mean_square = uniform_filter1d(flattened * flattened, window_traces, axis=0, mode="constant")
    valid_fraction = uniform_filter1d(live, window_traces, mode="constant")
    numerator = uniform_filter1d(mean * mean, window_samples, axis=1, mode="constant")
    denominator = uniform_filter1d(mean_square * valid_fraction[:, None], window_samples, axis=1, mode="constant")
    # semblance = (sum f)^2 / (N sum f^2) with sum f = W mean, N = W fraction, sum f^2 = W mean_square
    semblance = np.where(denominator > _TINY, numerator / np.maximum(denominator, _TINY), 0.0)
    lateral_mean = np.where(valid_fraction[:, None] > 0, mean / np.maximum(valid_fraction[:, None], _TINY), 0.0)
    return np.clip(semblance, 0.0, 1.0), lateral_mean, valid_fraction


def dip_steered_semblance(flattened: np.ndarray, trace_index: np.ndarray, sample_index: np.ndarray,
                          dip_samples_per_trace: np.ndarray, window_traces: int, window_samples: int) -> np.ndarray:
    """Semblance along a given dip (Neidell & Taner 1971) at chosen points of a panel.

    Parameters
    ----------
    flattened : ndarray of shape (n_traces, n_samples)
        The panel.
    trace_index, sample_index : ndarray of shape (n_points,)
        Centre of each window.
    dip_samples_per_trace : ndarray of shape (n_points,)
        Dip of the line the traces are aligned along.
    window_traces, window_samples : int
        Window size across traces and along time.

    Returns
    -------
    ndarray of shape (n_points,)
        Semblance in [0, 1] along the dip.
    """
    half_traces = window_traces // 2
    half_samples = window_samples // 2
    offsets_traces = np.arange(-half_traces, half_traces + 1, dtype=float)
    offsets_samples = np.arange(-half_samples, half_samples + 1, dtype=float)
    trace = np.asarray(trace_index, dtype=float)[:, None, None] + offsets_traces[None, :, None]
    sample = (np.asarray(sample_index, dtype=float)[:, None, None]
              + np.asarray(dip_samples_per_trace, dtype=float)[:, None, None] * offsets_traces[None, :, None]
              + offsets_samples[None, None, :])
    trace = np.broadcast_to(trace, sample.shape)
    inside = (trace >= 0) & (trace <= flattened.shape[0] - 1)
    values = map_coordinates(flattened, [np.clip(trace, 0, flattened.shape[0] - 1), sample],
                             order=1, mode="constant", cval=0.0)
    values = np.where(inside, values, 0.0)
    count = np.maximum(inside[:, :, 0].sum(axis=1), 1)
    numerator = (values.sum(axis=1) ** 2).sum(axis=1)
    denominator = count * (values ** 2).sum(axis=(1, 2))
    return np.where(denominator > _TINY, numerator / np.maximum(denominator, _TINY), 0.0)


def banded_stratal_dip(dip_samples_per_trace: np.ndarray, weight: np.ndarray, window_traces: int,
                       guard_samples: int, band_samples: int) -> tuple[np.ndarray, np.ndarray]:
    """Weighted stratal dip in bands above and below each sample, leaving out the sample's own event.

    Parameters
    ----------
    dip_samples_per_trace, weight : ndarray of shape (n_traces, n_samples)
        Structure-tensor dip and its weight (e.g. linearity).
    window_traces : int
        Width of the band across traces.
    guard_samples : int
        Samples either side of the centre left out (the event and its wavelet).
    band_samples : int
        Samples either side of the centre up to which the bands reach.

    Returns
    -------
    mean_dip : ndarray of shape (n_traces, n_samples)
        Weighted mean signed dip of the bands, samples per trace.
    rms_dip : ndarray of shape (n_traces, n_samples)
        Weighted root-mean-square dip of the bands, samples per trace: large when the
        strata dip either way relative to the centre line.
    """
    band_samples = max(band_samples, guard_samples + 1)
    offsets = np.arange(-band_samples, band_samples + 1)
    kernel = (np.abs(offsets) >= guard_samples).astype(np.float64)

    def band_sum(values: np.ndarray) -> np.ndarray:
        across = uniform_filter1d(values, window_traces, axis=0, mode="constant")
        return correlate1d(across, kernel, axis=1, mode="constant")

    total_weight = band_sum(weight)
    safe = np.maximum(total_weight, _TINY)
    mean_dip = np.where(total_weight > _TINY, band_sum(weight * dip_samples_per_trace) / safe, 0.0)
    rms_dip = np.where(total_weight > _TINY,
                       np.sqrt(np.maximum(band_sum(weight * dip_samples_per_trace ** 2) / safe, 0.0)), 0.0)
    return mean_dip, rms_dip


def dip_angle_deg(dip_ms_per_trace: np.ndarray | float, velocity_m_s: np.ndarray | float,
                  trace_spacing_m: float) -> np.ndarray:
    """Dip angle in depth of a time dip, for vertical rays: ``atan(v dt / (2 dx))`` (common practice).

    Parameters
    ----------
    dip_ms_per_trace : float or ndarray
        Time dip, ms of two-way time per trace.
    velocity_m_s : float or ndarray
        Interval velocity at the dip.
    trace_spacing_m : float
        Distance between traces.
    """
    depth_per_trace_m = np.asarray(velocity_m_s, dtype=float) * np.asarray(dip_ms_per_trace, dtype=float) / 2000.0
    return np.degrees(np.arctan2(depth_per_trace_m, trace_spacing_m))  # tan(angle) = (v/2) dt / dx


# --- the event search ----------------------------------------------------------------------
@dataclass(frozen=True)
class SeafloorParallelEvent:
    """A coherent event at near-constant time below the seafloor that cuts the strata around it."""

    trace_index: np.ndarray
    """0-based traces the event covers, shape (n,), increasing."""
    twt_below_seafloor_ms: np.ndarray
    """Time of the event below the seafloor on each of those traces, shape (n,)."""
    amplitude: np.ndarray
    """Signed amplitude at the event (strongest lobe), shape (n,)."""
    semblance_seafloor_parallel: np.ndarray
    """Semblance along constant time below the seafloor, shape (n,)."""
    semblance_along_strata: np.ndarray
    """Semblance along the stratal dip of the bands around the event, shape (n,)."""
    stratal_dip_samples_per_trace: np.ndarray
    """Signed dip of the strata relative to the seafloor (mapped panel; weighted median of the bands
    above and below), shape (n,)."""
    stratal_rms_dip_samples_per_trace: np.ndarray
    """RMS dip of the strata relative to the seafloor, shape (n,)."""
    cuts_strata: np.ndarray | None = None
    """Traces (shape (n,), bool) where the event passed every test, the angle to the strata and
    the coherence gain included; elsewhere it was only followed along the seafloor (hysteresis).
    None means all of them."""

    @property
    def cutting(self) -> np.ndarray:
        """Boolean mask of the traces where the event was seen to cut the strata."""
        if self.cuts_strata is None:
            return np.ones(self.trace_index.size, dtype=bool)
        return np.asarray(self.cuts_strata, dtype=bool)

    @property
    def extent_traces(self) -> int:
        return int(self.trace_index[-1] - self.trace_index[0] + 1)


@dataclass(frozen=True)
class EventSearch:
    """Everything the seafloor-parallel event search measured on one panel."""

    events: tuple[SeafloorParallelEvent, ...]
    flattened: np.ndarray
    """Panel mapped to time below the seafloor, (n_traces, n_below)."""
    semblance: np.ndarray
    """Seafloor-parallel semblance on the mapped panel, (n_traces, n_below)."""
    stratal_dip_samples_per_trace: np.ndarray
    """Banded mean stratal dip relative to the seafloor, (n_traces, n_below)."""
    stack: np.ndarray | None = None
    """Seafloor-parallel stack (lateral mean of the mapped panel), (n_traces, n_below)."""
    stack_envelope: np.ndarray | None = None
    """Envelope of the seafloor-parallel stack, (n_traces, n_below)."""
    dip_samples_per_trace: np.ndarray | None = None
    """Structure-tensor dip of the mapped panel, clipped to the stratal limit, (n_traces, n_below)."""
    dip_weight: np.ndarray | None = None
    """Weight of each dip sample (coherence; 0 where the dip was too steep to be strata), (n_traces, n_below)."""


def find_seafloor_parallel_events(
    data: np.ndarray,
    dt_ms: float,
    t0_ms: float,
    seafloor_twt_ms: np.ndarray,
    reference_amplitude: float,
    *,
    search_from_ms: float,
    search_to_ms: float,
    window_traces: int,
    window_ms: float,
    min_semblance: float,
    min_semblance_gain: float,
    min_relative_amplitude: float,
    min_rms_dip_samples_per_trace: float | np.ndarray,
    guard_ms: float,
    band_ms: float,
    min_extent_traces: int,
    max_gap_traces: int,
    max_dip_samples_per_trace: float,
    exclude_twt_below_seafloor_ms: np.ndarray | None = None,
    exclude_half_width_ms: float = 0.0,
    extend_min_semblance: float | None = None,
) -> EventSearch:
    """Seafloor-parallel events by semblance along constant time below the seafloor (Neidell & Taner 1971).

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
        The panel.
    dt_ms, t0_ms : float
        Sample interval and first-sample time.
    seafloor_twt_ms : ndarray of shape (n_traces,)
        Seafloor time per trace; NaN where unknown.
    reference_amplitude : float
        Typical absolute seafloor amplitude; events weaker than ``min_relative_amplitude`` of it are ignored.
    search_from_ms, search_to_ms : float
        Window of time below the seafloor searched (the first keeps the seafloor wavelet out).
    window_traces : int
        Lateral semblance and stratal-dip window, traces.
    window_ms : float
        Time window of the semblance, ms.
    min_semblance : float
        Least seafloor-parallel semblance of an event point.
    min_semblance_gain : float
        Least excess of the seafloor-parallel semblance over the semblance along the
        stratal dip at an event point: the event must be more coherent along the seafloor
        than along the strata.
    min_relative_amplitude : float
        Least envelope of the seafloor-parallel stack relative to ``reference_amplitude``.
    min_rms_dip_samples_per_trace : float or ndarray of shape (n_below,)
        Least RMS stratal dip relative to the seafloor around an event point (may vary with
        time below the seafloor, since the angle it stands for depends on velocity).
    guard_ms, band_ms : float
        The stratal dip is measured between ``guard_ms`` and ``band_ms`` above and below each point.
    min_extent_traces, max_gap_traces : int
        Least extent of an event, and the widest gap bridged inside one.
    max_dip_samples_per_trace : float
        Structure-tensor dips steeper than this are treated as noise and left out of the
        stratal dip (they would alias in the data anyway).
    exclude_twt_below_seafloor_ms : ndarray of shape (n_traces, m), optional
        Times below the seafloor where events are not looked for (e.g. predicted multiples), per trace.
    exclude_half_width_ms : float
        Half width of those exclusion windows.
    extend_min_semblance : float, optional
        Hysteresis (Canny 1986): an event found with every test is followed along the
        seafloor through points that pass only the coherence, amplitude and exclusion tests
        with at least this semblance, so it also covers stretches where the strata happen to
        parallel it. None follows nothing.

    Returns
    -------
    EventSearch
    """
    flattened, valid = flatten_on_seafloor(data, dt_ms, t0_ms, seafloor_twt_ms, search_to_ms + band_ms)
    n_traces, n_below = flattened.shape
    window_samples = max(1, int(round(window_ms / dt_ms)) | 1)
    semblance, lateral_mean, valid_fraction = seafloor_parallel_semblance(flattened, valid, window_traces, window_samples)
    envelope = envelope_of(lateral_mean, axis=1)
    guard_samples = max(1, int(round(guard_ms / dt_ms)))
    band_samples = max(guard_samples + 1, int(round(band_ms / dt_ms)))
    local_max = envelope >= maximum_filter1d(envelope, 2 * guard_samples + 1, axis=1, mode="constant")

    rows = np.arange(n_below) * dt_ms
    in_window = (rows >= search_from_ms) & (rows <= search_to_ms)
    followable = (valid[:, None] & (valid_fraction[:, None] >= 0.8) & in_window[None, :] & local_max
                  & (envelope >= min_relative_amplitude * abs(reference_amplitude)))
    if exclude_twt_below_seafloor_ms is not None and exclude_half_width_ms > 0:
        for column in np.atleast_2d(np.asarray(exclude_twt_below_seafloor_ms, dtype=float).T):
            near = np.abs(rows[None, :] - column[:, None]) <= exclude_half_width_ms
            followable &= ~np.where(np.isfinite(column)[:, None], near, False)
    candidate = followable & (semblance >= min_semblance)

    field = structure_tensor_dip(flattened)
    weight = field.coherence * valid[:, None]
    # near-vertical normals in noise give unbounded dips: leave them out of the stratal dip
    stratal_dip = np.clip(field.dip_samples_per_trace, -max_dip_samples_per_trace, max_dip_samples_per_trace)
    weight = np.where(np.abs(field.dip_samples_per_trace) <= max_dip_samples_per_trace, weight, 0.0)
    mean_dip, rms_dip = banded_stratal_dip(stratal_dip, weight, window_traces, guard_samples, band_samples)
    threshold = np.broadcast_to(np.asarray(min_rms_dip_samples_per_trace, dtype=float), (n_below,))
    candidate &= rms_dip >= threshold[None, :]
    trace_points, sample_points = np.nonzero(candidate)
    if trace_points.size:
        along_strata = dip_steered_semblance(flattened, trace_points, sample_points,
                                             mean_dip[trace_points, sample_points], window_traces, window_samples)
        gain = semblance[trace_points, sample_points] - along_strata  # more coherent along the seafloor than the strata
        candidate[trace_points[gain < min_semblance_gain], sample_points[gain < min_semblance_gain]] = False
    extendable = candidate.copy()
    if extend_min_semblance is not None:
        extendable |= followable & (semblance >= extend_min_semblance)

    events: list[SeafloorParallelEvent] = []
    if candidate.any():
        bridge = np.ones((2 * max_gap_traces + 1, 3), dtype=bool)
        labels, count = label(binary_dilation(extendable, structure=bridge), structure=np.ones((3, 3), dtype=bool))
        for number in range(1, count + 1):
            seeds = candidate & (labels == number)
            seed_traces = np.flatnonzero(seeds.any(axis=1))
            if seed_traces.size == 0 or seed_traces[-1] - seed_traces[0] + 1 < min_extent_traces:
                continue  # the event must cut the strata over a long enough stretch of its own
            points = extendable & (labels == number)
            traces = np.flatnonzero(points.any(axis=1))
            strength = np.where(points[traces], envelope[traces], -1.0)
            samples = np.argmax(strength, axis=1)
            events.append(_measure_event(flattened, semblance, stratal_dip, weight, rms_dip, traces, samples,
                                         dt_ms, window_traces, window_samples, guard_samples, band_samples,
                                         seeds[traces, samples]))
    events.sort(key=lambda event: (float(np.median(event.twt_below_seafloor_ms)), int(event.trace_index[0])))
    return EventSearch(events=tuple(events), flattened=flattened, semblance=semblance,
                       stratal_dip_samples_per_trace=mean_dip, stack=lateral_mean, stack_envelope=envelope,
                       dip_samples_per_trace=stratal_dip, dip_weight=weight)


def _measure_event(flattened: np.ndarray, semblance: np.ndarray, stratal_dip: np.ndarray, weight: np.ndarray,
                   rms_dip: np.ndarray, traces: np.ndarray, samples: np.ndarray, dt_ms: float, window_traces: int,
                   window_samples: int, guard_samples: int, band_samples: int,
                   cuts_strata: np.ndarray) -> SeafloorParallelEvent:
    """Per-trace time, signed amplitude, stratal dip and coherences of one event."""
    snap = np.clip(samples[:, None] + np.arange(-2, 3)[None, :], 0, flattened.shape[1] - 1)
    lobe = flattened[traces[:, None], snap]
    strongest = np.argmax(np.abs(lobe), axis=1)
    amplitude = lobe[np.arange(traces.size), strongest]
    strata_dip = band_median_dips(stratal_dip, weight, traces, samples, window_traces // 2, guard_samples,
                                  band_samples)
    along_strata = dip_steered_semblance(flattened, traces, samples, strata_dip, window_traces, window_samples)
    return SeafloorParallelEvent(
        trace_index=traces,
        twt_below_seafloor_ms=samples * dt_ms,
        amplitude=amplitude,
        semblance_seafloor_parallel=semblance[traces, samples],
        semblance_along_strata=along_strata,
        stratal_dip_samples_per_trace=strata_dip,
        stratal_rms_dip_samples_per_trace=rms_dip[traces, samples],
        cuts_strata=np.asarray(cuts_strata, dtype=bool),
    )


def band_median_dip(dip: np.ndarray, weight: np.ndarray, trace: int, sample: int, half_traces: int,
                    guard_samples: int, band_samples: int) -> float:
    """Weighted median of the structure-tensor dip in the bands above and below one point.

    Other seafloor-parallel reflections in the band (a free-gas base, the seafloor) are a
    minority and do not pull it, as they would pull a mean.

    Parameters
    ----------
    dip, weight : ndarray of shape (n_traces, n_samples)
        Dip (samples per trace) and its weight.
    trace, sample : int
        The point.
    half_traces : int
        Traces either side that the bands span.
    guard_samples, band_samples : int
        The bands reach from ``guard_samples`` to ``band_samples`` above and below the point.

    Returns
    -------
    float
        Weighted median dip, samples per trace; 0 where the bands carry no weight.
    """
    low, high = max(0, trace - half_traces), min(dip.shape[0], trace + half_traces + 1)
    above = slice(max(0, sample - band_samples), max(0, sample - guard_samples + 1))
    below = slice(min(dip.shape[1], sample + guard_samples), min(dip.shape[1], sample + band_samples + 1))
    values = np.concatenate((dip[low:high, above].ravel(), dip[low:high, below].ravel()))
    weights = np.concatenate((weight[low:high, above].ravel(), weight[low:high, below].ravel()))
    if weights.sum() <= _TINY:
        return 0.0
    order = np.argsort(values)
    cumulative = np.cumsum(weights[order])
    return float(values[order][np.searchsorted(cumulative, 0.5 * cumulative[-1])])


def band_median_dips(dip: np.ndarray, weight: np.ndarray, traces: np.ndarray, samples: np.ndarray,
                     half_traces: int, guard_samples: int, band_samples: int, chunk: int = 2048) -> np.ndarray:
    """:func:`band_median_dip` at many points at once (whole-array gathers, no loop over points).

    Parameters
    ----------
    dip, weight : ndarray of shape (n_traces, n_samples)
    traces, samples : ndarray of int, shape (n_points,)
        The points.
    half_traces, guard_samples, band_samples : int
        As in :func:`band_median_dip`.
    chunk : int
        Points gathered at a time, to bound memory.

    Returns
    -------
    ndarray of shape (n_points,)
        Weighted median dip at each point, samples per trace; 0 where the bands carry no weight.
    """
    traces = np.asarray(traces, dtype=int)
    samples = np.asarray(samples, dtype=int)
    result = np.zeros(traces.size)
    n_traces, n_samples = dip.shape
    trace_offsets = np.arange(-half_traces, half_traces + 1)
    band = np.arange(guard_samples, band_samples + 1)
    sample_offsets = np.concatenate((-band[::-1], band)) if band.size else np.zeros(0, dtype=int)
    for first in range(0, traces.size, chunk):
        rows = traces[first:first + chunk, None, None] + trace_offsets[None, :, None]
        columns = samples[first:first + chunk, None, None] + sample_offsets[None, None, :]
        rows, columns = np.broadcast_arrays(rows, columns)
        inside = (rows >= 0) & (rows < n_traces) & (columns >= 0) & (columns < n_samples)
        rows, columns = np.clip(rows, 0, n_traces - 1), np.clip(columns, 0, n_samples - 1)
        values = np.where(inside, dip[rows, columns], np.inf).reshape(rows.shape[0], -1)
        weights = np.where(inside, weight[rows, columns], 0.0).reshape(rows.shape[0], -1)
        order = np.argsort(values, axis=1)
        cumulative = np.cumsum(np.take_along_axis(weights, order, axis=1), axis=1)
        total = weights.sum(axis=1)
        crossing = np.argmax(cumulative >= 0.5 * cumulative[:, -1:], axis=1)  # first index reaching half
        median = np.take_along_axis(np.take_along_axis(values, order, axis=1), crossing[:, None], axis=1)[:, 0]
        result[first:first + chunk] = np.where(total > _TINY, median, 0.0)
    return result


def water_layer_peg_leg_flags(stack: np.ndarray, stack_envelope: np.ndarray, dt_ms: float,
                              seafloor_twt_ms: np.ndarray, trace_index: np.ndarray, twt_below_seafloor_ms: np.ndarray,
                              amplitude: np.ndarray, min_parent_ratio: float, half_width_ms: float) -> np.ndarray:
    """Per point, whether it could be the water-layer peg-leg of a shallower event (Backus 1959).

    A peg-leg of a reflector at time ``t_r`` below the seafloor arrives one seafloor time later,
    ``t_r + t_sf``, with amplitude ``-2 R_sf A`` (Backus 1959): the opposite sign of its
    parent in the data (``R_sf > 0``) and, for ``R_sf`` up to 0.5, no stronger. With the seafloor
    itself as the parent (``t_r = 0``) this is the first seafloor multiple at ``2 t_sf``.

    Parameters
    ----------
    stack, stack_envelope : ndarray of shape (n_traces, n_below)
        Seafloor-parallel stack of the panel mapped to time below the seafloor, and its envelope.
    dt_ms : float
        Sample interval of the mapped panel.
    seafloor_twt_ms : ndarray of shape (n_traces,)
        Seafloor time per trace.
    trace_index : ndarray of int, shape (n,)
        Traces of the points.
    twt_below_seafloor_ms, amplitude : ndarray of shape (n,)
        Time below the seafloor and signed amplitude of each point.
    min_parent_ratio : float
        The parent's envelope must be at least this times the point's.
    half_width_ms : float
        The parent is looked for within this of ``t - t_sf``.

    Returns
    -------
    ndarray of shape (n,), bool
    """
    traces = np.asarray(trace_index, dtype=int)
    below = np.asarray(twt_below_seafloor_ms, dtype=float)
    parent_ms = below - np.asarray(seafloor_twt_ms, dtype=float)[traces]  # t_r = t - t_sf
    half = max(1, int(round(half_width_ms / dt_ms)))
    n_below = stack.shape[1]
    found = np.zeros(traces.size, dtype=bool)
    usable = np.isfinite(parent_ms) & np.isfinite(below)
    middle = np.rint(np.where(usable, parent_ms, 0.0) / dt_ms).astype(int)
    own = np.rint(np.where(usable, below, 0.0) / dt_ms).astype(int)
    columns = middle[:, None] + np.arange(-half, half + 1)[None, :]
    inside = (columns >= 0) & (columns < n_below)
    usable &= inside.any(axis=1) & (own >= 0) & (own < n_below)
    if not usable.any():
        return found
    columns = np.clip(columns, 0, n_below - 1)
    magnitude = np.where(inside, np.abs(stack[traces[:, None], columns]), -1.0)
    strongest = columns[np.arange(traces.size), np.argmax(magnitude, axis=1)]  # the parent's main lobe
    opposite = np.sign(stack[traces, strongest]) == -np.sign(amplitude)
    stronger = stack_envelope[traces, strongest] >= min_parent_ratio * stack_envelope[traces, np.clip(own, 0, n_below - 1)]
    found[usable] = (opposite & stronger)[usable]
    return found


def water_layer_peg_leg_share(stack: np.ndarray, stack_envelope: np.ndarray, dt_ms: float,
                              seafloor_twt_ms: np.ndarray, event: SeafloorParallelEvent, min_parent_ratio: float,
                              half_width_ms: float) -> float:
    """Share (0-1) of an event's traces where it could be a water-layer peg-leg (``water_layer_peg_leg_flags``)."""
    flags = water_layer_peg_leg_flags(stack, stack_envelope, dt_ms, seafloor_twt_ms, event.trace_index,
                                      event.twt_below_seafloor_ms, event.amplitude, min_parent_ratio, half_width_ms)
    return float(np.mean(flags)) if flags.size else 0.0


# --- hydrate stability in time below the seafloor ----------------------------------------------
def predicted_stability_base_twt_ms(seafloor_twt_ms: np.ndarray | float, velocity: VelocityModel,
                                    seafloor_temperature_c: float, gradient_c_per_km: float) -> np.ndarray:
    """Base of methane-hydrate stability (Dickens & Quinby-Hunt 1994) as two-way time below the seafloor.

    Parameters
    ----------
    seafloor_twt_ms : float or ndarray
        Seafloor two-way time; water depth = time x water velocity / 2.
    velocity : VelocityModel
        Water and sediment velocities for the conversions.
    seafloor_temperature_c, gradient_c_per_km : float
        Bottom-water temperature and geothermal gradient.

    Returns
    -------
    ndarray
        Time below the seafloor of the predicted base; NaN where no stability zone is predicted.
    """
    seafloor = np.atleast_1d(np.asarray(seafloor_twt_ms, dtype=float))
    water_depth_m = velocity.water_depth_m(seafloor)  # Dw = t_sf v_w / 2
    depth_m = np.array([stability_base_depth_m(float(depth), seafloor_temperature_c, gradient_c_per_km)
                        for depth in water_depth_m])
    twt = np.where(np.isfinite(depth_m), velocity.twt_below_seafloor_ms(np.nan_to_num(depth_m)), np.nan)
    return twt if np.ndim(seafloor_twt_ms) else twt[0]


def gradient_for_event_c_per_km(twt_below_seafloor_ms: float, seafloor_twt_ms: float, velocity: VelocityModel,
                                seafloor_temperature_c: float) -> float:
    """Geothermal gradient that puts the Dickens & Quinby-Hunt (1994) stability base at an observed event.

    Parameters
    ----------
    twt_below_seafloor_ms : float
        Observed time of the event below the seafloor.
    seafloor_twt_ms : float
        Seafloor time above it.
    velocity : VelocityModel
        Water and sediment velocities for the conversions.
    seafloor_temperature_c : float
        Bottom-water temperature.

    Returns
    -------
    float
        Gradient in degrees C per km; NaN when none puts the base there.
    """
    depth_m = float(velocity.depth_below_seafloor_m(twt_below_seafloor_ms))
    water_depth_m = float(velocity.water_depth_m(seafloor_twt_ms))
    return gradient_for_base_c_per_km(depth_m, water_depth_m, seafloor_temperature_c)


def temperature_at_c(twt_below_seafloor_ms: float, velocity: VelocityModel, seafloor_temperature_c: float,
                     gradient_c_per_km: float) -> float:
    """Temperature at a time below the seafloor for a linear geotherm ``T = Tsf + G z`` (common practice)."""
    depth_m = float(velocity.depth_below_seafloor_m(twt_below_seafloor_ms))
    return seafloor_temperature_c + gradient_c_per_km * depth_m / 1000.0  # T(z) = Tsf + G z / 1000


def stability_tolerance_ms(twt_below_seafloor_ms: float, tolerance_ms: float, tolerance_fraction: float) -> float:
    """Match window for an observed event against the predicted base: the larger of a fixed time and a share."""
    return max(tolerance_ms, tolerance_fraction * abs(twt_below_seafloor_ms))


# --- picks against the stratal dip ----------------------------------------------------------
def semblance_along_path(data: np.ndarray, dt_ms: float, t0_ms: float, path_twt_ms: np.ndarray,
                         window_traces: int, window_samples: int) -> np.ndarray:
    """Semblance (Neidell & Taner 1971) of the data aligned on a picked path, at every trace.

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
        The panel; NaN is treated as 0.
    dt_ms, t0_ms : float
        Sample interval and first-sample time.
    path_twt_ms : ndarray of shape (n_traces,)
        Picked time per trace; NaN gaps.
    window_traces, window_samples : int
        Window across traces and along time.

    Returns
    -------
    ndarray of shape (n_traces,)
        Semblance in [0, 1] of the traces flattened on the path (gaps left out); NaN where the
        pick is missing. A pick that follows one reflection scores high, one that cuts across
        reflections low.
    """
    image = np.nan_to_num(np.asarray(data, dtype=np.float64), nan=0.0)
    path_sample = (np.asarray(path_twt_ms, dtype=float) - t0_ms) / dt_ms
    picked = np.isfinite(path_sample)
    flattened = map_coordinates(image, [np.repeat(np.arange(image.shape[0], dtype=float)[:, None], window_samples, axis=1),
                                        np.where(picked, path_sample, -1e6)[:, None]
                                        + (np.arange(window_samples) - window_samples // 2)[None, :]],
                                order=1, mode="constant", cval=0.0)
    flattened[~picked] = 0.0
    semblance, _, _ = seafloor_parallel_semblance(flattened, picked, window_traces, window_samples)
    return np.where(picked, semblance[:, window_samples // 2], np.nan)


def path_slope_ms_per_trace(path_twt_ms: np.ndarray, smooth_traces: int) -> np.ndarray:
    """Slope of a picked path, ms per trace: centred difference (one-sided at ends and gaps), averaged
    over ``smooth_traces`` traces (common practice).

    Parameters
    ----------
    path_twt_ms : ndarray of shape (n_traces,)
        Time per trace; NaN gaps.
    smooth_traces : int
        Width of the running mean.

    Returns
    -------
    ndarray of shape (n_traces,)
        Slope; NaN where the path is missing on both sides.
    """
    twt = np.asarray(path_twt_ms, dtype=float)
    steps = np.vstack((np.concatenate(([np.nan], np.diff(twt))), np.concatenate((np.diff(twt), [np.nan]))))
    count = np.isfinite(steps).sum(axis=0)
    slope = np.where(count > 0, np.nansum(steps, axis=0) / np.maximum(count, 1), np.nan)  # centred difference, ms/trace
    if smooth_traces > 1:
        finite = np.isfinite(slope)
        total = uniform_filter1d(np.where(finite, slope, 0.0), smooth_traces, mode="constant")
        share = uniform_filter1d(finite.astype(float), smooth_traces, mode="constant")
        slope = np.where(finite & (share > 0), total / np.maximum(share, _TINY), np.nan)
    return slope


def stratal_dip_along_path(search: EventSearch, path_twt_below_seafloor_ms: np.ndarray, dt_ms: float,
                           trace_index: np.ndarray, half_traces: int, guard_ms: float, band_ms: float) -> np.ndarray:
    """Stratal dip relative to the seafloor around a picked path, from the search's mapped panel.

    The weighted median of the structure-tensor dip in bands between ``guard_ms`` and
    ``band_ms`` above and below the path (``band_median_dip``): the path's own reflection is
    left out, so the dip is that of the strata it runs through.

    Parameters
    ----------
    search : EventSearch
        A search that kept its dip field (``dip_samples_per_trace`` and ``dip_weight``).
    path_twt_below_seafloor_ms : ndarray of shape (n_traces,)
        Path time below the seafloor; NaN gaps.
    dt_ms : float
        Sample interval.
    trace_index : ndarray of int
        Traces at which to measure.
    half_traces : int
        Traces either side that the bands span.
    guard_ms, band_ms : float
        Reach of the bands.

    Returns
    -------
    ndarray of shape (n_traces,)
        Dip in ms per trace relative to the seafloor at ``trace_index``; NaN elsewhere and where
        the path lies outside the mapped panel.
    """
    below = np.asarray(path_twt_below_seafloor_ms, dtype=float)
    dip_ms = np.full(below.shape, np.nan)
    if search.dip_samples_per_trace is None or search.dip_weight is None:
        return dip_ms
    guard_samples = max(1, int(round(guard_ms / dt_ms)))
    band_samples = max(guard_samples + 1, int(round(band_ms / dt_ms)))
    n_below = search.dip_samples_per_trace.shape[1]
    traces = np.asarray(trace_index, dtype=int)
    traces = traces[np.isfinite(below[traces])]
    samples = np.rint(below[traces] / dt_ms).astype(int)
    inside = (samples >= 0) & (samples < n_below)
    traces, samples = traces[inside], samples[inside]
    dip_ms[traces] = dt_ms * band_median_dips(search.dip_samples_per_trace, search.dip_weight, traces, samples,
                                              half_traces, guard_samples, band_samples)
    return dip_ms


def pick_departure_deg(pick_twt_ms: np.ndarray, reference_dip_ms_per_trace: np.ndarray,
                       velocity_m_s: np.ndarray | float, trace_spacing_m: float, smooth_traces: int) -> np.ndarray:
    """Angle between a pick's local slope and the reflection dip along it, degrees.

    Parameters
    ----------
    pick_twt_ms : ndarray of shape (n_traces,)
        Picked time per trace; NaN gaps.
    reference_dip_ms_per_trace : ndarray of shape (n_traces,)
        Dip the pick should follow, ms per trace; NaN where unknown.
    velocity_m_s : float or ndarray of shape (n_traces,)
        Interval velocity at the pick, for the time-to-depth angle.
    trace_spacing_m : float
        Distance between traces.
    smooth_traces : int
        The pick slope is a centred difference averaged over this many traces.

    Returns
    -------
    ndarray of shape (n_traces,)
        Pick angle minus reflection angle (signed), NaN where either is unknown.
    """
    slope = path_slope_ms_per_trace(pick_twt_ms, smooth_traces)
    pick_angle = dip_angle_deg(slope, velocity_m_s, trace_spacing_m)
    reflection_angle = dip_angle_deg(reference_dip_ms_per_trace, velocity_m_s, trace_spacing_m)
    return pick_angle - reflection_angle
