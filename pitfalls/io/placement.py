"""Placing picks on the section: each pick matched to a trace, then gathered into one grid per horizon.

A pick names its trace in one of five ways (:attr:`pitfalls.io.picks.PickFile.key`):

- ``trace``: the 1-based trace position in the file of a 2-D line;
- ``cdp``: the CDP ensemble number, trace header bytes 21-24 (SEG-Y rev 1), on a 2-D line;
- ``shotpoint``: the energy source point number, trace header bytes 17-20, on a 2-D line;
- ``inline_xline``: the inline and crossline numbers of the trace headers (a volume, or a
  line cut from one);
- ``xy``: CDP X and Y (bytes 181-184 and 185-188, with the coordinate scalar of bytes 71-72
  applied): the nearest trace, refused when it is farther than half a bin (half the trace
  spacing on a line; half the bin's diagonal in a volume, so that every point of a bin matches
  its own trace). A distance is only measured when byte 89 gives the coordinates as lengths.

A number that names more than one trace (a shotpoint shared by several CDPs, a repeated CDP)
or a point at the same distance from two traces is an ambiguous match; two picks of one
horizon that fall on the same trace with different times are ambiguous too. Each is refused
with the row and the fix. A pick with a time that matches no trace is refused with the first
such row and the count; a gap (no time) needs no trace when placed by X/Y, since gridded
exports pad the survey with null values.

References
----------
.. [1] SEG Technical Standards Committee, 2002, SEG Y rev 1 Data Exchange format, Release 1.0.
       (trace header bytes 17, 21, 71, 89, 181, 185; from memory of the byte table, checked
       against segyio's field names)
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np
import segyio

from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, shown_list
from pitfalls.io.segy import TraceLayout, coordinate_scale
from pitfalls.model import Horizon, Picks, SectionInfo

TIME_TOLERANCE_MS = 1e-6
"""Two picks of one horizon on one trace within this many ms agree."""
_KEY_WORDS = {
    "trace": "trace position",
    "cdp": "CDP number (trace header byte 21)",
    "shotpoint": "shotpoint number (trace header byte 17)",
    "inline_xline": "inline and crossline numbers",
    "xy": "CDP X/Y, nearest trace",
}


@dataclass(frozen=True)
class TraceKeys:
    """The trace-header values picks can be matched by, one entry per trace in file order."""

    cdp: np.ndarray
    """CDP ensemble number, bytes 21-24, int64."""
    shotpoint: np.ndarray
    """Energy source point number, bytes 17-20, int64."""
    x: np.ndarray
    """CDP X with the coordinate scalar applied, float64."""
    y: np.ndarray
    """CDP Y with the coordinate scalar applied, float64."""
    coordinate_units: int = 1
    """Byte 89 of the first trace: 1 (or 0, unset) lengths; 2 arc seconds; 3 degrees; 4 DMS."""


def read_trace_keys(path: str) -> TraceKeys:
    """Read the matching headers of every trace of a SEG-Y file (read-only).

    Raises
    ------
    PitfallsInputError
        When the headers cannot be read.
    """
    try:
        with segyio.open(path, "r", ignore_geometry=True) as handle:
            attributes = handle.attributes
            cdp = np.asarray(attributes(segyio.TraceField.CDP)[:], dtype=np.int64)
            shotpoint = np.asarray(attributes(segyio.TraceField.EnergySourcePoint)[:], dtype=np.int64)
            scalars = np.asarray(attributes(segyio.TraceField.SourceGroupScalar)[:], dtype=np.int64)
            x = np.asarray(attributes(segyio.TraceField.CDP_X)[:], dtype=np.float64)
            y = np.asarray(attributes(segyio.TraceField.CDP_Y)[:], dtype=np.float64)
            units = int(handle.header[0][segyio.TraceField.CoordinateUnits]) if handle.tracecount else 1
    except (RuntimeError, ValueError, OSError, IndexError, KeyError) as err:
        raise PitfallsInputError(path, "", f"trace headers cannot be read to match the picks ({err})",
                                 fix="check that the SEG-Y file is complete") from err
    unique = np.unique(scalars)
    factors = np.array([coordinate_scale(int(s)) for s in unique])
    factor = factors[np.searchsorted(unique, scalars)]
    return TraceKeys(cdp, shotpoint, x * factor, y * factor, units)


@dataclass(frozen=True)
class FileMatch:
    """How the picks of one file found their traces."""

    path: str
    key: str
    """``trace``, ``cdp``, ``shotpoint``, ``inline_xline`` or ``xy``."""
    n_matched: int
    """Picks (rows kept after merging duplicates) placed on a trace."""
    n_unmatched_gaps: int = 0
    """Gap rows placed by X/Y that lie off the section (allowed: they carry no time)."""
    largest_distance_m: float | None = None
    """Largest distance from a pick to its trace (X/Y matching only)."""
    half_bin_m: float | None = None
    """The refusal distance used (X/Y matching only)."""
    panel_index: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    """Panel of each kept pick (0 on a line, the inline index in a volume); -1 when not placed."""
    trace_index: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    """Trace index within its panel of each kept pick; -1 when not placed."""
    trace_number: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    """Each kept pick's trace as findings name it: 1-based trace on a line, crossline number in a volume; -1 when not placed."""
    inline_number: np.ndarray | None = None
    """Each kept pick's inline number in a volume (-1 when not placed); None on a line."""

    def describe(self) -> str:
        """One line for the report."""
        name = os.path.basename(self.path)
        text = f"{name}: {self.n_matched} pick rows matched by {_KEY_WORDS[self.key]}"
        if self.key == "xy" and self.largest_distance_m is not None:
            text += (f", largest distance {self.largest_distance_m:.1f} m "
                     f"(refused beyond {self.half_bin_m:.1f} m, half a bin)")
        if self.n_unmatched_gaps:
            text += f"; {self.n_unmatched_gaps} gap rows off the section ignored"
        return text


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
    matches: tuple[FileMatch, ...] = ()
    """One per pick file, in the order given."""

    def panel(self, panel_index: int) -> Picks:
        """The picks of one panel (the line itself, or one inline)."""
        return Picks(tuple(Horizon(name, kind, grid[panel_index].copy())
                           for name, kind, grid in zip(self.names, self.kinds, self.grids)))


