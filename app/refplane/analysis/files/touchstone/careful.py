"""The careful pass: line by line, plain Python floats, exact line numbers.

It runs when the bulk pass (:mod:`.fast`) meets anything irregular, to find the exact line
and reason, or to read the rare legal irregularity (a 1.x noise block, a 2.0 file without
[End]). Both passes give bit-for-bit the same sweep.
"""

from __future__ import annotations

import bisect
import math
import re
from typing import Iterator

import numpy as np

from refplane.analysis.errors import SweepFileError, show_token
from refplane.analysis.files.touchstone.convert import bad_point, to_s
from refplane.analysis.files.touchstone.fast import Points
from refplane.analysis.files.touchstone.header import (
    FREQ_UNITS, MAX_LINE, NUMBER, UNIT_NAMES, Header, decode_line, header_line, split_comment)
from refplane.analysis.files.touchstone.numbers import any_width, fixed_width
from refplane.analysis.files.touchstone.source import LineTooLong, Source, line_ends


def _lines(src: Source) -> Iterator[tuple[int, str]]:
    while True:
        try:
            raw = src.readline()
        except LineTooLong:
            raise _too_long(src) from None
        if not raw:
            return
        number = src.lines_before
        yield number, decode_line(raw, src.name, number)


def _too_long(src: Source) -> SweepFileError:
    return SweepFileError(f"the line is longer than {MAX_LINE >> 20} MiB; this is not a "
                          "Touchstone file", file=src.name, line=src.lines_before + 1)


def _bulk(block: bytes, per_point: int, freq_scale: float, last_freq: float):
    """A block of plain one-line points read in bulk, or None to read it line by line.

    The careful pass uses this between the unusual lines it must look at one by one, so
    that one odd line in a big file does not send millions of lines through Python.
    Returns (values, last frequency in Hz, lines in the block).
    """
    return _after(_bulk_values(block, per_point, freq_scale), last_freq)


def _after(found, last_freq: float):
    """``found`` of :func:`_bulk_values` when its first frequency is above ``last_freq``."""
    if found is None:
        return None
    values, first_freq, block_last, lines = found
    if not first_freq > last_freq:
        return None
    return values, block_last, lines


def _bulk_values(block: bytes, per_point: int, freq_scale: float):
    """The part of :func:`_bulk` that needs no earlier block (so a worker thread can run it
    ahead): (values, first and last frequency in Hz, lines), or None."""
    if b"!" in block or b"#" in block or b"[" in block:
        return None
    values = fixed_width(block)
    if values is not None:
        lines = len(block) // (block.find(b"\n") + 1)
        if values.size != lines * per_point:
            return None
    else:
        found = any_width(block)
        if found is None:
            return None
        values, first = found
        lines = line_ends(block) + (0 if block.endswith(b"\n") else 1)
        # Every line exactly one point: as many line starts as lines, each a point's start.
        if values.size != lines * per_point or int(first.sum()) != lines \
                or not first[::per_point].all():
            return None
    values = values.reshape(-1, per_point)
    if not np.isfinite(values).all():
        return None
    with np.errstate(over="ignore"):
        freq = values[:, 0] * freq_scale
    if not (np.isfinite(freq).all() and freq[0] >= 0 and np.all(freq[1:] > freq[:-1])):
        return None
    return values, float(freq[0]), float(freq[-1]), lines


#: Blocks the careful pass reads and converts ahead (one worker thread each).
READ_AHEAD = 2


