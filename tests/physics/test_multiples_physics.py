"""Multiple timing, polarity, dip ratio and the seafloor reflection coefficient against REFERENCES.md
items 1, 2 and 10 (Backus 1959; Sheriff & Geldart 1995, from memory; Warner 1990, from memory)."""
import numpy as np
import pytest

from pitfalls.physics.multiples import (
    dipping_seafloor_multiple_twt_ms,
    interbed_multiple_twt_ms,
    interbed_polarity,
    peak_amplitude,
    peg_leg_polarity,
    peg_leg_twt_ms,
    seafloor_dip_angle_deg,
    seafloor_multiple_band_twt_ms,
    seafloor_multiple_polarity,
    seafloor_multiple_twt_ms,
    seafloor_reflection_coefficient,
    seafloor_reflection_coefficient_from_peg_leg,
    time_dip_ratio,
)

EXACT_MS = 1e-6  # REFERENCES.md item 1: flat timing is exact arithmetic, 1e-9 s


def test_flat_seafloor_multiples():
    """REFERENCES.md item 1 check values: t_sf = 800 ms -> 1600, 2400, 3200 ms."""
    times = [float(seafloor_multiple_twt_ms(800.0, n)) for n in (2, 3, 4)]
    assert times == pytest.approx([1600.0, 2400.0, 3200.0], abs=EXACT_MS)


def test_peg_legs_and_interbed():
    """REFERENCES.md item 1: t_sf 800, t_r 1300 -> peg-legs 2100, 2900; t1 1200, t2 1500 -> interbed 1800."""
    assert float(peg_leg_twt_ms(1300.0, 800.0, 1)) == pytest.approx(2100.0, abs=EXACT_MS)
    assert float(peg_leg_twt_ms(1300.0, 800.0, 2)) == pytest.approx(2900.0, abs=EXACT_MS)
    assert float(interbed_multiple_twt_ms(1200.0, 1500.0)) == pytest.approx(1800.0, abs=EXACT_MS)


def water_layer_response(r, n):
    """REFERENCES.md item 10 closed form for a single water layer: U = R z / (1 + R z)."""
    return np.array([0.0] + [r * (-r) ** (k - 1) for k in range(1, n)])


def test_seafloor_multiple_polarity_follows_the_water_layer_train():
    """REFERENCES.md items 1 and 10 (Backus 1959): train +0.3, -0.09, +0.027, -0.0081 for R = 0.3;
    the event at n t_sf has sign (-1)^(n-1) relative to the primary."""
    train = water_layer_response(0.3, 6)
    np.testing.assert_allclose(train[1:5], [0.3, -0.09, 0.027, -0.0081], atol=1e-12)
    for n in (2, 3, 4, 5):
        assert seafloor_multiple_polarity(n) == np.sign(train[n]) * np.sign(train[1])
    assert seafloor_multiple_polarity(2) == -1 and seafloor_multiple_polarity(3) == 1


def test_peg_leg_polarity_and_amplitude_from_the_layered_check_row():
    """REFERENCES.md item 10 row r = [0.4, 0.0, -0.2]: primary of the deep reflector U[3] part
    0.84 x (-0.2) = -0.168; first peg-leg 2 (-0.4)(-0.168) = +0.1344 in U[4] = 0.1088 + 0.4^4.
    The peg-leg is reversed (j = 1) and its ratio -0.8 = -2 R gives R = 0.4 back (no spreading in
    the recursion, i.e. gain exponent 1)."""
    primary = 0.84 * -0.2
    peg_leg = 0.1088 + 0.4 ** 4
    assert np.sign(peg_leg / primary) == peg_leg_polarity(1) == -1
    assert peg_leg_polarity(2) == 1
    recovered = seafloor_reflection_coefficient_from_peg_leg(peg_leg / primary, 4.0, 3.0, gain_exponent=1.0,
                                                             round_trips=1)
    assert float(recovered) == pytest.approx(0.4, abs=1e-9)


def test_interbed_polarity():
    """REFERENCES.md item 1: interbed amplitude R2 (-R1) R2, so relative to the lower primary the
    sign is -sign(R1) sign(R2), whatever the display polarity."""
    assert interbed_polarity(1, 1) == -1
    assert interbed_polarity(-1, 1) == 1
    assert interbed_polarity(-1, -1) == -1  # same section with flipped display


