"""Touchstone files (.s1p, .s2p, … .sNp, and .ts): read any legal version 1.x or 2.0 file, write 1.1 or 2.0.

Reading
-------
Version 1.x: the option line ``# [Hz|kHz|MHz|GHz] [S|Y|Z|G|H] [RI|MA|DB] [R n]`` may list its
tokens in any order and any case; omitted ones take the defaults GHz, S, MA, R 50. Only the
first option line counts; later option lines are ignored, as the Touchstone specification
says. The port count comes from the file name (.sNp). A two-port point is one line
``f S11 S21 S12 S22``; larger matrices are written row by row over several lines, and are
read by count (1 + 2·N² numbers per point), so any wrapping is accepted as long as each
point starts on a new line. Y and Z data are normalised to R and converted to S at that
reference; G (hybrid-g) and H (hybrid-h) data, allowed for two-ports only, likewise.

Version 2.0 (``[Version] 2.0``): the keywords [Number of Ports], [Two-Port Data Order]
(12_21 or 21_12), [Number of Frequencies], [Number of Noise Frequencies], [Reference] (one
value per port, possibly over several lines), [Matrix Format] (Full, Lower or Upper),
[Network Data], [Noise Data] and [End] are understood; ``[Begin Information]`` …
``[End Information]`` blocks are skipped. Y and Z data are in siemens and ohms (not
normalised). [Mixed-Mode Order] is refused: Refplane reads single-ended data only.
Noise parameters (2.0 [Noise Data], or the trailing noise block of a 1.x two-port file)
are not read; they are skipped whole.

Comments (``!`` to the end of a line) may appear anywhere; their text is kept, in order, in
:attr:`Sweep.comments`.

Every problem raises :class:`SweepFileError` naming the file, the line and the reason.

Speed
-----
The numeric body is read half a megabyte at a time (so the file's text is never held
whole), with comments cut out only where a ``!`` occurs. A block whose lines share one
layout (fixed-width E-notation, as instruments and :func:`write` produce) is converted by
:func:`_fixed_width`, a vectorised exact parser; any other block by numpy's C number
parser. When this bulk pass meets anything irregular, a careful line-by-line pass re-reads
the file to find the exact line and reason (or to handle the rare legal irregularity, such
as a 1.x noise block). Both passes give bit-for-bit the same sweep.
"""

from __future__ import annotations

import math
import os
import re
import warnings
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterable, Iterator, Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError, SweepFileError
from refplane.analysis.sweep import Sweep

_FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_UNIT_NAMES = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}
_PARAMS = ("s", "y", "z", "g", "h")
_FORMATS = ("ri", "ma", "db")
_EXT = re.compile(r"\.s(\d+)p$", re.IGNORECASE)
_NUMBER = re.compile(rb"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")
_COMMENT = re.compile(rb"![^\n]*")
_LATER_OPTION = re.compile(rb"(?m)^[ \t]*#[^\n]*")
_BLANK_LINE = re.compile(rb"\n[ \t\r]*(?=\n)")
_CHUNK = 1 << 19

#: Numbers per line the writer puts in a matrix row of three or more ports (1.x allows at most 4 pairs).
_PAIRS_PER_LINE = 4


# --------------------------------------------------------------------------------------
# Header: option line and 2.0 keywords
# --------------------------------------------------------------------------------------

