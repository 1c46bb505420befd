"""Write synthetic sections as SEG-Y rev 1 files and picks as the pick-file CSV.

Header layout follows SEG-Y rev 1 (SEG Technical Standards Committee, 2002): sample interval
in microseconds in the binary header (bytes 3217-3218) and in every trace header (bytes
117-118); delay recording time in ms (109-110); CDP X/Y (181/185) as integers with the
coordinate scalar in bytes 71-72 (negative = divide); inline and crossline numbers in bytes
189 and 193. A 2-D line is written as one inline whose crossline numbers are the trace numbers.

Every file is written whole or not at all: into a temporary file in the target folder, which
then replaces the target (``os.replace``).

References
----------
.. [1] SEG Technical Standards Committee, 2002, SEG Y rev 1 Data Exchange format, Release 1.0,
       editors M. W. Norris and A. K. Faichney.
"""
from __future__ import annotations

import csv
import io
import os
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path

import numpy as np
import segyio

from pitfalls.io.output import write_whole
from pitfalls.model import Section

TEXT_LINES = 40
TEXT_COLUMNS = 80
COORDINATE_SCALAR = -100
"""Bytes 71-72: coordinates are stored in centimetres (divide by 100)."""
SAMPLE_FORMATS = {1: "IBM float", 5: "IEEE float"}
PICK_COLUMNS_2D = ("horizon", "trace", "twt_ms", "kind")
PICK_COLUMNS_3D = ("horizon", "inline", "xline", "twt_ms", "kind")


def textual_header(lines: Sequence[str]) -> bytes:
    """40 card-image lines of 80 characters, ``C 1 ...`` to ``C40 ...``, ASCII bytes (3200).

    Parameters
    ----------
    lines : sequence of str
        Up to 40 lines of text, each cut to 76 characters; printable ASCII only.

    Returns
    -------
    bytes of length 3200
    """
    if len(lines) > TEXT_LINES:
        raise ValueError(f"a textual header holds {TEXT_LINES} lines, not {len(lines)}")
    cards = []
    for number in range(1, TEXT_LINES + 1):
        text = lines[number - 1] if number <= len(lines) else ""
        if not all(32 <= ord(character) < 127 for character in text):
            raise ValueError(f"textual header line {number} has a non-printable or non-ASCII character")
        cards.append(f"C{number:2d} {text}"[:TEXT_COLUMNS].ljust(TEXT_COLUMNS))
    return "".join(cards).encode("ascii")