def place_picks(files: list[PickFile], info: SectionInfo, layout: TraceLayout,
                trace_keys: TraceKeys | Callable[[], TraceKeys] | None = None) -> PlacedPicks:
    """Match every pick to its trace and gather the picks into one grid per horizon.

    Parameters
    ----------
    files : list of PickFile
        The pick files, in the order given.
    info, layout : SectionInfo, TraceLayout
        The section the picks belong to.
    trace_keys : TraceKeys or callable, optional
        The CDP, shotpoint and X/Y headers; read from ``info.path`` when a file needs them and
        none are given.

    Raises
    ------
    PitfallsInputError
        Naming the file and the first row that matches no trace, matches ambiguously, lies
        outside the traces in time, or disagrees with another pick of its horizon on one trace.
    """
    shape = (1, info.n_traces) if layout.geometry == "2d" else (info.n_inlines, info.n_xlines)
    t_end_ms = info.t0_ms + info.dt_ms * (info.n_samples - 1)
    keys_cache: list[TraceKeys] = []

    def keys() -> TraceKeys:
        if not keys_cache:
            if isinstance(trace_keys, TraceKeys):
                keys_cache.append(trace_keys)
            elif callable(trace_keys):
                keys_cache.append(trace_keys())
            else:
                keys_cache.append(read_trace_keys(info.path))
        return keys_cache[0]

    order: list[str] = []
    kinds: dict[str, str] = {}
    grids: dict[str, np.ndarray] = {}
    n_rows: dict[str, int] = {}
    n_gaps: dict[str, int] = {}
    contributors: dict[str, list[str]] = {}
    matches: list[FileMatch] = []
    for pick_file in files:
        match = _numbered(_match(pick_file, info, layout, keys), layout)
        matches.append(match)
        placed = match.panel_index >= 0
        timed = np.isfinite(pick_file.twt_ms)
        outside = np.flatnonzero(placed & timed & ((pick_file.twt_ms < info.t0_ms - TIME_TOLERANCE_MS)
                                                   | (pick_file.twt_ms > t_end_ms + TIME_TOLERANCE_MS)))
        if outside.size:
            i = int(outside[0])
            raise PitfallsInputError(
                pick_file.path, f"row {pick_file.row[i]}",
                f"twt_ms {pick_file.twt_ms[i]:g} is outside the traces ({info.t0_ms:g}-{t_end_ms:g} ms)"
                + (f"; {outside.size} picks in all" if outside.size > 1 else ""),
                "check the time unit and the datum of the picks")
        for h, name in enumerate(pick_file.horizons):
            kind = pick_file.kinds[h]
            mine = pick_file.horizon_index == h
            if not mine.any():
                continue
            if name not in grids:
                order.append(name)
                kinds[name] = kind
                grids[name] = np.full(shape, np.nan)
                n_rows[name] = n_gaps[name] = 0
                contributors[name] = []
            elif kinds[name] != kind:
                first = int(pick_file.row[np.flatnonzero(mine)[0]])
                raise PitfallsInputError(pick_file.path, f"row {first}",
                                         f"horizon {name!r} is kind {kind!r} here but {kinds[name]!r} in "
                                         f"{shown_list([os.path.basename(p) for p in contributors[name]], 3)}",
                                         "give each horizon one kind")
            n_rows[name] += int(np.count_nonzero(mine))
            n_gaps[name] += int(np.count_nonzero(mine & ~timed))
            chosen = np.flatnonzero(mine & timed & placed)
            _put(pick_file, name, chosen, match, grids[name], contributors[name], layout)
            contributors[name].append(pick_file.path)
    return PlacedPicks(tuple(order), tuple(kinds[name] for name in order), tuple(grids[name] for name in order),
                       tuple(n_rows[name] for name in order), tuple(n_gaps[name] for name in order), tuple(matches))


