"""The lines before the numbers: option line, version 2.0 keywords, comments, decoding."""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass, field

import numpy as np

from refplane.analysis.errors import SweepFileError, show_token

FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
UNIT_NAMES = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}
PARAMS = ("s", "y", "z", "g", "h")
FORMATS = ("ri", "ma", "db")
EXT = re.compile(r"\.s(\d+)p$", re.IGNORECASE)
NUMBER = re.compile(rb"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")
#: Longest line read (8 MiB). A 100-port point written on one line is well under 1 MiB; a
#: longer line is no Touchstone line, and reading it whole would take unbounded memory.
MAX_LINE = 8 << 20
#: Comments that some simulators use for per-frequency port impedances (not Touchstone).
_PORT_IMPEDANCE = re.compile(r"^\s*port\s*impedance", re.IGNORECASE)


# --------------------------------------------------------------------------------------
# Header: option line and 2.0 keywords
# --------------------------------------------------------------------------------------

@dataclass
class Header:
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
    keyword_values: dict = field(default_factory=dict)
    port_impedance_line: int | None = None
    missing_end: bool = False
    data_line: int | None = None

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

    def z0_text(self) -> str:
        values = self.reference if self.reference is not None else [self.r_ohm]
        return " / ".join(f"{v:g}" for v in values) + " ohm"

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
            if low in FREQ_UNITS:
                kind = "frequency unit"
            elif low in PARAMS:
                kind = "parameter"
            elif low in FORMATS:
                kind = "data format"
            elif low == "r" or (low.startswith("r") and is_number(low[1:])):
                kind = "reference"
            else:
                raise self.error(
                    f"unknown option {show_token(tok)} in the option line (it takes a frequency unit "
                    "Hz/kHz/MHz/GHz, a parameter S/Y/Z/G/H, a format RI/MA/DB and R followed "
                    "by the reference resistance)", line)
            if kind in seen:
                raise self.error(
                    f"the option line gives the {kind} twice ({show_token(seen[kind])} and "
                    f"{show_token(tok)})", line)
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
                if not is_number(value):
                    raise self.error(f"the reference resistance {show_token(value)} after R "
                                     "is not a number", line)
                r = float(value)
                if not (math.isfinite(r) and r > 0):
                    raise self.error(f"the reference resistance R {show_token(value)} must be a positive "
                                     "number of ohms", line)
                self.r_ohm = r
            i += 1

    def keyword(self, text: str, line: int) -> str:
        """Handle a ``[Keyword] value`` line of a 2.0 file; returns the keyword's name."""
        close = text.find("]")
        if close < 0:
            raise self.error("a keyword line must look like [Keyword] value, not "
                             f"{show_token(text, 40)}", line)
        name = " ".join(text[1:close].split()).lower()
        value = text[close + 1:].strip()
        if self.in_information:
            if name == "end information":
                self.in_information = False
            return name
        if name == "version":
            if self.version == 2:
                raise self.error("[Version] is given twice", line)
            if self.keyword_seen or self.data_line is not None or self.option_line is not None:
                raise self.error("[Version] must come before every other keyword and the "
                                 "option line", line)
            self.keyword_seen = True
            if value.split()[:1] not in (["2.0"], ["2.1"], ["2"]):
                raise self.error(f"Touchstone [Version] {show_token(value)} is not supported (Refplane "
                                 "reads version 1.x files without [Version], and 2.0)", line)
            self.version = 2
            return name
        if self.version != 2:
            raise self.error(
                f"the keyword [{show_token(text[1:close].strip(), 40)[1:-1]}] belongs to Touchstone 2.0, but the file "
                "does not start with [Version] 2.0", line)
        self.keyword_seen = True
        self.reference_open = name == "reference"
        if name in _ONCE:
            shown = " ".join(value.split()).lower()
            if name in self.keyword_values:
                before, at = self.keyword_values[name]
                if before != shown:
                    raise self.error(f"[{_ONCE[name]}] is given twice with different values "
                                     f"(line {at} and here)", line)
                return name  # the same value again: harmless
            self.keyword_values[name] = (shown, line)
        if name == "end" and self.network_data_line is None:
            raise self.error("[End] comes before [Network Data]; the file holds no network data",
                             line)
        if name == "number of ports":
            n = self._count(value, "[Number of Ports]", line)
            if n < 1:
                raise self.error("[Number of Ports] must be at least 1", line)
            if n > 999:
                raise self.error(f"[Number of Ports] {n} is more than Refplane reads (999)", line)
            if self.ext_ports is not None and n != self.ext_ports:
                raise self.error(
                    f"[Number of Ports] says {n}, but the file name (.s{self.ext_ports}p) says "
                    f"{self.ext_ports}", line)
            self.n_ports, self.n_ports_line = n, line
        elif name == "two-port data order":
            order = value.lower()
            if order not in ("12_21", "21_12"):
                raise self.error("[Two-Port Data Order] must be 12_21 or 21_12, not "
                                 f"{show_token(value)}",
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
                raise self.error("[Matrix Format] must be Full, Lower or Upper, not "
                                 f"{show_token(value)}",
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
            raise self.error(f"unknown keyword [{show_token(text[1:close].strip(), 40)[1:-1]}]",
                             line)
        return name

    def reference_values(self, text: str, line: int) -> None:
        for tok in text.split():
            if not is_number(tok):
                raise self.error(f"[Reference] value {show_token(tok)} is not a number", line)
            r = float(tok)
            if not (math.isfinite(r) and r > 0):
                raise self.error(f"[Reference] value {show_token(tok)} must be a positive "
                                 "number of ohms",
                                 line)
            if len(self.reference) >= self.n_ports:
                raise self.error(
                    f"[Reference] gives more than {self.n_ports} values for a "
                    f"{self.n_ports}-port file", line)
            self.reference.append(r)

    def _count(self, value: str, what: str, line: int) -> int:
        if not re.fullmatch(r"\+?\d+", value):
            raise self.error(f"{what} must be a whole number, not {show_token(value)}", line)
        digits = value.lstrip("+0")
        if len(digits) > 12:
            raise self.error(f"{what} {show_token(value)} is far too large", line)
        return int(digits or "0")  # not int(value): thousands of leading zeros are refused there

    def start_data(self, line: int) -> None:
        """Checks made when the numbers begin."""
        self.data_line = line
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


def ports_in_name(name: str) -> int | None:
    """The port count a ``.sNp`` file name gives, or None; 10**6 stands for an absurd N
    (thousands of digits are not converted)."""
    match = EXT.search(name)
    if not match:
        return None
    digits = match.group(1).lstrip("0")
    return int(digits or "0") if len(digits) <= 6 else 10 ** 6


_ONCE = {"number of ports": "Number of Ports", "two-port data order": "Two-Port Data Order",
         "number of frequencies": "Number of Frequencies",
         "number of noise frequencies": "Number of Noise Frequencies",
         "matrix format": "Matrix Format", "reference": "Reference"}


def is_number(text: str) -> bool:
    """True for a plain decimal number of at most 100 characters (Python's float() of
    thousands of digits takes time quadratic in their count)."""
    if len(text) > 100:
        return False
    return bool(NUMBER.fullmatch(text.encode("ascii", "replace")))


def decode_line(raw: bytes, file: str, line: int) -> str:
    """One line's text. Numbers and keywords are ASCII; comments are free text, often saved
    by instruments in Windows-1252 or Latin-1 ("25 °C"), so any byte decodes: UTF-8 first,
    else Windows-1252, else Latin-1. A NUL byte means a binary file."""
    if b"\x00" in raw:
        raise SweepFileError("the file holds NUL bytes: it looks like a binary file, not a "
                             "Touchstone text file", file=file, line=line)
    if line == 1 and raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]  # a UTF-8 byte-order mark
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        pass
    try:
        return raw.decode("cp1252")
    except UnicodeDecodeError:
        return raw.decode("latin-1")


def header_line(head: Header, text: str, line: int) -> str:
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


def split_comment(text: str, head: Header, line: int | None) -> str:
    """The text before a ``!``; the comment's text goes to ``head.comments``."""
    bang = text.find("!")
    if bang < 0:
        return text
    comment = text[bang + 1:].strip()
    head.comments.append(comment)
    if head.port_impedance_line is None and _PORT_IMPEDANCE.match(comment) \
            and not _same_impedance(comment, head):
        head.port_impedance_line = line if line is not None else 0
    return text[:bang]


def _same_impedance(comment: str, head: Header) -> bool:
    """True when a ``Port Impedance re im …`` comment repeats the reference (harmless)."""
    words = comment.split()[2:]
    if len(words) > 2000 or any(len(w) > 100 for w in words):
        return False
    try:
        values = [float(w) for w in words]
    except ValueError:
        return False
    if not values or len(values) % 2:
        return False
    ref = head.reference if head.reference is not None else [head.r_ohm]
    pairs = list(zip(values[0::2], values[1::2]))
    return all(im == 0 and any(re == r for r in ref) for re, im in pairs)


def warn_port_impedance(head: Header) -> None:
    """Warn that per-frequency port impedances given in comments are not used."""
    if head.port_impedance_line is None:
        return
    where = f", line {head.port_impedance_line}" if head.port_impedance_line else ""
    warnings.warn(
        f"{head.file}{where}: the file gives port impedances in comments (not part of "
        f"Touchstone); they are not used, readings use the reference {head.z0_text()}",
        TouchstoneWarning, stacklevel=3)


class TouchstoneWarning(UserWarning):
    """A file was read, but something in it deserves attention (shown, never fatal)."""

