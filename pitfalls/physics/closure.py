"""Structural closure of a mapped reservoir top: crest, spill point and closing contour.

Buoyant fluid in a trap is held inside the deepest closed depth contour around the crest.
With depth positive downward the crest is a pit of the depth map, and the spill depth is the
minimax depth of all paths from the crest to the edge of the mapped area: the lowest "pass"
the fluid must cross to escape. That is the level to which a priority-flood fill raises the
pit (Barnes, Lehman and Mulla 2014; the same number as filling the depth map's depressions by
morphological reconstruction, Soille 2003).

Here the spill depth is found by bisection on the map's depth values: at a level L the
region shallower than L that holds the crest (8-connected) either stays inside the mapped
area (closed) or reaches its border or a gap (open), and this is monotone in L. Each test is
one whole-grid labelling (``scipy.ndimage.label``), so a 400 x 400 map takes about 18 of them.

Gaps (NaN) in the map count as open: fluid could leave through ground nobody has mapped,
so a closure that relies on unmapped ground is not claimed.

References
----------
.. [1] Barnes, R., Lehman, C., and Mulla, D., 2014, Priority-flood: An optimal
       depression-filling and watershed-labeling algorithm for digital elevation models,
       Computers & Geosciences 62, 117-127. (from memory)
.. [2] Soille, P., 2003, Morphological Image Analysis, 2nd ed., Springer, section 6.3.
       (from memory)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import ndimage

EIGHT_NEIGHBOURS = np.ones((3, 3), dtype=bool)


@dataclass(frozen=True)
class Closure:
    """The closure around one crest of a depth map."""

    crest_index: tuple[int, int]
    """Grid position (inline index, crossline index) of the crest."""
    crest_depth_m: float
    spill_depth_m: float
    """Depth of the lowest pass out of the closure; equal to the crest depth when nothing closes."""
    spill_index: tuple[int, int] | None
    """Grid position of the spill point (the pass), None when the crest itself is open."""
    inside: np.ndarray
    """(n_inlines, n_xlines) bool: grid positions shallower than the spill depth, connected to the crest."""

    @property
    def relief_m(self) -> float:
        """Vertical closure: spill depth minus crest depth."""
        return self.spill_depth_m - self.crest_depth_m

    @property
    def closes(self) -> bool:
        return self.relief_m > 0


def spill_point(depth_m: np.ndarray, crest_index: tuple[int, int] | None = None) -> Closure:
    """Spill depth and closing area of the closure around a crest (priority-flood minimax depth).

    Parameters
    ----------
    depth_m : ndarray of shape (n_inlines, n_xlines)
        Depth of the reservoir top, positive down; NaN where it is not mapped.
    crest_index : (int, int), optional
        The point inside the trap (e.g. the shallowest top position under a contact); default
        the shallowest mapped position.

    Returns
    -------
    Closure

    Raises
    ------
    ValueError
        When the map holds no depth, or the given crest is a gap.
    """
    depth = np.asarray(depth_m, dtype=float)
    mapped = np.isfinite(depth)
    if not mapped.any():
        raise ValueError("the depth map holds no values")
    if crest_index is None:
        crest_index = tuple(int(v) for v in np.unravel_index(np.nanargmin(depth), depth.shape))
    if not mapped[crest_index]:
        raise ValueError("the crest position is a gap in the map")
    crest_depth = float(depth[crest_index])
    outside = np.zeros(depth.shape, dtype=bool)
    outside[0, :] = outside[-1, :] = outside[:, 0] = outside[:, -1] = True
    outside |= ndimage.binary_dilation(~mapped, structure=EIGHT_NEIGHBOURS)
    filled = np.where(mapped, depth, np.inf)

    def region_below(level: float) -> np.ndarray:
        labels, _ = ndimage.label(filled < level, structure=EIGHT_NEIGHBOURS)
        label = labels[crest_index]
        return labels == label if label else np.zeros(depth.shape, dtype=bool)

    def closed(level: float) -> bool:
        return not np.any(region_below(level) & outside)

    levels = np.unique(depth[mapped & (depth > crest_depth)])
    if outside[crest_index] or levels.size == 0 or not closed(float(levels[0])):
        return Closure(crest_index, crest_depth, crest_depth, None, np.zeros(depth.shape, dtype=bool))
    low, high = 0, levels.size - 1  # closed(levels[low]) holds; find the last level that is closed
    if closed(float(levels[high])):
        low = high
    while high - low > 1:
        middle = (low + high) // 2
        if closed(float(levels[middle])):
            low = middle
        else:
            high = middle
    spill = float(levels[low])
    inside = region_below(spill)
    pass_cells = ndimage.binary_dilation(inside, structure=EIGHT_NEIGHBOURS) & ~inside & (filled == spill)
    spill_index = tuple(int(v) for v in np.argwhere(pass_cells)[0]) if pass_cells.any() else None
    return Closure(crest_index, crest_depth, spill, spill_index, inside)
