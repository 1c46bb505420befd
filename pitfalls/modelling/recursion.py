"""Zero-offset response of an equal-time layered earth with a free surface, every multiple included.

Goupillaud (1961) medium: every layer has the same two-way time (one output sample). A unit
down-going spike leaves the surface at time zero; the up-going wave arriving just below the
surface is recorded. At interface k, with pressure reflection coefficient r_k for a wave
going down, the time-domain lattice is

    up out   = r_k * (down in) + (1 - r_k) * (up in)
    down out = (1 + r_k) * (down in) - r_k * (up in)

and at the free surface ``down out = source + r_0 * (up arriving)`` with r_0 = -1. In the
z-domain this is ``U(z) = X(z) / (1 - r_0 X(z))`` with ``X = z R_1`` and
``R_k = (r_k + z R_{k+1}) / (1 + r_k z R_{k+1})``. A single water layer gives the
reverberation train R, -R^2, R^3, ... of Backus (1959).

The lattice runs on half-sample (one-way) steps. Interface k is only touched at steps of its
own parity, from the step the spike can first reach it to the last step from which its
energy can still come back within the record, so the work is about a quarter of the full
time-by-depth grid. Leading interfaces with zero reflection coefficient on every trace (the
water column) are replaced by a delay line.

References
----------
.. [1] Goupillaud, P. L., 1961, An approach to inverse filtering of near-surface layer effects
       from seismic records, Geophysics 26(6), 754-760. (from memory)
.. [2] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261.
"""
from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

import numpy as np

TRACES_PER_CHUNK = 100
"""Traces modelled together: small enough that the lattice state stays in cache."""


def layered_response(
    reflection_coefficients: np.ndarray,
    surface_coefficient: float = -1.0,
    n_out: int | None = None,
) -> np.ndarray:
    """Goupillaud (1961) equal-time layered-earth response with free-surface multiples.

    Parameters
    ----------
    reflection_coefficients : ndarray of shape (n_interfaces,) or (n_traces, n_interfaces)
        Pressure reflection coefficients r_1..r_N for a down-going wave, top first;
        interface k lies k two-way layer times below the surface. Values in (-1, 1).
    surface_coefficient : float
        Reflection coefficient of the sea surface for an up-going wave (-1: free surface;
        0: no surface multiples).
    n_out : int, optional
        Number of output samples; default ``n_interfaces + 1`` (up to the deepest primary).

    Returns
    -------
    ndarray of shape (n_out,) or (n_traces, n_out)
        Up-going wave just below the surface, one sample per two-way layer time; sample 0 is
        time zero (always 0: there is no direct arrival).
    """
    reflection = np.asarray(reflection_coefficients, dtype=float)
    single = reflection.ndim == 1
    if single:
        reflection = reflection[np.newaxis, :]
    if reflection.ndim != 2:
        raise ValueError("reflection_coefficients must be 1-D or 2-D (n_traces, n_interfaces)")
    if np.any(np.abs(reflection) >= 1.0) or not np.all(np.isfinite(reflection)):
        raise ValueError("reflection coefficients must be finite and strictly between -1 and 1")
    n_traces, n_interfaces = reflection.shape
    if n_out is None:
        n_out = n_interfaces + 1
    n_out = int(n_out)
    result = np.zeros((n_traces, max(n_out, 0)))
    if n_out <= 1 or n_interfaces == 0 or n_traces == 0:
        return result[0] if single else result

    chunks = [slice(first, min(first + TRACES_PER_CHUNK, n_traces)) for first in range(0, n_traces, TRACES_PER_CHUNK)]
    if len(chunks) > 1 and n_interfaces * n_out > 100_000:
        with ThreadPoolExecutor(max_workers=min(len(chunks), os.cpu_count() or 1)) as pool:
            parts = list(pool.map(lambda chunk: _lattice(reflection[chunk], surface_coefficient, n_out), chunks))
    else:
        parts = [_lattice(reflection[chunk], surface_coefficient, n_out) for chunk in chunks]
    result = np.concatenate(parts, axis=0)
    return result[0] if single else result


