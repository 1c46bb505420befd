"""Hubbert (1953) hydrodynamic contact tilt, and the time tilt an overburden gives a flat contact.

Two reasons a fluid contact that is horizontal (or nearly so) in depth can look tilted:

* moving formation water tilts the hydrocarbon-water contact down the potentiometric
  gradient: ``tan(theta) = rho_w / (rho_w - rho_h) * dh/dx`` (Hubbert 1953);
* a reflector flat at depth ``Z`` under water of varying depth ``D(x)`` has, with vertical
  rays, water velocity ``v_w`` and a uniform sediment velocity ``v_s``,
  ``t_h = 2 Z / v_s + t_sf (1 - v_w / v_s)``, so ``delta_t_h = delta_t_sf (1 - v_w / v_s)``:
  slow water pushes it down where the seafloor is deep (common practice; derived).

Units: densities kg/m3, gradients m per km (of head, or of contact depth), velocities m/s,
times ms.

References
----------
.. [1] Hubbert, M. K., 1953, Entrapment of petroleum under hydrodynamic conditions, AAPG
       Bulletin 37(8), 1954-2026. (issue and pages from memory)
"""
from __future__ import annotations

import numpy as np

ArrayLike = float | np.ndarray


def hubbert_amplification(water_density_kg_m3: ArrayLike, hydrocarbon_density_kg_m3: ArrayLike) -> ArrayLike:
    """Hubbert (1953) amplification rho_w / (rho_w - rho_h) of the potentiometric gradient."""
    water = np.asarray(water_density_kg_m3, dtype=float)
    hydrocarbon = np.asarray(hydrocarbon_density_kg_m3, dtype=float)
    return water / (water - hydrocarbon)  # Hubbert (1953): rho_w / (rho_w - rho_h)


def hubbert_tilt_m_per_km(head_gradient_m_per_km: ArrayLike, water_density_kg_m3: ArrayLike,
                          hydrocarbon_density_kg_m3: ArrayLike) -> ArrayLike:
    """Hubbert (1953) contact tilt: dz/dx = rho_w / (rho_w - rho_h) * dh/dx, in m of depth per km.

    The contact dips in the direction the water flows (down the potentiometric gradient).
    """
    amplification = hubbert_amplification(water_density_kg_m3, hydrocarbon_density_kg_m3)
    return amplification * np.asarray(head_gradient_m_per_km, dtype=float)  # tan(theta) = amp * dh/dx


def hubbert_head_gradient_m_per_km(tilt_m_per_km: ArrayLike, water_density_kg_m3: ArrayLike,
                                   hydrocarbon_density_kg_m3: ArrayLike) -> ArrayLike:
    """Potentiometric gradient a Hubbert (1953) tilt needs: dh/dx = (rho_w - rho_h) / rho_w * dz/dx."""
    amplification = hubbert_amplification(water_density_kg_m3, hydrocarbon_density_kg_m3)
    return np.asarray(tilt_m_per_km, dtype=float) / amplification


def tilt_angle_deg(tilt_m_per_km: ArrayLike) -> ArrayLike:
    """Angle from the horizontal of a depth gradient in m per km: atan(dz/dx)."""
    return np.degrees(np.arctan(np.asarray(tilt_m_per_km, dtype=float) / 1000.0))


def twt_tilt_ms_per_km(tilt_m_per_km: ArrayLike, interval_velocity_m_s: ArrayLike) -> ArrayLike:
    """Two-way time tilt of a depth tilt seen through a local interval velocity: 2 dz/dx / v (ms per km)."""
    return 2000.0 * np.asarray(tilt_m_per_km, dtype=float) / np.asarray(interval_velocity_m_s, dtype=float)


def overburden_time_factor(water_velocity_m_s: ArrayLike, sediment_velocity_m_s: ArrayLike) -> ArrayLike:
    """Fraction of a seafloor time change that a reflector flat in depth inherits: 1 - v_w / v_s."""
    return 1.0 - np.asarray(water_velocity_m_s, dtype=float) / np.asarray(sediment_velocity_m_s, dtype=float)


def overburden_time_shift_ms(seafloor_twt_change_ms: ArrayLike, water_velocity_m_s: ArrayLike,
                             sediment_velocity_m_s: ArrayLike) -> ArrayLike:
    """Time shift of a flat-in-depth reflector under a seafloor time change: delta_t_sf (1 - v_w / v_s)."""
    factor = overburden_time_factor(water_velocity_m_s, sediment_velocity_m_s)
    return np.asarray(seafloor_twt_change_ms, dtype=float) * factor  # delta_t_h = delta_t_sf (1 - v_w/v_s)


def flat_reflector_twt_ms(reflector_depth_m: ArrayLike, water_depth_m: ArrayLike, water_velocity_m_s: float,
                          sediment_velocity_m_s: float) -> ArrayLike:
    """Vertical-ray two-way time of a reflector at depth Z under water depth D: 2 D / v_w + 2 (Z - D) / v_s."""
    water = np.asarray(water_depth_m, dtype=float)
    depth = np.asarray(reflector_depth_m, dtype=float)
    return 2000.0 * (water / water_velocity_m_s + (depth - water) / sediment_velocity_m_s)


def velocity_anomaly_delay_ms(thickness_m: ArrayLike, anomaly_velocity_m_s: ArrayLike,
                              background_velocity_m_s: ArrayLike) -> ArrayLike:
    """Two-way delay of a body of thickness h and velocity v_a replacing v_b: 2 h (1/v_a - 1/v_b); positive = push-down."""
    thickness = np.asarray(thickness_m, dtype=float)
    return 2000.0 * thickness * (1.0 / np.asarray(anomaly_velocity_m_s, dtype=float)
                                 - 1.0 / np.asarray(background_velocity_m_s, dtype=float))
