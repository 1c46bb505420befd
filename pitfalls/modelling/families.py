"""Randomised families of modelled lines, each with the mistakes planted in its picks, for
measuring how often the detectors find a planted mistake (recall) and how often they raise a
high or medium finding on something that is not planted (a false alarm).

Every line is drawn from a seeded generator over wide ranges: water 200-2000 m, seafloor dip
0-6 deg, Ricker peak 15-40 Hz, signal-to-noise 2-10, 2 or 4 ms sampling, IBM or IEEE floats,
either global polarity. The strata below the seafloor drape it near the top and follow a fold
and a regional dip deeper down, so correct picks both parallel the seafloor and cut across it.
Lines are small (``N_TRACES`` traces, the record cut a little below what the family needs),
so a family of 30 lines runs in a few minutes.

Families (``FAMILIES``):

- ``multiple-hop``: a horizon follows its reflector, then hops onto the first seafloor
  multiple (planted ``multiple.seafloor``); 1-2 correct picks.
- ``clean``: 2-4 correct picks, some draping the seafloor; nothing planted.
- ``hydrate-jump``: a hydrate stability base (placed from the drawn bottom-water temperature
  and gradient) cuts the dipping strata; a horizon follows a reflector, then jumps onto the
  base where they meet, on a bed that leaves the base by a period or more before the line
  ends (planted ``crosscut.pick-follows-boundary``); the base itself is a real event.
- ``diagenetic``: a diagenetic front parallels the seafloor and cuts the strata (planted:
  the front, ``crosscut.diagenetic-like``); 2-3 correct picks cross it.
- ``contact-top-picked`` and ``contact-top-unpicked``: a genuine gas-water contact, flat in
  depth, under an anticline, with and without its reservoir top picked; nothing planted.
- ``contact-follows-bed``: a pick of kind ``contact`` follows a bed dipping at least 3 deg on
  a flank (planted ``contact.conformable``).

A line's ``planted`` items must be found at medium or above, under one of the ids that name that
mistake (a jump onto a reversed hydrate base is also a polarity flip where the pick moved; a hop
onto the multiple may be named a peg-leg where the two coincide); its ``real_events`` are true
features of the line (a boundary, a contact) on which a section-level finding is a correct
description, not a false alarm. Every other finding at medium or above is a false alarm.
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Mapping, Sequence

import numpy as np

from pitfalls.model import Finding
from pitfalls.modelling import shapes
from pitfalls.modelling.earth import EarthModel, Overprint, Unit
from pitfalls.modelling.section import ModelledSection, model_section
from pitfalls.modelling.segy_writer import write_picks_csv, write_section_segy
from pitfalls.physics.hydrate import stability_base_depth_m

FAMILIES = (
    "multiple-hop",
    "clean",
    "hydrate-jump",
    "diagenetic",
    "contact-top-picked",
    "contact-top-unpicked",
    "contact-follows-bed",
)
N_TRACES = 160
TRACE_SPACING_M = 12.5
WATER_VELOCITY_M_S = 1500.0
PICK_JITTER_SAMPLES = 0.15
"""Standard deviation of the pick jitter in samples: a careful auto-tracker."""


@dataclass(frozen=True)
class Planted:
    """Something a checker should report: ids that name it, the pick (None: the section), where."""

    ids: tuple[str, ...]
    horizon: str | None
    traces: tuple[int, int]
    """Inclusive 1-based trace range."""
    twt_ms: tuple[float, float] | None = None
    """Time window of a section-level event, ms (None for a pick: the pick says where)."""


@dataclass(frozen=True)
class FamilyLine:
    """One drawn line: its parameters, section, pick rows, and what is planted in it."""

    family: str
    index: int
    parameters: Mapping[str, Any]
    modelled: ModelledSection
    pick_rows: tuple[dict[str, Any], ...]
    planted: tuple[Planted, ...]
    real_events: tuple[Planted, ...] = field(default_factory=tuple)
    sample_format: int = 1
    """SEG-Y sample format: 1 IBM, 5 IEEE."""


# --- drawing ---------------------------------------------------------------------------------
def _draw_common(rng: np.random.Generator, water_m: tuple[float, float] = (200.0, 2000.0)) -> dict[str, Any]:
    return {
        "water_depth_m": float(rng.uniform(*water_m)),
        "seafloor_dip_deg": float(rng.uniform(0.0, 6.0)) * float(rng.choice([-1.0, 1.0])),
        "frequency_hz": float(rng.uniform(15.0, 40.0)),
        "snr": float(rng.uniform(2.0, 10.0)),
        "dt_ms": float(rng.choice([2.0, 4.0])),
        "sample_format": int(rng.choice([1, 5])),
        "polarity": int(rng.choice([-1, 1])),
        "structure_relief_m": float(rng.uniform(40.0, 140.0)),
        "structure_half_width_traces": float(rng.uniform(25.0, 50.0)),
        "crest_trace": float(rng.uniform(0.35, 0.65) * N_TRACES),
        "regional_dip_m_per_trace": float(rng.uniform(-0.6, 0.6)),
        "drape_units": int(rng.integers(2, 5)),
    }


def _seafloor_m(parameters: Mapping[str, Any], rng: np.random.Generator) -> np.ndarray:
    trace_index = np.arange(N_TRACES, dtype=float)
    slope = math.tan(math.radians(parameters["seafloor_dip_deg"])) * TRACE_SPACING_M
    seafloor = parameters["water_depth_m"] + slope * (trace_index - N_TRACES / 2.0)
    seafloor = seafloor + 2.0 * np.sin(trace_index / float(rng.uniform(15.0, 40.0)))
    return np.maximum(seafloor, 150.0)


def _units(parameters: Mapping[str, Any], seafloor: np.ndarray, rng: np.random.Generator, reach_below_m: float,
           reservoir_at_m: float | None = None) -> tuple[list[Unit], int | None]:
    """Units down to ``reach_below_m`` below the seafloor: the first ``drape_units`` parallel the seafloor,
    deeper ones blend into a fold plus a regional dip. Velocities follow 1600 m/s + 0.8 /s x depth below the
    seafloor on every trace (compaction) with an alternating contrast, so reflections of both signs occur. A unit near ``reservoir_at_m`` below the
    seafloor becomes a fast sand (the reservoir); its index is returned."""
    mean_seafloor = float(np.mean(seafloor))
    fold = shapes.anticline(N_TRACES, parameters["crest_trace"], 0.0, parameters["structure_relief_m"],
                            parameters["structure_half_width_traces"])
    structural = fold + parameters["regional_dip_m_per_trace"] * (np.arange(N_TRACES) - parameters["crest_trace"])
    units = [Unit("U00", seafloor.copy(), 1580.0)]
    below_m = 0.0
    index = 0
    reservoir_index = None
    while below_m < reach_below_m:
        index += 1
        below_m += float(rng.uniform(35.0, 75.0)) * (1.0 + below_m / 1500.0)
        weight = float(np.clip((index - parameters["drape_units"]) / 3.0, 0.0, 1.0))
        top = (1.0 - weight) * (seafloor + below_m) + weight * (mean_seafloor + below_m + structural)
        contrast = float(rng.uniform(60.0, 160.0)) * (1.0 if index % 2 else -0.6)
        # compaction: velocity follows the depth below the seafloor trace by trace (the default rules'
        # 1600 m/s + 0.8 /s x depth), with the unit's contrast on top
        burial_m = np.maximum(top - seafloor, 0.0) + 30.0
        velocity = np.maximum(1600.0 + 0.8 * burial_m + contrast, 1550.0)
        if reservoir_at_m is not None and reservoir_index is None and below_m >= reservoir_at_m:
            velocity = np.asarray(units[-1].velocity_m_s) + 350.0  # a clean sand, faster than the shale above
            reservoir_index = index
        units.append(Unit(f"U{index:02d}", top, velocity))
    return units, reservoir_index


def _n_samples(deepest_ms: float, dt_ms: float) -> int:
    return int(math.ceil(deepest_ms / dt_ms)) + 1


def _jittered(rng: np.random.Generator, twt_ms: np.ndarray, dt_ms: float) -> np.ndarray:
    return twt_ms + rng.normal(0.0, PICK_JITTER_SAMPLES * dt_ms, size=twt_ms.shape)


def _rows(name: str, kind: str, twt_ms: np.ndarray) -> list[dict[str, Any]]:
    return [{"horizon": name, "trace": index + 1, "twt_ms": round(float(time), 2), "kind": kind}
            for index, time in enumerate(twt_ms) if np.isfinite(time)]


def _model(parameters: Mapping[str, Any], earth: EarthModel, deepest_ms: float, seed: int, name: str) -> ModelledSection:
    return model_section(earth, dt_ms=parameters["dt_ms"], n_samples=_n_samples(deepest_ms, parameters["dt_ms"]),
                         wavelet="ricker", frequency_hz=parameters["frequency_hz"], snr=parameters["snr"],
                         polarity=parameters["polarity"], multiples=True, seed=seed, name=name)


def _below_ms(modelled: ModelledSection, unit: str) -> np.ndarray:
    return modelled.surface_twt_ms[unit] - modelled.seafloor_twt_ms


def _choose_units(modelled: ModelledSection, rng: np.random.Generator, count: int, low_ms: float, high_ms: float,
                  exclude: Iterable[str] = ()) -> list[str]:
    """``count`` unit tops present on every trace whose median time below the seafloor lies in [low, high],
    with a strong enough reflection to pick, spread over the interval."""
    excluded = set(exclude)
    names = []
    for name, twt in modelled.surface_twt_ms.items():
        if not name.startswith("U") or name == "U00" or name in excluded or not np.isfinite(twt).all():
            continue
        below = float(np.median(twt - modelled.seafloor_twt_ms))
        strength = float(np.median(np.abs(modelled.reflection_coefficient[name])))
        if low_ms <= below <= high_ms and strength >= 0.01:
            names.append(name)
    if len(names) <= count:
        return names
    chosen = np.sort(rng.choice(len(names), size=count, replace=False))
    return [names[i] for i in chosen]


def _correct_picks(modelled: ModelledSection, units: Sequence[str], rng: np.random.Generator, dt_ms: float,
                   prefix: str = "H") -> list[tuple[str, str, np.ndarray]]:
    return [(f"{prefix}{number}-{unit}", "horizon", _jittered(rng, modelled.surface_twt_ms[unit], dt_ms))
            for number, unit in enumerate(units, start=1)]


def _seafloor_pick(modelled: ModelledSection, rng: np.random.Generator, dt_ms: float) -> list[tuple[str, str, np.ndarray]]:
    if rng.uniform() < 0.5:
        return [("Seafloor", "seafloor", _jittered(rng, modelled.seafloor_twt_ms, dt_ms))]
    return []


def _crossing_index(difference_ms: np.ndarray, rng: np.random.Generator) -> int:
    """Trace index in the middle half where |difference| is smallest (a little jitter breaks ties)."""
    start, stop = N_TRACES // 4, 3 * N_TRACES // 4
    window = np.abs(difference_ms[start:stop]) + rng.uniform(0.0, 0.01, size=stop - start)
    return start + int(np.nanargmin(window))


def draw_line(family: str, seed: int, index: int) -> FamilyLine:
    """Line ``index`` of ``family`` drawn from the generator seeded with (seed, family, index).

    Parameters
    ----------
    family : str
        One of ``FAMILIES``.
    seed : int
        Base seed of the family run.
    index : int
        Line number within the run.

    Returns
    -------
    FamilyLine
    """
    if family not in FAMILIES:
        raise ValueError(f"family must be one of {FAMILIES}, not {family!r}")
    rng = np.random.default_rng([seed, FAMILIES.index(family), index])
    builder = _BUILDERS[family]
    return builder(rng, seed * 1000 + index, index)


def _multiple_hop(rng: np.random.Generator, noise_seed: int, index: int) -> FamilyLine:
    parameters = _draw_common(rng)
    seafloor = _seafloor_m(parameters, rng)
    seafloor_ms_max = 2000.0 * float(seafloor.max()) / WATER_VELOCITY_M_S
    deepest_ms = 2.0 * seafloor_ms_max + 250.0
    units, _ = _units(parameters, seafloor, rng, reach_below_m=1.3 * (deepest_ms - seafloor_ms_max) + 200.0)
    earth = EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), trace_spacing_m=TRACE_SPACING_M)
    modelled = _model(parameters, earth, deepest_ms, noise_seed, f"hop-{index}")
    dt_ms = parameters["dt_ms"]
    multiple_ms = 2.0 * modelled.seafloor_twt_ms  # first seafloor multiple, vertical rays
    candidates = [name for name, twt in modelled.surface_twt_ms.items()
                  if name != "U00" and np.isfinite(twt).all() and np.median(np.abs(modelled.reflection_coefficient[name])) >= 0.01]
    misfit = [float(np.min(np.abs(modelled.surface_twt_ms[name] - multiple_ms)[N_TRACES // 4: 3 * N_TRACES // 4]))
              for name in candidates]
    hop_unit = candidates[int(np.argmin(misfit))]
    hop = _crossing_index(modelled.surface_twt_ms[hop_unit] - multiple_ms, rng)
    path = modelled.surface_twt_ms[hop_unit].copy()
    path[hop:] = multiple_ms[hop:]
    picks = _seafloor_pick(modelled, rng, dt_ms)
    others = _choose_units(modelled, rng, int(rng.integers(1, 3)), 80.0, float(np.median(multiple_ms - modelled.seafloor_twt_ms)) - 150.0,
                           exclude=[hop_unit])
    picks += _correct_picks(modelled, others, rng, dt_ms)
    picks.append(("Hop", "horizon", _jittered(rng, path, dt_ms)))
    planted = (Planted(("multiple.seafloor", "multiple.peg-leg"), "Hop", (hop + 1, N_TRACES)),)
    return _line("multiple-hop", index, parameters, modelled, picks, planted, ())


def _clean(rng: np.random.Generator, noise_seed: int, index: int) -> FamilyLine:
    parameters = _draw_common(rng)
    seafloor = _seafloor_m(parameters, rng)
    seafloor_ms_max = 2000.0 * float(seafloor.max()) / WATER_VELOCITY_M_S
    deepest_ms = seafloor_ms_max + 1100.0
    units, _ = _units(parameters, seafloor, rng, reach_below_m=1400.0)
    earth = EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), trace_spacing_m=TRACE_SPACING_M)
    modelled = _model(parameters, earth, deepest_ms, noise_seed, f"clean-{index}")
    dt_ms = parameters["dt_ms"]
    count = int(rng.integers(2, 5))
    draping = _choose_units(modelled, rng, 1, 60.0, 350.0)
    deeper = _choose_units(modelled, rng, count - len(draping), 100.0, 900.0, exclude=draping)
    picks = _seafloor_pick(modelled, rng, dt_ms) + _correct_picks(modelled, draping + deeper, rng, dt_ms)
    return _line("clean", index, parameters, modelled, picks, (), ())


def _boundary_event(modelled: ModelledSection, name: str, dt_ms: float, below_extra_ms: float = 0.0) -> Planted:
    twt = modelled.surface_twt_ms[name]
    present = np.flatnonzero(np.isfinite(twt))
    period_ms = 1000.0 / 15.0
    return Planted(("crosscut.hydrate-like", "crosscut.diagenetic-like", "contact.unpicked-flat-event"), None,
                   (int(present[0]) + 1, int(present[-1]) + 1),
                   (float(np.nanmin(twt)) - period_ms, float(np.nanmax(twt)) + below_extra_ms + period_ms))


def _hydrate_jump(rng: np.random.Generator, noise_seed: int, index: int) -> FamilyLine:
    parameters = _draw_common(rng, water_m=(600.0, 2000.0))  # the stability zone needs a few hundred metres of water
    parameters["drape_units"] = int(rng.integers(0, 2))  # strata must cut the boundary
    parameters["seafloor_temperature_c"] = float(rng.uniform(2.0, 6.0))
    parameters["geothermal_gradient_c_per_km"] = float(rng.uniform(30.0, 60.0))
    seafloor = _seafloor_m(parameters, rng)
    base_below = np.array([stability_base_depth_m(depth, parameters["seafloor_temperature_c"],
                                                  parameters["geothermal_gradient_c_per_km"]) for depth in seafloor])
    seafloor_ms_max = 2000.0 * float(seafloor.max()) / WATER_VELOCITY_M_S
    deepest_ms = seafloor_ms_max + 1000.0
    units, _ = _units(parameters, seafloor, rng, reach_below_m=1300.0)
    free_gas_m = float(rng.uniform(30.0, 60.0))
    hydrate = Overprint("hydrate base", "hydrate", seafloor + base_below, float(rng.uniform(180.0, 320.0)),
                        thickness_m=free_gas_m, gas_velocity_drop_m_s=float(rng.uniform(250.0, 450.0)))
    earth = EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), (hydrate,), trace_spacing_m=TRACE_SPACING_M)
    modelled = _model(parameters, earth, deepest_ms, noise_seed, f"hydrate-{index}")
    dt_ms = parameters["dt_ms"]
    base_ms = modelled.surface_twt_ms["hydrate base"]
    base_below_ms = float(np.nanmedian(base_ms - modelled.seafloor_twt_ms))
    # The pick jumps where its bed meets the base, and the bed must leave the base by at least one period
    # before the line ends: a jump that never takes the pick a cycle off its bed changes nothing.
    period_ms = 1000.0 / parameters["frequency_hz"]
    best = None
    for name in _choose_units(modelled, rng, 99, 40.0, base_below_ms + 200.0):
        difference = modelled.surface_twt_ms[name] - base_ms
        where = _crossing_index(difference, rng)
        misfit = abs(float(difference[where]))
        diverges = float(np.nanmax(np.abs(difference[where:]))) >= period_ms
        key = (not diverges, misfit)
        if best is None or key < best[0]:
            best = (key, name, where)
    _, jump_unit, jump = best
    path = modelled.surface_twt_ms[jump_unit].copy()
    path[jump:] = base_ms[jump:]
    others = _choose_units(modelled, rng, int(rng.integers(1, 3)), 60.0, 900.0, exclude=[jump_unit])
    picks = _seafloor_pick(modelled, rng, dt_ms) + _correct_picks(modelled, others, rng, dt_ms)
    picks.append(("Jump", "horizon", _jittered(rng, path, dt_ms)))
    # the jump onto the reversed base is also a polarity flip where the pick moves to another event
    planted = (Planted(("crosscut.pick-follows-boundary", "pick.polarity-flip", "pick.cycle-skip"), "Jump",
                       (jump + 1, N_TRACES)),)
    gas_ms = 2000.0 * free_gas_m / 1600.0
    return _line("hydrate-jump", index, parameters, modelled, picks, planted,
                 (_boundary_event(modelled, "hydrate base", dt_ms, gas_ms),))


def _diagenetic(rng: np.random.Generator, noise_seed: int, index: int) -> FamilyLine:
    parameters = _draw_common(rng)
    parameters["drape_units"] = int(rng.integers(0, 2))
    seafloor = _seafloor_m(parameters, rng)
    front_below_m = float(rng.uniform(300.0, 750.0))
    seafloor_ms_max = 2000.0 * float(seafloor.max()) / WATER_VELOCITY_M_S
    deepest_ms = seafloor_ms_max + 1100.0
    units, _ = _units(parameters, seafloor, rng, reach_below_m=1400.0)
    front = Overprint("front", "diagenetic", seafloor + front_below_m, float(rng.uniform(250.0, 400.0)))
    earth = EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), (front,), trace_spacing_m=TRACE_SPACING_M)
    modelled = _model(parameters, earth, deepest_ms, noise_seed, f"diagenetic-{index}")
    dt_ms = parameters["dt_ms"]
    picks = _seafloor_pick(modelled, rng, dt_ms) + _correct_picks(
        modelled, _choose_units(modelled, rng, int(rng.integers(2, 4)), 60.0, 950.0), rng, dt_ms)
    event = _boundary_event(modelled, "front", dt_ms)
    planted = (Planted(("crosscut.diagenetic-like",), None, event.traces, event.twt_ms),)
    return _line("diagenetic", index, parameters, modelled, picks, planted, (event,))


def _contact_model(rng: np.random.Generator, noise_seed: int, index: int, family: str):
    parameters = _draw_common(rng)
    parameters["drape_units"] = int(rng.integers(0, 3))
    parameters["structure_relief_m"] = float(rng.uniform(80.0, 160.0))
    parameters["regional_dip_m_per_trace"] = float(rng.uniform(-0.3, 0.3))
    seafloor = _seafloor_m(parameters, rng)
    reservoir_below_m = float(rng.uniform(350.0, 800.0))
    seafloor_ms_max = 2000.0 * float(seafloor.max()) / WATER_VELOCITY_M_S
    deepest_ms = seafloor_ms_max + 1100.0
    units, reservoir = _units(parameters, seafloor, rng, reach_below_m=1400.0, reservoir_at_m=reservoir_below_m)
    top = np.asarray(units[reservoir].top_depth_m)
    column_m = float(rng.uniform(25.0, 0.5 * parameters["structure_relief_m"]))
    contact_depth_m = float(np.min(top)) + column_m
    contact = np.where(top < contact_depth_m, contact_depth_m, np.nan)
    gas = Overprint("GWC", "gas", contact, float(rng.uniform(-600.0, -400.0)), units=(units[reservoir].name,))
    earth = EarthModel(WATER_VELOCITY_M_S, seafloor, tuple(units), (gas,), trace_spacing_m=TRACE_SPACING_M)
    modelled = _model(parameters, earth, deepest_ms, noise_seed, f"{family}-{index}")
    return parameters, modelled, units[reservoir].name


def _contact(rng: np.random.Generator, noise_seed: int, index: int, top_picked: bool) -> FamilyLine:
    family = "contact-top-picked" if top_picked else "contact-top-unpicked"
    parameters, modelled, reservoir = _contact_model(rng, noise_seed, index, family)
    dt_ms = parameters["dt_ms"]
    contact_ms = modelled.surface_twt_ms["GWC"]
    picks = _seafloor_pick(modelled, rng, dt_ms)
    reservoir_below = float(np.median(_below_ms(modelled, reservoir)))
    shallower = _choose_units(modelled, rng, 1, 60.0, reservoir_below - 150.0, exclude=[reservoir])
    picks += _correct_picks(modelled, shallower, rng, dt_ms)
    if top_picked:
        picks.append(("Reservoir top", "horizon", _jittered(rng, modelled.surface_twt_ms[reservoir], dt_ms)))
    picks.append(("GWC", "contact", _jittered(rng, contact_ms, dt_ms)))
    present = np.flatnonzero(np.isfinite(contact_ms))
    event = Planted(("contact.unpicked-flat-event",), None, (int(present[0]) + 1, int(present[-1]) + 1),
                    (float(np.nanmin(modelled.surface_twt_ms[reservoir])) - 70.0, float(np.nanmax(contact_ms)) + 70.0))
    return _line(family, index, parameters, modelled, picks, (), (event,))


def _contact_follows_bed(rng: np.random.Generator, noise_seed: int, index: int) -> FamilyLine:
    parameters, modelled, reservoir = _contact_model(rng, noise_seed, index, "contact-follows-bed")
    dt_ms = parameters["dt_ms"]
    crest = int(round(parameters["crest_trace"]))
    # a bed on the flank, where it dips: from a third of a half-width off the crest, 40-70 traces long
    length = int(rng.integers(40, 71))
    side = int(rng.choice([-1, 1]))
    offset = int(parameters["structure_half_width_traces"] / 3.0)
    start = crest + offset if side > 0 else crest - offset - length
    start = int(np.clip(start, 0, N_TRACES - length))
    # the bed must dip by at least 3 deg along the pick: a 'contact' on a bed flatter than that cannot be
    # told from a fluid contact by its geometry
    window = slice(start, start + length)
    angles = {}
    for name in _choose_units(modelled, rng, 99, 200.0, 900.0, exclude=[reservoir]):
        slope_ms = float(np.median(np.abs(np.gradient(modelled.surface_twt_ms[name][window]))))
        angles[name] = math.degrees(math.atan(slope_ms / 1000.0 * 2000.0 / 2.0 / TRACE_SPACING_M))
    steep = [name for name, angle in angles.items() if angle >= 3.0]
    bed = steep[0] if steep else max(angles, key=angles.get)
    path = np.full(N_TRACES, np.nan)
    path[start:start + length] = modelled.surface_twt_ms[bed][start:start + length]
    picks = _seafloor_pick(modelled, rng, dt_ms)
    picks += _correct_picks(modelled, _choose_units(modelled, rng, 1, 60.0, 900.0, exclude=[bed, reservoir]), rng, dt_ms)
    picks.append(("Flat spot", "contact", _jittered(rng, path, dt_ms)))
    picks.append(("GWC", "contact", _jittered(rng, modelled.surface_twt_ms["GWC"], dt_ms)))
    contact_ms = modelled.surface_twt_ms["GWC"]
    present = np.flatnonzero(np.isfinite(contact_ms))
    # a 'contact' on a bed is named by its strata, and also by its tilt or a reversed polarity
    planted = (Planted(("contact.conformable", "contact.tilted", "contact.polarity"), "Flat spot",
                       (start + 1, start + length)),)
    event = Planted(("contact.unpicked-flat-event",), None, (int(present[0]) + 1, int(present[-1]) + 1),
                    (float(np.nanmin(modelled.surface_twt_ms[reservoir])) - 70.0, float(np.nanmax(contact_ms)) + 70.0))
    return _line("contact-follows-bed", index, parameters, modelled, picks, planted, (event,))


def _line(family: str, index: int, parameters: Mapping[str, Any], modelled: ModelledSection,
          picks: Sequence[tuple[str, str, np.ndarray]], planted: tuple[Planted, ...],
          real_events: tuple[Planted, ...]) -> FamilyLine:
    rows: list[dict[str, Any]] = []
    for name, kind, twt_ms in picks:
        rows.extend(_rows(name, kind, twt_ms))
    return FamilyLine(family, index, dict(parameters), modelled, tuple(rows), planted, real_events,
                      int(parameters["sample_format"]))


_BUILDERS = {
    "multiple-hop": _multiple_hop,
    "clean": _clean,
    "hydrate-jump": _hydrate_jump,
    "diagenetic": _diagenetic,
    "contact-top-picked": lambda rng, seed, index: _contact(rng, seed, index, True),
    "contact-top-unpicked": lambda rng, seed, index: _contact(rng, seed, index, False),
    "contact-follows-bed": _contact_follows_bed,
}


# --- files and judging -----------------------------------------------------------------------
def write_line(line: FamilyLine, folder: str | os.PathLike) -> tuple[Path, Path]:
    """Write the line as SEG-Y (its drawn sample format) and its picks as CSV; returns both paths."""
    folder = Path(folder)
    stem = f"{line.family}-{line.index:03d}"
    segy = write_section_segy(folder / f"{stem}.sgy", line.modelled.section, sample_format=line.sample_format)
    picks = write_picks_csv(folder / f"{stem}_picks.csv", line.pick_rows)
    return segy, picks


def _overlaps(a: tuple[float, float] | None, b: tuple[float, float] | None) -> bool:
    return a is not None and b is not None and a[0] <= b[1] and b[0] <= a[1]


def _names(finding: Finding) -> set[str]:
    """The ids a finding stands for: its own, and those of the detectors' findings merged into it."""
    merged = finding.evidence.get("merged_ids", ()) if isinstance(finding.evidence, Mapping) else ()
    return {finding.id, *(merged if isinstance(merged, (list, tuple)) else ())}


