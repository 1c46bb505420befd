"""Accepted findings on the command line: --write-accepted, --accepted, the gate, stale and bad entries,
and how much of the report the terminal shows (--detail)."""
import json

import yaml

from test_cli import assert_one_line_error, line, sha256, skipped_picks  # noqa: F401  (fixtures)
from test_cli import pitfalls as run_cli


def pitfalls(*args):
    """The scan with the one detector these findings come from (the cycle skip), which keeps it quick."""
    return run_cli(*args, "--only", "pick_consistency")


GATE_OFF = ("--gate", "off")


def scan_json(*args):
    result = pitfalls("scan", *args, "--format", "json", *GATE_OFF)
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout)


def accept(text, fingerprint, reason="checked on the section", by="Reviewer A", date="2026-12-02"):
    """The written file with the entry of ``fingerprint`` uncommented and filled in."""
    lines, inside = [], False
    for row in text.splitlines():
        if row.startswith("  # - fingerprint: "):
            inside = row.endswith(fingerprint)
        elif not row.startswith("  #   "):
            inside = False
        if inside:
            row = "  " + row[4:]
            row = row.replace("reason: ''", f"reason: {reason}").replace("by: ''", f"by: {by}")
            row = row.replace("date: ''", f"date: '{date}'")
        lines.append(row)
    return "\n".join(lines) + "\n"


def test_accepted_findings_round_trip(line, skipped_picks, tmp_path):
    """Write the starting file (every finding commented out), accept the high cycle skip, scan again:
    it is shown as accepted, no longer holds the gate, and written back uncommented."""
    starting = tmp_path / "accepted.yaml"
    first = pitfalls("scan", line, "--picks", skipped_picks, "--write-accepted", starting, "--quiet")
    assert first.returncode == 1, first.stderr  # the cycle skip is high
    text = starting.read_text()
    assert yaml.safe_load(text) == {"accepted": None}  # everything commented out
    report = scan_json(line, "--picks", skipped_picks)
    (skip,) = [f for f in report["findings"] if f["id"] == "pick.cycle-skip"]
    assert skip["fingerprint"] in text and skip["accepted"] is None

    reviewed = tmp_path / "reviewed.yaml"
    reviewed.write_text(accept(text, skip["fingerprint"]))
    before = sha256(reviewed)
    report = scan_json(line, "--picks", skipped_picks, "--accepted", reviewed)
    (skip_again,) = [f for f in report["findings"] if f["id"] == "pick.cycle-skip"]
    assert skip_again["fingerprint"] == skip["fingerprint"]
    assert skip_again["accepted"] == {"reason": "checked on the section", "by": "Reviewer A", "date": "2026-12-02"}
    assert report["summary"]["accepted"] == 1 and report["stale_accepted"] == []
    gated = pitfalls("scan", line, "--picks", skipped_picks, "--accepted", reviewed, "--quiet")
    assert gated.returncode == 0, gated.stderr  # the only high finding is accepted
    terminal = pitfalls("scan", line, "--picks", skipped_picks, "--accepted", reviewed).stdout
    assert "accepted" in terminal and "Reviewer A" in terminal

    rewritten = tmp_path / "rewritten.yaml"
    pitfalls("scan", line, "--picks", skipped_picks, "--accepted", reviewed, "--write-accepted", rewritten, "--quiet")
    entries = yaml.safe_load(rewritten.read_text())["accepted"]
    assert [(e["fingerprint"], e["reason"], e["by"], e["date"]) for e in entries] == [
        (skip["fingerprint"], "checked on the section", "Reviewer A", "2026-12-02")]
    assert sha256(reviewed) == before  # the input file is never changed


def test_an_entry_that_matches_nothing_is_reported_stale(line, skipped_picks, tmp_path):
    accepted = tmp_path / "accepted.yaml"
    accepted.write_text("accepted:\n  - fingerprint: 0123456789ab\n    id: multiple.seafloor\n"
                        "    reason: old\n    by: Reviewer B\n    date: '2025-01-01'\n")
    report = scan_json(line, "--picks", skipped_picks, "--accepted", accepted)
    assert [entry["fingerprint"] for entry in report["stale_accepted"]] == ["0123456789ab"]
    assert report["summary"]["accepted"] == 0
    terminal = pitfalls("scan", line, "--picks", skipped_picks, "--accepted", accepted, *GATE_OFF).stdout
    assert "Stale accepted" in terminal and "0123456789ab" in " ".join(terminal.split())


def test_bad_entries_stop_the_scan_naming_the_entry(line, skipped_picks, tmp_path):
    cases = {
        "no-reason": ("accepted:\n  - fingerprint: abc\n    by: A\n    date: '2026-01-01'\n", "entry 1", "reason"),
        "unknown-key": ("accepted:\n  - {fingerprint: abc, reason: r, by: A, date: '2026', colour: red}\n",
                        "entry 1 (fingerprint abc)", "colour"),
        "twice": ("accepted:\n  - {fingerprint: abc, reason: r, by: A, date: d}\n"
                  "  - {fingerprint: abc, reason: r, by: B, date: d}\n", "entry 2", "entry 1"),
        "not-a-list": ("accepted: abc\n", "accepted", "list"),
        "not-a-mapping": ("accepted:\n  - abc\n", "entry 1", "mapping"),
    }
    for name, (text, *fragments) in cases.items():
        path = tmp_path / f"{name}.yaml"
        path.write_text(text)
        assert_one_line_error(pitfalls("scan", line, "--picks", skipped_picks, "--accepted", path),
                              f"{name}.yaml", *fragments)


def test_terminal_shows_evidence_panels_for_medium_and_above_unless_detail_all(line, skipped_picks):
    report = scan_json(line, "--picks", skipped_picks)
    top = [f for f in report["findings"] if f["severity"] in ("high", "medium")]
    low = [f for f in report["findings"] if f["severity"] == "low"]
    assert top, "the scenario has a high finding"
    short = pitfalls("scan", line, "--picks", skipped_picks, *GATE_OFF).stdout
    full = pitfalls("scan", line, "--picks", skipped_picks, *GATE_OFF, "--detail", "all").stdout
    for finding in top:
        assert f"#{finding['rank']} {finding['id']}" in short
    assert short.count("fingerprint ") == len(top)
    assert full.count("fingerprint ") == len(report["findings"])
    if low:
        assert "--detail all" in short
