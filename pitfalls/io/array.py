"""Sections held in memory: a numpy array with its geometry, or a labelled xarray DataArray.

A line is an array of shape (n_traces, n_samples), a volume (n_inlines, n_xlines, n_samples),
time last, as segyio reads them. The geometry comes with the array: the sample interval and
the time of the first sample in ms, the trace numbers of a line (default 1..n) or the inline
and crossline numbers of a volume (default 1..n each), and optionally the traces' X/Y
coordinates in metres or the trace spacing.

The source offers what the SEG-Y reader offers (``info``, ``layout`` with the coordinates when
given, ``n_panels``, ``read_block()``, ``blocks()``, ``panels()``, ``inline_panel()``, ``reader()``
for worker processes), so the scan cannot tell a file from an array. Like a file's, the array is
never changed: panels are float32 copies.

Checks, each a :class:`PitfallsInputError` naming the argument and what to fix: the shape, a
numeric dtype, no infinite values, some live samples (finite and not zero), a positive finite
sample interval and a finite start time, one whole, strictly increasing number per trace,
inline or crossline, and coordinates of the traces' shape. A trace with no live sample in a
volume is a missing position, as a trace absent from a SEG-Y volume is. A volume one inline
wide is a line, as for a file.

xarray is never imported here: a DataArray is recognised by its attributes, so xarray stays
an optional extra.
"""
from __future__ import annotations

import hashlib
from dataclasses import replace
from typing import Any, Iterator, Sequence

import numpy as np

from pitfalls.errors import PitfallsInputError
from pitfalls.io.segy import TraceLayout
from pitfalls.model import Block, Section, SectionInfo

ARRAY_NAME = "(in memory)"
"""How reports name an array given without a name."""

TIME_DIMS_MS = ("twt_ms", "twt", "time", "time_ms", "sample", "samples")
TIME_DIMS_S = ("twt_s", "time_s")
TRACE_DIMS = ("trace", "traces", "cdp")
INLINE_DIMS = ("inline", "iline", "il")
XLINE_DIMS = ("xline", "crossline", "xl")
X_COORDS = ("cdp_x", "x")
Y_COORDS = ("cdp_y", "y")
_TIME_REGULAR_TOLERANCE = 1e-6
"""Relative spread of the sample interval allowed in a DataArray's time coordinate."""


def _error(name: str, where: str, problem: str, fix: str) -> PitfallsInputError:
    return PitfallsInputError(name, where, problem, fix)


def is_dataarray(section: Any) -> bool:
    """True for an xarray DataArray (recognised without importing xarray)."""
    return (type(section).__module__.split(".")[0] == "xarray" and hasattr(section, "dims")
            and hasattr(section, "coords") and hasattr(section, "values"))


def _numbers(values: Any, count: int, what: str, name: str) -> np.ndarray:
    """One whole number per trace/inline/crossline, strictly increasing."""
    array = np.asarray(values)
    if array.ndim != 1 or array.shape[0] != count:
        raise _error(name, what, f"has {array.size if array.ndim else 1} number(s) for {count} "
                     f"{'trace' if what == 'trace_numbers' else what.split('_')[0]}s of the array",
                     f"give one {what[:-1].replace('_', ' ')} per position along that axis of the array")
    if array.dtype.kind not in "iuf" or (array.dtype.kind == "f" and not (
            np.all(np.isfinite(array)) and np.all(array == np.round(array)))):
        raise _error(name, what, "holds values that are not whole numbers",
                     "give whole numbers, as in the trace headers")
    numbers = array.astype(np.int64)
    if count > 1 and not np.all(np.diff(numbers) > 0):
        bad = int(np.flatnonzero(np.diff(numbers) <= 0)[0])
        raise _error(name, what, f"is not strictly increasing (position {bad + 1} holds {numbers[bad + 1]} "
                     f"after {numbers[bad]})", "give each trace its own number, in the array's order")
    return numbers


