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
    split_evidence,
    time_window,
    worst_by_horizon,
)

SEVERITY_STYLE = {severity: severity_style(severity) for severity in ("high", "medium", "low")}
"""The severity colours of the figure (``pitfalls.report.colours``), so both read alike."""


def render(result: ScanResult, detail: str = "top") -> Group:
    """Header, failed detectors, the picks, the ranked findings, the evidence panels, the caution.

    ``detail="top"`` gives an evidence panel to the findings at medium and above that no reviewer
    has accepted; ``"all"`` to every finding.
    """
    parts: list = []
    if result.failed:
        failed = "\n".join(f"{run.name}: {run.message}" for run in result.failed)
        parts.append(Panel(Text(failed + "\nThis scan is incomplete: its findings do not clear the picks.",
                                style="bold red"), title="DETECTOR FAILED", border_style="red"))
    header = Text("\n".join(section_lines(result)))
    ran = ", ".join(f"{run.name} {run.status} ({run.seconds:.2f} s)" for run in result.detectors)
    header.append(f"\nDetectors: {ran}")
    summary = {s: sum(f.severity == s and f.accepted is None for f in result.findings) for s in ("high", "medium", "low")}
    header.append(f"\nFindings: {summary['high']} high, {summary['medium']} medium, {summary['low']} low")
    n_accepted = sum(f.accepted is not None for f in result.findings)
    if n_accepted:
        header.append(f", {n_accepted} accepted by a reviewer (not gated)")
    if result.stale_accepted:
        stale = "; ".join(f"{entry['fingerprint']} ({entry.get('id') or 'no id'}, by {entry['by']})"
                          for entry in result.stale_accepted)
        header.append(f"\nStale accepted entries (match no finding now; remove them): {stale}")
    parts.append(Panel(header, title="pitfalls scan", border_style="blue"))
    parts.append(_picks_table(result))
    if result.findings:
        parts.append(_findings_table(result, detail))
        shown = [f for f in result.findings
                 if detail == "all" or (f.severity in ("high", "medium") and f.accepted is None)]
        parts.extend(_details(shown, every_member=detail == "all"))
        hidden = len(result.findings) - len(shown)
        if hidden:
            parts.append(Text(f"{hidden} more finding{'s' if hidden != 1 else ''} (low or accepted) in the table above; "
                              "--detail all shows their evidence."))
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


def _findings_table(result: ScanResult, detail: str = "all") -> Table:
    """One row per finding; the sentence only for findings at medium and above unless ``detail="all"``."""
    table = Table(title="Findings, most important first", title_justify="left", show_lines=detail == "all")
    table.add_column("#", justify="right", no_wrap=True)
    table.add_column("severity", no_wrap=True)
    table.add_column("finding")
    for finding in result.findings:
        cell = Text()
        cell.append(finding.id, style="bold")
        cell.append(f"  {finding.horizon or '(section)'}  {location(finding)}  {time_window(finding)}  "
                    f"confidence {finding.confidence:.2f}")
        if detail == "all" or finding.severity != "low":
            cell.append("\n" + finding.title)
        severity = Text(finding.severity, style=SEVERITY_STYLE[finding.severity])
        if finding.accepted is not None:
            severity = Text(f"{finding.severity}\naccepted", style="dim")
            cell.append(f"\nAccepted by {finding.accepted['by']} on {finding.accepted['date']}: {finding.accepted['reason']}",
                        style="dim")
        table.add_row(str(finding.rank), severity, cell)
    return table


def _details(findings, every_member: bool = True) -> list:
    """One evidence panel per finding; a joined finding shows its members' numbers only with ``every_member``
    (its advice names every member either way)."""
    parts = []
    for finding in findings:
        body = Text()
        body.append(finding.title + "\n", style="bold")
        body.append(f"{location(finding)}, {time_window(finding)}; confidence {finding.confidence:.2f}, "
                    f"score {finding.score:.2f}; fingerprint {finding.fingerprint}\n")
        if len(finding.detectors) > 1:
            body.append(f"Found by {', '.join(finding.detectors)}\n")
        measured, limits = split_evidence(finding.evidence)
        members = tuple(finding.evidence.get("merged_ids", ()))
        if not every_member and members:
            measured = [(key, value) for key, value in measured if not key.startswith(tuple(m + "." for m in members))]
            limits = [(key, value) for key, value in limits if not key.startswith(tuple(m + "." for m in members))]
        if measured:  # one wrapped paragraph: key value; key value; ...
            body.append("Evidence: " + "; ".join(f"{key} {number(value)}" for key, value in measured) + "\n")
        if not every_member and members:
            body.append(f"  (the evidence of {', '.join(members)}: --detail all)\n", style="dim")
        if limits:
            body.append("Limits and assumptions from the rules (not measured): "
                        + ", ".join(f"{key} {number(value)}" for key, value in limits) + "\n", style="dim")
        body.append("Check: ", style="bold")
        body.append(finding.advice)
        parts.append(Panel(body, title=f"#{finding.rank} {finding.id}", title_align="left",
                           border_style=SEVERITY_STYLE[finding.severity]))
    return parts
