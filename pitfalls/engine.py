"""The scan: read the section and the picks, run every selected detector on every panel, rank.

The section comes from a source that yields blocks (``SeismicFile`` for SEG-Y): a 2-D line is
one block of one panel; a 3-D volume comes in blocks of consecutive inlines, each inline a
panel. For every panel the engine builds one :class:`~pitfalls.context.Context` (seafloor,
polarity, dominant frequency, dip field, envelope, seafloor-multiple prediction, velocity)
and calls every detector as ``detect(panel, context, picks, rules)``; the findings of a volume
are merged across neighbouring inlines into inline/crossline ranges. A detector that raises
does not stop the scan: it is recorded as failed and the other detectors go on.
"""
from __future__ import annotations

import time
from collections import deque
from dataclasses import dataclass, replace
from typing import Any, Callable, Iterator, Mapping, Sequence

import numpy as np

from pitfalls import detectors as registry
from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, read_pick_file
from pitfalls.io.placement import FileMatch, PlacedPicks, place_picks
from pitfalls.context import build_context
from pitfalls.physics.seafloor import find_seafloor
from pitfalls.io.segy import DEFAULT_INLINE_BYTE, DEFAULT_XLINE_BYTE, SeismicFile
from pitfalls.model import Block, DetectorRun, Finding, SectionInfo
from pitfalls.physics.velocity import VelocityModel
from pitfalls.report.rank import SEVERITY_ORDER, rank_findings

SHARED_STEP = "shared measurements"
"""How the report names the per-panel step every detector depends on (seafloor, frequency, multiples)."""
DEFAULT_INLINES_PER_BLOCK = 16
"""Inlines of a volume read and measured together (a 250-crossline x 1000-sample inline is 1 MB)."""


@dataclass(frozen=True)
class PickSummary:
    """One horizon as the report lists it beside the interpreter's picks."""

    horizon: str
    kind: str
    n_points: int
    """Pick rows with a time."""
    n_gaps: int
    """Pick rows that are gaps (empty, NaN, -999.25)."""


@dataclass(frozen=True)
class SeafloorSummary:
    """The seafloor every detector measured against."""

    source: str
    polarity: int
    n_traces_found: int
    twt_ms_median: float
    dominant_frequency_hz: float


@dataclass(frozen=True)
class ScanResult:
    """Everything the reports need."""

    section: SectionInfo
    pick_files: tuple[PickFile, ...]
    picks: tuple[PickSummary, ...]
    rules_path: str
    rules_sha256: str
    detectors: tuple[DetectorRun, ...]
    findings: tuple[Finding, ...]
    seafloor: SeafloorSummary
    matches: tuple[FileMatch, ...] = ()
    """How each pick file's rows found their traces (one per pick file)."""
    pick_notes: tuple[str, ...] = ()
    """What reading and matching the picks did that the report should say."""
    velocity: VelocityModel = VelocityModel()
    """The velocity function every depth in the report comes from."""
    map_view: Any = None
    """A volume's picks as surfaces (:class:`pitfalls.maps.SurveyView`), for the map figure; None for a line."""
    coordinates: Any = None
    """Where the traces lie (:class:`pitfalls.report.geojson.SurveyCoordinates`), for GeoJSON footprints."""
    stale_accepted: tuple[Mapping[str, Any], ...] = ()
    """Accepted-findings entries (``--accepted``) that matched no finding of this scan."""

    @property
    def failed(self) -> tuple[DetectorRun, ...]:
        return tuple(run for run in self.detectors if run.status == "failed")

    def reaches(self, threshold: str) -> bool:
        """True when a finding is at least as severe as ``threshold`` (``off`` is never reached)."""
        if threshold == "off":
            return False
        return any(SEVERITY_ORDER[f.severity] <= SEVERITY_ORDER[threshold] for f in self.findings
                   if f.accepted is None)  # a reviewer's accepted finding does not hold the gate


