"""Mapping to time below the seafloor, lateral coherence, stratal dip, the seafloor-parallel
event search, and the hydrate stability base in time below the seafloor."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.signal import fftconvolve

from pitfalls.physics.crosscut import (
    banded_stratal_dip,
    dip_angle_deg,
    dip_steered_semblance,
    find_seafloor_parallel_events,
    flatten_on_seafloor,
    gradient_for_event_c_per_km,
    path_slope_ms_per_trace,
    pick_departure_deg,
    predicted_stability_base_twt_ms,
    seafloor_parallel_semblance,
    stability_tolerance_ms,
    temperature_at_c,
    water_layer_peg_leg_flags,
)
from pitfalls.physics.velocity import VelocityModel

DT_MS = 4.0


def constant_velocity(sediment_velocity_m_s: float) -> VelocityModel:
    """Water at 1500 m/s over sediment of one constant velocity (no gradient)."""
    return VelocityModel(water_velocity_m_s=1500.0, seafloor_velocity_m_s=sediment_velocity_m_s,
                         gradient_per_s=0.0, max_velocity_m_s=7000.0)


# --- hydrate stability base in time below the seafloor ------------------------------------------
# Seafloor time of 1000 m of water at 1500 m/s: 2 * 1000 / 1500 s.
SEAFLOOR_1000_M_MS = 2000.0 * 1000.0 / 1500.0


@pytest.mark.parametrize("sediment_velocity_m_s, expected_ms", [(1600.0, 329.2), (1700.0, 309.9),
                                                                  (1800.0, 292.7), (2000.0, 263.4)])
def test_predicted_base_time_matches_worked_case(sediment_velocity_m_s, expected_ms):
    """Dickens & Quinby-Hunt (1994) base for Dw = 1000 m, Tsf = 4 C, G = 40 C/km is 263.4 m below the
    seafloor; TWT_bsf = 2 z / V gives 329.2 / 309.9 / 292.7 / 263.4 ms at 1600-2000 m/s
    (REFERENCES item 4c worked case; tolerance 0.1 ms for the one-decimal rounding of 263.4 m)."""
    predicted = predicted_stability_base_twt_ms(SEAFLOOR_1000_M_MS, constant_velocity(sediment_velocity_m_s), 4.0, 40.0)
    assert predicted == pytest.approx(expected_ms, abs=0.1)


@pytest.mark.parametrize("water_depth_m, seafloor_temperature_c, gradient_c_per_km, base_m", [
    (800.0, 4.0, 50.0, 154.8), (2000.0, 2.0, 30.0, 678.0), (3000.0, 1.5, 60.0, 389.7)])
def test_predicted_base_time_other_cases(water_depth_m, seafloor_temperature_c, gradient_c_per_km, base_m):
    """REFERENCES item 4c check cases (D&QH, rho 1030, g 9.81, atmosphere included), converted at 1700 m/s:
    the base depth to 0.5 m, i.e. 2 * 0.5 / 1700 s = 0.6 ms."""
    seafloor_ms = 2000.0 * water_depth_m / 1500.0
    predicted = predicted_stability_base_twt_ms(seafloor_ms, constant_velocity(1700.0), seafloor_temperature_c,
                                                gradient_c_per_km)
    assert predicted == pytest.approx(2000.0 * base_m / 1700.0, abs=0.6)


def test_no_stability_zone_gives_nan():
    """Dw = 500 m, Tsf = 8 C: the seafloor is warmer than the boundary (5.52 C), no zone (REFERENCES item 4c)."""
    predicted = predicted_stability_base_twt_ms(np.array([2000.0 * 500.0 / 1500.0]), constant_velocity(1700.0), 8.0, 40.0)
    assert predicted.shape == (1,) and np.isnan(predicted[0])


def test_gradient_for_observed_event_worked_case():
    """An event 309.9 ms below a 1000 m seafloor at 1700 m/s is at 263.4 m, where the D&QH base lies
    for G = 40 C/km (REFERENCES item 4c); 0.1 ms of rounding moves the gradient by under 0.05 C/km."""
    gradient = gradient_for_event_c_per_km(309.9, SEAFLOOR_1000_M_MS, constant_velocity(1700.0), 4.0)
    assert gradient == pytest.approx(40.0, abs=0.05)


@pytest.mark.parametrize("gradient_c_per_km", [25.0, 40.0, 65.0])
@pytest.mark.parametrize("seafloor_ms", [1066.7, 1333.3, 2666.7])
def test_gradient_inversion_round_trip(gradient_c_per_km, seafloor_ms):
    """Defining property: the gradient that puts the base at the predicted time is the gradient used
    (linear-gradient velocity model of the project, so the time-depth pair is exercised too)."""
    velocity = VelocityModel(water_velocity_m_s=1500.0, seafloor_velocity_m_s=1600.0, gradient_per_s=0.8,
                             max_velocity_m_s=4500.0)
    predicted = float(predicted_stability_base_twt_ms(seafloor_ms, velocity, 4.0, gradient_c_per_km))
    assert np.isfinite(predicted)
    assert gradient_for_event_c_per_km(predicted, seafloor_ms, velocity, 4.0) == pytest.approx(gradient_c_per_km, rel=1e-7)


def test_temperature_at_event_opal_worked_case():
    """Tsf = 2 C, G = 50 C/km: the 35 C isotherm (opal-A/opal-CT) is at 660 m (REFERENCES item 5);
    660 m at 1700 m/s is 2 * 660 / 1700 s below the seafloor (exact arithmetic)."""
    assert temperature_at_c(2000.0 * 660.0 / 1700.0, constant_velocity(1700.0), 2.0, 50.0) == pytest.approx(35.0, abs=1e-9)
    assert temperature_at_c(2000.0 * 1033.3333333 / 1700.0, constant_velocity(1700.0), 4.0, 30.0) == pytest.approx(35.0, abs=1e-6)


def test_stability_tolerance_is_larger_of_time_and_share():
    """Match window: at least +/- 50 ms or +/- 20 % of TWT_bsf, whichever larger (REFERENCES item 4c)."""
    assert stability_tolerance_ms(100.0, 50.0, 0.2) == 50.0
    assert stability_tolerance_ms(400.0, 50.0, 0.2) == pytest.approx(80.0)


# --- geometry --------------------------------------------------------------------------------
def test_dip_angle_vertical_ray_conversion():
    """Time dip to depth angle: 2 ms/trace at 2500 m/s is 2.5 m per 12.5 m, atan(0.2) = 11.3099 deg
    (analytic; common practice for vertical rays)."""
    assert float(dip_angle_deg(2.0, 2500.0, 12.5)) == pytest.approx(math.degrees(math.atan(0.2)), abs=1e-9)
    assert float(dip_angle_deg(-2.0, 2500.0, 12.5)) == pytest.approx(-math.degrees(math.atan(0.2)), abs=1e-9)


def test_flatten_puts_seafloor_at_zero_and_interpolates():
    """A linear ramp in time is reproduced exactly by linear interpolation at fractional seafloor times
    (analytic); a spike 100 ms below the seafloor lands at row 25 on every trace."""
    n_traces, n_samples = 5, 200
    ramp = np.tile(np.arange(n_samples, dtype=np.float32) + 1.0, (n_traces, 1))
    seafloor_ms = np.array([100.0, 101.0, 102.5, 150.2, np.nan])
    flattened, valid = flatten_on_seafloor(ramp, DT_MS, 0.0, seafloor_ms, 80.0)
    assert flattened.shape == (n_traces, 21)
    assert valid.tolist() == [True, True, True, True, False]
    expected = seafloor_ms[:4, None] / DT_MS + np.arange(21)[None, :] + 1.0
    np.testing.assert_allclose(flattened[:4], expected, atol=1e-4)
    assert not flattened[4].any()

    spikes = np.zeros((3, n_samples), dtype=np.float32)
    seafloor_ms = np.array([200.0, 240.0, 280.0])
    for index, time_ms in enumerate(seafloor_ms + 100.0):
        spikes[index, int(time_ms / DT_MS)] = 1.0
    flattened, _ = flatten_on_seafloor(spikes, DT_MS, 0.0, seafloor_ms, 200.0)
    assert np.argmax(flattened, axis=1).tolist() == [25, 25, 25]


def test_semblance_matches_definition():
    """Semblance (Neidell & Taner 1971): (sum_j f_j)^2 / (N sum_j f_j^2) summed over the time window;
    1 for identical traces, 0 for a +/- alternation, and equal to the formula evaluated directly on
    seeded random data away from the edges."""
    rng = np.random.default_rng(7)
    identical = np.tile(rng.normal(size=60), (15, 1))
    semblance, lateral_mean, _ = seafloor_parallel_semblance(identical, np.ones(15, bool), 5, 3)
    np.testing.assert_allclose(semblance[2:-2, 1:-1], 1.0, atol=1e-12)
    np.testing.assert_allclose(lateral_mean[2:-2], identical[2:-2], atol=1e-12)

    alternating = np.tile(rng.normal(size=60), (16, 1)) * np.where(np.arange(16) % 2, 1.0, -1.0)[:, None]
    semblance, _, _ = seafloor_parallel_semblance(alternating, np.ones(16, bool), 4, 3)
    np.testing.assert_allclose(semblance[2:-2, 1:-1], 0.0, atol=1e-12)

    data = rng.normal(size=(20, 40))
    semblance, _, _ = seafloor_parallel_semblance(data, np.ones(20, bool), 5, 3)
    for trace, sample in [(5, 10), (9, 20), (14, 33)]:
        window = data[trace - 2:trace + 3, sample - 1:sample + 2]
        direct = (window.sum(axis=0) ** 2).sum() / (5 * (window ** 2).sum())
        assert semblance[trace, sample] == pytest.approx(direct, rel=1e-9)


def test_dip_steered_semblance_follows_the_dip():
    """A plane wave with a dip of 1 sample/trace is exactly coherent along that dip (whole-sample
    shifts, no interpolation), one with 0.5 samples/trace to within the linear-interpolation loss
    (1e-3), and both are much less coherent along the flat (analytic)."""
    traces = np.arange(41)[:, None]
    samples = np.arange(200)[None, :]
    points_trace = np.array([20, 20, 25])
    points_sample = np.array([100, 120, 90])
    for dip, tolerance in [(1.0, 1e-12), (0.5, 1e-3)]:
        plane = np.cos(2 * np.pi * (samples - dip * traces) / 10.0)
        along = dip_steered_semblance(plane, points_trace, points_sample, np.full(3, dip), 11, 5)
        flat = dip_steered_semblance(plane, points_trace, points_sample, np.zeros(3), 11, 5)
        np.testing.assert_allclose(along, 1.0, atol=tolerance)
        assert np.all(flat < 0.5)


def test_banded_dip_leaves_out_the_centre():
    """The band average ignores the rows within the guard: a field of dip 0.4 with a band of dip 0
    (a seafloor-parallel event) two rows either side of the centre gives 0.4 at the centre."""
    dip = np.full((30, 80), 0.4)
    dip[:, 38:43] = 0.0
    weight = np.ones_like(dip)
    mean_dip, rms_dip = banded_stratal_dip(dip, weight, 5, 3, 15)
    assert mean_dip[15, 40] == pytest.approx(0.4, abs=1e-12)
    assert rms_dip[15, 40] == pytest.approx(0.4, abs=1e-12)
    signed = np.where(np.arange(80)[None, :] < 40, 0.4, -0.4) * np.ones((30, 1))
    mean_dip, rms_dip = banded_stratal_dip(signed, weight, 5, 3, 15)
    assert mean_dip[15, 40] == pytest.approx(0.0, abs=0.03)
    assert rms_dip[15, 40] == pytest.approx(0.4, abs=1e-12)


def test_pick_departure_angle():
    """A pick that follows the dip departs by 0; a pick rising 1 ms/trace over flat reflections at
    2000 m/s and 12.5 m spacing departs by atan(1 m / 12.5 m) = 4.574 deg (analytic)."""
    traces = np.arange(50, dtype=float)
    on_dip = pick_departure_deg(1000.0 + 0.8 * traces, np.full(50, 0.8), 2000.0, 12.5, 5)
    np.testing.assert_allclose(on_dip, 0.0, atol=1e-9)
    across = pick_departure_deg(1000.0 + 1.0 * traces, np.zeros(50), 2000.0, 12.5, 5)
    np.testing.assert_allclose(across, math.degrees(math.atan(1.0 / 12.5)), atol=1e-9)
    gapped = np.where(traces == 20, np.nan, 1000.0 + traces)
    assert np.isnan(pick_departure_deg(gapped, np.zeros(50), 2000.0, 12.5, 5)[20])


# --- the event search on an analytic synthetic ------------------------------------------------
def ricker(frequency_hz: float, dt_ms: float, half_length_ms: float = 64.0) -> np.ndarray:
    """Ricker wavelet (1 - 2 a) exp(-a), a = (pi f t)^2, centred."""
    time_s = np.arange(-half_length_ms, half_length_ms + dt_ms / 2, dt_ms) / 1000.0
    a = (np.pi * frequency_hz * time_s) ** 2
    return (1.0 - 2.0 * a) * np.exp(-a)


def synthetic_line(*, event_below_ms: float | None = 300.0, event_reflection: float = -0.15,
                   strata_parallel: bool = False, n_traces: int = 200, seed: int = 0,
                   parallel_from_trace: int | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Seafloor (R = 0.3) dipping 0.5 ms/trace from 1000 ms; beds every 36 ms with R of +/-0.03-0.08
    dipping -1 ms/trace (or parallel to the seafloor, everywhere or from ``parallel_from_trace`` on);
    optional event at a constant time below the seafloor. Reflectivity on a 0.5 ms grid, 25 Hz Ricker,
    resampled to 4 ms."""
    rng = np.random.default_rng(seed)
    fine_ms, n_samples = 0.5, 500
    n_fine = int(n_samples * DT_MS / fine_ms)
    reflectivity = np.zeros((n_traces, n_fine))
    traces = np.arange(n_traces)
    seafloor_ms = 1000.0 + 0.5 * traces

    def add(times_ms: np.ndarray, value: np.ndarray) -> None:
        index = np.round(times_ms / fine_ms).astype(int)
        inside = (index >= 0) & (index < n_fine)
        reflectivity[traces[inside], index[inside]] += value[inside]

    add(seafloor_ms, np.full(n_traces, 0.3))
    bed_times = np.arange(700.0, 3000.0, 36.0)
    bed_reflections = rng.uniform(0.03, 0.08, bed_times.size) * rng.choice([-1.0, 1.0], bed_times.size)
    for time_ms, value in zip(bed_times, bed_reflections):
        times = seafloor_ms + (time_ms - 1000.0) if strata_parallel else time_ms - 1.0 * traces
        if parallel_from_trace is not None:
            times = np.where(traces >= parallel_from_trace, seafloor_ms + (time_ms - 1000.0), times)
        add(times, np.where(times > seafloor_ms + 2.0, value, 0.0))
    if event_below_ms is not None:
        add(seafloor_ms + event_below_ms, np.full(n_traces, event_reflection))
    data = fftconvolve(reflectivity, ricker(25.0, fine_ms)[None, :], mode="same", axes=1)
    return data[:, ::int(DT_MS / fine_ms)][:, :n_samples].astype(np.float32), seafloor_ms


