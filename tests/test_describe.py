"""``pitfalls describe`` on modelled intervals with known answers.

Sections are built with ``pitfalls.modelling.wavelets``: a reflectivity in two-way time,
convolved trace by trace with a 25 Hz Ricker wavelet, 4 ms sampling, 12.5 m traces. A strong
seafloor spike at 200 ms is picked as the seafloor, the interval under test lies between the
picks ``top`` (400 ms) and ``base``; reflective parallel layers fill the section above and
below, so the section's reference amplitude is set by ordinary reflections.

Class words follow Mitchum, Vail and Sangree (1977; from memory): parallel, divergent (a wedge
whose reflections fan towards the thick end), chaotic, reflection-free, onlap (flat reflections
ending against a base that rises towards them).
"""
from __future__ import annotations

import numpy as np
import pytest

from pitfalls import detectors as registry
from pitfalls.describe import describe_section
from pitfalls.io.rules import load_rules
from pitfalls.model import Horizon, Picks, Section
from pitfalls.modelling.wavelets import convolve_traces, ricker

N_TRACES = 200
DT_MS = 4.0
N_SAMPLES = 350
FREQUENCY_HZ = 25.0
TOP_MS = 400.0
SPACING_M = 12.5


@pytest.fixture(scope="module")
def rules():
    loaded, _, _ = load_rules(None, registry.rule_keys())
    return loaded


def sample(twt_ms: float) -> int:
    return int(round(twt_ms / DT_MS))


def background(seed: int = 1) -> np.ndarray:
    """Reflectivity (n_traces, n_samples): seafloor spike 1.0 at 200 ms, flat layers every 24 ms
    with amplitudes 0.1-0.3 (one draw per layer, the same on every trace) everywhere below it."""
    rng = np.random.default_rng(seed)
    reflectivity = np.zeros((N_TRACES, N_SAMPLES))
    reflectivity[:, sample(200.0)] = 1.0
    for twt in np.arange(224.0, N_SAMPLES * DT_MS - 20, 24.0):
        reflectivity[:, sample(twt)] = rng.choice([-1, 1]) * rng.uniform(0.1, 0.3)
    return reflectivity


def clear(reflectivity: np.ndarray, base_ms: np.ndarray) -> np.ndarray:
    """Empty the interval between the top and the base on every trace (bounds themselves kept clear too)."""
    out = reflectivity.copy()
    for trace in range(N_TRACES):
        out[trace, sample(TOP_MS) - 2:sample(base_ms[trace]) + 3] = 0.0
    return out


def bound(reflectivity: np.ndarray, base_ms: np.ndarray) -> np.ndarray:
    """Put a top reflection (0.3) at 400 ms and a base reflection (-0.3) on every trace."""
    out = reflectivity.copy()
    out[:, sample(TOP_MS)] = 0.3
    out[np.arange(N_TRACES), [sample(t) for t in base_ms]] = -0.3
    return out


def section_of(reflectivity: np.ndarray, noise: float = 0.002, seed: int = 5) -> Section:
    data = convolve_traces(reflectivity, ricker(FREQUENCY_HZ, DT_MS))
    data = data + noise * np.random.default_rng(seed).standard_normal(data.shape)
    return Section(data=data.astype(np.float32), dt_ms=DT_MS, t0_ms=0.0, trace_spacing_m=SPACING_M,
                   trace_numbers=np.arange(1, N_TRACES + 1), name="modelled")


def picks_of(base_ms: np.ndarray) -> Picks:
    return Picks((Horizon("SF", "seafloor", np.full(N_TRACES, 200.0)),
                  Horizon("top", "horizon", np.full(N_TRACES, TOP_MS)),
                  Horizon("base", "horizon", np.asarray(base_ms, dtype=float))))


def interval(description, top: str = "top", base: str = "base") -> dict:
    return next(i for i in description.intervals if i["top"] == top and i["base"] == base)


def test_intervals_run_from_the_seafloor_down(rules):
    base = np.full(N_TRACES, 800.0)
    description = describe_section(section_of(bound(background(), base)), picks_of(base), rules)
    assert [(i["top"], i["base"]) for i in description.intervals] == [("SF", "top"), ("top", "base")]
    assert [h["horizon"] for h in description.horizons] == ["SF", "top", "base"]