def _put(pick_file: PickFile, name: str, chosen: np.ndarray, match: FileMatch, grid: np.ndarray,
         earlier: list[str], layout: TraceLayout) -> None:
    """Write one horizon's picks of one file into its grid; refuse two times on one trace."""
    panel, trace, twt_ms = match.panel_index[chosen], match.trace_index[chosen], pick_file.twt_ms[chosen]
    flat = panel * grid.shape[1] + trace
    order = np.argsort(flat, kind="stable")
    same = flat[order][1:] == flat[order][:-1]
    differ = same & (np.abs(twt_ms[order][1:] - twt_ms[order][:-1]) > TIME_TOLERANCE_MS)
    if differ.any():
        at = np.flatnonzero(differ)
        pairs = [(int(chosen[order[k]]), int(chosen[order[k + 1]])) for k in at]
        first, second = min(pairs, key=lambda pair: pick_file.row[pair[1]])
        where = _trace_words(match, first, layout)
        raise PitfallsInputError(
            pick_file.path, f"row {pick_file.row[second]}",
            f"horizon {name!r}: rows {pick_file.row[first]} and {pick_file.row[second]} both fall on {where} with "
            f"different times ({pick_file.twt_ms[first]:g} and {pick_file.twt_ms[second]:g} ms), an ambiguous match",
            "keep one of the two rows, or match the picks by a key that tells the traces apart")
    previous = grid[panel, trace]
    clash = np.isfinite(previous) & (np.abs(previous - twt_ms) > TIME_TOLERANCE_MS)
    if clash.any():
        k = int(np.flatnonzero(clash)[0])
        i = int(chosen[k])
        raise PitfallsInputError(
            pick_file.path, f"row {pick_file.row[i]}",
            f"horizon {name!r} already has {previous[k]:g} ms at {_trace_words(match, i, layout)} from "
            f"{shown_list([os.path.basename(p) for p in earlier], 3)}, and this row gives {twt_ms[k]:g} ms",
            "keep one time per horizon and trace")
    grid[panel, trace] = twt_ms


