"""The bundled demo: an invented deep-water line with the classic picking mistakes planted in it.

Scenario (invented): line OT25-117 crosses the Ondravel Trough, a fictional deep-water basin,
in 820-970 m of water (seafloor 1090-1290 ms). The seafloor dips gently and is cut by a
canyon; below it strata dip against the seafloor and rise into an anticline whose crest
holds a small gas cap in the Belsaro sand,
with a gas-water contact flat in depth. A gas-hydrate stability base, placed where the
Dickens & Quinby-Hunt (1994) boundary puts it for the scenario's bottom-water temperature and
geothermal gradient, runs parallel to the seafloor with reversed polarity and cuts the
dipping strata; deeper, an opal-A/opal-CT diagenetic front parallels it with the seafloor's
polarity. The section is modelled with every multiple (equal-time layered-earth recursion),
a 25 Hz Ricker wavelet and band-limited noise.

The pick file holds a seafloor pick, correct horizons, the genuine contact, and three
planted mistakes; the truth file lists what a checker should say about each of them.
"""
from __future__ import annotations

import json
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from pitfalls.model import Horizon, Picks
from pitfalls.modelling import shapes
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import ModelledSection, model_section
from pitfalls.io.output import write_whole
from pitfalls.modelling.segy_writer import write_picks_csv, write_section_segy
from pitfalls.physics.hydrate import stability_base_depth_m

LINE_NAME = "OT25-117"
BASIN_NAME = "Ondravel Trough"
SEED = 20240117
N_TRACES = 600
N_SAMPLES = 1000
DT_MS = 4.0
TRACE_SPACING_M = 12.5
WATER_VELOCITY_M_S = 1500.0
SEAFLOOR_TEMPERATURE_C = 3.5
GEOTHERMAL_GRADIENT_C_PER_KM = 42.0
OPAL_TRANSITION_C = 40.0
FREQUENCY_HZ = 25.0
SNR = 5.0
PICK_JITTER_MS = 0.6
"""Standard deviation of the pick jitter, ms: a careful auto-tracker on 4 ms data."""

UNIT_THICKNESS_M = (
    40, 55, 50, 60, 45, 65, 50, 55, 70, 45, 60, 50, 65, 55, 50, 60, 55, 45, 90, 60, 55, 65, 70, 60, 75, 65, 80, 70,
)
"""Thickness at the crest of each unit below the first (top to bottom), m."""
RESERVOIR_INDEX = 18
"""Index of the Belsaro sand in the unit list."""
CREST_TRACE = 400
FOLD_HALF_WIDTH_TRACES = 110
REGIONAL_DIP_M_PER_TRACE = -0.45
GAS_COLUMN_M = 50.0


def _unit_names() -> list[str]:
    names = [f"U{index:02d}" for index in range(len(UNIT_THICKNESS_M) + 1)]
    names[RESERVOIR_INDEX] = "Belsaro sand"
    return names


