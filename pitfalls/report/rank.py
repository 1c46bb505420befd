"""Scores and ranks findings across detectors.

    score = (w_s * s + w_c * confidence + w_e * extent) / (w_s + w_c + w_e)

``s`` is 1.0, 0.6 or 0.25 for high, medium or low severity; ``extent`` is the fraction of
the section's traces (2-D) or inline x crossline positions (3-D) the finding covers, 0 for
a finding with no range. The weights are ``ranking.weight_*`` in the rules.

Findings with a confidence below ``ranking.min_confidence`` are dropped first. Then, in
score order, a horizon's k-th finding (k = 0 for its best) has its score multiplied
by ``ranking.repeat_factor`` ** k, so that the top of the report covers different picks
before it repeats one; findings with no horizon are not discounted. Ties are broken by
severity, id, horizon and first trace, so the same findings always come in the same order.
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
    """Findings with ``score`` and ``rank`` set, best first."""
    scored = [replace(f, score=score(f, info, ranking)) for f in findings
              if f.confidence >= ranking["min_confidence"]]

    def order(finding: Finding) -> tuple:
        first = finding.traces[0] if finding.traces else (finding.inlines[0] if finding.inlines else 0)
        return (-round(finding.score, 12), SEVERITY_ORDER[finding.severity], finding.id,
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
