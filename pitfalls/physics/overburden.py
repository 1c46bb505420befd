"""Velocity pull-down and push-up from seafloor relief: the time anomaly the overburden alone makes.

Vertical rays, zero offset. Where the seafloor lies ``dz`` metres deeper than its regional
level (a canyon, a channel, a scarp), ``dz`` metres of sediment of velocity ``v_s`` are
replaced by water of velocity ``v_w``, and every reflector below arrives later by

    dt = 2 dz (1 / v_w - 1 / v_s)                                       (1)

(two-way; positive = later = pull-down when ``v_w < v_s``). A seafloor high (a mound, a
ridge) gives ``dz < 0``: a push-up. Derivation: a reflector flat at depth Z below a seafloor
at depth D has ``t = 2 D / v_w + 2 (Z - D) / v_s``; differentiate in D. Equivalently, in
seafloor time ``dt = dt_sf (1 - v_w / v_s)``. The same relation, with the anomalous and the
background velocity in place of ``v_w`` and ``v_s``, gives the anomaly of any body of
thickness h: ``dt = 2 h (1 / v_a - 1 / v_b)`` (common practice; e.g. Sheriff & Geldart 1995,
velocity anomalies, from memory).

A horizon whose time relief over a seafloor anomaly matches (1) in shape (correlation) and
in magnitude (least-squares scale factor near 1) is, there, a velocity effect; what is left
after subtracting (1) is the relief the horizon has in depth.

References
----------
.. [1] Sheriff, R. E., and Geldart, L. P., 1995, Exploration Seismology, 2nd ed., Cambridge
       University Press. (vertical-ray time anomalies under velocity anomalies; from memory)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.ndimage import median_filter, uniform_filter1d

from pitfalls.physics.runs import true_runs


def vertical_ray_time_anomaly_ms(thickness_m: np.ndarray | float, anomalous_velocity_m_s: float,
                                 background_velocity_m_s: float) -> np.ndarray:
    """Vertical-ray two-way time anomaly of a body of ``thickness_m`` replacing the background.

    ``dt = 2 h (1 / v_a - 1 / v_b)``, in ms; positive (later) for a slow body (pull-down),
    negative for a fast one (push-up). With the water as the slow body and ``h`` the extra
    water depth, this is equation (1) of the module.

    Parameters
    ----------
    thickness_m : float or ndarray
        Thickness of the anomalous body on each trace, m (negative = the background is
        thicker, e.g. a seafloor high replacing water by sediment).
    anomalous_velocity_m_s, background_velocity_m_s : float

    Returns
    -------
    ndarray
        Two-way time anomaly, ms.
    """
    thickness = np.asarray(thickness_m, dtype=float)
    return 2000.0 * thickness * (1.0 / anomalous_velocity_m_s - 1.0 / background_velocity_m_s)  # eq. (1)


def regional_seafloor_twt_ms(seafloor_twt_ms: np.ndarray, width_traces: int) -> np.ndarray:
    """The seafloor without its local relief: a running median ``width_traces`` wide, then a
    running mean a quarter as wide; gaps are filled by linear interpolation first.

    A canyon, channel or mound narrower than about half ``width_traces`` is removed; a regional
    slope is kept. NaN where the seafloor is unknown on every trace.
    """
    seafloor = np.asarray(seafloor_twt_ms, dtype=float)
    known = np.isfinite(seafloor)
    if not known.any():
        return np.full(seafloor.shape, np.nan)
    filled = np.interp(np.arange(seafloor.size), np.flatnonzero(known), seafloor[known])
    width = max(1, int(width_traces) | 1)
    regional = median_filter(filled, size=width, mode="nearest")
    return uniform_filter1d(regional, size=max(1, width // 4), mode="nearest")


def seafloor_anomaly_ms(seafloor_twt_ms: np.ndarray, regional_twt_ms: np.ndarray, water_velocity_m_s: float,
                        replacement_velocity_m_s: float) -> np.ndarray:
    """Predicted time anomaly below the seafloor relief, ms per trace (equation (1)).

    ``dz = v_w (t_sf - t_regional) / 2`` is the extra water depth; the sediment it replaced
    has ``replacement_velocity_m_s``. Positive = pull-down.
    """
    extra_water_m = water_velocity_m_s * (np.asarray(seafloor_twt_ms, dtype=float) - regional_twt_ms) / 2000.0
    return vertical_ray_time_anomaly_ms(extra_water_m, water_velocity_m_s, replacement_velocity_m_s)


def anomaly_windows(predicted_ms: np.ndarray, min_relief_ms: float, margin_traces: int) -> list[tuple[int, int, int]]:
    """Trace windows around each seafloor anomaly whose predicted effect reaches ``min_relief_ms``.

    The core of a window is a run of traces whose ``|predicted_ms|`` is at least a quarter of
    ``min_relief_ms``; a run counts only if its largest ``|predicted_ms|`` reaches
    ``min_relief_ms``. Each core is widened by ``margin_traces`` either side (the shoulders the
    comparison is bridged across). Overlapping windows are joined.

    Returns
    -------
    list of (first_index, last_index, sign)
        Inclusive 0-based indices; sign +1 for a pull-down (later), -1 for a push-up.
    """
    predicted = np.nan_to_num(np.asarray(predicted_ms, dtype=float), nan=0.0)
    n = predicted.size
    windows: list[tuple[int, int, int]] = []
    for sign in (1, -1):
        for first, last in true_runs(sign * predicted >= 0.25 * min_relief_ms, max_gap=1):
            if np.max(sign * predicted[first:last + 1]) < min_relief_ms:
                continue
            windows.append((max(0, first - margin_traces), min(n - 1, last + margin_traces), sign))
    windows.sort()
    joined: list[tuple[int, int, int]] = []
    for first, last, sign in windows:
        if joined and first <= joined[-1][1] and sign == joined[-1][2]:
            joined[-1] = (joined[-1][0], max(last, joined[-1][1]), sign)
        else:
            joined.append((first, last, sign))
    return joined


@dataclass(frozen=True)
class ReliefComparison:
    """A horizon's time relief against the predicted overburden anomaly over one window."""

    scale_factor: float
    """Least-squares b in ``observed = b * predicted`` (after bridging both across the window)."""
    correlation: float
    """Pearson correlation of the bridged observed and predicted relief."""
    predicted_relief_ms: float
    """Largest predicted anomaly in the window, ms, positive in the anomaly's own direction."""
    observed_relief_ms: float
    """The horizon's bridged relief at its extreme in the same direction, ms."""
    corrected_relief_ms: float
    """Range (max - min) of the bridged horizon minus the prediction, ms: the relief left."""
    fitted_relief_ms: float
    """Range of the bridged horizon minus ``scale_factor`` times the prediction, ms."""
    n_traces: int
    """Traces with a pick and a prediction in the window."""
    peak_index: int
    """Index (0-based, panel) of the largest predicted anomaly."""


