"""Scan cost against the cost of reading the file, on modelled volumes and a long 2-D line.

    python benchmarks/run.py [--out benchmarks/out] [--inlines 125 250] [--xlines 250] [--jobs 1 2]
                             [--line-traces 1000 --line-samples 2000] [--skip-volumes]

Volumes. Every inline is the bundled demo line (``demo_data/QT24-117.sgy``, made with the
project's forward model: every multiple, a hydrate base, a diagenetic front, a gas-water
contact), cut to ``--xlines`` traces, with a little seeded noise per inline; its pick file
(seafloor, horizons with planted mistakes, contacts) is repeated on every inline. Two volumes
differ only in their number of inlines (IEEE floats), so the difference of their scan times
is the marginal cost of a trace with start-up cancelled. It is compared with segyio's raw read
of the same file, block by block as the engine reads it, in the same run.

Line. ``--line-traces`` x ``--line-samples`` of band-limited layered reflectivity with a
seafloor and its multiple (a test load, not a model) with one horizon and one contact.

Each scan runs ``pitfalls scan ... --format json`` in a child process for every ``--jobs``
value and records: wall seconds, each detector's seconds (summed over workers), the peak
resident memory of the main process and of the largest worker, and the start-up (the
seconds ``pitfalls --version`` takes, and the import of the engine and the detectors).
Nothing here is asserted: the numbers are for the record (``results.md`` in ``--out``).
"""
from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time

import numpy as np
import segyio

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
DEMO_SEGY = os.path.join(ROOT, "demo_data", "QT24-117.sgy")
DEMO_PICKS = os.path.join(ROOT, "demo_data", "QT24-117_picks.csv")


# --- inputs ----------------------------------------------------------------------------------
def write_volume(path: str, picks_path: str, n_inlines: int, n_xlines: int) -> None:
    """The demo line's first ``n_xlines`` traces on every inline, seeded noise per inline (IEEE floats)."""
    with segyio.open(DEMO_SEGY, ignore_geometry=True) as handle:
        line = handle.trace.raw[:n_xlines].astype(np.float32)
        dt_us = int(handle.bin[segyio.BinField.Interval])
    n_samples = line.shape[1]
    scale = 0.002 * float(np.abs(line).max())
    spec = segyio.spec()
    spec.format, spec.samples, spec.tracecount = 5, np.arange(n_samples) * dt_us / 1000.0, n_inlines * n_xlines
    with segyio.create(path, spec) as out:
        out.bin.update({segyio.BinField.Interval: dt_us})
        for inline_index in range(n_inlines):
            rng = np.random.default_rng(inline_index)
            panel = line + (scale * rng.standard_normal(line.shape)).astype(np.float32)
            first = inline_index * n_xlines
            for xline_index in range(n_xlines):
                out.header[first + xline_index] = {
                    segyio.TraceField.INLINE_3D: 1000 + inline_index, segyio.TraceField.CROSSLINE_3D: 1 + xline_index,
                    segyio.TraceField.CDP_X: 50000000 + 1250 * xline_index,
                    segyio.TraceField.CDP_Y: 600000000 + 1250 * inline_index,
                    segyio.TraceField.SourceGroupScalar: -100}
            out.trace[first:first + n_xlines] = panel
    with open(DEMO_PICKS) as handle:
        header, *rows = handle.read().splitlines()
    with open(picks_path, "w") as handle:
        handle.write("horizon,inline,xline,twt_ms,kind\n")
        for inline_index in range(n_inlines):
            for row in rows:
                horizon, trace, twt_ms, kind = row.split(",")
                if int(trace) <= n_xlines:
                    handle.write(f"{horizon},{1000 + inline_index},{trace},{twt_ms},{kind}\n")


def layered_traces(n_traces: int, n_samples: int, dt_ms: float, seed: int, tilt: float = 0.0) -> np.ndarray:
    """Band-limited reflectivity with a seafloor, its multiple, gently dipping layers and noise."""
    rng = np.random.default_rng(seed)
    twt = np.arange(n_samples) * dt_ms
    wavelet_t = np.arange(-32, 33) * dt_ms / 1000.0
    wavelet = (1 - 2 * (np.pi * 25 * wavelet_t) ** 2) * np.exp(-(np.pi * 25 * wavelet_t) ** 2)
    base = rng.normal(0, 0.05, n_samples)
    base[twt < 400] = 0
    out = np.empty((n_traces, n_samples), dtype=np.float32)
    for index in range(n_traces):
        reflectivity = np.roll(base, int(round(index * tilt)))
        sea = int((400 + 20 * np.sin(index / 50)) / dt_ms)
        reflectivity[sea] += 0.4
        reflectivity[2 * sea] -= 0.15
        out[index] = np.convolve(reflectivity, wavelet, mode="same") + rng.normal(0, 0.01, n_samples)
    return out


