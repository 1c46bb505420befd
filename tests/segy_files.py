"""SEG-Y files for reader tests, written directly with segyio (not with the project's own writer)."""
from __future__ import annotations

import numpy as np
import segyio


def write_segy(path, data, *, dt_us=4000, delay_ms=0, sample_format=5, inlines=None, xlines=None,
               cdp_x=None, cdp_y=None, coordinate_scalar=-100, trace_dt_us=None, binary_dt_us=None):
    """Write traces ``data`` (n_traces, n_samples) with the given headers; returns the path.

    ``inlines``/``xlines`` default to one inline (1) and crosslines 1..n; coordinates default
    to 12.5 m steps along x, stored with ``coordinate_scalar``.
    """
    data = np.asarray(data, dtype=np.float32)
    n_traces, n_samples = data.shape
    inlines = np.ones(n_traces, dtype=int) if inlines is None else np.asarray(inlines)
    xlines = np.arange(1, n_traces + 1) if xlines is None else np.asarray(xlines)
    scale = 1.0 / abs(coordinate_scalar) if coordinate_scalar < 0 else float(coordinate_scalar or 1)
    cdp_x = 500000.0 + 12.5 * np.arange(n_traces) if cdp_x is None else np.asarray(cdp_x, dtype=float)
    cdp_y = np.full(n_traces, 6000000.0) if cdp_y is None else np.asarray(cdp_y, dtype=float)
    spec = segyio.spec()
    spec.format = sample_format
    spec.samples = np.arange(n_samples) * dt_us / 1000.0 + delay_ms
    spec.tracecount = n_traces
    with segyio.create(str(path), spec) as out:
        out.text[0] = segyio.tools.create_text_header({1: "TEST SECTION WRITTEN FOR PITFALLS READER TESTS"})
        out.bin.update({segyio.BinField.Interval: dt_us if binary_dt_us is None else binary_dt_us,
                        segyio.BinField.Samples: n_samples, segyio.BinField.Format: sample_format})
        for index in range(n_traces):
            out.header[index] = {
                segyio.TraceField.INLINE_3D: int(inlines[index]),
                segyio.TraceField.CROSSLINE_3D: int(xlines[index]),
                segyio.TraceField.CDP_X: int(round(cdp_x[index] / scale)),
                segyio.TraceField.CDP_Y: int(round(cdp_y[index] / scale)),
                segyio.TraceField.SourceGroupScalar: coordinate_scalar,
                segyio.TraceField.DelayRecordingTime: delay_ms,
                segyio.TraceField.TRACE_SAMPLE_COUNT: n_samples,
                segyio.TraceField.TRACE_SAMPLE_INTERVAL: dt_us if trace_dt_us is None else trace_dt_us,
            }
            out.trace[index] = data[index]
    return path