def _coordinates(coordinates: Any, shape: tuple[int, ...], name: str) -> tuple[np.ndarray, np.ndarray]:
    try:
        x, y = coordinates
    except (TypeError, ValueError):
        raise _error(name, "coordinates", "is not a pair (x, y)",
                     "give coordinates=(x, y), two arrays of the traces' X and Y in metres") from None
    x = np.asarray(x, dtype=float) if np.asarray(x).dtype.kind in "iuf" else None
    y = np.asarray(y, dtype=float) if np.asarray(y).dtype.kind in "iuf" else None
    for axis, values in (("x", x), ("y", y)):
        if values is None or values.shape != shape:
            raise _error(name, f"coordinates {axis}", f"must be numbers of shape {shape}, one per trace",
                         "give one X and one Y per trace, shaped like the array without its time axis")
        if not np.all(np.isfinite(values)):
            raise _error(name, f"coordinates {axis}", "holds NaN or infinite values",
                         "give finite coordinates, or leave them out to use trace_spacing_m or the rules' spacing")
    return x, y


class ArraySource:
    """A section in memory, read by the scan as it reads a SEG-Y file.

    Parameters
    ----------
    data : array_like
        (n_traces, n_samples) for a line or (n_inlines, n_xlines, n_samples) for a volume.
    dt_ms : float
        Sample interval, ms.
    t0_ms : float
        Two-way time of the first sample, ms.
    fallback_spacing_m : float
        Trace spacing used when neither ``trace_spacing_m`` nor ``coordinates`` is given.
    trace_numbers : sequence of int, optional
        A line's trace numbers as the picks name them (default 1..n_traces).
    inline_numbers, xline_numbers : sequence of int, optional
        A volume's inline and crossline numbers (default 1..n along each axis).
    coordinates : (x, y) pair of arrays, optional
        Each trace's X and Y in metres, shaped like the array without its time axis.
    trace_spacing_m : float, optional
        Distance between neighbouring traces; measured from ``coordinates`` when not given.
    name : str
        How messages and reports name the section.
    """

    def __init__(self, data: Any, *, dt_ms: float | None, t0_ms: float = 0.0, fallback_spacing_m: float,
                 trace_numbers: Sequence[int] | None = None, inline_numbers: Sequence[int] | None = None,
                 xline_numbers: Sequence[int] | None = None, coordinates: Any = None,
                 trace_spacing_m: float | None = None, name: str = ARRAY_NAME) -> None:
        self.path = name = str(name)
        array = np.asarray(data)
        if array.dtype.kind not in "iuf":
            raise _error(name, "", f"holds {array.dtype} values, not real numbers",
                         "give the amplitudes as a float or integer array")
        if array.ndim not in (2, 3) or 0 in array.shape:
            raise _error(name, "", f"is an array of shape {array.shape}",
                         "give (traces, samples) for a line or (inlines, crosslines, samples) for a volume, "
                         "time last, with at least one trace and one sample")
        infinite = ~np.isfinite(array) & ~np.isnan(array) if array.dtype.kind == "f" else None
        if infinite is not None and infinite.any():
            position = np.unravel_index(int(np.flatnonzero(infinite)[0]), array.shape)
            raise _error(name, _where(position, array.ndim), "holds an infinite amplitude",
                         "replace infinite values with numbers, or with NaN where there is no data")
        live = np.isfinite(array) & (array != 0)
        if not live.any():
            state = "NaN" if array.dtype.kind == "f" and np.isnan(array).all() else "NaN or zero"
            raise _error(name, "", f"holds no live samples (every value is {state})",
                         "give the section's amplitudes; NaN marks only traces with no data")
        self._data = array
        self._dt_ms = _interval(dt_ms, name)
        self._t0_ms = _start(t0_ms, name)
        notes: list[str] = []
        n_samples = int(array.shape[-1])
        if array.ndim == 2:
            if inline_numbers is not None or xline_numbers is not None:
                raise _error(name, "inline_numbers/xline_numbers", "are for a 3-D array (inlines, crosslines, samples)",
                             "give trace_numbers for a line, or reshape the array to 3-D")
            n_traces = int(array.shape[0])
            numbers = (np.arange(1, n_traces + 1) if trace_numbers is None
                       else _numbers(trace_numbers, n_traces, "trace_numbers", name))
            ilines = np.ones(n_traces, dtype=np.int64)
            self.layout = TraceLayout("2d", n_traces, numbers, ilines, numbers.copy())
            order = np.arange(n_traces)
            flat_shape: tuple[int, ...] = (n_traces,)
            shape = (1, n_traces)
            n_missing = 0
        else:
            if trace_numbers is not None:
                raise _error(name, "trace_numbers", "is for a 2-D line (traces, samples)",
                             "give inline_numbers and xline_numbers for a volume")
            n_il, n_xl = int(array.shape[0]), int(array.shape[1])
            il = np.arange(1, n_il + 1) if inline_numbers is None else _numbers(inline_numbers, n_il, "inline_numbers", name)
            xl = np.arange(1, n_xl + 1) if xline_numbers is None else _numbers(xline_numbers, n_xl, "xline_numbers", name)
            flat_shape = (n_il, n_xl)
            if n_il == 1 or n_xl == 1:  # as for a file: a volume one line wide is a line
                n_traces = n_il * n_xl
                trace_il = np.repeat(il, n_xl)
                trace_xl = np.tile(xl, n_il)
                self.layout = TraceLayout("2d", n_traces, np.arange(1, n_traces + 1), trace_il, trace_xl)
                order = np.arange(n_traces)
                shape = (1, n_traces)
                n_missing = 0
            else:
                present = live.any(axis=-1)
                grid = np.full((n_il, n_xl), -1, dtype=np.int64)
                grid[present] = np.arange(int(present.sum()))
                n_traces = int(present.sum())
                order = np.flatnonzero(present.ravel())
                self.layout = TraceLayout("3d", n_traces, np.arange(1, n_traces + 1), np.repeat(il, n_xl)[order],
                                          np.tile(xl, n_il)[order], il, xl, grid)
                shape = (n_il, n_xl)
                n_missing = int(n_il * n_xl - n_traces)
                if n_missing:
                    notes.append(f"{n_missing} inline/crossline positions have no live sample; they are treated as no data")
        if coordinates is not None:  # per trace, in trace order, for the findings' map footprints
            x, y = _coordinates(coordinates, flat_shape, name)
            keep = (self.layout.grid >= 0).ravel() if self.layout.geometry == "3d" else slice(None)
            trace_x, trace_y = np.asarray(x, float).ravel()[keep], np.asarray(y, float).ravel()[keep]
            if np.any(trace_x != 0) or np.any(trace_y != 0):
                self.layout = replace(self.layout, trace_x=trace_x, trace_y=trace_y)
        if coordinates is not None:
            x, y = _coordinates(coordinates, flat_shape, name)
            self.layout = replace(self.layout, trace_x=x.reshape(-1)[order], trace_y=y.reshape(-1)[order])
        spacing_m, measured = self._spacing(trace_spacing_m, coordinates, flat_shape, fallback_spacing_m, name)
        if not measured:
            notes.append(f"no coordinates or trace spacing given; trace spacing {fallback_spacing_m:g} m from the rules")
        self.info = SectionInfo(
            path=name, sha256=array_sha256(array), geometry=self.layout.geometry, n_traces=n_traces,
            n_samples=n_samples, dt_ms=self._dt_ms, t0_ms=self._t0_ms, n_inlines=shape[0], n_xlines=shape[1],
            n_missing_traces=n_missing, trace_spacing_m=spacing_m, spacing_from_headers=measured, notes=tuple(notes),
            coordinate_extent_xy=self.layout.footprint_xy())

    def _spacing(self, spacing_m: float | None, coordinates: Any, shape: tuple[int, ...], fallback_m: float,
                 name: str) -> tuple[float, bool]:
        if spacing_m is not None:
            try:
                value = float(spacing_m)
            except (TypeError, ValueError):
                value = float("nan")
            if not (np.isfinite(value) and value > 0):
                raise _error(name, "trace_spacing_m", f"is {spacing_m!r}, not a positive distance in metres",
                             "give the distance between neighbouring traces in metres")
            return value, True
        if coordinates is None:
            return float(fallback_m), False
        x, y = _coordinates(coordinates, shape, name)
        if self.layout.geometry == "3d":
            middle = shape[0] // 2
            keep = self.layout.grid[middle] >= 0
            xs, ys = x[middle][keep], y[middle][keep]
            step = np.diff(self.layout.xline_numbers[keep])
        else:
            xs, ys = x.ravel(), y.ravel()
            step = np.ones(max(len(xs) - 1, 0))
        if len(xs) < 2:
            return float(fallback_m), False
        distance = np.hypot(np.diff(xs), np.diff(ys)) / np.maximum(step, 1)
        distance = distance[distance > 0]
        if distance.size == 0:
            return float(fallback_m), False
        return float(np.median(distance)), True

    # --- reading, as SeismicFile ----------------------------------------------------------
    @property
    def n_panels(self) -> int:
        """Panels the section has: 1 for a line, one per inline for a volume."""
        return 1 if self.layout.geometry == "2d" else len(self.layout.inline_numbers)

    def panels(self) -> Iterator[Section]:
        """One panel for a line; one per inline, in inline order, for a volume."""
        for block in self.blocks(1):
            yield from block.panels

    def blocks(self, inlines_per_block: int = 16) -> Iterator[Block]:
        """The section in blocks: a line is one block; a volume comes ``inlines_per_block`` inlines at a time."""
        step = max(1, int(inlines_per_block))
        for first in range(0, self.n_panels, step):
            yield self.read_block(first, min(self.n_panels, first + step))

    def read_block(self, first_panel: int, stop_panel: int) -> Block:
        """Panels ``first_panel`` up to (not including) ``stop_panel`` as float32 copies, NaN where no trace is."""
        if self.layout.geometry == "2d":
            data = self._data.reshape(-1, self._data.shape[-1])
            panel = Section(data=np.array(data, dtype=np.float32), dt_ms=self._dt_ms, t0_ms=self._t0_ms,
                            trace_spacing_m=self.info.trace_spacing_m, trace_numbers=self.layout.trace_numbers,
                            name=self.path)
            return Block(0, (panel,))
        data = np.array(self._data[first_panel:stop_panel], dtype=np.float32)
        data[self.layout.grid[first_panel:stop_panel] < 0] = np.nan
        panels = []
        for offset, inline_index in enumerate(range(first_panel, stop_panel)):
            inline_number = int(self.layout.inline_numbers[inline_index])
            panels.append(Section(data=data[offset], dt_ms=self._dt_ms, t0_ms=self._t0_ms,
                                  trace_spacing_m=self.info.trace_spacing_m, trace_numbers=self.layout.xline_numbers,
                                  inline_number=inline_number, name=f"inline {inline_number}"))
        return Block(first_panel, tuple(panels))

    def inline_panel(self, inline_index: int) -> Section:
        """One inline of a volume as a panel, NaN where a position has no trace."""
        return self.read_block(inline_index, inline_index + 1).panels[0]

    def reader(self) -> "ArraySource":
        """The block reader for worker processes: this source itself (pickled with its array)."""
        return self

    def reader(self) -> "ArraySource":
        """The block reader for worker processes: the source itself, which pickles with its array."""
        return self

    def close(self) -> None:
        """Nothing to release; kept so the scan can treat every source alike."""

    def __enter__(self) -> "ArraySource":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def array_sha256(array: np.ndarray) -> str:
    """SHA-256 of the amplitudes as little-endian float32 in C order, with the shape, to tie a report to its array."""
    digest = hashlib.sha256(repr(tuple(array.shape)).encode("ascii"))
    flat = array.reshape(-1)
    step = 1 << 20
    for start in range(0, flat.size, step):
        digest.update(np.ascontiguousarray(flat[start:start + step], dtype="<f4").tobytes())
    return digest.hexdigest()