class _Ahead:
    """The next block of the file, read while the careful pass works on the current one and
    converted in bulk on a worker thread (the careful pass otherwise runs on one core).

    If the careful pass turns to reading line by line, :meth:`give_back` returns the block's
    bytes to the source unread, so nothing is skipped and the line count stays right.
    """

    def __init__(self, src: Source, per_point: int, freq_scale: float):
        self.src = src
        self.start = src.lines_before + 1
        self.block = b""
        self.error: BaseException | None = None
        self._found = None
        self._thread = None
        try:
            self.block = src.block()
        except (LineTooLong, SweepFileError) as exc:  # raised when this block is taken,
            self.error = exc                          # after what comes before it
            return
        if len(self.block) >= 1 << 16:  # small blocks: a thread costs more than it saves
            import threading

            self._thread = threading.Thread(target=self._run, args=(per_point, freq_scale),
                                            name="refplane-careful", daemon=True)
            self._thread.start()
        else:
            self._run(per_point, freq_scale)

    def _run(self, per_point: int, freq_scale: float) -> None:
        try:
            self._found = _bulk_values(self.block, per_point, freq_scale)
        except Exception:  # the careful pass reads the block line by line and says what is wrong
            self._found = None

    def found(self):
        """The block converted in bulk (waiting for the worker), or None."""
        if self._thread is not None:
            self._thread.join()
            self._thread = None
        return self._found

    def give_back(self) -> None:
        """Put the block back in front of the source's unread bytes."""
        if self._thread is not None:
            self._thread.join()
            self._thread = None
        if self.block:
            self.src.buf = self.block + self.src.buf
            self.src.lines_before -= line_ends(self.block)
            self.block = b""

    def raise_error(self) -> None:
        """Raise what went wrong reading the block, if anything did."""
        if isinstance(self.error, LineTooLong):
            raise _too_long(self.src) from None
        if self.error is not None:
            raise self.error


def careful(name: str, ext_ports: int | None):
    """Read the file line by line; returns (header, freq_hz, s) or raises SweepFileError."""
    with Source(name) as src:
        return _careful(src, name, ext_ports)