def write_line(path: str, picks_path: str, n_traces: int, n_samples: int, dt_ms: float = 2.0) -> None:
    spec = segyio.spec()
    spec.format, spec.samples, spec.tracecount = 5, np.arange(n_samples) * dt_ms, n_traces
    data = layered_traces(n_traces, n_samples, dt_ms, seed=1, tilt=0.05)
    with segyio.create(path, spec) as out:
        out.bin.update({segyio.BinField.Interval: int(dt_ms * 1000)})
        for index in range(n_traces):
            out.header[index] = {segyio.TraceField.INLINE_3D: 1, segyio.TraceField.CROSSLINE_3D: index + 1,
                                 segyio.TraceField.CDP_X: 1250 * index, segyio.TraceField.SourceGroupScalar: -100}
        out.trace = data
    with open(picks_path, "w") as handle:
        handle.write("horizon,trace,twt_ms,kind\n")
        for trace in range(1, n_traces + 1):
            handle.write(f"H1,{trace},{900 + 0.05 * trace:.1f},horizon\nC1,{trace},{1500:.1f},contact\n")


# --- measurements ----------------------------------------------------------------------------
def raw_read_seconds(path: str, traces_per_read: int) -> tuple[float, int]:
    """Seconds to read every trace with segyio, ``traces_per_read`` traces per call (one engine block)."""
    started = time.perf_counter()
    with segyio.open(path, ignore_geometry=True) as handle:
        count = handle.tracecount
        for first in range(0, count, traces_per_read):
            handle.trace.raw[first:min(count, first + traces_per_read)]
    return time.perf_counter() - started, count


WATCHER = """
PEAK = [0.0]
def _descendants(root):
    children = {}
    for name in os.listdir('/proc'):
        if name.isdigit():
            try:
                with open(f'/proc/{name}/stat') as handle:
                    parent = int(handle.read().rsplit(')', 1)[1].split()[1])
            except (OSError, IndexError, ValueError):
                continue
            children.setdefault(parent, []).append(int(name))
    found, todo = [], [root]
    while todo:
        for child in children.get(todo.pop(), []):
            found.append(child)
            todo.append(child)
    return found
def _rss_kib(pid):
    try:
        with open(f'/proc/{pid}/status') as handle:
            for line in handle:
                if line.startswith('VmRSS:'):
                    return float(line.split()[1])
    except OSError:
        pass
    return 0.0
def watch():
    while True:
        sizes = [_rss_kib(pid) for pid in _descendants(os.getpid())]
        PEAK[0] = max([PEAK[0]] + sizes)
        time.sleep(0.2)
"""
"""Run in the child: the largest resident size any worker process reached, sampled every 0.2 s (Linux /proc)."""


