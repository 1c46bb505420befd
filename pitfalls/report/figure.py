"""A figure of the section with the picks and the findings drawn over it (matplotlib, optional).

The section is a grey variable-density display clipped symmetrically at the 99th percentile of
absolute amplitude, drawn so that the seafloor reflection's sign is dark (the colour map's
upper end takes the seafloor's sign); ``colour_map`` names any other matplotlib colour map, used
the same way. A colour bar says which sign is the seafloor's. The empty water column above the
seafloor is cropped, keeping a small margin. Picks are drawn in a palette of their own
(:data:`pitfalls.report.colours.PICK_COLOURS`) that never reuses a severity colour; each
finding's trace range and time window is a box in its severity colour (the same colours as the
terminal report), labelled with its rank (the ``MAX_BOXES`` best-ranked findings, so the
section stays readable; the report lists the rest); the predicted seafloor multiples (2x and 3x
the seafloor time) are thin dashed grey lines. A 3-D volume is drawn on the inline of its
best-ranked finding (or its middle inline). matplotlib is imported only here, only when a figure
is asked for.
"""
from __future__ import annotations

import io
from typing import Any, Mapping

import numpy as np

from pitfalls.engine import ScanResult
from pitfalls.errors import PitfallsInputError
from pitfalls.report.colours import NEUTRAL, PICK_COLOURS, SEVERITY_COLOUR

MAX_BOXES = 10
DEFAULT_COLOUR_MAP = "gray_r"
"""Grey, its upper end black: with the seafloor's sign at the upper end, the seafloor reflection is dark."""
PICK_LINE_STYLES = ("-", (0, (8, 3)), (0, (3, 2)), (0, (8, 3, 2, 3)))


def require_matplotlib() -> None:
    """Raise the user-input error, with the install command, when matplotlib is missing."""
    try:
        import matplotlib  # noqa: F401
    except ImportError as err:
        raise PitfallsInputError("--figure", "", "needs matplotlib, which is not installed",
                                 'install it with: pip install "pitfalls[figure]" (or pip install matplotlib)') from err


def check_colour_map(name: str) -> None:
    """Raise the user-input error when ``name`` is not a matplotlib colour map."""
    require_matplotlib()
    from matplotlib import colormaps
    if name not in colormaps:
        raise PitfallsInputError("--figure-colours", "", f"{name!r} is not a matplotlib colour map",
                                 f"give a colour map name such as {DEFAULT_COLOUR_MAP} (the default), Greys, "
                                 "binary, cividis or viridis")


def colour_map_for(name: str, polarity: int):
    """The named matplotlib colour map turned so that the seafloor reflection's sign takes its upper end.

    With the default ``gray_r`` (upper end black) the seafloor's sign is dark whichever sign it has
    in the file; a polarity of 0 (unknown) counts as positive.
    """
    check_colour_map(name)
    from matplotlib import colormaps
    return colormaps[name] if polarity >= 0 else colormaps[name].reversed()


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


def draw(result: ScanResult, rules: Mapping[str, Any], source: Any = None,
         colour_map: str = DEFAULT_COLOUR_MAP) -> bytes:
    """The figure as PNG bytes."""
    figure = make_figure(result, rules, source, colour_map)
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png")
    return buffer.getvalue()


def crop_top_ms(seafloor_twt_ms: np.ndarray, other_twt_ms: list[float], t0_ms: float, end_ms: float,
                dt_ms: float) -> float:
    """Top of the displayed window: the shallowest of the seafloor, picks and boxes, less a small margin.

    The margin is the larger of ten samples and 3 % of the window below; the top never lies above
    the first sample. The water column above the seafloor holds nothing to check.
    """
    first_ms = t0_ms - dt_ms / 2
    times = np.concatenate([np.asarray(seafloor_twt_ms, dtype=float).ravel(), np.asarray(other_twt_ms, dtype=float)])
    times = times[np.isfinite(times)]
    if not times.size:
        return first_ms
    shallowest = float(times.min())
    margin_ms = max(10.0 * dt_ms, 0.03 * (end_ms - shallowest))
    return max(first_ms, shallowest - margin_ms)


