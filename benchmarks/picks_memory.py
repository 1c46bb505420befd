"""Memory and time of reading pick files: 160 000 pick rows, header CSV and a plain column file.

Run ``python benchmarks/picks_memory.py [N_ROWS]``. Prints, for each layout, the seconds to read,
the peak memory while reading and the memory the parsed picks keep (tracemalloc, Python
allocations including numpy's buffers). The picks are held as numpy columns, so what is kept
grows by tens of bytes per row.
"""
from __future__ import annotations

import os
import sys
import tempfile
import time
import tracemalloc

import numpy as np

from pitfalls.io.picks import parse_columns, read_pick_file


def write_files(folder: str, n_rows: int) -> dict[str, tuple[str, tuple[str, ...] | None]]:
    rng = np.random.default_rng(0)
    n_xlines = 400
    inline = 1000 + np.arange(n_rows) // n_xlines
    xline = 2000 + np.arange(n_rows) % n_xlines
    twt = 1500.0 + 50.0 * rng.standard_normal(n_rows)
    header = os.path.join(folder, "picks.csv")
    with open(header, "w") as out:
        out.write("horizon,inline,xline,twt_ms,kind\n")
        out.writelines(f"Top Reservoir,{i},{x},{t:.2f},horizon\n" for i, x, t in zip(inline, xline, twt))
    plain = os.path.join(folder, "Top_Reservoir.dat")
    with open(plain, "w") as out:
        out.write("# exported horizon\n  x  y  inline  xline  time\n")
        out.writelines(f"{500000 + 12.5 * (x - 2000):.2f} {6000000 + 25.0 * (i - 1000):.2f} {i} {x} {-t:.2f}\n"
                       for i, x, t in zip(inline, xline, twt))
    return {"header CSV (inline/xline)": (header, None),
            "column file (--columns x,y,inline,xline,twt_ms)": (plain, parse_columns("x,y,inline,xline,twt_ms"))}


def main() -> None:
    n_rows = int(sys.argv[1]) if len(sys.argv) > 1 else 160_000
    with tempfile.TemporaryDirectory() as folder:
        for name, (path, columns) in write_files(folder, n_rows).items():
            tracemalloc.start()
            started = time.perf_counter()
            picks = read_pick_file(path, columns)
            seconds = time.perf_counter() - started
            kept, peak = tracemalloc.get_traced_memory()
            tracemalloc.stop()
            print(f"{name}: {picks.n_picks} picks, {seconds:.2f} s, peak {peak / 1e6:.1f} MB while reading, "
                  f"{kept / 1e6:.1f} MB kept ({kept / picks.n_picks:.0f} bytes per row)")


if __name__ == "__main__":
    main()
