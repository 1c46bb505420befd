"""Zero-phase wavelets and band-limited noise for synthetic sections.

Times are in milliseconds and frequencies in hertz throughout. Every wavelet has an odd
number of samples with time zero at the centre sample and a peak of 1 there.

References
----------
.. [1] Ricker, N., 1953, The form and laws of propagation of seismic wavelets, Geophysics
       18(1), 10-40. (volume and pages from memory)
.. [2] Ormsby, J. F. A., 1961, Design of numerical filters with applications to missile data
       processing, Journal of the ACM 8(3), 440-466. (from memory)
"""
from __future__ import annotations

import numpy as np
from scipy.signal import fftconvolve


def wavelet_time_ms(dt_ms: float, duration_ms: float = 128.0) -> np.ndarray:
    """Symmetric time axis of a wavelet: odd number of samples, 0 at the centre.

    Parameters
    ----------
    dt_ms : float
        Sample interval, ms.
    duration_ms : float
        Length of the wavelet, ms; the sample count is ``duration_ms / dt_ms`` rounded down
        and made odd by adding one.

    Returns
    -------
    ndarray of shape (n,)
    """
    if dt_ms <= 0 or duration_ms <= 0:
        raise ValueError("dt_ms and duration_ms must be positive")
    n_samples = int(duration_ms / dt_ms + 1e-9)
    half = n_samples // 2
    return dt_ms * np.arange(-half, half + 1, dtype=float)


def ricker(frequency_hz: float, dt_ms: float, duration_ms: float = 128.0) -> np.ndarray:
    """Ricker (1953) wavelet: ``(1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2)``.

    Parameters
    ----------
    frequency_hz : float
        Peak frequency of the amplitude spectrum, Hz.
    dt_ms : float
        Sample interval, ms.
    duration_ms : float
        Length, ms.

    Returns
    -------
    ndarray of shape (n,)
        Odd length, centred, 1 at time zero.
    """
    time_s = wavelet_time_ms(dt_ms, duration_ms) / 1000.0
    argument = (np.pi * frequency_hz * time_s) ** 2
    return (1.0 - 2.0 * argument) * np.exp(-argument)  # Ricker (1953): (1 - 2 pi^2 f^2 t^2) e^{-pi^2 f^2 t^2}


def ormsby(f1_hz: float, f2_hz: float, f3_hz: float, f4_hz: float, dt_ms: float, duration_ms: float = 128.0) -> np.ndarray:
    """Ormsby zero-phase band-pass wavelet with a trapezoidal amplitude spectrum (f1-f2-f3-f4).

    ``w(t) = [pi f4^2 sinc^2(f4 t) - pi f3^2 sinc^2(f3 t)] / (f4 - f3)
           - [pi f2^2 sinc^2(f2 t) - pi f1^2 sinc^2(f1 t)] / (f2 - f1)``, with
    ``sinc(x) = sin(pi x) / (pi x)``, scaled to 1 at time zero.

    Parameters
    ----------
    f1_hz, f2_hz, f3_hz, f4_hz : float
        Corners of the trapezoid, Hz: zero below f1, full between f2 and f3, zero above f4.
    dt_ms : float
        Sample interval, ms.
    duration_ms : float
        Length, ms.

    Returns
    -------
    ndarray of shape (n,)
    """
    if not 0.0 <= f1_hz < f2_hz <= f3_hz < f4_hz:
        raise ValueError("Ormsby corners must satisfy 0 <= f1 < f2 <= f3 < f4")
    time_s = wavelet_time_ms(dt_ms, duration_ms) / 1000.0

    def lobe(frequency_hz: float) -> np.ndarray:
        return np.pi * frequency_hz**2 * np.sinc(frequency_hz * time_s) ** 2

    wavelet = (lobe(f4_hz) - lobe(f3_hz)) / (f4_hz - f3_hz) - (lobe(f2_hz) - lobe(f1_hz)) / (f2_hz - f1_hz)
    return wavelet / wavelet[len(wavelet) // 2]


def convolve_traces(reflectivity: np.ndarray, wavelet: np.ndarray) -> np.ndarray:
    """Convolve every trace (last axis) with a centred zero-phase wavelet, same length out.

    Parameters
    ----------
    reflectivity : ndarray of shape (..., n_samples)
    wavelet : ndarray of shape (n,), n odd, time zero at the centre

    Returns
    -------
    ndarray of shape (..., n_samples)
    """
    half = len(wavelet) // 2
    full = fftconvolve(reflectivity, wavelet.reshape((1,) * (reflectivity.ndim - 1) + (-1,)), mode="full", axes=-1)
    return full[..., half : half + reflectivity.shape[-1]]


def band_limited_noise(shape: tuple[int, int], wavelet: np.ndarray, seed: int) -> np.ndarray:
    """Gaussian white noise (numpy ``default_rng(seed)``) filtered by the wavelet, unit RMS.

    Parameters
    ----------
    shape : (n_traces, n_samples)
    wavelet : ndarray
        The band of the noise is the wavelet's band.
    seed : int
        Seed of the generator; the same seed gives the same noise.

    Returns
    -------
    ndarray of the given shape, RMS 1.
    """
    generator = np.random.default_rng(seed)
    white = generator.standard_normal(shape)
    noise = convolve_traces(white, wavelet)
    rms = float(np.sqrt(np.mean(noise**2)))
    return noise / rms if rms > 0 else noise


def add_noise(signal: np.ndarray, snr: float, wavelet: np.ndarray, seed: int, signal_mask: np.ndarray | None = None) -> np.ndarray:
    """Add band-limited noise so that RMS(signal) / RMS(noise) equals ``snr``.

    Parameters
    ----------
    signal : ndarray of shape (n_traces, n_samples)
    snr : float
        Ratio of signal RMS to noise RMS (amplitude ratio, not decibels); > 0.
    wavelet : ndarray
        Shapes the noise spectrum.
    seed : int
        Seed of the noise generator.
    signal_mask : ndarray of bool, same shape as ``signal``, optional
        Samples over which the signal RMS is measured (e.g. below the seafloor, so the
        silent water column does not dilute it); default all samples.

    Returns
    -------
    ndarray of the same shape: signal + noise.
    """
    if not snr > 0:
        raise ValueError("snr must be positive")
    selected = signal if signal_mask is None else signal[signal_mask]
    signal_rms = float(np.sqrt(np.mean(selected**2))) if selected.size else 0.0
    noise = band_limited_noise(signal.shape, wavelet, seed)
    return signal + noise * (signal_rms / snr)  # RMS(noise) = RMS(signal) / snr
