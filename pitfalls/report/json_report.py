"""The JSON report, schema ``pitfalls-report/1``: a plain dict ready for ``json.dumps``.

The layout is fixed by the project's contract; ``pitfalls/data/report.schema.json`` is the
JSON Schema a consumer can validate it with.
"""
from __future__ import annotations

import math
from typing import Any

from pitfalls import __version__
from pitfalls.engine import ScanResult
from pitfalls.model import Finding
from pitfalls.report.text import caution_text

SCHEMA = "pitfalls-report/1"


def _plain(value: Any) -> Any:
    """Numbers as JSON numbers (NaN and infinities as null), numpy scalars as Python ones."""
    if hasattr(value, "item") and not isinstance(value, (list, tuple, dict)):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def _range(values: tuple | None) -> list | None:
    return None if values is None else [_plain(values[0]), _plain(values[1])]


def _corners(corners: tuple | None) -> list | None:
    return None if corners is None else [_range(corners[0]), _range(corners[1])]


def finding_dict(finding: Finding) -> dict[str, Any]:
    return {
        "rank": finding.rank,
        "id": finding.id,
        "detector": finding.detector,
        "severity": finding.severity,
        "confidence": _plain(float(finding.confidence)),
        "score": _plain(float(finding.score)),
        "horizon": finding.horizon,
        "traces": _range(finding.traces),
        "inlines": _range(finding.inlines),
        "xlines": _range(finding.xlines),
        "twt_ms": _range(finding.twt_ms),
        "footprint_xy": _corners(finding.footprint_xy),
        "title": finding.title,
        "evidence": _plain(dict(finding.evidence)),
        "advice": finding.advice,
        "fingerprint": finding.fingerprint,
        "detectors": list(finding.detectors or (finding.detector,)),
        "accepted": _plain(dict(finding.accepted)) if finding.accepted is not None else None,
    }


def seafloor_dict(result: ScanResult) -> dict[str, Any]:
    """The seafloor every detector measured against, as the terminal report's header gives it."""
    seafloor = result.seafloor
    return {"source": seafloor.source, "polarity": int(seafloor.polarity),
            "n_traces_found": int(seafloor.n_traces_found),
            "twt_ms_median": _plain(float(seafloor.twt_ms_median)),
            "dominant_frequency_hz": _plain(float(seafloor.dominant_frequency_hz))}


def report_dict(result: ScanResult) -> dict[str, Any]:
    """The whole report as the contract lays it out."""
    info = result.section
    return {
        "schema": SCHEMA,
        "tool_version": __version__,
        "section": {"path": info.path, "sha256": info.sha256, "geometry": info.geometry,
                    "n_traces": info.n_traces, "n_samples": info.n_samples,
                    "dt_ms": _plain(info.dt_ms), "t0_ms": _plain(info.t0_ms),
                    "n_inlines": info.n_inlines, "n_xlines": info.n_xlines,
                    "n_missing_traces": info.n_missing_traces,
                    "trace_spacing_m": _plain(float(info.trace_spacing_m)),
                    "trace_spacing_from_headers": bool(info.spacing_from_headers),
                    "notes": list(info.notes),
                    "coordinate_extent_xy": _corners(info.coordinate_extent_xy)},
        "seafloor": seafloor_dict(result),
        "picks": [{"horizon": p.horizon, "kind": p.kind, "n_points": p.n_points, "n_gaps": p.n_gaps}
                  for p in result.picks],
        "rules": {"path": result.rules_path, "sha256": result.rules_sha256},
        "velocity": {"function": result.velocity.describe(), "source": result.velocity.source},
        "pick_notes": list(result.pick_notes),
        "detectors": [{"name": run.name, "status": run.status, "seconds": round(run.seconds, 4),
                       "message": run.message} for run in result.detectors],
        "findings": [finding_dict(f) for f in result.findings],
        "summary": {**{severity: sum(1 for f in result.findings if f.severity == severity and f.accepted is None)
                       for severity in ("high", "medium", "low")},
                    "accepted": sum(1 for f in result.findings if f.accepted is not None)},
        "stale_accepted": [_plain(dict(entry)) for entry in result.stale_accepted],
        "caution": caution_text(result),
    }
