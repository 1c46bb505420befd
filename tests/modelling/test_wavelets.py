"""Wavelets, noise and Gardner density against REFERENCES.md items 9 and 12 and bruges."""
import numpy as np
import pytest

from pitfalls.modelling.earth import gardner_density_kg_m3
from pitfalls.modelling.wavelets import add_noise, band_limited_noise, convolve_traces, ormsby, ricker


def test_ricker_check_values():
    """REFERENCES.md item 9 table (Ricker 1953 formula; f = 25 Hz, dt 2 ms, 128 ms -> 65 samples), 1e-6."""
    wavelet = ricker(25.0, 2.0, 128.0)
    assert len(wavelet) == 65
    centre = 32
    expected = [1.000000, 0.727177, 0.141794, -0.319440, -0.444935, -0.333691]
    np.testing.assert_allclose(wavelet[centre : centre + 11 : 2], expected, atol=1e-6, rtol=0)
    np.testing.assert_allclose(wavelet, wavelet[::-1], atol=0)  # zero phase: symmetric


@pytest.mark.parametrize("frequency_hz, dt_ms, duration_ms", [(25.0, 2.0, 128.0), (30.0, 4.0, 200.0), (12.5, 1.0, 256.0)])
def test_ricker_matches_bruges(frequency_hz, dt_ms, duration_ms):
    """bruges.filters.ricker (same formula, REFERENCES.md item 9: difference 0.0), 1e-12."""
    bruges = pytest.importorskip("bruges")
    reference = bruges.filters.ricker(duration_ms / 1000.0, dt_ms / 1000.0, frequency_hz)
    ours = ricker(frequency_hz, dt_ms, duration_ms)
    assert len(ours) == len(reference.amplitude)
    np.testing.assert_allclose(ours, reference.amplitude, atol=1e-12, rtol=0)


def test_ricker_spectrum_peaks_at_its_frequency():
    """REFERENCES.md item 9: amplitude-spectrum peak at f (25.000 Hz); zero-padded FFT, 0.1 Hz."""
    wavelet = ricker(25.0, 2.0, 128.0)
    n_fft = 2**16
    spectrum = np.abs(np.fft.rfft(wavelet, n_fft))
    frequencies_hz = np.fft.rfftfreq(n_fft, d=0.002)
    assert frequencies_hz[np.argmax(spectrum)] == pytest.approx(25.0, abs=0.1)


def test_ricker_landmarks():
    """REFERENCES.md item 9: side-lobe minimum -2 exp(-1.5) = -0.44626 at sqrt(1.5)/(pi f) = 15.594 ms (25 Hz)."""
    wavelet = ricker(25.0, 0.002, 128.0)
    time_ms = 0.002 * (np.arange(len(wavelet)) - len(wavelet) // 2)
    assert wavelet.min() == pytest.approx(-2 * np.exp(-1.5), abs=1e-6)
    assert abs(time_ms[np.argmin(wavelet)]) == pytest.approx(15.594, abs=0.002)


def test_ormsby_matches_bruges():
    """bruges.filters.ormsby (same trapezoid formula, normalised to its peak), 1e-9."""
    bruges = pytest.importorskip("bruges")
    reference = bruges.filters.ormsby(0.256, 0.002, [5.0, 10.0, 40.0, 60.0])
    np.testing.assert_allclose(ormsby(5.0, 10.0, 40.0, 60.0, 2.0, 256.0), reference.amplitude, atol=1e-9)


def test_ormsby_spectrum_is_the_trapezoid():
    """Defining property of the Ormsby filter: flat pass band f2-f3, nothing above f4 (long wavelet,
    so truncation ripple stays under 3 % of the pass band)."""
    wavelet = ormsby(5.0, 10.0, 40.0, 60.0, 1.0, 2000.0)
    spectrum = np.abs(np.fft.rfft(wavelet, 2**15))
    frequencies_hz = np.fft.rfftfreq(2**15, d=0.001)
    passband = spectrum[(frequencies_hz >= 12) & (frequencies_hz <= 38)]
    assert passband.std() / passband.mean() < 0.03
    assert spectrum[frequencies_hz >= 65].max() < 0.03 * passband.mean()
    slope = spectrum[np.argmin(np.abs(frequencies_hz - 50.0))] / passband.mean()
    assert slope == pytest.approx(0.5, abs=0.03)  # half way down the 40-60 Hz ramp


def test_convolution_places_a_spike_at_its_time():
    """A spike convolved with a centred wavelet gives the wavelet centred on the spike."""
    spikes = np.zeros((2, 200))
    spikes[0, 100] = 1.0
    spikes[1, 50] = -0.5
    wavelet = ricker(25.0, 4.0)
    out = convolve_traces(spikes, wavelet)
    assert np.argmax(out[0]) == 100 and out[0, 100] == pytest.approx(1.0)
    assert np.argmin(out[1]) == 50 and out[1, 50] == pytest.approx(-0.5)


def test_noise_is_seeded_band_limited_and_scaled():
    """Same seed, same noise; the requested signal-to-noise RMS ratio is met exactly; the noise
    spectrum peaks near the wavelet's frequency (within 3 Hz on 200 traces)."""
    wavelet = ricker(25.0, 4.0)
    first = band_limited_noise((200, 500), wavelet, seed=7)
    again = band_limited_noise((200, 500), wavelet, seed=7)
    other = band_limited_noise((200, 500), wavelet, seed=8)
    np.testing.assert_array_equal(first, again)
    assert not np.allclose(first, other)
    assert np.sqrt(np.mean(first**2)) == pytest.approx(1.0, rel=1e-12)
    spectrum = np.mean(np.abs(np.fft.rfft(first, axis=1)), axis=0)
    frequencies_hz = np.fft.rfftfreq(500, d=0.004)
    assert frequencies_hz[np.argmax(spectrum)] == pytest.approx(25.0, abs=3.0)
    signal = np.sin(np.linspace(0, 60, 500))[np.newaxis, :].repeat(200, axis=0)
    noisy = add_noise(signal, 5.0, wavelet, seed=3)
    ratio = np.sqrt(np.mean(signal**2)) / np.sqrt(np.mean((noisy - signal) ** 2))
    assert ratio == pytest.approx(5.0, rel=1e-9)


@pytest.mark.parametrize(
    "velocity_m_s, density_kg_m3",
    [(1600, 1960.61), (2000, 2073.09), (2500, 2192.03), (3000, 2294.26), (4000, 2465.34)],
)
def test_gardner_table(velocity_m_s, density_kg_m3):
    """Gardner et al. (1974), REFERENCES.md item 12 table (bruges column, 2 decimals: 0.005 kg/m3)."""
    assert gardner_density_kg_m3(velocity_m_s) == pytest.approx(density_kg_m3, abs=0.005)


def test_gardner_matches_bruges():
    """bruges.petrophysics.gardner (alpha 310, beta 0.25), REFERENCES.md item 12 tolerance 1e-9 relative."""
    bruges = pytest.importorskip("bruges")
    velocity = np.linspace(1500.0, 5000.0, 36)
    np.testing.assert_allclose(gardner_density_kg_m3(velocity), bruges.petrophysics.gardner(velocity), rtol=1e-9)
