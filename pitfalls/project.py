"""A project run: every section scanned as an independent task, then the sections tied where they meet.

1. One task per section (:func:`scan_section`): the single-section scan, then the trace
   coordinates, numbers and picks the ties need. A section that fails to read is recorded as
   failed with its one-line error; the other sections go on.
2. Ties are found from the coordinates: crossings of 2-D lines, and stretches of a 2-D line
   inside a 3-D survey (``pitfalls.physics.misties``).
3. One task per section with ties (:func:`read_tie_traces`) reads the traces around its ties.
4. Each tie is measured and its mis-ties become findings (``pitfalls.detectors.misties``).
5. Every finding, from the scans and the ties, is ranked across the project.

The tasks are plain module-level functions of one picklable record, so they run in this
process, in a local process pool or on a Dask cluster through the same ``runner.map``, and the
result does not depend on where they ran (timings aside).
"""
from __future__ import annotations

import time
from dataclasses import dataclass, replace
from typing import Any, Mapping, Sequence

import numpy as np

from pitfalls.detectors import misties
from pitfalls.errors import PitfallsInputError
from pitfalls.io.project import Project
from pitfalls.io.segy import DEFAULT_INLINE_BYTE, DEFAULT_XLINE_BYTE
from pitfalls.io.ties import TieGeometry, read_tie_geometry, read_traces
from pitfalls.model import Finding
from pitfalls.physics.misties import line_crossings, volume_ties
from pitfalls.report.rank import SEVERITY_ORDER, score


@dataclass(frozen=True)
class SectionTask:
    """Everything one section's scan needs, picklable."""

    label: str
    path: str
    pick_paths: tuple[str, ...]
    iline_byte: int | None
    xline_byte: int | None
    force_2d: bool
    rules: Mapping[str, Any]
    rules_path: str
    rules_sha256: str


@dataclass(frozen=True)
class SectionOutcome:
    """How one section fared."""

    label: str
    status: str
    """``ran`` or ``failed`` (the section could not be read or scanned)."""
    error: str
    """For a failed section, the one-line reason."""
    result: Any
    """The section's ``ScanResult`` (without its pick rows), or None."""
    geometry: TieGeometry | None
    seconds: float


@dataclass(frozen=True)
class TraceRequest:
    label: str
    path: str
    indices: tuple[int, ...]


@dataclass(frozen=True)
class ProjectFinding:
    """A finding and the section it belongs to (as the project file names it)."""

    section: str
    finding: Finding


@dataclass(frozen=True)
class ProjectResult:
    """Everything the project reports need."""

    project_path: str
    rules_path: str
    rules_sha256: str
    sections: tuple[SectionOutcome, ...]
    ties: tuple[misties.TieMeasurement, ...]
    findings: tuple[ProjectFinding, ...]
    """Ranked across the project (``finding.rank`` 1 = look first)."""
    runner: str
    seconds: float

    @property
    def failed(self) -> bool:
        """True when a section failed to read or a detector failed on one: the run is incomplete."""
        return any(s.status == "failed" or (s.result is not None and s.result.failed) for s in self.sections)

    def reaches(self, gate: str) -> bool:
        """True when a finding is at least as severe as ``gate`` (``off`` is never reached)."""
        if gate == "off":
            return False
        return any(SEVERITY_ORDER[f.finding.severity] <= SEVERITY_ORDER[gate] for f in self.findings)


