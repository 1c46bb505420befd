"""Fuzz the whole command line with damaged inputs and print the outcome counts.

    python benchmarks/fuzz.py [--segy 600] [--picks 600] [--rules 400] [--seed 16] [--deadline 60]

Families (the same as ``tests/test_fuzz.py``, at full size): SEG-Y copies with one header field
changed (sample interval, sample count, format code, extended header count, trace sample count
and interval, delay, coordinate scalar, inline, crossline) and some truncated; pick files of
random cells; rules files of random YAML pieces (anchors, aliases, merge keys, duplicate keys,
tags). Each case runs ``pitfalls scan`` in this process with a deadline (SIGALRM) and is counted
as one of:

- ``ran``: exit 0 or 1 with a report;
- ``refused``: exit 2 with exactly one ``pitfalls: error:`` line on stderr;
- ``crash``: any other exception, a traceback, or more than one stderr line;
- ``hang``: the deadline passed;
- ``changed``: the input file's bytes changed (never expected).

Also printed: the peak resident memory of this process and the slowest case. Nothing is asserted.
"""
from __future__ import annotations

import argparse
import collections
import contextlib
import hashlib
import io
import os
import random
import resource
import signal
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "tests"))

from fuzz_cases import HEADER_FIELDS, INTERESTING, damaged, pick_text, valid_line  # noqa: E402

from pitfalls.cli import main  # noqa: E402

YAML_PIECES = ["velocity:", "seafloor:", "  snap_ms: 2", "  snap_ms: 3", "  snap_ms: &a 2", "  x: *a", "<<: *a",
               "  water_velocity_m_s: 1500", "- 1", "[", "{", "'x'", "!!int 3", "? a", "ranking:",
               "  weight_severity: 0", "  weight_confidence: 0", "  weight_extent: 0", "contacts:", "\t", "a: &b [1, 2]",
               "c: [*b, *b, *b, *b]", "multiples:", "  highest_multiplier: 3", "  highest_multiplier: 99", "#"]
CELLS = ["H1", "H2", "", "NaN", "-999.25", "1", "24", "0", "-5", "1e308", "inf", "abc", "1.5", "400", "2.4", '"',
         "seafloor", "contact", ";", " ", "\t", "100", "300", "-300"]


class _Deadline(BaseException):
    pass


def _alarm(signum, frame):
    raise _Deadline()


def _digest(path: str) -> str:
    with open(path, "rb") as handle:
        return hashlib.sha256(handle.read()).hexdigest()


def run_case(args: list[str], inputs: list[str], deadline: int) -> tuple[str, float, str]:
    """One scan in this process: (outcome kind, seconds, first stderr line)."""
    before = [_digest(path) for path in inputs]
    out, err = io.StringIO(), io.StringIO()
    started = time.perf_counter()
    signal.alarm(deadline)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main(args)
        kind = None
    except _Deadline:
        kind = "hang"
    except BaseException as error:  # noqa: BLE001 - anything else is what the fuzz looks for
        kind, err = "crash", io.StringIO(f"{type(error).__name__}: {error}")
    finally:
        signal.alarm(0)
    seconds = time.perf_counter() - started
    lines = err.getvalue().strip().splitlines()
    if kind is None:
        if code == 2 and len(lines) == 1 and lines[0].startswith("pitfalls: error: "):
            kind = "refused"
        elif code in (0, 1) and not lines:
            kind = "ran"
        else:
            kind = "crash"
    if [_digest(path) for path in inputs] != before:
        kind = "changed"
    return kind, seconds, lines[0] if lines else ""


