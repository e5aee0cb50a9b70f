"""Safe writing: never overwrite without being asked, never leave half a file behind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from refplane.analysis.errors import SweepFileError


def _mode_for(target: Path) -> int:
    try:
        return target.stat().st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def write_text_atomic(path: str | os.PathLike, text: str, *, overwrite: bool = False) -> Path:
    """Write ``text`` to ``path`` through a temporary file in the same folder, then rename.

    Parameters
    ----------
    path : path-like
        Destination.
    text : str
        Content, written as UTF-8 with ``\\n`` line ends.
    overwrite : bool
        Replace an existing file. Without it an existing file raises :class:`SweepFileError`
        and is left untouched.

    Returns
    -------
    Path
        The path written.
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise SweepFileError("the file exists already; refusing to overwrite it", file=target)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise SweepFileError(f"the folder {folder} does not exist", file=target)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=folder)
    try:
        # mkstemp makes the file private (0600) and os.replace keeps that mode; give the
        # result the mode of the file it replaces, or the usual mode for a new file.
        os.chmod(tmp, _mode_for(target))
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return target
