"""Damaged inputs for the fuzz tests and the fuzz benchmark: a valid small line and the header
fields a damaged copy can get wrong. Shared so the tests (small, seeded) and ``benchmarks/fuzz.py``
(large) try the same families."""
from __future__ import annotations

import numpy as np

from segy_files import write_segy

N_TRACES, N_SAMPLES, DT_US = 24, 120, 4000

# (name, byte offset, size in bytes): SEG-Y rev 1 binary header and first trace header fields
HEADER_FIELDS = [
    ("binary sample interval", 3216, 2),
    ("binary sample count", 3220, 2),
    ("binary format code", 3224, 2),
    ("extended header count", 3504, 2),
    ("trace sample count", 3600 + 114, 2),
    ("trace sample interval", 3600 + 116, 2),
    ("trace delay recording time", 3600 + 108, 2),
    ("trace coordinate scalar", 3600 + 70, 2),
    ("trace inline", 3600 + 188, 4),
    ("trace crossline", 3600 + 192, 4),
]

INTERESTING = [0, 1, 2, 3, 5, 8, 10, 100, 1000, 4000, 32767, 65535, 2**31 - 1, 2**32 - 1]


def valid_line(path) -> bytes:
    """A small valid line with a seafloor and two reflections; returns its bytes."""
    twt = np.arange(N_SAMPLES) * DT_US / 1000.0
    trace = (np.exp(-((twt - 100.0) / 6.0) ** 2) - 0.4 * np.exp(-((twt - 300.0) / 6.0) ** 2)
             + 0.3 * np.exp(-((twt - 200.0) / 6.0) ** 2))
    rng = np.random.default_rng(3)
    data = np.tile(trace, (N_TRACES, 1)) + 0.01 * rng.standard_normal((N_TRACES, N_SAMPLES))
    write_segy(path, data, dt_us=DT_US)
    with open(path, "rb") as handle:
        return handle.read()


def damaged(original: bytes, field: int, value: int, cut: int | None = None) -> bytes:
    """``original`` with one header field set to ``value`` (big-endian, wrapped to the field's size)
    and, when ``cut`` is given, only its first ``cut`` bytes."""
    name, offset, size = HEADER_FIELDS[field]
    raw = bytearray(original)
    raw[offset:offset + size] = (int(value) % (1 << (8 * size))).to_bytes(size, "big")
    return bytes(raw if cut is None else raw[:cut])


def pick_text(rows: list[tuple[str, str, str]], header: str = "horizon,trace,twt_ms") -> str:
    return header + "\n" + "".join(",".join(row) + "\n" for row in rows)
