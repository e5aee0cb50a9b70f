"""Open any sweep file Refplane understands, choosing the reader by the file's name."""

from __future__ import annotations

import os
import re

from refplane.analysis.errors import SweepFileError
from refplane.analysis.sweep import Sweep

#: File-name patterns the window's open dialog offers, in the order shown.
SWEEP_PATTERNS = ("*.s1p", "*.s2p", "*.s3p", "*.s4p", "*.snp", "*.ts", "*.csv")

_TOUCHSTONE = re.compile(r"\.(s\d+p|ts)$", re.IGNORECASE)


def is_sweep_file(path: str | os.PathLike) -> bool:
    """True when the file name looks like a sweep Refplane can open."""
    name = os.fspath(path)
    return bool(_TOUCHSTONE.search(name)) or name.lower().endswith(".csv")


def read_sweep(path: str | os.PathLike) -> Sweep:
    """Read a Touchstone (.sNp, .ts) or CSV sweep.

    Raises
    ------
    SweepFileError
        When the file is missing, unreadable, of an unknown kind, or malformed
        (the message names the file, the line, and the reason).
    """
    try:
        name = os.fspath(path)
    except TypeError:
        raise SweepFileError(f"not a file path: {path!r}") from None
    if name.lower().endswith(".csv"):
        from refplane.analysis.files import csvfile

        return csvfile.read(name)
    if _TOUCHSTONE.search(name):
        from refplane.analysis.files import touchstone

        return touchstone.read(name)
    # Say first what is wrong with the path itself (missing, a folder, a pipe …).
    from refplane.analysis.files.fileio import open_input

    open_input(name, "a sweep file").close()
    raise SweepFileError(
        "unknown kind of file; Refplane reads Touchstone (.s1p, .s2p, …, .ts) and .csv", file=name)
