"""pick.cycle-skip and pick.polarity-flip on synthetic lines with analytic answers.

The clean section is a flat wave train s(t) = cos(2 pi f (t - t_c)) exp(-((t - t_c)/w)^2) with
f = 25 Hz: its peaks are one period (40 ms) apart and a trough sits half a period from each
peak, so a pick moved by 40 ms is a cycle skip by construction and one moved by 20 ms is on
the opposite polarity (common practice: definition of a cycle skip).
"""
import numpy as np
import pytest
import yaml

from detecting import run_detector
from pitfalls.detectors import pick_consistency
from pitfalls.model import Horizon, Picks, Section

FREQUENCY_HZ = 25.0
PERIOD_MS = 1000.0 / FREQUENCY_HZ
CENTRE_MS = 600.0
N_TRACES = 120
DT_MS = 2.0


@pytest.fixture(scope="module")
def rules():
    with open("rules/default.yaml") as handle:
        return yaml.safe_load(handle)


def wave_train_section(noise=0.02, seed=3):
    twt_ms = np.arange(600) * DT_MS
    trace = np.cos(2 * np.pi * FREQUENCY_HZ * (twt_ms - CENTRE_MS) / 1000.0) * np.exp(-((twt_ms - CENTRE_MS) / 120.0) ** 2)
    seafloor = np.exp(-((twt_ms - 200.0) / 6.0) ** 2) * 2.0  # a strong positive seafloor lobe
    rng = np.random.default_rng(seed)
    data = np.tile(trace + seafloor, (N_TRACES, 1)) + noise * rng.standard_normal((N_TRACES, 600))
    return Section(data=data.astype(np.float32), dt_ms=DT_MS, t0_ms=0.0, trace_spacing_m=12.5,
                   trace_numbers=np.arange(1, N_TRACES + 1), name="wave train")


def run(section, twt_ms, rules):
    return run_detector(pick_consistency, section, Picks((Horizon("H1", "horizon", twt_ms),)), rules)


def test_clean_pick_gives_nothing(rules):
    section = wave_train_section()
    assert run(section, np.full(N_TRACES, CENTRE_MS), rules) == []


def test_clean_pick_with_gaps_gives_nothing(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[10:30] = np.nan
    assert run(wave_train_section(), twt, rules) == []


def test_cycle_skip_and_return(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[40:60] += PERIOD_MS  # traces 41-60 on the next peak down
    findings = run(wave_train_section(), twt, rules)
    assert [f.id for f in findings] == ["pick.cycle-skip"]
    skip = findings[0]
    assert skip.traces == (41, 60)
    assert skip.evidence["jump_ms"] == pytest.approx(40.0)
    assert skip.evidence["jump_in_periods"] == pytest.approx(1.0, abs=0.1)
    assert skip.evidence["returns"] is True
    assert skip.severity == "high" and skip.confidence > 0.8


def test_skip_without_return_runs_to_the_end(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[90:] -= PERIOD_MS
    findings = run(wave_train_section(), twt, rules)
    assert [(f.id, f.traces) for f in findings] == [("pick.cycle-skip", (91, N_TRACES))]
    assert findings[0].evidence["returns"] is False


def test_dipping_pick_is_not_a_skip(rules):
    """A steady dip of 3 ms per trace is the horizon's trend, not a skip (the section is flat, so
    the pick drifts off phase and may flag polarity, but never a cycle skip)."""
    twt = CENTRE_MS - 60 + 1.0 * np.arange(N_TRACES)
    ids = {f.id for f in run(wave_train_section(), twt, rules)}
    assert "pick.cycle-skip" not in ids


def test_polarity_flip(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[30:50] += PERIOD_MS / 2  # traces 31-50 on the trough below
    findings = run(wave_train_section(), twt, rules)
    assert [f.id for f in findings] == ["pick.polarity-flip"]
    flip = findings[0]
    assert flip.traces == (31, 50)
    assert flip.evidence["horizon_polarity"] == 1
    assert flip.evidence["reversed_fraction"] == pytest.approx(1.0)
    assert 0.8 < flip.evidence["amplitude_ratio_to_rest"] < 1.2


def test_polarity_flip_is_asked_as_a_question(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[30:60] += PERIOD_MS / 2  # 30 traces on the trough: medium by length
    flip = run(wave_train_section(), twt, rules)[0]
    assert flip.severity == "medium" and flip.title.startswith("Has H1 moved to another reflector")
    assert "over_picked_contact" not in flip.evidence


def test_polarity_flip_over_a_picked_contact_is_one_step_lower(rules):
    """A gas cap reverses the reflection of its top: a flip above a picked contact is a question for a
    fluid first, so the same 30-trace flip that is medium alone is low with a contact below it."""
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[30:60] += PERIOD_MS / 2
    contact = np.full(N_TRACES, np.nan)
    contact[25:65] = CENTRE_MS + 80.0
    picks = Picks((Horizon("H1", "horizon", twt), Horizon("GWC", "contact", contact)))
    flips = [f for f in run_detector(pick_consistency, wave_train_section(), picks, rules) if f.horizon == "H1"]
    assert [(f.id, f.traces, f.severity) for f in flips] == [("pick.polarity-flip", (31, 60), "low")]
    assert flips[0].evidence["over_picked_contact"] == "GWC"
    assert "above the picked contact GWC" in flips[0].title


def test_a_contact_above_the_flip_does_not_lower_it(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[30:60] += PERIOD_MS / 2
    shallower = np.full(N_TRACES, CENTRE_MS - 100.0)
    picks = Picks((Horizon("H1", "horizon", twt), Horizon("OWC", "contact", shallower)))
    flips = [f for f in run_detector(pick_consistency, wave_train_section(), picks, rules) if f.horizon == "H1"]
    assert [f.severity for f in flips] == ["medium"]


def test_short_flip_is_ignored(rules):
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[30:33] += PERIOD_MS / 2  # three traces: below min_run_traces
    assert run(wave_train_section(), twt, rules) == []


def test_inputs_are_not_changed(rules):
    section = wave_train_section()
    twt = np.full(N_TRACES, CENTRE_MS)
    twt[40:60] += PERIOD_MS
    before_data, before_twt = section.data.copy(), twt.copy()
    run(section, twt, rules)
    np.testing.assert_array_equal(section.data, before_data)
    np.testing.assert_array_equal(twt, before_twt)
