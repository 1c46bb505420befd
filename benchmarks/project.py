"""Project run time and memory on a modelled grid of crossing lines and two small volumes.

    python benchmarks/project.py [--out benchmarks/out/project] [--lines-per-direction 6]
                                 [--traces 201] [--inlines 20 --xlines 40] [--repeat 1]

Writes (once) a grid of east-west and north-south 2-D lines (6 + 6 by default, 36 crossings)
and two small 3-D surveys crossed by some of them, with one planted mis-pick, all modelled with
``pitfalls.modelling.grid``; then runs ``pitfalls project`` on it in a child process with

- 1 local worker (in-process),
- 2 local worker processes (``--jobs 2``),
- a 2-worker Dask LocalCluster (``--scheduler local --jobs 2``; skipped without the dask extra),

and for each prints the wall time, the speed-up over 1 worker, the peak resident memory of the
whole process tree (the command and every worker it started, summed, sampled every 50 ms from
/proc) and the largest single process (``ru_maxrss`` of the children), and checks that the
JSON reports agree (timings aside). Nothing here is asserted: the numbers are for the record.
"""
from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import threading
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

from pitfalls.modelling.grid import GridVolume, grid_lines, write_grid  # noqa: E402


def tree_rss_kib(root: int) -> int:
    """Summed VmRSS of ``root`` and all its descendants, KiB (Linux /proc)."""
    children: dict[int, list[int]] = {}
    rss: dict[int, int] = {}
    for name in os.listdir("/proc"):
        if not name.isdigit():
            continue
        try:
            with open(f"/proc/{name}/status") as handle:
                fields = dict(line.split(":", 1) for line in handle if ":" in line)
        except OSError:
            continue
        pid, ppid = int(name), int(fields.get("PPid", "0").strip())
        children.setdefault(ppid, []).append(pid)
        rss[pid] = int(fields.get("VmRSS", "0 kB").split()[0]) if "VmRSS" in fields else 0
    total, stack = 0, [root]
    while stack:
        pid = stack.pop()
        total += rss.get(pid, 0)
        stack.extend(children.get(pid, []))
    return total


def run(arguments: list[str]) -> dict:
    """Run the command, sampling the process tree's memory; wall time, peak tree RSS, report."""
    started = time.perf_counter()
    child = subprocess.Popen([sys.executable, "-m", "pitfalls", *arguments], stdout=subprocess.PIPE,
                             stderr=subprocess.PIPE, text=True)
    peak = [0]

    def sample() -> None:
        while child.poll() is None:
            peak[0] = max(peak[0], tree_rss_kib(child.pid))
            time.sleep(0.05)

    sampler = threading.Thread(target=sample, daemon=True)
    sampler.start()
    stdout, stderr = child.communicate()
    wall = time.perf_counter() - started
    sampler.join()
    if child.returncode not in (0, 1):
        raise SystemExit(f"pitfalls project failed ({child.returncode}): {stderr.strip()}")
    return {"seconds": wall, "peak_tree_mib": peak[0] / 1024.0, "report": json.loads(stdout)}


def comparable(report: dict) -> dict:
    report = json.loads(json.dumps(report))
    for section in report["sections"]:
        section.pop("seconds", None)
    return report


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--out", default=os.path.join(HERE, "out", "project"))
    parser.add_argument("--lines-per-direction", type=int, default=6)
    parser.add_argument("--traces", type=int, default=201)
    parser.add_argument("--inlines", type=int, default=20)
    parser.add_argument("--xlines", type=int, default=40)
    parser.add_argument("--repeat", type=int, default=1, help="runs per configuration; the fastest is kept")
    args = parser.parse_args()
    project = os.path.join(args.out, "project.yaml")
    if not os.path.exists(project):
        started = time.perf_counter()
        lines = grid_lines(args.lines_per_direction, args.lines_per_direction, args.traces, 12.5)
        length = 12.5 * (args.traces - 1)
        volumes = [GridVolume("QV26-3D-A", (0.1 * length, 0.1 * length), args.inlines, args.xlines, 12.5),
                   GridVolume("QV26-3D-B", (0.55 * length, 0.55 * length), args.inlines, args.xlines, 12.5,
                              first_inline=500, first_xline=700)]
        write_grid(args.out, lines, volumes, pick_shift_ms={(lines[-1].name, "H2"): 40.0})
        print(f"wrote {len(lines)} lines of {args.traces} traces and 2 volumes of {args.inlines} x {args.xlines} "
              f"in {time.perf_counter() - started:.1f} s to {args.out}")
    configurations = [("1 local worker", ["--jobs", "1"]), ("2 local workers", ["--jobs", "2"])]
    try:
        import dask.distributed  # noqa: F401
        configurations.append(("Dask LocalCluster, 2 workers", ["--jobs", "2", "--scheduler", "local"]))
    except ImportError:
        print('Dask LocalCluster skipped: install the extra with pip install -e ".[dask]"')
    results = []
    for label, options in configurations:
        runs = [run(["project", project, "--format", "json", "--gate", "off", *options]) for _ in range(args.repeat)]
        best = min(runs, key=lambda r: r["seconds"])
        best["peak_tree_mib"] = max(r["peak_tree_mib"] for r in runs)
        results.append((label, best))
    baseline = results[0][1]
    n_sections = len(baseline["report"]["sections"])
    print(f"\n{n_sections} sections, {len(baseline['report']['ties'])} ties, "
          f"{len(baseline['report']['findings'])} findings ({os.cpu_count()} cores on this machine)")
    print(f"{'configuration':32s} {'wall s':>8s} {'speed-up':>9s} {'peak tree MiB':>14s} {'same report':>12s}")
    for label, result in results:
        same = comparable(result["report"]) == comparable(baseline["report"])
        print(f"{label:32s} {result['seconds']:8.2f} {baseline['seconds'] / result['seconds']:9.2f} "
              f"{result['peak_tree_mib']:14.0f} {str(same):>12s}")
    section_seconds = sum(s["seconds"] for s in baseline["report"]["sections"])
    print(f"\nsum of the sections' own scan times (1 worker): {section_seconds:.2f} s")
    print(f"largest single child process: {resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024:.0f} MiB")


if __name__ == "__main__":
    main()
