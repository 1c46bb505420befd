"""Run one detector on one panel the way the engine does: build the panel's context, then detect."""
from __future__ import annotations

from pitfalls.context import build_context


def run_detector(module, section, picks, rules, velocity=None):
    """``module.detect(section, context, picks, rules)`` with the context the engine would build."""
    return module.detect(section, build_context(section, picks, rules, velocity), picks, rules)
