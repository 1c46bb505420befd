"""The shared per-panel context: built once per panel by the engine, frozen, carrying the velocity model."""
import dataclasses
import types

import numpy as np
import pytest

import pitfalls.context as context_module
import pitfalls.engine as engine_module
from pitfalls import detectors
from pitfalls.context import build_context
from pitfalls.engine import scan
from pitfalls.io.rules import load_rules
from pitfalls.model import Picks, Section
from pitfalls.physics.seafloor import find_seafloor
from pitfalls.physics.velocity import VelocityModel
from segy_files import write_segy

N_TRACES, N_SAMPLES, DT_MS = 40, 300, 2.0


def _panel_data(n_traces, seed):
    twt = np.arange(N_SAMPLES) * DT_MS
    trace = 2.0 * np.exp(-((twt - 150.0) / 6.0) ** 2) + np.cos(2 * np.pi * 25.0 * (twt - 400.0) / 1000.0) * np.exp(
        -((twt - 400.0) / 60.0) ** 2)
    rng = np.random.default_rng(seed)
    return np.tile(trace, (n_traces, 1)) + 0.02 * rng.standard_normal((n_traces, N_SAMPLES))


@pytest.fixture(scope="module")
def rules():
    return load_rules(None, detectors.rule_keys())


@pytest.fixture
def volume(tmp_path):
    inlines = np.repeat([7, 8, 9], N_TRACES)
    xlines = np.tile(300 + np.arange(N_TRACES), 3)
    return write_segy(tmp_path / "v.sgy", _panel_data(3 * N_TRACES, seed=2), dt_us=2000, inlines=inlines,
                      xlines=xlines)


def _recording_detector(seen):
    def detect(block, context, picks, rules):
        seen.append((block.inline_number, context))
        return []
    return types.SimpleNamespace(NAME="recorder", FAMILY="pick", KINDS={}, RULE_KEYS={}, detect=detect)


def test_seafloor_is_picked_once_per_panel_for_the_whole_scan(volume, rules, monkeypatch):
    calls = []

    def counting(section, picks, rules_):
        calls.append(section.inline_number)
        return find_seafloor(section, picks, rules_)
    monkeypatch.setattr(context_module, "find_seafloor", counting)
    monkeypatch.setattr(engine_module, "find_seafloor", counting)  # a volume's inlines are picked by the engine
    result = scan(str(volume), [], *rules)  # every detector
    assert [run.status for run in result.detectors] == ["ran"] * len(detectors.DETECTORS)
    # One block holds the whole small volume, so no inline is read twice as a neighbour of another block.
    assert calls == [7, 8, 9]


def test_every_detector_gets_the_same_frozen_context_and_the_scan_velocity(volume, rules, monkeypatch):
    seen = []
    recorder = _recording_detector(seen)
    monkeypatch.setattr(detectors, "DETECTORS", (recorder,) + detectors.DETECTORS)
    monkeypatch.setitem(detectors.BY_NAME, "recorder", recorder)
    chosen = VelocityModel(water_velocity_m_s=1480.0, seafloor_velocity_m_s=1650.0, gradient_per_s=0.5)
    scan(str(volume), [], *rules, only=["recorder"], velocity=chosen)
    assert [inline for inline, _ in seen] == [7, 8, 9]
    assert all(context.velocity is chosen for _, context in seen)
    with pytest.raises(dataclasses.FrozenInstanceError):
        seen[0][1].velocity = VelocityModel()
    seen.clear()
    scan(str(volume), [], *rules, only=["recorder"])
    assert all(context.velocity == VelocityModel.from_rules(rules[0]) for _, context in seen)


def test_context_measures_match_the_physics_functions(rules):
    section = Section(data=_panel_data(N_TRACES, seed=4).astype(np.float32), dt_ms=DT_MS, t0_ms=0.0,
                      trace_spacing_m=12.5, trace_numbers=np.arange(1, N_TRACES + 1))
    context = build_context(section, Picks(), rules[0])
    seafloor = find_seafloor(section, Picks(), rules[0])
    np.testing.assert_array_equal(context.seafloor.twt_ms, seafloor.twt_ms)
    # seafloor at 150 ms (the modelled spike), positive in this data
    assert np.nanmedian(context.seafloor.twt_ms) == pytest.approx(150.0, abs=DT_MS)
    assert context.polarity == 1
    # flat seafloor: the first multiple band collapses onto 2 x t_sf (same-trace rule; Backus 1959)
    first = context.seafloor_multiples[0]
    assert first.multiplier == 2
    np.testing.assert_allclose(first.high_twt_ms, 2 * context.seafloor.twt_ms)
    # the envelope of a real trace is at least its absolute value (analytic signal magnitude)
    assert np.all(context.envelope >= np.abs(context.live_data) - 1e-5)
    assert context.dip.coherence.shape == section.data.shape
