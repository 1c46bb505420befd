"""Methane-hydrate phase boundary and base of stability against REFERENCES.md item 4."""
import math

import numpy as np
import pytest

from pitfalls.physics.hydrate import (
    gradient_for_base_c_per_km,
    phase_pressure_mpa,
    phase_temperature_k,
    stability_base_depth_m,
)


@pytest.mark.parametrize(
    "pressure_mpa, temperature_k",
    [(3.0, 273.60), (5.0, 278.38), (10.0, 285.14), (15.0, 289.25), (20.0, 292.24)],
)
def test_phase_temperature_matches_dickens_quinby_hunt_table(pressure_mpa, temperature_k):
    """Dickens & Quinby-Hunt (1994) seawater boundary, REFERENCES.md 4a table (2 decimals given: 0.006 K)."""
    assert phase_temperature_k(pressure_mpa) == pytest.approx(temperature_k, abs=0.006)


@pytest.mark.parametrize(
    "temperature_c, pressure_mpa",
    [(0.0, 2.857), (4.0, 4.391), (8.0, 6.667), (12.0, 10.006)],
)
def test_phase_pressure_matches_dickens_quinby_hunt_table(temperature_c, pressure_mpa):
    """Dickens & Quinby-Hunt (1994) inverse, REFERENCES.md 4a table (3 decimals given: 0.0006 MPa)."""
    assert phase_pressure_mpa(temperature_c + 273.15) == pytest.approx(pressure_mpa, abs=6e-4)


def test_phase_boundary_round_trip_to_1e_6_kelvin():
    """The two forms of the boundary are inverses (REFERENCES.md item 4 tolerance 1e-6 K)."""
    pressures = np.linspace(2.0, 40.0, 39)
    back = phase_temperature_k(phase_pressure_mpa(phase_temperature_k(pressures)))
    np.testing.assert_allclose(back, phase_temperature_k(pressures), atol=1e-6, rtol=0)


@pytest.mark.parametrize(
    "water_depth_m, seafloor_c, gradient, base_m",
    [(800, 4.0, 50, 154.8), (1000, 4.0, 40, 263.4), (2000, 2.0, 30, 678.0), (3000, 1.5, 60, 389.7)],
)
def test_stability_base_check_cases(water_depth_m, seafloor_c, gradient, base_m):
    """REFERENCES.md 4c check cases (D&QH, rho 1030, g 9.81, atmosphere included): 0.5 m."""
    assert stability_base_depth_m(water_depth_m, seafloor_c, gradient) == pytest.approx(base_m, abs=0.5)


@pytest.mark.parametrize(
    "water_depth_m, base_m",
    [(600, 126.9), (800, 206.6), (1000, 263.4), (1500, 362.8), (2000, 433.0), (3000, 533.4)],
)
def test_stability_base_thickens_downslope(water_depth_m, base_m):
    """REFERENCES.md 4c: Tsf 4 C, G 40 C/km, base vs water depth (0.5 m)."""
    assert stability_base_depth_m(water_depth_m, 4.0, 40.0) == pytest.approx(base_m, abs=0.5)


def test_temperature_and_pressure_at_base():
    """REFERENCES.md 4c row 1: base at 11.74 C and 9.749 MPa; the base lies on the boundary."""
    base_m = stability_base_depth_m(800.0, 4.0, 50.0)
    temperature_c = 4.0 + 50.0 * base_m / 1000.0
    pressure_mpa = 0.101325 + 1030.0 * 9.81 * (800.0 + base_m) / 1e6
    assert temperature_c == pytest.approx(11.74, abs=0.01)
    assert pressure_mpa == pytest.approx(9.749, abs=0.001)
    assert phase_temperature_k(pressure_mpa) == pytest.approx(temperature_c + 273.15, abs=1e-6)


def test_no_stability_zone_in_warm_shallow_water():
    """REFERENCES.md 4c: 500 m water at 8 C has no zone (T_eq at seafloor 5.52 C) -> NaN."""
    assert math.isnan(stability_base_depth_m(500.0, 8.0, 40.0))
    seafloor_pressure = 0.101325 + 1030.0 * 9.81 * 500.0 / 1e6
    assert phase_temperature_k(seafloor_pressure) - 273.15 == pytest.approx(5.52, abs=0.005)
    assert math.isnan(gradient_for_base_c_per_km(100.0, 500.0, 8.0))


@pytest.mark.parametrize("water_depth_m, seafloor_c, gradient", [(800, 4.0, 50), (1300, 3.0, 35), (3000, 1.5, 60)])
def test_gradient_for_base_round_trip(water_depth_m, seafloor_c, gradient):
    """Defining property: the gradient found for a base depth puts the base back at that depth."""
    base_m = stability_base_depth_m(water_depth_m, seafloor_c, gradient)
    assert gradient_for_base_c_per_km(base_m, water_depth_m, seafloor_c) == pytest.approx(gradient, rel=1e-8)
    wanted_m = 250.0
    found = gradient_for_base_c_per_km(wanted_m, water_depth_m, seafloor_c)
    assert stability_base_depth_m(water_depth_m, seafloor_c, found) == pytest.approx(wanted_m, abs=1e-6)


def test_zero_gradient_and_bad_depth_give_nan():
    """No positive gradient, no base: NaN rather than a number."""
    assert math.isnan(stability_base_depth_m(1000.0, 4.0, 0.0))
    assert math.isnan(gradient_for_base_c_per_km(0.0, 1000.0, 4.0))
