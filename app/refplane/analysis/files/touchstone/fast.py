"""The bulk pass: the header line by line, then the numbers a megabyte at a time.

Comments are cut out only where a ``!`` occurs. A block whose lines share one layout
(fixed-width E-notation) goes through :func:`.numbers.fixed_width`, any other through
:func:`.numbers.any_width`; both are exact. Each point must start a line, and a one- or
two-port point must be one whole line: the position of every number in its line is checked,
not only the count. Anything irregular — a word, an option line or keyword among the
numbers, a non-finite value, a count that does not fit — returns None, and the careful pass
(:mod:`.careful`) re-reads the file to name the line and the reason.
"""

from __future__ import annotations

import re
from functools import partial

import numpy as np

from refplane.analysis.errors import SweepFileError
from refplane.analysis.files.touchstone.convert import bad_point, to_s
from refplane.analysis.files.touchstone.header import (
    FREQ_UNITS, Header, decode_line, header_line, split_comment)
from refplane.analysis.files.touchstone.blocks import Blocks
from refplane.analysis.files.touchstone.numbers import any_width, fixed_width
from refplane.analysis.files.touchstone.source import (
    LinesUncounted, LineTooLong, Source, line_ends)

_COMMENT = re.compile(rb"![^\n]*")
_END_ONLY = re.compile(rb"\s*\[\s*end\s*\]\s*", re.IGNORECASE)


class _Irregular(Exception):
    """The fast pass met something it leaves to the careful pass."""


def fast(src: Source, name: str, ext_ports: int | None):
    """Read the file in bulk; returns (header, freq_hz, s), or None for the careful pass."""
    try:
        return _fast(src, name, ext_ports)
    except (_Irregular, LineTooLong, LinesUncounted):
        return None


def _fast(src: Source, name: str, ext_ports: int | None):
    head = Header(file=name, ext_ports=ext_ports)
    line = 0
    first = b""
    # Header: a handful of lines, read one by one.
    while True:
        raw = src.readline()
        if not raw:
            break
        line += 1
        text = decode_line(raw, name, line)
        kind = header_line(head, split_comment(text, head, line), line)
        if kind == "keyword:network data":
            head.network_data_line = line
            head.start_data(line + 1)
        elif kind.startswith("keyword:") and head.network_data_line is not None:
            return None  # e.g. [End] straight after [Network Data]: the careful pass says so
        elif kind == "data":
            if "!" in text:
                head.comments.pop()  # the body pass collects this line's comment
                head.port_impedance_line = None if head.port_impedance_line == line else \
                    head.port_impedance_line
            head.start_data(line)
            first = raw
            break
    if not first:
        return None  # no numbers at all: the careful pass words the error
    per_point = head.numbers_per_point()
    one_line = head.ports <= 2
    tail = b""
    # One- and two-port points are whole lines, so each block converts its own points to
    # S on a worker thread; bigger networks' points may straddle two blocks and are
    # converted once all the numbers are in.
    parse = partial(_block_points, head=head, per_point=per_point) if one_line else _parse
    points = Points(head.ports) if one_line else None
    numbers: list = []

    def take(result) -> None:
        if result is None:
            raise _Irregular
        if points is not None:
            points.add(*result)
        else:
            numbers.append(result)

    block = first + src.block(count_lines=False)
    with Blocks(parse) as blocks:
        while block:
            body, rest = _clean(block, head)
            if body:
                if points is not None and points.freq is None:
                    points.reserve(body, src.size)
                blocks.add(body)
                for result in blocks.ready():
                    take(result)
            if rest is not None:
                tail = rest + b"".join(iter(partial(src.block, False), b""))
                break
            if blocks.failed:
                raise _Irregular
            block = src.block(count_lines=False)
        for result in blocks.results():
            take(result)
    if head.version == 2 and not _END_ONLY.fullmatch(tail):
        return None  # [Noise Data], or no [End]: the careful pass checks them
    found = points.finish() if points is not None else _join_numbers(numbers, head, per_point)
    if found is None:
        return None
    freq, s = found
    if freq.size == 0 or freq[0] < 0:
        return None
    if head.version == 2 and freq.size != head.n_freq:
        return None
    return head, freq, s


def _block_points(body: bytes, head: Header, per_point: int):
    """Frequencies and S-parameters of one block of one-line points (a worker's job), or
    None when anything in it is irregular."""
    parsed = _parse(body)
    if parsed is None:
        return None
    values, first = parsed
    if values.size % per_point:
        return None
    grid = first.reshape(-1, per_point)
    if not grid[:, 0].all() or grid[:, 1:].any():
        return None  # a point split over two lines, or two points on one line
    return _points(values.reshape(-1, per_point), head)


