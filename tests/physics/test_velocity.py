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


# --- the linear function against its closed form ---------------------------------------------------
@pytest.mark.parametrize("depth_m", [50.0, 500.0, 1500.0])
def test_linear_function_matches_the_closed_form(depth_m):
    """v(z) = v0 + k z gives t = (2/k) ln(1 + k z / v0) (closed form of integral dz / v; from memory,
    the standard linear-velocity-function result). Uncapped here: the cap is far below."""
    v0, k = 1600.0, 0.8
    model = VelocityModel(1500.0, v0, k, 1.0e6)
    expected_ms = 1000.0 * (2.0 / k) * np.log1p(k * depth_m / v0)
    assert model.twt_below_seafloor_ms(depth_m) == pytest.approx(expected_ms, rel=1e-12)


# --- tables ------------------------------------------------------------------------------------
def test_interval_table_is_layer_by_layer_definition():
    """Interval velocity V_i from t_i to t_i+1: z = sum V_i dt_i / 2 (definition of interval velocity)."""
    table = VelocityModel.from_table(1500.0, [0.0, 200.0], [1600.0, 2000.0], "interval", "test")
    assert table.depth_below_seafloor_m(200.0) == pytest.approx(160.0)
    assert table.depth_below_seafloor_m(300.0) == pytest.approx(160.0 + 100.0)  # 2000 m/s goes on below
    assert table.twt_below_seafloor_ms(260.0) == pytest.approx(300.0)
    np.testing.assert_allclose(table.interval_velocity_m_s([0.0, 159.0, 161.0, 5000.0]), [1600, 1600, 2000, 2000])
    assert table.depth_m(1300.0, 1000.0) == pytest.approx(750.0 + 260.0)  # water 1000 ms at 1500 m/s is 750 m
    assert table.twt_ms(750.0 + 260.0, 750.0) == pytest.approx(1300.0)


def test_first_interval_velocity_applies_from_the_seafloor():
    table = VelocityModel.from_table(1500.0, [100.0], [1800.0], "interval", "test")
    assert table.depth_below_seafloor_m(100.0) == pytest.approx(90.0)
    assert table.depth_below_seafloor_m(200.0) == pytest.approx(180.0)


def test_interval_table_sampled_from_hamilton_gives_the_published_check_times():
    """An interval-velocity table sampled every 1 m from Hamilton's (1979) V(D) reproduces the check
    two-way times 127.1, 245.5, 357.0, 564.5 ms at 100, 200, 300, 500 m below the seafloor (REFERENCES
    item 12, integrated check values; tolerance 0.1 ms as stated there)."""
    depth_km = np.arange(0.0, 0.6, 0.001)
    velocity_m_s = 1000.0 * (1.511 + 1.304 * depth_km - 0.741 * depth_km ** 2 + 0.257 * depth_km ** 3)
    mid_velocity = 1000.0 * (1.511 + 1.304 * (depth_km + 0.0005) - 0.741 * (depth_km + 0.0005) ** 2
                             + 0.257 * (depth_km + 0.0005) ** 3)
    twt_ms = np.concatenate([[0.0], np.cumsum(2000.0 * 1.0 / mid_velocity[:-1])])
    table = VelocityModel.from_table(1500.0, twt_ms, mid_velocity, "interval", "test")
    np.testing.assert_allclose(table.twt_below_seafloor_ms([100.0, 200.0, 300.0, 500.0]),
                               [127.1, 245.5, 357.0, 564.5], atol=0.1)
    assert velocity_m_s[100] == pytest.approx(1634.0, abs=1.0)  # REFERENCES item 12: V at 100 m


def test_average_table_reproduces_the_hamilton_check_depths():
    """Average velocities 1573, 1629, 1681, 1771 m/s at 127.1, 245.5, 357.0, 564.5 ms put the knots at
    100, 200, 300, 500 m (REFERENCES item 12; z = V_avg t / 2, within the table's rounding of 0.2 m)."""
    table = VelocityModel.from_table(1500.0, [127.1, 245.5, 357.0, 564.5], [1573.0, 1629.0, 1681.0, 1771.0],
                                     "average", "test")
    np.testing.assert_allclose(table.depth_below_seafloor_m([127.1, 245.5, 357.0, 564.5]),
                               [100.0, 200.0, 300.0, 500.0], atol=0.2)
    depths = np.linspace(0.0, 3000.0, 61)
    np.testing.assert_allclose(table.depth_below_seafloor_m(table.twt_below_seafloor_ms(depths)), depths, atol=1e-6)


def test_linear_table_converges_on_the_closed_form():
    """A table of interval velocities sampled from v0 + k z every 2 ms converges on the closed form."""
    v0, k = 1700.0, 0.6
    twt_ms = np.arange(0.0, 2000.0, 2.0)
    depth_m = v0 * np.expm1(k * twt_ms / 2000.0) / k  # z = v0 (e^(k t/2) - 1) / k (closed form, from memory)
    interval = 2000.0 * np.diff(depth_m) / np.diff(twt_ms)
    table = VelocityModel.from_table(1500.0, twt_ms[:-1], interval, "interval", "test")
    linear = VelocityModel(1500.0, v0, k, 1.0e6)
    probe = np.array([10.0, 333.0, 1500.0])
    np.testing.assert_allclose(table.depth_below_seafloor_m(probe), linear.depth_below_seafloor_m(probe), rtol=1e-3)


@pytest.mark.parametrize("times, velocities, kind, words", [
    ([0.0, 100.0, 100.0], [1600.0, 1700.0, 1800.0], "interval", "entry 3: the times must increase"),
    ([0.0, 100.0], [1600.0, -5.0], "interval", "entry 2: velocities must be positive"),
    ([100.0, 200.0], [2000.0, 900.0], "average", "no depth increase"),
    ([], [], "interval", "same, non-zero length"),
])
def test_bad_tables_raise(times, velocities, kind, words):
    with pytest.raises(ValueError, match=words):
        VelocityModel.from_table(1500.0, times, velocities, kind, "test")


def test_description_names_the_function():
    assert "built-in function" in VelocityModel().describe()
    table = VelocityModel.from_table(1480.0, [0.0, 300.0], [1700.0, 2100.0], "interval", "vel.csv")
    text = table.describe()
    assert "1480 m/s" in text and "interval velocities" in text and "vel.csv" in text and "built-in" not in text
