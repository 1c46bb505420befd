"""The description report (schema ``pitfalls-description/1``): a dict for JSON, Markdown text, a rich table.

Layout fixed by the project's contract ("Description report"); ``pitfalls/data/
description.schema.json`` is the JSON Schema a consumer can validate it with. Numbers are
unrounded in JSON and rounded for reading in the other two.
"""
from __future__ import annotations

from typing import Any

from rich.console import Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from pitfalls import __version__
from pitfalls.describe import Description
from pitfalls.report.json_report import _plain
from pitfalls.report.text import CAUTION, SCOPE, number

SCHEMA = "pitfalls-description/1"
DESCRIPTION_NOTE = (
    "Measured character for a hand-over note: the numbers are what the data show between the picks given, "
    "with the wavelet, processing and picks as they are; the class words follow the trade's terms for "
    "reflection configuration and terminations."
)


def description_dict(description: Description, rules_path: str | None = None,
                     rules_sha256: str | None = None) -> dict[str, Any]:
    """The whole description as the contract lays it out (with the rules file used, when given)."""
    info = description.section
    velocity = description.velocity
    return _plain({
        "schema": SCHEMA,
        "tool_version": __version__,
        "section": {"path": info.path, "sha256": info.sha256, "geometry": info.geometry, "n_traces": info.n_traces,
                    "n_samples": info.n_samples, "dt_ms": info.dt_ms, "t0_ms": info.t0_ms,
                    "trace_spacing_m": info.trace_spacing_m,
                    "reference_amplitude": description.reference_amplitude,
                    "dominant_frequency_hz": description.dominant_frequency_hz,
                    "seafloor": description.seafloor_source,
                    "velocity": {"water_velocity_m_s": velocity.water_velocity_m_s,
                                 "seafloor_velocity_m_s": velocity.seafloor_velocity_m_s,
                                 "gradient_per_s": velocity.gradient_per_s,
                                 "max_velocity_m_s": velocity.max_velocity_m_s}},
        "rules": {"path": rules_path, "sha256": rules_sha256},
        "intervals": [dict(entry) for entry in description.intervals],
        "horizons": [dict(entry) for entry in description.horizons],
        "note": DESCRIPTION_NOTE,
        "caution": f"{CAUTION} {SCOPE}",
    })


def _where(entry: dict[str, Any]) -> str:
    if entry.get("inlines"):
        text = f"IL {entry['inlines'][0]}-{entry['inlines'][1]}"
        if entry.get("xlines"):
            text += f" XL {entry['xlines'][0]}-{entry['xlines'][1]}"
        return text
    if entry.get("traces"):
        return f"tr {entry['traces'][0]}-{entry['traces'][1]}"
    return "not present"


def _stretch(stretch: dict[str, Any]) -> str:
    inline = f"IL {stretch['inline']} " if stretch.get("inline") is not None else ""
    return (f"{inline}tr {stretch['traces'][0]}-{stretch['traces'][1]}: {stretch['class']}, "
            f"top {stretch['top_termination']}, base {stretch['base_termination']}")


def _interval_sentence(entry: dict[str, Any]) -> str:
    amplitude, frequency = entry["amplitude"], entry["frequency"]
    continuity, configuration = entry["continuity"], entry["configuration"]
    thickening = {"increasing-trace": "thickening towards higher trace numbers",
                  "decreasing-trace": "thickening towards lower trace numbers", "none": "even thickness"}
    return (f"{configuration['class']}, {thickening[configuration['thickening']]}; top {configuration['top_termination']}, "
            f"base {configuration['base_termination']}. RMS {number(amplitude['rms_relative'])} x section median "
            f"(lateral variation {number(amplitude['rms_lateral_variation'])}), envelope peak "
            f"{number(amplitude['envelope_peak_relative'])} x. Dominant {number(frequency['dominant_hz'])} Hz, centroid "
            f"{number(frequency['centroid_hz'])} Hz, bandwidth {number(frequency['bandwidth_hz'])} Hz. Coherent share "
            f"{number(continuity['coherent_share'])}, segments {number(continuity['segment_length_traces_median'])} "
            f"traces ({number(continuity['segment_length_m_median'])} m) median. Dip spread "
            f"{number(configuration['dip_spread_deg'])} deg, fan {number(configuration['fan_deg'])} deg.")


