"""Time-depth conversion: the closed form of a linear velocity gradient against numerical integration.

Two-way time below the seafloor is 2 * integral dz / V(z) (definition; REFERENCES item 12 uses the
same integral for Hamilton's function). scipy.integrate.quad is the reference.
"""
import numpy as np
import pytest
from scipy.integrate import quad

from pitfalls.physics.velocity import VelocityModel

MODEL = VelocityModel(water_velocity_m_s=1500.0, seafloor_velocity_m_s=1600.0, gradient_per_s=0.8, max_velocity_m_s=3000.0)


@pytest.mark.parametrize("depth_m", [10.0, 250.0, 1000.0, 1750.0, 3000.0])
def test_twt_matches_integral(depth_m):
    expected_ms = 2000.0 * quad(lambda z: 1.0 / MODEL.interval_velocity_m_s(z), 0.0, depth_m, points=[1750.0])[0]
    assert MODEL.twt_below_seafloor_ms(depth_m) == pytest.approx(expected_ms, rel=1e-9)


def test_round_trip_and_water():
    depths = np.linspace(0, 4000, 41)
    np.testing.assert_allclose(MODEL.depth_below_seafloor_m(MODEL.twt_below_seafloor_ms(depths)), depths, atol=1e-6)
    # 1000 ms of water at 1500 m/s is 750 m (definition of two-way time)
    assert MODEL.depth_m(1000.0, 1000.0) == pytest.approx(750.0)
    assert MODEL.twt_ms(750.0 + 100.0, 750.0) == pytest.approx(1000.0 + MODEL.twt_below_seafloor_ms(100.0))


def test_constant_velocity_limit():
    """With no gradient, the depth is V t / 2 (REFERENCES item 4c: 263.4 m at 1700 m/s is 309.9 ms)."""
    flat = VelocityModel(1500.0, 1700.0, 0.0, 4500.0)
    assert flat.twt_below_seafloor_ms(263.4) == pytest.approx(309.9, abs=0.05)


def test_overburden_push_down_matches_reference():
    """Flat reflector at 2500 m under 500 m and 800 m of water, sediment 2500 m/s, water 1500 m/s:
    2266.7 ms and 2426.7 ms (REFERENCES item 6b worked example, derived there, common practice)."""
    constant = VelocityModel(1500.0, 2500.0, 0.0, 2500.0)
    assert constant.twt_ms(2500.0, 500.0) == pytest.approx(2266.67, abs=0.01)
    assert constant.twt_ms(2500.0, 800.0) == pytest.approx(2426.67, abs=0.01)