def _lattice(reflection: np.ndarray, surface_coefficient: float, n_out: int) -> np.ndarray:
    """The time-domain lattice for a block of traces, (n_traces, n_interfaces) -> (n_traces, n_out)."""
    n_traces, n_interfaces = reflection.shape
    result = np.zeros((n_traces, n_out))
    last_step = 2 * (n_out - 1)  # half-sample steps; output sample m arrives at step 2m
    # Interfaces that can send energy back within the record: k <= last_step / 2.
    usable = min(n_interfaces, last_step // 2)
    reflection = reflection[:, :usable]
    nonzero = reflection != 0.0
    if not nonzero.any():
        return result
    # Leading interfaces with r = 0 on every trace are water: a pure delay of `skipped` layers.
    skipped = int(np.min(np.where(nonzero.any(axis=1), nonzero.argmax(axis=1), usable)))
    active = np.ascontiguousarray(reflection[:, skipped:].T)  # (n_active, n_traces), interface j = 1.. at row j-1
    n_active = active.shape[0]
    surface_delay = skipped + 1  # one-way half-steps between the surface and the first active interface

    # Row j of these holds what interface j last sent; row 0 / row n_active+1 are the surface side / half-space.
    down_out = np.zeros((n_active + 2, n_traces))
    up_out = np.zeros((n_active + 2, n_traces))
    coefficient = np.zeros((n_active + 2, n_traces))
    coefficient[1 : n_active + 1] = active
    surface_down = np.zeros((last_step + 1, n_traces))   # wave leaving the surface downward, per step
    first_up = np.zeros((last_step + 1, n_traces))       # wave leaving interface 1 upward, per step

    scattered_buffer = np.empty(((n_active + 1) // 2 + 1, n_traces))
    for step in range(last_step + 1):
        arrival_step = step - surface_delay
        arriving = first_up[arrival_step] if arrival_step >= 0 else 0.0
        if step % 2 == 0:
            result[:, step // 2] = arriving
        source = 1.0 if step == 0 else 0.0
        surface_down[step] = source + surface_coefficient * arriving  # free surface: down = source + r0 * up

        # Interface j is reached at step skipped + j and must return by last_step: j <= last_step - step - skipped.
        highest = min(n_active, step - skipped, last_step - step - skipped)
        if highest < 1:
            continue
        lowest = 1 if (skipped + 1 - step) % 2 == 0 else 2
        if lowest > highest:
            continue
        if lowest == 1:
            down_out[0] = surface_down[step - surface_delay]
        rows = slice(lowest, highest + 1, 2)
        down_in = down_out[lowest - 1 : highest : 2]
        up_in = up_out[lowest + 1 : highest + 2 : 2]
        scattered = scattered_buffer[: len(range(lowest, highest + 1, 2))]
        np.subtract(down_in, up_in, out=scattered)
        np.multiply(scattered, coefficient[rows], out=scattered)
        np.add(up_in, scattered, out=up_out[rows])      # up out = r d + (1 - r) u
        np.add(down_in, scattered, out=down_out[rows])  # down out = (1 + r) d - r u
        if lowest == 1:
            first_up[step] = up_out[1]
    return result


def primary_response(reflection_coefficients: np.ndarray, n_out: int | None = None) -> np.ndarray:
    """Primaries only: each r_k delayed by k samples and scaled by the two-way transmission above it.

    The primary from interface k has amplitude ``r_k * prod_{i<k} (1 - r_i^2)``, the same as
    the first arrival of that interface in :func:`layered_response`; no multiple is added.

    Parameters
    ----------
    reflection_coefficients : ndarray of shape (n_interfaces,) or (n_traces, n_interfaces)
    n_out : int, optional
        Number of output samples; default ``n_interfaces + 1``.

    Returns
    -------
    ndarray of shape (n_out,) or (n_traces, n_out)
    """
    reflection = np.asarray(reflection_coefficients, dtype=float)
    single = reflection.ndim == 1
    if single:
        reflection = reflection[np.newaxis, :]
    n_traces, n_interfaces = reflection.shape
    if n_out is None:
        n_out = n_interfaces + 1
    transmission = np.cumprod(1.0 - reflection**2, axis=1)
    transmission_above = np.concatenate([np.ones((n_traces, 1)), transmission[:, :-1]], axis=1)
    result = np.zeros((n_traces, n_out))
    n_fit = min(n_interfaces, n_out - 1)
    result[:, 1 : n_fit + 1] = (reflection * transmission_above)[:, :n_fit]
    return result[0] if single else result
