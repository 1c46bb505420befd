"""Zero-offset arrival times, polarities and amplitudes of seafloor, peg-leg and interbed multiples.

All times are two-way times at zero offset on a stacked section: the near-offset approximation.
Flat layers and constant water velocity give exact arithmetic: an event with n bounces off the
seafloor arrives at ``n * t_sf`` (n = 2 is the first multiple), a peg-leg of a reflector at
``t_r`` with j extra round trips in the water at ``t_r + j * t_sf``, and an interbed multiple
between reflectors at ``t1 < t2`` at ``2 * t2 - t1``. The free surface has reflection coefficient
-1, so the first seafloor multiple is reversed relative to the seafloor, the second is not, and
so on (Backus 1959).

Under a dipping seafloor the same-trace rule ``n * t_sf`` is too late on an unmigrated
zero-offset section: for a planar seafloor of dip xi the event arrives at
``t_sf * sin(n xi) / sin(xi)``. Sections come migrated or not, so a checker predicts both and
accepts the band between them (common practice).

References
----------
.. [1] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261.
.. [2] Sheriff, R. E., and Geldart, L. P., 1995, Exploration Seismology, 2nd ed., Cambridge
       University Press, chapter on multiples. (from memory)
.. [3] Warner, M., 1990, Absolute reflection coefficients from deep seismic reflections,
       Tectonophysics 173, 15-23. (from memory; journal not confirmed)
"""
from __future__ import annotations

import numpy as np
from scipy.ndimage import median_filter


def seafloor_multiple_twt_ms(seafloor_twt_ms: np.ndarray | float, multiplier: int) -> np.ndarray:
    """Same-trace seafloor multiple time ``n * t_sf`` (flat seafloor, zero offset).

    ``multiplier`` n counts bounces off the seafloor: 2 is the first multiple, 3 the second.
    """
    return multiplier * np.asarray(seafloor_twt_ms, dtype=float)  # t = (k + 1) t_sf, k = n - 1


def seafloor_dip_angle_deg(seafloor_twt_ms: np.ndarray, trace_spacing_m: float,
                           water_velocity_m_s: float, smoothing_traces: int = 1,
                           across_ms_per_m: np.ndarray | None = None) -> np.ndarray:
    """Seafloor dip angle from its time-dip on a zero-offset section: ``sin(xi) = (v / 2) dt/dx``.

    The seafloor times are median-smoothed over ``smoothing_traces`` (gaps interpolated for the
    gradient, then put back as NaN). On an inline of a volume, ``across_ms_per_m`` (the time
    gradient across the inlines, per trace) is added in quadrature, ``sin(xi) = (v / 2) |grad t|``,
    so the angle is the true dip, not its component along the line. Returns degrees, >= 0, NaN
    where the seafloor is unknown.
    """
    twt = np.asarray(seafloor_twt_ms, dtype=float)
    found = np.isfinite(twt)
    angle = np.full(twt.shape, np.nan)
    if found.sum() < 2:
        return np.where(found, 0.0, np.nan)
    filled = np.interp(np.arange(twt.size), np.flatnonzero(found), twt[found])
    if smoothing_traces > 1:
        filled = median_filter(filled, size=int(smoothing_traces), mode="nearest")
    dip_s_per_m = np.abs(np.gradient(filled) / 1000.0 / float(trace_spacing_m))
    if across_ms_per_m is not None:
        across_s_per_m = np.nan_to_num(np.asarray(across_ms_per_m, dtype=float), nan=0.0) / 1000.0
        if smoothing_traces > 1:
            across_s_per_m = median_filter(across_s_per_m, size=int(smoothing_traces), mode="nearest")
        dip_s_per_m = np.hypot(dip_s_per_m, across_s_per_m)  # |grad t| of the seafloor plane
    sine = np.clip(0.5 * water_velocity_m_s * dip_s_per_m, 0.0, 1.0)  # dt1/dL = (2/v) sin xi
    angle[found] = np.degrees(np.arcsin(sine[found]))
    return angle


def dipping_seafloor_multiple_twt_ms(seafloor_twt_ms: np.ndarray | float,
                                     dip_angle_deg: np.ndarray | float, multiplier: int) -> np.ndarray:
    """Zero-offset time of the event with n seafloor bounces under a planar dipping seafloor.

    ``t_n = t_sf * sin(n xi) / sin(xi)``, from ``t_n(L) = (2 L / v) sin(n xi)`` (dipping-plane rule);
    tends to ``n * t_sf`` as xi -> 0.
    """
    twt = np.asarray(seafloor_twt_ms, dtype=float)
    xi = np.radians(np.asarray(dip_angle_deg, dtype=float))
    small = np.abs(xi) < 1e-9
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = np.where(small, float(multiplier),
                         np.sin(multiplier * xi) / np.where(small, 1.0, np.sin(xi)))  # t_n/t_1 = sin(n xi)/sin(xi)
    return twt * ratio


