"""The Markdown report, for interpretation notes and review packs."""
from __future__ import annotations

from pitfalls.engine import ScanResult
from pitfalls.report.text import (
    NO_FINDINGS,
    caution_text,
    location,
    number,
    section_lines,
    time_window,
    worst_by_horizon,
)


def _cell(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def render(result: ScanResult) -> str:
    """The report as one Markdown document."""
    lines = ["# pitfalls scan", ""]
    if result.failed:
        lines += ["> **DETECTOR FAILED: this scan is incomplete.**", ">"]
        lines += [f"> - `{run.name}`: {_cell(run.message)}" for run in result.failed]
        lines.append("")
    lines += [f"- {_cell(line)}" for line in section_lines(result)]
    lines.append("- Detectors: " + ", ".join(f"{r.name} {r.status} ({r.seconds:.2f} s)" for r in result.detectors))
    counts = {s: sum(f.severity == s for f in result.findings) for s in ("high", "medium", "low")}
    lines += [f"- Findings: {counts['high']} high, {counts['medium']} medium, {counts['low']} low", ""]
    lines += ["## Picks", "", "| horizon | kind | points | gaps | findings | worst |", "|---|---|---:|---:|---:|---|"]
    worst = worst_by_horizon(result)
    for pick in result.picks:
        finding, count = worst.get(pick.horizon, (None, 0))
        label = f"#{finding.rank} `{finding.id}` ({finding.severity})" if finding else "none"
        lines.append(f"| {_cell(pick.horizon)} | {pick.kind} | {pick.n_points} | {pick.n_gaps} | {count} | {label} |")
    lines += ["", "## Findings", ""]
    if not result.findings:
        lines += [f"**{NO_FINDINGS}**", ""]
    else:
        lines += ["| # | severity | id | horizon | where | twt | confidence | what |", "|---:|---|---|---|---|---|---:|---|"]
        for f in result.findings:
            lines.append(f"| {f.rank} | {f.severity} | `{f.id}` | {_cell(f.horizon or '-')} | {location(f)} | "
                         f"{time_window(f)} | {f.confidence:.2f} | {_cell(f.title)} |")
        lines.append("")
        for f in result.findings:
            lines += [f"### {f.rank}. `{f.id}` ({f.severity})", "", f.title, "",
                      f"{location(f)}, {time_window(f)}; confidence {f.confidence:.2f}, score {f.score:.2f}.", ""]
            lines += [f"- {key}: {number(value)}" for key, value in f.evidence.items()]
            lines += ["", f"**Check:** {f.advice}", ""]
    lines += ["## Caution", "", caution_text(result), ""]
    return "\n".join(lines)