def _points(values: np.ndarray, head: Header):
    """(freq_hz, s) of a (points × numbers) table, or None when a number is not finite,
    the frequencies do not rise, or a conversion overflows."""
    if not np.isfinite(values).all():
        return None
    with np.errstate(over="ignore"):
        freq = values[:, 0] * FREQ_UNITS[head.unit]
    if not np.isfinite(freq).all():
        return None
    if freq.size > 1 and not np.all(freq[1:] > freq[:-1]):
        return None
    try:
        s = to_s(head, values)
    except SweepFileError:
        return None  # e.g. a singular Z matrix: the careful pass names its line
    # Finite RI and MA numbers give finite S; dB magnitudes and Y/Z/G/H conversions can
    # overflow.
    if (head.fmt == "db" or head.param != "s") and bad_point(s) is not None:
        return None
    return freq, s


class Points:
    """The sweep's points, gathered block by block into arrays that grow in place.

    The arrays are sized from the file's length and the first block's bytes per line, and
    each block's points are copied in as soon as they are ready, so the peak memory stays
    near the final arrays' size (no list of parts and no second, joined copy).
    """

    def __init__(self, ports: int):
        self.ports = ports
        self.freq: np.ndarray | None = None
        self.s: np.ndarray | None = None
        self.n = 0

    def reserve(self, body: bytes, file_size: int) -> None:
        """Size the arrays for a file of ``file_size`` bytes whose lines look like ``body``."""
        per_line = len(body) / max(1, line_ends(body))
        self._resize(int(file_size / per_line * 1.01) + 16)

    def add(self, freq: np.ndarray, s: np.ndarray, rising: bool = True) -> None:
        """Append one block's points; with ``rising``, the frequencies must go on rising
        across blocks (else the bulk pass stops)."""
        k = freq.size
        if not k:
            return
        if rising and self.n and not freq[0] > self.freq[self.n - 1]:
            raise _Irregular
        if self.freq is None:
            self._resize(k)
        if self.n + k > self.freq.size:
            self._resize(max(self.n + k, int(self.freq.size * 1.25)))
        self.freq[self.n:self.n + k] = freq
        self.s[self.n:self.n + k] = s
        self.n += k

    def finish(self) -> tuple[np.ndarray, np.ndarray] | None:
        """The arrays cut to the points read (in place), or None when there are none."""
        if not self.n:
            return None
        self._resize(self.n)
        return self.freq, self.s

    def _resize(self, size: int) -> None:
        if self.freq is None:
            self.freq = np.empty(size)
            self.s = np.empty((size, self.ports, self.ports), dtype=np.complex128)
        else:
            # In place (realloc): no second copy of the arrays is made.
            self.freq.resize(size, refcheck=False)
            self.s.resize((size, self.ports, self.ports), refcheck=False)


def _join_numbers(parts: list, head: Header, per_point: int):
    """(freq_hz, s) from the blocks' numbers of a network with more than two ports, whose
    points may run over several lines and blocks; None when irregular."""
    chunks: list[np.ndarray] = []
    count = 0
    for values, first in parts:
        if values.size:
            offset = (-count) % per_point  # the first point that starts in this block
            if not first[offset::per_point].all():
                return None
            chunks.append(values)
            count += values.size
    if count == 0 or count % per_point:
        return None
    values = np.concatenate(chunks) if len(chunks) != 1 else chunks[0]
    del chunks
    return _points(values.reshape(-1, per_point), head)


def _parse(body: bytes) -> tuple[np.ndarray, np.ndarray] | None:
    """The numbers of one block of whole lines and which of them begin a line; None when
    the block is not plain numbers. Runs in a worker thread: it touches nothing shared."""
    values = fixed_width(body)
    if values is not None:
        lines = len(body) // (body.find(b"\n") + 1)
        first = np.zeros(values.size, dtype=bool)
        first[::values.size // lines] = True
        return values, first
    return any_width(body)


def _clean(block: bytes, head: Header) -> tuple[bytes, bytes | None]:
    """Cut comments out of a block of body lines; split off a 2.0 keyword tail.

    Returns the numeric text and, for a 2.0 file, the text from the first keyword on (or None).
    """
    if b"!" in block:
        for found in _COMMENT.findall(block):
            split_comment(decode_line(found, head.file, 2), head, None)
        if head.port_impedance_line == 0:
            raise _Irregular  # the careful pass finds its line for the warning
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
        if b"!" in rest or b"[" not in rest:
            raise _Irregular
    if b"#" in block:
        raise _Irregular  # an option line after the data: refused, at its line, by the careful pass
    return block, rest