def demo_earth_model() -> tuple[EarthModel, dict[str, Any]]:
    """The depth model of the demo line and the numbers that define it.

    Returns
    -------
    (EarthModel, dict)
        The model, and scenario facts (water depths, temperatures, predicted hydrate base)
        for the truth file.
    """
    generator = np.random.default_rng(SEED)
    trace_index = np.arange(N_TRACES, dtype=float)
    seafloor = 820.0 + 0.25 * trace_index + shapes.canyon(N_TRACES, 140, 90, 110.0)
    seafloor = seafloor + 3.0 * np.sin(trace_index / 37.0)  # gentle seafloor roughness

    names = _unit_names()
    units = [Unit(names[0], seafloor.copy(), 1620.0)]
    crest_depth_m = 900.0
    for index, thickness_m in enumerate(UNIT_THICKNESS_M, start=1):
        crest_depth_m += thickness_m
        relief_m = 30.0 + 11.0 * index
        top = shapes.anticline(N_TRACES, CREST_TRACE, crest_depth_m, relief_m, FOLD_HALF_WIDTH_TRACES)
        top = top + REGIONAL_DIP_M_PER_TRACE * (trace_index - CREST_TRACE)
        velocity = 1640.0 + 36.0 * index + float(generator.uniform(-70.0, 70.0))
        if index == RESERVOIR_INDEX:
            velocity = units[-1].velocity_m_s + 300.0  # clean sand, faster than the shale above
        units.append(Unit(names[index], top, velocity))

    water_depth = seafloor
    base_below_seafloor = np.array(
        [stability_base_depth_m(depth, SEAFLOOR_TEMPERATURE_C, GEOTHERMAL_GRADIENT_C_PER_KM) for depth in water_depth]
    )
    hydrate = Overprint(
        "hydrate base", "hydrate", seafloor + base_below_seafloor, 260.0, thickness_m=45.0, gas_velocity_drop_m_s=380.0
    )
    opal_below_seafloor_m = 1000.0 * (OPAL_TRANSITION_C - SEAFLOOR_TEMPERATURE_C) / GEOTHERMAL_GRADIENT_C_PER_KM
    opal = Overprint("opal-CT front", "diagenetic", seafloor + opal_below_seafloor_m, 320.0)
    reservoir_top = units[RESERVOIR_INDEX].top_depth_m
    contact_depth_m = float(np.min(reservoir_top)) + GAS_COLUMN_M
    contact = np.where(reservoir_top < contact_depth_m, contact_depth_m, np.nan)
    gas = Overprint("Belsaro GWC", "gas", contact, -520.0, units=("Belsaro sand",))
    earth = EarthModel(
        water_velocity_m_s=WATER_VELOCITY_M_S,
        seafloor_depth_m=seafloor,
        units=tuple(units),
        overprints=(hydrate, opal, gas),
        trace_spacing_m=TRACE_SPACING_M,
    )
    facts = {
        "seafloor_temperature_c": SEAFLOOR_TEMPERATURE_C,
        "geothermal_gradient_c_per_km": GEOTHERMAL_GRADIENT_C_PER_KM,
        "water_depth_m": [float(np.min(seafloor)), float(np.max(seafloor))],
        "hydrate_base_below_seafloor_m": [float(np.min(base_below_seafloor)), float(np.max(base_below_seafloor))],
        "opal_transition_c": OPAL_TRANSITION_C,
        "opal_front_below_seafloor_m": opal_below_seafloor_m,
        "gas_water_contact_depth_m": contact_depth_m,
    }
    return earth, facts

INLINE_NUMBER = 117
HORIZON_UNITS = {"Tuvessa": "U07", "Belsaro": "Belsaro sand"}
"""Correctly picked horizons and the unit tops they follow."""
HOP_HORIZON, HOP_UNIT, HOP_TRACES = "Drassel", "U19", 140
"""Mistake (a): a horizon that hops onto the first seafloor multiple for this many traces."""
CONTACT_MISTAKE, CONTACT_MISTAKE_UNIT, CONTACT_MISTAKE_INDICES = "Lunvara flat spot", "U09", (200, 290)
"""Mistake (b): a 'contact' pick that follows a dipping reflector over trace indices [start, stop)."""
JUMP_HORIZON, JUMP_UNIT = "Quessary", "U05"
"""Mistake (c): a horizon that follows stratigraphy, then jumps onto the hydrate base."""
CONTACT_NAME = "Belsaro GWC"
FIRST_PICKED_INDEX = 180
"""Horizons with planted mistakes are picked from this trace index (east of the canyon)."""


@dataclass(frozen=True)
class DemoScenario:
    """Everything the demo writes, in memory."""

    modelled: ModelledSection
    picks: Picks
    pick_rows: tuple[dict[str, Any], ...]
    """Pick-file rows in file order: horizon, trace (1-based), twt_ms, kind."""
    truth: dict[str, Any]
    """What a checker should find; written as the truth JSON."""