@dataclass
class _Header:
    """What the lines before the numbers say."""

    file: str
    ext_ports: int | None
    version: int = 1
    unit: str = "ghz"
    param: str = "s"
    fmt: str = "ma"
    r_ohm: float = 50.0
    option_line: int | None = None
    n_ports: int | None = None
    n_ports_line: int | None = None
    order_21_12: bool | None = None
    order_line: int | None = None
    n_freq: int | None = None
    n_freq_line: int | None = None
    n_noise: int | None = None
    reference: list[float] | None = None
    reference_line: int | None = None
    matrix: str = "full"
    matrix_line: int | None = None
    comments: list[str] = field(default_factory=list)
    in_information: bool = False
    reference_open: bool = False
    network_data_line: int | None = None
    keyword_seen: bool = False

    # -- helpers -------------------------------------------------------------------------
    def error(self, reason: str, line: int | None) -> SweepFileError:
        return SweepFileError(reason, file=self.file, line=line)

    @property
    def ports(self) -> int:
        return int(self.n_ports if self.version == 2 else self.ext_ports)

    @property
    def reference_wanted(self) -> int:
        """How many [Reference] values are still to come on continuation lines."""
        if self.reference is None or self.n_ports is None:
            return 0
        return max(self.n_ports - len(self.reference), 0)

    def numbers_per_point(self) -> int:
        n = self.ports
        if self.version == 2 and self.matrix != "full":
            return 1 + n * (n + 1)
        return 1 + 2 * n * n

    def z0(self) -> np.ndarray:
        n = self.ports
        if self.reference is not None:
            return np.asarray(self.reference, dtype=np.complex128)
        return np.full(n, complex(self.r_ohm))

    # -- one line ------------------------------------------------------------------------
    def option(self, text: str, line: int) -> None:
        if self.option_line is not None:
            return  # Later option lines are ignored (Touchstone: only the first one counts).
        self.option_line = line
        seen: dict[str, str] = {}
        tokens = text[1:].split()
        i = 0
        while i < len(tokens):
            tok = tokens[i]
            low = tok.lower()
            if low in _FREQ_UNITS:
                kind = "frequency unit"
            elif low in _PARAMS:
                kind = "parameter"
            elif low in _FORMATS:
                kind = "data format"
            elif low == "r" or (low.startswith("r") and _is_number(low[1:])):
                kind = "reference"
            else:
                raise self.error(
                    f"unknown option {tok!r} in the option line (it takes a frequency unit "
                    "Hz/kHz/MHz/GHz, a parameter S/Y/Z/G/H, a format RI/MA/DB and R followed "
                    "by the reference resistance)", line)
            if kind in seen:
                raise self.error(
                    f"the option line gives the {kind} twice ({seen[kind]!r} and {tok!r})", line)
            seen[kind] = tok
            if kind == "frequency unit":
                self.unit = low
            elif kind == "parameter":
                self.param = low
            elif kind == "data format":
                self.fmt = low
            else:
                value = low[1:]
                if not value:
                    if i + 1 >= len(tokens):
                        raise self.error("the option line ends after R; write R and the "
                                         "reference resistance, e.g. R 50", line)
                    i += 1
                    value = tokens[i]
                if not _is_number(value):
                    raise self.error(f"the reference resistance {value!r} after R is not a "
                                     "number", line)
                r = float(value)
                if not (math.isfinite(r) and r > 0):
                    raise self.error(f"the reference resistance R {value} must be a positive "
                                     "number of ohms", line)
                self.r_ohm = r
            i += 1

    def keyword(self, text: str, line: int) -> str:
        """Handle a ``[Keyword] value`` line of a 2.0 file; returns the keyword's name."""
        close = text.find("]")
        if close < 0:
            raise self.error(f"a keyword line must look like [Keyword] value, not {text!r}", line)
        name = " ".join(text[1:close].split()).lower()
        value = text[close + 1:].strip()
        if self.in_information:
            if name == "end information":
                self.in_information = False
            return name
        if name == "version":
            if self.keyword_seen or self.option_line is not None:
                raise self.error("[Version] must come before every other keyword and the "
                                 "option line", line)
            self.keyword_seen = True
            if value.split()[:1] not in (["2.0"], ["2.1"], ["2"]):
                raise self.error(f"Touchstone [Version] {value!r} is not supported (Refplane "
                                 "reads version 1.x files without [Version], and 2.0)", line)
            self.version = 2
            return name
        if self.version != 2:
            raise self.error(
                f"the keyword [{text[1:close].strip()}] belongs to Touchstone 2.0, but the file "
                "does not start with [Version] 2.0", line)
        self.keyword_seen = True
        self.reference_open = name == "reference"
        if name == "number of ports":
            n = self._count(value, "[Number of Ports]", line)
            if n < 1:
                raise self.error("[Number of Ports] must be at least 1", line)
            if self.ext_ports is not None and n != self.ext_ports:
                raise self.error(
                    f"[Number of Ports] says {n}, but the file name (.s{self.ext_ports}p) says "
                    f"{self.ext_ports}", line)
            self.n_ports, self.n_ports_line = n, line
        elif name == "two-port data order":
            order = value.lower()
            if order not in ("12_21", "21_12"):
                raise self.error(f"[Two-Port Data Order] must be 12_21 or 21_12, not {value!r}",
                                 line)
            self.order_21_12, self.order_line = order == "21_12", line
        elif name == "number of frequencies":
            n = self._count(value, "[Number of Frequencies]", line)
            if n < 1:
                raise self.error("[Number of Frequencies] must be at least 1", line)
            self.n_freq, self.n_freq_line = n, line
        elif name == "number of noise frequencies":
            self.n_noise = self._count(value, "[Number of Noise Frequencies]", line)
        elif name == "reference":
            if self.n_ports is None:
                raise self.error("[Reference] must come after [Number of Ports]", line)
            self.reference, self.reference_line = [], line
            self.reference_values(value, line)
        elif name == "matrix format":
            fmt = value.lower()
            if fmt not in ("full", "lower", "upper"):
                raise self.error(f"[Matrix Format] must be Full, Lower or Upper, not {value!r}",
                                 line)
            self.matrix, self.matrix_line = fmt, line
        elif name == "mixed-mode order":
            raise self.error("mixed-mode (differential) data, [Mixed-Mode Order], is not "
                             "supported; Refplane reads single-ended S-parameters only", line)
        elif name == "begin information":
            self.in_information = True
        elif name in ("network data", "noise data", "end"):
            pass  # handled by the caller
        else:
            raise self.error(f"unknown keyword [{text[1:close].strip()}]", line)
        return name

    def reference_values(self, text: str, line: int) -> None:
        for tok in text.split():
            if not _is_number(tok):
                raise self.error(f"[Reference] value {tok!r} is not a number", line)
            r = float(tok)
            if not (math.isfinite(r) and r > 0):
                raise self.error(f"[Reference] value {tok} must be a positive number of ohms",
                                 line)
            if len(self.reference) >= self.n_ports:
                raise self.error(
                    f"[Reference] gives more than {self.n_ports} values for a "
                    f"{self.n_ports}-port file", line)
            self.reference.append(r)

    def _count(self, value: str, what: str, line: int) -> int:
        if not re.fullmatch(r"\+?\d+", value):
            raise self.error(f"{what} must be a whole number, not {value!r}", line)
        return int(value)

    def start_data(self, line: int) -> None:
        """Checks made when the numbers begin."""
        if self.version == 1:
            if self.ext_ports is None:
                raise self.error(
                    "cannot tell the number of ports: a version 1 Touchstone file must be named "
                    ".s1p, .s2p, … .sNp (or start with [Version] 2.0 and give [Number of Ports])",
                    line)
        else:
            if self.network_data_line is None:
                raise self.error("numbers before [Network Data]; a Touchstone 2.0 file needs a "
                                 "[Network Data] line before its data", line)
            if self.n_ports is None:
                raise self.error("a Touchstone 2.0 file needs [Number of Ports] before "
                                 "[Network Data]", self.network_data_line)
            if self.n_freq is None:
                raise self.error("a Touchstone 2.0 file needs [Number of Frequencies] before "
                                 "[Network Data]", self.network_data_line)
            if self.n_ports == 2 and self.order_21_12 is None:
                raise self.error("a two-port Touchstone 2.0 file needs [Two-Port Data Order] "
                                 "12_21 or 21_12 before [Network Data]", self.network_data_line)
            if self.reference is not None and self.reference_wanted:
                raise self.error(
                    f"[Reference] gives {len(self.reference)} value(s) for a {self.n_ports}-port "
                    "file; it needs one per port", self.reference_line)
        if self.param in ("g", "h") and self.ports != 2:
            raise self.error(
                f"{self.param.upper()} (hybrid) parameters exist for two-ports only, but this "
                f"is a {self.ports}-port file", self.option_line)


def _is_number(text: str) -> bool:
    return bool(_NUMBER.fullmatch(text.encode("ascii", "replace")))