def search(data: np.ndarray, seafloor_ms: np.ndarray, extend_min_semblance: float | None = None):
    return find_seafloor_parallel_events(
        data, DT_MS, 0.0, seafloor_ms, 0.3, search_from_ms=60.0, search_to_ms=800.0, window_traces=21,
        window_ms=20.0, min_semblance=0.6, min_semblance_gain=0.1, min_relative_amplitude=0.05,
        min_rms_dip_samples_per_trace=0.1, guard_ms=60.0, band_ms=200.0, min_extent_traces=40,
        max_gap_traces=3, max_dip_samples_per_trace=2.5, extend_min_semblance=extend_min_semblance)


def test_event_across_dipping_beds_is_found():
    """An event 300 ms below the seafloor across beds dipping 1.5 ms/trace relative to it is found at
    300 ms (within one sample on every trace), with the seafloor's reversed sign, more coherent along
    the seafloor than along the beds, and a stratal dip of -1.5 / 4 = -0.375 samples/trace (analytic)."""
    data, seafloor_ms = synthetic_line()
    result = search(data, seafloor_ms)
    assert len(result.events) == 1
    event = result.events[0]
    assert event.extent_traces >= 180
    assert np.all(np.abs(event.twt_below_seafloor_ms - 300.0) <= DT_MS)
    assert np.all(event.amplitude < 0)
    assert np.median(event.semblance_seafloor_parallel) > np.median(event.semblance_along_strata) + 0.3
    assert np.median(event.stratal_dip_samples_per_trace) == pytest.approx(-0.375, abs=0.05)


