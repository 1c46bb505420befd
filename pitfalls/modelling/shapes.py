"""Simple structural shapes for building depth models: fold, tilted surface, canyon.

Positions along the line are trace indices (0-based, fractional allowed); every function
returns an ndarray of shape (n_traces,) in metres.
"""
from __future__ import annotations

import numpy as np


def anticline(n_traces: int, crest_trace: float, crest_depth_m: float, relief_m: float, half_width_traces: float) -> np.ndarray:
    """Gaussian fold: shallowest at the crest, ``relief_m`` deeper far from it.

    ``depth = crest_depth_m + relief_m * (1 - 2 ** (-(x / half_width_traces)^2))``, x = trace
    index - crest_trace: half the relief is reached ``half_width_traces`` from the crest.

    Parameters
    ----------
    n_traces : int
    crest_trace : float
        Trace index (0-based) of the crest.
    crest_depth_m : float
        Depth at the crest, m below sea level.
    relief_m : float
        Structural relief, m (depth far from the crest minus crest depth).
    half_width_traces : float
        Distance from the crest, in traces, at which half the relief is reached.

    Returns
    -------
    ndarray of shape (n_traces,)
    """
    offset = (np.arange(n_traces, dtype=float) - crest_trace) / float(half_width_traces)
    return crest_depth_m + relief_m * (1.0 - np.exp2(-(offset**2)))


def dipping(n_traces: int, depth_at_first_m: float, dip_m_per_trace: float) -> np.ndarray:
    """Planar surface: ``depth_at_first_m + dip_m_per_trace * trace_index``.

    Parameters
    ----------
    n_traces : int
    depth_at_first_m : float
        Depth at trace index 0, m.
    dip_m_per_trace : float
        Depth increase per trace, m (negative = shallowing along the line).

    Returns
    -------
    ndarray of shape (n_traces,)
    """
    return depth_at_first_m + dip_m_per_trace * np.arange(n_traces, dtype=float)


def canyon(n_traces: int, centre_trace: float, width_traces: float, depth_m: float) -> np.ndarray:
    """Incision profile of a canyon: to be added to a seafloor depth.

    ``depth_m * cos^2(pi x / width_traces)`` for ``|x| < width_traces / 2`` (x = trace index
    - centre_trace), zero outside: a smooth V-free trough ``width_traces`` wide at the rim.

    Parameters
    ----------
    n_traces : int
    centre_trace : float
        Trace index (0-based) of the canyon axis.
    width_traces : float
        Full width at the rim, traces.
    depth_m : float
        Incision depth at the axis, m.

    Returns
    -------
    ndarray of shape (n_traces,)
        0 outside the canyon, ``depth_m`` at its axis.
    """
    offset = np.arange(n_traces, dtype=float) - centre_trace
    inside = np.abs(offset) < width_traces / 2.0
    return np.where(inside, depth_m * np.cos(np.pi * offset / width_traces) ** 2, 0.0)