def _decode(raw: bytes, file: str, line: int) -> str:
    if b"\x00" in raw:
        raise SweepFileError("the file holds NUL bytes: it looks like a binary file, not a "
                             "Touchstone text file", file=file, line=line)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise SweepFileError(
            f"byte 0x{raw[exc.start]:02x} is not text (UTF-8); is this a binary file?",
            file=file, line=line) from None


def _header_line(head: _Header, text: str, line: int) -> str:
    """Feed one line (comment already removed) to the header; returns what kind it was.

    Kinds: "blank", "option", "keyword:<name>", "data".
    """
    stripped = text.strip()
    if not stripped:
        return "blank"
    if head.in_information:
        if stripped.startswith("["):
            return "keyword:" + head.keyword(stripped, line)
        return "blank"
    if stripped.startswith("#"):
        head.reference_open = False
        head.option(stripped, line)
        return "option"
    if stripped.startswith("["):
        return "keyword:" + head.keyword(stripped, line)
    if head.reference_open and head.network_data_line is None:
        head.reference_values(stripped, line)
        return "blank"
    return "data"


def _split_comment(text: str, comments: list[str]) -> str:
    bang = text.find("!")
    if bang < 0:
        return text
    comments.append(text[bang + 1:].strip())
    return text[:bang]


# --------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------

def read(path: str | os.PathLike) -> Sweep:
    """Read a Touchstone file (.sNp version 1.x, or version 2.0 .sNp / .ts).

    Parameters
    ----------
    path : path-like
        The file to read.

    Returns
    -------
    Sweep
        Frequencies in Hz, S-parameters (Y, Z, G and H data are converted to S), the
        reference impedance of each port, and the file's comments.

    Raises
    ------
    SweepFileError
        For a missing, unreadable or malformed file; the message names the line and the
        reason, e.g. ``"a.s2p, line 14: a 2-port row needs 9 numbers, found 7"``.

    Examples
    --------
    >>> sweep = read("antenna.s1p")          # doctest: +SKIP
    >>> sweep.freq_hz[0], sweep.s[0, 0, 0]   # doctest: +SKIP
    """
    name = os.fspath(path)
    match = _EXT.search(name)
    ext_ports = int(match.group(1)) if match else None
    if ext_ports == 0:
        raise SweepFileError("a .s0p file cannot hold network data (0 ports)", file=name)
    try:
        handle = open(name, "rb")
    except FileNotFoundError:
        raise SweepFileError("no such file", file=name) from None
    except IsADirectoryError:
        raise SweepFileError("this is a folder, not a Touchstone file", file=name) from None
    except OSError as exc:
        raise SweepFileError(f"cannot open the file ({exc.strerror or exc})", file=name) from None
    with handle:
        try:
            result = _fast(handle, name, ext_ports)
        except OSError as exc:
            raise SweepFileError(f"cannot read the file ({exc.strerror or exc})",
                                 file=name) from None
    if result is None:
        result = _careful(name, ext_ports)
    head, freq_hz, s = result
    try:
        return Sweep(freq_hz=freq_hz, s=s, z0_ohm=head.z0(), name=Path(name).stem, source=name,
                     comments=tuple(head.comments))
    except SweepFileError:
        raise
    except AnalysisError as exc:  # e.g. Z data of a network that has no S-parameters
        raise SweepFileError(exc.reason, file=name) from None


class _Irregular(Exception):
    """The fast pass met something it leaves to the careful pass."""


def _fast(handle, name: str, ext_ports: int | None):
    """The bulk pass; returns None when the careful pass must decide."""
    head = _Header(file=name, ext_ports=ext_ports)
    line = 0
    first = b""
    # Header: a handful of lines, read one by one.
    while True:
        raw = handle.readline()
        if not raw:
            break
        line += 1
        text = _decode(raw, name, line)
        kind = _header_line(head, _split_comment(text, head.comments), line)
        if kind == "keyword:network data":
            head.network_data_line = line
            head.start_data(line + 1)
        elif kind.startswith("keyword:") and head.network_data_line is not None:
            return None  # e.g. [End] straight after [Network Data]: no data; let the careful pass say so
        elif kind == "data":
            if "!" in text:
                head.comments.pop()  # the body pass collects this line's comment
            head.start_data(line)
            first = raw
            break
    if not first:
        return None  # no numbers at all: the careful pass words the error
    per_point = head.numbers_per_point()
    parts: list[np.ndarray] = []
    tail = b""
    n_lines = 0
    pending = first
    ended = False
    try:
        while not ended:
            block = handle.read(_CHUNK)
            if block:
                block = pending + block
                cut = block.rfind(b"\n") + 1
                if cut == 0:
                    pending = block
                    continue
                block, pending = block[:cut], block[cut:]
            else:
                block, pending = pending, b""
                ended = True
            body, rest = _clean(block, head)
            if rest is not None:
                tail = rest + pending + handle.read()
                ended = True
            if body:
                numbers, lines = _numbers(body)
                parts.append(numbers)
                n_lines += lines if lines is not None else _data_lines(body)
    except _Irregular:
        return None
    if head.version == 2:
        if not tail or not _tail_ok(tail, head):
            return None
    values = np.concatenate(parts) if len(parts) != 1 else parts[0]
    del parts
    if values.size == 0 or values.size % per_point:
        return None
    n_points = values.size // per_point
    if head.version == 2 and n_points != head.n_freq:
        return None
    if head.ports <= 2 and n_lines != n_points:
        # Two-port and one-port points must sit on one line each; anything else (a 1-port
        # file named .s2p, say) is for the careful pass to explain.
        return None
    values = values.reshape(n_points, per_point)
    if not np.all(np.isfinite(values)):
        return None
    freq = values[:, 0] * _FREQ_UNITS[head.unit]
    if n_points > 1 and not np.all(freq[1:] > freq[:-1]):
        return None
    if freq[0] < 0:
        return None
    s = _to_s(head, values)
    return head, freq, s


