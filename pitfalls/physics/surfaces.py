"""Picked horizons of a 3-D volume as gridded surfaces: gradients, dip, azimuth and plane fits.

A surface is an array of shape (n_inlines, n_xlines) on the volume's inline/crossline grid,
NaN where the horizon is not picked (gaps stay gaps: nothing is interpolated across them).
Gradients are taken in grid steps and turned into map units through the grid's two bin
vectors (the change of CDP X/Y for one step along each grid axis), so a grid that is rotated,
rectangular or numbered backwards gives the right dip and azimuth.

Azimuths are in degrees clockwise from the +Y axis of the coordinates (grid north; true north
only when the survey's projected CRS has its Y axis to north) and name the down-dip direction:
the way the surface goes deeper (later in time).

References
----------
.. [1] Dalley, R. M., Gevers, E. C. A., Stampfli, G. M., Davies, D. J., Gastaldi, C. N.,
       Ruijtenberg, P. A., and Vermeer, G. J. O., 1989, Dip and azimuth displays for 3D seismic
       interpretation, First Break 7(3), 86-95. (from memory)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class GridGeometry:
    """Where the inline/crossline grid lies in map coordinates.

    ``xline_step_xy`` is the change of (x, y) in metres for one step to the next crossline
    position within an inline; ``inline_step_xy`` for one step to the next inline position.
    """

    inline_numbers: np.ndarray
    """(n_inlines,) inline numbers as in the trace headers, increasing."""
    xline_numbers: np.ndarray
    """(n_xlines,) crossline numbers, increasing."""
    origin_xy: tuple[float, float]
    """Map position of grid position (0, 0), from the affine fit."""
    xline_step_xy: tuple[float, float]
    inline_step_xy: tuple[float, float]
    from_headers: bool
    """True when the geometry was fitted to CDP X/Y; False for the fallback square grid."""

    @property
    def bin_sizes_m(self) -> tuple[float, float]:
        """(distance between neighbouring inlines, distance between neighbouring crosslines), metres."""
        return float(np.hypot(*self.inline_step_xy)), float(np.hypot(*self.xline_step_xy))

    def xy(self, inline_index: np.ndarray | float, xline_index: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """Map coordinates of (fractional) grid positions."""
        i = np.asarray(inline_index, dtype=float)
        j = np.asarray(xline_index, dtype=float)
        x = self.origin_xy[0] + i * self.inline_step_xy[0] + j * self.xline_step_xy[0]
        y = self.origin_xy[1] + i * self.inline_step_xy[1] + j * self.xline_step_xy[1]
        return x, y

    def index_of(self, inline_number: int, xline_number: int) -> tuple[int, int]:
        """Grid position of a pair of line numbers (nearest position for a number between two)."""
        i = int(np.clip(np.searchsorted(self.inline_numbers, inline_number), 0, len(self.inline_numbers) - 1))
        j = int(np.clip(np.searchsorted(self.xline_numbers, xline_number), 0, len(self.xline_numbers) - 1))
        return i, j


def fit_grid_geometry(inline_numbers: np.ndarray, xline_numbers: np.ndarray, x_m: np.ndarray, y_m: np.ndarray,
                      fallback_spacing_m: float) -> GridGeometry:
    """Least-squares affine map from grid positions to CDP X/Y.

    Parameters
    ----------
    inline_numbers, xline_numbers : ndarray of shape (n_inlines,) and (n_xlines,)
    x_m, y_m : ndarray of shape (n_inlines, n_xlines)
        CDP X/Y of each grid position with the SEG-Y scalar applied, NaN where the volume has no trace.
    fallback_spacing_m : float
        Bin size of a square grid with crosslines along +X and inlines along +Y, used when the
        coordinates do not span both grid axes (absent, all zero, or one line).

    Returns
    -------
    GridGeometry
    """
    inline_numbers = np.asarray(inline_numbers)
    xline_numbers = np.asarray(xline_numbers)
    x_m = np.asarray(x_m, dtype=float)
    y_m = np.asarray(y_m, dtype=float)
    rows, columns = np.indices(x_m.shape)
    known = np.isfinite(x_m) & np.isfinite(y_m) & ((x_m != 0) | (y_m != 0))
    if np.count_nonzero(known) >= 3:
        design = np.column_stack((np.ones(np.count_nonzero(known)), rows[known], columns[known]))
        if np.linalg.matrix_rank(design) == 3:
            coef_x, *_ = np.linalg.lstsq(design, x_m[known], rcond=None)
            coef_y, *_ = np.linalg.lstsq(design, y_m[known], rcond=None)
            inline_step = (float(coef_x[1]), float(coef_y[1]))
            xline_step = (float(coef_x[2]), float(coef_y[2]))
            if np.hypot(*inline_step) > 0 and np.hypot(*xline_step) > 0:
                return GridGeometry(inline_numbers, xline_numbers, (float(coef_x[0]), float(coef_y[0])),
                                    xline_step, inline_step, True)
    step = float(fallback_spacing_m)
    return GridGeometry(inline_numbers, xline_numbers, (0.0, 0.0), (step, 0.0), (0.0, step), False)


@dataclass(frozen=True)
class SurfaceDip:
    """Dip of a gridded surface at every grid position (NaN at and next to gaps)."""

    gradient_x: np.ndarray
    """d(value)/dx per metre of map X, shape (n_inlines, n_xlines)."""
    gradient_y: np.ndarray
    """d(value)/dy per metre of map Y."""

    @property
    def magnitude_per_km(self) -> np.ndarray:
        """Steepest change of the value per kilometre (ms/km for time, m/km for depth)."""
        return 1000.0 * np.hypot(self.gradient_x, self.gradient_y)

    @property
    def azimuth_deg(self) -> np.ndarray:
        """Down-dip azimuth, degrees clockwise from +Y in [0, 360); NaN where the surface is flat or unknown."""
        azimuth = np.degrees(np.arctan2(self.gradient_x, self.gradient_y)) % 360.0
        return np.where(np.hypot(self.gradient_x, self.gradient_y) > 0, azimuth, np.nan)


def surface_dip(values: np.ndarray, geometry: GridGeometry) -> SurfaceDip:
    """Gradient of a gridded surface in map units, from central differences along both grid axes.

    The grid-step derivatives (d/d inline position, d/d crossline position) are the map
    gradient projected on the two bin vectors, ``[dv/di, dv/dj] = B^T [dv/dx, dv/dy]`` with the
    bin vectors as the columns of B (chain rule); solving that 2x2 system gives the map gradient
    for a grid at any rotation.

    Parameters
    ----------
    values : ndarray of shape (n_inlines, n_xlines)
        Time (ms) or depth (m); NaN for gaps. A grid one position wide along an axis has no
        gradient along it (zero is used), so use it for true 3-D grids.
    geometry : GridGeometry

    Returns
    -------
    SurfaceDip
    """
    values = np.asarray(values, dtype=float)
    d_inline = _axis_gradient(values, 0)
    d_xline = _axis_gradient(values, 1)
    basis = np.array([[geometry.inline_step_xy[0], geometry.xline_step_xy[0]],
                      [geometry.inline_step_xy[1], geometry.xline_step_xy[1]]])
    inverse_transpose = np.linalg.inv(basis.T)
    gradient_x = inverse_transpose[0, 0] * d_inline + inverse_transpose[0, 1] * d_xline
    gradient_y = inverse_transpose[1, 0] * d_inline + inverse_transpose[1, 1] * d_xline
    gap = ~np.isfinite(values)
    return SurfaceDip(np.where(gap, np.nan, gradient_x), np.where(gap, np.nan, gradient_y))


def _axis_gradient(values: np.ndarray, axis: int) -> np.ndarray:
    if values.shape[axis] < 2:
        return np.where(np.isfinite(values), 0.0, np.nan)
    return np.gradient(values, axis=axis)


@dataclass(frozen=True)
class PlaneFit:
    """A plane ``value = a + b x + c y`` fitted to a surface's points by least squares."""

    intercept: float
    slope_x: float
    """Change per metre of map X."""
    slope_y: float
    """Change per metre of map Y."""
    residual_rms: float
    """Root-mean-square misfit of the points to the plane, in the value's unit."""
    n_points: int

    @property
    def tilt_per_km(self) -> float:
        """Steepest change of the plane per kilometre (m/km for depth, ms/km for time)."""
        return 1000.0 * float(np.hypot(self.slope_x, self.slope_y))

    @property
    def azimuth_deg(self) -> float:
        """Azimuth of the plane's steepest descent into the earth (deeper), degrees from +Y; NaN when flat."""
        if self.slope_x == 0 and self.slope_y == 0:
            return float("nan")
        return float(np.degrees(np.arctan2(self.slope_x, self.slope_y)) % 360.0)


