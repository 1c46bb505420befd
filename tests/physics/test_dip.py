"""Structure-tensor dip: checked against scikit-image and the plane-wave values of REFERENCES item 7.

Angle convention used throughout: the project panel is ``data[trace_index, sample_index]``
(time LAST). The plane wave ``cos(2 pi (t - p x) / P)`` puts events at ``t = t0 + p x``, so
``p > 0`` (samples per trace) means events get later with increasing trace number. The
orientation compared is ``atan(p)`` in degrees, measured in sample units from the trace axis.
scikit-image is given the transposed image (axis 0 = time, order='rc'), where the normal's
angle from the time axis is ``theta_n = 0.5 atan2(2 A_rc, A_rr - A_cc)`` and ``p = -tan(theta_n)``.
"""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls.physics.dip import structure_tensor_dip

INTERIOR = (slice(40, -40), slice(40, -40))

# REFERENCES item 7 check values: (period P samples, true p, skimage p = Sobel formula)
ITEM_7_ROWS = [
    (20, 0.0, 0.0000),
    (20, 0.5, 0.4969),
    (20, 1.0, 1.0000),
    (20, -2.0, -2.0515),
    (40, 0.5, 0.4992),
    (10, 0.5, 0.4875),
    (40, 3.0, 3.0505),
]


def plane_wave(period_samples: float, dip_samples_per_trace: float, n: int = 200) -> np.ndarray:
    """Project-convention panel (n_traces, n_samples) of cos(2 pi (t - p x) / P)."""
    trace_index = np.arange(n)[:, None]
    sample_index = np.arange(n)[None, :]
    return np.cos(2 * np.pi * (sample_index - dip_samples_per_trace * trace_index) / period_samples)


def skimage_dip(image_time_first: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    feature = pytest.importorskip("skimage.feature")
    a_rr, a_rc, a_cc = feature.structure_tensor(image_time_first, sigma=3.0, order="rc", mode="reflect")
    l1, l2 = feature.structure_tensor_eigenvalues([a_rr, a_rc, a_cc])
    theta_n = 0.5 * np.arctan2(2 * a_rc, a_rr - a_cc)
    coherence = ((l1 - l2) / (l1 + l2)) ** 2
    return -np.tan(theta_n), coherence


@pytest.mark.parametrize("period, true_dip, table_dip", ITEM_7_ROWS)
def test_skimage_reproduces_item_7_table(period, true_dip, table_dip):
    """scikit-image on the transposed panel gives the REFERENCES item 7 table (4 decimals) and
    the Sobel-bias formula p_sobel = tan(pi p / P) / tan(pi / P)."""
    dip, coherence = skimage_dip(plane_wave(period, true_dip).T)
    median = float(np.median(dip[INTERIOR]))
    assert median == pytest.approx(table_dip, abs=6e-5)
    sobel_formula = np.tan(np.pi * true_dip / period) / np.tan(np.pi / period)
    assert median == pytest.approx(sobel_formula, abs=1e-4)
    assert float(np.median(coherence[INTERIOR])) > 0.99


@pytest.mark.parametrize("period, true_dip, table_dip", ITEM_7_ROWS)
def test_orientation_matches_skimage(period, true_dip, table_dip):
    """Same orientation as scikit-image within 0.5 degrees, after removing scikit-image's Sobel
    bias with the item 7 formula inverted: p = (P / pi) atan(p_sobel tan(pi / P))."""
    ours = structure_tensor_dip(plane_wave(period, true_dip))
    their_dip, _ = skimage_dip(plane_wave(period, true_dip).T)
    ours_deg = np.degrees(np.arctan(np.median(ours.dip_samples_per_trace[INTERIOR])))
    unbiased = period / np.pi * np.arctan(np.median(their_dip[INTERIOR]) * np.tan(np.pi / period))
    assert ours_deg == pytest.approx(np.degrees(np.arctan(unbiased)), abs=0.5)
    if abs(np.degrees(np.arctan(table_dip)) - np.degrees(np.arctan(true_dip))) < 0.3:
        # where the Sobel bias is small, the raw orientations agree within 0.5 degrees too
        raw = np.degrees(np.arctan(np.median(their_dip[INTERIOR])))
        assert ours_deg == pytest.approx(raw, abs=0.5)


@pytest.mark.parametrize("period, true_dip, table_dip", ITEM_7_ROWS)
def test_true_dip_within_two_percent(period, true_dip, table_dip):
    """Against the true dip with a Gaussian-derivative gradient: 2 % for P >= 10 and |p| <= 3
    (REFERENCES item 7 tolerance); coherence of a clean plane wave > 0.99."""
    field = structure_tensor_dip(plane_wave(period, true_dip))
    dip = np.median(field.dip_samples_per_trace[INTERIOR])
    assert dip == pytest.approx(true_dip, rel=0.02, abs=1e-6)
    assert float(np.min(field.coherence[INTERIOR])) > 0.99
    assert float(np.min(field.linearity[INTERIOR])) > 0.99


def test_sign_convention_events_later_with_trace_number():
    """A single event whose time grows with trace number has positive dip (written convention)."""
    n_traces, n_samples = 120, 200
    data = np.zeros((n_traces, n_samples))
    for trace_index in range(n_traces):
        centre = 60 + 0.5 * trace_index
        data[trace_index] = np.exp(-0.5 * ((np.arange(n_samples) - centre) / 2.0) ** 2)
    field = structure_tensor_dip(data)
    on_event = field.dip_samples_per_trace[20:100, :][
        np.abs(np.arange(n_samples)[None, :] - (60 + 0.5 * np.arange(20, 100)[:, None])) < 1]
    assert np.median(on_event) == pytest.approx(0.5, rel=0.05)


def test_white_noise_has_low_coherence():
    """White noise (numpy default_rng(0) standard normal): median coherence < 0.1 (REFERENCES
    item 7 gives 0.019 for scikit-image's operator)."""
    noise = np.random.default_rng(0).standard_normal((200, 200))
    field = structure_tensor_dip(noise)
    assert float(np.median(field.coherence[INTERIOR])) < 0.1
    assert float(np.median(field.linearity[INTERIOR])) < 0.5


def test_nan_traces_are_zero_and_inputs_untouched():
    """NaN is treated as 0 (a dead trace), the output is finite and the input is not changed."""
    data = plane_wave(20, 0.5)
    data[50] = np.nan
    copy = data.copy()
    field = structure_tensor_dip(data)
    zeroed = structure_tensor_dip(np.nan_to_num(data, nan=0.0))
    np.testing.assert_array_equal(field.dip_samples_per_trace, zeroed.dip_samples_per_trace)
    assert np.isfinite(field.coherence).all()
    np.testing.assert_array_equal(np.isnan(data), np.isnan(copy))
    assert field.dip_samples_per_trace.shape == data.shape


def test_dip_in_ms_per_trace():
    """ms per trace = samples per trace * dt_ms (REFERENCES item 7, physical units)."""
    field = structure_tensor_dip(plane_wave(20, 0.5))
    np.testing.assert_allclose(field.dip_ms_per_trace(4.0), 4.0 * field.dip_samples_per_trace)
