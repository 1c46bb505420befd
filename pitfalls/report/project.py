"""The project report: a summary per section, the ties measured, then the findings ranked across
the project, each naming its section; in JSON (schema ``pitfalls-project/1``), Markdown and
rich renderables for the terminal. Nothing here writes; the CLI does."""
from __future__ import annotations

from typing import Any

from rich.console import Group
from rich.panel import Panel
from rich.table import Table
from rich.text import Text

from pitfalls import __version__
from pitfalls.project import ProjectResult, SectionOutcome
from pitfalls.report.json_report import _plain, finding_dict
from pitfalls.report.text import CAUTION, NO_FINDINGS, SCOPE, location, number, time_window

SCHEMA = "pitfalls-project/1"
SEVERITIES = ("high", "medium", "low")
SEVERITY_STYLE = {"high": "bold red", "medium": "yellow", "low": "cyan"}


def project_caution(result: ProjectResult) -> str:
    """The caution every project report ends with: what the tool is, its scope, where the depths come
    from, and, when nothing was found, that this is not a clearance."""
    parts = [CAUTION, SCOPE, "Depths in each section's findings come from the velocity function its scan states "
             "(the rules' unless the project file names one); a different velocity moves every depth."]
    if not result.findings:
        parts.append(NO_FINDINGS)
    return " ".join(parts)


def _counts(result: ProjectResult, label: str | None = None) -> dict[str, int]:
    return {severity: sum(1 for item in result.findings if item.finding.severity == severity
                          and (label is None or item.section == label)) for severity in SEVERITIES}


def _detector_failures(outcome: SectionOutcome) -> list[str]:
    if outcome.result is None:
        return []
    return [f"{run.name}: {run.message}" for run in outcome.result.failed]


def section_entry(result: ProjectResult, outcome: SectionOutcome) -> dict[str, Any]:
    """One section's line of the summary: path as written, status, findings by severity, time."""
    scan = outcome.result
    error = outcome.error or "; ".join(_detector_failures(outcome)) or None
    return {
        "path": outcome.label,
        "status": outcome.status,
        "summary": _counts(result, outcome.label),
        "error": error,
        "geometry": scan.section.geometry if scan is not None else None,
        "sha256": scan.section.sha256 if scan is not None else None,
        "n_traces": scan.section.n_traces if scan is not None else None,
        "picks": [p.horizon for p in scan.picks] if scan is not None else [],
        "detectors_failed": [run.name for run in scan.failed] if scan is not None else [],
        "seconds": round(outcome.seconds, 4),
    }


def tie_entry(tie) -> dict[str, Any]:
    return _plain({
        "section_a": tie.section_a, "section_b": tie.section_b, "cdp_a": tie.cdp_a, "cdp_b": tie.cdp_b,
        "location_a": tie.location_a, "location_b": tie.location_b, "x_m": tie.x_m, "y_m": tie.y_m,
        "seafloor_twt_ms_a": tie.seafloor_twt_ms_a, "seafloor_twt_ms_b": tie.seafloor_twt_ms_b,
        "seafloor_shift_ms": tie.seafloor.lag_ms, "seafloor_phase_deg": tie.seafloor.phase_deg,
        "seafloor_correlation": tie.seafloor.correlation, "dominant_frequency_hz": tie.dominant_frequency_hz,
        "horizons_compared": list(tie.horizons_compared), "horizons_mistied": list(tie.horizons_mistied),
    })


def report_dict(result: ProjectResult) -> dict[str, Any]:
    """The whole project report as the contract lays it out (``pitfalls-project/1``)."""
    return {
        "schema": SCHEMA,
        "tool_version": __version__,
        "project": result.project_path,
        "rules": {"path": result.rules_path, "sha256": result.rules_sha256},
        "sections": [section_entry(result, outcome) for outcome in result.sections],
        "ties": [tie_entry(tie) for tie in result.ties],
        "findings": [{"section": item.section, **finding_dict(item.finding)} for item in result.findings],
        "summary": {**_counts(result), "sections": len(result.sections),
                    "sections_failed": sum(outcome.status == "failed" for outcome in result.sections),
                    "ties": len(result.ties)},
        "caution": project_caution(result),
    }


def _cell(text: str) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


def _incomplete_lines(result: ProjectResult) -> list[str]:
    lines = []
    for outcome in result.sections:
        if outcome.status == "failed":
            lines.append(f"{outcome.label}: could not be scanned: {outcome.error}")
        lines += [f"{outcome.label}: detector failed: {text}" for text in _detector_failures(outcome)]
    return lines