def select_detectors(only: Sequence[str] | None) -> tuple:
    """The registry's detectors, or those named in ``only`` (in registry order)."""
    if not only:
        return registry.DETECTORS
    unknown = [name for name in only if name not in registry.BY_NAME]
    if unknown:
        raise PitfallsInputError("--only", "", f"unknown detector {unknown[0]!r}",
                                 "choose from " + ", ".join(registry.BY_NAME))
    return tuple(module for module in registry.DETECTORS if module.NAME in only)


@dataclass(frozen=True)
class PanelOutcome:
    """What the engine keeps of one panel after its detectors ran: findings and the seafloor it used."""

    findings: tuple[Finding, ...]
    seafloor_twt_ms: np.ndarray
    polarity: int
    source: str
    dominant_frequency_hz: float


@dataclass(frozen=True)
class BlockOutcome:
    """One block's panels after the detectors ran, with their time and failures."""

    outcomes: tuple[PanelOutcome, ...]
    seconds: Mapping[str, float]
    failures: tuple[tuple[int, str, str], ...]
    """(panel index, detector name, one-line message) for every detector that raised, in panel order."""


def scan(section_path: str, pick_paths: Sequence[str], rules: Mapping[str, Any], rules_path: str,
         rules_sha256: str, only: Sequence[str] | None = None, iline_byte: int = DEFAULT_INLINE_BYTE,
         xline_byte: int = DEFAULT_XLINE_BYTE, force_2d: bool = False,
         progress: Callable[[int, int], None] | None = None, velocity: VelocityModel | None = None,
         jobs: int = 1, inlines_per_block: int = DEFAULT_INLINES_PER_BLOCK, pick_columns: Sequence[str] | None = None,
         pick_horizon: str | None = None) -> ScanResult:
    """Scan one SEG-Y section with its pick files; see the module docstring.

    Parameters
    ----------
    progress : callable, optional
        Called as ``progress(done_panels, total_panels)`` after every block; a callable with a
        ``samples`` parameter also gets the samples scanned so far as ``samples=``.
    velocity : VelocityModel, optional
        The velocity function for every depth; defaults to the rules' (``VelocityModel.from_rules``).
    jobs : int
        Worker processes for the blocks of a volume (1 runs them here); the report is the same
        for any number.
    inlines_per_block : int
        Inlines of a volume read and measured together; the report is the same for any size.
    pick_columns, pick_horizon : optional
        ``--columns`` (from ``io.picks.parse_columns``) and ``--horizon``, for every pick file.

    Raises
    ------
    PitfallsInputError
        For any problem with the section, the picks or the detector selection.
    """
    selected = select_detectors(only)
    velocity = VelocityModel.from_rules(rules) if velocity is None else velocity
    pick_files = read_pick_files(pick_paths, pick_columns, pick_horizon)
    with SeismicFile(section_path, rules["section"]["fallback_trace_spacing_m"], iline_byte, xline_byte,
                     force_2d) as source:
        return scan_source(source, pick_files, rules, rules_path, rules_sha256, selected, progress=progress,
                           velocity=velocity, jobs=jobs, inlines_per_block=inlines_per_block)


