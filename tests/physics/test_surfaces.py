"""Gridded surfaces: map geometry from CDP X/Y, dip magnitude and azimuth, plane fits.

Every check is against an analytic plane (a plane's gradient is its slope everywhere; the
down-dip azimuth of z = a + b x + c y is atan2(b, c) clockwise from +Y, common practice for
dip-azimuth maps).
"""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls.physics.surfaces import (azimuth_difference_deg, fit_grid_geometry, fit_plane, surface_dip)


def rotated_grid(n_inlines=30, n_xlines=40, bin_inline_m=25.0, bin_xline_m=12.5, rotation_deg=30.0):
    """Crosslines step along an axis rotated rotation_deg clockwise from +X... expressed as unit vectors."""
    angle = np.radians(rotation_deg)
    xline_step = bin_xline_m * np.array([np.cos(angle), -np.sin(angle)])
    inline_step = bin_inline_m * np.array([np.sin(angle), np.cos(angle)])
    rows, columns = np.indices((n_inlines, n_xlines), dtype=float)
    x = 500000.0 + rows * inline_step[0] + columns * xline_step[0]
    y = 6000000.0 + rows * inline_step[1] + columns * xline_step[1]
    return x, y, inline_step, xline_step


def test_grid_geometry_recovers_rotated_bins():
    x, y, inline_step, xline_step = rotated_grid()
    x[3, 4] = np.nan  # a missing trace does not disturb the fit
    geometry = fit_grid_geometry(np.arange(100, 130), np.arange(300, 340), x, y, 12.5)
    assert geometry.from_headers
    assert geometry.inline_step_xy == pytest.approx(tuple(inline_step))
    assert geometry.xline_step_xy == pytest.approx(tuple(xline_step))
    assert geometry.bin_sizes_m == pytest.approx((25.0, 12.5))
    assert np.array(geometry.xy(29, 39)) == pytest.approx(np.array([x[29, 39], y[29, 39]]))


def test_grid_geometry_falls_back_without_coordinates():
    zeros = np.zeros((5, 6))
    geometry = fit_grid_geometry(np.arange(5), np.arange(6), zeros, zeros, 12.5)
    assert not geometry.from_headers
    assert geometry.bin_sizes_m == (12.5, 12.5)


@pytest.mark.parametrize("slope_x, slope_y, azimuth_deg", [
    (0.0, 0.02, 0.0),      # deepening to +Y: down-dip azimuth 0
    (0.02, 0.0, 90.0),     # deepening to +X: 90
    (-0.01, -0.01, 225.0),  # deepening to -X and -Y: 225
])
def test_plane_dip_and_azimuth_on_a_rotated_grid(slope_x, slope_y, azimuth_deg):
    x, y, _, _ = rotated_grid()
    depth = 2000.0 + slope_x * (x - 500000.0) + slope_y * (y - 6000000.0)
    geometry = fit_grid_geometry(np.arange(30), np.arange(40), x, y, 12.5)
    dip = surface_dip(depth, geometry)
    expected_m_per_km = 1000.0 * np.hypot(slope_x, slope_y)
    assert np.allclose(dip.magnitude_per_km, expected_m_per_km, rtol=1e-6)
    wrapped = np.vectorize(azimuth_difference_deg)(dip.azimuth_deg, azimuth_deg)
    assert np.allclose(wrapped, 0.0, atol=1e-6)
    fit = fit_plane(x, y, depth)
    assert fit.tilt_per_km == pytest.approx(expected_m_per_km, rel=1e-6)
    assert azimuth_difference_deg(fit.azimuth_deg, azimuth_deg) == pytest.approx(0.0, abs=1e-6)
    assert fit.residual_rms == pytest.approx(0.0, abs=1e-6)


def test_gaps_stay_gaps():
    x, y, _, _ = rotated_grid(10, 10)
    depth = 2000.0 + 0.01 * (x - 500000.0)
    depth[5, 5] = np.nan
    dip = surface_dip(depth, fit_grid_geometry(np.arange(10), np.arange(10), x, y, 12.5))
    assert np.isnan(dip.magnitude_per_km[5, 5])
    assert np.isnan(dip.magnitude_per_km[5, 4]) and np.isnan(dip.magnitude_per_km[4, 5])  # neighbours of the gap
    assert np.isfinite(dip.magnitude_per_km[0, 0])


def test_plane_fit_refuses_too_few_or_collinear_points():
    with pytest.raises(ValueError):
        fit_plane(np.array([0.0, 1.0]), np.array([0.0, 1.0]), np.array([1.0, 2.0]))
    with pytest.raises(ValueError):
        fit_plane(np.arange(5.0), np.arange(5.0), np.arange(5.0))


def test_azimuth_difference_wraps():
    assert azimuth_difference_deg(350.0, 10.0) == pytest.approx(20.0)
    assert azimuth_difference_deg(0.0, 180.0) == pytest.approx(180.0)
    assert azimuth_difference_deg(90.0, 270.0) == pytest.approx(180.0)
