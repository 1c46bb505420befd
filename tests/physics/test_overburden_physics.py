"""Vertical-ray pull-down and push-up, and the comparison of a horizon's relief with it.

Check values: REFERENCES item 6b (derived there from t_h = 2 D / v_w + 2 (Z - D) / v_s; common
practice), exact arithmetic, tolerance 1e-9. The modelled cases use the depth models of
``pitfalls.modelling.earth`` and their exact primary times (no wavelet needed).
"""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls.modelling.earth import EarthModel, Unit, depth_grid
from pitfalls.modelling.shapes import anticline, canyon
from pitfalls.physics.overburden import (anomaly_windows, compare_relief, implied_replacement_velocity_m_s,
                                         regional_seafloor_twt_ms, seafloor_anomaly_ms,
                                         vertical_ray_time_anomaly_ms)

N_TRACES = 301
WATER_M_S = 1500.0
SEDIMENT_M_S = 2000.0


@pytest.mark.parametrize("water, sediment, factor", [(1500, 2000, 0.25), (1500, 2500, 0.40), (1500, 3000, 0.50),
                                                     (1480, 1800, 0.1778)])
def test_seafloor_100_ms_deeper_matches_reference_table(water, sediment, factor):
    """REFERENCES item 6b table: seafloor +100 ms -> horizon +100 (1 - v_w/v_s) ms (factor to 4 decimals)."""
    anomaly = seafloor_anomaly_ms(np.array([1100.0]), np.array([1000.0]), water, sediment)
    assert anomaly[0] == pytest.approx(100.0 * (1 - water / sediment), abs=1e-9)
    assert anomaly[0] == pytest.approx(100.0 * factor, abs=0.01)


def test_worked_example_of_reference():
    """REFERENCES item 6b worked example: D 500 -> 800 m, v_w 1500, v_s 2500: +160 ms at the horizon."""
    assert float(vertical_ray_time_anomaly_ms(300.0, 1500.0, 2500.0)) == pytest.approx(160.0, abs=1e-9)


def test_fast_body_pushes_up():
    """A fast body (v_a > v_b) gives a negative anomaly (push-up) of 2 h (1/v_a - 1/v_b) (common practice)."""
    assert float(vertical_ray_time_anomaly_ms(100.0, 4500.0, 2000.0)) == pytest.approx(
        2000.0 * 100.0 * (1 / 4500 - 1 / 2000), abs=1e-9)
    assert float(vertical_ray_time_anomaly_ms(100.0, 4500.0, 2000.0)) < 0


def test_implied_velocity_inverts_the_scale_factor():
    """b = 1 returns the assumed velocity; the scale factor that a true 2500 m/s gives, measured with
    an assumed 2000 m/s, returns 2500 m/s (exact inversion of equation (1))."""
    assert implied_replacement_velocity_m_s(1.0, 1500.0, 2000.0) == pytest.approx(2000.0)
    b = (1 / 1500 - 1 / 2500) / (1 / 1500 - 1 / 2000)
    assert implied_replacement_velocity_m_s(b, 1500.0, 2000.0) == pytest.approx(2500.0)


def canyon_model(horizon_depth_m: np.ndarray, canyon_depth_m: float = 150.0):
    """Water over one sediment unit (2000 m/s) with a horizon (a second unit) at ``horizon_depth_m``,
    under a seafloor at 600 m cut by a canyon 60 traces wide at trace 150."""
    seafloor = 600.0 + canyon(N_TRACES, 150.0, 60.0, canyon_depth_m)
    earth = EarthModel(water_velocity_m_s=WATER_M_S, seafloor_depth_m=seafloor,
                       units=(Unit("upper", seafloor, SEDIMENT_M_S), Unit("H", horizon_depth_m, SEDIMENT_M_S + 400.0)))
    grid = depth_grid(earth, 2000.0)
    return grid.twt_at_depth_ms(seafloor), grid.twt_at_depth_ms(np.asarray(horizon_depth_m, dtype=float))