def scan_source(source, pick_files: Sequence[PickFile], rules: Mapping[str, Any], rules_path: str,
                rules_sha256: str, selected: Sequence[Any], *, progress: Callable[[int, int], None] | None = None,
                velocity: VelocityModel | None = None, jobs: int | None = 1,
                inlines_per_block: int = DEFAULT_INLINES_PER_BLOCK) -> ScanResult:
    """Scan any section source.

    A source has ``info`` (SectionInfo), ``layout`` (TraceLayout), ``n_panels``,
    ``read_block(first_panel, stop_panel)`` returning a :class:`~pitfalls.model.Block`, and, for
    ``jobs > 1``, ``reader()`` returning a picklable object with the same ``read_block``.
    """
    velocity = VelocityModel.from_rules(rules) if velocity is None else velocity
    jobs = 1 if jobs is None else int(jobs)
    info = source.info
    placed = place_picks(list(pick_files), info, source.layout, getattr(source, "trace_keys", None))
    total = source.n_panels
    step = max(1, int(inlines_per_block))
    tasks = [(first, min(total, first + step)) for first in range(0, total, step)]
    seconds = {module.NAME: 0.0 for module in selected}
    first_failure: dict[str, tuple[int, str]] = {}
    outcomes: list[PanelOutcome] = []
    samples_done = 0
    wants_samples = progress is not None and _takes_samples(progress)
    inline_spacing_m = _inline_spacing_m(source.layout, info) if info.geometry == "3d" else None
    for block in _block_outcomes(source, tasks, placed, selected, rules, velocity, jobs, first_failure,
                                 inline_spacing_m):
        for name, spent in block.seconds.items():
            seconds[name] += spent
        for panel_index, name, message in block.failures:
            if name not in first_failure or panel_index < first_failure[name][0]:
                first_failure[name] = (panel_index, message)
        outcomes.extend(block.outcomes)
        samples_done += sum(outcome.seafloor_twt_ms.size for outcome in block.outcomes) * info.n_samples
        if progress is not None:
            if wants_samples:
                progress(len(outcomes), total, samples=samples_done)
            else:
                progress(len(outcomes), total)
    # a detector that failed is not trusted after the panel it failed on, however the blocks were run
    per_panel = [[f for f in outcome.findings
                  if f.detector not in first_failure or panel_index < first_failure[f.detector][0]]
                 for panel_index, outcome in enumerate(outcomes)]
    findings = merge_inlines(per_panel) if info.geometry == "3d" else per_panel[0]
    layout = source.layout
    map_view = None
    if info.geometry == "3d":
        findings, map_view = _map_view(layout, placed, outcomes, findings, rules, velocity, selected, first_failure)
    findings = [replace(f, footprint_xy=layout.footprint_xy(f.traces, f.inlines, f.xlines)) for f in findings]
    runs = tuple(DetectorRun(module.NAME, "failed" if module.NAME in first_failure else "ran", seconds[module.NAME],
                             first_failure[module.NAME][1] if module.NAME in first_failure else "")
                 for module in selected)
    if SHARED_STEP in first_failure:
        runs = (DetectorRun(SHARED_STEP, "failed", 0.0, first_failure[SHARED_STEP][1]),) + runs
    return ScanResult(
        section=info, pick_files=tuple(pick_files), picks=_summaries(placed), rules_path=rules_path,
        rules_sha256=rules_sha256, detectors=runs, findings=rank_findings(findings, info, rules["ranking"]),
        seafloor=_seafloor_summary(outcomes), map_view=map_view, matches=placed.matches,
        pick_notes=pick_notes(pick_files, placed), velocity=velocity,
        coordinates=_coordinates(source.layout, map_view))


def _coordinates(layout, map_view):
    """Where the traces lie on the map, for GeoJSON footprints: the fitted grid of a volume, or the
    CDP X/Y of each trace of a line."""
    from pitfalls.report.geojson import SurveyCoordinates
    if map_view is not None:
        return SurveyCoordinates("3d", grid=map_view.grid, from_headers=map_view.grid.from_headers)
    trace_x, trace_y = getattr(layout, "trace_x", None), getattr(layout, "trace_y", None)
    if trace_x is None or trace_y is None:
        return SurveyCoordinates("2d", trace_numbers=layout.trace_numbers, from_headers=False)
    return SurveyCoordinates("2d", trace_numbers=layout.trace_numbers, trace_x_m=np.asarray(trace_x, dtype=float),
                             trace_y_m=np.asarray(trace_y, dtype=float), from_headers=True)


