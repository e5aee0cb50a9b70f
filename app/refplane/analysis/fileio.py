"""Safe writing: never overwrite without being asked, never leave half a file behind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Callable

from refplane.analysis.errors import SweepFileError


def _mode_for(target: Path) -> int:
    try:
        return target.stat().st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def write_atomic(path: str | os.PathLike, write: Callable[[str], object], *,
                 overwrite: bool = False, suffix: str = ".part") -> Path:
    """Write a file through a temporary file in the same folder, then rename it into place.

    Parameters
    ----------
    path : path-like
        Destination.
    write : callable
        Called with the temporary file's path; writes the whole content there. Returning
        ``False`` means it failed (the destination is then left as it was).
    overwrite : bool
        Replace an existing file. Without it an existing file raises :class:`SweepFileError`
        and is left untouched.
    suffix : str
        Ending of the temporary file's name (some writers choose the format by it).

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
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix, dir=folder)
    os.close(fd)
    try:
        # mkstemp makes the file private (0600) and os.replace keeps that mode; give the
        # result the mode of the file it replaces, or the usual mode for a new file.
        os.chmod(tmp, _mode_for(target))
        if write(tmp) is False:
            raise SweepFileError("the file could not be written", file=target)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return target


def write_text_atomic(path: str | os.PathLike, text: str, *, overwrite: bool = False) -> Path:
    """Write ``text`` (UTF-8, ``\\n`` line ends) to ``path`` atomically; see :func:`write_atomic`."""

    def write(tmp: str) -> None:
        with open(tmp, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())

    return write_atomic(path, write, overwrite=overwrite)


def read_json(path: str | os.PathLike, what: str):
    """Read a JSON file of ours; ``what`` names its kind for messages ("a standards file").

    Raises
    ------
    SweepFileError
        Missing or unreadable file, or invalid JSON (with the line of the fault).
    """
    import json

    fname = os.fspath(path)
    try:
        text = Path(fname).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise SweepFileError("no such file", file=fname) from None
    except IsADirectoryError:
        raise SweepFileError(f"this is a folder, not {what}", file=fname) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise SweepFileError(f"cannot read the file ({exc})", file=fname) from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise SweepFileError(f"not valid JSON: {exc.msg}", file=fname, line=exc.lineno) from None
