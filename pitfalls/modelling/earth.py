"""Depth models of a marine section: water, rock units, and overprints that cut across them.

A model is described trace by trace in depth (metres below sea level). :func:`depth_grid`
turns it into velocity and density on a fine regular depth grid, and
:func:`impedance_in_time` samples the acoustic impedance in two-way time, which is what the
layered-earth recursion needs.

Rock units are stacked top to bottom. A unit whose top lies above the previous unit's top
is clipped to it (onlap or truncation: that unit is absent there), and nothing lies above the
seafloor: the first unit always starts at the seafloor, and a canyon cuts the units it
crosses.

Overprints change the velocity of whatever unit they cross (densities follow through the
Gardner relation ``rho ~ V^0.25``):

- ``hydrate``: the base of gas-hydrate stability. Hydrate fills the pore space more and more
  towards the base, so the velocity increase rises linearly from 0 at the seafloor to
  ``velocity_change_m_s`` at the boundary; below it, free gas lowers the velocity by
  ``gas_velocity_drop_m_s`` over ``thickness_m``. The boundary is a soft-below contrast: a
  reflection reversed relative to the seafloor.
- ``diagenetic``: a diagenetic front (for example opal-A to opal-CT); the velocity below it
  rises by ``velocity_change_m_s`` all the way down: a reflection of the seafloor's polarity.
- ``gas``: a gas-water contact, flat in depth; within the units named in ``units``, the part
  above the contact is gas-charged and its velocity changes by ``velocity_change_m_s``
  (negative). The gas column reaches up to the reservoir's top.

References
----------
.. [1] Gardner, G. H. F., Gardner, L. W. and Gregory, A. R., 1974, Formation velocity and
       density - the diagnostic basics for stratigraphic traps, Geophysics 39(6), 770-780,
       doi:10.1190/1.1440465.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

OVERPRINT_KINDS = ("hydrate", "diagenetic", "gas")
GARDNER_FACTOR = 310.0
"""Gardner et al. (1974) factor for density in kg/m3 from velocity in m/s."""
GARDNER_EXPONENT = 0.25
DEPTH_STEP_M = 0.5
"""Depth sampling of the velocity model, m: well below a tenth of a 2 ms layer in water."""


def gardner_density_kg_m3(velocity_m_s: np.ndarray | float) -> np.ndarray | float:
    """Gardner et al. (1974) density from P-wave velocity: ``rho = 310 V^0.25`` (kg/m3, m/s).

    Parameters
    ----------
    velocity_m_s : float or ndarray
        P-wave velocity, m/s.

    Returns
    -------
    float or ndarray
        Bulk density, kg/m3. Not meant for water or very soft seafloor mud.
    """
    velocity = np.asarray(velocity_m_s, dtype=float)
    density = GARDNER_FACTOR * velocity**GARDNER_EXPONENT  # Gardner et al. (1974): rho = 0.31 V^0.25 g/cm3
    return float(density) if density.ndim == 0 else density


@dataclass(frozen=True)
class Unit:
    """A rock unit below a surface."""

    name: str
    top_depth_m: np.ndarray
    """(n_traces,) depth below sea level of the unit's top; a top above the previous unit's top is clipped to it."""
    velocity_m_s: float | np.ndarray
    """Interval velocity, scalar or (n_traces,)."""
    density_kg_m3: float | np.ndarray | None = None
    """Density, scalar or (n_traces,); None -> Gardner et al. (1974)."""


@dataclass(frozen=True)
class Overprint:
    """A boundary that cuts across units: gas-hydrate base, diagenetic front, or gas-water contact."""

    name: str
    kind: str
    """``hydrate``, ``diagenetic`` or ``gas``."""
    depth_m: np.ndarray
    """(n_traces,) depth below sea level of the boundary; NaN where absent."""
    velocity_change_m_s: float
    """hydrate: added above (>0); diagenetic: added below; gas: change above the contact within ``units`` (<0)."""
    thickness_m: float = 50.0
    """hydrate: thickness of the free-gas zone below the boundary."""
    units: tuple[str, ...] = ()
    """gas: the reservoir unit(s) the contact lives in; empty = all."""
    gas_velocity_drop_m_s: float = 0.0
    """hydrate: velocity lost in the free-gas zone below the boundary."""


@dataclass(frozen=True)
class EarthModel:
    """Water over rock units, with overprints; every depth array has one value per trace."""

    water_velocity_m_s: float
    seafloor_depth_m: np.ndarray
    """(n_traces,) water depth, m."""
    units: tuple[Unit, ...]
    """Top to bottom; the first unit starts at the seafloor."""
    overprints: tuple[Overprint, ...] = ()
    trace_spacing_m: float = 12.5
    water_density_kg_m3: float = 1030.0

    @property
    def n_traces(self) -> int:
        return int(np.asarray(self.seafloor_depth_m).shape[0])


def _per_trace(value: float | np.ndarray | None, n_traces: int, what: str) -> np.ndarray | None:
    if value is None:
        return None
    array = np.asarray(value, dtype=float)
    if array.ndim == 0:
        return np.full(n_traces, float(array))
    if array.shape != (n_traces,):
        raise ValueError(f"{what} must be a scalar or have shape ({n_traces},), not {array.shape}")
    return array


def unit_tops_m(earth: EarthModel) -> np.ndarray:
    """Effective top of every unit after clipping, shape (n_units, n_traces).

    The first unit starts at the seafloor; each later top is pushed down to the previous
    top and to the seafloor where it lies above them.
    """
    n_traces = earth.n_traces
    seafloor = np.asarray(earth.seafloor_depth_m, dtype=float)
    tops = np.empty((len(earth.units), n_traces))
    previous = seafloor
    for index, unit in enumerate(earth.units):
        top = _per_trace(unit.top_depth_m, n_traces, f"unit {unit.name} top_depth_m")
        top = seafloor.copy() if index == 0 else np.maximum(top, previous)
        tops[index] = top
        previous = top
    return tops


@dataclass(frozen=True)
class DepthGrid:
    """Velocity and density on a regular depth grid below sea level, per trace."""

    depth_m: np.ndarray
    """(n_depths,) depth of each grid node, m; node i stands for [i dz, (i+1) dz)."""
    velocity_m_s: np.ndarray
    """(n_traces, n_depths)."""
    density_kg_m3: np.ndarray
    """(n_traces, n_depths)."""
    twt_ms: np.ndarray
    """(n_traces, n_depths + 1) two-way time at the top of each node, the last entry at the grid's base."""
    unit_index: np.ndarray
    """(n_traces, n_depths) index of the unit at each node, -1 in the water."""

    @property
    def impedance(self) -> np.ndarray:
        return self.velocity_m_s * self.density_kg_m3

    def node_below(self, depth_m: np.ndarray) -> np.ndarray:
        """Index of the first node whose centre lies at or below each depth (node of the unit starting there)."""
        step = self.depth_m[1] - self.depth_m[0] if len(self.depth_m) > 1 else DEPTH_STEP_M
        position = np.ceil(np.nan_to_num(np.asarray(depth_m, dtype=float), nan=0.0) / step - 0.5)
        return np.clip(position, 1, len(self.depth_m) - 1).astype(int)

    def reflection_coefficient_at(self, depth_m: np.ndarray) -> np.ndarray:
        """Normal-incidence R = (Z2 - Z1) / (Z2 + Z1) across each depth, (n_traces,); NaN where depth is NaN."""
        below = self.node_below(depth_m)
        rows = np.arange(self.velocity_m_s.shape[0])
        impedance_below = self.velocity_m_s[rows, below] * self.density_kg_m3[rows, below]
        impedance_above = self.velocity_m_s[rows, below - 1] * self.density_kg_m3[rows, below - 1]
        coefficient = (impedance_below - impedance_above) / (impedance_below + impedance_above)  # R = (Z2 - Z1)/(Z2 + Z1)
        return np.where(np.isfinite(np.asarray(depth_m, dtype=float)), coefficient, np.nan)

    def twt_at_depth_ms(self, depth_m: np.ndarray) -> np.ndarray:
        """Two-way time of a depth on every trace, (n_traces,) in, (n_traces,) out; NaN stays NaN."""
        depth = np.asarray(depth_m, dtype=float)
        step = self.depth_m[1] - self.depth_m[0] if len(self.depth_m) > 1 else DEPTH_STEP_M
        position = np.clip(depth / step, 0.0, len(self.depth_m))
        finite = np.isfinite(position)
        lower = np.where(finite, np.floor(position), 0).astype(int)
        lower = np.minimum(lower, len(self.depth_m) - 1)
        fraction = np.where(finite, position - lower, 0.0)
        rows = np.arange(self.twt_ms.shape[0])
        time = self.twt_ms[rows, lower] + fraction * (self.twt_ms[rows, lower + 1] - self.twt_ms[rows, lower])
        return np.where(finite, time, np.nan)