def scan_section(task: SectionTask) -> SectionOutcome:
    """Scan one section and read what its ties need; a failure is recorded, never raised."""
    from pitfalls.engine import scan
    started = time.perf_counter()
    iline = task.iline_byte or DEFAULT_INLINE_BYTE
    xline = task.xline_byte or DEFAULT_XLINE_BYTE
    try:
        result = scan(task.path, list(task.pick_paths), task.rules, task.rules_path, task.rules_sha256,
                      iline_byte=iline, xline_byte=xline, force_2d=task.force_2d)
        geometry = read_tie_geometry(task.path, task.pick_paths, task.rules["section"]["fallback_trace_spacing_m"],
                                     iline, xline, task.force_2d)
    except PitfallsInputError as err:
        return SectionOutcome(task.label, "failed", err.one_line(), None, None, time.perf_counter() - started)
    except Exception as err:  # a section that breaks the scan must not stop the others
        message = " ".join(str(err).split())
        return SectionOutcome(task.label, "failed", f"internal error {type(err).__name__}: {message}", None, None,
                              time.perf_counter() - started)
    return SectionOutcome(task.label, "ran", "", replace(result, pick_files=()), geometry,
                          time.perf_counter() - started)


def read_tie_traces(request: TraceRequest) -> np.ndarray | str:
    """The traces at one section's ties, or the one-line reason they could not be read."""
    try:
        return read_traces(request.path, request.indices)
    except PitfallsInputError as err:
        return err.one_line()


def _window(geometry: TieGeometry, index: int, reach: int) -> list[int]:
    """The tie trace and up to ``reach`` neighbours either side along the line or inline, in order."""
    before, after = [], []
    current = index
    for _ in range(reach):
        current = int(geometry.neighbours[current, 0])
        if current < 0:
            break
        before.append(current)
    current = index
    for _ in range(reach):
        current = int(geometry.neighbours[current, 1])
        if current < 0:
            break
        after.append(current)
    return before[::-1] + [index] + after


def find_ties(outcomes: Sequence[SectionOutcome], rules: Mapping[str, Any]) -> list[tuple[int, int, int, int, float, float]]:
    """Every tie between sections: ``(section a, trace a, section b, trace b, x_m, y_m)``, a before b
    in project order. Volumes are not tied to each other."""
    settings = rules[misties.NAME]
    ties = []
    usable = [k for k, outcome in enumerate(outcomes) if outcome.geometry is not None and outcome.geometry.has_coordinates]
    for position, k in enumerate(usable):
        for l in usable[position + 1:]:
            a, b = outcomes[k].geometry, outcomes[l].geometry
            if a.geometry == "2d" and b.geometry == "2d":
                for crossing in line_crossings(a.xy_m, b.xy_m, a.spacing_m, b.spacing_m):
                    ties.append((k, crossing.index_a, l, crossing.index_b, crossing.x_m, crossing.y_m))
            elif a.geometry == "2d" or b.geometry == "2d":
                line, volume = (a, b) if a.geometry == "2d" else (b, a)
                for line_index, volume_index in volume_ties(line.xy_m, volume.xy_m, 0.5 * volume.bin_diagonal_m,
                                                            settings["min_overlap_traces"]):
                    x_m, y_m = (float(v) for v in line.xy_m[line_index])
                    if line is a:
                        ties.append((k, line_index, l, volume_index, x_m, y_m))
                    else:
                        ties.append((k, volume_index, l, line_index, x_m, y_m))
    return ties


def _side(outcome: SectionOutcome, index: int, rows: list[int], traces: np.ndarray, row_of: dict[int, int]) -> misties.TieSide:
    geometry = outcome.geometry
    return misties.TieSide(
        section=outcome.label, geometry=geometry.geometry, trace_index=index, trace_number=index + 1,
        inline=int(geometry.inlines[index]), xline=int(geometry.xlines[index]), cdp=int(geometry.cdp[index]),
        traces=traces[[row_of[i] for i in rows]], centre_row=rows.index(index),
        horizon_names=geometry.horizon_names, horizon_kinds=geometry.horizon_kinds,
        horizon_twt_ms=geometry.horizon_twt_ms[:, rows], dt_ms=geometry.dt_ms, t0_ms=geometry.t0_ms,
        spacing_m=geometry.spacing_m, dominant_frequency_hz=outcome.result.seafloor.dominant_frequency_hz)


