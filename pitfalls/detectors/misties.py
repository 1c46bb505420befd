"""Horizons that do not tie where two sections meet.

At a crossing of two 2-D lines, or where a 2-D line runs through a 3-D survey, the same
horizon must show the same time on both, once the bulk shift and phase difference that the
two sections show on the seafloor are allowed for (a line-to-line static and a processing
phase difference move every event alike). The seafloor's shift and phase come from a short
complex cross-correlation of the two traces at the tie (``pitfalls.physics.misties``). A
horizon picked on both whose time difference departs from the seafloor's by more than
``tolerance_periods`` dominant periods is ``pick.mis-tie``: one of the two picks is on
another event, or on another loop of the same event, and a map built from both lines has a
step there that is not geology.

Where the departure is a whole number of periods (within the tolerance) the two picks are
most likely on different loops of the same event (a cycle skip on one line), and the finding
says which line's pick lies lower. Where one line's pick lies on that line's first seafloor
multiple (twice the seafloor time) or on a first-order peg-leg of a shallower pick (that
pick's time plus the seafloor's), and the other line's pick does not, the finding names the
line and the multiple and is placed on that line. These explanations are read from the times
alone; the traces are not compared at the horizon.

Each mis-tie is placed on the section whose pick is the likelier culprit: the one with the
pick on a multiple, or else the one that mis-ties this horizon at the larger share of all its
ties in the project (a line picked on the wrong loop mis-ties wherever it is crossed).

Severity: high from ``high_periods`` periods, or when a pick lies on a multiple; medium
otherwise. When the seafloor itself correlates poorly between the two traces (below
``min_seafloor_correlation``) the line-to-line shift is unsure and the finding is low.
Confidence: the seafloor correlation times ``min(1, (|residual| / T - tol) / tol)``, so a
departure just past the tolerance is barely believed and one of twice the tolerance fully.

References
----------
.. [1] Mis-tie at a line crossing, after removing the bulk shift and phase difference the lines
       show on a common reflector; a whole-period mis-tie points to a cycle skip on one line
       (common practice).
.. [2] Backus, M. M., 1959, Water reverberations - their nature and elimination, Geophysics
       24(2), 233-261 (seafloor multiple at twice the seafloor time, peg-legs at t_r + t_sf).
"""
from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any, Mapping, Sequence

import numpy as np

from pitfalls.model import Finding, Horizon, Picks, Section
from pitfalls.physics.misties import (SeafloorTie, expected_pick_shift_ms, loop_offset, multiple_match,
                                      seafloor_tie)
from pitfalls.physics.seafloor import dominant_frequency_hz, find_seafloor

NAME = "misties"
FAMILY = "pick"
KINDS = {
    "mis-tie": (
        "Where two sections cross, this horizon's time difference departs from the seafloor's by more than "
        "the tolerance: the two picks are not on the same phase of the same event.",
        "A horizon mapped from lines that do not tie carries a step at every crossing: false closures, false "
        "throws and wrong thicknesses follow, and the volume booked on the map is wrong.",
        "Display the two sections side by side at the crossing, shifted by the seafloor's bulk shift; follow the "
        "event from one line into the other and re-pick the line whose pick left it (the finding says which "
        "lies on a multiple or on another loop, where the times show it).",
    ),
}
RULE_KEYS = {
    "tolerance_periods": (float, 0.01, 1.0),
    "high_periods": (float, 0.1, 5.0),
    "min_seafloor_correlation": (float, 0.0, 1.0),
    "window_ms": (float, 8.0, 2000.0),
    "search_ms": (float, 0.0, 1000.0),
    "tie_traces": (int, 0, 50),
    "min_overlap_traces": (int, 1, 100000),
}