def seafloor_multiple_band_twt_ms(seafloor_twt_ms: np.ndarray, dip_angle_deg: np.ndarray,
                                  multiplier: int) -> tuple[np.ndarray, np.ndarray]:
    """Earliest and latest predicted time of the n-bounce seafloor event: between the dipping-plane
    (unmigrated) and the same-trace (flat, or migrated 1-D) predictions."""
    same_trace = seafloor_multiple_twt_ms(seafloor_twt_ms, multiplier)
    dipping = dipping_seafloor_multiple_twt_ms(seafloor_twt_ms, np.nan_to_num(dip_angle_deg), multiplier)
    return np.fmin(same_trace, dipping), np.fmax(same_trace, dipping)


def peg_leg_twt_ms(reflector_twt_ms: np.ndarray | float, seafloor_twt_ms: np.ndarray | float,
                   round_trips: int) -> np.ndarray:
    """Peg-leg time ``t_r + j * t_sf`` for j extra round trips in the water (j + 1 ray paths)."""
    return np.asarray(reflector_twt_ms, dtype=float) + round_trips * np.asarray(seafloor_twt_ms, dtype=float)


def interbed_multiple_twt_ms(upper_twt_ms: np.ndarray | float, lower_twt_ms: np.ndarray | float) -> np.ndarray:
    """Interbed multiple ``t2 + (t2 - t1) = 2 t2 - t1`` between reflectors at t1 < t2."""
    return 2.0 * np.asarray(lower_twt_ms, dtype=float) - np.asarray(upper_twt_ms, dtype=float)


def seafloor_multiple_polarity(multiplier: int) -> int:
    """Sign of the n-bounce seafloor event relative to the seafloor primary: ``(-1)^(n-1)``.

    Train R, -R^2, +R^3 ... with free-surface coefficient -1: the first multiple is reversed.
    """
    return -1 if (multiplier - 1) % 2 else 1  # k-th multiple has sign (-1)^k, k = n - 1


def peg_leg_polarity(round_trips: int) -> int:
    """Sign of a peg-leg relative to its generating reflector: ``(-1)^j`` for a positive seafloor R
    (coefficients of ``1 / (1 + R z)^2``: -2R, +3R^2, ...)."""
    return -1 if round_trips % 2 else 1


def interbed_polarity(upper_sign: np.ndarray | int, lower_sign: np.ndarray | int) -> np.ndarray:
    """Sign of an interbed multiple relative to the lower reflector's primary: ``-sign(R1) sign(R2)``.

    The amplitude is ``R2 (-R1) R2`` (the underside of interface 1 reflects with -R1), the lower
    primary ``R2``; the ratio is ``-R1 R2``. Signs are read from the same data, so the display
    convention cancels.
    """
    return -np.sign(upper_sign) * np.sign(lower_sign)


def seafloor_reflection_coefficient(amplitude_ratio: np.ndarray | float, multiple_twt_ms: np.ndarray | float,
                                    primary_twt_ms: np.ndarray | float, gain_exponent: float = 0.0,
                                    multiplier: int = 2) -> np.ndarray:
    """Seafloor reflection coefficient from the ratio of a seafloor multiple to the seafloor primary
    (Warner 1990 method; from memory).

    With spherical spreading ``1 / (v t)`` and sea-surface coefficient -1, the n-bounce event over
    the primary is ``(-1)^(n-1) R^(n-1) t_p / t_n`` in true amplitude. Data carrying a ``t^g``
    gain have ``A_data = A_true t^g``, so

        R^(n-1) = (-1)^(n-1) (A_n / A_p) (t_n / t_p)^(1 - g)

    For n = 2: ``R = -(A_m / A_p)(t_m / t_p)`` without gain, ``-A_m / A_p`` with a t-gain, and
    ``-A_m / (2 A_p)`` with a t^2 gain at ``t_m = 2 t_p``. A negative result means the multiple
    has the wrong sign for a simple seafloor multiple.

    Parameters
    ----------
    amplitude_ratio : float or ndarray
        Signed ``A_multiple / A_primary`` read at the same phase point of the wavelet.
    multiple_twt_ms, primary_twt_ms : float or ndarray
        Times of the two events.
    gain_exponent : float
        g of the ``t^g`` gain the data are assumed to carry (0 none, 1 t-gain, 2 t^2).
    multiplier : int
        n of the multiple (2 = first multiple).
    """
    ratio = np.asarray(amplitude_ratio, dtype=float)
    spreading = (np.asarray(multiple_twt_ms, dtype=float) / np.asarray(primary_twt_ms, dtype=float)) ** (1.0 - gain_exponent)
    power = seafloor_multiple_polarity(multiplier) * ratio * spreading  # R^(n-1) = (-1)^(n-1) (A_n/A_p)(t_n/t_p)^(1-g)
    return np.sign(power) * np.abs(power) ** (1.0 / (multiplier - 1))