def matches(finding: Finding, item: Planted, any_id: bool = False) -> bool:
    """True when the finding names ``item``: one of its ids (any id when ``any_id``), its pick (or the
    section), overlapping traces and times."""
    if not (any_id or _names(finding) & set(item.ids)) or finding.horizon != item.horizon:
        return False
    if not _overlaps(finding.traces, item.traces):
        return False
    return item.twt_ms is None or _overlaps(finding.twt_ms, item.twt_ms)


@dataclass(frozen=True)
class LineScore:
    """How the detectors did on one line."""

    found: int
    """Planted items found at medium or above."""
    planted: int
    false_alarms: tuple[Finding, ...]
    """Findings at medium or above that match nothing planted and no real event."""


def judge(line: FamilyLine, findings: Sequence[Finding]) -> LineScore:
    """Recall and false alarms of ``findings`` on ``line`` (severity medium or above counts)."""
    strong = [f for f in findings if f.severity in ("high", "medium") and f.accepted is None]
    found = sum(1 for item in line.planted if any(matches(f, item) for f in strong))
    # A finding on a planted mistake describes it, whatever its id; one on a real event only under the ids
    # that name that event (a picked contact called a diagenetic boundary is a false alarm).
    false_alarms = tuple(f for f in strong if not any(matches(f, item, any_id=True) for item in line.planted)
                         and not any(matches(f, item) for item in line.real_events))
    return LineScore(found, len(line.planted), false_alarms)