def predicted_for(seafloor_twt):
    regional = regional_seafloor_twt_ms(seafloor_twt, 151)
    return seafloor_anomaly_ms(seafloor_twt, regional, WATER_M_S, SEDIMENT_M_S)


def test_flat_horizon_under_canyon_is_the_prediction():
    """A horizon flat in depth under a 150 m canyon: its time low equals equation (1) (2 x 150 x
    (1/1500 - 1/2000) = 50 ms), scale factor 1, correlation 1, and nothing left after correction
    (depth-grid time quantisation: 0.5 m steps, well under 1 ms)."""
    seafloor_twt, horizon_twt = canyon_model(np.full(N_TRACES, 1500.0))
    predicted = predicted_for(seafloor_twt)
    assert predicted.max() == pytest.approx(50.0, abs=0.5)
    windows = anomaly_windows(predicted, 5.0, 20)
    assert len(windows) == 1 and windows[0][2] == 1
    first, last, _ = windows[0]
    assert first <= 120 and last >= 180
    result = compare_relief(horizon_twt, predicted, windows[0], 20)
    assert result.scale_factor == pytest.approx(1.0, abs=0.02)
    assert result.correlation > 0.999
    assert result.observed_relief_ms == pytest.approx(50.0, abs=1.0)
    assert result.corrected_relief_ms < 1.0
    assert abs(result.peak_index - 150) <= 1


def test_syncline_under_flat_seafloor_has_no_window():
    """A flat seafloor predicts no anomaly, so a real syncline below it is never compared (clean)."""
    seafloor_twt, _ = canyon_model(np.full(N_TRACES, 1500.0), canyon_depth_m=0.0)
    assert anomaly_windows(predicted_for(seafloor_twt), 5.0, 20) == []


def test_syncline_under_canyon_keeps_its_own_relief():
    """A syncline 40 m deep and 60 traces half-width under the canyon: the canyon's 50 ms is explained,
    and what is left is the syncline's own relief across the window (46 traces either side of the
    axis): 40 m x (1 - 2^-(46/60)^2) = 13.4 m, x 2 / 2000 m/s = 13.4 ms, more than a quarter of a
    25 Hz period (10 ms)."""
    syncline = 1500.0 + 40.0 - anticline(N_TRACES, 150.0, 0.0, 40.0, 60.0)  # deepest (1540 m) at trace 150
    seafloor_twt, horizon_twt = canyon_model(syncline)
    predicted = predicted_for(seafloor_twt)
    window = anomaly_windows(predicted, 5.0, 20)[0]
    result = compare_relief(horizon_twt, predicted, window, 20)
    assert result.correlation > 0.9
    assert 1.1 < result.scale_factor < 2.0
    half_window = (window[1] - window[0]) / 2
    expected_left_ms = 40.0 * (1 - 2 ** -((half_window / 60.0) ** 2)) * 2 / SEDIMENT_M_S * 1000.0
    assert result.corrected_relief_ms == pytest.approx(expected_left_ms, abs=1.0)
    assert result.corrected_relief_ms > 10.0
    assert result.predicted_relief_ms == pytest.approx(50.0, abs=1.0)
    assert result.observed_relief_ms > result.predicted_relief_ms + 5.0


def test_mound_is_a_push_up():
    """A seafloor mound (canyon with negative depth) predicts a push-up window (sign -1)."""
    seafloor_twt, horizon_twt = canyon_model(np.full(N_TRACES, 1500.0), canyon_depth_m=-100.0)
    predicted = predicted_for(seafloor_twt)
    windows = anomaly_windows(predicted, 5.0, 20)
    assert [w[2] for w in windows] == [-1]
    result = compare_relief(horizon_twt, predicted, windows[0], 20)
    assert result.scale_factor == pytest.approx(1.0, abs=0.02)
    assert result.predicted_relief_ms == pytest.approx(2000 * 100 * (1 / 1500 - 1 / 2000), abs=1.0)
