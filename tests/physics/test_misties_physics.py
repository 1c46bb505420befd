"""Ties between sections: crossings from coordinates, the seafloor's shift and phase, loops and multiples.

Geometry cases have analytic answers (straight lines on round coordinates). The seafloor tie is
checked against scipy.signal.hilbert as the reference for a constant phase rotation
(b = a cos(phi) - H[a] sin(phi) is a rotated by phi; Taner, Koehler and Sheriff 1979, from
memory), and the multiple times against the check values of REFERENCES.md item 1
(t_sf = 800 ms: first multiple 1600 ms; reflector at 1300 ms: peg-leg 2100 ms; verified there).
"""
import numpy as np
import pytest
from scipy.signal import hilbert

from pitfalls.physics.misties import (SeafloorTie, expected_pick_shift_ms, line_crossings, loop_offset,
                                      multiple_match, seafloor_tie, volume_ties)


def straight(x0, y0, dx, dy, n):
    return np.stack([x0 + dx * np.arange(n), y0 + dy * np.arange(n)], axis=1)


def test_perpendicular_lines_cross_on_their_shared_trace():
    """An east-west and a north-south line through the same trace position: that trace on each."""
    a = straight(0.0, 250.0, 25.0, 0.0, 41)   # y = 250, x = 0..1000
    b = straight(500.0, 0.0, 0.0, 25.0, 41)   # x = 500, y = 0..1000
    crossings = line_crossings(a, b, 25.0, 25.0)
    assert len(crossings) == 1
    c = crossings[0]
    assert (c.index_a, c.index_b) == (20, 10)
    assert (c.x_m, c.y_m) == pytest.approx((500.0, 250.0))


def test_oblique_crossing_between_traces_takes_the_nearest_trace_of_each():
    """Line b at 45 degrees crosses line a between traces: each nearest trace lies within half its spacing."""
    a = straight(0.0, 0.0, 10.0, 0.0, 50)                       # y = 0
    b = straight(203.0, -103.0, 10.0 / np.sqrt(2), 10.0 / np.sqrt(2), 40)
    crossings = line_crossings(a, b, 10.0, 10.0)
    assert len(crossings) == 1
    c = crossings[0]
    x_cross = 203.0 + 103.0  # y = 0 is reached after 103 m of northing, as many metres of easting
    assert c.x_m == pytest.approx(x_cross) and c.y_m == pytest.approx(0.0, abs=1e-9)
    assert abs(a[c.index_a, 0] - x_cross) <= 5.0
    assert np.hypot(*(b[c.index_b] - [c.x_m, c.y_m])) <= 5.0


def test_lines_that_only_touch_are_not_crossings():
    """A line ending on another (T-junction), two lines meeting end to end, and parallel lines give none."""
    a = straight(0.0, 0.0, 25.0, 0.0, 41)
    ends_on_a = straight(500.0, 0.0, 0.0, 25.0, 20)        # starts on a's trace 21 and runs north
    assert line_crossings(a, ends_on_a, 25.0, 25.0) == []
    assert line_crossings(ends_on_a, a, 25.0, 25.0) == []
    end_to_end = straight(1000.0, 0.0, 0.0, 25.0, 20)      # starts at a's last trace
    assert line_crossings(a, end_to_end, 25.0, 25.0) == []
    parallel = straight(0.0, 10.0, 25.0, 0.0, 41)
    assert line_crossings(a, parallel, 25.0, 25.0) == []


def test_a_gap_in_the_traces_at_the_crossing_is_not_a_tie():
    """Line a's traces jump 200 m over the crossing point: its nearest trace is beyond half a spacing."""
    a = np.concatenate([straight(0.0, 0.0, 25.0, 0.0, 17), straight(600.0, 0.0, 25.0, 0.0, 17)])  # gap 400-600
    b = straight(500.0, -250.0, 0.0, 25.0, 21)
    assert line_crossings(a, b, 25.0, 25.0) == []


def test_a_line_through_a_survey_ties_once_at_the_middle_of_its_stretch_inside():
    """Line along y = 100 through a 10 x 10 survey of 25 m bins: one tie, at the middle of the stretch inside."""
    xx, yy = np.meshgrid(300.0 + 25.0 * np.arange(10), 25.0 * np.arange(10))
    survey = np.stack([xx.ravel(), yy.ravel()], axis=1)
    line = straight(0.0, 100.0, 25.0, 0.0, 41)
    ties = volume_ties(line, survey, 0.5 * np.hypot(25.0, 25.0), 3)
    assert len(ties) == 1
    line_index, survey_index = ties[0]
    inside = np.flatnonzero((line[:, 0] >= 300.0 - 17.7) & (line[:, 0] <= 525.0 + 17.7))
    assert line_index == (inside[0] + inside[-1]) // 2
    assert np.allclose(survey[survey_index], line[line_index])
    grazing = straight(0.0, 240.0, 25.0, 0.0, 41)  # 15 m beyond the last inline: inside the half-diagonal
    assert len(volume_ties(grazing, survey, 0.5 * np.hypot(25.0, 25.0), 3)) == 1
    corner = straight(525.0, 225.0, 25.0, 25.0, 5)  # only the first trace touches the corner
    assert volume_ties(corner, survey, 0.5 * np.hypot(25.0, 25.0), 3) == []