def _trace_words(match: FileMatch, i: int, layout: TraceLayout) -> str:
    if layout.geometry == "2d":
        return f"trace {match.trace_index[i] + 1}"
    return f"inline {layout.inline_numbers[match.panel_index[i]]}, xline {layout.xline_numbers[match.trace_index[i]]}"


def _numbered(match: FileMatch, layout: TraceLayout) -> FileMatch:
    placed = match.panel_index >= 0
    if layout.geometry == "2d":
        return replace(match, trace_number=np.where(placed, match.trace_index + 1, -1))
    safe_panel, safe_trace = np.maximum(match.panel_index, 0), np.maximum(match.trace_index, 0)
    return replace(match, trace_number=np.where(placed, layout.xline_numbers[safe_trace], -1).astype(np.int64),
                   inline_number=np.where(placed, layout.inline_numbers[safe_panel], -1).astype(np.int64))


# --- matching -------------------------------------------------------------------------------
def _match(pick_file: PickFile, info: SectionInfo, layout: TraceLayout, keys: Callable[[], TraceKeys]) -> FileMatch:
    n = pick_file.n_picks
    if layout.geometry == "3d" and pick_file.key in ("trace", "cdp", "shotpoint"):
        raise PitfallsInputError(pick_file.path, "header",
                                 f"places picks by {pick_file.key}, but the section is a 3-D volume",
                                 "give inline and xline columns (or x and y), or scan a 2-D line")
    if pick_file.key == "xy":
        return _match_xy(pick_file, info, layout, keys())
    panel = np.zeros(n, dtype=np.int64)
    if pick_file.key == "trace":
        numbers = pick_file.position["trace"]
        trace = np.where((numbers >= 1) & (numbers <= layout.n_traces), numbers - 1, -1)
        _refuse_unmatched(pick_file, trace < 0, lambda i: f"trace {numbers[i]} is beyond the section "
                                                          f"(traces 1-{info.n_traces})",
                          "check the trace numbering against the SEG-Y file, or name the column cdp if it holds "
                          "CDP numbers")
    elif pick_file.key in ("cdp", "shotpoint"):
        header = keys().cdp if pick_file.key == "cdp" else keys().shotpoint
        trace = _match_numbers(pick_file, pick_file.key, pick_file.position[pick_file.key], header)
    elif layout.geometry == "2d":
        trace = _match_pairs_on_line(pick_file, layout)
    else:
        panel, trace = _match_pairs_in_volume(pick_file, info, layout)
    return FileMatch(pick_file.path, pick_file.key, n, panel_index=panel, trace_index=trace)


def _refuse_unmatched(pick_file: PickFile, unmatched: np.ndarray, problem: Callable[[int], str], fix: str) -> None:
    if not unmatched.any():
        return
    bad = np.flatnonzero(unmatched)
    i = int(bad[0])
    more = f"; {bad.size} pick rows in all match no trace" if bad.size > 1 else ""
    raise PitfallsInputError(pick_file.path, f"row {pick_file.row[i]}", problem(i) + more, fix)


def _match_numbers(pick_file: PickFile, name: str, numbers: np.ndarray, header: np.ndarray) -> np.ndarray:
    """Trace index of each number in ``header``; refuses numbers absent or repeated there."""
    byte = 21 if name == "cdp" else 17
    order = np.argsort(header, kind="stable")
    sorted_header = header[order]
    left = np.searchsorted(sorted_header, numbers, side="left")
    right = np.searchsorted(sorted_header, numbers, side="right")
    count = right - left
    lowest, highest = (int(sorted_header[0]), int(sorted_header[-1])) if header.size else (0, 0)
    _refuse_unmatched(pick_file, count == 0,
                      lambda i: f"{name} {numbers[i]} is on no trace of the section (byte {byte} runs "
                                f"{lowest}-{highest})",
                      f"check that the {name} column holds the {name} numbers of this line's trace headers")
    repeated = np.flatnonzero(count > 1)
    if repeated.size:
        i = int(repeated[0])
        traces = order[left[i]:right[i]] + 1
        raise PitfallsInputError(
            pick_file.path, f"row {pick_file.row[i]}",
            f"{name} {numbers[i]} is on {count[i]} traces of the section ({shown_list(traces.tolist(), 4)}), "
            f"an ambiguous match",
            "match the picks by trace, cdp or x and y instead" if name == "shotpoint" else
            "match the picks by trace or by x and y instead")
    return order[np.minimum(left, max(header.size - 1, 0))].astype(np.int64)