def _careful(src: Source, name: str, ext_ports: int | None):
    head = Header(file=name, ext_ports=ext_ports)
    lines = _lines(src)
    first: tuple[int, str] | None = None
    last_line = 0
    for number, text in lines:
        last_line = number
        kind = header_line(head, split_comment(text, head, number), number)
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
        if last_line == 0:
            raise SweepFileError("the file is empty", file=name)
        if head.version == 2 and head.network_data_line is None:
            raise head.error("the file has keywords but no [Network Data] section", last_line)
        if head.version == 2:
            head.start_data(last_line + 1)
        raise head.error("the file holds no frequency points (no lines of numbers)", last_line)

    n = head.ports
    per_point = head.numbers_per_point()
    what = f"{n}-port"
    rows: list[list[float]] = []
    starts: list[int] = []
    current: list[float] = []
    current_start = 0
    freq_scale = FREQ_UNITS[head.unit]
    last_freq = -math.inf
    noise_from: int | None = None
    noise_rows = 0
    noise_last = -math.inf
    end_line: int | None = None
    ended = False

    # The points read so far, converted chunk by chunk into arrays that grow in place (no
    # list of parts and no joined copy), and where each chunk's points sit in the file:
    # (index of its first point, lines), the lines being the first line of a block read in
    # bulk (one point a line) or an array of lines for points read one by one.
    points = Points(n)
    chunk_lines: list[tuple[int, int | np.ndarray]] = []

    def take(values: np.ndarray, lines: int | np.ndarray) -> None:
        at = points.n
        chunk_lines.append((at, lines))
        with np.errstate(over="ignore"):
            freq = values[:, 0] * freq_scale
        if not np.all(np.isfinite(freq)):
            k = int(np.argmax(~np.isfinite(freq)))
            raise head.error(f"the frequency {values[k, 0]:g} {UNIT_NAMES[head.unit]} is too "
                             "large", _line(lines, k))
        s = to_s(head, values, first_point=at)
        bad = bad_point(s)
        if bad is not None:
            raise head.error("this point's values are too large: the S-parameters overflow "
                             "(is a dB value far too high?)", _line(lines, bad))
        points.add(freq, s, rising=False)

    def flush() -> None:
        nonlocal rows, starts
        if rows:
            take(np.asarray(rows, dtype=np.float64), np.asarray(starts))
            rows, starts = [], []

    def body() -> Iterator[tuple[int, str]]:
        """The lines to look at one by one; plain stretches of one-line points between them
        are read in bulk (exactly as the bulk pass would) and never yielded."""
        nonlocal last_freq
        yield first
        ahead: list[_Ahead] = []  # blocks read ahead, oldest first
        while True:
            if n <= 2 and not current and noise_from is None and not ended:
                taken = ahead.pop(0) if ahead else _Ahead(src, per_point, freq_scale)
                taken.raise_error()
                start, block = taken.start, taken.block
                if not block:
                    return
                # The next blocks are read and converted while this one is looked at.
                while len(ahead) < READ_AHEAD and not src.at_end:
                    ahead.append(_Ahead(src, per_point, freq_scale))
                whole = taken.found()
                # Halve a block that cannot be read in bulk until the odd line sits in a
                # piece of a few dozen lines; only those are read one by one.
                pending = [(start, block)]
                while pending:
                    start, piece = pending.pop()
                    clean = not current and noise_from is None and not ended
                    if clean:
                        if piece is block:
                            got = _after(whole, last_freq)
                        else:
                            got = _bulk(piece, per_point, freq_scale, last_freq)
                        if got is not None:
                            values, last_freq, count = got
                            flush()
                            if points.freq is None:
                                points.reserve(piece, src.size)
                            take(values, start)
                            continue
                        cut = piece.find(b"\n", len(piece) // 2) + 1
                        if piece.count(b"\n", 0, cut) > 32 and 0 < cut < len(piece):
                            head_part, tail_part = piece[:cut], piece[cut:]
                            pending.append((start + head_part.count(b"\n"), tail_part))
                            pending.append((start, head_part))
                            continue
                    parts = piece.split(b"\n")
                    if piece.endswith(b"\n"):
                        parts.pop()
                    for i, raw in enumerate(parts):
                        yield start + i, decode_line(raw, name, start + i)
            else:
                if ahead:
                    # Line by line from here: the blocks read ahead go back, unread, the last
                    # first (a block that could not be read says why now, as in bulk).
                    for block_ahead in ahead:
                        block_ahead.raise_error()
                    for block_ahead in reversed(ahead):
                        block_ahead.give_back()
                    ahead = []
                try:
                    yield next(lines)
                except StopIteration:
                    return

    for number, text in body():
        last_line = number
        text = split_comment(text, head, number)
        stripped = text.strip()
        if not stripped:
            continue
        if ended:
            raise head.error("text after [End]; [End] must be the last line", number)
        if noise_from is not None and head.version == 1:
            noise_last = _noise_row(stripped, number, head, noise_last)
            continue
        if stripped.startswith("#"):
            raise head.error("an option line (#) after the data has begun; the option line "
                             "must come before the numbers", number)
        if stripped.startswith("["):
            if head.version != 2:
                head.keyword(stripped, number)  # raises: 2.0 keyword in a 1.x file
            close = stripped.find("]")
            key = " ".join(stripped[1:close].split()).lower() if close > 0 else ""
            if current:
                raise _short_point(head, what, per_point, current, current_start, number)
            if key == "noise data" and noise_from is None and end_line is None:
                if head.n_noise is None:
                    raise head.error("[Noise Data] needs [Number of Noise Frequencies] before "
                                     "[Network Data]", number)
                noise_from = number
                continue
            if key == "end":
                if stripped[close + 1:].strip():
                    raise head.error("text after [End]; [End] must be the last line", number)
                end_line = number
                ended = True
                continue
            shown = show_token(stripped[:close + 1] if close > 0 else stripped, 40)
            if noise_from is not None and head.version == 2:
                raise head.error(f"unexpected keyword {shown} inside [Noise Data]; only [End] "
                                 "may follow", number)
            head.keyword(stripped, number)  # raises for unknown keywords
            raise head.error(f"the keyword {shown} cannot appear inside [Network Data]", number)
        if noise_from is not None:
            noise_last = _noise_row(stripped, number, head, noise_last)
            noise_rows += 1
            continue
        values = _parse_numbers(stripped, number, head)
        if not current:
            current_start = number
            freq = values[0] * freq_scale
            # A 1.x two-port file may end with a noise block: its first frequency is not
            # above the last network frequency and its rows hold 5 numbers.
            if (head.version == 1 and n == 2 and (rows or points.n) and len(values) == 5
                    and freq <= last_freq):
                noise_from = number
                noise_last = _noise_row(stripped, number, head, noise_last)
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
                    f"the frequency {current[0]:g} {UNIT_NAMES[head.unit]} does not increase "
                    f"(the point before it was at {last_freq / freq_scale:g} "
                    f"{UNIT_NAMES[head.unit]}); frequencies must increase strictly",
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
    flush()
    total = points.n
    if head.version == 2:
        if end_line is None:
            head.missing_end = True  # otherwise complete: read, with a warning
        if noise_from is not None and noise_rows != head.n_noise:
            raise head.error(
                f"[Number of Noise Frequencies] says {head.n_noise}, but [Noise Data] holds "
                f"{noise_rows} row(s)", noise_from)
        if total != head.n_freq:
            raise head.error(
                f"[Number of Frequencies] says {head.n_freq}, but [Network Data] holds "
                f"{total} frequency point(s)", head.n_freq_line)
    if not total:
        raise head.error("the file holds no frequency points", None)
    freq_hz, s = points.finish()
    # Two text values can scale to one double, so the scaled values are checked again.
    rising = freq_hz[1:] > freq_hz[:-1]
    if not rising.all():
        k = int(np.argmax(~rising)) + 1
        raise head.error("frequencies must increase strictly", _point_line(chunk_lines, k))
    return head, freq_hz, s


def _line(lines: int | np.ndarray, k: int) -> int:
    """The line of point ``k`` of a chunk (see ``chunk_lines`` in :func:`_careful`)."""
    return lines + k if isinstance(lines, int) else int(lines[k])


def _point_line(chunk_lines: list[tuple[int, int | np.ndarray]], k: int) -> int:
    """The line of point ``k`` counted over the whole file."""
    at, lines = chunk_lines[bisect.bisect_right([c[0] for c in chunk_lines], k) - 1]
    return _line(lines, k - at)


#: Longest token taken as a number (a double needs at most 17 significant digits; allow
#: generous zero padding and exponent).
_LONGEST_NUMBER = 100
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


def _parse_numbers(text: str, number: int, head: Header) -> list[float]:
    control = _CONTROL.search(text)
    if control:
        raise head.error(f"a control character ({control.group()!r}) among the numbers", number)
    out = []
    for tok in text.split():
        if len(tok) > _LONGEST_NUMBER:
            # Python's float() of thousands of digits takes time quadratic in their count.
            raise head.error(f"{show_token(tok)} is too long to be a number", number)
        if not tok.isascii() or not NUMBER.fullmatch(tok.encode("ascii")):
            low = tok.lower()
            if low.lstrip("+-") in ("nan", "inf", "infinity"):
                raise head.error(f"{show_token(tok)} is not a finite number", number)
            raise head.error(f"{show_token(tok)} is not a number", number)
        value = float(tok)
        if not math.isfinite(value):
            raise head.error(f"{show_token(tok)} is too large to be a finite number", number)
        out.append(value)
    return out


def _noise_row(text: str, number: int, head: Header, last_hz: float) -> float:
    """Check one noise-parameter row; returns its frequency in Hz.

    Touchstone gives five numbers per row: frequency, minimum noise figure (dB), the
    magnitude and angle of the optimum source reflection coefficient, and the effective
    noise resistance (normalised in version 1). The rows' frequencies increase.
    """
    values = _parse_numbers(text, number, head)
    if len(values) != 5:
        raise head.error("a noise-parameter row needs 5 numbers (frequency, minimum noise "
                         f"figure, |Γopt|, angle, Rn), found {len(values)}", number)
    freq = values[0] * FREQ_UNITS[head.unit]
    if not (math.isfinite(freq) and freq >= 0):
        raise head.error("a noise-parameter frequency must be a finite, non-negative number",
                         number)
    if freq <= last_hz:
        raise head.error("noise-parameter frequencies must increase strictly", number)
    if values[2] < 0 or values[4] < 0:
        raise head.error("|Γopt| and the noise resistance of a noise-parameter row must not "
                         "be negative", number)
    return freq


def _count_reason(head: Header, what: str, per_point: int, found: int, n: int) -> str:
    reason = f"a {what} row needs {per_point} numbers, found {found}"
    for m in range(1, 9):
        if m != n and found == 1 + 2 * m * m:
            source = "the file name" if head.version == 1 else "[Number of Ports]"
            reason += (f"; the rows look like those of a {m}-port file, but {source} says "
                       f"{n} ports")
            break
    return reason


def _short_point(head: Header, what: str, per_point: int, current: list[float], start: int,
                 next_line: int | None) -> SweepFileError:
    if next_line is None:
        tail = " before the file ends"
    else:
        tail = f" before line {next_line}"
    if head.ports <= 2:
        return head.error(_count_reason(head, what, per_point, len(current), head.ports), start)
    return head.error(f"a {what} point needs {per_point} numbers, found {len(current)}{tail}",
                      start)

