"""A Touchstone file's bytes, read in bounded chunks: whole lines or blocks of whole lines.

Reading is linear in the file's size and holds at most one chunk plus one line at a time.
The file must be a regular file (:func:`refplane.analysis.files.fileio.open_input`); reading
stops with a one-line error at the first NUL byte (a binary file), at a line longer than
:data:`~refplane.analysis.files.touchstone.header.MAX_LINE`, and beyond
:data:`~refplane.analysis.files.fileio.MAX_INPUT_BYTES`. A UTF-8 byte-order mark at the start is
dropped; a file whose line ends are bare carriage returns (old Macintosh text) is read as
if they were line feeds.
"""

from __future__ import annotations

import os

import numpy as np

from refplane.analysis.errors import SweepFileError
from refplane.analysis.files.fileio import MAX_INPUT_BYTES, open_input, path_problem, too_big
from refplane.analysis.files.touchstone.header import MAX_LINE

#: Bytes read at a time (2 MiB): large enough for numpy to work in bulk, small enough that
#: the text is never held whole.
CHUNK = 1 << 21


def line_ends(data: bytes) -> int:
    """How many line feeds ``data`` holds; for a block, numpy's vectorised count, about five
    times quicker than ``bytes.count``."""
    if len(data) < 1 << 16:
        return data.count(b"\n")
    return int(np.count_nonzero(np.frombuffer(data, dtype=np.uint8) == 10))


class LineTooLong(Exception):
    """A line is longer than MAX_LINE (the careful pass says where)."""


class LinesUncounted(Exception):
    """A NUL byte was met after blocks whose lines were not counted (the careful pass,
    which counts them, says at which line)."""


class Source:
    """Sequential access to one file's bytes; use as a context manager."""

    def __init__(self, name: str):
        self.name = name
        self.handle = open_input(name, "a Touchstone file")
        self.buf = b""
        self.total = 0
        self.lines_before = 0  # line ends in the bytes handed out so far
        self.cr_only: bool | None = None
        self.at_end = False

    @property
    def size(self) -> int:
        """The file's size in bytes when opened."""
        return os.fstat(self.handle.fileno()).st_size

    def __enter__(self) -> "Source":
        return self

    def __exit__(self, *exc) -> None:
        self.handle.close()

    def _more(self) -> bytes:
        if self.at_end:
            return b""
        try:
            data = self.handle.read(CHUNK)
        except OSError as exc:
            raise SweepFileError(f"cannot read the file: {path_problem(exc)}",
                                 file=self.name) from None
        if not data:
            self.at_end = True
            return b""
        if self.cr_only is None:
            if data.startswith(b"\xef\xbb\xbf"):
                data = data[3:]
            self.cr_only = b"\r" in data and b"\n" not in data
        if self.cr_only:
            data = data.replace(b"\r", b"\n")
        self.total += len(data)
        if self.total > MAX_INPUT_BYTES:
            raise SweepFileError(too_big(), file=self.name)
        nul = data.find(b"\x00")
        if nul >= 0:
            if self.lines_before is None:
                raise LinesUncounted
            line = self.lines_before + self.buf.count(b"\n") + data.count(b"\n", 0, nul) + 1
            raise SweepFileError("the file holds NUL bytes: it looks like a binary file, not a "
                                 "Touchstone text file", file=self.name, line=line)
        return data

    def readline(self) -> bytes:
        """The next line with its line end (the last may lack one); b"" at the end."""
        start = 0
        while True:
            i = self.buf.find(b"\n", start)
            if i >= 0:
                line, self.buf = self.buf[:i + 1], self.buf[i + 1:]
                self.lines_before += 1
                return line
            if len(self.buf) > MAX_LINE:
                raise LineTooLong
            start = len(self.buf)
            more = self._more()
            if not more:
                line, self.buf = self.buf, b""
                if line:
                    self.lines_before += 1
                return line
            self.buf += more

    def block(self, count_lines: bool = True) -> bytes:
        """The next run of whole lines, about one chunk long; b"" at the end.

        With ``count_lines`` false the line ends are not counted (a whole-file pass over
        the bytes saved in the bulk pass, which never names a line); ``lines_before`` is
        then None from here on.
        """
        pieces = [self.buf]
        size = len(self.buf)
        self.buf = b""
        while True:
            more = self._more()
            if not more:
                break
            cut = more.rfind(b"\n") + 1
            if cut:
                # A view, not a slice: the join below is then the block's only copy.
                pieces.append(memoryview(more)[:cut])
                self.buf = more[cut:]
                break
            pieces.append(more)
            size += len(more)
            if size > MAX_LINE:
                raise LineTooLong
        data = pieces[0] if len(pieces) == 1 else b"".join(pieces)
        if not count_lines:
            self.lines_before = None
        elif self.lines_before is not None:
            self.lines_before += line_ends(data)
        return data