def _map_view(layout, placed: PlacedPicks, outcomes: Sequence[PanelOutcome], findings: Sequence[Finding],
              rules: Mapping[str, Any], velocity: VelocityModel, selected: Sequence[Any],
              first_failure: dict[str, tuple[int, str]]) -> tuple[list[Finding], Any]:
    """Judge a volume's picks as surfaces (:mod:`pitfalls.maps`); a failure there is recorded against
    the detectors whose map-view checks failed, like a detector failure, and the inline findings stand."""
    from pitfalls import maps
    names = [module.NAME for module in selected if module.NAME not in first_failure]
    texts = {module.NAME: getattr(module, "ADVICE", {}) for module in selected}
    try:
        view = maps.survey_view(layout, placed, [outcome.seafloor_twt_ms for outcome in outcomes], velocity,
                                float(rules["section"]["fallback_trace_spacing_m"]))
        return maps.apply_map_view(view, findings, rules, names, texts), view
    except Exception as err:  # the map view must not lose the inline findings
        for name in names:
            if name in ("contacts", "multiples", "crosscut"):
                first_failure[name] = (len(outcomes), f"map view: {type(err).__name__}: {' '.join(str(err).split())}")
        return list(findings), None


def read_pick_files(paths: Sequence[str], columns: Sequence[str] | None = None,
                    horizon: str | None = None) -> list[PickFile]:
    """Read every pick file; ``--horizon`` must name the horizon of at least one file without a horizon column."""
    files = [read_pick_file(path, columns, horizon) for path in paths]
    if horizon is not None and files and all(f.horizon_column for f in files):
        raise PitfallsInputError("--horizon", "", "every pick file names its horizons in a horizon column",
                                 "drop --horizon, or mark the horizon column - in --columns")
    return files


def pick_notes(files: Sequence[PickFile], placed: PlacedPicks) -> tuple[str, ...]:
    """The readers' notes, then how each file was matched to the traces when not by trace or inline/xline numbers."""
    return tuple(note for f in files for note in f.notes) + tuple(
        match.describe() for match in placed.matches if match.key not in ("trace", "inline_xline"))


def _takes_samples(progress: Callable[..., None]) -> bool:
    import inspect
    try:
        return "samples" in inspect.signature(progress).parameters
    except (TypeError, ValueError):  # a builtin without a signature
        return False


def _inline_spacing_m(layout, info: SectionInfo) -> float:
    """Distance between neighbouring inlines of a volume: from the grid fitted to CDP X/Y, else the
    trace spacing (square bins)."""
    from pitfalls.maps import grid_geometry
    grid = grid_geometry(layout, info.trace_spacing_m)
    return grid.bin_sizes_m[0] if grid.from_headers else float(info.trace_spacing_m)


def _block_outcomes(source, tasks: list[tuple[int, int]], placed: PlacedPicks, selected: Sequence[Any],
                    rules: Mapping[str, Any], velocity: VelocityModel, jobs: int,
                    first_failure: Mapping[str, tuple[int, str]],
                    inline_spacing_m: float | None = None) -> Iterator[BlockOutcome]:
    """Every block's outcome, in section order: here, or in ``jobs`` worker processes with at most
    two blocks per worker in flight, so memory stays flat however large the volume."""
    geometry = source.info.geometry
    total = source.n_panels
    if jobs <= 1 or len(tasks) <= 1:
        for first, stop in tasks:
            skip = frozenset(first_failure)  # already failed on an earlier panel: not run again
            block = source.read_block(*_with_halo(first, stop, total, geometry))
            yield scan_block(block, placed, selected, rules, velocity, geometry, skip, core=(first, stop),
                             inline_spacing_m=inline_spacing_m)
        return
    from concurrent.futures import ProcessPoolExecutor
    names = tuple(module.NAME for module in selected)
    workers = min(int(jobs), len(tasks))
    with ProcessPoolExecutor(max_workers=workers, mp_context=_process_context(), initializer=_start_worker,
                             initargs=(source.reader(), placed, names, rules, velocity, geometry,
                                       inline_spacing_m, total)) as pool:
        pending: deque = deque()
        for task in tasks:
            pending.append(pool.submit(_worker_block, task))
            if len(pending) >= 2 * workers:
                yield pending.popleft().result()
        while pending:
            yield pending.popleft().result()


