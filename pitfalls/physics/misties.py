"""Ties between sections: where 2-D lines cross, where a line runs through a 3-D survey, and the
seafloor's bulk shift and phase difference at the tie.

Crossings of two 2-D lines come from their CDP X/Y: the polylines through the traces are
intersected segment by segment, and the crossing is kept only when each line's nearest trace
lies within half of that line's trace spacing of the intersection (no gap in the traces there),
and both lines go on past it by at least one trace on each side, passing from one side of the
other line to the other. Lines that only touch (one ends on the other, or they graze and turn
back) and lines that run along each other are not crossings.

A 2-D line and a 3-D survey tie where the line's traces lie within half a bin diagonal of a
survey trace; each unbroken stretch of such traces at least ``min_overlap_traces`` long is one
tie, taken at the middle of the stretch.

At a tie the seafloor shows the line-to-line bulk shift and phase difference. Both come from a
short complex cross-correlation of the two traces around the seafloor: with analytic traces
``a`` and ``b`` (the trace plus i times its Hilbert transform),

    c(L) = sum_t conj(a(t)) b(t + L)

over a window on ``a``; the lag ``L`` that maximises ``|c|`` is the bulk shift (it does not
depend on a phase difference), ``arg c(L)`` is the phase of ``b`` relative to ``a``, and
``|c| / sqrt(sum |a|^2 sum |b|^2)`` is the correlation. A peak or trough picked on ``b`` lies
``-phase / (2 pi f)`` from where it would lie without the rotation, so a horizon picked on the
same phase on both lines should differ by ``L - phase / 360 * T`` (T = 1 / f the dominant
period). A horizon whose time difference departs from that by more than a tolerance is
mis-tied; a departure of a whole number of periods is the same event picked on another loop.

References
----------
.. [1] Taner, M. T., Koehler, F., and Sheriff, R. E., 1979, Complex seismic trace analysis,
       Geophysics 44(6), 1041-1063 (the analytic trace, instantaneous phase; from memory).
.. [2] Mis-tie at a line crossing after removing the bulk shift and phase difference the lines
       show on a common reflector, and the whole-period mis-tie as a cycle skip (common practice).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.signal import hilbert
from scipy.spatial import cKDTree


@dataclass(frozen=True)
class Crossing:
    """Where two lines cross: the nearest trace of each (0-based file positions) and the point."""

    index_a: int
    index_b: int
    x_m: float
    y_m: float


def _cross(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return u[..., 0] * v[..., 1] - u[..., 1] * v[..., 0]


def _side(points: np.ndarray, origin: np.ndarray, direction: np.ndarray) -> np.ndarray:
    """Sign of the side of ``direction`` through ``origin`` on which each point lies."""
    return np.sign(_cross(direction, points - origin))


def line_crossings(xy_a: np.ndarray, xy_b: np.ndarray, spacing_a_m: float, spacing_b_m: float) -> list[Crossing]:
    """Crossings of two 2-D lines from the CDP X/Y of their traces.

    Parameters
    ----------
    xy_a, xy_b : ndarray of shape (n_a, 2) and (n_b, 2)
        CDP X/Y of each trace in file order, metres.
    spacing_a_m, spacing_b_m : float
        Trace spacing of each line, metres.

    Returns
    -------
    list of Crossing, ordered by ``index_a``. See the module docstring for what counts.
    """
    xy_a = np.asarray(xy_a, dtype=float)
    xy_b = np.asarray(xy_b, dtype=float)
    if len(xy_a) < 3 or len(xy_b) < 3:
        return []
    start_a, step_a = xy_a[:-1], np.diff(xy_a, axis=0)
    start_b, step_b = xy_b[:-1], np.diff(xy_b, axis=0)
    half_a = 0.5 * np.hypot(step_a[:, 0], step_a[:, 1])
    half_b = 0.5 * np.hypot(step_b[:, 0], step_b[:, 1])
    tree_b = cKDTree(start_b + 0.5 * step_b)
    radius = float(half_a.max() + half_b.max()) * 1.000001
    candidates = tree_b.query_ball_point(start_a + 0.5 * step_a, r=radius)
    pairs = np.array([(i, j) for i, found in enumerate(candidates) for j in found], dtype=np.int64).reshape(-1, 2)
    if pairs.size == 0:
        return []
    p, r = start_a[pairs[:, 0]], step_a[pairs[:, 0]]
    q, s = start_b[pairs[:, 1]], step_b[pairs[:, 1]]
    denominator = _cross(r, s)
    parallel = np.abs(denominator) <= 1e-12 * np.hypot(r[:, 0], r[:, 1]) * np.hypot(s[:, 0], s[:, 1])
    with np.errstate(divide="ignore", invalid="ignore"):
        t = _cross(q - p, s) / denominator  # p + t r = q + u s
        u = _cross(q - p, r) / denominator
    hit = ~parallel & (t >= 0) & (t < 1) & (u >= 0) & (u < 1)
    found: dict[tuple[int, int], Crossing] = {}
    for (segment_a, segment_b), t_value in zip(pairs[hit], t[hit]):
        point = xy_a[segment_a] + t_value * step_a[segment_a]
        index_a = int(segment_a + np.argmin(np.hypot(*(xy_a[segment_a:segment_a + 2] - point).T)))
        index_b = int(segment_b + np.argmin(np.hypot(*(xy_b[segment_b:segment_b + 2] - point).T)))
        if np.hypot(*(xy_a[index_a] - point)) > 0.5 * spacing_a_m * 1.000001:
            continue
        if np.hypot(*(xy_b[index_b] - point)) > 0.5 * spacing_b_m * 1.000001:
            continue
        if not (_passes_through(xy_a, index_a, xy_b, index_b) and _passes_through(xy_b, index_b, xy_a, index_a)):
            continue  # touching, not crossing
        found.setdefault((index_a, index_b), Crossing(index_a, index_b, float(point[0]), float(point[1])))
    return sorted(found.values(), key=lambda c: (c.index_a, c.index_b))


def _passes_through(xy: np.ndarray, index: int, other: np.ndarray, other_index: int) -> bool:
    """True when the line ``xy`` has a trace on each side of its nearest trace, and those lie on
    opposite sides of the other line's local direction."""
    if index < 1 or index > len(xy) - 2:
        return False
    low, high = max(0, other_index - 1), min(len(other) - 1, other_index + 1)
    direction = other[high] - other[low]
    sides = _side(np.stack([xy[index - 1], xy[index + 1]]), other[other_index], direction)
    return bool(sides[0] * sides[1] < 0)


