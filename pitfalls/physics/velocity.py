"""Two-way time to depth: water over a sediment column, time <-> depth both ways.

The model is water at a constant velocity down to the seafloor, then a sediment velocity
function hung from the seafloor (z and tau below the seafloor). Vertical rays, zero offset.
The sediment function is one of:

- **linear**: ``V(z) = V0 + k z``, capped at a maximum velocity (the built-in function, with
  the numbers in the rules' ``velocity`` section). For a linear gradient the one-way time
  below the seafloor is ``tau = ln(1 + k z / V0) / k``, so ``z = V0 (exp(k tau) - 1) / k``
  (the standard closed form for a linear velocity function; from memory);
- **table**: depths below the seafloor at given two-way times below it, made from a table
  of interval velocities (each applies from its time down to the next) or of average
  velocities (``z = V_avg t / 2``, t two-way); between the knots the interval velocity is
  constant, so depth is piecewise linear in time; below the last knot the last interval
  velocity goes on (definition of interval and average velocity; common practice).

References
----------
.. [1] Hamilton, E. L., 1979, Sound velocity gradients in marine sediments, Journal of the
       Acoustical Society of America 65(4), 909-922. (gradients near 1 /s in the upper
       few hundred metres; journal details from memory)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping, Sequence

import numpy as np


def depths_from_interval_velocity(twt_ms: Sequence[float], interval_velocity_m_s: Sequence[float]
                                  ) -> tuple[np.ndarray, np.ndarray, float]:
    """Knots (two-way time ms, depth m) of a table of interval velocities, and the velocity below it.

    Velocity ``i`` applies from ``twt_ms[i]`` down to ``twt_ms[i + 1]``; the first applies from
    zero time as well. ``z(t_i+1) = z(t_i) + V_i (t_i+1 - t_i) / 2`` (definition of interval velocity).

    Raises
    ------
    ValueError
        When the times do not increase or a velocity is not positive and finite.
    """
    times, velocities = _table(twt_ms, interval_velocity_m_s)
    knots = times if times[0] == 0.0 else np.concatenate([[0.0], times])
    speeds = velocities if times[0] == 0.0 else np.concatenate([velocities[:1], velocities])
    depth = np.concatenate([[0.0], np.cumsum(speeds[:-1] * np.diff(knots) / 2000.0)])
    return knots, depth, float(speeds[-1])


def depths_from_average_velocity(twt_ms: Sequence[float], average_velocity_m_s: Sequence[float]
                                 ) -> tuple[np.ndarray, np.ndarray, float]:
    """Knots (two-way time ms, depth m) of a table of average velocities, and the velocity below it.

    ``z_i = V_avg,i t_i / 2`` (definition of average velocity, t two-way); the velocity below
    the table is the interval velocity of its last interval.

    Raises
    ------
    ValueError
        When the times do not increase, a velocity is not positive and finite, or the depths
        do not increase (an interval velocity at or below zero), naming the entry.
    """
    times, velocities = _table(twt_ms, average_velocity_m_s)
    depth = velocities * times / 2000.0
    knots = times if times[0] == 0.0 else np.concatenate([[0.0], times])
    depth = depth if times[0] == 0.0 else np.concatenate([[0.0], depth])
    steps = np.diff(depth)
    if np.any(steps <= 0):
        bad = int(np.flatnonzero(steps <= 0)[0]) + (1 if times[0] == 0.0 else 0)
        raise ValueError(f"entry {bad + 1}: the average velocities give no depth increase "
                         f"(a zero or negative interval velocity)")
    below = float(2000.0 * steps[-1] / np.diff(knots)[-1]) if knots.size > 1 else float(velocities[-1])
    return knots, depth, below


def _table(twt_ms: Sequence[float], velocity_m_s: Sequence[float]) -> tuple[np.ndarray, np.ndarray]:
    times = np.asarray(twt_ms, dtype=float)
    velocities = np.asarray(velocity_m_s, dtype=float)
    if times.ndim != 1 or times.shape != velocities.shape or times.size == 0:
        raise ValueError("the times and the velocities must be two lists of the same, non-zero length")
    if not np.all(np.isfinite(times)) or times[0] < 0:
        raise ValueError("entry 1: times must be finite and start at or below zero")
    if np.any(np.diff(times) <= 0):
        bad = int(np.flatnonzero(np.diff(times) <= 0)[0]) + 2
        raise ValueError(f"entry {bad}: the times must increase")
    if not np.all(np.isfinite(velocities)) or np.any(velocities <= 0):
        bad = int(np.flatnonzero(~(np.isfinite(velocities) & (velocities > 0)))[0]) + 1
        raise ValueError(f"entry {bad}: velocities must be positive numbers")
    return times, velocities


@dataclass(frozen=True)
class VelocityModel:
    """Water over a sediment column: a linear gradient capped at ``max_velocity_m_s``, or a table.

    With ``table_twt_ms`` empty the sediment function is linear; otherwise it is the table
    (knots from zero, depths below the seafloor, and the velocity below the last knot) and the
    linear numbers are not used.
    """

    water_velocity_m_s: float = 1500.0
    seafloor_velocity_m_s: float = 1600.0
    gradient_per_s: float = 0.8
    max_velocity_m_s: float = 4500.0
    table_twt_ms: tuple[float, ...] = ()
    """Two-way times below the seafloor of the table's knots, from 0, increasing."""
    table_depth_m: tuple[float, ...] = ()
    """Depths below the seafloor at those times, increasing."""
    table_velocity_below_m_s: float = 0.0
    """Interval velocity below the last knot."""
    source: str = "built-in"
    """``built-in`` (the rules' linear function), or where the function came from (a velocity file)."""
    table_kind: str = ""
    """``interval`` or ``average``: what the table file gave (for the description)."""

    @classmethod
    def from_table(cls, water_velocity_m_s: float, twt_below_seafloor_ms: Sequence[float],
                   velocity_m_s: Sequence[float], kind: str = "interval", source: str = "") -> "VelocityModel":
        """Water over a table of interval or average velocities against two-way time below the seafloor.

        Raises
        ------
        ValueError
            For a table that does not give depths increasing with time (see the helpers above).
        """
        make = depths_from_interval_velocity if kind == "interval" else depths_from_average_velocity
        knots, depth, below = make(twt_below_seafloor_ms, velocity_m_s)
        return cls(water_velocity_m_s=float(water_velocity_m_s), table_twt_ms=tuple(knots.tolist()),
                   table_depth_m=tuple(depth.tolist()), table_velocity_below_m_s=below, source=source,
                   table_kind=kind)

    @property
    def is_table(self) -> bool:
        return bool(self.table_twt_ms)

    def describe(self) -> str:
        """One line naming the function, for the report header."""
        water = f"water {self.water_velocity_m_s:g} m/s"
        if self.is_table and len(self.table_twt_ms) == 1:
            sediment = f"sediment {self.table_velocity_below_m_s:g} m/s throughout (a one-row table)"
        elif self.is_table:
            sediment = (f"sediment from a table of {self.table_kind or 'interval'} velocities against two-way time "
                        f"below the seafloor (to {self.table_twt_ms[-1]:g} ms, {self.table_depth_m[-1]:.0f} m; "
                        f"{self.table_velocity_below_m_s:.0f} m/s below)")
        else:
            sediment = (f"sediment {self.seafloor_velocity_m_s:g} m/s + {self.gradient_per_s:g}/s x depth below "
                        f"the seafloor, at most {self.max_velocity_m_s:g} m/s")
        origin = ("the built-in function, from the rules' velocity section" if self.source == "built-in"
                  else f"from {self.source}")
        return f"{water}, {sediment}; {origin}"

    @classmethod
    def from_rules(cls, rules: Mapping[str, Any]) -> "VelocityModel":
        velocity = rules["velocity"]
        return cls(
            water_velocity_m_s=float(velocity["water_velocity_m_s"]),
            seafloor_velocity_m_s=float(velocity["seafloor_velocity_m_s"]),
            gradient_per_s=float(velocity["gradient_per_s"]),
            max_velocity_m_s=float(velocity["max_velocity_m_s"]),
        )

    # --- below the seafloor -------------------------------------------------------------
    def _cap(self) -> tuple[float, float]:
        """One-way time (s) and depth below seafloor (m) at which the cap is reached."""
        v0, k, vmax = self.seafloor_velocity_m_s, self.gradient_per_s, self.max_velocity_m_s
        if k <= 0 or vmax <= v0:
            return 0.0, 0.0
        return float(np.log(vmax / v0) / k), float((vmax - v0) / k)

    def _table_depth_m(self, twt_ms: np.ndarray) -> np.ndarray:
        knots, depth = np.asarray(self.table_twt_ms), np.asarray(self.table_depth_m)
        inside = np.interp(twt_ms, knots, depth)
        beyond = depth[-1] + self.table_velocity_below_m_s * (twt_ms - knots[-1]) / 2000.0
        return np.where(twt_ms > knots[-1], beyond, inside)

    def _table_twt_ms(self, depth_m: np.ndarray) -> np.ndarray:
        knots, depth = np.asarray(self.table_twt_ms), np.asarray(self.table_depth_m)
        inside = np.interp(depth_m, depth, knots)
        beyond = knots[-1] + 2000.0 * (depth_m - depth[-1]) / self.table_velocity_below_m_s
        return np.where(depth_m > depth[-1], beyond, inside)

    def depth_below_seafloor_m(self, twt_below_seafloor_ms: np.ndarray | float) -> np.ndarray:
        """Depth below the seafloor of a two-way time measured from the seafloor."""
        if self.is_table:
            return self._table_depth_m(np.maximum(np.asarray(twt_below_seafloor_ms, dtype=float), 0.0))
        tau_s = np.maximum(np.asarray(twt_below_seafloor_ms, dtype=float), 0.0) / 2000.0
        v0, k = self.seafloor_velocity_m_s, self.gradient_per_s
        if k <= 0:
            return v0 * tau_s
        tau_cap_s, z_cap_m = self._cap()
        if self.max_velocity_m_s <= v0:
            return v0 * tau_s
        depth = v0 * np.expm1(k * np.minimum(tau_s, tau_cap_s)) / k  # z = V0 (e^{k tau} - 1) / k
        return depth + self.max_velocity_m_s * np.maximum(tau_s - tau_cap_s, 0.0)

    def twt_below_seafloor_ms(self, depth_below_seafloor_m: np.ndarray | float) -> np.ndarray:
        """Two-way time from the seafloor down to a depth below it (inverse of the above)."""
        depth = np.maximum(np.asarray(depth_below_seafloor_m, dtype=float), 0.0)
        if self.is_table:
            return self._table_twt_ms(depth)
        v0, k = self.seafloor_velocity_m_s, self.gradient_per_s
        if k <= 0 or self.max_velocity_m_s <= v0:
            return 2000.0 * depth / v0
        tau_cap_s, z_cap_m = self._cap()
        tau_s = np.log1p(k * np.minimum(depth, z_cap_m) / v0) / k  # tau = ln(1 + k z / V0) / k
        tau_s = tau_s + np.maximum(depth - z_cap_m, 0.0) / self.max_velocity_m_s
        return 2000.0 * tau_s

    def interval_velocity_m_s(self, depth_below_seafloor_m: np.ndarray | float) -> np.ndarray:
        """Sediment (interval) velocity at a depth below the seafloor."""
        depth = np.maximum(np.asarray(depth_below_seafloor_m, dtype=float), 0.0)
        if self.is_table:
            knots, depths = np.asarray(self.table_twt_ms), np.asarray(self.table_depth_m)
            speeds = np.append(2000.0 * np.diff(depths) / np.diff(knots), self.table_velocity_below_m_s)
            return speeds[np.clip(np.searchsorted(depths, depth, side="right") - 1, 0, speeds.size - 1)]
        return np.minimum(self.seafloor_velocity_m_s + self.gradient_per_s * depth, self.max_velocity_m_s)

    # --- from the sea surface ---------------------------------------------------------
    def depth_m(self, twt_ms: np.ndarray | float, seafloor_twt_ms: np.ndarray | float) -> np.ndarray:
        """Depth below sea level of a two-way time, given the seafloor time on the same trace."""
        twt = np.asarray(twt_ms, dtype=float)
        seafloor = np.asarray(seafloor_twt_ms, dtype=float)
        water = self.water_velocity_m_s * np.minimum(twt, seafloor) / 2000.0
        return water + self.depth_below_seafloor_m(twt - seafloor)

    def twt_ms(self, depth_m: np.ndarray | float, seafloor_depth_m: np.ndarray | float) -> np.ndarray:
        """Two-way time of a depth below sea level, given the water depth on the same trace."""
        depth = np.asarray(depth_m, dtype=float)
        seafloor = np.asarray(seafloor_depth_m, dtype=float)
        water = 2000.0 * np.minimum(depth, seafloor) / self.water_velocity_m_s
        return water + self.twt_below_seafloor_ms(depth - seafloor)

    def water_depth_m(self, seafloor_twt_ms: np.ndarray | float) -> np.ndarray:
        return self.water_velocity_m_s * np.asarray(seafloor_twt_ms, dtype=float) / 2000.0
