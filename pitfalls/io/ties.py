"""What tying sections needs from their files: trace coordinates and numbers, the picks per
trace, and the traces at a tie.

Files are opened read-only, as for the scan. Coordinates are CDP X/Y (bytes 181/185) with
the coordinate scalar of bytes 71-72 applied; the CDP number is byte 21 (SEG-Y rev 1).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np
import segyio

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import read_pick_file
from pitfalls.io.placement import place_picks
from pitfalls.io.segy import DEFAULT_INLINE_BYTE, DEFAULT_XLINE_BYTE, SeismicFile, coordinate_scale


@dataclass(frozen=True)
class TieGeometry:
    """Where a section's traces are and what was picked on each, in file trace order."""

    geometry: str
    """``2d`` or ``3d``."""
    xy_m: np.ndarray
    """(n_traces, 2) CDP X/Y in metres, scalar applied."""
    cdp: np.ndarray
    """(n_traces,) CDP number (byte 21)."""
    inlines: np.ndarray
    """(n_traces,) inline number of each trace (3-D; the header value for a line)."""
    xlines: np.ndarray
    """(n_traces,) crossline number of each trace."""
    spacing_m: float
    """Trace spacing along a line, or along an inline of a volume, m."""
    bin_diagonal_m: float
    """For a volume, the diagonal of one bin (inline x crossline spacing); the spacing for a line."""
    neighbours: np.ndarray
    """(n_traces, 2) file index of the previous and next trace along the line or inline, -1 where none."""
    horizon_names: tuple[str, ...]
    horizon_kinds: tuple[str, ...]
    horizon_twt_ms: np.ndarray
    """(n_horizons, n_traces) picked time per trace, NaN where not picked."""
    dt_ms: float
    t0_ms: float
    n_samples: int

    @property
    def has_coordinates(self) -> bool:
        return bool(np.any(self.xy_m != 0)) and len(np.unique(self.xy_m, axis=0)) > 1


def read_tie_geometry(path: str, pick_paths: Sequence[str], fallback_spacing_m: float,
                      iline_byte: int = DEFAULT_INLINE_BYTE, xline_byte: int = DEFAULT_XLINE_BYTE,
                      force_2d: bool = False) -> TieGeometry:
    """Coordinates, numbering and picks of every trace of a section.

    Raises
    ------
    PitfallsInputError
        As the scan does, for a section or pick file that cannot be read or placed.
    """
    pick_files = [read_pick_file(pick_path) for pick_path in pick_paths]
    with SeismicFile(path, fallback_spacing_m, iline_byte, xline_byte, force_2d) as seismic:
        info, layout = seismic.info, seismic.layout
        placed = place_picks(pick_files, info, layout)
    try:
        with segyio.open(path, "r", ignore_geometry=True) as handle:
            scalars = handle.attributes(segyio.TraceField.SourceGroupScalar)[:].astype(np.int64)
            x = handle.attributes(segyio.TraceField.CDP_X)[:].astype(float)
            y = handle.attributes(segyio.TraceField.CDP_Y)[:].astype(float)
            cdp = handle.attributes(segyio.TraceField.CDP)[:].astype(np.int64)
    except (RuntimeError, ValueError, OSError, KeyError) as err:
        raise PitfallsInputError(path, "", f"trace coordinates cannot be read ({err})",
                                 "check that the file is complete") from err
    factor = np.array([coordinate_scale(int(s)) for s in scalars]) if len(scalars) else np.ones(0)
    xy = np.stack([x * factor, y * factor], axis=1)
    n_traces = info.n_traces
    neighbours = np.full((n_traces, 2), -1, dtype=np.int64)
    times = np.full((len(placed.names), n_traces), np.nan)
    if layout.geometry == "2d":
        neighbours[1:, 0] = np.arange(n_traces - 1)
        neighbours[:-1, 1] = np.arange(1, n_traces)
        for row, grid in enumerate(placed.grids):
            times[row] = grid[0]
        bin_diagonal = info.trace_spacing_m
    else:
        grid = layout.grid
        present = grid >= 0
        left = np.full_like(grid, -1)
        right = np.full_like(grid, -1)
        left[:, 1:] = grid[:, :-1]
        right[:, :-1] = grid[:, 1:]
        neighbours[grid[present], 0] = left[present]
        neighbours[grid[present], 1] = right[present]
        for row, horizon_grid in enumerate(placed.grids):
            times[row, grid[present]] = horizon_grid[present]
        bin_diagonal = float(np.hypot(info.trace_spacing_m, _inline_spacing(xy, grid, info.trace_spacing_m)))
    return TieGeometry(
        geometry=layout.geometry, xy_m=xy, cdp=cdp, inlines=np.asarray(layout.trace_inlines),
        xlines=np.asarray(layout.trace_xlines), spacing_m=float(info.trace_spacing_m), bin_diagonal_m=bin_diagonal,
        neighbours=neighbours, horizon_names=placed.names, horizon_kinds=placed.kinds, horizon_twt_ms=times,
        dt_ms=info.dt_ms, t0_ms=info.t0_ms, n_samples=info.n_samples)


def _inline_spacing(xy: np.ndarray, grid: np.ndarray, fallback_m: float) -> float:
    """Median distance between traces on neighbouring inlines at the same crossline, m."""
    upper, lower = grid[:-1], grid[1:]
    both = (upper >= 0) & (lower >= 0)
    if not both.any():
        return fallback_m
    distance = np.hypot(*(xy[upper[both]] - xy[lower[both]]).T)
    distance = distance[distance > 0]
    return float(np.median(distance)) if distance.size else fallback_m


def read_traces(path: str, indices: Sequence[int]) -> np.ndarray:
    """The traces at the given 0-based file positions, (len(indices), n_samples) float32.

    Raises
    ------
    PitfallsInputError
        When the file cannot be opened or the traces cannot be read.
    """
    try:
        with segyio.open(path, "r", ignore_geometry=True) as handle:
            out = np.empty((len(indices), len(handle.samples)), dtype=np.float32)
            for row, index in enumerate(indices):
                out[row] = handle.trace[int(index)]
    except (RuntimeError, ValueError, OSError, IndexError) as err:
        raise PitfallsInputError(path, "", f"traces at the ties cannot be read ({err})",
                                 "the file may be damaged; export it again") from err
    return out