def _write_traces(
    temporary: Path,
    panels: Sequence[Section],
    inline_numbers: Sequence[int],
    xline_numbers: np.ndarray,
    coordinates_m: np.ndarray,
    sample_format: int,
    text: bytes,
    text_encoding: str,
) -> None:
    first = panels[0]
    n_samples = first.n_samples
    interval_us = int(round(first.dt_ms * 1000.0))
    delay_ms = int(round(first.t0_ms))
    spec = segyio.spec()
    spec.format = sample_format
    spec.samples = first.t0_ms + first.dt_ms * np.arange(n_samples)
    spec.tracecount = len(panels) * len(xline_numbers)
    spec.iline = segyio.TraceField.INLINE_3D
    spec.xline = segyio.TraceField.CROSSLINE_3D
    with segyio.create(str(temporary), spec) as output:
        output.text[0] = text
        output.bin.update(
            {
                segyio.BinField.Traces: 1,
                segyio.BinField.Interval: interval_us,
                segyio.BinField.Samples: n_samples,
                segyio.BinField.Format: sample_format,
                segyio.BinField.SortingCode: 4,  # horizontally stacked (post-stack)
                segyio.BinField.MeasurementSystem: 1,  # metres
                segyio.BinField.SEGYRevision: 1,
                segyio.BinField.SEGYRevisionMinor: 0,
                segyio.BinField.TraceFlag: 1,
                segyio.BinField.ExtendedHeaders: 0,
            }
        )
        trace_in_file = 0
        for panel_index, (panel, inline_number) in enumerate(zip(panels, inline_numbers)):
            for position, xline_number in enumerate(xline_numbers):
                samples = np.asarray(panel.data[position], dtype=np.float32)
                dead = not np.any(np.isfinite(samples))
                x_m, y_m = coordinates_m[panel_index, position]
                output.header[trace_in_file] = {
                    segyio.TraceField.TRACE_SEQUENCE_LINE: position + 1,
                    segyio.TraceField.TRACE_SEQUENCE_FILE: trace_in_file + 1,
                    segyio.TraceField.FieldRecord: int(inline_number),
                    segyio.TraceField.TraceNumber: int(xline_number),
                    segyio.TraceField.CDP: int(xline_number),
                    segyio.TraceField.CDP_TRACE: 1,
                    segyio.TraceField.TraceIdentificationCode: 2 if dead else 1,  # 2 = dead
                    segyio.TraceField.SourceGroupScalar: COORDINATE_SCALAR,
                    segyio.TraceField.ElevationScalar: 1,
                    segyio.TraceField.SourceX: int(round(x_m * 100)),
                    segyio.TraceField.SourceY: int(round(y_m * 100)),
                    segyio.TraceField.GroupX: int(round(x_m * 100)),
                    segyio.TraceField.GroupY: int(round(y_m * 100)),
                    segyio.TraceField.CoordinateUnits: 1,  # length
                    segyio.TraceField.DelayRecordingTime: delay_ms,
                    segyio.TraceField.TRACE_SAMPLE_COUNT: n_samples,
                    segyio.TraceField.TRACE_SAMPLE_INTERVAL: interval_us,
                    segyio.TraceField.CDP_X: int(round(x_m * 100)),
                    segyio.TraceField.CDP_Y: int(round(y_m * 100)),
                    segyio.TraceField.INLINE_3D: int(inline_number),
                    segyio.TraceField.CROSSLINE_3D: int(xline_number),
                }
                output.trace[trace_in_file] = np.nan_to_num(samples, nan=0.0)
                trace_in_file += 1
    if text_encoding == "ascii":
        with open(temporary, "r+b") as raw:  # segyio writes EBCDIC; rev 1 also allows ASCII
            raw.seek(0)
            raw.write(text)
    elif text_encoding != "ebcdic":
        raise ValueError("text_encoding must be 'ebcdic' or 'ascii'")


def _check_panels(panels: Sequence[Section], sample_format: int) -> None:
    if sample_format not in SAMPLE_FORMATS:
        raise ValueError(f"sample_format must be 1 (IBM) or 5 (IEEE), not {sample_format}")
    if not panels:
        raise ValueError("nothing to write")
    first = panels[0]
    for panel in panels:
        if panel.data.shape != first.data.shape or panel.dt_ms != first.dt_ms or panel.t0_ms != first.t0_ms:
            raise ValueError("all panels must share shape, dt_ms and t0_ms")
    if abs(first.t0_ms - round(first.t0_ms)) > 1e-9:
        raise ValueError("t0_ms must be a whole number of ms (delay recording time is an integer)")


def write_section_segy(
    path: str | os.PathLike,
    section: Section,
    *,
    inline_number: int = 1,
    origin_x_m: float = 500000.0,
    origin_y_m: float = 6000000.0,
    azimuth_deg: float = 90.0,
    sample_format: int = 1,
    text_lines: Sequence[str] = (),
    text_encoding: str = "ebcdic",
) -> Path:
    """Write a 2-D line as SEG-Y rev 1: one inline, crossline numbers = the section's trace numbers.

    Parameters
    ----------
    path : path-like
    section : Section
        NaN-only traces are written as zeros flagged dead (trace identification code 2).
    inline_number : int
        Written to bytes 189 (and field record, bytes 9) of every trace.
    origin_x_m, origin_y_m : float
        CDP X/Y of the first trace, m.
    azimuth_deg : float
        Direction of increasing trace number, degrees clockwise from north (grid Y).
    sample_format : int
        1 = IBM float, 5 = IEEE float.
    text_lines : sequence of str
        Textual header lines (up to 40).
    text_encoding : str
        ``ebcdic`` (the rev 1 default) or ``ascii``.

    Returns
    -------
    Path of the written file.
    """
    _check_panels([section], sample_format)
    trace_numbers = np.asarray(section.trace_numbers, dtype=int)
    along_m = section.trace_spacing_m * np.arange(section.n_traces)
    azimuth = np.deg2rad(azimuth_deg)
    coordinates = np.stack([origin_x_m + along_m * np.sin(azimuth), origin_y_m + along_m * np.cos(azimuth)], axis=-1)[np.newaxis]
    text = textual_header(list(text_lines))
    path = Path(path)
    write_whole(
        path,
        lambda temporary: _write_traces(temporary, [section], [inline_number], trace_numbers, coordinates, sample_format, text, text_encoding),
    )
    return path