def seafloor_reflection_coefficient_from_peg_leg(amplitude_ratio: np.ndarray | float, peg_leg_twt_ms: np.ndarray | float,
                                                 reflector_twt_ms: np.ndarray | float, gain_exponent: float = 0.0,
                                                 round_trips: int = 1) -> np.ndarray:
    """Seafloor reflection coefficient from a peg-leg over its generating primary.

    ``A_peg / A_r = (-1)^j (j + 1) R^j t_r / t_peg`` in true amplitude (j + 1 paths, spreading
    ``1 / (v t)``, transmission ignored), so ``R^j = (-1)^j (A_peg / A_r)(t_peg / t_r)^(1-g) / (j + 1)``.
    """
    ratio = np.asarray(amplitude_ratio, dtype=float)
    spreading = (np.asarray(peg_leg_twt_ms, dtype=float) / np.asarray(reflector_twt_ms, dtype=float)) ** (1.0 - gain_exponent)
    power = peg_leg_polarity(round_trips) * ratio * spreading / (round_trips + 1)  # coefficient (j+1)(-R)^j
    return np.sign(power) * np.abs(power) ** (1.0 / round_trips)


def peak_amplitude(data: np.ndarray, t0_ms: float, dt_ms: float, twt_ms: np.ndarray,
                   snap_ms: float) -> tuple[np.ndarray, np.ndarray]:
    """Signed amplitude and time of the strongest absolute sample within ``snap_ms`` of a time per
    trace, refined by a three-point parabola (vectorised over traces).

    Parameters
    ----------
    data : ndarray of shape (n_traces, n_samples)
    t0_ms, dt_ms : float
    twt_ms : ndarray of shape (n_traces,)
        NaN where there is no time.
    snap_ms : float

    Returns
    -------
    amplitude, peak_twt_ms : ndarray of shape (n_traces,)
        NaN where the time is NaN, outside the data, or the window holds no finite sample.
    """
    n_traces, n_samples = data.shape
    amplitude = np.full(n_traces, np.nan)
    peak_twt = np.full(n_traces, np.nan)
    centre = (np.asarray(twt_ms, dtype=float) - t0_ms) / dt_ms
    rows = np.flatnonzero(np.isfinite(centre) & (centre >= 0) & (centre <= n_samples - 1))
    if rows.size == 0:
        return amplitude, peak_twt
    snap = max(0, int(round(snap_ms / dt_ms)))
    offsets = np.arange(-snap - 1, snap + 2)
    columns = np.rint(centre[rows]).astype(int)[:, None] + offsets[None, :]
    inside = (columns >= 0) & (columns < n_samples)
    values = data[rows[:, None], np.clip(columns, 0, n_samples - 1)].astype(float)
    values = np.where(inside, values, np.nan)
    magnitude = np.abs(values)
    search = np.where(np.isfinite(magnitude[:, 1:-1]), magnitude[:, 1:-1], -1.0)
    best = np.argmax(search, axis=1) + 1
    has = search.max(axis=1) >= 0
    index = np.arange(rows.size)
    y0, y1, y2 = values[index, best - 1], values[index, best], values[index, best + 1]
    denominator = y0 - 2.0 * y1 + y2
    usable = np.isfinite(y0) & np.isfinite(y2) & (denominator != 0)
    offset = np.where(usable, 0.5 * (y0 - y2) / np.where(denominator != 0, denominator, 1.0), 0.0)
    offset = np.clip(offset, -0.5, 0.5)
    height = np.where(usable, y1 - 0.25 * (y0 - y2) * offset, y1)
    amplitude[rows[has]] = height[has]
    peak_twt[rows[has]] = t0_ms + (columns[index, best] + offset)[has] * dt_ms
    return amplitude, peak_twt


def time_dip_ratio(pick_twt_ms: np.ndarray, reference_twt_ms: np.ndarray, max_points: int = 200) -> float:
    """Time-dip of a pick over that of a reference surface: the Theil-Sen slope (median of pairwise
    slopes) of pick time on reference time.

    A seafloor multiple of n bounces has about n times the seafloor's time-dip (dipping-plane rule),
    so its slope on the seafloor time is about n. The median of pairwise slopes ignores a minority
    of mis-picked traces. Pairs whose reference times differ by less than 1e-6 ms are skipped; up to
    ``max_points`` evenly spaced points are used. Returns NaN with fewer than 3 usable points.
    """
    both = np.isfinite(pick_twt_ms) & np.isfinite(reference_twt_ms)
    x, y = np.asarray(reference_twt_ms, dtype=float)[both], np.asarray(pick_twt_ms, dtype=float)[both]
    if x.size < 3:
        return float("nan")
    if x.size > max_points:
        chosen = np.unique(np.linspace(0, x.size - 1, max_points).astype(int))
        x, y = x[chosen], y[chosen]
    first, second = np.triu_indices(x.size, k=1)
    dx = x[second] - x[first]
    keep = np.abs(dx) > 1e-6
    if not keep.any():
        return float("nan")
    return float(np.median((y[second] - y[first])[keep] / dx[keep]))
