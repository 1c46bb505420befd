"""Read an accepted-findings file (``--accepted FILE.yaml``): findings a reviewer has looked at and accepted.

The file is YAML::

    accepted:
      - fingerprint: 3f2a9c01b7e4      # from the report (JSON "fingerprint", or --write-accepted)
        id: crosscut.hydrate-like      # optional, for the reader; checked against the finding
        horizon: null                  # optional, for the reader
        reason: mapped separately as the hydrate stability base
        by: A. Reviewer
        date: 2026-12-02

``fingerprint``, ``reason``, ``by`` and ``date`` are required (a date is kept as written); ``id``, ``horizon``, ``traces``,
``inlines``, ``xlines``, ``twt_ms`` and ``severity`` may be kept for the reader. Anything else,
a missing or empty required value, or a fingerprint given twice stops the scan with the entry
named (exit 2). The file is read with the project's safe YAML reader (no aliases, no duplicate keys) and never
changed.
"""
from __future__ import annotations

import datetime
from dataclasses import dataclass
from typing import Any

from pitfalls.errors import PitfallsInputError
from pitfalls.io.yaml_safe import read_yaml

REQUIRED = ("fingerprint", "reason", "by", "date")
OPTIONAL = ("id", "horizon", "traces", "inlines", "xlines", "twt_ms", "severity")


@dataclass(frozen=True)
class AcceptedEntry:
    """One accepted finding."""

    fingerprint: str
    reason: str
    by: str
    date: str
    """The date as written."""
    finding_id: str | None = None
    horizon: str | None = None
    position: int = 0
    """1-based entry number in the file, for messages."""

    def as_dict(self) -> dict[str, Any]:
        return {"fingerprint": self.fingerprint, "id": self.finding_id, "horizon": self.horizon,
                "reason": self.reason, "by": self.by, "date": self.date}


def _load_yaml(path: str) -> Any:
    _, document = read_yaml(path, what="accepted-findings file")
    return document


def _text(value: Any) -> str | None:
    if isinstance(value, (datetime.date, datetime.datetime)):
        return value.isoformat()[:10]
    if isinstance(value, bool) or value is None:
        return None
    if isinstance(value, (str, int, float)):
        return str(value).strip()
    return None


def read_accepted(path: str) -> tuple[AcceptedEntry, ...]:
    """The entries of an accepted-findings file; see the module docstring.

    Raises
    ------
    PitfallsInputError
        For an unreadable file, a bad layout or a bad entry (named by its number and fingerprint).
    """
    document = _load_yaml(path)
    if document is None:
        return ()
    if not isinstance(document, dict) or set(document) - {"accepted"}:
        raise PitfallsInputError(path, "", "must hold one key, 'accepted', with a list of entries",
                                 "start from the file written by --write-accepted")
    entries = document.get("accepted")
    if entries is None:
        return ()
    if not isinstance(entries, list):
        raise PitfallsInputError(path, "accepted", "must be a list of entries", "put '- fingerprint: ...' items under it")
    result: list[AcceptedEntry] = []
    seen: dict[str, int] = {}
    for number, entry in enumerate(entries, start=1):
        label = f"entry {number}"
        if not isinstance(entry, dict):
            raise PitfallsInputError(path, label, "is not a mapping", "give fingerprint, reason, by and date")
        if isinstance(entry.get("fingerprint"), str):
            label += f" (fingerprint {entry['fingerprint']})"
        unknown = sorted(str(key) for key in entry if key not in REQUIRED + OPTIONAL)
        if unknown:
            raise PitfallsInputError(path, label, f"has an unknown key {unknown[0]!r}",
                                     "use only " + ", ".join(REQUIRED + OPTIONAL))
        values = {}
        for key in REQUIRED:
            text = _text(entry.get(key))
            if not text:
                raise PitfallsInputError(path, label, f"has no {key}" if key not in entry else f"has an empty or unusable {key}",
                                         f"give the {key} as text" + (" from the report" if key == "fingerprint" else ""))
            values[key] = text
        if values["fingerprint"] in seen:
            raise PitfallsInputError(path, label, f"repeats the fingerprint of entry {seen[values['fingerprint']]}",
                                     "keep one entry per finding")
        seen[values["fingerprint"]] = number
        finding_id = entry.get("id")
        horizon = entry.get("horizon")
        if finding_id is not None and not isinstance(finding_id, str):
            raise PitfallsInputError(path, label, "has an id that is not text", "copy the id from the report or leave it out")
        if horizon is not None and not isinstance(horizon, str):
            horizon = str(horizon)
        result.append(AcceptedEntry(values["fingerprint"], values["reason"], values["by"], values["date"],
                                    finding_id, horizon, number))
    return tuple(result)