def write_volume_segy(
    path: str | os.PathLike,
    panels: Sequence[Section],
    inline_numbers: Sequence[int],
    xline_numbers: Sequence[int],
    *,
    inline_spacing_m: float | None = None,
    origin_x_m: float = 500000.0,
    origin_y_m: float = 6000000.0,
    sample_format: int = 1,
    text_lines: Sequence[str] = (),
    text_encoding: str = "ebcdic",
) -> Path:
    """Write a 3-D grid of inlines x crosslines, inline-sorted, one panel per inline.

    Crosslines run east (grid X) at each panel's trace spacing; inlines run north (grid Y)
    at ``inline_spacing_m`` (default: the trace spacing).

    Parameters
    ----------
    path : path-like
    panels : sequence of Section
        One per inline, all the same shape, each with one trace per crossline.
    inline_numbers, xline_numbers : sequence of int
        Line numbers for bytes 189 and 193.
    inline_spacing_m, origin_x_m, origin_y_m, sample_format, text_lines, text_encoding
        As in :func:`write_section_segy`.

    Returns
    -------
    Path of the written file.
    """
    _check_panels(panels, sample_format)
    if len(inline_numbers) != len(panels):
        raise ValueError("one inline number per panel")
    xline_numbers = np.asarray(xline_numbers, dtype=int)
    if len(xline_numbers) != panels[0].n_traces:
        raise ValueError("one crossline number per trace of a panel")
    spacing_m = panels[0].trace_spacing_m
    inline_spacing = spacing_m if inline_spacing_m is None else inline_spacing_m
    x_m = origin_x_m + spacing_m * np.arange(len(xline_numbers))
    y_m = origin_y_m + inline_spacing * np.arange(len(panels))
    coordinates = np.stack(np.broadcast_arrays(x_m[np.newaxis, :], y_m[:, np.newaxis]), axis=-1)
    text = textual_header(list(text_lines))
    path = Path(path)
    write_whole(
        path,
        lambda temporary: _write_traces(temporary, list(panels), list(inline_numbers), xline_numbers, coordinates, sample_format, text, text_encoding),
    )
    return path


def _format_time(twt_ms: float) -> str:
    return "" if not np.isfinite(twt_ms) else f"{twt_ms:.2f}"


def write_picks_csv(path: str | os.PathLike, rows: Iterable[Mapping[str, object]]) -> Path:
    """Write picks in the pick-file format: ``horizon, trace, twt_ms, kind`` (2-D) or
    ``horizon, inline, xline, twt_ms, kind`` (3-D, when the rows carry ``inline``).

    Parameters
    ----------
    path : path-like
    rows : iterable of mappings
        Keys ``horizon``, ``trace`` (or ``inline`` and ``xline``), ``twt_ms``, ``kind``
        (default ``horizon``). A NaN time is written as an empty cell (a gap).

    Returns
    -------
    Path of the written file.
    """
    rows = list(rows)
    three_d = bool(rows) and "inline" in rows[0]
    columns = PICK_COLUMNS_3D if three_d else PICK_COLUMNS_2D
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(columns)
    for row in rows:
        values = []
        for column in columns:
            if column == "twt_ms":
                values.append(_format_time(float(row["twt_ms"])))
            elif column == "kind":
                values.append(str(row.get("kind", "horizon")))
            elif column in ("trace", "inline", "xline"):
                values.append(str(int(row[column])))
            else:
                values.append(str(row[column]))
        writer.writerow(values)
    text = buffer.getvalue()
    path = Path(path)

    def write_into(temporary: Path) -> None:
        temporary.write_text(text, encoding="utf-8")

    write_whole(path, write_into)
    return path
