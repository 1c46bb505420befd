"""A figure of the section with the picks and the findings drawn over it (matplotlib, optional).

Red-blue diverging display clipped symmetrically at the 99th percentile of absolute
amplitude; picks as coloured lines; each finding's trace range and time window as a box
labelled with its rank (the ``MAX_BOXES`` best-ranked findings, so the section stays
readable; the report lists the rest); the predicted seafloor multiples (2x and 3x the seafloor time) as thin
dashed lines. A 3-D volume is drawn on the inline of its best-ranked finding (or its middle
inline). matplotlib is imported only here, only when a figure is asked for.
"""
from __future__ import annotations

import io
from typing import Any, Mapping

import numpy as np

from pitfalls.engine import ScanResult
from pitfalls.errors import PitfallsInputError

SEVERITY_COLOUR = {"high": "#c00000", "medium": "#d08000", "low": "#2060a0"}
MAX_BOXES = 10


def require_matplotlib() -> None:
    """Raise the user-input error, with the install command, when matplotlib is missing."""
    try:
        import matplotlib  # noqa: F401
    except ImportError as err:
        raise PitfallsInputError("--figure", "", "needs matplotlib, which is not installed",
                                 'install it with: pip install "pitfalls[figure]" (or pip install matplotlib)') from err


def _panel(result: ScanResult, rules: Mapping[str, Any], source: Any = None):
    from pitfalls.io.placement import place_picks
    from pitfalls.io.segy import SeismicFile
    info = result.section
    seismic = source if source is not None else SeismicFile(info.path, rules["section"]["fallback_trace_spacing_m"])
    try:
        placed = place_picks(list(result.pick_files), seismic.info, seismic.layout)
        if seismic.info.geometry == "2d":
            return next(seismic.panels()), placed.panel(0)
        inline_index = len(seismic.layout.inline_numbers) // 2
        for finding in result.findings:
            if finding.inlines is not None:
                inline_index = int(np.searchsorted(seismic.layout.inline_numbers, finding.inlines[0]))
                break
        return seismic.inline_panel(inline_index), placed.panel(inline_index)
    finally:
        if source is None:
            seismic.close()


def draw(result: ScanResult, rules: Mapping[str, Any], source: Any = None) -> bytes:
    """The figure as PNG bytes."""
    figure = make_figure(result, rules, source)
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png")
    return buffer.getvalue()


def make_figure(result: ScanResult, rules: Mapping[str, Any], source: Any = None):
    """The figure as a matplotlib ``Figure``, made without pyplot so no plotting backend is chosen or changed.

    ``source`` is the section the scan read when it is not a file to open again (an array in memory).
    """
    require_matplotlib()
    from matplotlib import colormaps
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle

    from pitfalls.physics.seafloor import find_seafloor

    section, picks = _panel(result, rules, source)
    seafloor = find_seafloor(section, picks, rules)
    data = np.nan_to_num(section.data.T, nan=0.0)
    clip = float(np.percentile(np.abs(data), 99)) or 1.0
    numbers = section.trace_numbers
    extent = (numbers[0] - 0.5, numbers[-1] + 0.5, section.twt_ms[-1] + section.dt_ms / 2, section.t0_ms - section.dt_ms / 2)
    figure = Figure(figsize=(13, 7.5), dpi=110)
    axes = figure.subplots()
    axes.imshow(data, cmap="RdBu_r", vmin=-clip, vmax=clip, aspect="auto", extent=extent, interpolation="bilinear")
    for order, style in ((2, (0, (6, 4))), (3, (0, (2, 3)))):
        axes.plot(numbers, order * seafloor.twt_ms, color="0.15", linewidth=0.7, linestyle=style,
                  label=f"predicted seafloor multiple ({order}x seafloor time)")
    colours = colormaps["tab10"]
    for index, horizon in enumerate(picks.horizons):
        style = {"contact": "--", "seafloor": ":"}.get(horizon.kind, "-")
        axes.plot(numbers, horizon.twt_ms, style, color=colours(index % 10), linewidth=1.2, alpha=0.9,
                  label=f"{horizon.name} ({horizon.kind})")
    boxes: dict[tuple, list] = {}  # findings with the same range share one box and one label
    for finding in result.findings[:MAX_BOXES]:
        span = finding.traces if section.inline_number is None else finding.xlines
        if span is None or finding.twt_ms is None:
            continue
        if section.inline_number is not None and finding.inlines is not None and not (
                finding.inlines[0] <= section.inline_number <= finding.inlines[1]):
            continue
        key = (tuple(span), tuple(round(t) for t in finding.twt_ms))
        boxes.setdefault(key, []).append(finding)
    for (span, window_ms), members in reversed(list(boxes.items())):  # best-ranked drawn last, on top
        colour = SEVERITY_COLOUR[members[0].severity]
        pad_ms = 2 * section.dt_ms
        axes.add_patch(Rectangle((span[0] - 0.5, window_ms[0] - pad_ms), span[1] - span[0] + 1,
                                 window_ms[1] - window_ms[0] + 2 * pad_ms,
                                 fill=False, edgecolor=colour, linewidth=1.8))
        label = ", ".join(f"#{f.rank} {f.id}" for f in members)
        axes.text(span[0], window_ms[0] - pad_ms, f" {label}", color="white", fontsize=8,
                  va="bottom", ha="left", bbox={"facecolor": colour, "edgecolor": "none", "pad": 1.5, "alpha": 0.9})
    axes.set_xlim(extent[0], extent[1])
    axes.set_ylim(extent[2], extent[3])
    axes.set_xlabel("trace" if section.inline_number is None else f"crossline (inline {section.inline_number})")
    axes.set_ylabel("two-way time (ms)")
    shown = min(MAX_BOXES, len(result.findings))
    axes.set_title(f"{section.name}: picks and the {shown} best-ranked of {len(result.findings)} findings "
                   "(boxes numbered by rank; a screening aid, not a review)")
    axes.legend(loc="lower left", fontsize=7, framealpha=0.85)
    figure.tight_layout()
    return figure
