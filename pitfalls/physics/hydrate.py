"""Methane-hydrate stability in seawater and the depth of its base below the seafloor.

Phase boundary: Dickens & Quinby-Hunt (1994) for methane hydrate in seawater of salinity
33.5, ``1/T = 3.79e-3 - 2.83e-4 log10(P)`` with T in kelvin and P in MPa (absolute). It was
measured over 2.75-10 MPa; above that it is an extrapolation that runs 2-3 K warmer than
pure-water data shifted by the paper's 1.1 K salt depression, so a base predicted in
deep water is 10-20 % too deep. Treat any predicted base with at least +/- 15 % uncertainty.

Base of the stability zone (common practice): the temperature below the seafloor rises
linearly, ``T(z) = Tsf + G z / 1000``; the pore-water pressure is hydrostatic,
``P(z) = 0.101325 + rho g (Dw + z) / 1e6`` MPa; the base is the depth where T(z) reaches the
phase-boundary temperature at P(z). Where the seafloor itself is too warm for hydrate there
is no stability zone (NaN).

References
----------
.. [1] Dickens, G. R. and Quinby-Hunt, M. S., 1994, Methane hydrate stability in seawater,
       Geophysical Research Letters 21(19), 2115-2118. (equation constants from memory;
       consistent with the paper's stated 1.1 C depression over 2.75-10 MPa)
"""
from __future__ import annotations

import math

import numpy as np

ATMOSPHERE_MPA = 0.101325
"""Sea-level atmospheric pressure added to the hydrostatic column, MPa."""
KELVIN_OFFSET = 273.15
SEARCH_MAX_DEPTH_M = 3000.0
"""Deepest base of stability looked for below the seafloor, m."""

_INTERCEPT_PER_K = 3.79e-3  # Dickens & Quinby-Hunt (1994): 1/T = a - b log10 P
_SLOPE_PER_K = 2.83e-4


def phase_temperature_k(pressure_mpa: np.ndarray | float) -> np.ndarray | float:
    """Dickens & Quinby-Hunt (1994) methane-hydrate dissociation temperature in seawater.

    Parameters
    ----------
    pressure_mpa : float or ndarray
        Absolute pressure, MPa (> 0).

    Returns
    -------
    float or ndarray
        Temperature on the phase boundary, K.
    """
    pressure = np.asarray(pressure_mpa, dtype=float)
    temperature = 1.0 / (_INTERCEPT_PER_K - _SLOPE_PER_K * np.log10(pressure))  # 1/T = 3.79e-3 - 2.83e-4 log10 P
    return float(temperature) if temperature.ndim == 0 else temperature


def phase_pressure_mpa(temperature_k: np.ndarray | float) -> np.ndarray | float:
    """Dickens & Quinby-Hunt (1994) methane-hydrate dissociation pressure in seawater.

    Parameters
    ----------
    temperature_k : float or ndarray
        Temperature, K.

    Returns
    -------
    float or ndarray
        Absolute pressure on the phase boundary, MPa.
    """
    temperature = np.asarray(temperature_k, dtype=float)
    pressure = 10.0 ** ((_INTERCEPT_PER_K - 1.0 / temperature) / _SLOPE_PER_K)  # inverse of the boundary
    return float(pressure) if pressure.ndim == 0 else pressure


def _pressure_mpa(depth_below_sea_level_m: float, water_density_kg_m3: float, gravity_m_s2: float) -> float:
    """Hydrostatic pressure with the atmosphere, MPa."""
    return ATMOSPHERE_MPA + water_density_kg_m3 * gravity_m_s2 * depth_below_sea_level_m / 1e6


def stability_base_depth_m(
    water_depth_m: float,
    seafloor_temperature_c: float,
    gradient_c_per_km: float,
    water_density_kg_m3: float = 1030.0,
    gravity_m_s2: float = 9.81,
) -> float:
    """Base of the methane-hydrate stability zone below the seafloor (Dickens & Quinby-Hunt 1994 boundary).

    Parameters
    ----------
    water_depth_m : float
        Water depth, m.
    seafloor_temperature_c : float
        Bottom-water temperature, degrees C.
    gradient_c_per_km : float
        Geothermal gradient below the seafloor, degrees C per km (> 0).
    water_density_kg_m3 : float
        Density of the water column and pore water for the hydrostatic pressure.
    gravity_m_s2 : float
        Gravitational acceleration.

    Returns
    -------
    float
        Depth of the base below the seafloor, m; NaN where the seafloor is outside the
        stability field, the gradient is not positive, or no base lies within 3000 m.
    """
    if not (np.isfinite(water_depth_m) and np.isfinite(seafloor_temperature_c) and np.isfinite(gradient_c_per_km)):
        return math.nan
    if gradient_c_per_km <= 0.0 or water_depth_m < 0.0:
        return math.nan

    def excess_temperature_k(depth_below_seafloor_m: float) -> float:
        temperature_k = seafloor_temperature_c + gradient_c_per_km * depth_below_seafloor_m / 1000.0 + KELVIN_OFFSET
        pressure = _pressure_mpa(water_depth_m + depth_below_seafloor_m, water_density_kg_m3, gravity_m_s2)
        return temperature_k - phase_temperature_k(pressure)  # T(z) - T_eq(P(z)) = 0 at the base

    at_seafloor = excess_temperature_k(0.0)
    if at_seafloor >= 0.0:
        return math.nan
    if excess_temperature_k(SEARCH_MAX_DEPTH_M) <= 0.0:
        return math.nan
    from scipy.optimize import brentq  # loaded only when a base is looked for: it is slow to import
    return float(brentq(excess_temperature_k, 0.0, SEARCH_MAX_DEPTH_M, xtol=1e-9, rtol=1e-12))


def gradient_for_base_c_per_km(
    depth_below_seafloor_m: float,
    water_depth_m: float,
    seafloor_temperature_c: float,
    water_density_kg_m3: float = 1030.0,
    gravity_m_s2: float = 9.81,
) -> float:
    """Geothermal gradient that puts the Dickens & Quinby-Hunt (1994) stability base at a given depth.

    Parameters
    ----------
    depth_below_seafloor_m : float
        Wanted depth of the base below the seafloor, m (> 0).
    water_depth_m : float
        Water depth, m.
    seafloor_temperature_c : float
        Bottom-water temperature, degrees C.
    water_density_kg_m3, gravity_m_s2 : float
        As in :func:`stability_base_depth_m`.

    Returns
    -------
    float
        Gradient in degrees C per km; NaN when no positive gradient can do it (the seafloor
        is outside the stability field or the depth is not positive).
    """
    if not depth_below_seafloor_m > 0.0:
        return math.nan
    pressure = _pressure_mpa(water_depth_m + depth_below_seafloor_m, water_density_kg_m3, gravity_m_s2)
    base_temperature_c = phase_temperature_k(pressure) - KELVIN_OFFSET
    gradient = (base_temperature_c - seafloor_temperature_c) * 1000.0 / depth_below_seafloor_m  # T(z) = Tsf + G z
    if gradient <= 0.0:
        return math.nan
    seafloor_equilibrium_c = phase_temperature_k(_pressure_mpa(water_depth_m, water_density_kg_m3, gravity_m_s2)) - KELVIN_OFFSET
    if seafloor_temperature_c >= seafloor_equilibrium_c:
        return math.nan
    return float(gradient)
