"""Map figure of a 3-D scan: one panel per horizon that has findings (matplotlib, optional).

Each panel shows the horizon's two-way time map in grey (darker = later, i.e. deeper) with
time contours, and outlines each finding's inline/crossline footprint in its severity colour,
labelled with its rank. Section-wide findings (no horizon) are drawn on the seafloor map.
Axes are CDP X/Y in the survey's units when the headers hold coordinates, otherwise inline and
crossline numbers. matplotlib is imported only here, only when a map is asked for.
"""
from __future__ import annotations

import io
from typing import Any, Sequence

import numpy as np

from pitfalls.model import Finding

MAX_PANELS = 6
"""At most this many horizons get a panel (those with the best-ranked findings first)."""
MAX_OUTLINES = 12
"""At most this many findings are outlined on one panel."""


def panels_for(findings: Sequence[Finding], horizon_names: Sequence[str]) -> list[str | None]:
    """Horizons to draw, in the order of their best-ranked finding; None stands for section-wide findings."""
    order: list[str | None] = []
    for finding in sorted(findings, key=lambda f: f.rank):
        if finding.inlines is None:
            continue
        key = finding.horizon if finding.horizon in horizon_names else None
        if key not in order:
            order.append(key)
    return order[:MAX_PANELS]


def draw_map(result: Any) -> bytes:
    """The map figure as PNG bytes.

    Parameters
    ----------
    result : ScanResult
        A 3-D scan; its ``map_view`` holds the gridded horizons, the seafloor map and the grid.

    Raises
    ------
    ValueError
        When the scan has no map view (a 2-D line).
    """
    view = getattr(result, "map_view", None)
    if view is None:
        raise ValueError("a map needs a 3-D volume")
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from pitfalls.report.colours import NEUTRAL, SEVERITY_COLOUR

    names = [h.name for h in view.horizons]
    panels = panels_for(result.findings, names) or [None]
    columns = min(3, len(panels))
    rows = int(np.ceil(len(panels) / columns))
    figure, axes = plt.subplots(rows, columns, figsize=(5.2 * columns, 4.6 * rows), squeeze=False)
    n_inlines, n_xlines = len(view.grid.inline_numbers), len(view.grid.xline_numbers)
    grid_rows, grid_columns = np.indices((n_inlines, n_xlines))
    if view.grid.from_headers:
        x_m, y_m = view.grid.xy(grid_rows, grid_columns)
        x_label, y_label = "CDP X", "CDP Y"
    else:
        x_m, y_m = view.grid.xline_numbers[grid_columns].astype(float), view.grid.inline_numbers[grid_rows].astype(float)
        x_label, y_label = "crossline", "inline"
    for axis, key in zip(axes.ravel(), panels):
        horizon = view.horizon(key) if key is not None else None
        times = horizon.twt_ms if horizon is not None else view.seafloor_twt_ms
        title = key if key is not None else "seafloor (section-wide findings)"
        masked = np.ma.masked_invalid(times)
        image = axis.pcolormesh(x_m, y_m, masked, cmap="Greys", shading="nearest")
        if np.count_nonzero(np.isfinite(times)) > 4 and np.nanmax(times) > np.nanmin(times):
            contours = axis.contour(x_m, y_m, masked, levels=8, colors=NEUTRAL, linewidths=0.5)
            axis.clabel(contours, fontsize=6, fmt="%.0f")
        figure.colorbar(image, ax=axis, label="two-way time, ms", shrink=0.8)
        drawn = 0
        labels_at: dict[tuple[float, float], int] = {}
        for finding in sorted(result.findings, key=lambda f: f.rank):
            if finding.inlines is None or drawn >= MAX_OUTLINES:
                continue
            if (finding.horizon if finding.horizon in names else None) != key:
                continue
            outline_x, outline_y = _outline(view.grid, finding, x_label == "CDP X")
            colour = SEVERITY_COLOUR.get(finding.severity, "#000000")
            axis.plot(outline_x, outline_y, color=colour, linewidth=1.6)
            corner = (round(float(outline_x[0]), 3), round(float(outline_y[0]), 3))
            stacked = labels_at.get(corner, 0)  # labels of findings with the same corner go one above another
            labels_at[corner] = stacked + 1
            axis.annotate(str(finding.rank), (outline_x[0], outline_y[0]), color=colour, fontsize=9, fontweight="bold",
                          xytext=(2, 2 + 10 * stacked), textcoords="offset points")
            drawn += 1
        axis.set_title(title, fontsize=10)
        axis.set_xlabel(x_label)
        axis.set_ylabel(y_label)
        axis.set_aspect("equal", adjustable="datalim")
        axis.ticklabel_format(useOffset=False, style="plain")
        axis.tick_params(labelsize=7)
    for axis in axes.ravel()[len(panels):]:
        axis.set_visible(False)
    figure.suptitle(f"{result.section.path}: findings in map view (rank labels; outline colour = severity)", fontsize=10)
    figure.tight_layout()
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=110)
    plt.close(figure)
    return buffer.getvalue()


def _outline(grid: Any, finding: Finding, in_xy: bool) -> tuple[np.ndarray, np.ndarray]:
    """The finding's footprint rectangle (outer bin edges), closed, in map or line-number units."""
    i0, j0 = grid.index_of(finding.inlines[0], finding.xlines[0] if finding.xlines else grid.xline_numbers[0])
    i1, j1 = grid.index_of(finding.inlines[1], finding.xlines[1] if finding.xlines else grid.xline_numbers[-1])
    corners_i = np.array([i0 - 0.5, i0 - 0.5, i1 + 0.5, i1 + 0.5, i0 - 0.5])
    corners_j = np.array([j0 - 0.5, j1 + 0.5, j1 + 0.5, j0 - 0.5, j0 - 0.5])
    if in_xy:
        return grid.xy(corners_i, corners_j)
    xline_step = float(np.median(np.diff(grid.xline_numbers))) if len(grid.xline_numbers) > 1 else 1.0
    inline_step = float(np.median(np.diff(grid.inline_numbers))) if len(grid.inline_numbers) > 1 else 1.0
    return grid.xline_numbers[0] + corners_j * xline_step, grid.inline_numbers[0] + corners_i * inline_step