@dataclass(frozen=True)
class TieSide:
    """One section's traces and picks at a tie."""

    section: str
    """The section as the project file names it."""
    geometry: str
    trace_index: int
    """0-based file position of the trace nearest the tie."""
    trace_number: int
    """1-based trace number (2-D) as pick files count it."""
    inline: int
    xline: int
    cdp: int
    traces: np.ndarray
    """(k, n_samples) the tie trace and its neighbours along the line or inline."""
    centre_row: int
    """Row of ``traces`` that is the tie trace."""
    horizon_names: tuple[str, ...]
    horizon_kinds: tuple[str, ...]
    horizon_twt_ms: np.ndarray
    """(n_horizons, k) picks on those traces."""
    dt_ms: float
    t0_ms: float
    spacing_m: float
    dominant_frequency_hz: float = float("nan")
    """The section's dominant frequency from its scan; NaN to measure it on ``traces``."""


@dataclass(frozen=True)
class TieMeasurement:
    """What was measured at one tie, for the project report's list of ties."""

    section_a: str
    section_b: str
    cdp_a: int
    cdp_b: int
    location_a: str
    location_b: str
    x_m: float
    y_m: float
    seafloor_twt_ms_a: float
    seafloor_twt_ms_b: float
    seafloor: SeafloorTie
    dominant_frequency_hz: float
    horizons_compared: tuple[str, ...]
    """Horizons picked on both sections at this tie and compared."""
    horizons_mistied: tuple[str, ...]


@dataclass(frozen=True)
class MisTie:
    """A mis-tie before it is placed on one of its two sections."""

    section_a: str
    section_b: str
    location_a: Mapping[str, Any]
    """Finding range keywords (``traces`` or ``inlines`` + ``xlines``) at the tie on section a."""
    location_b: Mapping[str, Any]
    fixed_on: str
    """``a`` or ``b`` when a pick lies on a multiple on that side only; empty otherwise."""
    finding: Finding


def _location(side: TieSide) -> str:
    return f"IL {side.inline} XL {side.xline}" if side.geometry == "3d" else f"tr {side.trace_number}"


def _panel(side: TieSide) -> tuple[Section, Picks]:
    section = Section(data=side.traces, dt_ms=side.dt_ms, t0_ms=side.t0_ms, trace_spacing_m=side.spacing_m,
                      trace_numbers=np.arange(1, len(side.traces) + 1), name=side.section)
    picks = Picks(tuple(Horizon(name, kind, np.asarray(times, dtype=float))
                        for name, kind, times in zip(side.horizon_names, side.horizon_kinds, side.horizon_twt_ms)))
    return section, picks


def _at_centre(values: np.ndarray, centre: int) -> float:
    """The value at the tie trace, or the median of its neighbours' where it has none."""
    if np.isfinite(values[centre]):
        return float(values[centre])
    finite = values[np.isfinite(values)]
    return float(np.median(finite)) if finite.size else float("nan")


def _picks_at(side: TieSide) -> dict[str, float]:
    return {name: _at_centre(np.asarray(times, dtype=float), side.centre_row)
            for name, kind, times in zip(side.horizon_names, side.horizon_kinds, side.horizon_twt_ms)
            if kind != "seafloor"}