def test_parallel_layers(rules):
    """Flat layers every 24 ms: parallel, nearly all samples coherent, reflections continuous across
    the whole line (200 traces = 2500 m), no thickening, concordant at top and base."""
    base = np.full(N_TRACES, 800.0)
    description = describe_section(section_of(bound(background(), base)), picks_of(base), rules)
    unit = interval(description)
    assert unit["configuration"]["class"] == "parallel"
    assert unit["configuration"]["thickening"] == "none"
    assert unit["configuration"]["top_termination"] == "concordant"
    assert unit["configuration"]["base_termination"] == "concordant"
    assert unit["continuity"]["coherent_share"] > 0.8
    assert unit["continuity"]["segment_length_traces_median"] == N_TRACES
    assert unit["continuity"]["segment_length_m_median"] == pytest.approx(N_TRACES * SPACING_M)
    assert [s["class"] for s in unit["configuration"]["stretches"]] == ["parallel"]


def test_wedge_is_divergent_thickening_to_the_right(rules):
    """Top flat at 400 ms, base from 500 to 800 ms; ten reflections at equal fractions of the
    thickness fan from flat at the top to the base's dip: divergent, thickening with trace number."""
    base = np.linspace(500.0, 800.0, N_TRACES)
    reflectivity = clear(background(), base)
    rng = np.random.default_rng(3)
    for fraction in np.arange(1, 10) / 10:
        amplitude = rng.choice([-1, 1]) * rng.uniform(0.1, 0.3)
        reflectivity[np.arange(N_TRACES), [sample(TOP_MS + fraction * (b - TOP_MS)) for b in base]] = amplitude
    description = describe_section(section_of(bound(reflectivity, base)), picks_of(base), rules)
    unit = interval(description)
    assert unit["configuration"]["class"] == "divergent"
    assert unit["configuration"]["thickening"] == "increasing-trace"
    assert unit["configuration"]["fan_deg"] > 1.0
    # base dip 1.5 ms per trace at 2000 m/s (mid-depth of the default velocity model, roughly):
    # atan(1.5e-3 s / 12.5 m x 2000 / 2) = 6.8 degrees; the fitted base dip is of that order.
    assert 3.0 < unit["configuration"]["base_dip_deg"] < 12.0


def test_random_reflectivity_is_chaotic(rules):
    """Gaussian reflectivity drawn independently on every trace and sample (seeded): chaotic, low
    coherent share, short segments."""
    base = np.full(N_TRACES, 800.0)
    reflectivity = clear(background(), base)
    rng = np.random.default_rng(11)
    inside = slice(sample(TOP_MS) + 3, sample(800.0) - 2)
    reflectivity[:, inside] = 0.1 * rng.standard_normal((N_TRACES, inside.stop - inside.start))
    description = describe_section(section_of(bound(reflectivity, base)), picks_of(base), rules)
    unit = interval(description)
    assert unit["configuration"]["class"] == "chaotic"
    assert unit["continuity"]["coherent_share"] < 0.3
    assert unit["continuity"]["segment_length_traces_median"] <= 5


def test_transparent_unit_is_reflection_free(rules):
    """No reflections between top and base, only the faint noise of the whole section: reflection-free."""
    base = np.full(N_TRACES, 800.0)
    description = describe_section(section_of(bound(clear(background(), base), base)), picks_of(base), rules)
    unit = interval(description)
    assert unit["configuration"]["class"] == "reflection-free"
    assert unit["amplitude"]["rms_relative"] < 0.1


def test_flat_layers_onlap_a_dipping_base(rules):
    """Flat reflections every 24 ms end against a base that deepens to the right (480 -> 800 ms):
    they end at their up-dip side against the base, which is onlap; the top is concordant."""
    base = np.linspace(480.0, 800.0, N_TRACES)
    reflectivity = clear(background(), base)
    rng = np.random.default_rng(4)
    for twt in np.arange(TOP_MS + 24.0, 800.0, 24.0):
        amplitude = rng.choice([-1, 1]) * rng.uniform(0.1, 0.3)
        reflectivity[base > twt + 8.0, sample(twt)] = amplitude
    description = describe_section(section_of(bound(reflectivity, base)), picks_of(base), rules)
    unit = interval(description)
    assert unit["configuration"]["base_termination"] == "onlap"
    assert unit["configuration"]["top_termination"] == "concordant"
    assert unit["configuration"]["thickening"] == "increasing-trace"
    assert unit["configuration"]["class"] in ("parallel", "subparallel")