def _clean(block: bytes, head: _Header) -> tuple[bytes, bytes | None]:
    """Cut comments out of a block of body lines; split off a 2.0 keyword tail.

    Returns the numeric text and, for a 2.0 file, the text from the first keyword on (or None).
    """
    if b"\x00" in block:
        raise _Irregular
    if b"!" in block:
        for found in _COMMENT.findall(block):
            try:
                head.comments.append(found[1:].decode("utf-8").strip())
            except UnicodeDecodeError:
                raise _Irregular from None
        block = _COMMENT.sub(b"", block)
    rest = None
    if b"[" in block:
        if head.version != 2:
            raise _Irregular
        at = block.find(b"[")
        start = block.rfind(b"\n", 0, at) + 1
        if block[start:at].strip():
            raise _Irregular
        block, rest = block[:start], block[start:]
    if b"#" in block:
        # A later option line is ignored (only the first counts).
        block = _LATER_OPTION.sub(b"", block)
    return block, rest


def _data_lines(body: bytes) -> int:
    """How many lines of ``body`` hold something other than white space."""
    text = b"\n" + body if body.endswith(b"\n") else b"\n" + body + b"\n"
    if _BLANK_LINE.search(text):
        text = _BLANK_LINE.sub(b"", text)
    return text.count(b"\n") - 1


#: At most this many numbers of a block are redone one by one before the block goes to numpy's parser.
_MAX_FIXUPS = 2000
_NUMBER_BYTES = frozenset(b"0123456789+-.eE")
_POW10_LD: list = []


def _pow10_extended() -> np.ndarray | None:
    """10**0 … 10**27 as x86 80-bit extended floats (exact), or None where there are none."""
    if not _POW10_LD:
        ok = np.finfo(np.longdouble).nmant == 63 and np.dtype(np.longdouble).itemsize == 16
        _POW10_LD.append(np.array([10 ** k for k in range(28)], dtype=np.longdouble) if ok else None)
    return _POW10_LD[0]


def _template_token(tok: bytes, a: int):
    """Parse one number of the first line of a block, starting at column ``a``.

    Returns (sign column, mantissa digit columns, digits after the point, exponent sign
    column, exponent digit columns, {column: required byte}) or None if it is no number.
    """
    i = 0
    n = len(tok)
    sign = None
    fixed = {}
    if tok[:1] in (b"+", b"-"):
        sign = a
        i = 1
    mant = []
    nfrac = 0
    seen_dot = False
    while i < n and (tok[i:i + 1].isdigit() or tok[i:i + 1] == b"."):
        if tok[i:i + 1] == b".":
            if seen_dot:
                return None
            seen_dot = True
            fixed[a + i] = 46
        else:
            mant.append(a + i)
            if seen_dot:
                nfrac += 1
        i += 1
    if not mant:
        return None
    esign = None
    exp = []
    if i < n:
        if tok[i:i + 1] not in (b"e", b"E"):
            return None
        fixed[a + i] = tok[i]
        i += 1
        if tok[i:i + 1] in (b"+", b"-"):
            esign = a + i
            i += 1
        while i < n and tok[i:i + 1].isdigit():
            exp.append(a + i)
            i += 1
        if not exp or i != n or len(exp) > 3:
            return None
    return sign, mant, nfrac, esign, exp, fixed


@dataclass(frozen=True)
class _Group:
    """Numbers of a line with the same count of mantissa and exponent digits."""

    ks: list
    nd: int
    ne: int
    cols: np.ndarray
    ecols_by_digit: list
    nfrac: np.ndarray
    sign_pos: np.ndarray
    sign_cols: np.ndarray
    esign_pos: np.ndarray
    esign_cols: np.ndarray


@dataclass(frozen=True)
class _Layout:
    """Where the numbers of a fixed-layout line sit (see :func:`_fixed_width`)."""

    spans: list
    tokens: list
    groups: list
    fixed_cols: np.ndarray
    fixed_bytes: np.ndarray
    sign_cols: np.ndarray


_LAYOUTS: dict[bytes, _Layout | None] = {}
_SHAPE = bytes.maketrans(b"0123456789-", b"0000000000+")
_SPACE_BYTES = frozenset(b" \t\r\n")


def _layout(template: bytes) -> _Layout | None:
    """The layout of a first line (cached by its shape: digits and signs blanked)."""
    key = template.translate(_SHAPE)
    if key in _LAYOUTS:
        return _LAYOUTS[key]
    layout = None
    if all(c in _SPACE_BYTES or c in _NUMBER_BYTES for c in template):
        space = [c in _SPACE_BYTES for c in template]
        spans, tokens, start = [], [], None
        for i, sp in enumerate(space + [True]):
            if not sp and start is None:
                start = i
            elif sp and start is not None:
                spans.append((start, i))
                start = None
        for a, b in spans:
            t = _template_token(template[a:b], a)
            if t is None or len(t[1]) > 19:
                tokens = None
                break
            tokens.append(t)
        if tokens:
            by_shape: dict = {}
            for k, t in enumerate(tokens):
                by_shape.setdefault((len(t[1]), len(t[4])), []).append(k)
            groups = []
            for (nd, ne), ks in by_shape.items():
                msign = [(g, tokens[k][0]) for g, k in enumerate(ks) if tokens[k][0] is not None]
                esign = [(g, tokens[k][3]) for g, k in enumerate(ks) if tokens[k][3] is not None]
                groups.append(_Group(
                    ks=ks, nd=nd, ne=ne,
                    cols=np.array([c for k in ks for c in tokens[k][1]], dtype=np.intp),
                    ecols_by_digit=[np.array([tokens[k][4][j] for k in ks], dtype=np.intp)
                                    for j in range(ne)],
                    nfrac=np.array([tokens[k][2] for k in ks], dtype=np.int64),
                    sign_pos=np.array([g for g, _ in msign], dtype=np.intp),
                    sign_cols=np.array([c for _, c in msign], dtype=np.intp),
                    esign_pos=np.array([g for g, _ in esign], dtype=np.intp),
                    esign_cols=np.array([c for _, c in esign], dtype=np.intp)))
            fixed = {i: template[i] for i, sp in enumerate(space) if sp}
            for t in tokens:
                fixed.update(t[5])
            cols = sorted(fixed)
            layout = _Layout(spans=spans, tokens=tokens, groups=groups,
                             fixed_cols=np.array(cols, dtype=np.intp),
                             fixed_bytes=np.array([fixed[c] for c in cols], dtype=np.uint8),
                             sign_cols=np.array([c for t in tokens for c in (t[0], t[3])
                                                 if c is not None], dtype=np.intp))
    if len(_LAYOUTS) > 64:
        _LAYOUTS.clear()
    _LAYOUTS[key] = layout
    return layout