def tie(a: TieSide, b: TieSide, x_m: float, y_m: float,
        rules: Mapping[str, Any]) -> tuple[TieMeasurement, list[MisTie]]:
    """Measure one tie and return its record and its mis-ties (placed by :func:`place_mis_ties`)."""
    settings = rules[NAME]
    panel_a, picks_a = _panel(a)
    panel_b, picks_b = _panel(b)
    seafloor_a = _at_centre(find_seafloor(panel_a, picks_a, rules).twt_ms, a.centre_row)
    seafloor_b = _at_centre(find_seafloor(panel_b, picks_b, rules).twt_ms, b.centre_row)
    frequencies = [side.dominant_frequency_hz if np.isfinite(side.dominant_frequency_hz)
                   else dominant_frequency_hz(panel, np.full(panel.n_traces, time))
                   for side, panel, time in ((a, panel_a, seafloor_a), (b, panel_b, seafloor_b))]
    frequency_hz = float(np.nanmean(frequencies)) if np.isfinite(frequencies).any() else float("nan")
    period_ms = 1000.0 / frequency_hz if np.isfinite(frequency_hz) and frequency_hz > 0 else float("nan")
    trace_a, trace_b = a.traces[a.centre_row], b.traces[b.centre_row]
    if a.dt_ms != b.dt_ms:  # bring b onto a's sampling
        time_b = b.t0_ms + b.dt_ms * np.arange(len(trace_b))
        trace_b = np.interp(b.t0_ms + a.dt_ms * np.arange(int((time_b[-1] - b.t0_ms) / a.dt_ms) + 1), time_b,
                            np.nan_to_num(trace_b))
    sea_tie = seafloor_tie(trace_a, trace_b, a.dt_ms, a.t0_ms, b.t0_ms, seafloor_a, seafloor_b,
                           settings["window_ms"], settings["search_ms"])
    times_a, times_b = _picks_at(a), _picks_at(b)
    shared = [name for name in times_a if name in times_b and np.isfinite(times_a[name]) and np.isfinite(times_b[name])]
    findings: list[MisTie] = []
    usable = np.isfinite(period_ms) and np.isfinite(sea_tie.lag_ms)
    if usable:
        tolerance_ms = settings["tolerance_periods"] * period_ms
        expected = expected_pick_shift_ms(sea_tie, period_ms)
        for name in shared:
            residual = (times_b[name] - times_a[name]) - expected
            if abs(residual) <= tolerance_ms:
                continue
            findings.append(_finding(name, a, b, x_m, y_m, times_a, times_b, seafloor_a, seafloor_b, sea_tie,
                                     expected, residual, period_ms, frequency_hz, settings))
    measurement = TieMeasurement(
        section_a=a.section, section_b=b.section, cdp_a=a.cdp, cdp_b=b.cdp, location_a=_location(a),
        location_b=_location(b), x_m=x_m, y_m=y_m, seafloor_twt_ms_a=seafloor_a, seafloor_twt_ms_b=seafloor_b,
        seafloor=sea_tie, dominant_frequency_hz=frequency_hz, horizons_compared=tuple(shared) if usable else (),
        horizons_mistied=tuple(m.finding.horizon for m in findings))
    return measurement, findings


def _finding(name: str, a: TieSide, b: TieSide, x_m: float, y_m: float, times_a: dict[str, float],
             times_b: dict[str, float], seafloor_a: float, seafloor_b: float, sea_tie: SeafloorTie, expected: float,
             residual: float, period_ms: float, frequency_hz: float, settings: Mapping[str, Any]) -> MisTie:
    tolerance = settings["tolerance_periods"]
    tolerance_ms = tolerance * period_ms
    t_a, t_b = times_a[name], times_b[name]
    on_a = multiple_match(t_a, seafloor_a, {k: v for k, v in times_a.items() if k != name}, tolerance_ms)
    on_b = multiple_match(t_b, seafloor_b, {k: v for k, v in times_b.items() if k != name}, tolerance_ms)
    loops = loop_offset(residual, period_ms, tolerance)
    owner, multiple, predicted = a, "", float("nan")
    if on_b is not None and on_a is None:
        owner, (multiple, predicted) = b, on_b
        explanation = "multiple"
        detail = f"on {b.section} it lies on the {multiple} ({predicted:.0f} ms)"
    elif on_a is not None and on_b is None:
        owner, (multiple, predicted) = a, on_a
        explanation = "multiple"
        detail = f"on {a.section} it lies on the {multiple} ({predicted:.0f} ms)"
    elif loops:
        explanation = "loop"
        word = "loop" if abs(loops) == 1 else "loops"
        detail = f"on {b.section} it lies {abs(loops)} {word} {'below' if loops > 0 else 'above'} the same event"
    else:
        explanation = "unexplained"
        detail = "the times do not point to a multiple or another loop"
    reliable = bool(sea_tie.correlation >= settings["min_seafloor_correlation"])
    if not reliable:
        severity = "low"
    elif abs(residual) >= settings["high_periods"] * period_ms or explanation == "multiple":
        severity = "high"
    else:
        severity = "medium"
    confidence = float(np.clip(sea_tie.correlation, 0.0, 1.0)
                       * min(1.0, max(0.0, (abs(residual) / period_ms - tolerance) / tolerance)))
    evidence: dict[str, Any] = {
        "section_a": a.section, "section_b": b.section,
        "cdp_a": int(a.cdp), "cdp_b": int(b.cdp),
        "location_a": _location(a), "location_b": _location(b),
        "x_m": float(x_m), "y_m": float(y_m),
        "twt_ms_a": float(t_a), "twt_ms_b": float(t_b),
        "seafloor_twt_ms_a": float(seafloor_a), "seafloor_twt_ms_b": float(seafloor_b),
        "seafloor_shift_ms": float(sea_tie.lag_ms), "seafloor_phase_deg": float(sea_tie.phase_deg),
        "seafloor_correlation": float(sea_tie.correlation), "seafloor_tie_reliable": reliable,
        "expected_shift_ms": float(expected), "horizon_shift_ms": float(t_b - t_a),
        "residual_ms": float(residual), "residual_periods": float(residual / period_ms),
        "dominant_frequency_hz": float(frequency_hz), "tolerance_periods": float(tolerance),
        "explanation": explanation, "loops": int(loops), "multiple": multiple,
        "multiple_on": owner.section if explanation == "multiple" else "",
        "predicted_multiple_twt_ms": float(predicted),
    }
    location = _range(owner)
    title = (f"{name} mis-ties by {residual:+.0f} ms ({residual / period_ms:+.2f} periods) where {a.section} "
             f"({_location(a)}) meets {b.section} ({_location(b)}): {detail}")
    advice = KINDS["mis-tie"][2]
    finding = Finding(id="pick.mis-tie", detector=NAME, severity=severity, confidence=confidence, title=title,
                      advice=advice, horizon=name, twt_ms=(float(min(t_a, t_b)), float(max(t_a, t_b))),
                      evidence=evidence, **location)
    fixed = "" if explanation != "multiple" else ("a" if owner is a else "b")
    return MisTie(a.section, b.section, _range(a), _range(b), fixed, finding)