@pytest.mark.parametrize(
    "xi_deg, t1_s, t2_s, t3_s",
    [(2.0, 0.46533, 0.93009, 1.39371), (5.0, 1.16208, 2.31531, 3.45092), (10.0, 2.31531, 4.56027, 6.66667)],
)
def test_dipping_seafloor_times(xi_deg, t1_s, t2_s, t3_s):
    """REFERENCES.md item 1 table (L = 10 km, v = 1500 m/s; 5 decimals in s -> 0.01 ms)."""
    t1_ms = 2 * 10000.0 / 1500.0 * np.sin(np.radians(xi_deg)) * 1000.0
    assert t1_ms == pytest.approx(t1_s * 1000.0, abs=0.01)
    assert float(dipping_seafloor_multiple_twt_ms(t1_ms, xi_deg, 2)) == pytest.approx(t2_s * 1000.0, abs=0.01)
    assert float(dipping_seafloor_multiple_twt_ms(t1_ms, xi_deg, 3)) == pytest.approx(t3_s * 1000.0, abs=0.01)


def test_time_dip_ratio_under_a_dipping_seafloor():
    """REFERENCES.md item 1: xi = 3 deg, v = 1500: seafloor 69.78 ms/km, first multiple 139.37 ms/km
    (x 1.9973), second 208.58 ms/km (x 2.9890). The dip angle is recovered from the seafloor's
    time-dip (12.5 m traces) and the Theil-Sen ratio of the predicted multiples is the table's."""
    distance_m = 5000.0 + 12.5 * np.arange(200)
    seafloor_ms = 2 * distance_m / 1500.0 * np.sin(np.radians(3.0)) * 1000.0
    assert np.gradient(seafloor_ms)[0] / 12.5 * 1000.0 == pytest.approx(69.78, abs=0.01)
    angle = seafloor_dip_angle_deg(seafloor_ms, 12.5, 1500.0)
    np.testing.assert_allclose(angle, 3.0, atol=1e-9)
    first = dipping_seafloor_multiple_twt_ms(seafloor_ms, angle, 2)
    second = dipping_seafloor_multiple_twt_ms(seafloor_ms, angle, 3)
    assert time_dip_ratio(first, seafloor_ms) == pytest.approx(139.37 / 69.78, abs=2e-4)
    assert time_dip_ratio(second, seafloor_ms) == pytest.approx(208.58 / 69.78, abs=2e-4)


def test_band_between_dipping_and_same_trace_rules():
    """REFERENCES.md item 1 practical note: at t_sf = 1.2 s and xi = 8 deg the first multiple arrives
    about 23 ms before 2 t_sf (2 t_sf (1 - cos xi) = 23.35 ms); the band spans both predictions."""
    low, high = seafloor_multiple_band_twt_ms(np.array([1200.0]), np.array([8.0]), 2)
    assert float(high[0]) == pytest.approx(2400.0, abs=EXACT_MS)
    assert float(high[0] - low[0]) == pytest.approx(23.35, abs=0.01)
    low, high = seafloor_multiple_band_twt_ms(np.array([1200.0]), np.array([0.0]), 2)
    assert float(low[0]) == float(high[0]) == pytest.approx(2400.0, abs=EXACT_MS)


def test_small_dip_rule_error():
    """REFERENCES.md item 1 tolerance: the n x t_sf rule errs by 1 - sin(n xi)/(n sin xi), < 0.4 %
    for the first multiple below 5 deg."""
    same = seafloor_multiple_twt_ms(1000.0, 2)
    dipping = dipping_seafloor_multiple_twt_ms(1000.0, 4.99, 2)
    assert 0 < 1 - dipping / same < 0.004


@pytest.mark.parametrize(
    "primary, multiple, t_sf_ms, expected",
    [(1.666667e-4, -2.083333e-5, 1000.0, 0.25), (8.333333e-5, -1.041667e-5, 2000.0, 0.25)],
)
def test_reflection_coefficient_from_multiple_primary_ratio(primary, multiple, t_sf_ms, expected):
    """REFERENCES.md item 2 table (S = 1, v = 1500, spherical spreading, no gain): R = 0.25
    within 1e-6 (exact synthetic tolerance; the table gives 7 digits)."""
    recovered = seafloor_reflection_coefficient(multiple / primary, 2 * t_sf_ms, t_sf_ms, gain_exponent=0.0)
    assert float(recovered) == pytest.approx(expected, abs=1e-6)