def test_ricker_frequency_numbers(rules):
    """One flat reflection in the middle of the interval: the interval's spectrum is the 25 Hz
    Ricker's (the Tukey taper is flat where the wavelet is). Peak 25 Hz (Ricker 1953; REFERENCES
    item 9, verified), amplitude-weighted mean 2 f / sqrt(pi) = 28.21 Hz (REFERENCES item 9,
    verified), and amplitude-weighted spread sqrt(3/2 - 4/pi) f = 11.90 Hz: for the spectrum
    u^2 exp(-u^2), u = nu / f, the moments are int u^2 e^-u^2 = sqrt(pi)/4, int u^3 e^-u^2 = 1/2,
    int u^4 e^-u^2 = 3 sqrt(pi)/8 (standard Gaussian integrals), so E[u] = 2/sqrt(pi) and
    E[u^2] = 3/2 (derived here)."""
    base = np.full(N_TRACES, 800.0)
    reflectivity = clear(background(), base)
    reflectivity[:, sample(600.0)] = 0.3
    description = describe_section(section_of(bound(reflectivity, base), noise=0.0), picks_of(base), rules)
    frequency = interval(description)["frequency"]
    assert frequency["dominant_hz"] == pytest.approx(FREQUENCY_HZ, abs=0.5)
    assert frequency["centroid_hz"] == pytest.approx(2 * FREQUENCY_HZ / np.sqrt(np.pi), abs=0.5)
    assert frequency["bandwidth_hz"] == pytest.approx(np.sqrt(1.5 - 4 / np.pi) * FREQUENCY_HZ, abs=0.5)


def test_random_reflectivity_frequency_follows_the_wavelet(rules):
    """White reflectivity has a flat expected amplitude spectrum, so the interval's mean spectrum is
    the wavelet's: centroid 2 f / sqrt(pi) = 28.2 Hz within 5 % (REFERENCES item 9; statistical
    scatter of 200 seeded traces)."""
    base = np.full(N_TRACES, 800.0)
    reflectivity = clear(background(), base)
    rng = np.random.default_rng(12)
    inside = slice(sample(TOP_MS) + 3, sample(800.0) - 2)
    reflectivity[:, inside] = 0.1 * rng.standard_normal((N_TRACES, inside.stop - inside.start))
    description = describe_section(section_of(bound(reflectivity, base), noise=0.0), picks_of(base), rules)
    frequency = interval(description)["frequency"]
    assert frequency["centroid_hz"] == pytest.approx(2 * FREQUENCY_HZ / np.sqrt(np.pi), rel=0.05)
    assert frequency["dominant_hz"] == pytest.approx(FREQUENCY_HZ, rel=0.12)


def test_horizon_measures_along_a_flat_pick(rules):
    """Along the flat top pick: every trace coherent, one segment across the line."""
    base = np.full(N_TRACES, 800.0)
    description = describe_section(section_of(bound(background(), base)), picks_of(base), rules)
    top = next(h for h in description.horizons if h["horizon"] == "top")
    assert top["continuity"]["coherent_share"] > 0.95
    assert top["continuity"]["segment_length_traces_median"] >= 0.9 * N_TRACES


def test_frequency_along_an_isolated_reflection(rules):
    """A pick on an isolated reflection: the two-period window around it holds the 25 Hz Ricker
    alone, so its spectrum peaks at 25 Hz (REFERENCES item 9; the taper's 8 ms edges cost little)."""
    base = np.full(N_TRACES, 800.0)
    reflectivity = clear(background(), base)
    reflectivity[:, sample(600.0)] = 0.3
    picks = Picks(picks_of(base).horizons + (Horizon("mid", "horizon", np.full(N_TRACES, 600.0)),))
    description = describe_section(section_of(bound(reflectivity, base), noise=0.0), picks, rules)
    mid = next(h for h in description.horizons if h["horizon"] == "mid")
    assert mid["frequency"]["dominant_hz"] == pytest.approx(FREQUENCY_HZ, abs=1.5)
    assert mid["amplitude"]["envelope_lateral_variation"] < 0.01


def test_automatic_seafloor_bounds_the_first_interval(rules):
    """Without a seafloor pick the automatic seafloor (the strong event at 200 ms) is the first bound."""
    base = np.full(N_TRACES, 800.0)
    picks = Picks(picks_of(base).horizons[1:])
    description = describe_section(section_of(bound(background(), base)), picks, rules)
    assert [(i["top"], i["base"]) for i in description.intervals][0] == ("seafloor (automatic)", "top")
    assert description.seafloor_source == "automatic"