def _process_context():
    """Worker processes forked from a server that has the engine imported (fast start, no inherited
    threads); plain spawning where the platform has no fork server."""
    import multiprocessing
    if "forkserver" in multiprocessing.get_all_start_methods():
        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload(["pitfalls.engine"])
        return context
    return multiprocessing.get_context("spawn")


_WORKER: dict[str, Any] = {}
"""A worker process's reader, picks, detectors, rules and velocity, set once when it starts."""


def _start_worker(reader, placed: PlacedPicks, names: Sequence[str], rules: Mapping[str, Any],
                  velocity: VelocityModel, geometry: str, inline_spacing_m: float | None, total: int) -> None:
    _WORKER.update(reader=reader, placed=placed, selected=select_detectors(list(names)), rules=rules,
                   velocity=velocity, geometry=geometry, inline_spacing_m=inline_spacing_m, total=total)


def _worker_block(task: tuple[int, int]) -> BlockOutcome:
    state = _WORKER
    block = state["reader"].read_block(*_with_halo(task[0], task[1], state["total"], state["geometry"]))
    return scan_block(block, state["placed"], state["selected"], state["rules"], state["velocity"],
                      state["geometry"], frozenset(), core=task, inline_spacing_m=state["inline_spacing_m"])


SEAFLOOR_HALO_INLINES = 1
"""A volume's blocks are read with this many extra inlines on each side, so that the seafloor's dip
across the inlines is measured the same whatever the block size (the extra inlines are not scanned)."""


def _with_halo(first: int, stop: int, total: int, geometry: str) -> tuple[int, int]:
    if geometry != "3d":
        return first, stop
    return max(0, first - SEAFLOOR_HALO_INLINES), min(total, stop + SEAFLOOR_HALO_INLINES)


def _seafloor_across_inlines(block: Block, placed: PlacedPicks, rules: Mapping[str, Any],
                             inline_spacing_m: float | None) -> tuple[list[Any], list[np.ndarray | None]]:
    """Every panel's seafloor, and the gradient of its time across the inlines (ms per m) per trace.

    Central differences between the neighbouring inlines (one-sided at the volume's edges, where
    the block has no neighbour); NaN where a neighbour has no seafloor. None for a line.
    """
    seafloors = [find_seafloor(panel, placed.panel(block.first_panel + offset), rules)
                 for offset, panel in enumerate(block.panels)]
    if len(block.panels) < 2 or not inline_spacing_m:
        return seafloors, [None] * len(seafloors)
    times = np.vstack([seafloor.twt_ms for seafloor in seafloors])
    across = np.gradient(times, float(inline_spacing_m), axis=0)
    return seafloors, list(across)