def test_same_sign_event_keeps_its_sign():
    """A positive event (same sign as the seafloor) is found with positive amplitude (analytic)."""
    data, seafloor_ms = synthetic_line(event_reflection=0.15)
    (event,) = search(data, seafloor_ms).events
    assert np.all(event.amplitude > 0)


@pytest.mark.parametrize("case", ["beds parallel to the seafloor, with the event", "dipping beds, no event"])
def test_no_event_where_nothing_cuts_across(case):
    """Beds parallel to the seafloor give no cross-cutting event even when a seafloor-parallel event is
    present (it is conformable); dipping beds alone give none either."""
    if case.startswith("beds parallel"):
        data, seafloor_ms = synthetic_line(strata_parallel=True)
    else:
        data, seafloor_ms = synthetic_line(event_below_ms=None)
    assert search(data, seafloor_ms).events == ()


def test_event_is_followed_where_the_strata_turn_parallel():
    """Hysteresis (Canny 1986, from memory): an event that cuts dipping beds on traces 0-99 and runs
    conformable with seafloor-parallel beds on 100-199 is found only where it cuts without following,
    and over (nearly) the whole line with it, at 300 ms on every trace (analytic), flagged as cutting
    only on the dipping part."""
    data, seafloor_ms = synthetic_line(parallel_from_trace=100)
    (strict,) = search(data, seafloor_ms).events
    assert strict.trace_index[-1] <= 115
    (followed,) = search(data, seafloor_ms, extend_min_semblance=0.4).events
    assert followed.trace_index[0] <= strict.trace_index[0] and followed.trace_index[-1] >= 190
    assert np.all(np.abs(followed.twt_below_seafloor_ms - 300.0) <= DT_MS)
    cutting = followed.cutting
    assert np.mean(cutting[followed.trace_index < 90]) > 0.9
    assert not cutting[followed.trace_index > 130].any()