def _horizon_sentence(entry: dict[str, Any]) -> str:
    amplitude, frequency, continuity = entry["amplitude"], entry["frequency"], entry["continuity"]
    return (f"Envelope {number(amplitude['envelope_median_relative'])} x section median (lateral variation "
            f"{number(amplitude['envelope_lateral_variation'])}); dominant {number(frequency['dominant_hz'])} Hz, "
            f"centroid {number(frequency['centroid_hz'])} Hz; coherent on {number(continuity['coherent_share'])} of "
            f"the pick, segments {number(continuity['segment_length_traces_median'])} traces median.")


def render_markdown(description: Description) -> str:
    """The description as one Markdown document."""
    info = description.section
    lines = ["# pitfalls describe", "",
             f"- Section: {info.path} ({info.geometry.upper()}, {info.n_traces} traces, {info.n_samples} samples at "
             f"{info.dt_ms:g} ms, trace spacing {info.trace_spacing_m:.1f} m)",
             f"- Reference amplitude (median envelope below the seafloor): {number(description.reference_amplitude)}; "
             f"dominant frequency {number(description.dominant_frequency_hz)} Hz; seafloor {description.seafloor_source}",
             "", "## Intervals", ""]
    if not description.intervals:
        lines += ["No interval: give at least one horizon below the seafloor.", ""]
    for entry in description.intervals:
        lines += [f"### {entry['top']} to {entry['base']} ({_where(entry)})", "", _interval_sentence(entry), ""]
        lines += [f"- {_stretch(s)}" for s in entry["configuration"]["stretches"]]
        lines.append("")
    lines += ["## Along the picks", "", "| horizon | kind | where | description |", "|---|---|---|---|"]
    for entry in description.horizons:
        lines.append(f"| {entry['horizon']} | {entry['kind']} | {_where(entry)} | {_horizon_sentence(entry)} |")
    lines += ["", DESCRIPTION_NOTE, "", "## Caution", "", f"{CAUTION} {SCOPE}", ""]
    return "\n".join(lines)


def render_terminal(description: Description) -> Group:
    """Header, one table of intervals, one of the picks, the caution."""
    info = description.section
    header = Text(f"Section: {info.path} ({info.geometry.upper()}, {info.n_traces} traces, {info.dt_ms:g} ms, "
                  f"{info.trace_spacing_m:.1f} m traces)\nReference amplitude {number(description.reference_amplitude)}, "
                  f"dominant frequency {number(description.dominant_frequency_hz)} Hz, seafloor {description.seafloor_source}")
    intervals = Table(title="Intervals", title_justify="left")
    for column in ("interval", "where", "configuration", "top / base", "RMS x", "dominant / centroid Hz",
                   "coherent", "segments (tr)"):
        intervals.add_column(column)
    for entry in description.intervals:
        configuration = entry["configuration"]
        intervals.add_row(
            f"{entry['top']} to {entry['base']}", _where(entry), f"{configuration['class']} ({configuration['thickening']})",
            f"{configuration['top_termination']} / {configuration['base_termination']}",
            number(entry["amplitude"]["rms_relative"]),
            f"{number(entry['frequency']['dominant_hz'])} / {number(entry['frequency']['centroid_hz'])}",
            number(entry["continuity"]["coherent_share"]), number(entry["continuity"]["segment_length_traces_median"]))
    horizons = Table(title="Along the picks", title_justify="left")
    for column in ("horizon", "kind", "where", "envelope x", "dominant / centroid Hz", "coherent", "segments (tr)"):
        horizons.add_column(column)
    for entry in description.horizons:
        horizons.add_row(entry["horizon"], entry["kind"], _where(entry),
                         number(entry["amplitude"]["envelope_median_relative"]),
                         f"{number(entry['frequency']['dominant_hz'])} / {number(entry['frequency']['centroid_hz'])}",
                         number(entry["continuity"]["coherent_share"]),
                         number(entry["continuity"]["segment_length_traces_median"]))
    stretches = [f"{entry['top']} to {entry['base']}, {_stretch(s)}" for entry in description.intervals
                 for s in entry["configuration"]["stretches"]]
    parts: list = [Panel(header, title="pitfalls describe", border_style="blue"), intervals]
    if stretches:
        parts.append(Text("Where along the line:\n" + "\n".join(stretches)))
    parts += [horizons, Panel(Text(f"{CAUTION} {SCOPE}"), title="Caution", border_style="magenta")]
    return Group(*parts)
