"""The one error type the analysis layer raises for bad input."""

from __future__ import annotations

import os

#: Longest file name and reason shown whole; longer ones are shortened with an ellipsis
#: so a message stays one readable line (about 200 characters at most).
_FILE_CHARS = 80
_REASON_CHARS = 220


def printable(text: str) -> str:
    """``text`` with control characters, newlines and undecodable bytes shown escaped.

    File names and keywords come from the user's disk and may hold anything; a message
    must stay one line and must not drive the terminal.
    """
    out = []
    for ch in text:
        code = ord(ch)
        if code < 32 or code == 127 or 0x80 <= code < 0xA0 or 0xD800 <= code < 0xE000:
            out.append(ch.encode("unicode_escape", "backslashreplace").decode("ascii")
                       if code < 0xD800 else f"\\x{code & 0xFF:02x}")
        else:
            out.append(ch)
    return "".join(out)


def shorten(text: str, limit: int, *, keep_end: bool = False) -> str:
    """``text`` cut to about ``limit`` characters with an ellipsis where it was cut."""
    if len(text) <= limit:
        return text
    return "…" + text[-(limit - 1):] if keep_end else text[:limit - 1] + "…"


def show_token(token: str, limit: int = 24) -> str:
    """A token from a file, quoted and escaped; a huge one shortened with its length.

    ``'7777…' (2,000,000 characters)`` rather than two million sevens.
    """
    if len(token) <= limit:
        return repr(printable(token)) if token.isprintable() else repr(token)
    head = printable(token[:12])
    return f"'{head}…' ({len(token):,} characters)"


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
            where.append(shorten(printable(self.file), _FILE_CHARS, keep_end=True))
        if self.line is not None:
            where.append(f"line {self.line}")
        if where:
            return f"{', '.join(where)}: {shorten(printable(self.reason), _REASON_CHARS)}"
        return shorten(printable(self.reason), _REASON_CHARS)

    def __str__(self) -> str:
        return self.message


class SweepFileError(AnalysisError):
    """A sweep file (Touchstone, CSV, calibration, standards) could not be read or written."""