def _closest_index(difference_ms: np.ndarray, start: int, stop: int) -> int:
    """Trace index in [start, stop) where |difference| is smallest (ignoring NaN)."""
    window = np.abs(difference_ms[start:stop])
    return start + int(np.nanargmin(window))


def _rows(name: str, kind: str, twt_ms: np.ndarray) -> list[dict[str, Any]]:
    return [
        {"horizon": name, "trace": index + 1, "twt_ms": round(float(time), 2), "kind": kind}
        for index, time in enumerate(twt_ms)
        if np.isfinite(time)
    ]


def _span(indices: np.ndarray, twt_ms: np.ndarray) -> dict[str, Any]:
    return {
        "traces": [int(indices[0]) + 1, int(indices[-1]) + 1],
        "twt_ms": [round(float(np.nanmin(twt_ms[indices])), 1), round(float(np.nanmax(twt_ms[indices])), 1)],
    }


def build_demo() -> DemoScenario:
    """Model the demo line and build its picks (with the planted mistakes) and its truth.

    Returns
    -------
    DemoScenario
    """
    earth, facts = demo_earth_model()
    modelled = model_section(
        earth,
        dt_ms=DT_MS,
        n_samples=N_SAMPLES,
        wavelet="ricker",
        frequency_hz=FREQUENCY_HZ,
        snr=SNR,
        polarity=1,
        multiples=True,
        seed=SEED,
        name=LINE_NAME,
    )
    times = modelled.surface_twt_ms
    seafloor_ms = modelled.seafloor_twt_ms
    multiple_ms = 2.0 * seafloor_ms  # first seafloor multiple, flat-layer rule (common practice)
    jitter = np.random.default_rng(SEED + 1)
    indices = np.arange(N_TRACES)

    def jittered(twt_ms: np.ndarray) -> np.ndarray:
        return twt_ms + jitter.normal(0.0, PICK_JITTER_MS, size=twt_ms.shape)

    picked: list[tuple[str, str, np.ndarray]] = [("Seafloor", "seafloor", jittered(seafloor_ms))]
    for name, unit in HORIZON_UNITS.items():
        picked.append((name, "horizon", jittered(times[unit])))

    # (a) follows its primary, then the first seafloor multiple where the two meet.
    hop_start = _closest_index(times[HOP_UNIT] - multiple_ms, 250, 450)
    hop_stop = min(hop_start + HOP_TRACES, N_TRACES)
    hop = np.full(N_TRACES, np.nan)
    hop[FIRST_PICKED_INDEX:hop_start] = times[HOP_UNIT][FIRST_PICKED_INDEX:hop_start]
    hop[hop_start:hop_stop] = multiple_ms[hop_start:hop_stop]
    picked.append((HOP_HORIZON, "horizon", jittered(hop)))

    # (b) a 'contact' that is really a dipping reflector.
    conformable = np.full(N_TRACES, np.nan)
    start, stop = CONTACT_MISTAKE_INDICES
    conformable[start:stop] = times[CONTACT_MISTAKE_UNIT][start:stop]
    picked.append((CONTACT_MISTAKE, "contact", jittered(conformable)))

    # (c) follows stratigraphy, then jumps onto the hydrate base where they cross.
    boundary_ms = times["hydrate base"]
    jump = _closest_index(times[JUMP_UNIT] - boundary_ms, 300, 500)
    crosscut = np.full(N_TRACES, np.nan)
    crosscut[FIRST_PICKED_INDEX:jump] = times[JUMP_UNIT][FIRST_PICKED_INDEX:jump]
    crosscut[jump:] = boundary_ms[jump:]
    picked.append((JUMP_HORIZON, "horizon", jittered(crosscut)))

    # (d) the genuine gas-water contact, picked where it exists.
    picked.append((CONTACT_NAME, "contact", jittered(times["Belsaro GWC"])))

    rows: list[dict[str, Any]] = []
    horizons = []
    for name, kind, twt_ms in picked:
        rounded = np.round(twt_ms, 2)
        rows.extend(_rows(name, kind, rounded))
        horizons.append(Horizon(name=name, kind=kind, twt_ms=rounded))
    picks = Picks(horizons=tuple(horizons))

    hop_indices = indices[hop_start:hop_stop]
    jump_indices = indices[jump:]
    conformable_indices = indices[start:stop]
    contact_indices = np.flatnonzero(np.isfinite(times["Belsaro GWC"]))
    conformable_dip = float(np.polyfit(conformable_indices, times[CONTACT_MISTAKE_UNIT][conformable_indices], 1)[0])
    truth = {
        "schema": "pitfalls-demo-truth/1",
        "line": LINE_NAME,
        "basin": BASIN_NAME,
        "invented": True,
        "section": {"n_traces": N_TRACES, "n_samples": N_SAMPLES, "dt_ms": DT_MS, "t0_ms": 0.0,
                    "trace_spacing_m": TRACE_SPACING_M, "inline": INLINE_NUMBER},
        "scenario": {
            **{key: (round(value, 2) if isinstance(value, float) else [round(v, 2) for v in value])
               for key, value in facts.items()},
            "water_velocity_m_s": WATER_VELOCITY_M_S,
            "wavelet": f"Ricker {FREQUENCY_HZ:g} Hz",
            "snr": SNR,
            "seafloor_twt_ms": [round(float(seafloor_ms.min()), 1), round(float(seafloor_ms.max()), 1)],
            "seafloor_reflection_coefficient": round(float(np.median(modelled.seafloor_reflection_coefficient)), 3),
            "pick_jitter_ms": PICK_JITTER_MS,
        },
        "expected": [
            {
                "id": "multiple.seafloor",
                "horizon": HOP_HORIZON,
                **_span(hop_indices, multiple_ms),
                "sentence": (
                    f"{HOP_HORIZON} follows the {HOP_UNIT} reflector from trace {FIRST_PICKED_INDEX + 1}, then from trace "
                    f"{hop_start + 1} to {hop_stop} it tracks the first seafloor multiple at twice the seafloor time, "
                    "reversed in polarity and dipping twice as steeply as the seafloor."
                ),
            },
            {
                "id": "contact.conformable",
                "horizon": CONTACT_MISTAKE,
                **_span(conformable_indices, times[CONTACT_MISTAKE_UNIT]),
                "dip_ms_per_trace": round(conformable_dip, 3),
                "sentence": (
                    f"{CONTACT_MISTAKE} is picked as a fluid contact but follows the dipping {CONTACT_MISTAKE_UNIT} "
                    f"reflector ({conformable_dip:.2f} ms per trace) on the anticline flank: it is stratigraphy, not a flat spot."
                ),
            },
            {
                "id": "crosscut.pick-follows-boundary",
                "horizon": JUMP_HORIZON,
                **_span(jump_indices, boundary_ms),
                "jump_trace": int(jump) + 1,
                "sentence": (
                    f"{JUMP_HORIZON} follows the {JUMP_UNIT} reflector to trace {jump}, then from trace {jump + 1} "
                    "it follows the reversed-polarity hydrate stability base, which parallels the seafloor and "
                    "cuts across the strata."
                ),
            },
        ],
        "must_not_be_high": [
            {
                "horizon": CONTACT_NAME,
                "kind": "contact",
                **_span(contact_indices, times["Belsaro GWC"]),
                "sentence": (
                    f"{CONTACT_NAME} is the genuine gas-water contact in the Belsaro sand: flat in depth "
                    f"({facts['gas_water_contact_depth_m']:.1f} m), the seafloor's polarity, cutting the "
                    "dipping sand reflections at the anticline crest; no finding on it should be above low."
                ),
            }
        ],
        "correct_picks": [
            {"horizon": "Seafloor", "kind": "seafloor", "follows": "seafloor"},
            *({"horizon": name, "kind": "horizon", "follows": unit} for name, unit in HORIZON_UNITS.items()),
        ],
        "other_events": {
            "hydrate_base_twt_ms": [round(float(np.nanmin(boundary_ms)), 1), round(float(np.nanmax(boundary_ms)), 1)],
            "opal_front_twt_ms": [round(float(np.nanmin(times["opal-CT front"])), 1),
                                  round(float(np.nanmax(times["opal-CT front"])), 1)],
            "first_seafloor_multiple_twt_ms": [round(float(multiple_ms.min()), 1), round(float(multiple_ms.max()), 1)],
        },
    }
    return DemoScenario(modelled=modelled, picks=picks, pick_rows=tuple(rows), truth=truth)