def scan_child(section: str, picks: str, jobs: int) -> dict:
    """One ``pitfalls scan`` in a fresh process: wall seconds, detector seconds, peak memory."""
    output = f"{section}.jobs{jobs}.json"
    code = (
        "import json, os, resource, threading, time\n"
        f"exec(compile({WATCHER!r}, 'watcher', 'exec'))\n"
        "watcher = threading.Thread(target=watch, daemon=True)\n"
        "watcher.start()\n"
        "started = time.perf_counter()\n"
        "from pitfalls.cli import main\n"
        f"code = main(['scan', {section!r}, '--picks', {picks!r}, '--format', 'json', '--output', {output!r}, "
        f"'--gate', 'off', '--jobs', '{jobs}'])\n"
        "seconds = time.perf_counter() - started\n"
        "main_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024\n"
        "print(json.dumps({'exit': code, 'seconds': seconds, 'main_mib': main_mib, 'worker_mib': PEAK[0] / 1024}))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    if result.returncode != 0 or not os.path.exists(output):
        raise SystemExit(f"the scan of {section} failed: {result.stderr.strip()}")
    measured = json.loads(result.stdout.strip().splitlines()[-1])
    with open(output) as handle:
        report = json.load(handle)
    measured["detectors"] = {d["name"]: d["seconds"] for d in report["detectors"]}
    measured["n_findings"] = len(report["findings"])
    return measured


def startup_seconds() -> dict:
    """Wall seconds of ``pitfalls --version`` and of importing the engine and every detector."""
    started = time.perf_counter()
    subprocess.run([sys.executable, "-m", "pitfalls", "--version"], capture_output=True, check=True, cwd=ROOT)
    version = time.perf_counter() - started
    code = ("import time; t = time.perf_counter(); import pitfalls.engine, pitfalls.detectors, pitfalls.io.rules; "
            "print(time.perf_counter() - t)")
    imports = float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                                   cwd=ROOT).stdout)
    return {"version_s": version, "import_engine_s": imports}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=os.path.join(HERE, "out"))
    parser.add_argument("--inlines", type=int, nargs=2, default=(125, 250))
    parser.add_argument("--xlines", type=int, default=250)
    parser.add_argument("--jobs", type=int, nargs="+", default=(1, 2))
    parser.add_argument("--line-traces", type=int, default=1000)
    parser.add_argument("--line-samples", type=int, default=2000)
    parser.add_argument("--skip-volumes", action="store_true", help="only the line and the start-up")
    args = parser.parse_args()
    os.makedirs(args.out, exist_ok=True)
    lines = ["| case | traces | read s | read us/trace | jobs | scan s | scan ms/trace | peak MiB main / worker | "
             "detectors s | findings |", "|---|---|---|---|---|---|---|---|---|---|"]
    scans: dict[tuple[int, int], float] = {}
    raw_per_trace: float | None = None
    cases = []
    if not args.skip_volumes:
        for n_inlines in args.inlines:
            path = os.path.join(args.out, f"volume_{n_inlines}x{args.xlines}x1000.sgy")
            picks = path[:-4] + "_picks.csv"
            if not os.path.exists(path) or not os.path.exists(picks):
                write_volume(path, picks, n_inlines, args.xlines)
            cases.append((f"volume {n_inlines} x {args.xlines} x 1000", path, picks, n_inlines))
    line = os.path.join(args.out, f"line_{args.line_traces}x{args.line_samples}.sgy")
    line_picks = line[:-4] + "_picks.csv"
    if not os.path.exists(line):
        write_line(line, line_picks, args.line_traces, args.line_samples)
    cases.append((f"line {args.line_traces} x {args.line_samples}", line, line_picks, 0))
    for label, path, picks, n_inlines in cases:
        read_s, n_traces = raw_read_seconds(path, 16 * args.xlines if n_inlines else args.line_traces)
        if n_inlines == max(args.inlines):
            raw_per_trace = read_s / n_traces
        for jobs in args.jobs:
            measured = scan_child(path, picks, jobs)
            scans[(n_inlines, jobs)] = measured["seconds"]
            detectors = ", ".join(f"{name} {seconds:.1f}" for name, seconds in measured["detectors"].items())
            lines.append(f"| {label} | {n_traces} | {read_s:.2f} | {1e6 * read_s / n_traces:.1f} | {jobs} | "
                         f"{measured['seconds']:.1f} | {1e3 * measured['seconds'] / n_traces:.2f} | "
                         f"{measured['main_mib']:.0f} / {measured['worker_mib']:.0f} | {detectors} | "
                         f"{measured['n_findings']} |")
            print(lines[-1], flush=True)
    if not args.skip_volumes and raw_per_trace:
        small, large = args.inlines
        extra_traces = (large - small) * args.xlines
        lines.append("")
        for jobs in args.jobs:
            marginal = (scans[(large, jobs)] - scans[(small, jobs)]) / extra_traces
            lines.append(f"- jobs {jobs}: marginal scan cost {1e3 * marginal:.3f} ms per trace, "
                         f"{marginal / raw_per_trace:.0f} x the raw read ({1e6 * raw_per_trace:.1f} us per trace)")
    startup = startup_seconds()
    lines.append(f"- start-up: `pitfalls --version` {startup['version_s']:.2f} s; importing the engine, detectors "
                 f"and rules loader {startup['import_engine_s']:.2f} s")
    lines.append(f"- machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} at the end")
    text = "\n".join(lines) + "\n"
    with open(os.path.join(args.out, "results.md"), "w") as handle:
        handle.write(text)
    print(text)


if __name__ == "__main__":
    main()