def scan_block(block: Block, placed: PlacedPicks, selected: Sequence[Any], rules: Mapping[str, Any],
               velocity: VelocityModel, geometry: str, skip: frozenset[str] = frozenset(), *,
               core: tuple[int, int] | None = None, inline_spacing_m: float | None = None) -> BlockOutcome:
    """Build each panel's context once and run every selected detector on it.

    Detectors named in ``skip``, and any that raise, are not run on the block's later panels.
    ``core`` (first and stop panel index) names the panels to scan when the block was read with
    neighbouring inlines for the seafloor's dip across the inlines (``inline_spacing_m`` apart).
    """
    if geometry == "3d" and inline_spacing_m:
        try:
            seafloors, across = _seafloor_across_inlines(block, placed, rules, inline_spacing_m)
        except Exception:  # each panel's own context step below reports it
            seafloors, across = [None] * len(block.panels), [None] * len(block.panels)
    else:
        seafloors, across = [None] * len(block.panels), [None] * len(block.panels)
    first_core, stop_core = core if core is not None else (block.first_panel, block.first_panel + len(block.panels))
    seconds = {module.NAME: 0.0 for module in selected}
    failures: list[tuple[int, str, str]] = []
    failed = set(skip)
    panel_rules = rules
    if geometry == "3d" and block.panels:
        from pitfalls.maps import inline_rules
        panel_rules = inline_rules(rules, block.panels[0].n_traces)
    outcomes = []
    for offset, panel in enumerate(block.panels):
        panel_index = block.first_panel + offset
        if not first_core <= panel_index < stop_core:
            continue  # a neighbouring inline read only for the seafloor's dip
        where = f" on {panel.name}" if geometry == "3d" else ""
        if not np.isfinite(panel.data).any():  # no live trace: nothing to check
            outcomes.append(PanelOutcome((), np.full(panel.n_traces, np.nan), 0, "none", float("nan")))
            continue
        picks = placed.panel(panel_index)
        try:
            context = build_context(panel, picks, rules, velocity, seafloor=seafloors[offset],
                                    seafloor_across_ms_per_m=across[offset])
        except Exception as err:  # the shared step is isolated like a detector: the report says it failed
            failures.append((panel_index, SHARED_STEP, f"{_one_line(err)}{where}; no check ran there"))
            outcomes.append(PanelOutcome((), np.full(panel.n_traces, np.nan), 0, "none", float("nan")))
            continue
        found: list[Finding] = []
        for module in selected:
            if module.NAME in failed:
                continue
            started = time.perf_counter()
            try:
                result = list(module.detect(panel, context, picks, panel_rules))
                problem = next((p for p in map(malformed, result) if p), "")
                if problem:
                    raise ValueError(f"returned a malformed finding: {problem}")
            except Exception as err:  # a failing detector must not stop the others
                failures.append((panel_index, module.NAME, f"{_one_line(err)}{where}"))
                failed.add(module.NAME)
                result = []
            seconds[module.NAME] += time.perf_counter() - started
            found.extend(result)
        if geometry == "3d":
            found = [replace(f, inlines=(panel.inline_number, panel.inline_number), xlines=f.traces, traces=None)
                     if f.traces is not None else replace(f, inlines=(panel.inline_number, panel.inline_number))
                     for f in found]
        seafloor = context.seafloor
        outcomes.append(PanelOutcome(tuple(found), seafloor.twt_ms, seafloor.polarity, seafloor.source,
                                     context.dominant_frequency_hz))
    return BlockOutcome(tuple(outcomes), seconds, tuple(failures))


def _one_line(err: BaseException) -> str:
    return f"{type(err).__name__}: {' '.join(str(err).split())}"[:500]


def malformed(finding: Any) -> str:
    """What is wrong with a detector's finding, or "" when the reports and the ranking can use it."""
    if not isinstance(finding, Finding):
        return f"{type(finding).__name__} instead of a Finding"
    if not isinstance(finding.id, str) or finding.id.count(".") != 1:
        return f"id {finding.id!r} is not family.kind"
    if finding.severity not in SEVERITY_ORDER:
        return f"{finding.id}: severity {finding.severity!r}"
    try:
        confidence = float(finding.confidence)
    except (TypeError, ValueError):
        return f"{finding.id}: confidence {finding.confidence!r}"
    if not 0.0 <= confidence <= 1.0:  # also refuses NaN
        return f"{finding.id}: confidence {finding.confidence!r} outside [0, 1]"
    for name in ("traces", "inlines", "xlines", "twt_ms"):
        value = getattr(finding, name)
        if value is None:
            continue
        try:
            low, high = (float(v) for v in value)
        except (TypeError, ValueError):
            return f"{finding.id}: {name} {value!r} is not a (first, last) pair"
        if not (np.isfinite(low) and np.isfinite(high) and low <= high):
            return f"{finding.id}: {name} {value!r} is not an increasing finite range"
    if not isinstance(finding.title, str) or not isinstance(finding.advice, str):
        return f"{finding.id}: title or advice is not text"
    if not isinstance(finding.evidence, Mapping):
        return f"{finding.id}: evidence is not a mapping"
    if finding.horizon is not None and not isinstance(finding.horizon, str):
        return f"{finding.id}: horizon {finding.horizon!r} is not text"
    return ""