def _fixed_width(body: bytes) -> np.ndarray | None:
    """Numbers of a block of lines that all share one layout, converted exactly; else None.

    Every line must have the same length, with digits, signs, points and exponent letters
    in the same columns (the usual fixed-width E-notation of instruments and of
    :func:`write`). The digits are then gathered column-wise and each number is built as an
    integer mantissa M (≤ 19 digits, exact in uint64) times 10**E. M·10**E (or M/10**−E) for
    |E| ≤ 27 is computed in x86 extended precision, where both operands are exact and the
    single operation rounds once to 64 bits; the cast to float64 then rounds again. That
    double rounding can differ from a correctly rounded conversion only when the 64-bit
    result lies exactly half-way between two doubles (its 11 extra bits read 10000000000),
    so exactly those numbers, and any with |E| > 27, are converted one by one with
    Python's correctly rounded ``float``. The result is bit-for-bit what ``float(text)``
    gives for each number. Platforms without 80-bit extended floats use numpy's parser.
    """
    p10 = _pow10_extended()
    if p10 is None:
        return None
    width = body.find(b"\n") + 1
    if width <= 1 or len(body) % width:
        return None
    layout = _layout(body[:width])
    if layout is None:
        return None
    rows = np.frombuffer(body, dtype=np.uint8).reshape(-1, width)
    # Every column of every line must be of the template's kind: the same white space, the
    # same points and exponent letters, a sign where it has one, and digits where it has them.
    if not (rows[:, layout.fixed_cols] == layout.fixed_bytes).all():
        return None
    if layout.sign_cols.size:
        s = rows[:, layout.sign_cols]
        if not ((s == 43) | (s == 45)).all():
            return None
    spans = layout.spans
    n_lines = rows.shape[0]
    out = np.empty((n_lines, len(layout.tokens)), dtype=np.float64)
    for grp in layout.groups:
        width_g = len(grp.ks)
        digits = rows[:, grp.cols]
        digits -= np.uint8(48)
        if digits.max() >= 10:  # a byte below '0' wraps round to a large value
            return None
        digits = digits.reshape(n_lines, width_g, grp.nd)
        m = digits[:, :, 0].astype(np.uint64)
        for j in range(1, grp.nd):
            m *= np.uint64(10)
            m += digits[:, :, j]
        if grp.ne:
            e = np.zeros((n_lines, width_g), dtype=np.int16)
            for cols_j in grp.ecols_by_digit:
                d = rows[:, cols_j]
                d -= np.uint8(48)
                if d.max() >= 10:
                    return None
                e *= 10
                e += d
            if grp.esign_pos.size == width_g:
                # '+' is 43 and '-' is 45: 44 − byte is the sign itself.
                e *= np.int16(44) - rows[:, grp.esign_cols]
            elif grp.esign_pos.size:
                e[:, grp.esign_pos] *= np.int16(44) - rows[:, grp.esign_cols]
            e = e - grp.nfrac
        else:
            e = np.broadcast_to(-grp.nfrac, (n_lines, width_g))
        low_e, high_e = int(e.min()), int(e.max())
        big = None
        if low_e < -27 or high_e > 27:
            big = np.abs(e) > 27
            e = np.where(big, 0, e)
            low_e, high_e = int(e.min()), int(e.max())
        ld = m.astype(np.longdouble)
        if high_e <= 0:
            value = ld / p10[-e]
        elif low_e >= 0:
            value = ld * p10[e]
        else:
            up = e >= 0
            value = np.where(up, ld * p10[np.where(up, e, 0)], ld / p10[np.where(up, 0, -e)])
        low = value.reshape(-1).view(np.uint64)[::2].reshape(n_lines, width_g)
        # Rounding first to 64 bits and then to 53 can err only when the 64-bit result sits
        # exactly half-way between two doubles; those (about 1 in 2048) are redone exactly.
        redo = (low & np.uint64(0x7FF)) == np.uint64(0x400)
        if big is not None:
            redo |= big
        result = value.astype(np.float64)
        if grp.sign_pos.size == width_g:
            result *= np.int16(44) - rows[:, grp.sign_cols]
        elif grp.sign_pos.size:
            result[:, grp.sign_pos] *= np.int16(44) - rows[:, grp.sign_cols]
        if redo.any():
            where = np.argwhere(redo)
            if len(where) > _MAX_FIXUPS:
                return None
            for r, g in where.tolist():
                a, b = spans[grp.ks[g]]
                result[r, g] = float(body[r * width + a:r * width + b])
        out[:, grp.ks] = result
    return out.reshape(-1)


def _numbers(body: bytes) -> tuple[np.ndarray, int | None]:
    """Every number of ``body`` (whitespace-separated), in order, and the count of lines
    holding them when that comes for free (else None).

    Lines of one identical layout (as instruments and Refplane's writer produce) go through
    :func:`_fixed_width`; anything else through numpy's C number parser.
    """
    values = _fixed_width(body)
    if values is not None:
        return values, len(body) // (body.find(b"\n") + 1)
    try:
        with warnings.catch_warnings():
            # Before numpy 2.3 unparsable text only warned (DeprecationWarning); make it an error.
            warnings.simplefilter("error", DeprecationWarning)
            return np.fromstring(body, dtype=np.float64, sep=" "), None
    except (ValueError, DeprecationWarning):
        raise _Irregular from None


def _tail_ok(tail: bytes, head: _Header) -> bool:
    """True when a 2.0 file's text after its numbers is only [Noise Data] … [End]."""
    lines = tail.split(b"\n")
    state = "after"
    for raw in lines:
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError:
            return False
        text = _split_comment(text, head.comments).strip()
        if not text:
            continue
        low = text.lower().replace(" ", "")
        if state == "done":
            return False
        if low.startswith("[noisedata]") and state == "after":
            state = "noise"
        elif low.startswith("[end]") and not low.startswith("[endinformation]"):
            state = "done"
        elif state == "noise" and not text.startswith("["):
            continue
        else:
            return False
    return state == "done"


