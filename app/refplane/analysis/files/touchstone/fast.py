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

import numpy as np

from refplane.analysis.files.touchstone.convert import bad_point, to_s
from refplane.analysis.files.touchstone.header import (
    FREQ_UNITS, Header, decode_line, header_line, split_comment)
from refplane.analysis.files.touchstone.numbers import any_width, fixed_width
from refplane.analysis.files.touchstone.source import LineTooLong, Source

_COMMENT = re.compile(rb"![^\n]*")
_END_ONLY = re.compile(rb"\s*\[\s*end\s*\]\s*", re.IGNORECASE)


class _Irregular(Exception):
    """The fast pass met something it leaves to the careful pass."""


def fast(src: Source, name: str, ext_ports: int | None):
    """Read the file in bulk; returns (header, freq_hz, s), or None for the careful pass."""
    try:
        return _fast(src, name, ext_ports)
    except (_Irregular, LineTooLong):
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
    parts: list[np.ndarray] = []
    tail = b""
    count = 0
    block = first + src.block()
    while block:
        body, rest = _clean(block, head)
        if body:
            count = _numbers(body, parts, count, per_point, head.ports <= 2)
        if rest is not None:
            tail = rest + b"".join(iter(src.block, b""))
            break
        block = src.block()
    if head.version == 2 and not _END_ONLY.fullmatch(tail):
        return None  # [Noise Data], or no [End]: the careful pass checks them
    values = np.concatenate(parts) if len(parts) != 1 else parts[0]
    del parts
    if values.size == 0 or values.size % per_point:
        return None
    n_points = values.size // per_point
    if head.version == 2 and n_points != head.n_freq:
        return None
    values = values.reshape(n_points, per_point)
    if not np.isfinite(values).all():
        return None
    with np.errstate(over="ignore"):
        freq = values[:, 0] * FREQ_UNITS[head.unit]
    if not np.isfinite(freq).all() or freq[0] < 0:
        return None
    if n_points > 1 and not np.all(freq[1:] > freq[:-1]):
        return None
    s = to_s(head, values)
    # Finite RI and MA numbers give finite S; dB magnitudes and Y/Z/G/H conversions can
    # overflow.
    if (head.fmt == "db" or head.param != "s") and bad_point(s) is not None:
        return None
    return head, freq, s


def _numbers(body: bytes, parts: list, count: int, per_point: int, one_line: bool) -> int:
    """Parse one block, check that every point starts a line (and that a one- or two-port
    point is exactly one line), append the numbers; returns the running count."""
    values = fixed_width(body)
    if values is not None:
        per_line = values.size // (len(body) // (body.find(b"\n") + 1))
        first = np.zeros(values.size, dtype=bool)
        first[::per_line] = True
    else:
        found = any_width(body)
        if found is None:
            raise _Irregular
        values, first = found
    if values.size:
        if one_line:  # one- and two-port files: one point per line, exactly
            # Blocks hold whole lines, so here every block starts with a point.
            if count % per_point or values.size % per_point:
                raise _Irregular
            grid = first.reshape(-1, per_point)
            if not grid[:, 0].all() or grid[:, 1:].any():
                raise _Irregular
        else:
            offset = (-count) % per_point  # the first point that starts in this block
            if not first[offset::per_point].all():
                raise _Irregular
        parts.append(values)
    return count + values.size


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