def _seafloor_summary(outcomes: Sequence[PanelOutcome]) -> SeafloorSummary:
    """The seafloor of the whole scan: every trace's time, the panels' polarity vote, the dominant
    frequency of the first and the middle panel."""
    all_seafloor = np.concatenate([outcome.seafloor_twt_ms for outcome in outcomes])
    found_seafloor = all_seafloor[np.isfinite(all_seafloor)]
    votes = int(np.sign(sum(outcome.polarity for outcome in outcomes)))
    middle = len(outcomes) // 2
    frequencies = [outcomes[index].dominant_frequency_hz for index in sorted({0, middle})]
    return SeafloorSummary(
        source="+".join(sorted({o.source for o in outcomes if o.source != "none"} or {"none"})), polarity=votes,
        n_traces_found=int(found_seafloor.size),
        twt_ms_median=float(np.median(found_seafloor)) if found_seafloor.size else float("nan"),
        dominant_frequency_hz=float(np.nanmedian(frequencies)) if np.isfinite(frequencies).any() else float("nan"))


def _summaries(placed: PlacedPicks) -> tuple[PickSummary, ...]:
    return tuple(PickSummary(name, kind, rows - gaps, gaps)
                 for name, kind, rows, gaps in zip(placed.names, placed.kinds, placed.n_rows, placed.n_gaps))


def merge_inlines(per_panel: Sequence[Sequence[Finding]]) -> list[Finding]:
    """Join findings with the same id and horizon on neighbouring inlines whose crossline ranges overlap.

    The merged finding keeps the evidence, title and advice of its most confident member,
    the worst severity, the union of the ranges, and counts its inlines in
    ``evidence["inlines_merged"]``.
    """
    open_groups: list[tuple[Finding, int]] = []  # (merged finding, index of its last panel)
    closed: list[Finding] = []
    for panel_index, findings in enumerate(per_panel):
        still_open: list[tuple[Finding, int]] = []
        taken: set[int] = set()
        for merged, last_panel in open_groups:
            if last_panel != panel_index - 1:
                closed.append(merged)
                continue
            partner = None
            for index, candidate in enumerate(findings):
                if index in taken or candidate.id != merged.id or candidate.horizon != merged.horizon:
                    continue
                if _overlap(merged.xlines, candidate.xlines):
                    partner = index
                    break
            if partner is None:
                closed.append(merged)
                continue
            taken.add(partner)
            still_open.append((_join(merged, findings[partner]), panel_index))
        for index, candidate in enumerate(findings):
            if index not in taken:
                still_open.append((replace(candidate, evidence={**candidate.evidence, "inlines_merged": 1}), panel_index))
        open_groups = still_open
    closed.extend(merged for merged, _ in open_groups)
    return closed


def _overlap(a: tuple[int, int] | None, b: tuple[int, int] | None) -> bool:
    if a is None or b is None:
        return a is None and b is None
    return a[0] <= b[1] and b[0] <= a[1]


def _span(a: tuple | None, b: tuple | None) -> tuple | None:
    if a is None or b is None:
        return a if b is None else b
    return (min(a[0], b[0]), max(a[1], b[1]))


def _join(merged: Finding, new: Finding) -> Finding:
    strongest = new if new.confidence > merged.confidence else merged
    severity = min((merged.severity, new.severity), key=SEVERITY_ORDER.__getitem__)
    count = int(merged.evidence.get("inlines_merged", 1)) + 1
    return replace(strongest, severity=severity, confidence=max(merged.confidence, new.confidence),
                   inlines=_span(merged.inlines, new.inlines), xlines=_span(merged.xlines, new.xlines),
                   twt_ms=_span(merged.twt_ms, new.twt_ms),
                   evidence={**strongest.evidence, "inlines_merged": count})