def bridge(values: np.ndarray, shoulder: np.ndarray) -> np.ndarray:
    """``values`` minus the straight line fitted (least squares) to them on the ``shoulder`` traces.

    Parameters
    ----------
    values : ndarray of shape (n,)
    shoulder : ndarray of bool, shape (n,)
        Traces outside the anomaly (both sides) that set the line.
    """
    position = np.arange(values.size, dtype=float)
    use = shoulder & np.isfinite(values)
    if use.sum() < 2:
        return values - np.nanmean(values)
    if np.ptp(position[use]) == 0:
        return values - float(np.mean(values[use]))
    slope, intercept = np.polyfit(position[use], values[use], 1)
    return values - (intercept + slope * position)


def compare_relief(horizon_twt_ms: np.ndarray, predicted_ms: np.ndarray, window: tuple[int, int, int],
                   margin_traces: int) -> ReliefComparison | None:
    """Compare a horizon with the predicted overburden anomaly over one window.

    Both are bridged across the window (a straight line through their ``margin_traces``-wide
    shoulders is removed), so a regional dip does not count as relief. ``None`` when fewer
    than half the window's traces carry a pick, or a shoulder has none.
    """
    first, last, sign = window
    horizon = np.asarray(horizon_twt_ms, dtype=float)[first:last + 1]
    predicted = np.asarray(predicted_ms, dtype=float)[first:last + 1]
    n = horizon.size
    shoulder = np.zeros(n, dtype=bool)
    shoulder[:margin_traces] = True
    shoulder[max(0, n - margin_traces):] = True
    picked = np.isfinite(horizon) & np.isfinite(predicted)
    left_ok = picked[:margin_traces].any()
    right_ok = picked[max(0, n - margin_traces):].any()
    if picked.sum() < max(3, n // 2) or not (left_ok and right_ok):
        return None
    observed_anomaly = bridge(horizon, shoulder)[picked]
    predicted_anomaly = bridge(predicted, shoulder)[picked]
    energy = float(np.sum(predicted_anomaly ** 2))
    if energy <= 0.0:
        return None
    scale = float(np.sum(observed_anomaly * predicted_anomaly) / energy)  # least squares through the origin
    if np.std(observed_anomaly) > 0 and np.std(predicted_anomaly) > 0:
        correlation = float(np.corrcoef(observed_anomaly, predicted_anomaly)[0, 1])
    else:
        correlation = 0.0
    peak = int(np.argmax(sign * predicted_anomaly))
    directed_observed = sign * observed_anomaly
    corrected = observed_anomaly - predicted_anomaly
    fitted = observed_anomaly - scale * predicted_anomaly
    return ReliefComparison(
        scale_factor=scale, correlation=correlation,
        predicted_relief_ms=float(sign * predicted_anomaly[peak]),
        observed_relief_ms=float(np.max(directed_observed)),
        corrected_relief_ms=float(np.ptp(corrected)), fitted_relief_ms=float(np.ptp(fitted)),
        n_traces=int(picked.sum()), peak_index=int(first + np.flatnonzero(picked)[peak]))


def implied_replacement_velocity_m_s(scale_factor: float, water_velocity_m_s: float,
                                     replacement_velocity_m_s: float) -> float:
    """The sediment velocity that would make equation (1) match the observed relief exactly.

    ``1 / v = 1 / v_w - b (1 / v_w - 1 / v_s)``; infinite or negative ``1 / v`` (a relief too
    large for any sediment velocity) gives ``inf``.
    """
    slowness = 1.0 / water_velocity_m_s - scale_factor * (1.0 / water_velocity_m_s - 1.0 / replacement_velocity_m_s)
    return float(1.0 / slowness) if slowness > 0 else float("inf")
