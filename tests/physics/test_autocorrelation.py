"""Windowed normalised autocorrelation against REFERENCES.md item 8 and scipy.signal.correlate."""
import numpy as np
import pytest
from scipy.signal import correlate, correlation_lags

from pitfalls.physics.autocorrelation import (
    normalised_autocorrelation,
    periodicity_strength,
    windowed_autocorrelation,
)


def ricker(frequency_hz, dt_ms, duration_ms=128.0):
    """Ricker wavelet, REFERENCES.md item 9 formula."""
    t_s = np.arange(-duration_ms / 2, duration_ms / 2 + dt_ms / 2, dt_ms) / 1000.0
    a = (np.pi * frequency_hz * t_s) ** 2
    return (1 - 2 * a) * np.exp(-a)


def scipy_rho(x):
    """Reference: non-negative lags of scipy.signal.correlate(x, x, 'full') over the zero lag."""
    full = correlate(x, x, mode="full")
    lags = correlation_lags(x.size, x.size, mode="full")
    return full[lags >= 0] / full[lags == 0][0]


def test_three_sample_check_values():
    """REFERENCES.md item 8: x = [1, 2, 3] -> normalised 1, 0.5714, 0.2143 (4 decimals given)."""
    rho = normalised_autocorrelation(np.array([1.0, 2.0, 3.0]))
    np.testing.assert_allclose(rho, [1.0, 8 / 14, 3 / 14], atol=1e-12)
    np.testing.assert_allclose(rho, [1.0, 0.5714, 0.2143], atol=5e-5)


def test_matches_scipy_correlate_on_random_traces():
    """Reference library scipy.signal.correlate (full mode), rtol 1e-9 as REFERENCES.md item 8 advises."""
    rng = np.random.default_rng(7)
    traces = rng.standard_normal((5, 777))
    rho = normalised_autocorrelation(traces)
    for row, trace in zip(rho, traces):
        np.testing.assert_allclose(row, scipy_rho(trace), rtol=1e-9, atol=1e-9)


def test_reverberation_spike_train_alternates_with_the_period():
    """REFERENCES.md item 8: spikes (-R)^k every P = 50 samples, R = 0.5, N = 1000 ->
    rho at 0, P, 2P, 3P = 1, -0.5, 0.25, -0.125 and 0 at lag 25 (1e-12)."""
    x = np.zeros(1000)
    x[::50] = (-0.5) ** np.arange(20)
    rho = normalised_autocorrelation(x, max_lag=200)
    np.testing.assert_allclose(rho[[0, 50, 100, 150]], [1.0, -0.5, 0.25, -0.125], atol=1e-12)
    assert abs(rho[25]) < 1e-12
    np.testing.assert_allclose(rho, scipy_rho(x)[:201], rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize("reflection_coefficient", [0.1, 0.3, 0.5])
def test_peg_leg_train_trough_to_peak_ratio_is_minus_2r_over_1_plus_r_squared(reflection_coefficient):
    """The water-layer train of a deeper reflector has coefficients (k + 1)(-R)^k, the series of
    1 / (1 + R z)^2 (REFERENCES.md item 10: peg-legs -2 r_1, +3 r_1^2, ...; the inverse of the Backus
    1959 filter, verified there). Summing the series gives rho(P) = -2R / (1 + R^2): -0.5505 at
    R = 0.3, not -R. Spike train every P = 40 samples, long enough for the tail to vanish (1e-9)."""
    r = reflection_coefficient
    x = np.zeros(40 * 120)
    k = np.arange(120)
    x[::40] = (k + 1) * (-r) ** k
    rho = normalised_autocorrelation(x, max_lag=40)
    assert rho[40] == pytest.approx(-2 * r / (1 + r * r), abs=1e-9)
    assert rho[40] == pytest.approx(scipy_rho(x)[40], abs=1e-9)
    if r == 0.3:
        assert rho[40] == pytest.approx(-0.5505, abs=5e-5)


def test_convolved_reverberation_example():
    """REFERENCES.md item 8 convolved example (N = 1000, 25 Hz Ricker, dt 2 ms, noise 0.01 from
    default_rng(1)): largest |rho| between lags 40 and 400 is at lag 150, value -0.365 +/- 0.05."""
    reflectivity = np.zeros(1000)
    reflectivity[100::150] = (-0.4) ** np.arange(reflectivity[100::150].size)
    reflectivity[[230, 420, 610]] += [0.15, -0.10, 0.12]
    x = np.convolve(reflectivity, ricker(25.0, 2.0), mode="same")
    x = x + 0.01 * np.random.default_rng(1).standard_normal(x.size)
    rho = normalised_autocorrelation(x, max_lag=400)
    lag = 40 + int(np.argmax(np.abs(rho[40:401])))
    assert lag == 150
    assert rho[lag] == pytest.approx(-0.365, abs=0.05)
    np.testing.assert_allclose(rho, scipy_rho(x)[:401], rtol=1e-9, atol=1e-9)


def test_windowed_autocorrelation_is_scipy_on_each_window():
    """Each trace's window, cut at its own start, equals scipy.signal.correlate of that slice (1e-9);
    windows that do not fit give NaN rows."""
    rng = np.random.default_rng(3)
    data = rng.standard_normal((4, 600)).astype(np.float32)
    start = np.array([10.0, 200.0, np.nan, 500.0])
    rho = windowed_autocorrelation(data, start, window_samples=300, max_lag=120)
    for row in (0, 1):
        window = data[row, int(start[row]):int(start[row]) + 300].astype(float)
        np.testing.assert_allclose(rho[row], scipy_rho(window)[:121], rtol=1e-9, atol=1e-9)
    assert np.isnan(rho[2]).all() and np.isnan(rho[3]).all()


def test_periodicity_strength_reads_the_reversed_peak():
    """On the REFERENCES.md item 8 spike train the strength at P = 50 is R = 0.5 (the sign reversal
    of the free surface); a same-sign train (R = -0.5 gives +0.5 at P) has strength 0."""
    x = np.zeros((2, 1000))
    x[0, ::50] = (-0.5) ** np.arange(20)
    x[1, ::50] = 0.5 ** np.arange(20)
    rho = normalised_autocorrelation(x, max_lag=100)
    strength, lag = periodicity_strength(rho, np.array([52.0, 52.0]), half_width_samples=3)
    assert strength[0] == pytest.approx(0.5, abs=1e-9)  # 20-spike train: truncation 0.25**20
    assert lag[0] == 50
    assert strength[1] == pytest.approx(0.0, abs=1e-12)  # only FFT rounding left
