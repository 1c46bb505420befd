"""The analytic signal and the envelope (reflection strength) of traces, through the FFT.

The analytic signal of a real trace x is x + i H[x], H the Hilbert transform; its magnitude is
the envelope (Taner, Koehler & Sheriff 1979, "reflection strength"). In the frequency domain
H keeps the zero (and, for an even length, the Nyquist) frequency, doubles the positive
frequencies and removes the negative ones (Marple 1999). This is the computation
``scipy.signal.hilbert`` performs, written here on ``scipy.fft`` so that the scan does not load
``scipy.signal`` (which loads ``scipy.stats``) to get one transform.

References
----------
.. [1] Taner, M. T., Koehler, F., and Sheriff, R. E., 1979, Complex seismic trace analysis,
       Geophysics 44(6), 1041-1063.
.. [2] Marple, S. L., 1999, Computing the discrete-time "analytic" signal via FFT, IEEE
       Transactions on Signal Processing 47(9), 2600-2603. (from memory)
"""
from __future__ import annotations

import numpy as np


def analytic_signal(traces: np.ndarray, axis: int = -1) -> np.ndarray:
    """Analytic signal x + i H[x] along ``axis`` (Marple 1999), complex, same shape as ``traces``.

    Single-precision input gives a single-precision result, as ``scipy.fft`` keeps precision.
    """
    from scipy import fft as scipy_fft
    values = np.asarray(traces)
    if np.iscomplexobj(values):
        raise ValueError("traces must be real")
    n = values.shape[axis]
    spectrum = np.moveaxis(scipy_fft.fft(values, n, axis=axis), axis, -1)
    if n % 2 == 0:
        spectrum[..., 1:n // 2] *= 2.0  # positive frequencies doubled; 0 and Nyquist kept
        spectrum[..., n // 2 + 1:n] = 0.0  # negative frequencies removed
    else:
        spectrum[..., 1:(n + 1) // 2] *= 2.0
        spectrum[..., (n + 1) // 2:n] = 0.0
    return scipy_fft.ifft(np.moveaxis(spectrum, -1, axis), axis=axis)


def envelope(traces: np.ndarray, axis: int = -1) -> np.ndarray:
    """Envelope |x + i H[x]| along ``axis`` (Taner, Koehler & Sheriff 1979)."""
    return np.abs(analytic_signal(traces, axis=axis))