# --------------------------------------------------------------------------------------
# The careful pass: line by line, exact line numbers
# --------------------------------------------------------------------------------------

def _lines(name: str) -> Iterator[tuple[int, str]]:
    with open(name, "rb") as handle:
        for number, raw in enumerate(handle, 1):
            yield number, _decode(raw, name, number)


def _careful(name: str, ext_ports: int | None):
    head = _Header(file=name, ext_ports=ext_ports)
    size = os.path.getsize(name)
    if size == 0:
        raise SweepFileError("the file is empty", file=name)
    lines = _lines(name)
    first: tuple[int, str] | None = None
    last_line = 0
    for number, text in lines:
        last_line = number
        kind = _header_line(head, _split_comment(text, head.comments), number)
        if kind == "keyword:network data":
            head.network_data_line = number
        elif kind.startswith("keyword:") and head.network_data_line is not None:
            head.start_data(number)
            raise head.error("[Network Data] is followed by no numbers", number)
        elif kind == "data":
            if "!" in text:
                head.comments.pop()  # collected again below, with the line's numbers
            head.start_data(number)
            first = (number, text)
            break
    if first is None:
        if head.version == 2 and head.network_data_line is None:
            raise head.error("the file has no [Network Data] section", last_line or None)
        if head.version == 2:
            head.start_data(last_line + 1)
        raise head.error("the file holds no frequency points (no lines of numbers)",
                         last_line or None)

    n = head.ports
    per_point = head.numbers_per_point()
    what = f"{n}-port"
    rows: list[list[float]] = []
    starts: list[int] = []
    current: list[float] = []
    current_start = 0
    freq_scale = _FREQ_UNITS[head.unit]
    last_freq = -math.inf
    noise_from: int | None = None
    end_line: int | None = None
    ended = False

    def body() -> Iterator[tuple[int, str]]:
        yield first
        yield from lines

    for number, text in body():
        text = _split_comment(text, head.comments)
        stripped = text.strip()
        if not stripped:
            continue
        if ended:
            raise head.error("text after [End]; [End] must be the last line", number)
        if noise_from is not None and head.version == 1:
            _noise_row(stripped, number, head)
            continue
        if stripped.startswith("#"):
            if head.version == 2:
                raise head.error("an option line (#) inside [Network Data]", number)
            continue  # later option lines are ignored (only the first counts)
        if stripped.startswith("["):
            if head.version != 2:
                head.keyword(stripped, number)  # raises: 2.0 keyword in a 1.x file
            close = stripped.find("]")
            key = " ".join(stripped[1:close].split()).lower() if close > 0 else ""
            if current:
                raise _short_point(head, what, per_point, current, current_start, number)
            if key == "noise data" and noise_from is None and end_line is None:
                noise_from = number
                continue
            if key == "end":
                end_line = number
                ended = True
                continue
            if noise_from is not None and head.version == 2:
                raise head.error(f"unexpected keyword {stripped[:close + 1]} inside "
                                 "[Noise Data]; only [End] may follow", number)
            head.keyword(stripped, number)  # raises for unknown keywords
            raise head.error(f"the keyword {stripped[:close + 1]} cannot appear inside "
                             "[Network Data]", number)
        if noise_from is not None:
            continue  # 2.0 noise rows are skipped
        values = _parse_numbers(stripped, number, head)
        if not current:
            current_start = number
            freq = values[0] * freq_scale
            # A 1.x two-port file may end with a noise block: its first frequency is not
            # above the last network frequency and its rows hold 5 numbers.
            if (head.version == 1 and n == 2 and rows and len(values) == 5
                    and freq <= last_freq):
                noise_from = number
                continue
        if len(current) + len(values) > per_point:
            if current:
                raise _short_point(head, what, per_point, current, current_start, number)
            raise head.error(_count_reason(head, what, per_point, len(values), n), number)
        current.extend(values)
        if len(current) == per_point:
            freq = current[0] * freq_scale
            if freq <= last_freq:
                raise head.error(
                    f"the frequency {current[0]:g} {_UNIT_NAMES[head.unit]} does not increase "
                    f"(the point before it was at {last_freq / freq_scale:g} "
                    f"{_UNIT_NAMES[head.unit]}); frequencies must increase strictly",
                    current_start)
            if freq < 0:
                raise head.error("frequencies must not be negative", current_start)
            last_freq = freq
            rows.append(current)
            starts.append(current_start)
            current = []
        elif n <= 2:
            # One- and two-port points are single lines.
            raise head.error(_count_reason(head, what, per_point, len(current), n), current_start)
    if current:
        raise _short_point(head, what, per_point, current, current_start, None)
    if head.version == 2:
        if end_line is None:
            raise head.error("the file ends without [End]", last_line_of(name))
        if len(rows) != head.n_freq:
            raise head.error(
                f"[Number of Frequencies] says {head.n_freq}, but [Network Data] holds "
                f"{len(rows)} frequency point(s)", head.n_freq_line)
    if not rows:
        raise head.error("the file holds no frequency points", None)
    values = np.asarray(rows, dtype=np.float64)
    freq_hz = values[:, 0] * freq_scale
    if not np.all(np.diff(freq_hz) > 0):  # two text values can scale to one double
        k = int(np.argmax(~(np.diff(freq_hz) > 0))) + 1
        raise head.error("frequencies must increase strictly", starts[k])
    return head, freq_hz, _to_s(head, values)


def last_line_of(name: str) -> int:
    with open(name, "rb") as handle:
        return sum(1 for _ in handle)


def _parse_numbers(text: str, number: int, head: _Header) -> list[float]:
    out = []
    for tok in text.split():
        if not _NUMBER.fullmatch(tok.encode("utf-8", "replace")):
            low = tok.lower()
            if low.lstrip("+-") in ("nan", "inf", "infinity"):
                raise head.error(f"{tok!r} is not a finite number", number)
            raise head.error(f"{tok!r} is not a number", number)
        value = float(tok)
        if not math.isfinite(value):
            raise head.error(f"{tok!r} is too large to be a finite number", number)
        out.append(value)
    return out


