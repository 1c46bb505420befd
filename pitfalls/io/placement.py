"""Placing pick-file rows on the section: trace numbers or inline/crossline pairs to panel positions.

Errors name the pick file and its row: a pick beyond the section, a time outside the traces,
3-D picks on positions the volume does not have, or a pick file of the wrong geometry.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, PickRow
from pitfalls.io.segy import TraceLayout
from pitfalls.model import Horizon, Picks, SectionInfo


@dataclass(frozen=True)
class PlacedPicks:
    """Every horizon as a grid of times: (1, n_traces) for a line, (n_inlines, n_xlines) for a volume."""

    names: tuple[str, ...]
    kinds: tuple[str, ...]
    grids: tuple[np.ndarray, ...]
    n_rows: tuple[int, ...]
    """Pick rows per horizon, gaps included."""
    n_gaps: tuple[int, ...]
    """Rows that are gaps (empty, NaN, -999.25) per horizon."""

    def panel(self, panel_index: int) -> Picks:
        """The picks of one panel (the line itself, or one inline)."""
        return Picks(tuple(Horizon(name, kind, grid[panel_index].copy())
                           for name, kind, grid in zip(self.names, self.kinds, self.grids)))


def _position(row: PickRow, layout: TraceLayout) -> tuple[int, int] | None:
    """(panel index, trace index) of a pick row, or None when the position does not exist."""
    if layout.geometry == "2d":
        if row.trace is not None:
            if 1 <= row.trace <= layout.n_traces:
                return 0, row.trace - 1
            return None
        matches = np.flatnonzero((layout.trace_inlines == row.inline) & (layout.trace_xlines == row.xline))
        return (0, int(matches[0])) if matches.size else None
    if row.inline is None:
        return None
    inline_index = int(np.searchsorted(layout.inline_numbers, row.inline))
    xline_index = int(np.searchsorted(layout.xline_numbers, row.xline))
    if (inline_index >= len(layout.inline_numbers) or layout.inline_numbers[inline_index] != row.inline
            or xline_index >= len(layout.xline_numbers) or layout.xline_numbers[xline_index] != row.xline
            or layout.grid[inline_index, xline_index] < 0):
        return None
    return inline_index, xline_index


def place_picks(files: list[PickFile], info: SectionInfo, layout: TraceLayout) -> PlacedPicks:
    """Put every pick row on the section; raise PitfallsInputError naming the first row that does not fit."""
    shape = (1, info.n_traces) if layout.geometry == "2d" else (info.n_inlines, info.n_xlines)
    t_end_ms = info.t0_ms + info.dt_ms * (info.n_samples - 1)
    order: list[str] = []
    kinds: dict[str, str] = {}
    grids: dict[str, np.ndarray] = {}
    sources: dict[str, np.ndarray] = {}
    n_rows: dict[str, int] = {}
    n_gaps: dict[str, int] = {}
    for pick_file in files:
        if layout.geometry == "3d" and pick_file.geometry == "2d":
            raise PitfallsInputError(pick_file.path, "header", "numbers picks by `trace`, but the section is a 3-D volume",
                                     "give `inline` and `xline` columns, or scan a 2-D line")
        for row in pick_file.rows:
            if row.horizon not in grids:
                order.append(row.horizon)
                kinds[row.horizon] = row.kind
                grids[row.horizon] = np.full(shape, np.nan)
                sources[row.horizon] = np.full(shape, np.nan)
                n_rows[row.horizon] = 0
                n_gaps[row.horizon] = 0
            elif kinds[row.horizon] != row.kind:
                raise PitfallsInputError(pick_file.path, f"row {row.row}",
                                         f"horizon {row.horizon!r} is kind {row.kind!r} here but {kinds[row.horizon]!r} earlier",
                                         "give each horizon one kind")
            position = _position(row, layout)
            if position is None:
                raise PitfallsInputError(pick_file.path, f"row {row.row}", _where_text(row, info, layout),
                                         "check the trace numbering against the SEG-Y file, or the --iline-byte/--xline-byte options")
            n_rows[row.horizon] += 1
            if not np.isfinite(row.twt_ms):
                n_gaps[row.horizon] += 1
                continue
            if not info.t0_ms <= row.twt_ms <= t_end_ms:
                raise PitfallsInputError(pick_file.path, f"row {row.row}",
                                         f"twt_ms {row.twt_ms:g} is outside the traces ({info.t0_ms:g}-{t_end_ms:g} ms)",
                                         "check the time unit and the datum of the picks")
            previous = grids[row.horizon][position]
            if np.isfinite(previous) and abs(previous - row.twt_ms) > 1e-6:
                raise PitfallsInputError(pick_file.path, f"row {row.row}",
                                         f"horizon {row.horizon!r} already has {previous:g} ms at this trace and this row gives {row.twt_ms:g} ms",
                                         "keep one time per horizon and trace")
            grids[row.horizon][position] = row.twt_ms
    return PlacedPicks(tuple(order), tuple(kinds[name] for name in order), tuple(grids[name] for name in order),
                       tuple(n_rows[name] for name in order), tuple(n_gaps[name] for name in order))


def _where_text(row: PickRow, info: SectionInfo, layout: TraceLayout) -> str:
    if row.trace is not None:
        return f"trace {row.trace} is beyond the section (traces 1-{info.n_traces})"
    if layout.geometry == "2d":
        return f"inline {row.inline} / xline {row.xline} is not a trace of this line"
    return (f"inline {row.inline} / xline {row.xline} is not in the volume "
            f"(inlines {layout.inline_numbers[0]}-{layout.inline_numbers[-1]}, "
            f"xlines {layout.xline_numbers[0]}-{layout.xline_numbers[-1]}, with {info.n_missing_traces} positions missing)")