def depth_grid(earth: EarthModel, max_depth_m: float, depth_step_m: float = DEPTH_STEP_M) -> DepthGrid:
    """Velocity and Gardner et al. (1974) density of the model on a regular depth grid.

    Parameters
    ----------
    earth : EarthModel
    max_depth_m : float
        Base of the grid, m below sea level.
    depth_step_m : float
        Grid step, m.

    Returns
    -------
    DepthGrid
    """
    n_traces = earth.n_traces
    n_depths = int(np.ceil(max_depth_m / depth_step_m))
    depth = depth_step_m * (np.arange(n_depths) + 0.5)  # node centres
    seafloor = np.asarray(earth.seafloor_depth_m, dtype=float)
    if seafloor.shape != (n_traces,) or not np.all(np.isfinite(seafloor)):
        raise ValueError("seafloor_depth_m must be finite with one value per trace")
    if not earth.units:
        raise ValueError("the model needs at least one rock unit")

    tops = unit_tops_m(earth)
    below_depth = depth[np.newaxis, :]
    # Column 0 is the water, column k + 1 unit k; NaN density = use Gardner.
    velocity_table = np.empty((n_traces, len(earth.units) + 1))
    density_table = np.empty((n_traces, len(earth.units) + 1))
    velocity_table[:, 0] = float(earth.water_velocity_m_s)
    density_table[:, 0] = float(earth.water_density_kg_m3)
    for index, unit in enumerate(earth.units):
        velocity_table[:, index + 1] = _per_trace(unit.velocity_m_s, n_traces, f"unit {unit.name} velocity_m_s")
        unit_density = _per_trace(unit.density_kg_m3, n_traces, f"unit {unit.name} density_kg_m3")
        density_table[:, index + 1] = np.nan if unit_density is None else unit_density
    unit_index = np.empty((n_traces, n_depths), dtype=np.int16)
    velocity = np.empty((n_traces, n_depths))
    density = np.empty((n_traces, n_depths))
    for trace_index in range(n_traces):
        # Tops are non-decreasing after clipping: the unit at a depth is the last top at or above it.
        column = np.searchsorted(tops[:, trace_index], depth, side="right")
        unit_index[trace_index] = column - 1
        velocity[trace_index] = velocity_table[trace_index, column]
        density[trace_index] = density_table[trace_index, column]
    explicit_density = np.isfinite(density) & (unit_index >= 0)
    rock = unit_index >= 0
    base_velocity = velocity.copy()

    names = [unit.name for unit in earth.units]
    for overprint in earth.overprints:
        if overprint.kind not in OVERPRINT_KINDS:
            raise ValueError(f"overprint {overprint.name}: kind must be one of {OVERPRINT_KINDS}")
        boundary = _per_trace(overprint.depth_m, n_traces, f"overprint {overprint.name} depth_m")[:, np.newaxis]
        present = np.isfinite(boundary)
        boundary_filled = np.where(present, boundary, np.inf)
        if overprint.kind == "hydrate":
            zone = seafloor[:, np.newaxis]
            above = rock & present & (below_depth < boundary_filled)
            ramp = np.clip((below_depth - zone) / np.maximum(boundary_filled - zone, depth_step_m), 0.0, 1.0)
            velocity = velocity + np.where(above, overprint.velocity_change_m_s * ramp, 0.0)  # saturation grows to the base
            gas = rock & present & (below_depth >= boundary_filled) & (below_depth < boundary_filled + overprint.thickness_m)
            velocity = velocity - np.where(gas, overprint.gas_velocity_drop_m_s, 0.0)
        elif overprint.kind == "diagenetic":
            below = rock & present & (below_depth >= boundary_filled)
            velocity = velocity + np.where(below, overprint.velocity_change_m_s, 0.0)
        else:
            wanted = [names.index(name) for name in overprint.units if name in names]
            if len(wanted) != len(overprint.units):
                missing = sorted(set(overprint.units) - set(names))
                raise ValueError(f"overprint {overprint.name}: unknown unit(s) {missing}")
            reservoir = np.isin(unit_index, wanted) if wanted else rock
            charged = reservoir & present & (below_depth < boundary_filled)
            velocity = velocity + np.where(charged, overprint.velocity_change_m_s, 0.0)
    if np.any(velocity <= 0):
        raise ValueError("an overprint drives a velocity to zero or below")

    gardner = gardner_density_kg_m3(velocity)
    # Where a unit's density was given, an overprint scales it by the Gardner ratio (V_new / V_old)^0.25.
    scaled = density * (velocity / base_velocity) ** GARDNER_EXPONENT
    density = np.where(rock & ~explicit_density, gardner, np.where(explicit_density, scaled, density))
    if not np.all(np.isfinite(density)):
        raise ValueError("density is not finite everywhere")

    one_way_s = depth_step_m / velocity
    twt = np.zeros((n_traces, n_depths + 1))
    np.cumsum(2000.0 * one_way_s, axis=1, out=twt[:, 1:])
    return DepthGrid(depth_m=depth, velocity_m_s=velocity, density_kg_m3=density, twt_ms=twt, unit_index=unit_index)


def impedance_in_time(grid: DepthGrid, layer_time_ms: float, n_layers: int) -> np.ndarray:
    """Acoustic impedance of equal-time layers: layer k spans ``[k, k+1) * layer_time_ms`` of two-way time.

    Each layer takes the impedance of the depth node at its centre time.

    Parameters
    ----------
    grid : DepthGrid
    layer_time_ms : float
        Two-way time of one layer, ms.
    n_layers : int

    Returns
    -------
    ndarray of shape (n_traces, n_layers)
    """
    centres_ms = layer_time_ms * (np.arange(n_layers) + 0.5)
    impedance = grid.impedance
    n_traces, n_depths = impedance.shape
    out = np.empty((n_traces, n_layers))
    for trace_index in range(n_traces):
        node = np.searchsorted(grid.twt_ms[trace_index], centres_ms, side="right") - 1
        out[trace_index] = impedance[trace_index, np.clip(node, 0, n_depths - 1)]
    return out