def _noise_row(text: str, number: int, head: _Header) -> None:
    values = _parse_numbers(text, number, head)
    if len(values) != 5:
        raise head.error(f"a noise-parameter row needs 5 numbers, found {len(values)}", number)


def _count_reason(head: _Header, what: str, per_point: int, found: int, n: int) -> str:
    reason = f"a {what} row needs {per_point} numbers, found {found}"
    for m in range(1, 9):
        if m != n and found == 1 + 2 * m * m:
            source = "the file name" if head.version == 1 else "[Number of Ports]"
            reason += (f"; the rows look like those of a {m}-port file, but {source} says "
                       f"{n} ports")
            break
    return reason


def _short_point(head: _Header, what: str, per_point: int, current: list[float], start: int,
                 next_line: int | None) -> SweepFileError:
    if next_line is None:
        tail = " before the file ends"
    else:
        tail = f" before line {next_line}"
    if head.ports <= 2:
        return head.error(_count_reason(head, what, per_point, len(current), head.ports), start)
    return head.error(f"a {what} point needs {per_point} numbers, found {len(current)}{tail}",
                      start)


# --------------------------------------------------------------------------------------
# Numbers to S
# --------------------------------------------------------------------------------------

def _element_order(head: _Header) -> tuple[list[tuple[int, int]], bool]:
    """File order of matrix elements as (row, column), and whether to mirror (Lower/Upper)."""
    n = head.ports
    if n == 2 and (head.version == 1 or head.order_21_12):
        return [(0, 0), (1, 0), (0, 1), (1, 1)], False
    if head.version == 2 and head.matrix == "lower":
        return [(i, j) for i in range(n) for j in range(i + 1)], True
    if head.version == 2 and head.matrix == "upper":
        return [(i, j) for i in range(n) for j in range(i, n)], True
    return [(i, j) for i in range(n) for j in range(n)], False


def _to_s(head: _Header, values: np.ndarray) -> np.ndarray:
    """S-parameters from the (points × numbers) table, converting the data format and kind."""
    n = head.ports
    order, mirror = _element_order(head)
    m = np.empty((values.shape[0], n, n), dtype=np.complex128)
    if head.fmt == "ri" and not mirror:
        # Real and imaginary parts go straight into place: one gather, no temporaries.
        columns = np.empty(2 * n * n, dtype=np.intp)
        for k, (i, j) in enumerate(order):
            columns[2 * (i * n + j)] = 1 + 2 * k
            columns[2 * (i * n + j) + 1] = 2 + 2 * k
        # mode="clip": the indices are valid, and "raise" would buffer the whole output.
        np.take(values, columns, axis=1, out=m.reshape(-1, n * n).view(np.float64), mode="clip")
        order = []
    for k, (i, j) in enumerate(order):
        a = values[:, 1 + 2 * k]
        b = values[:, 2 + 2 * k]
        if head.fmt == "ri":
            m[:, i, j].real = a
            m[:, i, j].imag = b
        else:
            mag = a if head.fmt == "ma" else 10.0 ** (a / 20.0)
            rad = np.radians(b)
            m[:, i, j].real = mag * np.cos(rad)
            m[:, i, j].imag = mag * np.sin(rad)
        if mirror and i != j:
            m[:, j, i] = m[:, i, j]
    if head.param == "s":
        return m
    try:
        return _network_to_s(m, head.param, head.z0().real, normalised=head.version == 1)
    except SweepFileError as exc:
        raise SweepFileError(exc.reason, file=head.file) from None


#: For each kind: is each port's independent quantity a current (True) or a voltage?
_INDEPENDENT_IS_CURRENT = {"z": (True, True), "y": (False, False), "h": (True, False),
                           "g": (False, True)}


def _network_to_s(m: np.ndarray, kind: str, z0_ohm: np.ndarray, *, normalised: bool) -> np.ndarray:
    """Convert Z, Y, H or G matrices to S at real reference impedances ``z0_ohm``.

    With power waves a = (V + Z0·I)/(2√Z0), b = (V − Z0·I)/(2√Z0) and the normalised
    v = V/√Z0 = a + b, i = I·√Z0 = a − b, a relation y = M·x between dependent and
    independent quantities becomes (Qy − M·Qx)·b = (M·Px − Py)·a, so S = (Qy − M·Qx)⁻¹(M·Px − Py).
    Version 1 files hold M already normalised to the one reference R.
    """
    n = m.shape[1]
    current = _INDEPENDENT_IS_CURRENT[kind][:n] if kind in ("h", "g") else \
        (_INDEPENDENT_IS_CURRENT[kind][0],) * n
    current = np.array(current)
    root = np.sqrt(z0_ohm.astype(np.float64))
    if not normalised:
        # scale of x_j (independent) and y_i (dependent): i·√Z0 for a current, v/√Z0 for a voltage
        sx = np.where(current, root, 1.0 / root)
        sy = np.where(current, 1.0 / root, root)
        m = m * (sy[:, None] / sx[None, :])
    # independent x: current → a − b (P = 1, Q = −1); voltage → a + b (P = 1, Q = 1)
    qx = np.where(current, -1.0, 1.0)
    qy = -qx  # the dependent quantity is the other one
    eye = np.eye(n)
    lhs = np.diag(qy)[None] - m * qx[None, None, :]
    rhs = m - eye[None]  # M·Px − Py with Px = Py = I
    with np.errstate(all="ignore"):
        try:
            s = np.linalg.solve(lhs, rhs)
        except np.linalg.LinAlgError:
            k = int(np.argmax(~np.isfinite(1.0 / np.linalg.det(lhs))))
            raise SweepFileError(f"the network data of frequency point {k + 1} cannot be "
                                 "converted to S-parameters (a singular matrix)") from None
    return np.ascontiguousarray(s)


# --------------------------------------------------------------------------------------
# Writing
# --------------------------------------------------------------------------------------

