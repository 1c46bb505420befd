"""Joins the findings that describe one event, then ranks them across detectors: severity first, then score.

One event, one finding. Two findings describe the same event when they are about the same
pick (or both about the section alone), their time windows overlap, and their trace ranges
(inline and crossline ranges on a volume) share at least ``ranking.merge_min_overlap`` of the
shorter range. Joined findings, strongest first, keep the id, title, advice, confidence and
place (ranges and map footprint) of the strongest (most severe; at equal severity a specific id
before a generic one such as ``contact.unpicked-flat-event``; then the most confident: another
member's confidence and range belong to a different claim), and every member's evidence: the
other members' numbers and ranges under keys prefixed with their id, their ids in
``evidence["merged_ids"]``, and every detector in ``detectors``.

Every high finding comes before every medium one, and every medium before every low one.
Within one severity the findings are ordered by

    score = w_s * s + w_c * confidence + w_e * extent

with the weights ``ranking.weight_*`` of the rules scaled to sum to 1 (the defaults 0.6, 0.3
and 0.1 already do), ``s`` 1.0, 0.6 or 0.25 for high, medium or low severity, and ``extent``
the fraction of the section's traces (2-D) or inline x crossline positions (3-D) the finding
covers, 0 for a finding with no range. The score keeps ``s`` so that it also reads as one
number on its own, in [0, 1].

Findings with a confidence below ``ranking.min_confidence`` are dropped first. Then, in
rank order, a horizon's k-th finding (k = 0 for its first) has its score multiplied by
``ranking.repeat_factor`` ** k, so that within a severity the top of the report covers
different picks before it repeats one; findings with no horizon are not discounted. Ties
are broken by id, horizon and first trace, so the same findings always come in the same
order.

Every finding gets a ``fingerprint``: a short hash of its id, its horizon and its place among
the findings with that id on that horizon in trace order. It stays the same between runs and
when a pick is edited a little (its ranges move, its order does not), which is what accepted
findings are matched by.
"""
from __future__ import annotations

import hashlib
from dataclasses import replace
from typing import Any, Mapping, Sequence

from pitfalls.model import Finding, SectionInfo

SEVERITY_VALUE = {"high": 1.0, "medium": 0.6, "low": 0.25}
SEVERITY_ORDER = {"high": 0, "medium": 1, "low": 2}
GENERIC_IDS = frozenset({"contact.unpicked-flat-event", "pick.crosses-reflections", "pick.polarity-flip"})
"""Ids that say something is odd without saying what it is; a specific id names a joined event first."""


def extent_fraction(finding: Finding, info: SectionInfo) -> float:
    """Share of the section the finding covers, in [0, 1]."""
    if finding.inlines is not None and finding.xlines is not None:
        # xline numbers may step by more than one; count by the grid's own extent
        inline_span = finding.inlines[1] - finding.inlines[0] + 1
        xline_span = finding.xlines[1] - finding.xlines[0] + 1
        return min(1.0, inline_span * xline_span / max(1, info.n_inlines * info.n_xlines))
    if finding.traces is not None:
        return min(1.0, (finding.traces[1] - finding.traces[0] + 1) / max(1, info.n_traces))
    return 0.0


def score(finding: Finding, info: SectionInfo, ranking: Mapping[str, Any]) -> float:
    weights = (ranking["weight_severity"], ranking["weight_confidence"], ranking["weight_extent"])
    values = (SEVERITY_VALUE[finding.severity], finding.confidence, extent_fraction(finding, info))
    total = sum(weights)
    if total <= 0:
        return 0.0
    return float(min(1.0, max(0.0, sum(w * v for w, v in zip(weights, values)) / total)))


# --- one finding per event --------------------------------------------------------------------
def _shared_fraction(a: tuple | None, b: tuple | None) -> float | None:
    """Length of the overlap of two inclusive ranges over the shorter one; None when either is missing."""
    if a is None or b is None:
        return None
    shared = min(a[1], b[1]) - max(a[0], b[0]) + 1
    shorter = min(a[1] - a[0], b[1] - b[0]) + 1
    return max(0.0, shared) / max(1, shorter)


def same_event(a: Finding, b: Finding, min_overlap: float) -> bool:
    """True when two findings describe one event (see the module docstring)."""
    if a.horizon != b.horizon or a.twt_ms is None or b.twt_ms is None:
        return False
    if not (a.twt_ms[0] <= b.twt_ms[1] and b.twt_ms[0] <= a.twt_ms[1]):
        return False
    if a.traces is not None or b.traces is not None:
        shared = _shared_fraction(a.traces, b.traces)
        return shared is not None and shared > 0 and shared >= min_overlap
    inline = _shared_fraction(a.inlines, b.inlines)
    xline = _shared_fraction(a.xlines, b.xlines)
    return (inline is not None and xline is not None and min(inline, xline) > 0
            and min(inline, xline) >= min_overlap)