def render_markdown(result: ProjectResult) -> str:
    """The project report as one Markdown document."""
    counts = _counts(result)
    lines = ["# pitfalls project", ""]
    incomplete = _incomplete_lines(result)
    if incomplete:
        lines += ["> **INCOMPLETE: these sections were not fully checked.**", ">"]
        lines += [f"> - {_cell(text)}" for text in incomplete]
        lines.append("")
    lines += [f"- Project: {_cell(result.project_path)}", f"- Rules: {_cell(result.rules_path)}",
              f"- Sections: {len(result.sections)}, ties measured: {len(result.ties)}",
              f"- Findings: {counts['high']} high, {counts['medium']} medium, {counts['low']} low", ""]
    lines += ["## Sections", "", "| section | status | geometry | picks | high | medium | low | seconds |",
              "|---|---|---|---:|---:|---:|---:|---:|"]
    for outcome in result.sections:
        entry = section_entry(result, outcome)
        summary = entry["summary"]
        lines.append(f"| {_cell(outcome.label)} | {outcome.status} | {entry['geometry'] or '-'} | {len(entry['picks'])} | "
                     f"{summary['high']} | {summary['medium']} | {summary['low']} | {outcome.seconds:.2f} |")
    lines += ["", "## Ties", ""]
    if result.ties:
        lines += ["| section a | section b | x, y (m) | seafloor shift | phase | correlation | horizons | mis-tied |",
                  "|---|---|---|---:|---:|---:|---:|---:|"]
        for tie in result.ties:
            lines.append(f"| {_cell(tie.section_a)} {tie.location_a} | {_cell(tie.section_b)} {tie.location_b} | "
                         f"{tie.x_m:.1f}, {tie.y_m:.1f} | {number(tie.seafloor.lag_ms)} ms | "
                         f"{number(tie.seafloor.phase_deg)} deg | {number(tie.seafloor.correlation)} | "
                         f"{len(tie.horizons_compared)} | {', '.join(tie.horizons_mistied) or '-'} |")
    else:
        lines.append("No two sections cross (or none has CDP X/Y in its headers).")
    lines += ["", "## Findings, most important first", ""]
    if not result.findings:
        lines += [NO_FINDINGS, ""]
    else:
        lines += ["| # | severity | id | section | horizon | where | twt | confidence | what |",
                  "|---:|---|---|---|---|---|---|---:|---|"]
        for item in result.findings:
            f = item.finding
            lines.append(f"| {f.rank} | {f.severity} | `{f.id}` | {_cell(item.section)} | {_cell(f.horizon or '-')} | "
                         f"{location(f)} | {time_window(f)} | {f.confidence:.2f} | {_cell(f.title)} |")
        lines.append("")
        for item in result.findings:
            f = item.finding
            lines += [f"### {f.rank}. `{f.id}` ({f.severity}) on {_cell(item.section)}", "", f.title, "",
                      f"{location(f)}, {time_window(f)}; confidence {f.confidence:.2f}, score {f.score:.2f}.", ""]
            lines += [f"- {key}: {number(value)}" for key, value in f.evidence.items()]
            lines += ["", f"**Check:** {f.advice}", ""]
    lines += ["## Caution", "", project_caution(result), ""]
    return "\n".join(lines)


def render_terminal(result: ProjectResult) -> Group:
    """The project report as rich renderables."""
    parts: list = []
    incomplete = _incomplete_lines(result)
    if incomplete:
        parts.append(Panel(Text("\n".join(incomplete) + "\nThis project run is incomplete: its findings do not "
                                "clear these sections.", style="bold red"), title="INCOMPLETE", border_style="red"))
    counts = _counts(result)
    header = Text(f"Project: {result.project_path}\nRules: {result.rules_path}\n"
                  f"Sections: {len(result.sections)}, ties measured: {len(result.ties)}, ran on {result.runner}\n"
                  f"Findings: {counts['high']} high, {counts['medium']} medium, {counts['low']} low")
    parts.append(Panel(header, title="pitfalls project", border_style="blue"))
    table = Table(title="Sections", title_justify="left")
    for column in ("section", "status", "geometry", "picks", "high", "medium", "low", "seconds"):
        table.add_column(column, justify="left" if column in ("section", "status", "geometry") else "right")
    for outcome in result.sections:
        entry = section_entry(result, outcome)
        summary = entry["summary"]
        status = Text(outcome.status, style="bold red" if outcome.status == "failed" or entry["detectors_failed"] else "")
        table.add_row(outcome.label, status, entry["geometry"] or "-", str(len(entry["picks"])),
                      str(summary["high"]), str(summary["medium"]), str(summary["low"]), f"{outcome.seconds:.2f}")
    parts.append(table)
    if result.ties:
        ties = Table(title="Ties (seafloor shift and phase of b against a)", title_justify="left")
        for column in ("section a", "section b", "shift ms", "phase deg", "corr.", "horizons", "mis-tied"):
            ties.add_column(column, justify="left" if column.startswith("section") else "right")
        for tie in result.ties:
            ties.add_row(f"{tie.section_a} {tie.location_a}", f"{tie.section_b} {tie.location_b}",
                         number(tie.seafloor.lag_ms), number(tie.seafloor.phase_deg), number(tie.seafloor.correlation),
                         str(len(tie.horizons_compared)), ", ".join(tie.horizons_mistied) or "-")
        parts.append(ties)
    if result.findings:
        findings = Table(title="Findings across the project, most important first", title_justify="left", show_lines=True)
        findings.add_column("#", justify="right", no_wrap=True)
        findings.add_column("severity", no_wrap=True)
        findings.add_column("finding")
        for item in result.findings:
            f = item.finding
            cell = Text()
            cell.append(f.id, style="bold")
            cell.append(f"  {item.section}  {f.horizon or '(section)'}  {location(f)}  {time_window(f)}  "
                        f"confidence {f.confidence:.2f}\n")
            cell.append(f.title)
            findings.add_row(str(f.rank), Text(f.severity, style=SEVERITY_STYLE[f.severity]), cell)
        parts.append(findings)
    else:
        parts.append(Text(NO_FINDINGS))
    parts.append(Panel(Text(project_caution(result)), title="Caution", border_style="magenta"))
    return Group(*parts)
