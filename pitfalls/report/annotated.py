"""The pick rows written back with the findings that cover them.

Every input pick row, in input order, keeps its original columns and gains
``finding_ids`` (``;``-separated), ``worst_severity`` and ``top_rank``. A finding covers a row
when it is about that row's horizon and its trace (2-D) or inline and crossline (3-D) range
holds the trace the row was matched to. The rows are read from the pick files again, so the
scan never holds one object per pick row.
"""
from __future__ import annotations

import csv
import io

import numpy as np

from pitfalls.engine import ScanResult
from pitfalls.io.picks import PickFile
from pitfalls.io.placement import FileMatch
from pitfalls.model import Finding
from pitfalls.report.rank import SEVERITY_ORDER

EXTRA_COLUMNS = ("finding_ids", "worst_severity", "top_rank")


def _covered(finding: Finding, pick_file: PickFile, match: FileMatch) -> np.ndarray:
    """Which kept picks of one file a finding covers."""
    if finding.horizon not in pick_file.horizons:
        return np.zeros(pick_file.n_picks, dtype=bool)
    mask = pick_file.horizon_index == pick_file.horizons.index(finding.horizon)
    mask &= match.trace_number >= 0
    if finding.inlines is not None:
        if match.inline_number is None:
            return np.zeros(pick_file.n_picks, dtype=bool)
        mask &= (match.inline_number >= finding.inlines[0]) & (match.inline_number <= finding.inlines[1])
        if finding.xlines is not None:
            mask &= (match.trace_number >= finding.xlines[0]) & (match.trace_number <= finding.xlines[1])
        return mask
    if finding.traces is not None:
        if match.inline_number is not None:
            return np.zeros(pick_file.n_picks, dtype=bool)
        mask &= (match.trace_number >= finding.traces[0]) & (match.trace_number <= finding.traces[1])
    return mask


def render(result: ScanResult) -> str:
    """CSV text: the original columns (union over the pick files, in first-seen order) plus the three extras."""
    columns: list[str] = []
    for pick_file in result.pick_files:
        columns += [c for c in pick_file.columns if c not in columns]
    columns += [c for c in EXTRA_COLUMNS if c not in columns]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n", extrasaction="ignore")
    writer.writeheader()
    findings = sorted(result.findings, key=lambda f: f.rank)
    for pick_file, match in zip(result.pick_files, result.matches):
        covering: list[list[Finding]] = [[] for _ in range(pick_file.n_picks)]
        for finding in findings:
            for index in np.flatnonzero(_covered(finding, pick_file, match)):
                covering[index].append(finding)
        kept = {int(row): index for index, row in enumerate(pick_file.row)}
        kept.update({int(row): int(index) for row, index in zip(pick_file.merged_rows, pick_file.merged_into)})
        for row, cells in pick_file.records():
            found = covering[kept[row]] if row in kept else []
            record = dict(zip(pick_file.columns, cells + [""] * (len(pick_file.columns) - len(cells))))
            record["finding_ids"] = ";".join(f.id for f in found)
            record["worst_severity"] = (min((f.severity for f in found), key=SEVERITY_ORDER.__getitem__)
                                        if found else "")
            record["top_rank"] = str(min(f.rank for f in found)) if found else ""
            writer.writerow(record)
    return out.getvalue()
