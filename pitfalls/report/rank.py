"""Ranks findings across detectors: severity first, then score.

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
"""
from __future__ import annotations

from dataclasses import replace
from typing import Any, Mapping, Sequence

from pitfalls.model import Finding, SectionInfo

SEVERITY_VALUE = {"high": 1.0, "medium": 0.6, "low": 0.25}
SEVERITY_ORDER = {"high": 0, "medium": 1, "low": 2}


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


def rank_findings(findings: Sequence[Finding], info: SectionInfo, ranking: Mapping[str, Any]) -> tuple[Finding, ...]:
    """Findings with ``score`` and ``rank`` set: severity first, then score (see the module docstring)."""
    scored = [replace(f, score=score(f, info, ranking)) for f in findings
              if f.confidence >= ranking["min_confidence"]]

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
