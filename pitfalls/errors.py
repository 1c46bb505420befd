"""The one exception type for mistakes in the user's input."""
from __future__ import annotations


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
        head = self.path if not self.where else f"{self.path}, {self.where}"
        text = f"{head}: {self.problem}"
        if self.fix:
            text += f"; {self.fix}"
        return " ".join(text.split())
