"""Spill point and closure of a mapped reservoir top.

Checks: the spill depth of an analytic dome (a paraboloid, whose lowest closing contour is the
shallowest point of the map's border), the same numbers from an independent oracle
(scikit-image's morphological reconstruction by erosion fills the depth map's pits to their
spill level; Soille 2003, section 6.3, from memory), a saddle between two crests, and gaps.
"""
from __future__ import annotations

import numpy as np
import pytest
from skimage.morphology import reconstruction

from pitfalls.physics.closure import spill_point


def paraboloid(n_inlines=41, n_xlines=61, crest=(20.0, 30.0), crest_depth_m=2000.0,
               curvature_m=0.5, regional_m_per_bin=0.0):
    rows, columns = np.indices((n_inlines, n_xlines), dtype=float)
    return (crest_depth_m + curvature_m * ((rows - crest[0]) ** 2 + (columns - crest[1]) ** 2)
            + regional_m_per_bin * columns)


def filled_by_reconstruction(depth_m: np.ndarray) -> np.ndarray:
    """Depression filling by reconstruction by erosion (scikit-image, test-only oracle)."""
    seed = depth_m.copy()
    seed[1:-1, 1:-1] = depth_m.max()
    return reconstruction(seed, depth_m, method="erosion")


def test_dome_spills_at_the_shallowest_border_point():
    """A paraboloid deepens monotonically away from the crest, so its spill depth is the minimum of the
    map's border (analytic): crest 2000 m, nearest border 20 bins away, 0.5 m/bin^2 -> 2200 m."""
    depth = paraboloid()
    closure = spill_point(depth)
    assert closure.crest_index == (20, 30)
    assert closure.spill_depth_m == pytest.approx(2200.0)
    assert closure.relief_m == pytest.approx(200.0)
    border = np.concatenate((depth[0], depth[-1], depth[:, 0], depth[:, -1]))
    assert closure.spill_depth_m == pytest.approx(border.min())
    assert closure.spill_index is not None and closure.spill_index[0] in (0, 40)
    # The closing area is every position shallower than the spill depth (a disc of radius 20 bins).
    assert np.array_equal(closure.inside, depth < 2200.0)


def test_tilted_dome_matches_the_reconstruction_oracle():
    """With a regional dip the spill moves to the up-dip side; the fill by morphological
    reconstruction (scikit-image) gives the same spill depth at the crest."""
    depth = paraboloid(regional_m_per_bin=3.0, crest=(20.0, 40.0))
    closure = spill_point(depth)
    oracle = filled_by_reconstruction(depth)
    assert closure.spill_depth_m == pytest.approx(oracle[closure.crest_index])
    # The regional dip moves the crest up-dip to where the slopes cancel: 40 - 3 / (2 * 0.5) = 37 (analytic).
    assert closure.crest_index == (20, 37)


def test_two_crests_share_the_saddle_depth():
    """Two domes joined by a saddle: each crest's closure spills at the saddle, not at the border,
    and the reconstruction oracle agrees for both."""
    rows, columns = np.indices((41, 81), dtype=float)
    dome_a = 2000.0 + 0.5 * ((rows - 20) ** 2 + (columns - 20) ** 2)
    dome_b = 2050.0 + 0.5 * ((rows - 20) ** 2 + (columns - 60) ** 2)
    depth = np.minimum(dome_a, dome_b)
    oracle = filled_by_reconstruction(depth)
    for crest in ((20, 20), (20, 60)):
        closure = spill_point(depth, crest)
        assert closure.spill_depth_m == pytest.approx(oracle[crest])
    # The domes meet on row 20 between columns 41 and 42; the saddle's grid point is column 41, where
    # dome A gives 2000 + 0.5 * 21^2 = 2220.5 m (dome B: 2230.5 m). Crest A reaches its border 20 bins away
    # at 2200 m, shallower than the saddle, so it spills there; crest B's border is at 2250 m, deeper than
    # the saddle, so it spills over the saddle: relief 2220.5 - 2050 = 170.5 m (analytic, on this grid).
    assert spill_point(depth, (20, 20)).spill_depth_m == pytest.approx(2200.0)
    assert spill_point(depth, (20, 60)).relief_m == pytest.approx(170.5)


def test_a_gap_in_the_map_opens_the_closure_through_it():
    """Fluid may leave through unmapped ground: a gap cut from the crest region to the border
    lowers the spill depth to where the gap begins."""
    depth = paraboloid()
    closed = spill_point(depth)
    gapped = depth.copy()
    gapped[20, 40:] = np.nan  # a strip of no picks from 10 bins east of the crest to the border
    opened = spill_point(gapped)
    assert opened.spill_depth_m < closed.spill_depth_m
    assert opened.spill_depth_m == pytest.approx(2000.0 + 0.5 * 9 ** 2)  # the last mapped point before the strip's edge


def test_a_crest_on_the_border_does_not_close():
    rows, columns = np.indices((21, 21), dtype=float)
    depth = 2000.0 + 2.0 * columns  # a monocline: no closure anywhere
    closure = spill_point(depth)
    assert not closure.closes
    assert closure.spill_index is None and not closure.inside.any()


def test_refuses_an_empty_map_and_a_gap_crest():
    with pytest.raises(ValueError):
        spill_point(np.full((5, 5), np.nan))
    depth = paraboloid(11, 11, crest=(5.0, 5.0))
    depth[5, 5] = np.nan
    with pytest.raises(ValueError):
        spill_point(depth, (5, 5))
