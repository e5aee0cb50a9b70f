"""Safe writing: never overwrite without being asked, never leave half a file behind."""

from __future__ import annotations

import errno
import os
import stat
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


def check_output(path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Check, before any work, that ``path`` can be written: not an existing file unless
    ``overwrite``, its folder present and writable. Raises :class:`SweepFileError` naming
    ``path`` with a short reason; returns it as a Path."""
    target = Path(path)
    try:
        exists = target.exists()
    except (OSError, ValueError) as exc:
        raise SweepFileError(f"cannot write here: {path_problem(exc)}", file=target) from None
    if target.is_dir():
        raise SweepFileError("this is a folder; name a file to write", file=target)
    if exists and not overwrite:
        raise SweepFileError("the file exists already; refusing to overwrite it", file=target)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise SweepFileError(f"the folder {folder} does not exist", file=target)
    if not os.access(folder, os.W_OK):
        raise SweepFileError(f"the folder {folder} is read-only (no permission to write)",
                             file=target)
    return target


def _write_problem(exc: BaseException | None, folder: Path) -> str:
    """Why a write failed, in a few words (never a library's own text)."""
    if isinstance(exc, OSError) and exc.errno is not None:
        return path_problem(exc)
    try:
        if os.statvfs(folder).f_bavail == 0:
            return "the disk is full"
    except (OSError, AttributeError):
        pass
    return "the file could not be written"


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

    Notes
    -----
    Whatever happens — a full disk, a read-only folder, an exception, SIGINT, or SIGTERM
    once the command line has turned it into an exception — the temporary file is removed
    and the destination keeps its old content or gets the complete new one. Errors name
    the destination, never the temporary file.
    """
    target = check_output(path, overwrite=overwrite)
    folder = target.parent if str(target.parent) else Path(".")
    tmp = None
    try:
        try:
            fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix, dir=folder)
            os.close(fd)
            # mkstemp makes the file private (0600) and os.replace keeps that mode; give the
            # result the mode of the file it replaces, or the usual mode for a new file.
            os.chmod(tmp, _mode_for(target))
            ok = write(tmp) is not False
        except OSError as exc:
            raise SweepFileError(f"cannot write the file: {_write_problem(exc, folder)}",
                                 file=target) from None
        if not ok:
            raise SweepFileError(f"cannot write the file: {_write_problem(None, folder)}",
                                 file=target)
        try:
            os.replace(tmp, target)
        except OSError as exc:
            raise SweepFileError(f"cannot write the file: {_write_problem(exc, folder)}",
                                 file=target) from None
        tmp = None
    finally:
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass
    return target


def write_text_atomic(path: str | os.PathLike, text: str, *, overwrite: bool = False) -> Path:
    """Write ``text`` (UTF-8, ``\\n`` line ends) to ``path`` atomically; see :func:`write_atomic`."""

    def write(tmp: str) -> None:
        with open(tmp, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())

    return write_atomic(path, write, overwrite=overwrite)


#: Largest input file Refplane reads (1 GiB). A two-port sweep of 2,000,000 points written
#: with 17 significant digits is about 350 MB; anything much larger is not a sweep.
MAX_INPUT_BYTES = 1 << 30

_KINDS = ((stat.S_ISFIFO, "a named pipe"), (stat.S_ISCHR, "a character device"),
          (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"))


def path_problem(exc: OSError | ValueError) -> str:
    """A short reason for an error opening or creating a path (no library's own wording)."""
    if isinstance(exc, ValueError):
        return "the path holds a NUL character"
    code = getattr(exc, "errno", None)
    if code == errno.ENOENT:
        return "no such file"
    if code in (errno.EACCES, errno.EPERM):
        return "permission denied"
    if code == errno.ENAMETOOLONG:
        return "the path is longer than the system allows"
    if code == errno.ELOOP:
        return "the path has a loop of symbolic links"
    if code == errno.ENOTDIR:
        return "a part of the path is not a folder"
    if code == errno.EISDIR:
        return "this is a folder, not a file"
    if code == errno.ENOSPC or code == getattr(errno, "EDQUOT", None):
        return "the disk is full"
    if code == errno.EROFS:
        return "the folder is on a read-only file system"
    if code == errno.EMFILE or code == errno.ENFILE:
        return "too many files are open"
    text = getattr(exc, "strerror", None) or type(exc).__name__
    return text[:1].lower() + text[1:]


def open_input(path: str | os.PathLike, what: str = "a sweep file"):
    """Open a file for reading in binary mode, refusing anything but a regular file.

    A named pipe would block for ever, a device such as ``/dev/zero`` never ends, and a
    huge file would exhaust memory; each is refused at once with a one-line
    :class:`SweepFileError` naming the file.

    Parameters
    ----------
    path : path-like
        The file.
    what : str
        Its kind for messages ("a Touchstone file").

    Returns
    -------
    file object
        Opened ``rb``; the caller closes it. Its size is at most :data:`MAX_INPUT_BYTES`
        when opened; readers stop at that many bytes anyway.
    """
    try:
        name = os.fspath(path)
    except TypeError:
        raise SweepFileError("not a file path", file=str(path)) from None
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(name, flags)
    except (OSError, ValueError) as exc:
        if isinstance(exc, IsADirectoryError):
            raise SweepFileError(f"this is a folder, not {what}", file=name) from None
        raise SweepFileError(f"cannot open the file: {path_problem(exc)}", file=name) from None
    try:
        info = os.fstat(fd)
        if stat.S_ISDIR(info.st_mode):
            raise SweepFileError(f"this is a folder, not {what}", file=name)
        if not stat.S_ISREG(info.st_mode):
            kind = next((k for test, k in _KINDS if test(info.st_mode)), "not a regular file")
            raise SweepFileError(f"this is {kind}, not {what}; only regular files are read",
                                 file=name)
        if info.st_size > MAX_INPUT_BYTES:
            raise SweepFileError(too_big(info.st_size), file=name)
        if flags & getattr(os, "O_NONBLOCK", 0):
            os.set_blocking(fd, True)
        return os.fdopen(fd, "rb")
    except BaseException:
        os.close(fd)
        raise


def too_big(size: int | None = None) -> str:
    """The reason given for a file over :data:`MAX_INPUT_BYTES`."""
    limit = MAX_INPUT_BYTES / (1 << 30)
    if size is None:
        return f"the file is larger than {limit:g} GiB, the most Refplane reads"
    return f"the file is {size / (1 << 30):.1f} GiB; Refplane reads files up to {limit:g} GiB"


def read_limited(path: str | os.PathLike, what: str, *, limit: int | None = None) -> bytes:
    """The whole content of a regular file of at most ``limit`` bytes (see :func:`open_input`)."""
    limit = MAX_INPUT_BYTES if limit is None else limit
    name = os.fspath(path)
    with open_input(name, what) as handle:
        try:
            data = handle.read(limit + 1)
        except OSError as exc:
            raise SweepFileError(f"cannot read the file: {path_problem(exc)}", file=name) from None
    if len(data) > limit:
        raise SweepFileError(too_big() if limit == MAX_INPUT_BYTES else
                             f"the file is larger than {limit:,} bytes, too large for {what}",
                             file=name)
    return data


def read_json(path: str | os.PathLike, what: str):
    """Read a JSON file of ours; ``what`` names its kind for messages ("a standards file").

    Raises
    ------
    SweepFileError
        Missing or unreadable file, or invalid JSON (with the line of the fault).
    """
    import json

    fname = os.fspath(path)
    # Calibration and standards files are small; 16 MB is far more than any holds.
    raw = read_limited(fname, what, limit=16 << 20)
    if b"\x00" in raw:
        line = raw.count(b"\n", 0, raw.index(b"\x00")) + 1
        raise SweepFileError("the file holds NUL bytes: it is not JSON text", file=fname, line=line)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise SweepFileError(f"byte 0x{raw[exc.start]:02x} is not UTF-8 text", file=fname,
                             line=line) from None
    try:
        return json.loads(text, parse_int=_json_int, parse_constant=_json_constant)
    except json.JSONDecodeError as exc:
        raise SweepFileError(f"not valid JSON: {exc.msg}", file=fname, line=exc.lineno) from None
    except RecursionError:
        raise SweepFileError("the JSON is nested too deeply", file=fname) from None


def _json_int(text: str):
    # A whole number with hundreds of digits is no measurement, and Python refuses to convert
    # one of more than 4300 digits with its own, unhelpful, message: it becomes ∞ here, and
    # the file's schema names the key that holds it.
    if len(text.lstrip("-")) > 30:
        return float("-inf") if text.startswith("-") else float("inf")
    return int(text)


def _json_constant(text: str):
    # NaN and Infinity are not JSON; read them as the numbers they spell so that the schema
    # check names their key ("must be a finite number").
    return {"NaN": float("nan"), "Infinity": float("inf"), "-Infinity": float("-inf")}[text]


# --------------------------------------------------------------------------------------
# A small declared-schema check for Refplane's own JSON files (calibration, standards)
# --------------------------------------------------------------------------------------
#
# Each file declares its layout once as nested schema values; ``validate`` walks the parsed
# document along the schema (never deeper than the schema goes) and stops at the first
# fault with one message: the file, the key path (``terms.directivity.re[3]``) and the
# reason. Plain typed Python: the layouts are small and fixed, and a validation library
# would add a start-up import for the command line without saving code.


class SchemaError(Exception):
    """A fault at one key path of a JSON document."""

    def __init__(self, path: str, reason: str):
        super().__init__(f"{path}: {reason}" if path else reason)
        self.path, self.reason = path, reason


def _shown(value) -> str:
    from refplane.analysis.errors import show_token

    if isinstance(value, bool):
        return "true" if value else "false"
    if value is None:
        return "null"
    if isinstance(value, dict):
        return "an object"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, str):
        return "text " + show_token(value)
    text = str(value)
    return text if len(text) <= 24 else show_token(text)[1:].replace("'", "", 1)


class Number:
    """A finite JSON number (never a boolean), optionally bounded; ``null`` if allowed."""

    def __init__(self, *, minimum: float | None = None, above: float | None = None,
                 nullable: bool = False):
        self.minimum, self.above, self.nullable = minimum, above, nullable

    def check(self, value, path: str):
        if value is None and self.nullable:
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise SchemaError(path, f"must be a finite number, not {_shown(value)}")
        try:
            number = float(value)
        except OverflowError:
            raise SchemaError(path, "the number is far too large") from None
        if number != number or number in (float("inf"), float("-inf")):
            raise SchemaError(path, "must be a finite number")
        if self.minimum is not None and number < self.minimum:
            if self.minimum == 0:
                raise SchemaError(path, f"must not be negative (found {number:g})")
            raise SchemaError(path, f"must not be below {self.minimum:g}, not {number:g}")
        if self.above is not None and number <= self.above:
            raise SchemaError(path, f"must be above {self.above:g}, not {number:g}")
        return number


class Text:
    """A JSON string (non-empty if asked)."""

    def __init__(self, *, nonempty: bool = False, choices: tuple[str, ...] | None = None):
        self.nonempty, self.choices = nonempty, choices

    def check(self, value, path: str):
        if not isinstance(value, str):
            raise SchemaError(path, f"must be text, not {_shown(value)}")
        if self.nonempty and not value:
            raise SchemaError(path, "must not be empty")
        if self.choices is not None and value not in self.choices:
            raise SchemaError(path, f"must be one of {', '.join(self.choices)}, not {_shown(value)}")
        return value


class Const:
    """Exactly this value (a format name or version)."""

    def __init__(self, value, reason: str):
        self.value, self.reason = value, reason

    def check(self, value, path: str):
        if type(value) is not type(self.value) or value != self.value:
            raise SchemaError(path, self.reason.format(_shown(value)))
        return value


class ListOf:
    """A JSON list of items of one schema, with an optional length (int or callable)."""

    def __init__(self, item, *, nonempty: bool = False, max_items: int = 10_000_000,
                 length: int | None = None, what: str = "", increasing: bool = False):
        self.item, self.nonempty, self.max_items = item, nonempty, max_items
        self.length, self.what, self.increasing = length, what, increasing

    def check(self, value, path: str):
        if not isinstance(value, list):
            raise SchemaError(path, f"must be a list, not {_shown(value)}")
        if self.nonempty and not value:
            raise SchemaError(path, "must not be an empty list")
        if len(value) > self.max_items:
            raise SchemaError(path, f"holds {len(value):,} items, more than {self.max_items:,}")
        if self.length is not None and len(value) != self.length:
            raise SchemaError(path, f"needs {self.length} {self.what or 'values'}, found "
                                    f"{len(value)}")
        out = [self.item.check(v, f"{path}[{i}]") for i, v in enumerate(value)]
        if self.increasing:
            for i in range(1, len(out)):
                if not out[i] > out[i - 1]:
                    raise SchemaError(f"{path}[{i}]", "the values must be increasing")
        return out


class Either:
    """One of several schemas (the first that fits); the last one's message otherwise."""

    def __init__(self, *options):
        self.options = options

    def check(self, value, path: str):
        for option in self.options[:-1]:
            try:
                return option.check(value, path)
            except SchemaError:
                continue
        return self.options[-1].check(value, path)


class Obj:
    """A JSON object with known keys (each optional unless listed in ``required``).

    ``keys`` may be a callable of the object (keys that depend on, say, its 'kind');
    ``values`` checks every value of an object of free names instead.
    """

    def __init__(self, keys=None, *, required: tuple[str, ...] = (), values=None):
        self.keys, self.required, self.values = keys, required, values

    def check(self, value, path: str):
        if not isinstance(value, dict):
            raise SchemaError(path, f"must be an object, not {_shown(value)}")
        if self.values is not None:
            return {k: self.values.check(v, _join(path, k)) for k, v in value.items()}
        keys = self.keys(value, path) if callable(self.keys) else self.keys
        for key in value:
            if key not in keys:
                plain = sorted(k for k in keys if not (k.endswith("_u") and k[:-2] in keys))
                companions = len(plain) != len(keys)
                known = ", ".join(plain) + ("; a number may have a <key>_u uncertainty"
                                            if companions else "")
                from refplane.analysis.errors import show_token

                raise SchemaError(path, f"unknown key {show_token(key, 40)} (known: {known})")
        out = {}
        for key, item in keys.items():  # in the declared order: format and version first
            if key in value:
                out[key] = item.check(value[key], _join(path, key))
            elif key in self.required:
                raise SchemaError(path, f"the key {key!r} is missing")
        return out


def _join(path: str, key: str) -> str:
    from refplane.analysis.errors import printable

    shown = key if key.isidentifier() else repr(printable(key))
    if len(shown) > 40:
        shown = shown[:39] + "…"
    if not key.isidentifier():
        return f"{path}[{shown}]" if path else f"[{shown}]"
    return f"{path}.{shown}" if path else shown


def validate(document, schema, file: str | os.PathLike):
    """Check ``document`` against ``schema``; returns it with numbers as floats.

    Raises
    ------
    SweepFileError
        One line: the file, the key path and the reason.
    """
    try:
        return schema.check(document, "")
    except SchemaError as exc:
        raise SweepFileError(str(exc), file=file) from None
    except RecursionError:
        raise SweepFileError("the document is nested too deeply", file=file) from None
