"""The one exception type for mistakes in the user's input."""
from __future__ import annotations

from typing import Iterable

LIST_LIMIT = 8
"""Most items an error message lists before it says how many more there are."""


def listed(items: Iterable[object], limit: int = LIST_LIMIT, each: int = 40) -> str:
    """Items as "a, b, c and N more": every list in an error message stays short.

    Each item is cut to ``each`` characters, so one huge name cannot fill the line either.
    """
    shown: list[str] = []
    total = 0
    for item in items:
        total += 1
        if len(shown) < limit:
            text = str(item)
            shown.append(text if len(text) <= each else text[: each - 3] + "...")
    if total > limit:
        return f"{', '.join(shown)} and {total - limit} more"
    return ", ".join(shown)


class PitfallsInputError(Exception):
    """A bad input file, option or rules value, described in one line.

    Parameters
    ----------
    path : str
        The file (or option) the problem is in.
    where : str
        The row, trace, byte or dotted rules key, e.g. ``"row 14"``; may be empty.
    problem : str
        What is wrong, in plain words.
    fix : str
        What the user should do about it.
    """

    def __init__(self, path: str, where: str, problem: str, fix: str = "") -> None:
        self.path = str(path)
        self.where = where
        self.problem = problem
        self.fix = fix
        super().__init__(self.one_line())

    def one_line(self) -> str:
        """The message as ``file, where: problem; fix`` on a single line."""
        head = self.path if not self.where else f"{self.path}, {_cut(self.where, 200)}"
        text = f"{head}: {_cut(self.problem, 800)}"
        if self.fix:
            text += f"; {_cut(self.fix, 400)}"
        return " ".join(text.split())


def _cut(text: str, limit: int) -> str:
    """``text`` on one line, its middle left out when it is longer than ``limit`` characters."""
    text = " ".join(str(text).split())
    if len(text) <= limit:
        return text
    keep = (limit - 5) // 2
    return f"{text[:keep]} ... {text[-keep:]}"