def _match_pairs_on_line(pick_file: PickFile, layout: TraceLayout) -> np.ndarray:
    """Trace index of each inline/xline pair on a line; refuses pairs absent or repeated."""
    where: dict[tuple[int, int], int] = {}
    repeated: set[tuple[int, int]] = set()
    for index, pair in enumerate(zip(layout.trace_inlines.tolist(), layout.trace_xlines.tolist())):
        if pair in where:
            repeated.add(pair)
        else:
            where[pair] = index
    inline, xline = pick_file.position["inline"], pick_file.position["xline"]
    trace = np.array([where.get(pair, -1) for pair in zip(inline.tolist(), xline.tolist())], dtype=np.int64)
    _refuse_unmatched(pick_file, trace < 0,
                      lambda i: f"inline {inline[i]} / xline {xline[i]} is not a trace of this line",
                      "check the inline/xline numbers against the SEG-Y file, or the --iline-byte/--xline-byte "
                      "options")
    for i, pair in enumerate(zip(inline.tolist(), xline.tolist())):
        if pair in repeated:
            raise PitfallsInputError(pick_file.path, f"row {pick_file.row[i]}",
                                     f"inline {pair[0]} / xline {pair[1]} is on more than one trace of this line, "
                                     f"an ambiguous match", "match the picks by trace, cdp or x and y instead")
    return trace


def _match_pairs_in_volume(pick_file: PickFile, info: SectionInfo,
                           layout: TraceLayout) -> tuple[np.ndarray, np.ndarray]:
    inline, xline = pick_file.position["inline"], pick_file.position["xline"]
    inline_index = np.searchsorted(layout.inline_numbers, inline)
    xline_index = np.searchsorted(layout.xline_numbers, xline)
    inside = (inline_index < layout.inline_numbers.size) & (xline_index < layout.xline_numbers.size)
    inline_index = np.minimum(inline_index, layout.inline_numbers.size - 1)
    xline_index = np.minimum(xline_index, layout.xline_numbers.size - 1)
    found = (inside & (layout.inline_numbers[inline_index] == inline) & (layout.xline_numbers[xline_index] == xline)
             & (layout.grid[inline_index, xline_index] >= 0))
    _refuse_unmatched(
        pick_file, ~found,
        lambda i: (f"inline {inline[i]} / xline {xline[i]} is not in the volume "
                   f"(inlines {layout.inline_numbers[0]}-{layout.inline_numbers[-1]}, "
                   f"xlines {layout.xline_numbers[0]}-{layout.xline_numbers[-1]}, "
                   f"with {info.n_missing_traces} positions missing)"),
        "check the inline/xline numbering against the SEG-Y file, or the --iline-byte/--xline-byte options")
    return inline_index.astype(np.int64), xline_index.astype(np.int64)


