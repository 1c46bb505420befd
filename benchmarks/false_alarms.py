"""Recall and false alarms per family of randomised modelled lines.

    python benchmarks/false_alarms.py [--lines 30] [--seed 11] [--families clean,hydrate-jump] [--out DIR] [--list]

Every line of every family (``pitfalls.modelling.families``) is written as SEG-Y with its
pick file and scanned through the engine with the default rules. Per family it prints: the
lines, the planted items and how many were found at medium or above (recall), the false
alarms (findings at high or medium on anything not planted and no real event of the line),
how many of them are high, and how many lines drew at least one. ``--list`` prints every
false alarm (family, line, severity, id, horizon, traces, times) under the table.
Nothing is asserted here; ``tests/modelling/test_families.py`` runs a small fixed seed.
"""
from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from collections import Counter

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

from pitfalls import detectors as registry  # noqa: E402
from pitfalls.engine import scan  # noqa: E402
from pitfalls.io.rules import load_rules  # noqa: E402
from pitfalls.modelling.families import FAMILIES, draw_line, judge, write_line  # noqa: E402


def run_family(family: str, n_lines: int, seed: int, folder: str, rules, rules_path: str, rules_sha: str):
    rows = []
    for index in range(n_lines):
        line = draw_line(family, seed, index)
        segy, picks = write_line(line, folder)
        result = scan(str(segy), [str(picks)], rules, rules_path, rules_sha)
        failed = [run.name for run in result.detectors if run.status == "failed"]
        rows.append((line, judge(line, result.findings), failed))
        os.remove(segy)
        os.remove(picks)
    return rows


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--lines", type=int, default=30)
    parser.add_argument("--seed", type=int, default=11)
    parser.add_argument("--families", default=",".join(FAMILIES))
    parser.add_argument("--list", action="store_true", help="print every false alarm")
    args = parser.parse_args(argv)
    rules, rules_path, rules_sha = load_rules(None, registry.rule_keys())
    families = [name.strip() for name in args.families.split(",") if name.strip()]
    print(f"{'family':22s} {'lines':>5s} {'recall':>9s} {'false alarms':>12s} {'high':>5s} {'lines w/ FA':>11s} {'s':>6s}")
    totals = Counter()
    listing = []
    with tempfile.TemporaryDirectory() as folder:
        for family in families:
            started = time.perf_counter()
            rows = run_family(family, args.lines, args.seed, folder, rules, rules_path, rules_sha)
            found = sum(score.found for _, score, _ in rows)
            planted = sum(score.planted for _, score, _ in rows)
            alarms = [f for _, score, _ in rows for f in score.false_alarms]
            high = sum(1 for f in alarms if f.severity == "high")
            lines_with = sum(1 for _, score, _ in rows if score.false_alarms)
            failed = sum(1 for _, _, fail in rows if fail)
            recall = f"{found}/{planted}" if planted else "-"
            print(f"{family:22s} {len(rows):5d} {recall:>9s} {len(alarms):12d} {high:5d} {lines_with:11d} "
                  f"{time.perf_counter() - started:6.0f}" + (f"  ({failed} lines with a failed detector)" if failed else ""),
                  flush=True)
            totals.update(lines=len(rows), found=found, planted=planted, alarms=len(alarms), high=high,
                          lines_with=lines_with)
            for line, score, fail in rows:
                missed = score.planted - score.found
                for finding in score.false_alarms:
                    listing.append(f"  {family} #{line.index}: {finding.severity} {finding.id} {finding.horizon} "
                                   f"traces {finding.traces} twt {tuple(round(t) for t in finding.twt_ms or ())}")
                if missed:
                    listing.append(f"  {family} #{line.index}: MISSED {missed} planted "
                                   f"({', '.join(p.ids[0] for p in line.planted)})")
                if fail:
                    listing.append(f"  {family} #{line.index}: detector failed: {', '.join(fail)}")
    recall = f"{totals['found']}/{totals['planted']}"
    print(f"{'all':22s} {totals['lines']:5d} {recall:>9s} {totals['alarms']:12d} {totals['high']:5d} {totals['lines_with']:11d}")
    if args.list and listing:
        print("\n".join(listing))
    return 0


if __name__ == "__main__":
    sys.exit(main())
