"""The report's colours, shared by the terminal and the figure so a severity looks the same in both.

Severity colours mark findings only. Picks get a palette of their own that never reuses a
severity colour (``tests/report/test_colours.py`` keeps them apart by a perceptual distance),
so a drawn horizon is never read as a finding.
"""
from __future__ import annotations

SEVERITY_COLOUR = {"high": "#c4122f", "medium": "#e89f00", "low": "#2b7bb9"}
"""Hex colours of the three severities: crimson, amber, steel blue."""

PICK_COLOURS = ("#00a79d", "#8e44ad", "#7cb518", "#ff80ab", "#1b5e20", "#00e5ff", "#b39ddb")
"""Pick lines, in pick-file order (teal, purple, yellow-green, pink, dark green, cyan, lavender);
after the seventh the colours repeat with another line style."""

NEUTRAL = "#404040"
"""Predicted multiples and other guides: dark grey."""


def severity_style(severity: str) -> str:
    """The rich style of a severity: bold text in its colour."""
    return f"bold {SEVERITY_COLOUR[severity]}"
