"""The FFT analytic signal and the Theil-Sen slope, checked against scipy's own (test-only oracles)."""
import numpy as np
import pytest
from scipy.signal import hilbert
from scipy.stats import theilslopes

from pitfalls.physics.envelope import analytic_signal, envelope
from pitfalls.physics.robust import theil_sen_slope


@pytest.mark.parametrize("n_samples", [255, 256])
@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_analytic_signal_matches_scipy_signal_hilbert(n_samples, dtype):
    """Reference: scipy.signal.hilbert (the same frequency-domain construction, Marple 1999)."""
    rng = np.random.default_rng(11)
    traces = rng.standard_normal((7, n_samples)).astype(dtype)
    np.testing.assert_array_equal(analytic_signal(traces, axis=1), hilbert(traces, axis=1))
    np.testing.assert_array_equal(analytic_signal(traces.T, axis=0), hilbert(traces.T, axis=0))


def test_envelope_of_a_modulated_cosine_is_its_modulation():
    """Analytic: the envelope of a(t) cos(w t) with a slow a(t) is a(t) (Taner, Koehler & Sheriff 1979)."""
    t = np.arange(2000) / 1000.0
    modulation = 1.0 + 0.5 * np.sin(2 * np.pi * 1.0 * t)
    trace = modulation * np.cos(2 * np.pi * 50.0 * t)
    middle = slice(200, 1800)  # away from the ends, where the periodic FFT wraps
    np.testing.assert_allclose(envelope(trace)[middle], modulation[middle], atol=1e-3)


def test_analytic_signal_refuses_complex_input():
    with pytest.raises(ValueError):
        analytic_signal(np.ones(8, dtype=complex))


def test_theil_sen_slope_matches_scipy_stats_theilslopes():
    """Reference: scipy.stats.theilslopes (Sen 1968), slope only; ties in x included."""
    rng = np.random.default_rng(3)
    x = np.round(rng.uniform(0, 50, 120))
    y = 0.7 * x + rng.normal(0, 1, x.size)
    y[:10] += 80.0  # outliers the median of slopes ignores
    assert theil_sen_slope(x, y) == theilslopes(y, x).slope
    assert theil_sen_slope(x, y) == pytest.approx(0.7, abs=0.05)


def test_theil_sen_slope_without_distinct_x_is_nan():
    assert np.isnan(theil_sen_slope(np.ones(5), np.arange(5.0)))
