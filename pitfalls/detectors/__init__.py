"""The detectors, in the fixed order the scan runs them.

Each is a module with ``NAME``, ``FAMILY``, ``KINDS``, ``RULE_KEYS`` and
``detect(block, context, picks, rules) -> list[Finding]`` (the panel, its shared
:class:`~pitfalls.context.Context`, its picks, the rules). To add one, import it here and add it
to ``DETECTORS``; DEVELOPERS.md walks through the steps.

``PROJECT_CHECKS`` are checks between sections (ties at line crossings): they have the same
``NAME``, ``FAMILY``, ``KINDS`` and ``RULE_KEYS``, but the project run calls them, never the
single-section scan.
"""
from __future__ import annotations

from types import ModuleType

from pitfalls.detectors import contacts, crosscut, misties, multiples, overburden, pick_consistency

DETECTORS: tuple[ModuleType, ...] = (
    multiples,
    contacts,
    crosscut,
    overburden,
    pick_consistency,
)
BY_NAME: dict[str, ModuleType] = {module.NAME: module for module in DETECTORS}
PROJECT_CHECKS: tuple[ModuleType, ...] = (
    misties,
)


def rule_keys() -> dict[str, dict[str, tuple]]:
    """Every detector's rules section and its keys, for the rules loader."""
    return {module.NAME: dict(module.RULE_KEYS) for module in DETECTORS + PROJECT_CHECKS}


def finding_kinds() -> dict[str, tuple[str, tuple[str, str, str]]]:
    """Every finding id any detector can emit -> (detector name, (meaning, why it matters, what to check))."""
    kinds: dict[str, tuple[str, tuple[str, str, str]]] = {}
    for module in DETECTORS + PROJECT_CHECKS:
        for kind, text in module.KINDS.items():
            finding_id = kind if "." in kind else f"{module.FAMILY}.{kind}"
            kinds[finding_id] = (module.NAME, text)
    return dict(sorted(kinds.items()))
