"""Hubbert (1953) tilt and the overburden time tilt, against REFERENCES items 6a and 6b."""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls.physics.hydrodynamics import (
    flat_reflector_twt_ms,
    hubbert_amplification,
    hubbert_head_gradient_m_per_km,
    hubbert_tilt_m_per_km,
    overburden_time_factor,
    overburden_time_shift_ms,
    tilt_angle_deg,
    twt_tilt_ms_per_km,
    velocity_anomaly_delay_ms,
)

# REFERENCES item 6a table (Hubbert 1953): rho_w, rho_h, dh/dx m/km, amplification, tilt m/km,
# angle deg, TWT tilt at 2500 m/s ms/km. The table prints 2 to 4 decimals.
HUBBERT_ROWS = [
    (1050, 800, 1, 4.200, 4.20, 0.241, 3.36),
    (1050, 800, 5, 4.200, 21.00, 1.203, 16.80),
    (1050, 700, 1, 3.000, 3.00, 0.172, 2.40),
    (1050, 250, 1, 1.3125, 1.31, 0.075, 1.05),
    (1000, 800, 1, 5.000, 5.00, 0.286, 4.00),
]


@pytest.mark.parametrize("rho_w, rho_h, head, amplification, tilt, angle, twt", HUBBERT_ROWS)
def test_hubbert_table(rho_w, rho_h, head, amplification, tilt, angle, twt):
    """Hubbert (1953) tan(theta) = rho_w / (rho_w - rho_h) dh/dx: REFERENCES item 6a table to its
    printed decimals; TWT tilt = 2 (depth tilt) / v at 2500 m/s."""
    assert hubbert_amplification(rho_w, rho_h) == pytest.approx(amplification, abs=5e-4)
    tilt_m_per_km = hubbert_tilt_m_per_km(head, rho_w, rho_h)
    assert tilt_m_per_km == pytest.approx(tilt, abs=5e-3)
    assert tilt_angle_deg(tilt_m_per_km) == pytest.approx(angle, abs=5e-4)
    assert twt_tilt_ms_per_km(tilt_m_per_km, 2500.0) == pytest.approx(twt, abs=5e-3)


@pytest.mark.parametrize("rho_w, rho_h, head, amplification, tilt, angle, twt", HUBBERT_ROWS)
def test_head_gradient_inverts_tilt(rho_w, rho_h, head, amplification, tilt, angle, twt):
    """Defining property: the head gradient recovered from the tilt is the one that made it (1e-12)."""
    tilt_m_per_km = hubbert_tilt_m_per_km(head, rho_w, rho_h)
    assert hubbert_head_gradient_m_per_km(tilt_m_per_km, rho_w, rho_h) == pytest.approx(head, rel=1e-12)


def test_gas_tilts_less_than_oil():
    """Hubbert (1953), REFERENCES item 6a: for the same flow a gas contact tilts less than an oil one,
    and static water (dh/dx = 0) leaves the contact horizontal."""
    assert hubbert_tilt_m_per_km(1.0, 1050, 250) < hubbert_tilt_m_per_km(1.0, 1050, 800)
    assert hubbert_tilt_m_per_km(0.0, 1050, 800) == 0.0


# REFERENCES item 6b table: v_w, v_s, factor, seafloor +100 ms -> horizon ms, seafloor 50 ms/km -> horizon ms/km
OVERBURDEN_ROWS = [
    (1500, 2000, 0.2500, 25.00, 12.50),
    (1500, 2500, 0.4000, 40.00, 20.00),
    (1500, 3000, 0.5000, 50.00, 25.00),
    (1480, 1800, 0.1778, 17.78, 8.89),
]


@pytest.mark.parametrize("v_w, v_s, factor, shift, dip", OVERBURDEN_ROWS)
def test_overburden_table(v_w, v_s, factor, shift, dip):
    """delta_t_h = delta_t_sf (1 - v_w / v_s): REFERENCES item 6b table; exact rows to 1e-9, the
    rounded 1480/1800 row to its printed decimals."""
    exact = v_w == 1500  # the 1480/1800 row is printed rounded
    tolerance = 1e-9 if exact else 5e-3
    assert overburden_time_factor(v_w, v_s) == pytest.approx(factor, abs=1e-9 if exact else 5e-5)
    assert overburden_time_shift_ms(100.0, v_w, v_s) == pytest.approx(shift, abs=tolerance)
    assert overburden_time_shift_ms(50.0, v_w, v_s) == pytest.approx(dip, abs=tolerance)


def test_overburden_worked_example():
    """REFERENCES item 6b worked example (1e-9): Z = 2500 m, v_w = 1500, v_s = 2500; D = 500 m gives
    t_sf 666.7 ms, t_h 2266.7 ms; D = 800 m gives 1066.7 and 2426.7 ms; delta_t_h = 0.4 x 400 ms."""
    water_depth_m = np.array([500.0, 800.0])
    seafloor_twt_ms = 2000.0 * water_depth_m / 1500.0
    horizon_twt_ms = flat_reflector_twt_ms(2500.0, water_depth_m, 1500.0, 2500.0)
    np.testing.assert_allclose(seafloor_twt_ms, [2000.0 / 3.0, 3200.0 / 3.0], atol=1e-9)
    np.testing.assert_allclose(horizon_twt_ms, [6800.0 / 3.0, 7280.0 / 3.0], atol=1e-9)
    assert seafloor_twt_ms[1] - seafloor_twt_ms[0] == pytest.approx(400.0, abs=1e-9)
    assert horizon_twt_ms[1] - horizon_twt_ms[0] == pytest.approx(160.0, abs=1e-9)
    predicted = overburden_time_shift_ms(seafloor_twt_ms[1] - seafloor_twt_ms[0], 1500.0, 2500.0)
    assert predicted == pytest.approx(horizon_twt_ms[1] - horizon_twt_ms[0], abs=1e-9)


def test_overburden_relation_holds_everywhere():
    """Defining property (REFERENCES item 6b derivation): t_h - t_sf (1 - v_w/v_s) is the constant
    2 Z / v_s for any seafloor, to 1e-9."""
    water_depth_m = np.random.default_rng(3).uniform(100.0, 2000.0, 50)
    horizon_twt_ms = flat_reflector_twt_ms(3000.0, water_depth_m, 1500.0, 2200.0)
    seafloor_twt_ms = 2000.0 * water_depth_m / 1500.0
    residual = horizon_twt_ms - seafloor_twt_ms * overburden_time_factor(1500.0, 2200.0)
    np.testing.assert_allclose(residual, 2000.0 * 3000.0 / 2200.0, atol=1e-9)


def test_velocity_anomaly_delay():
    """REFERENCES item 6b: delta_t = 2 h (1/v_a - 1/v_b); 100 m of 2000 m/s in 2500 m/s = +20 ms (push-down)."""
    assert velocity_anomaly_delay_ms(100.0, 2000.0, 2500.0) == pytest.approx(20.0, abs=1e-9)
    assert velocity_anomaly_delay_ms(100.0, 2500.0, 2000.0) == pytest.approx(-20.0, abs=1e-9)
