"""overburden.pull-down and overburden.push-up on modelled lines with analytic answers.

Every line is modelled with ``pitfalls.modelling`` (zero-offset, every multiple, 25 Hz Ricker,
4 ms): water (1500 m/s) over a sediment unit of 2000 m/s, a horizon that is the top of a
faster unit, and a seafloor at 600 m cut by a canyon. The rules' velocity model is set to the
modelled velocities, so the vertical-ray prediction dt = 2 dz (1/1500 - 1/2000) (REFERENCES
item 6b, derived there) is exact up to the time quantisation of the model (half a sample).
The picks are the modelled primary times, as a careful interpreter would pick them.
"""
from __future__ import annotations

import numpy as np
import pytest

from detecting import run_detector
from pitfalls import detectors as registry
from pitfalls.detectors import overburden
from pitfalls.io.rules import load_rules
from pitfalls.model import Horizon, Picks
from pitfalls.modelling.earth import EarthModel, Unit
from pitfalls.modelling.section import model_section
from pitfalls.modelling.shapes import anticline, canyon

N_TRACES = 301
QUARTER_PERIOD_MS = 10.0  # a quarter of the 25 Hz period (common practice: picking accuracy)


@pytest.fixture(scope="module")
def rules():
    loaded, _, _ = load_rules(None, registry.rule_keys())
    loaded["velocity"].update(water_velocity_m_s=1500.0, seafloor_velocity_m_s=2000.0, gradient_per_s=0.0)
    return loaded


def line(horizon_depth_m: np.ndarray, canyon_depth_m: float):
    seafloor = 600.0 + canyon(N_TRACES, 150.0, 60.0, canyon_depth_m)
    earth = EarthModel(water_velocity_m_s=1500.0, seafloor_depth_m=seafloor,
                       units=(Unit("upper", seafloor, 2000.0), Unit("H", horizon_depth_m, 2600.0)))
    modelled = model_section(earth, dt_ms=4.0, n_samples=460, frequency_hz=25.0, snr=20.0, seed=7)
    picks = Picks((Horizon("H", "horizon", modelled.surface_twt_ms["H"]),))
    return modelled, picks


def test_flat_in_depth_horizon_under_canyon_is_a_pull_down(rules):
    """A horizon flat at 1500 m under a 150 m canyon: predicted 2 x 150 x (1/1500 - 1/2000) = 50 ms;
    flagged over the canyon, scale factor 1, and the relief left under a quarter period."""
    modelled, picks = line(np.full(N_TRACES, 1500.0), 150.0)
    findings = run_detector(overburden, modelled.section, picks, rules)
    assert [f.id for f in findings] == ["overburden.pull-down"]
    found = findings[0]
    assert found.severity == "medium" and found.horizon == "H"
    assert found.traces[0] <= 121 and found.traces[1] >= 181  # the canyon spans traces 121-181 (1-based)
    assert found.evidence["predicted_relief_ms"] == pytest.approx(50.0, abs=2.0)
    assert found.evidence["observed_relief_ms"] == pytest.approx(50.0, abs=2.0)
    assert found.evidence["scale_factor"] == pytest.approx(1.0, abs=0.05)
    assert found.evidence["relief_left_ms"] < QUARTER_PERIOD_MS
    assert found.evidence["depth_relief_left_m"] < 10.0
    assert found.confidence > 0.9


def test_syncline_under_flat_seafloor_is_clean(rules):
    """A real syncline (60 m deep) under a flat seafloor: nothing to predict, nothing reported."""
    syncline = 1540.0 - anticline(N_TRACES, 150.0, 0.0, 60.0, 60.0) + 20.0
    modelled, picks = line(syncline, 0.0)
    assert run_detector(overburden, modelled.section, picks, rules) == []


def test_syncline_under_canyon_is_flagged_only_for_the_canyons_part(rules):
    """A 40 m syncline under the canyon: the finding covers the canyon's traces only, predicts the
    canyon's 50 ms, and leaves the syncline's own relief across the window (more than a quarter
    period: 40 m x (1 - 2^-(46/60)^2) x 2 / 2000 m/s = 13.4 ms), so it is low, not medium."""
    syncline = 1500.0 + 40.0 - anticline(N_TRACES, 150.0, 0.0, 40.0, 60.0)
    modelled, picks = line(syncline, 150.0)
    findings = run_detector(overburden, modelled.section, picks, rules)
    assert [f.id for f in findings] == ["overburden.pull-down"]
    found = findings[0]
    assert found.severity == "low"
    assert found.traces[1] - found.traces[0] + 1 < 120  # the canyon and its shoulders, not the whole line
    assert found.evidence["predicted_relief_ms"] == pytest.approx(50.0, abs=2.0)
    assert found.evidence["relief_left_ms"] == pytest.approx(13.4, abs=2.0)
    assert found.evidence["relief_left_ms"] > QUARTER_PERIOD_MS
    assert found.evidence["depth_relief_left_m"] == pytest.approx(13.4, abs=2.0)


def test_mound_gives_a_push_up(rules):
    """A 100 m seafloor mound over a flat horizon: push-up of 2 x 100 x (1/1500 - 1/2000) = 33.3 ms."""
    modelled, picks = line(np.full(N_TRACES, 1500.0), -100.0)
    findings = run_detector(overburden, modelled.section, picks, rules)
    assert [f.id for f in findings] == ["overburden.push-up"]
    assert findings[0].evidence["predicted_relief_ms"] == pytest.approx(33.3, abs=2.0)


def test_horizon_that_is_not_pulled_down_is_clean(rules):
    """A horizon whose depth rises under the canyon by exactly the pull-down (compensated, flat in time)
    has no time relief to explain: clean."""
    modelled, picks = line(np.full(N_TRACES, 1500.0), 150.0)
    flat = np.full(N_TRACES, float(np.nanmedian(picks.horizons[0].twt_ms[:50])))
    assert run_detector(overburden, modelled.section, Picks((Horizon("H", "horizon", flat),)), rules) == []
