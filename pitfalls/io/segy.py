"""Reading post-stack SEG-Y: geometry, sample interval, start time, coordinates and traces.

The file is opened read-only with segyio and never written. A 2-D line is read whole; a
3-D volume is read inline by inline through its inline/crossline headers, so irregular
volumes (missing traces, unsorted or crossline-major order) work and only one inline is
in memory at a time. Every unit conversion happens here: segyio gives the sample interval
in microseconds; everything past this module speaks milliseconds.

References
----------
.. [1] SEG Technical Standards Committee, 2002, SEG Y rev 1 Data Exchange format, Release 1.0,
       eds. M. W. Norris and A. K. Faichney. (byte positions 71, 109, 115, 117, 181, 185,
       189, 193; binary header 3217, 3221, 3225)
"""
from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass, field, replace
from typing import Iterator

import numpy as np
import segyio

from pitfalls.errors import PitfallsInputError
from pitfalls.model import Block, Section, SectionInfo

DEFAULT_INLINE_BYTE = 189  # SEG-Y rev 1 INLINE_3D
DEFAULT_XLINE_BYTE = 193   # SEG-Y rev 1 CROSSLINE_3D
MAX_EMPTY_GRID_FACTOR = 4
"""A header-derived 3-D grid with more than this many positions per trace (over 75 % empty) is refused."""