def run_project(project: Project, rules: Mapping[str, Any], rules_path: str, rules_sha256: str,
                runner: Any) -> ProjectResult:
    """Scan and tie every section of a project; see the module docstring.

    Parameters
    ----------
    runner
        Anything with ``map(function, items) -> list`` in the order of ``items``
        (``pitfalls.io.scheduler``).
    """
    started = time.perf_counter()
    tasks = [SectionTask(s.label, s.path, s.pick_paths, s.iline_byte, s.xline_byte, s.force_2d, rules, rules_path,
                         rules_sha256) for s in project.sections]
    outcomes = list(runner.map(scan_section, tasks))
    ties = find_ties(outcomes, rules)
    reach = int(rules[misties.NAME]["tie_traces"])
    windows: dict[tuple[int, int], list[int]] = {}
    needed: dict[int, set[int]] = {}
    for k, index_a, l, index_b, _, _ in ties:
        for section, index in ((k, index_a), (l, index_b)):
            if (section, index) not in windows:
                windows[section, index] = _window(outcomes[section].geometry, index, reach)
                needed.setdefault(section, set()).update(windows[section, index])
    order = sorted(needed)
    requests = [TraceRequest(outcomes[k].label, tasks[k].path, tuple(sorted(needed[k]))) for k in order]
    read = dict(zip(order, runner.map(read_tie_traces, requests)))
    measurements = []
    mis_ties = []
    for k, index_a, l, index_b, x_m, y_m in ties:
        if isinstance(read[k], str) or isinstance(read[l], str):
            continue  # the traces could not be read a second time; the section's own scan stands
        row_of_a = {index: row for row, index in enumerate(sorted(needed[k]))}
        row_of_b = {index: row for row, index in enumerate(sorted(needed[l]))}
        side_a = _side(outcomes[k], index_a, windows[k, index_a], read[k], row_of_a)
        side_b = _side(outcomes[l], index_b, windows[l, index_b], read[l], row_of_b)
        measurement, found_here = misties.tie(side_a, side_b, x_m, y_m, rules)
        measurements.append(measurement)
        mis_ties.extend(found_here)
    info_by_label = {o.label: o.result.section for o in outcomes if o.result is not None}
    found = [ProjectFinding(label, replace(finding, score=score(finding, info_by_label[label], rules["ranking"])))
             for label, finding in misties.place_mis_ties(mis_ties, measurements)]
    for outcome in outcomes:
        if outcome.result is not None:
            found.extend(ProjectFinding(outcome.label, finding) for finding in outcome.result.findings)
    ranked = rank_across(found, [o.label for o in outcomes], rules["ranking"])
    return ProjectResult(project_path=project.path, rules_path=rules_path, rules_sha256=rules_sha256,
                         sections=tuple(outcomes), ties=tuple(measurements), findings=ranked,
                         runner=getattr(runner, "description", ""), seconds=time.perf_counter() - started)


def rank_across(found: Sequence[ProjectFinding], labels: Sequence[str],
                ranking: Mapping[str, Any]) -> tuple[ProjectFinding, ...]:
    """Findings of every section in one order, best first, numbered from 1.

    Severity first (every high before every medium before every low), then score. Each
    section's findings keep the score their own scan gave them (with its repeat discount);
    mis-ties are scored as any finding of the section they are placed on, and dropped below
    the rules' ``min_confidence`` like any other. Equal scores are ordered by id, the
    section's place in the project file, horizon and first trace, so the order never depends
    on which worker finished first.
    """
    position = {label: index for index, label in enumerate(labels)}
    kept = [item for item in found if item.finding.confidence >= ranking["min_confidence"]]

    def order(item: ProjectFinding) -> tuple:
        f = item.finding
        first = f.traces[0] if f.traces else (f.inlines[0] if f.inlines else 0)
        return (SEVERITY_ORDER[f.severity], -round(f.score, 12), f.id, position[item.section], f.horizon or "",
                first, f.title)

    ordered = sorted(kept, key=order)
    return tuple(ProjectFinding(item.section, replace(item.finding, rank=index + 1))
                 for index, item in enumerate(ordered))
