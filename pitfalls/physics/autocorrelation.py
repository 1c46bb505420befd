"""Normalised trace autocorrelation in time windows below the seafloor, and the strength of its peak
at the seafloor period.

A water layer of two-way time ``t_sf`` with seafloor reflection coefficient R turns every primary
into a train repeating every ``t_sf`` with alternating sign (Backus 1959): the autocorrelation of a
reverberating trace has peaks at lags ``t_sf, 2 t_sf, ...`` and, because the free surface reverses
the sign, the first of them is negative: ``-R`` for the seafloor's own train ``R, -R^2, R^3 ...``
(operator ``1 / (1 + R z)``), and ``-2R / (1 + R^2)`` for the peg-leg train of a deeper reflector
(operator ``1 / (1 + R z)^2``, the inverse of the Backus filter), whose coefficients are
``(k + 1)(-R)^k``.

Estimator (biased): ``r[k] = sum_n x[n] x[n + k]``, summed over the window only, not divided by
``N - k``; ``rho[k] = r[k] / r[0]``. The biased estimator is the one whose normalised values stay
within [-1, 1]; it shrinks large lags by ``(N - k) / N``, which is why windows are several seafloor
periods long.

References
----------
.. [1] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261.
"""
from __future__ import annotations

import numpy as np
from scipy import fft as scipy_fft


def normalised_autocorrelation(traces: np.ndarray, max_lag: int | None = None) -> np.ndarray:
    """Biased, normalised autocorrelation ``rho[k] = r[k] / r[0]`` for lags 0..max_lag.

    Computed through a zero-padded FFT (no wrap-around), so it equals the non-negative lags of
    ``scipy.signal.correlate(x, x, mode="full") / r[0]``.

    Parameters
    ----------
    traces : ndarray of shape (n,) or (n_traces, n)
        Samples; NaN is treated as zero.
    max_lag : int, optional
        Largest lag in samples (default n - 1).

    Returns
    -------
    ndarray of shape (max_lag + 1,) or (n_traces, max_lag + 1)
        NaN for a trace with no energy.
    """
    values = np.nan_to_num(np.asarray(traces, dtype=float), nan=0.0)
    single = values.ndim == 1
    values = np.atleast_2d(values)
    n_samples = values.shape[1]
    max_lag = n_samples - 1 if max_lag is None else int(min(max_lag, n_samples - 1))
    n_fft = scipy_fft.next_fast_len(2 * n_samples - 1, real=True)
    spectrum = scipy_fft.rfft(values, n=n_fft, axis=1)
    raw = scipy_fft.irfft(spectrum * np.conj(spectrum), n=n_fft, axis=1)[:, : max_lag + 1]
    zero_lag = raw[:, :1]
    with np.errstate(invalid="ignore", divide="ignore"):
        rho = np.where(zero_lag > 0, raw / np.where(zero_lag > 0, zero_lag, 1.0), np.nan)
    return rho[0] if single else rho


def windowed_autocorrelation(data: np.ndarray, start_index: np.ndarray, window_samples: int,
                             max_lag: int) -> np.ndarray:
    """Normalised biased autocorrelation of one window per trace, each window starting at its own sample.

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
        The section; NaN samples count as zero.
    start_index : ndarray of shape (n_traces,)
        First sample of each trace's window (float allowed, rounded); NaN, or a window that
        does not fit inside the trace, gives a NaN row.
    window_samples : int
        Window length in samples.
    max_lag : int
        Largest lag in samples.

    Returns
    -------
    ndarray of shape (n_traces, max_lag + 1)
    """
    n_traces, n_samples = data.shape
    start = np.asarray(start_index, dtype=float)
    fits = np.isfinite(start) & (start >= 0) & (start + window_samples <= n_samples)
    rho = np.full((n_traces, max_lag + 1), np.nan)
    if not fits.any() or window_samples < 2:
        return rho
    rows = np.flatnonzero(fits)
    columns = np.rint(start[rows]).astype(int)[:, None] + np.arange(window_samples)[None, :]
    columns = np.minimum(columns, n_samples - 1)
    windows = data[rows[:, None], columns]
    rho[rows] = normalised_autocorrelation(windows, max_lag)
    return rho


def periodicity_strength(rho: np.ndarray, period_samples: np.ndarray, half_width_samples: int
                         ) -> tuple[np.ndarray, np.ndarray]:
    """Strength of the reversed-sign autocorrelation peak at the seafloor period, per trace.

    The strength is ``max(0, -min(rho))`` over lags ``period +/- half_width``: a water-layer
    reverberation repeats each event one seafloor period later with the opposite sign
    (Backus 1959), so only a negative peak counts. Being a ratio of the autocorrelation, it
    does not depend on the data's display polarity.

    Parameters
    ----------
    rho : ndarray of shape (n_traces, n_lags)
        Normalised autocorrelation per trace.
    period_samples : ndarray of shape (n_traces,)
        Seafloor two-way time in samples (the reverberation period) per trace; NaN where unknown.
    half_width_samples : int
        Half-width of the lag band searched around the period.

    Returns
    -------
    strength : ndarray of shape (n_traces,)
        In [0, 1]; NaN where the period or the autocorrelation is unknown or out of range.
    lag_samples : ndarray of shape (n_traces,)
        Lag of the most negative value in the band; NaN where unknown.
    """
    n_traces, n_lags = rho.shape
    period = np.asarray(period_samples, dtype=float)
    half_width = max(0, int(half_width_samples))
    offsets = np.arange(-half_width, half_width + 1)
    valid = np.isfinite(period) & np.isfinite(rho[:, 0])
    centre = np.where(valid, np.rint(period), 0).astype(int)
    lags = centre[:, None] + offsets[None, :]
    inside = (lags >= 1) & (lags < n_lags)
    values = np.take_along_axis(rho, np.clip(lags, 0, n_lags - 1), axis=1)
    values = np.where(inside, values, np.inf)
    best = np.argmin(values, axis=1)
    lowest = values[np.arange(n_traces), best]
    usable = valid & np.isfinite(lowest)
    strength = np.where(usable, np.maximum(0.0, -np.where(usable, lowest, 0.0)), np.nan)
    lag = np.where(usable, lags[np.arange(n_traces), best], np.nan).astype(float)
    return strength, lag