def _where(position: tuple, ndim: int) -> str:
    if ndim == 2:
        return f"trace index {position[0]}, sample {position[1]}"
    return f"inline index {position[0]}, crossline index {position[1]}, sample {position[2]}"


def _interval(dt_ms: Any, name: str) -> float:
    if dt_ms is None:
        raise _error(name, "dt_ms", "is missing: an array does not carry its sample interval",
                     "give dt_ms, the sample interval in milliseconds (e.g. dt_ms=4.0)")
    try:
        value = float(dt_ms)
    except (TypeError, ValueError):
        value = float("nan")
    if not (np.isfinite(value) and value > 0):
        raise _error(name, "dt_ms", f"is {dt_ms!r}, not a positive sample interval",
                     "give the sample interval in milliseconds (e.g. dt_ms=4.0)")
    return value


def _start(t0_ms: Any, name: str) -> float:
    try:
        value = float(t0_ms)
    except (TypeError, ValueError):
        value = float("nan")
    if not np.isfinite(value):
        raise _error(name, "t0_ms", f"is {t0_ms!r}, not a time", "give the two-way time of the first sample in ms")
    return value + 0.0


# --- xarray -------------------------------------------------------------------------------
def dataarray_geometry(section: Any, name: str | None) -> dict[str, Any]:
    """The array and keyword arguments of :class:`ArraySource` read from a DataArray's dimensions.

    The time dimension is one of :data:`TIME_DIMS_MS` (ms) or :data:`TIME_DIMS_S` (seconds;
    also a time dimension whose ``units`` attribute is ``s``), and must be regularly sampled.
    A line has one of :data:`TRACE_DIMS`; a volume one of :data:`INLINE_DIMS` and one of
    :data:`XLINE_DIMS`. Their coordinates give the numbers; coordinates named in
    :data:`X_COORDS` / :data:`Y_COORDS` over the trace dimensions give X/Y in metres.
    """
    label = name or (str(section.name) if getattr(section, "name", None) is not None else ARRAY_NAME)
    dims = [str(dim) for dim in section.dims]
    lowered = {dim.lower(): dim for dim in dims}

    def find(names: Sequence[str]) -> str | None:
        return next((lowered[n] for n in names if n in lowered), None)

    time_dim = find(TIME_DIMS_MS + TIME_DIMS_S)
    trace_dim, inline_dim, xline_dim = find(TRACE_DIMS), find(INLINE_DIMS), find(XLINE_DIMS)
    if inline_dim is not None and xline_dim is not None:
        space = [inline_dim, xline_dim]
    elif trace_dim is not None:
        space = [trace_dim]
    else:
        space = []
    if time_dim is None or not space or len(dims) != len(space) + 1:
        raise _error(label, "dims", f"are {tuple(dims)}, which do not name a line or a volume",
                     f"name the time dimension one of {', '.join(TIME_DIMS_MS + TIME_DIMS_S)} and the trace "
                     f"dimension one of {', '.join(TRACE_DIMS)} (a line) or one of {', '.join(INLINE_DIMS)} "
                     f"and one of {', '.join(XLINE_DIMS)} (a volume)")
    ordered = section.transpose(*space, time_dim)
    times = _coordinate_values(section, time_dim)
    if times is None or times.dtype.kind not in "iuf" or times.size < 1:
        raise _error(label, f"dimension {time_dim}", "has no numeric time coordinate",
                     "give the time dimension a coordinate of two-way times")
    units = str(section.coords[time_dim].attrs.get("units", "")).strip().lower() if time_dim in section.coords else ""
    scale = 1000.0 if (time_dim.lower() in TIME_DIMS_S or units in ("s", "second", "seconds")) else 1.0
    times = times.astype(float) * scale
    if times.size > 1:
        steps = np.diff(times)
        dt_ms = float(np.median(steps))
        if dt_ms <= 0 or np.max(np.abs(steps - dt_ms)) > _TIME_REGULAR_TOLERANCE * abs(dt_ms):
            raise _error(label, f"dimension {time_dim}", "is not regularly sampled in increasing time",
                         "resample to a constant sample interval, times increasing")
    else:
        dt_ms = float(section.attrs.get("dt_ms", float("nan")))
    arguments: dict[str, Any] = {"data": ordered.values, "dt_ms": dt_ms, "t0_ms": float(times[0]), "name": label}
    if len(space) == 1:
        arguments["trace_numbers"] = _coordinate_values(section, space[0])
    else:
        arguments["inline_numbers"] = _coordinate_values(section, space[0])
        arguments["xline_numbers"] = _coordinate_values(section, space[1])
    over_traces = [c for c in section.coords if set(map(str, section.coords[c].dims)) == set(space)]
    x_name = next((c for c in over_traces if str(c).lower() in X_COORDS), None)
    y_name = next((c for c in over_traces if str(c).lower() in Y_COORDS), None)
    if x_name is not None and y_name is not None:
        arguments["coordinates"] = (section.coords[x_name].transpose(*space).values,
                                    section.coords[y_name].transpose(*space).values)
    return arguments


def _coordinate_values(section: Any, dim: str) -> np.ndarray | None:
    if dim not in section.coords:
        return None
    return np.asarray(section.coords[dim].values)