def main_fuzz() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--segy", type=int, default=600)
    parser.add_argument("--picks", type=int, default=600)
    parser.add_argument("--rules", type=int, default=400)
    parser.add_argument("--seed", type=int, default=16)
    parser.add_argument("--deadline", type=int, default=60)
    options = parser.parse_args()
    signal.signal(signal.SIGALRM, _alarm)
    rng = random.Random(options.seed)
    folder = tempfile.mkdtemp(prefix="pitfalls-fuzz-bench-")
    valid = os.path.join(folder, "valid.sgy")
    original = valid_line(valid)
    good_picks = os.path.join(folder, "good.csv")
    with open(good_picks, "w") as handle:
        handle.write(pick_text([("H1", str(t), "300") for t in range(1, 25)]))
    counts: dict[str, collections.Counter] = collections.defaultdict(collections.Counter)
    examples: dict[tuple[str, str], str] = {}
    slowest = (0.0, "")

    def record(family: str, kind: str, seconds: float, line: str, label: str) -> None:
        nonlocal slowest
        counts[family][kind] += 1
        if kind in ("crash", "hang", "changed"):
            examples.setdefault((family, kind), f"{label}: {line}")
        if seconds > slowest[0]:
            slowest = (seconds, f"{family} {label}")

    for index in range(options.segy):
        field = rng.randrange(len(HEADER_FIELDS))
        value = rng.choice(INTERESTING) if rng.random() < 0.5 else rng.randrange(1 << (8 * HEADER_FIELDS[field][2]))
        cut = rng.randrange(len(original)) if rng.random() < 0.2 else None
        path = os.path.join(folder, "damaged.sgy")
        with open(path, "wb") as handle:
            handle.write(damaged(original, field, value, cut))
        kind, seconds, line = run_case(["scan", path, "--picks", good_picks, "--format", "json"], [path, good_picks],
                                       options.deadline)
        record("segy", kind, seconds, line, f"{HEADER_FIELDS[field][0]}={value} cut={cut}")
    for index in range(options.picks):
        header = rng.choice(["horizon,trace,twt_ms", "horizon,trace,twt_ms,kind", "horizon,trace,twt_s",
                             "trace,twt_ms", "horizon;trace;twt_ms", "x,y,z", ""])
        rows = [(rng.choice(["H1", "H2"]), str(rng.randrange(1, 25)), str(rng.uniform(50.0, 470.0)))
                if rng.random() < 0.8 else tuple(rng.choice(CELLS) for _ in range(rng.randrange(0, 5)))
                for _ in range(rng.randrange(0, 30))]
        path = os.path.join(folder, "picks.csv")
        with open(path, "w") as handle:
            handle.write(pick_text(rows, header))
        kind, seconds, line = run_case(["scan", valid, "--picks", path, "--format", "json"], [valid, path],
                                       options.deadline)
        record("picks", kind, seconds, line, f"case {index}")
    for index in range(options.rules):
        path = os.path.join(folder, "rules.yaml")
        with open(path, "w") as handle:
            handle.write("\n".join(rng.choice(YAML_PIECES) for _ in range(rng.randrange(0, 12))) + "\n")
        command = ["rules", "--rules", path] if index % 2 else ["scan", valid, "--rules", path, "--format", "json"]
        kind, seconds, line = run_case(command, [path, valid], options.deadline)
        record("rules", kind, seconds, line, f"case {index}")

    total = collections.Counter()
    print(f"{'family':8s} {'tried':>6s} " + " ".join(f"{kind:>8s}" for kind in ("ran", "refused", "crash", "hang",
                                                                               "changed")))
    for family, counter in counts.items():
        total.update(counter)
        print(f"{family:8s} {sum(counter.values()):6d} " + " ".join(f"{counter[kind]:8d}" for kind in
                                                                   ("ran", "refused", "crash", "hang", "changed")))
    print(f"{'all':8s} {sum(total.values()):6d} " + " ".join(f"{total[kind]:8d}" for kind in
                                                              ("ran", "refused", "crash", "hang", "changed")))
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(f"peak resident memory {peak_mb:.0f} MB; slowest case {slowest[0]:.1f} s ({slowest[1]})")
    for (family, kind), text in sorted(examples.items()):
        print(f"first {kind} in {family}: {text}")


if __name__ == "__main__":
    main_fuzz()