def make_figure(result: ScanResult, rules: Mapping[str, Any], source: Any = None,
                colour_map: str = DEFAULT_COLOUR_MAP):
    """The figure as a matplotlib ``Figure``, made without pyplot so no plotting backend is chosen or changed.

    ``source`` is the section the scan read when it is not a file to open again (an array in memory);
    ``colour_map`` is a matplotlib colour map name (see the module docstring).
    """
    check_colour_map(colour_map)
    from matplotlib import patheffects
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch, Rectangle

    from pitfalls.physics.seafloor import find_seafloor

    section, picks = _panel(result, rules, source)
    seafloor = find_seafloor(section, picks, rules)
    polarity = seafloor.polarity if seafloor.polarity != 0 else 1
    data = np.nan_to_num(section.data.T, nan=0.0)
    clip = float(np.percentile(np.abs(data), 99)) or 1.0
    numbers = section.trace_numbers
    end_ms = section.twt_ms[-1] + section.dt_ms / 2
    extent = (numbers[0] - 0.5, numbers[-1] + 0.5, end_ms, section.t0_ms - section.dt_ms / 2)
    cmap = colour_map_for(colour_map, polarity)

    figure = Figure(figsize=(13, 7.5), dpi=110)
    axes = figure.subplots()
    image = axes.imshow(data, cmap=cmap, vmin=-clip, vmax=clip, aspect="auto", extent=extent,
                        interpolation="bilinear")
    sign = "+" if polarity > 0 else "-"
    end_word = "dark" if colour_map == DEFAULT_COLOUR_MAP else f"the {'upper' if polarity > 0 else 'lower'} end"
    bar = figure.colorbar(image, ax=axes, fraction=0.03, pad=0.01, ticks=[-clip, 0.0, clip])
    bar.ax.set_yticklabels([f"-{clip:.3g}", "0", f"+{clip:.3g}"])
    bar.set_label(f"amplitude (clipped at the 99th percentile); the seafloor reflection is {sign} "
                  f"in this file, drawn {end_word}", fontsize=8)

    for order, style in ((2, (0, (6, 4))), (3, (0, (2, 3)))):
        axes.plot(numbers, order * seafloor.twt_ms, color=NEUTRAL, linewidth=0.7, linestyle=style,
                  label=f"predicted seafloor multiple ({order}x seafloor time)")
    halo = [patheffects.withStroke(linewidth=3.2, foreground="white", alpha=0.55)]
    shown_times: list[float] = []
    for index, horizon in enumerate(picks.horizons):
        colour = PICK_COLOURS[index % len(PICK_COLOURS)]
        style = ":" if horizon.kind == "seafloor" else PICK_LINE_STYLES[(index // len(PICK_COLOURS))
                                                                         % len(PICK_LINE_STYLES)]
        if horizon.kind == "contact" and style == "-":
            style = (0, (5, 2))
        axes.plot(numbers, horizon.twt_ms, linestyle=style, color=colour, linewidth=1.5, path_effects=halo,
                  label=f"{horizon.name} ({horizon.kind})")
        finite = horizon.twt_ms[np.isfinite(horizon.twt_ms)]
        if finite.size:
            shown_times.append(float(finite.min()))

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
    pad_ms = 2 * section.dt_ms
    labels = []  # (text, span, window), worst-ranked first as drawn
    for (span, window_ms), members in reversed(list(boxes.items())):  # best-ranked drawn last, on top
        colour = SEVERITY_COLOUR[members[0].severity]
        axes.add_patch(Rectangle((span[0] - 0.5, window_ms[0] - pad_ms), span[1] - span[0] + 1,
                                 window_ms[1] - window_ms[0] + 2 * pad_ms,
                                 fill=False, edgecolor=colour, linewidth=1.8))
        label = ", ".join(f"#{f.rank} {f.id}" for f in members)
        text = axes.text(span[0], window_ms[0] - pad_ms, f" {label}", color="white", fontsize=8, va="bottom",
                         ha="left", bbox={"facecolor": colour, "edgecolor": "none", "pad": 1.5, "alpha": 0.9})
        labels.append((text, span, window_ms))
        shown_times.append(window_ms[0] - pad_ms - 12.0 * section.dt_ms)  # room for the label

    top_ms = crop_top_ms(seafloor.twt_ms, shown_times, section.t0_ms, end_ms, section.dt_ms)
    axes.set_xlim(extent[0], extent[1])
    axes.set_ylim(extent[2], top_ms)
    axes.set_xlabel("trace" if section.inline_number is None else f"crossline (inline {section.inline_number})")
    axes.set_ylabel("two-way time (ms)")
    shown = min(MAX_BOXES, len(result.findings))
    axes.set_title(f"{section.name}: picks and the {shown} best-ranked of {len(result.findings)} findings "
                   "(boxes numbered by rank; a screening aid, not a review)")
    handles, _ = axes.get_legend_handles_labels()
    handles += [Patch(facecolor="none", edgecolor=SEVERITY_COLOUR[severity], linewidth=1.8,
                      label=f"{severity} finding") for severity in ("high", "medium", "low")]
    axes.legend(handles=handles, loc="lower left", fontsize=7, framealpha=0.85)
    figure.tight_layout()
    _separate_labels(figure, [(text, span[0], window_ms[1] + pad_ms) for text, span, window_ms in reversed(labels)])
    return figure


def _separate_labels(figure, labels) -> None:
    """Move a box label below its box when it would cover a better-ranked box's label.

    ``labels`` are ``(text, x, y_below)`` best-ranked first; the figure gets an Agg canvas of its
    own to measure the text (no pyplot, no backend switch).
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    renderer = FigureCanvasAgg(figure).get_renderer()
    placed = []
    for text, x, y_below in labels:
        extent = text.get_window_extent(renderer).expanded(1.0, 1.1)
        if any(extent.overlaps(other) for other in placed):
            text.set_position((x, y_below))
            text.set_verticalalignment("top")
            extent = text.get_window_extent(renderer).expanded(1.0, 1.1)
        placed.append(extent)