def fit_plane(x_m: np.ndarray, y_m: np.ndarray, values: np.ndarray) -> PlaneFit:
    """Least-squares plane through the finite points; coordinates are centred first for accuracy.

    Raises
    ------
    ValueError
        With fewer than three points, or points on one line (no plane is defined).
    """
    x = np.asarray(x_m, dtype=float).ravel()
    y = np.asarray(y_m, dtype=float).ravel()
    v = np.asarray(values, dtype=float).ravel()
    keep = np.isfinite(x) & np.isfinite(y) & np.isfinite(v)
    x, y, v = x[keep], y[keep], v[keep]
    if v.size < 3:
        raise ValueError("a plane needs at least three points")
    x0, y0 = float(x.mean()), float(y.mean())
    design = np.column_stack((np.ones(v.size), x - x0, y - y0))
    if np.linalg.matrix_rank(design) < 3:
        raise ValueError("the points lie on one line; no plane is defined")
    coefficients, *_ = np.linalg.lstsq(design, v, rcond=None)
    residual = v - design @ coefficients
    intercept = float(coefficients[0] - coefficients[1] * x0 - coefficients[2] * y0)
    return PlaneFit(intercept, float(coefficients[1]), float(coefficients[2]),
                    float(np.sqrt(np.mean(residual ** 2))), int(v.size))


def azimuth_difference_deg(a_deg: float, b_deg: float) -> float:
    """Smallest angle between two azimuths, in [0, 180]."""
    difference = abs((float(a_deg) - float(b_deg)) % 360.0)
    return float(min(difference, 360.0 - difference))
