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
from dataclasses import dataclass, replace
from typing import Any, Callable, Mapping, Sequence

import numpy as np

from pitfalls import detectors as registry
from pitfalls.errors import PitfallsInputError
from pitfalls.io.picks import PickFile, read_pick_file
from pitfalls.io.placement import PlacedPicks, place_picks
from pitfalls.context import build_context
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

    @property
    def failed(self) -> tuple[DetectorRun, ...]:
        return tuple(run for run in self.detectors if run.status == "failed")

    def reaches(self, threshold: str) -> bool:
        """True when a finding is at least as severe as ``threshold`` (``off`` is never reached)."""
        if threshold == "off":
            return False
        return any(SEVERITY_ORDER[f.severity] <= SEVERITY_ORDER[threshold] for f in self.findings)


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


def scan(section_path: str, pick_paths: Sequence[str], rules: Mapping[str, Any], rules_path: str,
         rules_sha256: str, only: Sequence[str] | None = None, iline_byte: int = DEFAULT_INLINE_BYTE,
         xline_byte: int = DEFAULT_XLINE_BYTE, force_2d: bool = False,
         progress: Callable[[int, int], None] | None = None, velocity: VelocityModel | None = None,
         inlines_per_block: int = DEFAULT_INLINES_PER_BLOCK) -> ScanResult:
    """Scan one SEG-Y section with its pick files; see the module docstring.

    Parameters
    ----------
    progress : callable, optional
        Called as ``progress(done_panels, total_panels)`` after every block.
    velocity : VelocityModel, optional
        The velocity function for every depth; defaults to the rules' (``VelocityModel.from_rules``).
    inlines_per_block : int
        Inlines of a volume read and measured together.

    Raises
    ------
    PitfallsInputError
        For any problem with the section, the picks or the detector selection.
    """
    selected = select_detectors(only)
    pick_files = [read_pick_file(path) for path in pick_paths]
    with SeismicFile(section_path, rules["section"]["fallback_trace_spacing_m"], iline_byte, xline_byte,
                     force_2d) as source:
        return scan_source(source, pick_files, rules, rules_path, rules_sha256, selected, progress=progress,
                           velocity=velocity, inlines_per_block=inlines_per_block)


def scan_source(source, pick_files: Sequence[PickFile], rules: Mapping[str, Any], rules_path: str,
                rules_sha256: str, selected: Sequence[Any], *, progress: Callable[[int, int], None] | None = None,
                velocity: VelocityModel | None = None,
                inlines_per_block: int = DEFAULT_INLINES_PER_BLOCK) -> ScanResult:
    """Scan any section source: an object with ``info`` (SectionInfo), ``layout`` (TraceLayout),
    ``n_panels`` and ``blocks(inlines_per_block)`` yielding :class:`~pitfalls.model.Block` in order."""
    velocity = VelocityModel.from_rules(rules) if velocity is None else velocity
    info = source.info
    placed = place_picks(list(pick_files), info, source.layout)
    total = source.n_panels
    seconds = {module.NAME: 0.0 for module in selected}
    errors: dict[str, str] = {}
    outcomes: list[PanelOutcome] = []
    for block in source.blocks(inlines_per_block):
        outcomes.extend(scan_block(block, placed, selected, rules, velocity, info.geometry, seconds, errors))
        if progress is not None:
            progress(len(outcomes), total)
    read_notes = getattr(source, "read_notes", None)
    if read_notes is not None and read_notes():
        info = replace(info, notes=info.notes + tuple(read_notes()))
    per_panel = [list(outcome.findings) for outcome in outcomes]
    findings = merge_inlines(per_panel) if info.geometry == "3d" else per_panel[0]
    runs = tuple(DetectorRun(module.NAME, "failed" if module.NAME in errors else "ran", seconds[module.NAME],
                             errors.get(module.NAME, "")) for module in selected)
    if SHARED_STEP in errors:
        runs = (DetectorRun(SHARED_STEP, "failed", 0.0, errors[SHARED_STEP]),) + runs
    return ScanResult(
        section=info, pick_files=tuple(pick_files), picks=_summaries(placed), rules_path=rules_path,
        rules_sha256=rules_sha256, detectors=runs, findings=rank_findings(findings, info, rules["ranking"]),
        seafloor=_seafloor_summary(outcomes))


def scan_block(block: Block, placed: PlacedPicks, selected: Sequence[Any], rules: Mapping[str, Any],
               velocity: VelocityModel, geometry: str, seconds: dict[str, float],
               errors: dict[str, str]) -> list[PanelOutcome]:
    """Build each panel's context once and run every selected detector on it.

    ``seconds`` (per detector) and ``errors`` (detector name -> one-line message) are updated; a
    detector that has failed once is not run again.
    """
    outcomes = []
    for offset, panel in enumerate(block.panels):
        panel_index = block.first_panel + offset
        where = f" on {panel.name}" if geometry == "3d" else ""
        if not np.isfinite(panel.data).any():  # no live trace: nothing to check
            outcomes.append(PanelOutcome((), np.full(panel.n_traces, np.nan), 0, "none", float("nan")))
            continue
        picks = placed.panel(panel_index)
        try:
            context = build_context(panel, picks, rules, velocity)
        except Exception as err:  # the shared step is isolated like a detector: the report says it failed
            errors.setdefault(SHARED_STEP, f"{_one_line(err)}{where}; no check ran there")
            outcomes.append(PanelOutcome((), np.full(panel.n_traces, np.nan), 0, "none", float("nan")))
            continue
        found: list[Finding] = []
        for module in selected:
            if module.NAME in errors:
                continue
            started = time.perf_counter()
            try:
                result = list(module.detect(panel, context, picks, rules))
                problem = next((p for p in map(malformed, result) if p), "")
                if problem:
                    raise ValueError(f"returned a malformed finding: {problem}")
            except Exception as err:  # a failing detector must not stop the others
                errors[module.NAME] = f"{_one_line(err)}{where}"
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
    return outcomes


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
