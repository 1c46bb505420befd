"""Two-way time to depth with water over a sediment column whose velocity grows linearly with depth.

The model is the one interpreters sketch first: constant water velocity down to the
seafloor, then ``V(z) = V0 + k z`` below it (z below the seafloor), capped at a
maximum velocity. Vertical rays, zero offset.

For a linear gradient the one-way time below the seafloor is
``tau = ln(1 + k z / V0) / k``, so ``z = V0 (exp(k tau) - 1) / k`` (common practice:
the standard closed form for a linear velocity function, e.g. Slotnick's; from memory).

References
----------
.. [1] Hamilton, E. L., 1979, Sound velocity gradients in marine sediments, Journal of the
       Acoustical Society of America 65(4), 909-922. (gradients near 1 /s in the upper
       few hundred metres; journal details from memory)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np


@dataclass(frozen=True)
class VelocityModel:
    """Water over a linear-gradient sediment column, capped at ``max_velocity_m_s``."""

    water_velocity_m_s: float = 1500.0
    seafloor_velocity_m_s: float = 1600.0
    gradient_per_s: float = 0.8
    max_velocity_m_s: float = 4500.0

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

    def depth_below_seafloor_m(self, twt_below_seafloor_ms: np.ndarray | float) -> np.ndarray:
        """Depth below the seafloor of a two-way time measured from the seafloor."""
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
        v0, k = self.seafloor_velocity_m_s, self.gradient_per_s
        if k <= 0 or self.max_velocity_m_s <= v0:
            return 2000.0 * depth / v0
        tau_cap_s, z_cap_m = self._cap()
        tau_s = np.log1p(k * np.minimum(depth, z_cap_m) / v0) / k  # tau = ln(1 + k z / V0) / k
        tau_s = tau_s + np.maximum(depth - z_cap_m, 0.0) / self.max_velocity_m_s
        return 2000.0 * tau_s

    def interval_velocity_m_s(self, depth_below_seafloor_m: np.ndarray | float) -> np.ndarray:
        """Sediment velocity at a depth below the seafloor."""
        depth = np.maximum(np.asarray(depth_below_seafloor_m, dtype=float), 0.0)
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
