"""Contiguous runs of flagged traces: the unit every finding's trace range is built from."""
from __future__ import annotations

import numpy as np


def true_runs(flags: np.ndarray, max_gap: int = 0, min_length: int = 1) -> list[tuple[int, int]]:
    """Inclusive (first, last) index pairs of runs of True, bridging gaps of up to ``max_gap`` False values.

    Parameters
    ----------
    flags : ndarray of shape (n,), bool
    max_gap : int
        Runs separated by at most this many False values are joined.
    min_length : int
        Runs shorter than this (counted first to last, inclusive) are dropped.
    """
    indices = np.flatnonzero(np.asarray(flags, dtype=bool))
    if indices.size == 0:
        return []
    breaks = np.flatnonzero(np.diff(indices) > max_gap + 1)
    starts = np.concatenate(([indices[0]], indices[breaks + 1]))
    stops = np.concatenate((indices[breaks], [indices[-1]]))
    return [(int(a), int(b)) for a, b in zip(starts, stops) if b - a + 1 >= min_length]