def _bin_half_size_m(x: np.ndarray, y: np.ndarray, layout: TraceLayout) -> float:
    """Half a bin: half the median trace spacing on a line, half the bin diagonal in a volume."""
    def spacing(xs: np.ndarray, ys: np.ndarray, valid: np.ndarray) -> float:
        distance = np.hypot(np.diff(xs), np.diff(ys))[valid[1:] & valid[:-1]]
        distance = distance[distance > 0]
        return float(np.median(distance)) if distance.size else 0.0

    if layout.geometry == "2d":
        return 0.5 * spacing(x, y, np.ones(x.size, dtype=bool))
    grid = layout.grid
    present = grid >= 0
    safe = np.where(present, grid, 0)
    gx, gy = x[safe], y[safe]
    along_xline = [spacing(gx[i], gy[i], present[i]) for i in range(0, grid.shape[0], max(1, grid.shape[0] // 8))]
    along_inline = [spacing(gx[:, j], gy[:, j], present[:, j])
                    for j in range(0, grid.shape[1], max(1, grid.shape[1] // 8))]
    dx = float(np.median([d for d in along_xline if d > 0])) if any(d > 0 for d in along_xline) else 0.0
    dy = float(np.median([d for d in along_inline if d > 0])) if any(d > 0 for d in along_inline) else 0.0
    if dx == 0.0 or dy == 0.0:
        return 0.5 * max(dx, dy) * np.sqrt(2.0)
    return 0.5 * float(np.hypot(dx, dy))


def _match_xy(pick_file: PickFile, info: SectionInfo, layout: TraceLayout, keys: TraceKeys) -> FileMatch:
    from scipy.spatial import cKDTree

    if keys.coordinate_units not in (0, 1):
        raise PitfallsInputError(
            pick_file.path, "header",
            f"places picks by x and y, but the section's CDP X/Y are not lengths (byte 89 is {keys.coordinate_units})",
            "match the picks by trace, cdp or inline and xline instead")
    if layout.geometry == "2d":
        trace_files = np.arange(layout.n_traces)
    else:
        trace_files = layout.grid[layout.grid >= 0]
    x, y = keys.x[trace_files], keys.y[trace_files]
    half_bin_m = _bin_half_size_m(keys.x, keys.y, layout)
    if half_bin_m <= 0.0:
        raise PitfallsInputError(
            pick_file.path, "header",
            "places picks by x and y, but the section's CDP X/Y headers (bytes 181/185) hold no spacing "
            "(all traces at one point)", "match the picks by trace, cdp or inline and xline instead")
    tree = cKDTree(np.column_stack([x, y]))
    points = np.column_stack([pick_file.position["x"], pick_file.position["y"]])
    k = 2 if x.size > 1 else 1
    distance, nearest = tree.query(points, k=k)
    if k == 1:
        distance, nearest = distance[:, None], nearest[:, None]
    timed = np.isfinite(pick_file.twt_ms)
    far = distance[:, 0] > half_bin_m
    _refuse_unmatched(
        pick_file, far & timed,
        lambda i: (f"x {points[i, 0]:g}, y {points[i, 1]:g} is {distance[i, 0]:.1f} m from the nearest trace, "
                   f"more than half a bin ({half_bin_m:.1f} m)"),
        "check that the picks use the same coordinate system and units as the SEG-Y CDP X/Y (bytes 181/185, "
        "scalar in byte 71)")
    if k == 2:
        tie = (~far) & (distance[:, 1] - distance[:, 0] <= 1e-6 * np.maximum(1.0, distance[:, 0]))
        if tie.any():
            i = int(np.flatnonzero(tie)[0])
            a, b = trace_files[nearest[i, 0]], trace_files[nearest[i, 1]]
            raise PitfallsInputError(
                pick_file.path, f"row {pick_file.row[i]}",
                f"x {points[i, 0]:g}, y {points[i, 1]:g} is equally near traces {min(a, b) + 1} and {max(a, b) + 1} "
                f"of the file, an ambiguous match",
                "match the picks by trace, cdp or inline and xline instead")
    file_trace = np.where(far, -1, trace_files[nearest[:, 0]])
    if layout.geometry == "2d":
        panel = np.where(far, -1, 0).astype(np.int64)
        trace = file_trace.astype(np.int64)
    else:
        inverse = np.full(layout.n_traces, -1, dtype=np.int64)
        inverse[layout.grid[layout.grid >= 0]] = np.flatnonzero((layout.grid >= 0).ravel())
        flat = np.where(far, -1, inverse[np.maximum(file_trace, 0)])
        panel = np.where(far, -1, flat // layout.grid.shape[1]).astype(np.int64)
        trace = np.where(far, -1, flat % layout.grid.shape[1]).astype(np.int64)
    matched = ~far
    largest = float(distance[matched, 0].max()) if matched.any() else 0.0
    return FileMatch(pick_file.path, "xy", int(np.count_nonzero(matched)),
                     n_unmatched_gaps=int(np.count_nonzero(far & ~timed)), largest_distance_m=largest,
                     half_bin_m=half_bin_m, panel_index=panel, trace_index=trace)
