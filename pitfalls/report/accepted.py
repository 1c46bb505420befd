"""Accepted findings: mark the findings a reviewer accepted, list stale entries, write a starting file.

A finding is accepted when an entry of the accepted-findings file carries its fingerprint (and,
when the entry names an id, the same id). Accepted findings stay in the report, shown as
accepted with the reason, who and when; they do not count towards the gate. An entry that
matches no finding is stale: the report lists it so old acceptances do not pile up.
"""
from __future__ import annotations

from dataclasses import replace
from typing import Sequence

import yaml

from pitfalls.engine import ScanResult
from pitfalls.io.accepted import AcceptedEntry
from pitfalls.report.text import location, time_window


def apply_accepted(result: ScanResult, entries: Sequence[AcceptedEntry]) -> ScanResult:
    """The scan result with accepted findings marked and stale entries listed."""
    by_print = {entry.fingerprint: entry for entry in entries}
    used: set[str] = set()
    findings = []
    for finding in result.findings:
        entry = by_print.get(finding.fingerprint)
        if entry is not None and (entry.finding_id is None or entry.finding_id == finding.id):
            used.add(entry.fingerprint)
            finding = replace(finding, accepted={"reason": entry.reason, "by": entry.by, "date": entry.date})
        findings.append(finding)
    stale = tuple(entry.as_dict() for entry in entries if entry.fingerprint not in used)
    return replace(result, findings=tuple(findings), stale_accepted=stale)


def _entry_yaml(values: dict) -> str:
    return yaml.safe_dump([values], sort_keys=False, allow_unicode=True, default_flow_style=False, width=1000)


def accepted_file_text(result: ScanResult) -> str:
    """A starting accepted-findings file: every finding of the scan as an entry, commented out unless
    it is already accepted. Uncomment an entry and fill in reason, by and date to accept it."""
    lines = [
        f"# Accepted findings for {result.section.path}, written by `pitfalls scan --write-accepted`.",
        "# To accept a finding, uncomment its entry (remove the leading '# ' on each of its lines) and",
        "# fill in reason, by and date; then pass this file with --accepted. Accepted findings are shown",
        "# as accepted and do not count towards the gate. Fingerprints stay the same between runs and",
        "# across small pick edits; an entry that no longer matches any finding is reported as stale.",
        "accepted:",
    ]
    for finding in result.findings:
        lines.append(f"  # #{finding.rank} {finding.severity} {finding.id} on {finding.horizon or '(section)'}, "
                     f"{location(finding)}, {time_window(finding)}")
        values = {"fingerprint": finding.fingerprint, "id": finding.id, "horizon": finding.horizon}
        if finding.accepted is not None:
            values.update(reason=finding.accepted["reason"], by=finding.accepted["by"], date=finding.accepted["date"])
        else:
            values.update(reason="", by="", date="")
        block = _entry_yaml(values).splitlines()
        prefix = "  " if finding.accepted is not None else "  # "
        lines.extend(prefix + line for line in block)
    for entry in result.stale_accepted:
        lines.append(f"  # stale: matched no finding of this scan (entry kept for the record)")
        lines.extend("  # " + line for line in _entry_yaml(dict(entry)).splitlines())
    return "\n".join(lines) + "\n"
