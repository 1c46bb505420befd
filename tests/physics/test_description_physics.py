"""Amplitude, continuity and termination measures against analytic values and definitions."""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls.modelling.wavelets import convolve_traces, ricker
from pitfalls.physics import description as measure

DT_MS = 2.0


def test_rms_and_envelope_of_a_sinusoid():
    """A sinusoid of amplitude A: RMS = A / sqrt(2) (definition), envelope = A (the analytic signal
    of A cos(w t) is A exp(i w t); Taner, Koehler and Sheriff 1979, from memory). 25 Hz, 2 ms,
    a whole number of periods so the FFT-based Hilbert transform has no edge error."""
    amplitude = 3.0
    twt_ms = DT_MS * np.arange(1000)
    data = np.tile(amplitude * np.cos(2 * np.pi * 25.0 * twt_ms / 1000.0), (4, 1))
    mask = np.ones(data.shape, dtype=bool)
    assert measure.trace_rms(data, mask) == pytest.approx(np.full(4, amplitude / np.sqrt(2)), rel=1e-9)
    envelope = measure.envelope(data)
    assert envelope[:, 100:-100] == pytest.approx(np.full((4, 800), amplitude), rel=1e-6)
    reference = measure.reference_amplitude(envelope, None, 0.0, DT_MS)
    assert measure.trace_rms(data, mask)[0] / reference == pytest.approx(1 / np.sqrt(2), rel=1e-6)


def test_rms_of_white_reflectivity_through_a_ricker():
    """White reflectivity of standard deviation s through a wavelet w has RMS s sqrt(sum w^2); for a
    25 Hz Ricker sampled at dt, sum w^2 = (1/dt) int w^2 dt = 3 sqrt(pi) / (4 sqrt(2) pi f dt)
    (the Gaussian integrals of (1 - s^2)^2 exp(-s^2); derived here). Seeded, 200 traces: within 3 %."""
    rng = np.random.default_rng(21)
    sigma = 0.1
    reflectivity = sigma * rng.standard_normal((200, 1200))
    data = convolve_traces(reflectivity, ricker(25.0, DT_MS))
    mask = np.zeros(data.shape, dtype=bool)
    mask[:, 100:-100] = True
    energy = 3 * np.sqrt(np.pi) / (4 * np.sqrt(2) * np.pi * 25.0 * DT_MS / 1000.0)
    assert np.sum(ricker(25.0, DT_MS) ** 2) == pytest.approx(energy, rel=1e-3)
    rms = float(np.sqrt(np.mean(measure.trace_rms(data, mask) ** 2)))
    assert rms == pytest.approx(sigma * np.sqrt(energy), rel=0.03)


def test_segments_of_flat_events_span_the_line_and_noise_is_short():
    """Flat events link across all 60 traces (one segment each); independent noise links rarely."""
    reflectivity = np.zeros((60, 200))
    reflectivity[:, [50, 100, 150]] = [0.5, -0.4, 0.3]
    data = convolve_traces(reflectivity, ricker(25.0, DT_MS))
    mask = np.ones(data.shape, dtype=bool)
    points = measure.reflection_points(data, mask, 0.2)
    lengths = measure.segment_lengths(data, points, np.zeros(data.shape))
    assert lengths.size >= 3 * 60 and np.all(lengths == 60)
    noise = np.random.default_rng(5).standard_normal((60, 200))
    noise_points = measure.reflection_points(noise, mask, 0.5)
    assert np.median(measure.segment_lengths(noise, noise_points, np.zeros(noise.shape))) <= 3


def test_dipping_events_link_along_their_dip():
    """Events dipping one sample per trace link only when the dip field says so."""
    reflectivity = np.zeros((40, 200))
    for trace in range(40):
        reflectivity[trace, 60 + trace] = 0.5
    data = convolve_traces(reflectivity, ricker(25.0, DT_MS))
    points = measure.reflection_points(data, np.ones(data.shape, dtype=bool), 0.2)
    along = measure.segment_lengths(data, points, np.ones(data.shape))
    assert np.median(along) == 40


@pytest.mark.parametrize("reflection, boundary, expected", [
    (0.0, 5.0, "onlap"),        # flat reflections against a base deepening with trace: end up-dip
    (3.0, 6.0, "onlap"),        # gentler than the base, same way: end at their up-dip side
    (5.0, 0.0, "downlap"),      # inclined reflections against a flat base: end down-dip
    (8.0, 3.0, "downlap"),
    (-5.0, 0.0, "downlap"),     # dipping the other way: their down-dip end is at lower traces
    (2.0, 2.5, "concordant"),
])
def test_base_terminations(reflection, boundary, expected):
    """Mitchum, Vail and Sangree (1977; from memory): onlap ends a reflection at its up-dip end
    against the surface below, downlap at its down-dip end; small angles are concordant."""
    assert measure.base_termination(reflection, boundary, concordant_max_deg=1.5, flat_max_deg=0.5) == expected


@pytest.mark.parametrize("near, far, expected", [
    (6.0, 6.0, "truncation"),   # cut at an undiminished angle (erosion)
    (1.0, 6.0, "concordant"),   # bends fully into the top
    (2.0, 6.0, "toplap"),       # angle shrinks towards the top
    (0.5, 0.5, "concordant"),
])
def test_top_terminations(near, far, expected):
    """Mitchum, Vail and Sangree (1977; from memory): toplap approaches the top asymptotically;
    truncation meets it at an angle."""
    assert measure.top_termination(near, far, 0.0, concordant_max_deg=1.5, toplap_max_ratio=0.5) == expected


def test_step_size_of_a_step():
    """A step of height h after index 30 gives h at index 30 (difference of medians) and ln(ratio)."""
    series = np.where(np.arange(60) < 30, 2.0, 5.0)
    steps = measure.step_size(series, 10)
    assert steps[30] == pytest.approx(3.0) and np.nanmax(np.abs(np.delete(steps, range(21, 40)))) == 0.0
    assert measure.step_size(series, 10, log=True)[30] == pytest.approx(np.log(2.5))


def test_ricker_spectrum_centroid_and_spread():
    """Spectrum measures of the sampled 25 Hz Ricker: peak 25 Hz, amplitude-weighted mean
    2 f / sqrt(pi) (REFERENCES item 9, verified) and spread sqrt(3/2 - 4/pi) f (derived in
    tests/test_describe.py), within 0.1 Hz."""
    wavelet = ricker(25.0, DT_MS, duration_ms=256.0)
    data = np.zeros((1, 401))
    data[0, 200 - wavelet.size // 2:200 + wavelet.size // 2 + 1] = wavelet
    frequencies, spectrum, used = measure.mean_amplitude_spectrum(data, np.ones(data.shape, dtype=bool), DT_MS,
                                                                  taper_fraction=0.0)
    result = measure.spectrum_measures(frequencies, spectrum)
    assert used == 1
    assert result.dominant_hz == pytest.approx(25.0, abs=0.1)
    assert result.centroid_hz == pytest.approx(2 * 25.0 / np.sqrt(np.pi), abs=0.1)
    assert result.bandwidth_hz == pytest.approx(np.sqrt(1.5 - 4 / np.pi) * 25.0, abs=0.1)