@pytest.mark.parametrize("r, ratio", [(0.1, -0.05), (0.3, -0.15), (0.5, -0.25)])
def test_reflection_coefficient_ratios_and_gain_forms(r, ratio):
    """REFERENCES.md item 2: A_m/A_p = -0.050 / -0.150 / -0.250 for R = 0.1 / 0.3 / 0.5 without gain;
    with a t-gain R = -A_m/A_p, with a t^2 gain R = -A_m/(2 A_p) (data ratio scaled accordingly)."""
    assert float(seafloor_reflection_coefficient(ratio, 2000.0, 1000.0, 0.0)) == pytest.approx(r, abs=1e-12)
    t_gain_ratio = ratio * 2.0  # amplitudes x t: the multiple at 2 t gains twice as much
    assert float(seafloor_reflection_coefficient(t_gain_ratio, 2000.0, 1000.0, 1.0)) == pytest.approx(-t_gain_ratio, abs=1e-12)
    t2_gain_ratio = ratio * 4.0
    assert float(seafloor_reflection_coefficient(t2_gain_ratio, 2000.0, 1000.0, 2.0)) == pytest.approx(-t2_gain_ratio / 2, abs=1e-12)
    assert float(seafloor_reflection_coefficient(t2_gain_ratio, 2000.0, 1000.0, 2.0)) == pytest.approx(r, abs=1e-12)


def test_second_multiple_gives_the_same_reflection_coefficient():
    """REFERENCES.md item 1 train (R = 0.3: third term +0.027 at 3 t_sf, no spreading -> gain 1)."""
    assert float(seafloor_reflection_coefficient(0.027 / 0.3, 3.0, 1.0, 1.0, multiplier=3)) == pytest.approx(0.3, abs=1e-12)


def test_wrong_sign_multiple_gives_negative_coefficient():
    """REFERENCES.md item 2: a multiple with the wrong sign of A_m is not a simple seafloor multiple."""
    assert float(seafloor_reflection_coefficient(+0.15, 2000.0, 1000.0, 0.0)) < 0


def ricker(frequency_hz, t_ms):
    """REFERENCES.md item 9 formula."""
    a = (np.pi * frequency_hz * np.asarray(t_ms) / 1000.0) ** 2
    return (1 - 2 * a) * np.exp(-a)


def test_peak_amplitude_on_sample_and_between_samples():
    """REFERENCES.md item 9 (25 Hz Ricker, dt 2 ms): w(0) = 1.000000, w(4 ms) = 0.727177. A peak on a
    sample is read exactly; a reversed peak half a sample off is read by the parabola within 1 %."""
    t_ms = np.arange(0, 400, 2.0)
    trace_on = ricker(25.0, t_ms - 200.0)
    trace_off = -ricker(25.0, t_ms - 201.0)
    np.testing.assert_allclose(trace_on[[100, 102]], [1.0, 0.727177], atol=1e-6)
    amplitude, peak_ms = peak_amplitude(np.vstack([trace_on, trace_off]), 0.0, 2.0, np.array([196.0, 204.0]), 6.0)
    assert amplitude[0] == pytest.approx(1.0, abs=1e-12) and peak_ms[0] == pytest.approx(200.0, abs=1e-9)
    assert amplitude[1] == pytest.approx(-1.0, rel=0.01) and peak_ms[1] == pytest.approx(201.0, abs=0.2)


def test_time_dip_ratio_ignores_a_few_bad_picks():
    """Defining property of the Theil-Sen slope: with 10 % wild picks the slope of 2 t_sf on t_sf is 2."""
    rng = np.random.default_rng(5)
    seafloor = np.linspace(800.0, 900.0, 150)
    pick = 2 * seafloor
    bad = rng.choice(150, 15, replace=False)
    pick[bad] += rng.normal(0, 80, 15)
    assert time_dip_ratio(pick, seafloor) == pytest.approx(2.0, abs=0.02)


def test_true_seafloor_dip_from_both_directions():
    """A plane seafloor dipping 0.06 m/m along the inline and 0.045 m/m across it: on the inline the time
    dip alone gives asin(0.06) = 3.44 deg, the true dip asin(0.075) = 4.30 deg (sin(xi) = (v/2)|grad t|,
    zero-offset time-dip of a plane; analytic)."""
    from pitfalls.physics.multiples import seafloor_dip_angle_deg
    spacing_m, water_m_s = 25.0, 1500.0
    along = 800.0 + 0.06 * spacing_m * np.arange(50)
    twt = 2000.0 * along / water_m_s
    across_ms_per_m = np.full(50, 2000.0 * 0.045 / water_m_s)
    inline_only = seafloor_dip_angle_deg(twt, spacing_m, water_m_s)
    true_dip = seafloor_dip_angle_deg(twt, spacing_m, water_m_s, across_ms_per_m=across_ms_per_m)
    assert np.allclose(inline_only, np.degrees(np.arcsin(0.06)))
    assert np.allclose(true_dip, np.degrees(np.arcsin(0.075)))
