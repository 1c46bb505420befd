"""pick.character-change: a sudden change of amplitude, frequency or continuity along a pick
that the reflections above and below it do not share.

The line holds flat reflections every 48 ms, alternating strong (1.0) and weak (0.35), each
convolved with a 25 Hz Ricker wavelet (``pitfalls.modelling.wavelets``). A pick that follows
the strong reflection at 600 ms and then ramps (4 ms per trace, a steady slope, so no cycle
skip) onto the weak one at 648 ms loses a factor 0.35 in amplitude where the neighbouring
reflections, which keep alternating the same way, change nothing: by construction it has left
its reflector (common practice: the usual sign of a pick that changed events).
"""
from __future__ import annotations

import numpy as np
import pytest

from detecting import run_detector
from pitfalls import detectors as registry
from pitfalls.detectors import pick_consistency
from pitfalls.io.rules import load_rules
from pitfalls.model import Horizon, Picks, Section
from pitfalls.modelling.wavelets import convolve_traces, ricker

N_TRACES, N_SAMPLES, DT_MS = 120, 300, 4.0


@pytest.fixture(scope="module")
def rules():
    loaded, _, _ = load_rules(None, registry.rule_keys())
    return loaded


def layered(gain_right: float = 1.0) -> Section:
    reflectivity = np.zeros((N_TRACES, N_SAMPLES))
    reflectivity[:, 50] = 1.5  # seafloor at 200 ms
    for k, twt in enumerate(np.arange(312.0, 1150.0, 48.0)):
        reflectivity[:, int(twt / DT_MS)] = 1.0 if (twt - 600.0) % 96.0 == 0 else 0.35
    data = convolve_traces(reflectivity, ricker(25.0, DT_MS))
    data[60:] *= gain_right
    data += 0.01 * np.random.default_rng(2).standard_normal(data.shape)
    return Section(data=data.astype(np.float32), dt_ms=DT_MS, t0_ms=0.0, trace_spacing_m=12.5,
                   trace_numbers=np.arange(1, N_TRACES + 1), name="layered")


def pick_leaving_its_reflector() -> np.ndarray:
    twt = np.full(N_TRACES, 600.0)
    twt[60:72] = 600.0 + 4.0 * np.arange(1, 13)
    twt[72:] = 648.0
    return twt


def changes(section, twt, rules):
    found = run_detector(pick_consistency, section, Picks((Horizon("H", "horizon", twt),)), rules)
    assert all(f.id != "pick.cycle-skip" for f in found)
    return [f for f in found if f.id == "pick.character-change"]


def test_pick_on_one_reflector_is_clean(rules):
    assert changes(layered(), np.full(N_TRACES, 600.0), rules) == []


def test_pick_that_leaves_its_reflector_is_noted(rules):
    """Amplitude falls to about 0.35 of its value (ln 0.35 = -1.05) near trace 61-73, neighbours steady."""
    found = changes(layered(), pick_leaving_its_reflector(), rules)
    assert len(found) == 1
    note = found[0]
    assert note.severity == "low"
    assert 55 <= note.evidence["change_trace"] <= 80
    assert note.evidence["amplitude_ratio"] == pytest.approx(0.35, abs=0.12)
    assert abs(note.evidence["neighbour_step"]) < 0.35


def test_whole_section_dimming_is_not_a_pick_change(rules):
    """The section dims by a factor 3 right of trace 60; the pick stays on its reflector: the
    neighbours change with it, so nothing is noted."""
    assert changes(layered(gain_right=1 / 3), np.full(N_TRACES, 600.0), rules) == []
