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
from dataclasses import dataclass, field
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
        if not os.path.isfile(self.path):
            raise PitfallsInputError(self.path, "", "no such file", "check the path to the SEG-Y section")
        check_layout(self.path)
        try:
            self._file = segyio.open(self.path, "r", ignore_geometry=True)
        except (RuntimeError, ValueError, OSError, IndexError) as err:
            raise PitfallsInputError(
                self.path, "", f"cannot be read as SEG-Y ({_one_line(err)})",
                "check that it is a complete SEG-Y file (a truncated copy or a different format will not open)",
            ) from err
        try:
            self._describe(fallback_spacing_m, iline_byte, xline_byte, force_2d)
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
        dt_ms = dt_us / 1000.0
        t0_ms = float(handle.samples[0])
        inlines = _read_header_field(handle, iline_byte, self.path)
        xlines = _read_header_field(handle, xline_byte, self.path)
        self.layout = self._layout(n_traces, inlines, xlines, force_2d, iline_byte, xline_byte)
        spacing_m, measured = self._trace_spacing(fallback_spacing_m)
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
        )

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
        scale = np.array([coordinate_scale(int(s)) for s in np.unique(scalars)])
        lookup = dict(zip(np.unique(scalars).tolist(), scale.tolist()))
        factor = np.array([lookup[int(s)] for s in scalars]) if len(lookup) > 1 else scale[0]
        x, y = x * factor, y * factor
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
        info = self.info
        if self.layout.geometry == "2d":
            panel = Section(data=self._read_traces(np.arange(info.n_traces)), dt_ms=info.dt_ms, t0_ms=info.t0_ms,
                            trace_spacing_m=info.trace_spacing_m, trace_numbers=self.layout.trace_numbers,
                            name=os.path.basename(self.path))
            return Block(0, (panel,))
        rows = self.layout.grid[first_panel:stop_panel]
        data = np.full(rows.shape + (info.n_samples,), np.nan, dtype=np.float32)
        present = rows >= 0
        data[present] = self._read_traces(rows[present])
        panels = []
        for offset, inline_index in enumerate(range(first_panel, stop_panel)):
            inline_number = int(self.layout.inline_numbers[inline_index])
            panels.append(Section(data=data[offset], dt_ms=info.dt_ms, t0_ms=info.t0_ms,
                                  trace_spacing_m=info.trace_spacing_m, trace_numbers=self.layout.xline_numbers,
                                  inline_number=inline_number, name=f"inline {inline_number}"))
        return Block(first_panel, tuple(panels))

    def inline_panel(self, inline_index: int) -> Section:
        """The panel of one inline of a 3-D volume, NaN where a trace is missing."""
        return self.read_block(inline_index, inline_index + 1).panels[0]

    def _read_traces(self, indices: np.ndarray) -> np.ndarray:
        handle = self._file
        out = np.empty((len(indices), self.info.n_samples), dtype=np.float32)
        try:
            if len(indices) and np.all(np.diff(indices) == 1):
                out[:] = handle.trace.raw[int(indices[0]):int(indices[-1]) + 1]
            else:
                for row, index in enumerate(indices):
                    out[row] = handle.trace[int(index)]
        except (RuntimeError, OSError, ValueError) as err:
            raise PitfallsInputError(self.path, "", f"traces cannot be read ({_one_line(err)})",
                                     "the file may be truncated or damaged; export it again") from err
        return out

    def close(self) -> None:
        self._file.close()

    def __enter__(self) -> "SeismicFile":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


BYTES_PER_SAMPLE = {1: 4, 2: 4, 3: 2, 5: 4, 6: 8, 8: 1, 9: 8, 10: 4, 11: 2, 12: 8, 15: 3, 16: 1, 7: 3}
"""Sample format code (binary header bytes 3225-3226) -> bytes per sample (SEG-Y rev 1 and rev 2)."""


def check_layout(path: str) -> None:
    """Check from the raw bytes that a file is header + whole fixed-length traces, before segyio opens it.

    Reads the binary header (big-endian, SEG-Y rev 1): samples per trace at byte 3221,
    format code at 3225, extended textual headers at 3505. Names the trace a truncated file
    ends in.
    """
    size = os.path.getsize(path)
    with open(path, "rb") as handle:
        head = handle.read(3600)
    if size < 3600:
        kind = "a text file" if head and all(32 <= b < 127 or b in b"\r\n\t" for b in head) else "a file"
        raise PitfallsInputError(path, "", f"is {kind} of {size} bytes, too short for SEG-Y (3600 bytes of headers come first)",
                                 "give the SEG-Y section first (pick files go after --picks), and check the copy is complete")
    n_samples = int.from_bytes(head[3220:3222], "big", signed=False)
    fmt = int.from_bytes(head[3224:3226], "big", signed=False)
    extended = int.from_bytes(head[3504:3506], "big", signed=True)
    binary = head[3200:3600]
    if fmt not in BYTES_PER_SAMPLE and b"\n" in binary and all(32 <= b < 127 or b in b"\r\n\t" for b in binary):
        raise PitfallsInputError(path, "", "is a text file (lines of characters where the binary header should be), "
                                 "not SEG-Y", "give the SEG-Y section first and pick files with --picks")
    if fmt not in BYTES_PER_SAMPLE:
        raise PitfallsInputError(path, "binary header byte 3225", f"has sample format code {fmt}, which SEG-Y does not define",
                                 "check that the file is SEG-Y (big-endian) and not another format")
    header_bytes = 3600 + 3200 * max(0, extended)
    if size <= header_bytes:
        raise PitfallsInputError(path, "", "holds no traces (headers only)", "export the section again with its traces")
    if n_samples == 0:
        return  # segyio reads the count from the first trace header; checked after opening
    trace_bytes = 240 + n_samples * BYTES_PER_SAMPLE[fmt]
    remainder = (size - header_bytes) % trace_bytes
    if remainder:
        whole = (size - header_bytes) // trace_bytes
        raise PitfallsInputError(
            path, f"trace {whole + 1}",
            f"the file ends part-way through this trace ({remainder} of {trace_bytes} bytes)",
            "the copy is truncated; copy or export the section again")


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