def _range(side: TieSide) -> dict[str, Any]:
    if side.geometry == "3d":
        return {"inlines": (side.inline, side.inline), "xlines": (side.xline, side.xline)}
    return {"traces": (side.trace_number, side.trace_number)}


def place_mis_ties(mis_ties: Sequence[MisTie], ties: Sequence[TieMeasurement]) -> list[tuple[str, Finding]]:
    """Put each mis-tie on the section whose pick is the likelier culprit, and say why.

    A pick on a multiple on one side only stays on that side. Otherwise the section that
    mis-ties this horizon at the larger share of all its ties in the project is the suspect
    (a line picked on the wrong loop mis-ties at every crossing, its neighbours only where
    they cross it); on equal shares the finding stays on section a. The counts go into the
    evidence (``misties_a`` of ``ties_a``, ``misties_b`` of ``ties_b``).
    """
    compared: dict[tuple[str, str], int] = {}
    mistied: dict[tuple[str, str], int] = {}
    for measured in ties:
        for section in (measured.section_a, measured.section_b):
            for name in measured.horizons_compared:
                compared[section, name] = compared.get((section, name), 0) + 1
            for name in measured.horizons_mistied:
                mistied[section, name] = mistied.get((section, name), 0) + 1
    placed = []
    for item in mis_ties:
        name = item.finding.horizon
        counts = {side: (mistied.get((section, name), 0), compared.get((section, name), 0))
                  for side, section in (("a", item.section_a), ("b", item.section_b))}
        share = {side: k / n if n else 0.0 for side, (k, n) in counts.items()}
        side = item.fixed_on or ("b" if share["b"] > share["a"] else "a")
        section = item.section_a if side == "a" else item.section_b
        note = (f"; {item.section_a} mis-ties {name} at {counts['a'][0]} of its {counts['a'][1]} ties, "
                f"{item.section_b} at {counts['b'][0]} of {counts['b'][1]}")
        evidence = {**item.finding.evidence, "misties_a": counts["a"][0], "ties_a": counts["a"][1],
                    "misties_b": counts["b"][0], "ties_b": counts["b"][1], "placed_on": section}
        location = item.location_a if side == "a" else item.location_b
        finding = replace(item.finding, title=item.finding.title + note, evidence=evidence,
                          traces=location.get("traces"), inlines=location.get("inlines"), xlines=location.get("xlines"))
        placed.append((section, finding))
    return placed