def test_path_slope_of_a_line_and_a_gap():
    """A path rising 0.7 ms/trace has slope 0.7 everywhere, also across a one-trace gap (analytic)."""
    traces = np.arange(40, dtype=float)
    path = 1200.0 + 0.7 * traces
    np.testing.assert_allclose(path_slope_ms_per_trace(path, 5), 0.7, atol=1e-9)
    gapped = np.where(traces == 12, np.nan, path)
    slope = path_slope_ms_per_trace(gapped, 1)
    assert np.isnan(slope[12])
    np.testing.assert_allclose(np.delete(slope, 12), 0.7, atol=1e-9)


def test_peg_leg_flags_follow_backus_sign_and_strength():
    """A water-layer peg-leg arrives one seafloor time below its parent with amplitude -2 R_sf A
    (Backus 1959; REFERENCES item 1): with R_sf = 0.3 a point 800 ms below a +1.0 parent with -0.6 is
    flagged; the same point with +0.6 (same sign), or -1.5 (stronger than any peg-leg with R_sf <= 0.5),
    or with no parent is not."""
    n_traces, n_below = 10, 300
    seafloor_ms = np.full(n_traces, 800.0)
    stack = np.zeros((n_traces, n_below))
    stack[:, 25] = 1.0  # parent 100 ms below the seafloor
    trace_index = np.arange(n_traces)
    below_ms = np.full(n_traces, 900.0)  # t_r + t_sf = 100 + 800

    def flags(child: float, parent: bool = True) -> np.ndarray:
        panel = stack.copy() if parent else np.zeros_like(stack)
        panel[:, 225] = child
        return water_layer_peg_leg_flags(panel, np.abs(panel), DT_MS, seafloor_ms, trace_index, below_ms,
                                         np.full(n_traces, child), 1.0, 24.0)

    assert flags(-2 * 0.3 * 1.0).all()
    assert not flags(+0.6).any()
    assert not flags(-1.5).any()
    assert not flags(-0.6, parent=False).any()


def test_band_median_dips_equal_the_single_point_weighted_median():
    """The whole-array weighted median equals band_median_dip point by point, panel edges included."""
    from pitfalls.physics.crosscut import band_median_dip, band_median_dips
    rng = np.random.default_rng(21)
    dip = np.round(rng.normal(0, 1, (30, 80)), 1)  # rounded: many ties, as clipped dips have
    weight = rng.uniform(0, 1, (30, 80)) * (rng.uniform(0, 1, (30, 80)) > 0.2)
    traces = np.array([0, 1, 5, 15, 28, 29, 29, 0])
    samples = np.array([0, 3, 40, 79, 77, 10, 0, 79])
    expected = [band_median_dip(dip, weight, int(t), int(s), 4, 3, 12) for t, s in zip(traces, samples)]
    np.testing.assert_array_equal(band_median_dips(dip, weight, traces, samples, 4, 3, 12, chunk=3), expected)
    assert band_median_dips(dip, np.zeros_like(weight), traces[:2], samples[:2], 4, 3, 12).tolist() == [0.0, 0.0]