def file_sha256(path: str) -> str:
    """SHA-256 of a file's bytes, read in 1 MiB blocks."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def coordinate_scale(scalar: int) -> float:
    """SEG-Y coordinate scalar (bytes 71-72): positive multiplies, negative divides, zero is one."""
    if scalar > 0:
        return float(scalar)
    if scalar < 0:
        return 1.0 / float(-scalar)
    return 1.0


@dataclass(frozen=True)
class TraceLayout:
    """Where each trace of the file sits.

    For a 2-D line ``trace_numbers`` are 1..n in file order. For a 3-D volume
    ``grid[inline_index, xline_index]`` is the file's trace index, or -1 where the volume
    has no trace.
    """

    geometry: str
    n_traces: int
    trace_numbers: np.ndarray
    trace_inlines: np.ndarray
    """Inline header of each trace in file order (zeros when the file has none)."""
    trace_xlines: np.ndarray
    inline_numbers: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    xline_numbers: np.ndarray = field(default_factory=lambda: np.empty(0, dtype=np.int64))
    grid: np.ndarray = field(default_factory=lambda: np.empty((0, 0), dtype=np.int64))
    trace_x: np.ndarray | None = None
    """CDP X of each trace in file order, coordinate scalar applied; None when the headers hold none."""
    trace_y: np.ndarray | None = None
    """CDP Y of each trace in file order, coordinate scalar applied; None when the headers hold none."""

    def footprint_xy(self, traces: tuple[int, int] | None = None, inlines: tuple[int, int] | None = None,
                     xlines: tuple[int, int] | None = None) -> tuple[tuple[float, float], tuple[float, float]] | None:
        """CDP X/Y extent ``((x_min, y_min), (x_max, y_max))`` of a trace range (a line) or of an
        inline/crossline range (a volume, by line numbers); None without coordinates or traces there."""
        if self.trace_x is None or self.trace_y is None:
            return None
        if self.geometry == "3d" and inlines is not None:
            rows = (self.inline_numbers >= inlines[0]) & (self.inline_numbers <= inlines[1])
            columns = (np.ones(len(self.xline_numbers), dtype=bool) if xlines is None else
                       (self.xline_numbers >= xlines[0]) & (self.xline_numbers <= xlines[1]))
            chosen = self.grid[np.ix_(rows, columns)]
            chosen = chosen[chosen >= 0]
        elif traces is not None:
            chosen = np.arange(max(traces[0], 1) - 1, min(traces[1], self.n_traces))
        else:
            chosen = np.arange(self.n_traces)
        if chosen.size == 0:
            return None
        x, y = self.trace_x[chosen], self.trace_y[chosen]
        return (float(x.min()), float(y.min())), (float(x.max()), float(y.max()))


class SeismicFile:
    """An open post-stack SEG-Y file: its description, its layout, and its panels.

    Use as a context manager; ``panels()`` yields one :class:`Section` for a 2-D line and one
    per inline for a 3-D volume.
    """

    def __init__(self, path: str, fallback_spacing_m: float, iline_byte: int = DEFAULT_INLINE_BYTE,
                 xline_byte: int = DEFAULT_XLINE_BYTE, force_2d: bool = False) -> None:
        self.path = str(path)
        if not force_2d and iline_byte == xline_byte:
            raise PitfallsInputError(self.path, f"trace header byte {iline_byte}",
                                     "is given for both the inline and the crossline number",
                                     "give two different bytes with --iline-byte/--xline-byte, or use --2d for a line")
        if os.path.isdir(self.path):
            raise PitfallsInputError(self.path, "", "is a folder, not a SEG-Y file",
                                     "give the path of the SEG-Y file inside it")
        if not os.path.exists(self.path):
            raise PitfallsInputError(self.path, "", "no such file", "check the path to the SEG-Y section")
        if not os.path.isfile(self.path):
            raise PitfallsInputError(self.path, "", "is not a regular file (a device, pipe or socket)",
                                     "give the path of a SEG-Y file")
        raw = check_layout(self.path)
        self.endian = raw.endian
        try:
            self._file = segyio.open(self.path, "r", ignore_geometry=True, endian=raw.endian)
        except (RuntimeError, ValueError, OSError, IndexError) as err:
            raise PitfallsInputError(
                self.path, "", f"cannot be read as SEG-Y ({_one_line(err)})",
                "check that it is a complete SEG-Y file (a truncated copy or a different format will not open)",
            ) from err
        try:
            self._describe(fallback_spacing_m, iline_byte, xline_byte, force_2d)
            self._check_live_data()
            self._reader = SegyBlockReader(self.path, self.info, self.layout, handle=self._file, endian=self.endian)
        except PitfallsInputError:
            self._file.close()
            raise
        except (RuntimeError, ValueError, OSError, IndexError, KeyError) as err:
            self._file.close()
            raise PitfallsInputError(self.path, "", f"SEG-Y headers cannot be read ({_one_line(err)})",
                                     "check that the file is complete and the header byte options are right") from err

    # --- set-up -------------------------------------------------------------------------
    def _describe(self, fallback_spacing_m: float, iline_byte: int, xline_byte: int, force_2d: bool) -> None:
        handle = self._file
        n_traces = int(handle.tracecount)
        n_samples = int(len(handle.samples))
        if n_traces == 0:
            raise PitfallsInputError(self.path, "", "holds no traces", "export the section again with its traces")
        if n_samples == 0:
            raise PitfallsInputError(self.path, "binary header byte 3221", "says 0 samples per trace",
                                     "export the section again with a valid sample count")
        notes: list[str] = []
        binary_dt_us = int(handle.bin[segyio.BinField.Interval])
        trace_dt_us = int(handle.header[0][segyio.TraceField.TRACE_SAMPLE_INTERVAL])
        if binary_dt_us > 0:
            dt_us = binary_dt_us
            if trace_dt_us > 0 and trace_dt_us != binary_dt_us:
                notes.append(f"sample interval disagrees: binary header {binary_dt_us} us, "
                             f"first trace header {trace_dt_us} us; the binary header's value is used")
        elif trace_dt_us > 0:
            dt_us = trace_dt_us
            notes.append(f"binary header has no sample interval; the trace header's {trace_dt_us} us is used")
        else:
            raise PitfallsInputError(self.path, "binary header byte 3217 and trace header byte 117",
                                     "give no sample interval", "set the sample interval in the file's headers")
        if not MIN_INTERVAL_US <= dt_us <= MAX_INTERVAL_US:
            byte = "binary header byte 3217" if binary_dt_us > 0 else "trace header byte 117"
            if 0 < dt_us < MIN_INTERVAL_US:
                raise PitfallsInputError(self.path, byte, f"gives a sample interval of {dt_us} us, finer than the "
                                         f"{MIN_INTERVAL_US} us the checks are sized for",
                                         f"check the header (4 ms is 4000 us), or resample the section to "
                                         f"{MIN_INTERVAL_US / 1000:g} ms or coarser")
            raise PitfallsInputError(self.path, byte, f"gives a sample interval of {dt_us} us, coarser than the "
                                     f"{MAX_INTERVAL_US} us of any seismic section",
                                     "set the sample interval in microseconds in the file's headers (4 ms is 4000)")
        if n_samples * dt_us / 1000.0 > MAX_RECORD_MS:
            raise PitfallsInputError(self.path, "binary header bytes 3217 and 3221",
                                     f"give a record {n_samples} x {dt_us} us = {n_samples * dt_us / 1e6:g} s long, "
                                     f"longer than any seismic record ({MAX_RECORD_MS / 1000:g} s)",
                                     "check the sample interval and count in the file's headers")
        if self.endian == "little":
            notes.append("the file is little-endian (SEG-Y rev 2 allows it) and was read as such")
        dt_ms = dt_us / 1000.0
        t0_ms = float(handle.samples[0])
        inlines = _read_header_field(handle, iline_byte, self.path)
        xlines = _read_header_field(handle, xline_byte, self.path)
        self.layout = self._layout(n_traces, inlines, xlines, force_2d, iline_byte, xline_byte)
        spacing_m, measured = self._trace_spacing(fallback_spacing_m)
        extent = self.layout.footprint_xy()
        if not measured:
            notes.append(f"no usable CDP X/Y coordinates; trace spacing {fallback_spacing_m:g} m from the rules")
        if self.layout.geometry == "3d":
            n_missing = int(np.count_nonzero(self.layout.grid < 0))
            if n_missing:
                notes.append(f"{n_missing} inline/crossline positions have no trace; they are treated as no data")
            shape = (len(self.layout.inline_numbers), len(self.layout.xline_numbers))
        else:
            n_missing, shape = 0, (1, n_traces)
        self.info = SectionInfo(
            path=self.path, sha256=file_sha256(self.path), geometry=self.layout.geometry,
            n_traces=n_traces, n_samples=n_samples, dt_ms=dt_ms, t0_ms=t0_ms,
            n_inlines=shape[0], n_xlines=shape[1], n_missing_traces=n_missing,
            trace_spacing_m=spacing_m, spacing_from_headers=measured, notes=tuple(notes),
            coordinate_extent_xy=extent,
        )

    def _check_live_data(self) -> None:
        """Read every trace once, in slices, to count dead traces and non-finite samples before any work.

        A trace is dead when it has no finite, nonzero sample. A file with no live trace is refused
        (exit 2); otherwise the report's notes say how much was dead, and the block reader hands
        dead traces to the checks as no data (NaN), as missing positions of a volume are.
        """
        n_traces, n_samples = self.info.n_traces, self.info.n_samples
        step = max(1, (16 << 20) // max(1, 4 * n_samples))  # about 16 MB a slice
        dead = bad = 0
        try:
            for first in range(0, n_traces, step):
                traces = np.asarray(self._file.trace.raw[first:min(n_traces, first + step)], dtype=np.float32)
                traces = traces.reshape(-1, n_samples)
                finite = np.isfinite(traces)
                live = (finite & (traces != 0)).any(axis=1)
                dead += int(np.count_nonzero(~live))
                bad += int(np.count_nonzero(~finite[live]))
        except (RuntimeError, OSError, ValueError) as err:
            raise PitfallsInputError(self.path, "", f"traces cannot be read ({_one_line(err)})",
                                     "the file may be truncated or damaged; export it again") from err
        if dead == n_traces:
            raise PitfallsInputError(self.path, "", f"holds no live samples: all {n_traces} traces are NaN, infinite "
                                     "or zero", "export the section again with its amplitudes; check the sample "
                                     "format code (binary header byte 3225)")
        notes = []
        if dead:
            notes.append(f"{dead} of {n_traces} traces ({_percent(dead / n_traces)}) are dead (no finite, nonzero "
                         "sample); they are treated as no data and not checked")
        if bad:
            notes.append(f"{bad} samples in live traces are NaN or infinite; they were read as 0")
        if notes:
            self.info = replace(self.info, notes=self.info.notes + tuple(notes))

    def _layout(self, n_traces: int, inlines: np.ndarray, xlines: np.ndarray, force_2d: bool,
                iline_byte: int, xline_byte: int) -> TraceLayout:
        numbers = np.arange(1, n_traces + 1)
        line = TraceLayout("2d", n_traces, numbers, inlines, xlines)
        if force_2d:
            return line
        unique_inlines = np.unique(inlines)
        unique_xlines = np.unique(xlines)
        if len(unique_inlines) <= 1 or len(unique_xlines) <= 1:
            return line  # a line, or a volume one inline or one crossline wide
        positions = len(unique_inlines) * len(unique_xlines)
        if positions > n_traces * MAX_EMPTY_GRID_FACTOR:
            # Checked before the grid is allocated: wrong header bytes can give a grid of billions.
            share = 1.0 - n_traces / positions
            raise PitfallsInputError(
                self.path, f"trace header bytes {iline_byte}/{xline_byte}",
                f"give a {len(unique_inlines)} x {len(unique_xlines)} inline/crossline grid for {n_traces} traces, "
                f"so {_percent(share)} of its positions would be empty",
                "use --2d if the file is a line, or give the right bytes with --iline-byte/--xline-byte")
        inline_index = np.searchsorted(unique_inlines, inlines)
        xline_index = np.searchsorted(unique_xlines, xlines)
        grid = np.full((len(unique_inlines), len(unique_xlines)), -1, dtype=np.int64)
        flat = inline_index * len(unique_xlines) + xline_index
        order = np.argsort(flat, kind="stable")
        repeated = np.flatnonzero(np.diff(flat[order]) == 0)
        if repeated.size:
            trace_index = int(order[repeated[0] + 1])
            raise PitfallsInputError(
                self.path, f"trace {trace_index + 1}",
                f"inline {inlines[trace_index]} / crossline {xlines[trace_index]} (bytes {iline_byte}/{xline_byte}) "
                "is used by more than one trace",
                "give the right header bytes with --iline-byte/--xline-byte, or use --2d for a line")
        grid.ravel()[flat] = np.arange(n_traces)
        return TraceLayout("3d", n_traces, numbers, inlines, xlines, unique_inlines, unique_xlines, grid)

    def _trace_spacing(self, fallback_m: float) -> tuple[float, bool]:
        handle = self._file
        scalars = handle.attributes(segyio.TraceField.SourceGroupScalar)[:].astype(np.int64)
        x = handle.attributes(segyio.TraceField.CDP_X)[:].astype(float)
        y = handle.attributes(segyio.TraceField.CDP_Y)[:].astype(float)
        distinct, which = np.unique(scalars, return_inverse=True)
        factor = np.array([coordinate_scale(int(s)) for s in distinct])[which.ravel()]
        x, y = x * factor, y * factor
        if np.any(x != 0) or np.any(y != 0):
            self.layout = replace(self.layout, trace_x=x, trace_y=y)
        if self.layout.geometry == "3d":
            row = self.layout.grid[len(self.layout.grid) // 2]
            present = row[row >= 0]
            xs, ys = x[present], y[present]
            step = np.diff(self.layout.xline_numbers[row >= 0])
        else:
            xs, ys, step = x, y, np.ones(len(x) - 1)
        if len(xs) < 2:
            return fallback_m, False
        distance = np.hypot(np.diff(xs), np.diff(ys)) / np.maximum(step, 1)
        distance = distance[distance > 0]
        if distance.size == 0:
            return fallback_m, False
        return float(np.median(distance)), True

    # --- reading ------------------------------------------------------------------------
    @property
    def n_panels(self) -> int:
        """Panels the section has: 1 for a line, one per inline for a volume."""
        return 1 if self.layout.geometry == "2d" else len(self.layout.inline_numbers)

    def panels(self) -> Iterator[Section]:
        """One panel for a 2-D line; one per inline, in inline order, for a 3-D volume."""
        for block in self.blocks(1):
            yield from block.panels

    def blocks(self, inlines_per_block: int = 16) -> Iterator[Block]:
        """The section in blocks: a 2-D line is one block; a volume comes ``inlines_per_block`` inlines at a time."""
        step = max(1, int(inlines_per_block))
        for first in range(0, self.n_panels, step):
            yield self.read_block(first, min(self.n_panels, first + step))

    def read_block(self, first_panel: int, stop_panel: int) -> Block:
        """Panels ``first_panel`` up to (not including) ``stop_panel``, read in one pass over their traces."""
        return self._reader.read_block(first_panel, stop_panel)

    def inline_panel(self, inline_index: int) -> Section:
        """The panel of one inline of a 3-D volume, NaN where a trace is missing."""
        return self.read_block(inline_index, inline_index + 1).panels[0]

    def reader(self) -> "SegyBlockReader":
        """A picklable block reader for worker processes: it opens its own read-only handle."""
        return SegyBlockReader(self.path, self.info, self.layout, endian=self.endian)

    def close(self) -> None:
        self._file.close()

    def __enter__(self) -> "SeismicFile":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def screen_traces(traces: np.ndarray) -> None:
    """In place: a dead trace (no finite, nonzero sample) becomes all NaN (no data); the NaN or
    infinite samples of a live trace become 0."""
    finite = np.isfinite(traces)
    live = (finite & (traces != 0)).any(axis=1)
    traces[~finite & live[:, None]] = 0.0
    traces[~live] = np.nan


class SegyBlockReader:
    """Reads blocks of panels of a described SEG-Y file (read-only).

    It carries the file's description (``info`` and ``layout``), so a worker process can read
    blocks without reading every header again; pickling leaves the open handle behind, and the
    copy opens its own on first use.
    """

    def __init__(self, path: str, info: SectionInfo, layout: TraceLayout, handle: segyio.SegyFile | None = None,
                 endian: str = "big"):
        self.path, self.info, self.layout, self.endian = path, info, layout, endian
        self._handle = handle
        self._owns_handle = handle is None

    def __getstate__(self) -> dict:
        return {"path": self.path, "info": self.info, "layout": self.layout, "endian": self.endian}

    def __setstate__(self, state: dict) -> None:
        self.__init__(state["path"], state["info"], state["layout"], endian=state.get("endian", "big"))

    def _file(self) -> segyio.SegyFile:
        if self._handle is None:
            try:
                self._handle = segyio.open(self.path, "r", ignore_geometry=True, endian=self.endian)
            except (RuntimeError, ValueError, OSError) as err:
                raise PitfallsInputError(self.path, "", f"cannot be read as SEG-Y ({_one_line(err)})",
                                         "check that the file was not changed or removed during the scan") from err
        return self._handle

    def read_block(self, first_panel: int, stop_panel: int) -> Block:
        """Panels ``first_panel`` up to (not including) ``stop_panel``; NaN where a volume has no trace."""
        info, layout = self.info, self.layout
        if layout.geometry == "2d":
            panel = Section(data=self._read_traces(np.arange(info.n_traces)), dt_ms=info.dt_ms, t0_ms=info.t0_ms,
                            trace_spacing_m=info.trace_spacing_m, trace_numbers=layout.trace_numbers,
                            name=os.path.basename(self.path))
            return Block(0, (panel,))
        rows = layout.grid[first_panel:stop_panel]
        data = np.full(rows.shape + (info.n_samples,), np.nan, dtype=np.float32)
        present = rows >= 0
        data[present] = self._read_traces(rows[present])
        panels = []
        for offset, inline_index in enumerate(range(first_panel, stop_panel)):
            inline_number = int(layout.inline_numbers[inline_index])
            panels.append(Section(data=data[offset], dt_ms=info.dt_ms, t0_ms=info.t0_ms,
                                  trace_spacing_m=info.trace_spacing_m, trace_numbers=layout.xline_numbers,
                                  inline_number=inline_number, name=f"inline {inline_number}"))
        return Block(first_panel, tuple(panels))

    def _read_traces(self, indices: np.ndarray) -> np.ndarray:
        """Traces by file index, in the order given; each run of consecutive indices is one read."""
        handle = self._file()
        indices = np.asarray(indices, dtype=np.int64)
        out = np.empty((len(indices), self.info.n_samples), dtype=np.float32)
        if indices.size == 0:
            return out
        order = np.argsort(indices, kind="stable")
        ordered = indices[order]
        breaks = np.flatnonzero(np.diff(ordered) != 1) + 1
        try:
            for run in np.split(np.arange(ordered.size), breaks):
                first, last = int(ordered[run[0]]), int(ordered[run[-1]])
                out[order[run]] = handle.trace.raw[first:last + 1]
        except (RuntimeError, OSError, ValueError) as err:
            raise PitfallsInputError(self.path, "", f"traces cannot be read ({_one_line(err)})",
                                     "the file may be truncated or damaged; export it again") from err
        screen_traces(out)
        return out

    def close(self) -> None:
        if self._handle is not None and self._owns_handle:
            self._handle.close()
            self._handle = None


BYTES_PER_SAMPLE = {1: 4, 2: 4, 3: 2, 5: 4, 6: 8, 8: 1, 9: 8, 10: 4, 11: 2, 12: 8, 15: 3, 16: 1, 7: 3}
"""Sample format code (binary header bytes 3225-3226) -> bytes per sample (SEG-Y rev 1 and rev 2)."""


MIN_SAMPLES = 2
"""Fewest samples per trace a section may have: one sample holds no reflection to measure."""
MIN_TRACES = 2
"""Fewest traces a section may have: the checks compare neighbouring traces."""
MIN_INTERVAL_US, MAX_INTERVAL_US = 250, 20_000
"""Sample intervals accepted, in microseconds. The checks' windows are set in milliseconds, so
their working arrays grow as 1 / interval: at 0.25 ms a 600-trace line already takes several
times the memory and time of 1 ms data, and finer sampling (site-survey data at tens of us) must
be resampled first. 20 ms is far coarser than any post-stack section (common practice)."""
MAX_RECORD_MS = 100_000.0
"""Longest record accepted (n_samples x interval): no post-stack section is longer (common practice)."""
_BYTE_ORDER_MARK = 0x01020304
"""SEG-Y rev 2 binary header bytes 3297-3300: this integer as written tells the byte order."""


@dataclass(frozen=True)
class RawLayout:
    """What the raw bytes say about a file before segyio opens it."""

    endian: str
    """``"big"`` (the SEG-Y default) or ``"little"`` (allowed by SEG-Y rev 2)."""
    n_samples: int
    """Samples per trace that the file size agrees with."""
    n_traces: int
    bytes_per_sample: int


def _byte_order(binary: bytes) -> str | None:
    """The byte order of a binary header: from the rev 2 byte-order mark, else from a defined format code."""
    mark = binary[96:100]
    if int.from_bytes(mark, "big") == _BYTE_ORDER_MARK:
        return "big"
    if int.from_bytes(mark, "little") == _BYTE_ORDER_MARK:
        return "little"
    if int.from_bytes(binary[24:26], "big") in BYTES_PER_SAMPLE:
        return "big"
    if int.from_bytes(binary[24:26], "little") in BYTES_PER_SAMPLE:
        return "little"
    return None


def check_layout(path: str) -> RawLayout:
    """Check from the raw bytes that a file is header + whole fixed-length traces, before segyio opens it.

    Reads the binary header in the byte order it is written in (SEG-Y rev 2 allows both):
    samples per trace at byte 3221, format code at 3225, extended textual headers at 3505,
    and the first trace header's sample count (byte 115). When the binary header's sample
    count does not fit the file but the trace header's does, the error says so instead of
    calling the copy truncated. Names the trace a truncated file ends in. Refuses sections
    with fewer than :data:`MIN_TRACES` traces or :data:`MIN_SAMPLES` samples.
    """
    size = os.path.getsize(path)
    with open(path, "rb") as handle:
        head = handle.read(3600)
    if size < 3600:
        kind = "a text file" if head and all(32 <= b < 127 or b in b"\r\n\t" for b in head) else "a file"
        raise PitfallsInputError(path, "", f"is {kind} of {size} bytes, too short for SEG-Y (3600 bytes of headers come first)",
                                 "give the SEG-Y section first (pick files go after --picks), and check the copy is complete")
    binary = head[3200:3600]
    endian = _byte_order(binary)
    if endian is None:
        if b"\n" in binary and all(32 <= b < 127 or b in b"\r\n\t" for b in binary):
            raise PitfallsInputError(path, "", "is a text file (lines of characters where the binary header should be), "
                                     "not SEG-Y", "give the SEG-Y section first and pick files with --picks")
        fmt = int.from_bytes(head[3224:3226], "big", signed=False)
        raise PitfallsInputError(path, "binary header byte 3225",
                                 f"has sample format code {fmt}, which SEG-Y does not define (in either byte order)",
                                 "check that the file is SEG-Y and not another format")
    n_samples = int.from_bytes(head[3220:3222], endian, signed=False)
    fmt = int.from_bytes(head[3224:3226], endian, signed=False)
    extended = int.from_bytes(head[3504:3506], endian, signed=True)
    header_bytes = 3600 + 3200 * max(0, extended)
    if size <= header_bytes:
        if extended > 0 and size > 3600:
            raise PitfallsInputError(path, "binary header byte 3505",
                                     f"says {extended} extended textual headers ({3200 * extended} bytes), "
                                     f"more than the {size - 3600} bytes after the binary header",
                                     "set the extended header count right, or export the section again")
        raise PitfallsInputError(path, "", "holds no traces (headers only)", "export the section again with its traces")
    first_trace = b""
    if size >= header_bytes + 240:
        with open(path, "rb") as handle:
            handle.seek(header_bytes)
            first_trace = handle.read(240)
    trace_n_samples = int.from_bytes(first_trace[114:116], endian, signed=False) if first_trace else 0
    bytes_per_sample = BYTES_PER_SAMPLE[fmt]
    body = size - header_bytes

    def fits(count: int) -> bool:
        return count > 0 and body % (240 + count * bytes_per_sample) == 0

    if n_samples == 0 and trace_n_samples == 0:
        raise PitfallsInputError(path, "binary header byte 3221 and trace header byte 115", "say 0 samples per trace",
                                 "export the section again with a valid sample count")
    used = n_samples or trace_n_samples
    if not fits(used):
        if n_samples and trace_n_samples and trace_n_samples != n_samples and fits(trace_n_samples):
            raise PitfallsInputError(
                path, "binary header byte 3221",
                f"says {n_samples} samples per trace, but the first trace header (byte 115) says {trace_n_samples} "
                "and the file size fits that count",
                f"correct the binary header's sample count to {trace_n_samples}, or export the section again")
        trace_bytes = 240 + used * bytes_per_sample
        whole = body // trace_bytes
        remainder = body % trace_bytes
        raise PitfallsInputError(
            path, f"trace {whole + 1}",
            f"the file ends part-way through this trace ({remainder} of {trace_bytes} bytes, "
            f"{used} samples of {bytes_per_sample} bytes)",
            "the copy is truncated; copy or export the section again")
    n_traces = body // (240 + used * bytes_per_sample)
    if used < MIN_SAMPLES:
        raise PitfallsInputError(path, "binary header byte 3221" if n_samples else "trace header byte 115",
                                 f"says {used} sample{'s' if used != 1 else ''} per trace, which holds no reflection to check; "
                                 f"at least {MIN_SAMPLES} are needed", "export the section with its whole record length")
    if n_traces < MIN_TRACES:
        raise PitfallsInputError(path, "", f"holds {n_traces} trace; the checks compare neighbouring traces and need "
                                 f"at least {MIN_TRACES}", "export the whole line or volume")
    return RawLayout(endian, used, n_traces, bytes_per_sample)


def _read_header_field(handle: segyio.SegyFile, byte: int, path: str) -> np.ndarray:
    if not 1 <= byte <= 237:
        raise PitfallsInputError(path, f"header byte {byte}", "is outside the 240-byte trace header",
                                 "give a byte position from 1 to 237")
    try:
        return np.asarray(handle.attributes(byte)[:], dtype=np.int64)
    except (KeyError, ValueError, RuntimeError) as err:
        raise PitfallsInputError(path, f"header byte {byte}", "is not the start of a trace header field",
                                 "use the byte where the inline or crossline number starts, e.g. 189 or 193") from err


def _percent(share: float) -> str:
    """A share as a percentage that never rounds a nonzero share to 0 % or a partial one to 100 %."""
    value = 100.0 * share
    if 0.0 < value < 0.1:
        return "under 0.1%"
    if 99.9 < value < 100.0:
        return "over 99.9%"
    return f"{value:.1f}%"


def _one_line(err: BaseException) -> str:
    return " ".join(str(err).split()) or type(err).__name__
