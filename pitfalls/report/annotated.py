"""The pick rows written back with the findings that cover them.

Every input pick row, in input order, keeps its original columns and gains
``finding_ids`` (``;``-separated), ``worst_severity`` and ``top_rank``. A finding covers a row
when it is about that row's horizon and its trace (2-D) or inline and crossline (3-D) range
holds the row's position.
"""
from __future__ import annotations

import csv
import io

from pitfalls.engine import ScanResult
from pitfalls.model import Finding
from pitfalls.report.rank import SEVERITY_ORDER

EXTRA_COLUMNS = ("finding_ids", "worst_severity", "top_rank")


def _covers(finding: Finding, row) -> bool:
    if finding.horizon != row.horizon:
        return False
    if finding.inlines is not None:
        if row.inline is None or not finding.inlines[0] <= row.inline <= finding.inlines[1]:
            return False
        return finding.xlines is None or (row.xline is not None and finding.xlines[0] <= row.xline <= finding.xlines[1])
    if finding.traces is not None:
        return row.trace is not None and finding.traces[0] <= row.trace <= finding.traces[1]
    return True


def render(result: ScanResult) -> str:
    """CSV text: the original columns (union over the pick files, in first-seen order) plus the three extras."""
    columns: list[str] = []
    for pick_file in result.pick_files:
        columns += [c for c in pick_file.columns if c not in columns]
    columns += [c for c in EXTRA_COLUMNS if c not in columns]
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=columns, lineterminator="\n", extrasaction="ignore")
    writer.writeheader()
    for pick_file in result.pick_files:
        for row in sorted(pick_file.rows + pick_file.merged_rows, key=lambda r: r.row):
            covering = [f for f in result.findings if _covers(f, row)]
            record = dict(row.fields)
            record["finding_ids"] = ";".join(f.id for f in covering)
            record["worst_severity"] = (min((f.severity for f in covering), key=SEVERITY_ORDER.__getitem__)
                                        if covering else "")
            record["top_rank"] = str(min(f.rank for f in covering)) if covering else ""
            writer.writerow(record)
    return out.getvalue()
