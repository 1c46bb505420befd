"""Local reflector dip and coherence from the gradient structure tensor.

The gradient structure tensor (van Vliet & Verbeek 1995; Bakker 2002; Fehmers & Hocker 2003)
averages the outer product of the image gradient over a Gaussian window. Its leading
eigenvector is the local normal to the reflectors; the ratio of its eigenvalues says how
well one orientation explains the neighbourhood.

Axis convention
---------------
The project stores a panel as ``data[trace_index, sample_index]`` (time LAST). The published
formulas are written for an image ``s(t, x)`` with axis 0 = time. Here ``g_t`` is the
derivative along axis 1 of ``data`` (samples) and ``g_x`` the derivative along axis 0
(traces), so that ``J_tt``, ``J_tx`` and ``J_xx`` are exactly the published tensor entries.

Dip sign: a plane wave ``s = cos(2 pi (t - p x) / P)`` has its events at ``t = t0 + p x``;
``p > 0`` means events get later (deeper) as the trace number increases. ``p`` is in
samples per trace; multiply by ``dt_ms`` for ms per trace.

References
----------
.. [1] van Vliet, L. J., and Verbeek, P. W., 1995, Estimators for orientation and anisotropy
       in digitized images, Proceedings ASCI'95. (from memory)
.. [2] Bakker, P., 2002, Image structure analysis for seismic interpretation, PhD thesis,
       Delft University of Technology.
.. [3] Fehmers, G. C., and Hocker, C. F. W., 2003, Fast structural interpretation with
       structure-oriented filtering, Geophysics 68(4), 1286-1293. (from memory)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.ndimage import gaussian_filter

_TINY = 1e-30


@dataclass(frozen=True)
class DipField:
    """Local dip and its reliability at every sample of a panel."""

    dip_samples_per_trace: np.ndarray
    """Shape (n_traces, n_samples); positive = events get later with increasing trace number."""
    coherence: np.ndarray
    """Shape (n_traces, n_samples), in [0, 1]: ((l1 - l2) / (l1 + l2)) ** 2."""
    linearity: np.ndarray
    """Shape (n_traces, n_samples), in [0, 1]: 1 - l2 / l1."""

    def dip_ms_per_trace(self, dt_ms: float) -> np.ndarray:
        """Dip in milliseconds of two-way time per trace."""
        return self.dip_samples_per_trace * dt_ms


def structure_tensor_dip(data: np.ndarray, gradient_sigma_samples: float = 1.0,
                         window_sigma_samples: float = 3.0) -> DipField:
    """Gradient structure tensor dip (van Vliet & Verbeek 1995; Bakker 2002).

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
        Amplitudes, time LAST as the project stores them. NaN is treated as 0.
    gradient_sigma_samples : float
        Standard deviation, in samples (and traces), of the Gaussian-derivative gradient
        operator.
    window_sigma_samples : float
        Standard deviation, in samples (and traces), of the Gaussian window over which the
        gradient products are averaged.

    Returns
    -------
    DipField
        Dip in samples per trace (positive = later with increasing trace number),
        coherence ((l1-l2)/(l1+l2))**2 and linearity 1 - l2/l1, each (n_traces, n_samples).

    Notes
    -----
    With axis 0 = time of the published image, ``theta_n = 0.5 atan2(2 J_tx, J_tt - J_xx)``
    is the angle of the reflector normal from the time axis and ``p = -tan(theta_n)``.
    Gradients are Gaussian derivatives, which are isotropic, so a plane wave's dip is
    recovered without the short-period bias of the Sobel operator.
    """
    image = np.nan_to_num(np.asarray(data, dtype=np.float64), nan=0.0)
    # axis 1 = time sample, axis 0 = trace
    g_t = gaussian_filter(image, gradient_sigma_samples, order=(0, 1), mode="reflect")
    g_x = gaussian_filter(image, gradient_sigma_samples, order=(1, 0), mode="reflect")
    j_tt = gaussian_filter(g_t * g_t, window_sigma_samples, mode="reflect")
    j_tx = gaussian_filter(g_t * g_x, window_sigma_samples, mode="reflect")
    j_xx = gaussian_filter(g_x * g_x, window_sigma_samples, mode="reflect")
    theta_n = 0.5 * np.arctan2(2.0 * j_tx, j_tt - j_xx)  # normal's angle from the time axis
    dip = -np.tan(theta_n)  # p = -tan(theta_n); equals -J_tx/J_tt for a plane wave
    trace = j_tt + j_xx  # l1 + l2
    spread = np.sqrt((j_tt - j_xx) ** 2 + 4.0 * j_tx ** 2)  # l1 - l2
    live = trace > _TINY
    safe_trace = np.where(live, trace, 1.0)
    coherence = np.where(live, (spread / safe_trace) ** 2, 0.0)  # ((l1 - l2)/(l1 + l2))^2
    l1 = 0.5 * (trace + spread)
    l2 = 0.5 * (trace - spread)
    linearity = np.where(live, 1.0 - l2 / np.where(live, l1, 1.0), 0.0)  # 1 - l2/l1
    return DipField(
        dip_samples_per_trace=dip,
        coherence=np.clip(coherence, 0.0, 1.0),
        linearity=np.clip(linearity, 0.0, 1.0),
    )