def write(sweep: Sweep, path: str | os.PathLike, *, fmt: str = "RI", freq_unit: str = "GHz",
          version: str = "1.1", comments: Iterable[str] = (), overwrite: bool = False) -> Path:
    """Write a sweep's S-parameters as a Touchstone file, atomically.

    Parameters
    ----------
    sweep : Sweep
        The sweep to write.
    path : path-like
        Destination; for version 1.1 it must end in ``.s<N>p`` with N the sweep's port count.
    fmt : {"RI", "MA", "DB"}
        Real/imaginary, linear magnitude/angle, or dB magnitude/angle (degrees).
    freq_unit : {"Hz", "kHz", "MHz", "GHz"}
        Unit of the frequency column.
    version : {"1.1", "2.0"}
        Touchstone version. 1.1 holds a single real reference resistance for all ports;
        2.0 writes one per port with [Reference].
    comments : iterable of str
        Lines written at the top as ``! text``.
    overwrite : bool
        Replace an existing file (otherwise an existing file is an error).

    Returns
    -------
    Path
        The path written.

    Notes
    -----
    Numbers are written in fixed-width E-notation with 17 significant digits
    (``%.16e``), so RI data read back bit for bit.
    Each frequency is written as the 17-digit value that, multiplied by the unit, gives the
    original frequency in hertz exactly whenever such a value exists (nearly always; in
    rare cases the read-back frequency differs in the last bit).
    """
    fmt_low = str(fmt).lower()
    unit_low = str(freq_unit).lower()
    if fmt_low not in _FORMATS:
        raise SweepFileError(f"unknown Touchstone data format {fmt!r} (use RI, MA or DB)", file=path)
    if unit_low not in _FREQ_UNITS:
        raise SweepFileError(f"unknown frequency unit {freq_unit!r} (use Hz, kHz, MHz or GHz)",
                             file=path)
    if str(version) not in ("1.1", "2.0"):
        raise SweepFileError(f"Touchstone version {version!r} cannot be written (use 1.1 or 2.0)",
                             file=path)
    n = sweep.n_ports
    z0 = np.asarray(sweep.z0_ohm)
    if np.any(z0.imag != 0):
        raise SweepFileError("Touchstone files hold real reference impedances only; this sweep "
                             "has a complex one", file=path)
    match = _EXT.search(os.fspath(path))
    if version == "1.1":
        if not match or int(match.group(1)) != n:
            raise SweepFileError(f"a {n}-port Touchstone 1.1 file must be named .s{n}p",
                                 file=path)
        if np.any(z0.real != z0.real[0]):
            raise SweepFileError("Touchstone 1.1 holds one reference impedance for all ports; "
                                 "this sweep's differ, so write version 2.0", file=path)
    elif match and int(match.group(1)) != n:
        raise SweepFileError(f"a {n}-port file cannot be named .s{match.group(1)}p", file=path)

    lines: list[str] = []
    for text in comments:
        for part in str(text).splitlines() or [""]:
            lines.append(f"! {part}".rstrip())
    r = z0.real[0]
    option = f"# {_UNIT_NAMES[unit_low]} S {fmt_low.upper()} R {r:.17g}"
    if version == "2.0":
        lines.append("[Version] 2.0")
        lines.append(option)
        lines.append(f"[Number of Ports] {n}")
        if n == 2:
            lines.append("[Two-Port Data Order] 12_21")
        lines.append(f"[Number of Frequencies] {sweep.n_points}")
        lines.append("[Reference] " + " ".join(f"{v:.17g}" for v in z0.real))
        lines.append("[Network Data]")
        order = [(i, j) for i in range(n) for j in range(n)]
    else:
        lines.append(option)
        order = [(0, 0), (1, 0), (0, 1), (1, 1)] if n == 2 else \
            [(i, j) for i in range(n) for j in range(n)]
    body = _format_body(sweep, order, fmt_low, _FREQ_UNITS[unit_low], n)
    text = "\n".join(lines) + "\n" + body
    if version == "2.0":
        text += "[End]\n"
    return _atomic(path, text, overwrite)


def _atomic(path, text: str, overwrite: bool) -> Path:
    from refplane.analysis.fileio import write_text_atomic

    return write_text_atomic(path, text, overwrite=overwrite)


def _frequency_column(freq_hz: np.ndarray, scale: float) -> np.ndarray:
    """Values in the unit whose product with ``scale`` gives back ``freq_hz`` exactly."""
    q = freq_hz / scale
    if scale == 1.0:
        return q
    # '%.17g' round-trips a double, so only the product needs checking; step to the
    # neighbouring double where the product misses.
    for _ in range(2):
        back = q * scale
        miss = back != freq_hz
        if not miss.any():
            break
        q = np.where(miss, np.nextafter(q, np.where(back < freq_hz, np.inf, -np.inf)), q)
    back = q * scale
    return np.where(back == freq_hz, q, freq_hz / scale)


def _format_body(sweep: Sweep, order: Sequence[tuple[int, int]], fmt: str, scale: float,
                 n: int) -> str:
    columns = [_frequency_column(sweep.freq_hz, scale)]
    for i, j in order:
        v = sweep.s[:, i, j]
        if fmt == "ri":
            columns += [v.real, v.imag]
        elif fmt == "ma":
            columns += [np.abs(v), np.degrees(np.angle(v))]
        else:
            with np.errstate(divide="ignore"):
                db = 20.0 * np.log10(np.abs(v))
            # An exact zero has no dB value; write a level far below any measurement.
            columns += [np.where(np.isfinite(db), db, -400.0), np.degrees(np.angle(v))]
    table = np.column_stack(columns)
    # Fixed-width E-notation with 17 significant digits: exact, aligned in columns, and
    # read back by the reader's fixed-layout path.
    first, pair = "%.16e", " %+.16e %+.16e"
    if n <= 2:
        template = first + pair * len(order)
    else:
        # Each matrix row starts a new line, at most four pairs per line (as 1.x requires).
        segments = []
        for i in range(n):
            for start in range(0, n, _PAIRS_PER_LINE):
                count = min(_PAIRS_PER_LINE, n - start)
                segments.append((first if i == 0 and start == 0 else "") + pair * count)
        template = "\n".join(segments)
    return "".join(template % tuple(row) + "\n" for row in table.tolist())