def _strength(finding: Finding) -> tuple:
    return (SEVERITY_ORDER[finding.severity], finding.id in GENERIC_IDS, -finding.confidence, finding.id)


def _join(members: Sequence[Finding]) -> Finding:
    """One finding from an event's members, strongest first."""
    lead = members[0]
    if len(members) == 1:
        return replace(lead, detectors=lead.detectors or (lead.detector,))
    evidence: dict[str, Any] = dict(lead.evidence)
    merged_ids: list[str] = []
    also = []
    for member in members[1:]:
        merged_ids.append(member.id)
        for key, value in member.evidence.items():
            evidence[f"{member.id}.{key}"] = value
        for name in ("traces", "inlines", "xlines", "twt_ms"):  # where the member itself lies
            if getattr(member, name) is not None:
                evidence[f"{member.id}.{name}"] = list(getattr(member, name))
        also.append(f"{member.id} ({member.severity}): {member.title}")
    evidence["merged_ids"] = merged_ids
    detectors = tuple(sorted({d for m in members for d in (m.detectors or (m.detector,))}))
    advice = lead.advice + " The same event was also found as " + "; ".join(also) + "."
    return replace(lead, evidence=evidence, advice=advice, detectors=detectors)


def merge_events(findings: Sequence[Finding], min_overlap: float) -> list[Finding]:
    """Join the findings that describe one event into one finding each (see the module docstring)."""
    groups: list[list[Finding]] = []
    for finding in sorted(findings, key=_strength):
        for group in groups:
            if any(same_event(member, finding, min_overlap) for member in group):
                group.append(finding)
                break
        else:
            groups.append([finding])
    return [_join(group) for group in groups]


# --- fingerprints -----------------------------------------------------------------------------
def _first_position(finding: Finding) -> tuple:
    first = finding.traces[0] if finding.traces else (finding.xlines[0] if finding.xlines else 0)
    inline = finding.inlines[0] if finding.inlines else 0
    time = finding.twt_ms[0] if finding.twt_ms else 0.0
    return (inline, first, time)


def fingerprint_text(finding_id: str, horizon: str | None, ordinal: int) -> str:
    """The fingerprint of the ``ordinal``-th finding (0-based, in trace order) with this id on this horizon."""
    key = f"{finding_id}\n{horizon if horizon is not None else ''}\n{ordinal}"
    return hashlib.sha256(key.encode("utf-8")).hexdigest()[:12]


def with_fingerprints(findings: Sequence[Finding]) -> list[Finding]:
    """Each finding with its fingerprint set; the order of ``findings`` is kept."""
    order = sorted(range(len(findings)), key=lambda i: (findings[i].id, findings[i].horizon or "",
                                                        _first_position(findings[i])))
    counts: dict[tuple[str, str | None], int] = {}
    prints: dict[int, str] = {}
    for index in order:
        finding = findings[index]
        key = (finding.id, finding.horizon)
        prints[index] = fingerprint_text(finding.id, finding.horizon, counts.get(key, 0))
        counts[key] = counts.get(key, 0) + 1
    return [replace(finding, fingerprint=prints[index]) for index, finding in enumerate(findings)]


# --- ranking ----------------------------------------------------------------------------------
def rank_findings(findings: Sequence[Finding], info: SectionInfo, ranking: Mapping[str, Any]) -> tuple[Finding, ...]:
    """Findings joined per event, with ``score``, ``rank`` and ``fingerprint`` set: severity first, then score
    (see the module docstring)."""
    believed = [f for f in findings if f.confidence >= ranking["min_confidence"]]
    joined = merge_events(believed, float(ranking.get("merge_min_overlap", 0.5)))
    scored = [replace(f, score=score(f, info, ranking)) for f in with_fingerprints(joined)]

    def order(finding: Finding) -> tuple:
        first = finding.traces[0] if finding.traces else (finding.inlines[0] if finding.inlines else 0)
        return (SEVERITY_ORDER[finding.severity], -round(finding.score, 12), finding.id,
                finding.horizon or "", first)

    seen: dict[str, int] = {}
    discounted = []
    for finding in sorted(scored, key=order):
        if finding.horizon is not None:
            repeats = seen.get(finding.horizon, 0)
            seen[finding.horizon] = repeats + 1
            finding = replace(finding, score=finding.score * ranking["repeat_factor"] ** repeats)
        discounted.append(finding)
    ranked = sorted(discounted, key=order)
    return tuple(replace(f, rank=index + 1) for index, f in enumerate(ranked))