def build_demo_model() -> tuple[ModelledSection, Picks]:
    """The demo's modelled section and its picks (planted mistakes included), without files.

    Returns
    -------
    (ModelledSection, Picks)
    """
    scenario = build_demo()
    return scenario.modelled, scenario.picks


def text_header_lines() -> list[str]:
    """Textual-header lines of the demo SEG-Y: what the file is, in plain words."""
    return [
        f"SYNTHETIC LINE {LINE_NAME}  {BASIN_NAME.upper()} (INVENTED BASIN, NOT REAL DATA)",
        "ZERO-OFFSET LAYERED-EARTH MODEL WITH ALL SURFACE AND INTERBED MULTIPLES",
        f"WAVELET RICKER {FREQUENCY_HZ:g} HZ ZERO PHASE, BAND-LIMITED NOISE SNR {SNR:g}",
        "POLARITY: HARD SEAFLOOR (IMPEDANCE INCREASE) IS A POSITIVE NUMBER",
        f"SAMPLE INTERVAL {DT_MS:g} MS, {N_SAMPLES} SAMPLES, FIRST SAMPLE 0 MS",
        f"{N_TRACES} TRACES, SPACING {TRACE_SPACING_M:g} M, INLINE {INLINE_NUMBER} IN BYTES 189-192",
        "CROSSLINE = TRACE NUMBER IN BYTES 193-196; CDP X/Y BYTES 181/185, SCALAR -100",
        "EVENTS: SEAFLOOR WITH CANYON, FOLDED STRATA, HYDRATE STABILITY BASE (REVERSED),",
        "OPAL-CT DIAGENETIC FRONT (NORMAL), GAS-WATER CONTACT IN ANTICLINE CREST,",
        "SEAFLOOR MULTIPLES AND PEG-LEGS",
        "MADE BY PITFALLS.MODELLING.DEMO FOR TESTING PICK QUALITY CHECKS",
    ]


