"""The one error type the analysis layer raises for bad input."""

from __future__ import annotations

import os


class AnalysisError(ValueError):
    """Bad input to the analysis layer, with a plain reason a person can act on.

    Parameters
    ----------
    reason : str
        What is wrong, in plain words ("a 2-port row needs 9 numbers, found 7").
    file : str or os.PathLike, optional
        The file the input came from, when there is one.
    line : int, optional
        The 1-based line number inside ``file``, when one applies.

    Notes
    -----
    ``str(err)`` gives the single line the command line prints and the window shows:
    ``file, line 14: reason``.
    """

    def __init__(self, reason: str, *, file: str | os.PathLike | None = None, line: int | None = None):
        self.reason = str(reason)
        self.file = os.fspath(file) if file is not None else None
        self.line = line
        super().__init__(self.message)

    @property
    def message(self) -> str:
        """The one-line message: file, line and reason, as far as they are known."""
        where = []
        if self.file:
            where.append(self.file)
        if self.line is not None:
            where.append(f"line {self.line}")
        if where:
            return f"{', '.join(where)}: {self.reason}"
        return self.reason

    def __str__(self) -> str:
        return self.message


class SweepFileError(AnalysisError):
    """A sweep file (Touchstone, CSV, calibration, standards) could not be read or written."""