def ricker(twt_ms, centre_ms, frequency_hz=25.0):
    """Ricker wavelet (REFERENCES.md item 9): (1 - 2 pi^2 f^2 t^2) exp(-pi^2 f^2 t^2)."""
    t = (twt_ms - centre_ms) / 1000.0
    arg = (np.pi * frequency_hz * t) ** 2
    return (1 - 2 * arg) * np.exp(-arg)


def rotate(trace, phase_deg):
    """Constant phase rotation with scipy's Hilbert transform: Re{analytic(trace) e^{i phi}}."""
    return np.real(hilbert(trace) * np.exp(1j * np.deg2rad(phase_deg)))


@pytest.mark.parametrize("shift_ms, phase_deg", [(0.0, 0.0), (12.0, 0.0), (-7.0, 0.0), (8.0, 30.0), (0.0, -60.0)])
def test_seafloor_tie_recovers_a_planted_shift_and_phase(shift_ms, phase_deg):
    """b is a delayed by shift_ms and rotated by phase_deg (scipy.signal.hilbert as the reference rotation):
    the lag within 0.3 ms (a tenth of a 4 ms sample, from the parabola), the phase within 2 degrees."""
    dt_ms = 2.0
    twt = np.arange(0, 1200, dt_ms)
    a = ricker(twt, 500.0) + 0.3 * ricker(twt, 700.0)
    b = rotate(ricker(twt, 500.0 + shift_ms) + 0.3 * ricker(twt, 700.0 + shift_ms), phase_deg)
    tie = seafloor_tie(a, b, dt_ms, 0.0, 0.0, 500.0, 500.0 + shift_ms + 2.0, 120.0, 40.0)
    assert tie.lag_ms == pytest.approx(shift_ms, abs=0.3)
    assert tie.phase_deg == pytest.approx(phase_deg, abs=2.0)
    assert tie.correlation > 0.99


def test_seafloor_tie_allows_for_different_start_times():
    """The same trace recorded from 100 ms on b: the times, not the sample positions, tie (shift 0)."""
    dt_ms = 4.0
    twt_a = np.arange(0, 1200, dt_ms)
    twt_b = np.arange(100, 1300, dt_ms)
    tie = seafloor_tie(ricker(twt_a, 500.0), ricker(twt_b, 500.0), dt_ms, 0.0, 100.0, 500.0, 500.0, 120.0, 40.0)
    assert tie.lag_ms == pytest.approx(0.0, abs=0.3)


def test_seafloor_tie_outside_the_trace_is_nan():
    twt = np.arange(0, 400, 4.0)
    tie = seafloor_tie(ricker(twt, 390.0), ricker(twt, 390.0), 4.0, 0.0, 0.0, 390.0, 390.0, 120.0, 40.0)
    assert np.isnan(tie.lag_ms) and np.isnan(tie.phase_deg)


def test_a_peak_moves_by_minus_phase_over_two_pi_f():
    """A 25 Hz Ricker rotated by +45 degrees has its largest peak near -45/360 x 40 ms = -5 ms from the centre.
    The rule is an approximation (the Ricker's instantaneous frequency at its centre is above 25 Hz and the
    envelope pulls the peak back: the peak lies at -3.75 ms), good to 1.5 ms here, far inside the quarter-period
    (10 ms) tie tolerance; the expected shift of a picked peak uses the same rule."""
    dt_ms = 0.25
    twt = np.arange(0, 1000, dt_ms)
    rotated = rotate(ricker(twt, 500.0), 45.0)
    peak_ms = twt[np.argmax(rotated)]
    assert peak_ms - 500.0 == pytest.approx(-5.0, abs=1.5)
    assert expected_pick_shift_ms(SeafloorTie(10.0, 45.0, 1.0), 40.0) == pytest.approx(10.0 - 5.0)


def test_loop_offset_counts_whole_periods_within_the_tolerance():
    assert loop_offset(40.0, 40.0, 0.25) == 1
    assert loop_offset(-78.0, 40.0, 0.25) == -2
    assert loop_offset(20.0, 40.0, 0.25) == 0      # half a period: a phase change, not a loop
    assert loop_offset(5.0, 40.0, 0.25) == 0       # within the tie
    assert loop_offset(float("nan"), 40.0, 0.25) == 0


def test_multiple_match_uses_the_published_times():
    """REFERENCES.md item 1 check values: t_sf 800 ms -> first multiple 1600 ms; reflector 1300 ms -> peg-leg 2100 ms."""
    assert multiple_match(1604.0, 800.0, {}, 10.0) == ("seafloor multiple", 1600.0)
    assert multiple_match(2095.0, 800.0, {"R": 1300.0}, 10.0) == ("peg-leg of R", 2100.0)
    assert multiple_match(1700.0, 800.0, {"R": 1300.0}, 10.0) is None
    assert multiple_match(1300.0, 800.0, {"R": 1300.0}, 10.0) is None  # a pick is not its own peg-leg source
