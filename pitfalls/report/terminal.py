"""The terminal report: rich renderables, built here and printed by the CLI."""
from __future__ import annotations

from rich.console import Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from pitfalls.engine import ScanResult
from pitfalls.report.colours import severity_style
from pitfalls.report.text import (
    NO_FINDINGS,
    caution_text,
    location,
    number,
    section_lines,
    time_window,
    worst_by_horizon,
)

SEVERITY_STYLE = {severity: severity_style(severity) for severity in ("high", "medium", "low")}
"""The severity colours of the figure (``pitfalls.report.colours``), so both read alike."""


def render(result: ScanResult) -> Group:
    """Header, failed detectors, the picks, the ranked findings, each finding's detail, the caution."""
    parts: list = []
    if result.failed:
        failed = "\n".join(f"{run.name}: {run.message}" for run in result.failed)
        parts.append(Panel(Text(failed + "\nThis scan is incomplete: its findings do not clear the picks.",
                                style="bold red"), title="DETECTOR FAILED", border_style="red"))
    header = Text("\n".join(section_lines(result)))
    ran = ", ".join(f"{run.name} {run.status} ({run.seconds:.2f} s)" for run in result.detectors)
    header.append(f"\nDetectors: {ran}")
    summary = {s: sum(f.severity == s for f in result.findings) for s in ("high", "medium", "low")}
    header.append(f"\nFindings: {summary['high']} high, {summary['medium']} medium, {summary['low']} low")
    parts.append(Panel(header, title="pitfalls scan", border_style="blue"))
    parts.append(_picks_table(result))
    if result.findings:
        parts.append(_findings_table(result))
        parts.extend(_details(result))
    else:
        parts.append(Text(NO_FINDINGS, style="bold"))
    parts.append(Panel(Text(caution_text(result)), title="Caution", border_style="magenta"))
    return Group(*parts)


def _picks_table(result: ScanResult) -> Table:
    table = Table(title="Picks", title_justify="left")
    for column in ("horizon", "kind", "points", "gaps", "findings"):
        table.add_column(column, justify="right" if column in ("points", "gaps", "findings") else "left",
                         no_wrap=column != "horizon")
    table.add_column("first-ranked finding")
    worst = worst_by_horizon(result)
    for pick in result.picks:
        if pick.horizon in worst:
            finding, count = worst[pick.horizon]
            label = Text(f"#{finding.rank} {finding.id} ({finding.severity})", style=SEVERITY_STYLE[finding.severity])
        else:
            count, label = 0, Text("none")
        table.add_row(pick.horizon, pick.kind, str(pick.n_points), str(pick.n_gaps), str(count), label)
    if not result.picks:
        table.add_row("(no pick file given)", "", "", "", "", "")
    return table


def _findings_table(result: ScanResult) -> Table:
    table = Table(title="Findings, most important first", title_justify="left", show_lines=True)
    table.add_column("#", justify="right", no_wrap=True)
    table.add_column("severity", no_wrap=True)
    table.add_column("finding")
    for finding in result.findings:
        cell = Text()
        cell.append(finding.id, style="bold")
        cell.append(f"  {finding.horizon or '(section)'}  {location(finding)}  {time_window(finding)}  "
                    f"confidence {finding.confidence:.2f}\n")
        cell.append(finding.title)
        table.add_row(str(finding.rank), Text(finding.severity, style=SEVERITY_STYLE[finding.severity]), cell)
    return table


def _details(result: ScanResult) -> list:
    parts = []
    for finding in result.findings:
        body = Text()
        body.append(finding.title + "\n", style="bold")
        body.append(f"{location(finding)}, {time_window(finding)}; confidence {finding.confidence:.2f}, "
                    f"score {finding.score:.2f}\n")
        for key, value in finding.evidence.items():
            body.append(f"  {key}: {number(value)}\n")
        body.append("Check: ", style="bold")
        body.append(finding.advice)
        parts.append(Panel(body, title=f"#{finding.rank} {finding.id}", title_align="left",
                           border_style=SEVERITY_STYLE[finding.severity]))
    return parts
