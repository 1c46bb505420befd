"""Wording shared by the terminal and Markdown reports: the caution, locations and number formats."""
from __future__ import annotations

import math
from typing import Any

from pitfalls.engine import ScanResult
from pitfalls.model import Finding

CAUTION = (
    "pitfalls screens picks for known physical pitfalls. It does not replace review of the "
    "interpretation by qualified interpreters, nor local regulations and licensed professional "
    "practice. Do not place a well, book a volume or choose a storage site on its word alone."
)


NO_FINDINGS = (
    "No finding reached this report. This is not a clearance: the detectors look only for the "
    "pitfalls they are built for, on this data and with these rules, and the interpretation still "
    "needs review by qualified interpreters."
)

SCOPE = (
    "Scope: the checks assume marine post-stack data (a water layer, a seafloor reflection to "
    "measure against, stacked traces); on land or pre-stack data their findings do not hold."
)


def velocity_sentence(velocity: Any) -> str:
    """Which velocity function the depths in the report came from, in words."""
    if velocity is None:
        return "Depths come from the velocity function stated for each section; a different velocity moves every depth."
    if getattr(velocity, "is_table", False):
        return (f"Depths come from the stated velocity function: {velocity.describe()}; a different velocity "
                f"moves every depth.")
    return (f"Depths come from the stated velocity function: water at {velocity.water_velocity_m_s:g} m/s down "
            f"to the seafloor, then {velocity.seafloor_velocity_m_s:g} m/s increasing by "
            f"{velocity.gradient_per_s:g} m/s per metre below the seafloor, at most "
            f"{velocity.max_velocity_m_s:g} m/s ({velocity.describe().rsplit('; ', 1)[-1]}); a different velocity "
            f"moves every depth.")


def general_caution(found_anything: bool, velocity: Any = None) -> str:
    """The caution, the scope and the velocity function, and, when nothing was found, that this is not
    a clearance."""
    parts = [CAUTION, SCOPE, velocity_sentence(velocity)]
    if not found_anything:
        parts.append(NO_FINDINGS)
    return " ".join(parts)


def caution_text(result: ScanResult) -> str:
    """The caution every scan report ends with (see :func:`general_caution`)."""
    return general_caution(bool(result.findings), getattr(result, "velocity", None))


def location(finding: Finding) -> str:
    """Where a finding is, as the pick file numbers it."""
    if finding.inlines is not None:
        text = f"IL {finding.inlines[0]}-{finding.inlines[1]}"
        if finding.xlines is not None:
            text += f" XL {finding.xlines[0]}-{finding.xlines[1]}"
        return text
    if finding.traces is not None:
        return f"tr {finding.traces[0]}-{finding.traces[1]}"
    return "whole section"


def time_window(finding: Finding) -> str:
    if finding.twt_ms is None:
        return "-"
    return f"{finding.twt_ms[0]:.0f}-{finding.twt_ms[1]:.0f} ms"


def number(value: Any) -> str:
    """Evidence values rounded for reading; the JSON report keeps them unrounded."""
    if isinstance(value, bool) or value is None:
        return str(value).lower()
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            return "n/a"
        if value != 0 and (abs(value) >= 1e5 or abs(value) < 1e-3):
            return f"{value:.3g}"
        return f"{value:.3f}".rstrip("0").rstrip(".") if abs(value) < 10 else f"{value:.1f}"
    if isinstance(value, (list, tuple)):
        return ", ".join(number(v) for v in value)
    return str(value)


LIMIT_KEYS = frozenset({
    "max_departure_deg", "stability_tolerance_ms", "tolerance_ms", "gain_exponent_assumed",
    "plausible_head_gradient_limit_m_per_km", "assumed_sediment_velocity_m_s",
})
"""Evidence keys that carry a rule's threshold or an assumed value, not a measurement."""


def split_evidence(evidence) -> tuple[list[tuple[str, object]], list[tuple[str, object]]]:
    """(measured, limits): the evidence items as measured on the data, and those that are thresholds or
    assumptions from the rules (a joined finding's members' keys carry their id as a prefix)."""
    measured, limits = [], []
    for key, value in evidence.items():
        (limits if key.rsplit(".", 1)[-1] in LIMIT_KEYS else measured).append((key, value))
    return measured, limits


def worst_by_horizon(result: ScanResult) -> dict[str, tuple[Finding, int]]:
    """Each horizon's best-ranked finding and how many findings it has."""
    worst: dict[str, tuple[Finding, int]] = {}
    for finding in result.findings:  # already in rank order
        if finding.horizon is None:
            continue
        if finding.horizon in worst:
            first, count = worst[finding.horizon]
            worst[finding.horizon] = (first, count + 1)
        else:
            worst[finding.horizon] = (finding, 1)
    return worst


def _measured(value: float, unit: str) -> str:
    """A measured number with its unit, or why there is none (never "nan")."""
    if not math.isfinite(value):
        return "not measured (no live trace with a seafloor)"
    return f"{value:.0f} {unit}"


def section_lines(result: ScanResult) -> list[str]:
    info = result.section
    shape = (f"{info.n_inlines} inlines x {info.n_xlines} crosslines ({info.n_traces} traces, "
             f"{info.n_missing_traces} positions missing)" if info.geometry == "3d" else f"{info.n_traces} traces")
    spacing = "from headers" if info.spacing_from_headers else "fallback from rules"
    seafloor = result.seafloor
    polarity = {1: "positive", -1: "negative", 0: "unknown"}[seafloor.polarity]
    lines = [
        f"Section: {info.path} ({info.geometry.upper()}, {shape}, {info.n_samples} samples at {info.dt_ms:g} ms "
        f"from {info.t0_ms:g} ms, trace spacing {info.trace_spacing_m:.1f} m {spacing})",
        f"Seafloor: {seafloor.source}, found on {seafloor.n_traces_found} traces, median "
        f"{_measured(seafloor.twt_ms_median, 'ms')}, {polarity} in this file's sign convention; dominant frequency "
        f"{_measured(seafloor.dominant_frequency_hz, 'Hz')}",
        f"Rules: {result.rules_path}",
        f"Velocity: {result.velocity.describe()}",
    ]
    extent = info.coordinate_extent_xy
    lines.insert(1, "Coordinates: none in the trace headers (CDP X/Y bytes 181/185 are zero)" if extent is None else
                 f"Coordinates: CDP X {extent[0][0]:.1f} to {extent[1][0]:.1f}, Y {extent[0][1]:.1f} to {extent[1][1]:.1f} "
                 "(bytes 181/185, scalar of byte 71 applied)")
    lines += [f"Note: {note}" for note in info.notes]
    lines += [f"Picks: {note}" for note in result.pick_notes]
    return lines