def volume_ties(xy_line: np.ndarray, xy_volume: np.ndarray, tolerance_m: float,
                min_overlap_traces: int) -> list[tuple[int, int]]:
    """Ties of a 2-D line with a 3-D survey: ``(line trace index, volume trace index)`` pairs.

    Parameters
    ----------
    xy_line : ndarray of shape (n_line, 2)
        CDP X/Y of the line's traces in file order, metres.
    xy_volume : ndarray of shape (n_volume, 2)
        CDP X/Y of the survey's traces (file order), metres.
    tolerance_m : float
        A line trace is inside the survey when a survey trace lies within this distance
        (half the bin diagonal).
    min_overlap_traces : int
        Shorter stretches of line traces inside the survey are not ties.

    Returns
    -------
    list of (int, int): one pair per stretch, at the middle of the stretch.
    """
    if len(xy_line) == 0 or len(xy_volume) == 0:
        return []
    distance, nearest = cKDTree(np.asarray(xy_volume, dtype=float)).query(np.asarray(xy_line, dtype=float))
    inside = distance <= tolerance_m * 1.000001
    ties = []
    edges = np.flatnonzero(np.diff(np.concatenate([[0], inside.astype(np.int8), [0]])))
    for first, stop in zip(edges[::2], edges[1::2]):
        if stop - first >= max(1, min_overlap_traces):
            middle = int((first + stop - 1) // 2)
            ties.append((middle, int(nearest[middle])))
    return ties


@dataclass(frozen=True)
class SeafloorTie:
    """The seafloor's bulk shift and phase difference between two traces at a tie."""

    lag_ms: float
    """Time of the seafloor on b minus on a, from the peak of the complex cross-correlation, ms."""
    phase_deg: float
    """Phase of b relative to a at that lag, degrees in (-180, 180]."""
    correlation: float
    """Normalised modulus of the complex cross-correlation at that lag, in [0, 1]."""


def seafloor_tie(trace_a: np.ndarray, trace_b: np.ndarray, dt_ms: float, t0_a_ms: float, t0_b_ms: float,
                 seafloor_a_ms: float, seafloor_b_ms: float, window_ms: float, search_ms: float) -> SeafloorTie:
    """Bulk shift and phase of ``trace_b`` against ``trace_a`` from a short complex cross-correlation
    around the seafloor (see the module docstring).

    Parameters
    ----------
    trace_a, trace_b : ndarray of shape (n_samples_a,) and (n_samples_b,)
        The traces at the tie, sampled every ``dt_ms``; NaN is no data.
    dt_ms : float
        Sample interval of both traces, ms.
    t0_a_ms, t0_b_ms : float
        Time of each trace's first sample, ms.
    seafloor_a_ms, seafloor_b_ms : float
        A first estimate of the seafloor time on each trace (picked or automatic), ms.
    window_ms : float
        Length of the correlation window on ``a``, starting a quarter of it above the seafloor.
    search_ms : float
        Lags searched either side of ``seafloor_b_ms - seafloor_a_ms``.

    Returns
    -------
    SeafloorTie; every field NaN when the window falls outside either trace or holds no data.
    """
    nothing = SeafloorTie(float("nan"), float("nan"), float("nan"))
    if not (np.isfinite(seafloor_a_ms) and np.isfinite(seafloor_b_ms)):
        return nothing
    a = hilbert(np.nan_to_num(np.asarray(trace_a, dtype=float)))
    b = hilbert(np.nan_to_num(np.asarray(trace_b, dtype=float)))
    n_window = max(4, int(round(window_ms / dt_ms)))
    start_a = int(round((seafloor_a_ms - 0.25 * window_ms - t0_a_ms) / dt_ms))
    guess = (seafloor_b_ms - t0_b_ms) - (seafloor_a_ms - t0_a_ms)  # lag in samples, as ms
    centre = int(round(guess / dt_ms))
    reach = max(1, int(round(search_ms / dt_ms)))
    lags = np.arange(centre - reach, centre + reach + 1)
    if start_a < 0 or start_a + n_window > len(a):
        return nothing
    valid = (start_a + lags >= 0) & (start_a + lags + n_window <= len(b))
    lags = lags[valid]
    if lags.size < 3:
        return nothing
    window_a = a[start_a:start_a + n_window]
    energy_a = float(np.sum(np.abs(window_a) ** 2))
    windows_b = np.stack([b[start_a + lag:start_a + lag + n_window] for lag in lags])
    values = windows_b @ np.conj(window_a)  # sum_t conj(a(t)) b(t + L)
    energy_b = np.sum(np.abs(windows_b) ** 2, axis=1)
    if energy_a <= 0 or not np.any(energy_b > 0):
        return nothing
    modulus = np.abs(values) / np.sqrt(energy_a * np.maximum(energy_b, 1e-300))
    best = int(np.argmax(modulus))
    offset = 0.0
    if 0 < best < len(lags) - 1:
        y0, y1, y2 = modulus[best - 1:best + 2]
        denominator = y0 - 2 * y1 + y2
        if denominator < 0:
            offset = float(np.clip(0.5 * (y0 - y2) / denominator, -0.5, 0.5))
    lag_samples = lags[best] + offset
    lag_ms = float(lag_samples * dt_ms + t0_b_ms - t0_a_ms)
    phase_rad = float(np.angle(values[best]))
    if offset > 0:  # the phase at a fractional lag, by linear interpolation of the unwrapped phase
        phase_rad += offset * float(np.angle(values[best + 1] * np.conj(values[best])))
    elif offset < 0:
        phase_rad += -offset * float(np.angle(values[best - 1] * np.conj(values[best])))
    phase = float(np.rad2deg(np.angle(np.exp(1j * phase_rad))))
    return SeafloorTie(lag_ms=lag_ms, phase_deg=phase, correlation=float(min(1.0, modulus[best])))


def expected_pick_shift_ms(tie: SeafloorTie, period_ms: float) -> float:
    """Time difference (b minus a) that a pick on the same phase of the same event should show:
    the bulk shift less the phase rotation's shift of a peak, ``L - phase / 360 * T``."""
    return float(tie.lag_ms - tie.phase_deg / 360.0 * period_ms)


def loop_offset(residual_ms: float, period_ms: float, tolerance_periods: float) -> int:
    """Whole number of periods the residual amounts to (0 when it is not within the tolerance of one)."""
    if not (np.isfinite(residual_ms) and np.isfinite(period_ms) and period_ms > 0):
        return 0
    loops = int(round(residual_ms / period_ms))
    if loops != 0 and abs(residual_ms - loops * period_ms) <= tolerance_periods * period_ms:
        return loops
    return 0


def multiple_match(twt_ms: float, seafloor_ms: float, shallower: dict[str, float],
                   tolerance_ms: float) -> tuple[str, float] | None:
    """Whether a pick time lies on the first seafloor multiple (2 t_sf) or on a first-order peg-leg
    of a shallower pick (t_r + t_sf) of the same trace.

    Parameters
    ----------
    twt_ms : float
        The pick's time.
    seafloor_ms : float
        Seafloor time at the same trace.
    shallower : dict
        Other picks at the trace, name -> time; only those above ``twt_ms`` are peg-leg sources.
    tolerance_ms : float

    Returns
    -------
    ``(what, predicted_ms)`` for the closest match within the tolerance, ``what`` being
    ``"seafloor multiple"`` or ``"peg-leg of NAME"``; None when there is none.
    """
    if not (np.isfinite(twt_ms) and np.isfinite(seafloor_ms)):
        return None
    candidates = [("seafloor multiple", 2.0 * seafloor_ms)]  # first-order multiple at 2 t_sf
    candidates += [(f"peg-leg of {name}", time + seafloor_ms)  # peg-leg at t_r + t_sf
                   for name, time in sorted(shallower.items()) if np.isfinite(time) and time < twt_ms]
    best = min(candidates, key=lambda item: abs(item[1] - twt_ms))
    if abs(best[1] - twt_ms) <= tolerance_ms:
        return best
    return None