def write_demo(out_dir: str | os.PathLike) -> dict[str, Any]:
    """Write the demo scenario: ``<line>.sgy``, ``<line>_picks.csv`` and ``<line>_truth.json``.

    The output is deterministic (seeded noise and jitter): repeated runs give identical bytes.

    Parameters
    ----------
    out_dir : path-like
        Folder to write into; created if missing.

    Returns
    -------
    dict
        ``segy``, ``picks``, ``truth`` (paths as str), ``line``, and ``expected_ids``.
    """
    folder = Path(out_dir)
    folder.mkdir(parents=True, exist_ok=True)
    scenario = build_demo()
    segy_path = write_section_segy(
        folder / f"{LINE_NAME}.sgy",
        scenario.modelled.section,
        inline_number=INLINE_NUMBER,
        origin_x_m=431250.0,
        origin_y_m=7012500.0,
        azimuth_deg=72.0,
        sample_format=1,
        text_lines=text_header_lines(),
        text_encoding="ebcdic",
    )
    picks_path = write_picks_csv(folder / f"{LINE_NAME}_picks.csv", scenario.pick_rows)
    truth_path = folder / f"{LINE_NAME}_truth.json"
    truth_text = json.dumps(scenario.truth, indent=2, sort_keys=True) + "\n"
    write_whole(truth_path, lambda temporary: temporary.write_text(truth_text, encoding="utf-8"))
    return {
        "segy": str(segy_path),
        "picks": str(picks_path),
        "truth": str(truth_path),
        "line": LINE_NAME,
        "expected_ids": [item["id"] for item in scenario.truth["expected"]],
    }
