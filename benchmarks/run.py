"""Scan throughput and peak memory on a synthetic 2-D line and a synthetic 3-D volume.

    python benchmarks/run.py [--out benchmarks/out] [--inlines 200 --xlines 200 --samples 1000]

Writes the files (a 1000-trace x 2000-sample line; a 200 x 200 x 1000 volume, about 170 MB),
then for each: raw segyio read throughput (every trace, samples per second), the scan's
throughput through the CLI with every detector (samples per second, measured in a child
process), their ratio, each detector's seconds, and the child's peak resident memory; then
the wall time of ``pitfalls demo``.
Nothing here is asserted: the numbers are for the record and for spotting regressions.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import time

import numpy as np
import segyio

HERE = os.path.dirname(os.path.abspath(__file__))


def layered_traces(n_traces: int, n_samples: int, dt_ms: float, seed: int, tilt: float = 0.0) -> np.ndarray:
    """Band-limited reflectivity with a seafloor, gently dipping layers and noise (a test load, not a model)."""
    rng = np.random.default_rng(seed)
    twt = np.arange(n_samples) * dt_ms
    wavelet_t = np.arange(-32, 33) * dt_ms / 1000.0
    wavelet = (1 - 2 * (np.pi * 25 * wavelet_t) ** 2) * np.exp(-(np.pi * 25 * wavelet_t) ** 2)
    base = rng.normal(0, 0.05, n_samples)
    base[twt < 400] = 0
    out = np.empty((n_traces, n_samples), dtype=np.float32)
    for index in range(n_traces):
        shift = int(round(index * tilt))
        reflectivity = np.roll(base, shift)
        sea = int((400 + 20 * np.sin(index / 50)) / dt_ms)
        reflectivity[sea] += 0.4
        reflectivity[2 * sea] -= 0.15
        out[index] = np.convolve(reflectivity, wavelet, mode="same") + rng.normal(0, 0.01, n_samples)
    return out


def write_line(path: str, n_traces: int, n_samples: int, dt_ms: float) -> None:
    spec = segyio.spec()
    spec.format, spec.samples, spec.tracecount = 5, np.arange(n_samples) * dt_ms, n_traces
    data = layered_traces(n_traces, n_samples, dt_ms, seed=1, tilt=0.05)
    with segyio.create(path, spec) as out:
        out.bin.update({segyio.BinField.Interval: int(dt_ms * 1000)})
        for index in range(n_traces):
            out.header[index] = {segyio.TraceField.INLINE_3D: 1, segyio.TraceField.CROSSLINE_3D: index + 1,
                                 segyio.TraceField.CDP_X: 1250 * index, segyio.TraceField.SourceGroupScalar: -100}
        out.trace = data


def write_volume(path: str, n_inlines: int, n_xlines: int, n_samples: int, dt_ms: float) -> None:
    spec = segyio.spec()
    spec.format, spec.samples = 5, np.arange(n_samples) * dt_ms
    spec.ilines, spec.xlines, spec.sorting = np.arange(1, n_inlines + 1), np.arange(1, n_xlines + 1), 2
    with segyio.create(path, spec) as out:
        out.bin.update({segyio.BinField.Interval: int(dt_ms * 1000)})
        for inline_index in range(n_inlines):
            traces = layered_traces(n_xlines, n_samples, dt_ms, seed=inline_index, tilt=0.05)
            for xline_index in range(n_xlines):
                trace_index = inline_index * n_xlines + xline_index
                out.header[trace_index] = {
                    segyio.TraceField.INLINE_3D: inline_index + 1, segyio.TraceField.CROSSLINE_3D: xline_index + 1,
                    segyio.TraceField.CDP_X: 1250 * xline_index, segyio.TraceField.CDP_Y: 1250 * inline_index,
                    segyio.TraceField.SourceGroupScalar: -100}
                out.trace[trace_index] = traces[xline_index]


def write_picks(path: str, geometry: str, n_a: int, n_b: int, dt_ms: float) -> None:
    with open(path, "w") as handle:
        if geometry == "2d":
            handle.write("horizon,trace,twt_ms,kind\n")
            for trace in range(1, n_a + 1):
                handle.write(f"H1,{trace},{900 + 0.05 * trace:.1f},horizon\nC1,{trace},{1500:.1f},contact\n")
        else:
            handle.write("horizon,inline,xline,twt_ms,kind\n")
            for inline in range(1, n_a + 1):
                for xline in range(1, n_b + 1):
                    handle.write(f"H1,{inline},{xline},{900 + 0.05 * xline:.1f},horizon\n")


def raw_read_seconds(path: str) -> tuple[float, int]:
    started = time.perf_counter()
    total = 0
    with segyio.open(path, ignore_geometry=True) as handle:
        for trace in handle.trace:
            total += trace.size
    return time.perf_counter() - started, total


def scan_child(section: str, picks: str) -> dict:
    code = (
        "import json, resource, sys, time\n"
        "from pitfalls.cli import main\n"
        "started = time.perf_counter()\n"
        f"code = main(['scan', {section!r}, '--picks', {picks!r}, '--format', 'json', '--output', {section + '.json'!r}, '--gate', 'off'])\n"
        "seconds = time.perf_counter() - started\n"
        "peak_mib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024\n"
        "print(json.dumps({'exit': code, 'seconds': seconds, 'peak_mib': peak_mib}))\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    measured = json.loads(result.stdout.strip().splitlines()[-1])
    with open(section + ".json") as handle:
        measured["detectors"] = {d["name"]: d["seconds"] for d in json.load(handle)["detectors"]}
    return measured


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=os.path.join(HERE, "out"))
    parser.add_argument("--inlines", type=int, default=200)
    parser.add_argument("--xlines", type=int, default=200)
    parser.add_argument("--samples", type=int, default=1000)
    args = parser.parse_args()
    os.makedirs(args.out, exist_ok=True)
    cases = []
    line = os.path.join(args.out, "line_1000x2000.sgy")
    line_picks = os.path.join(args.out, "line_picks.csv")
    if not os.path.exists(line):
        write_line(line, 1000, 2000, 2.0)
    write_picks(line_picks, "2d", 1000, 0, 2.0)
    cases.append(("2-D line 1000 x 2000", line, line_picks))
    volume = os.path.join(args.out, f"volume_{args.inlines}x{args.xlines}x{args.samples}.sgy")
    volume_picks = os.path.join(args.out, "volume_picks.csv")
    if not os.path.exists(volume):
        write_volume(volume, args.inlines, args.xlines, args.samples, 4.0)
    write_picks(volume_picks, "3d", args.inlines, args.xlines, 4.0)
    cases.append((f"3-D volume {args.inlines} x {args.xlines} x {args.samples}", volume, volume_picks))
    print(f"{'case':32s} {'raw read Msamples/s':>20s} {'scan Msamples/s':>16s} {'ratio':>8s} {'scan s':>8s} {'peak MiB':>9s}  detectors (s)")
    for label, section, picks in cases:
        raw_seconds, n_samples = raw_read_seconds(section)
        measured = scan_child(section, picks)
        raw_rate = n_samples / raw_seconds / 1e6
        scan_rate = n_samples / measured["seconds"] / 1e6
        detectors = ", ".join(f"{name} {seconds:.2f}" for name, seconds in measured["detectors"].items())
        print(f"{label:32s} {raw_rate:20.1f} {scan_rate:16.2f} {scan_rate / raw_rate:8.4f} {measured['seconds']:8.1f} "
              f"{measured['peak_mib']:9.0f}  {detectors}")
    demo_dir = os.path.join(args.out, "demo")
    started = time.perf_counter()
    subprocess.run([sys.executable, "-m", "pitfalls", "demo", "--out", demo_dir], capture_output=True, check=True)
    print(f"pitfalls demo (model, write, scan, figure): {time.perf_counter() - started:.1f} s")
    print(f"benchmark process peak {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MiB")


if __name__ == "__main__":
    main()
