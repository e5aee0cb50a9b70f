"""Exact, vectorised conversion of the numbers of a Touchstone body.

Two paths, both bit-for-bit equal to Python's correctly rounded ``float(text)``:

* :func:`fixed_width` — lines that all share one layout (fixed-width E-notation, as
  instruments and Refplane's writer produce): the digits are gathered column-wise.
* :func:`any_width` — numbers of varying width, as scikit-rf, spreadsheets and many scripts
  write them (shortest round-trip text, tabs, runs of spaces). Every number is located
  with a few whole-block byte operations, the numbers are sorted by their *shape* (width,
  sign, position of the point and of the exponent letter) with a radix sort, and each
  shape is converted as one fixed-layout block by the same exact machinery. A typical
  body has a few dozen shapes, so the work is a handful of numpy passes over the bytes,
  with no Python object per number. numpy's own text parsers (``np.fromstring``,
  ``np.loadtxt``) convert number by number and are 3–5× slower on the same bytes; pandas'
  C tokenizer is about as fast but takes a few tenths of a second to import on every
  ``refplane read`` and is not correctly rounded in every case.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass

import numpy as np

from refplane.analysis.files.touchstone.header import NUMBER

_MAX_FIXUPS = 2000
#: Lines of one layout converted together (bounds the intermediates' memory).
_LINES_AT_ONCE = 8192
#: Digits a mantissa may have in the fast conversion: 19 fit in uint64; up to five more are
#: accepted when they are leading zeros (checked line by line).
_MOST_DIGITS = 24
_NUMBER_BYTES = frozenset(b"0123456789+-.eE")
_POW10_LD: list = []


def _pow10_extended() -> np.ndarray | None:
    """10**0 … 10**27 as x86 80-bit extended floats (exact), or None where there are none.

    Followed by ones up to index 40 (and so at index -1): any count of digits after the
    point a number of at most 40 characters can have indexes it (those beyond 27 are never
    used as results)."""
    if not _POW10_LD:
        ok = np.finfo(np.longdouble).nmant == 63 and np.dtype(np.longdouble).itemsize == 16
        _POW10_LD.append(np.array([10 ** k for k in range(28)] + [1] * 13, dtype=np.longdouble)
                         if ok else None)
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
            if t is None or len(t[1]) > _MOST_DIGITS:
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


def _mantissa(digits: np.ndarray) -> np.ndarray:
    """The integer each run of decimal digits spells (last axis: digits, most significant
    first; at most 19 of them, so the result is exact in uint64).

    The first 15 digits are joined in float64 (exact: below 2**53), where multiply-add is
    vectorised; 64-bit integer multiplication is not, so only the last few digits use it.
    """
    nd = digits.shape[-1]
    head = min(nd, 15)
    m = digits[..., 0].astype(np.float64)
    for j in range(1, head):
        m *= 10.0
        m += digits[..., j]
    m = m.astype(np.uint64)
    for j in range(head, nd):
        m *= np.uint64(10)
        m += digits[..., j]
    return m


def fixed_width(body: bytes) -> np.ndarray | None:
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
    width = body.find(b"\n") + 1
    if width <= 1 or len(body) % width:
        return None
    rows = np.frombuffer(body, dtype=np.uint8).reshape(-1, width)
    if rows.shape[0] <= _LINES_AT_ONCE:
        values = _fixed_rows(rows, body[:width])
        return None if values is None else values.reshape(-1)
    # A few thousand lines at a time: the digits, mantissas and extended-precision
    # intermediates are several times the text's size, and blocks are parsed on several
    # threads at once, so converting a whole block in one go would multiply the peak memory.
    parts = []
    for start in range(0, rows.shape[0], _LINES_AT_ONCE):
        part = _fixed_rows(rows[start:start + _LINES_AT_ONCE], body[:width])
        if part is None:
            return None
        parts.append(part)
    return np.concatenate(parts, axis=0).reshape(-1)


def _fixed_rows(rows: np.ndarray, template: bytes) -> np.ndarray | None:
    """The numbers of rows of bytes that share the layout of ``template`` (see
    :func:`fixed_width`), as a (rows × numbers per row) array; None when a row differs."""
    p10 = _pow10_extended()
    if p10 is None:
        return None
    layout = _layout(template)
    if layout is None:
        return None
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
        if grp.nd > 19:
            # More digits than uint64 holds: read only if the extra leading ones are zeros on
            # every line (shortest round-trip text of a small number, 0.000123…, has them).
            if digits[..., :grp.nd - 19].any():
                return None
            digits = digits[..., grp.nd - 19:]
        m = _mantissa(digits)
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
            low_e, high_e = int(e.min()), int(e.max())
        else:
            # No exponent digits: the exponent is minus the count of digits after the point,
            # the same on every line; a (lines × numbers) array only when it differs.
            low_e, high_e = -int(grp.nfrac.max()), -int(grp.nfrac.min())
            e = np.broadcast_to(-grp.nfrac, (n_lines, width_g)) if low_e != high_e else None
        big = None
        if low_e < -27 or high_e > 27:
            if e is None:
                e = np.full((n_lines, width_g), low_e, dtype=np.int64)
            big = np.abs(e) > 27
            e = np.where(big, 0, e)
            low_e, high_e = int(e.min()), int(e.max())
        ld = m.astype(np.longdouble)
        if low_e == high_e:  # one exponent for all (no exponent digits): a scalar power
            value = ld / p10[-low_e] if low_e <= 0 else ld * p10[low_e]
        elif high_e <= 0:
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
                result[r, g] = float(rows[r, a:b].tobytes())
        out[:, grp.ks] = result
    return out



#: A number longer than this is no measurement; it is left to the careful pass.
_LONGEST = 40
#: Digits (point and sign set aside) the aligned conversion takes: three 8-byte words, less
#: the first byte, which may come from the window of the number before.
_ALIGNED_DIGITS = 23


def _word_masks(byte: int) -> np.ndarray:
    """Row k: the last k bytes of 24 (three little-endian 8-byte words) set to ``byte``, the
    others clear, as three uint64 words. Rows beyond 24 are all set (those numbers are
    sent to the grouped path anyway)."""
    keep = np.zeros((41, 24), dtype=np.uint8)
    for k in range(41):
        keep[k, 24 - min(k, 24):] = byte
    return keep.view("<u8")


#: 10**0 … 10**22 as doubles (all exact), then ones (index -1: no point).
_P10_DOUBLE = np.array([float(10 ** k) for k in range(23)] + [1.0] * 18)
_KEEP = _word_masks(0xFF)
_KEEP_LOW = _word_masks(0x0F)
#: Numbers converted together by :func:`_aligned`.
_AT_ONCE = 16384
_ZERO_DIGITS = np.uint64(0x3030303030303030)


_SCRATCH = threading.local()
#: The largest block whose flags are kept for the next (the reader's blocks are 2 MiB).
_KEPT_FLAGS = 4 << 20


def _flags(size: int) -> tuple[np.ndarray, np.ndarray]:
    """Two arrays of flags, ``size`` and ``size + 1`` long, kept for the calling thread and
    reused by its next block: a block's worth of fresh memory for every pass costs more in
    page faults than the pass itself. A worker thread's pair goes with the thread; at most
    two blocks' worth is kept per thread."""
    have = getattr(_SCRATCH, "flags", None)
    if have is None or have.size < 2 * size + 1:
        have = np.empty(2 * size + 1, dtype=bool)
        if size <= _KEPT_FLAGS:  # an unusual, bigger block is not kept
            _SCRATCH.flags = have
    return have[:size], have[size:2 * size + 1]


def any_width(block: bytes) -> tuple[np.ndarray, np.ndarray] | None:
    """Every whitespace-separated number of ``block``, exactly, and which ones begin a line.

    ``block`` holds whole lines (comments already removed). Returns ``(values,
    first_on_line)``, or None when something in it is not a plain decimal number (a word,
    a control character, ``nan``, a huge token…); the caller then takes the careful path.

    Numbers without an exponent and with at most 23 digits (nearly all of them in a
    measurement file) are converted all at once by :func:`_aligned`; the rest are sorted by
    shape and converted group by group (:func:`_grouped`).
    """
    a = np.frombuffer(block, dtype=np.uint8)
    size = a.size
    if size == 0:
        return np.empty(0), np.empty(0, dtype=bool)
    ink, marks = _flags(size)
    np.greater(a, 32, out=ink)
    # Where the ink starts and stops (marks[i]: byte i differs from byte i - 1, the bytes
    # outside the block counting as blank), and the points, found in one pass: in the usual
    # block every number has one point, so the marks come as start, point, end, start…
    marks[0] = ink[0]
    marks[size] = ink[-1]
    np.not_equal(ink[1:], ink[:-1], out=marks[1:size])
    # The flags' buffer is reused for each test: fresh memory for every pass costs page
    # faults (blocks are parsed on several threads at once).
    points = int(np.count_nonzero(np.equal(a, 46, out=ink)))
    np.logical_or(marks[1:size], ink[1:], out=marks[1:size])
    edges = np.flatnonzero(marks)
    # Between numbers only spaces, tabs and line ends (no other control bytes).
    control = int(np.count_nonzero(np.less(a, 32, out=ink)))
    if control:
        control -= int(np.count_nonzero(np.equal(a, 10, out=ink)))
        if control:
            control -= int(np.count_nonzero(np.equal(a, 9, out=ink)))
            control -= int(np.count_nonzero(np.equal(a, 13, out=ink)))
            if control:
                return None
    # Bytes that can be neither a digit nor a point nor a sign: letters and everything
    # above '9' (counted), and '!'…'/', which hold '+', '-' and '.' (counted with them).
    letters = int(np.count_nonzero(np.greater(a, 57, out=ink))) if int(a.max()) > 57 else 0
    scratch = ink.view(np.uint8)
    np.subtract(a, np.uint8(33), out=scratch)  # wraps round below '!'
    punctuation = int(np.count_nonzero(np.less(scratch, 15, out=ink)))
    # From here on marks[i] tells whether byte i - 1 ends a line.
    marks[0] = False
    np.equal(a, 10, out=marks[1:])
    del scratch
    dots = None
    if edges.size == 3 * points and bool(np.all(a[edges[1::3]] == 46)):
        # Every third mark is a point and there are no others: each number holds exactly
        # one, between its start and its end (the other marks alternate start, end).
        starts, dots, ends = edges[0::3], edges[1::3], edges[2::3]
    else:
        # Numbers without a point, or with a point at their start: mark the ink alone.
        np.greater(a, 32, out=ink)
        edges = np.flatnonzero(ink[1:] != ink[:-1])
        edges += 1
        if ink[0]:
            edges = np.concatenate(([0], edges))
        if ink[-1]:
            edges = np.concatenate((edges, [size]))
        starts, ends = edges[0::2], edges[1::2]
    n = starts.size
    if n == 0:
        return np.empty(0), np.empty(0, dtype=bool)
    widths = ends - starts
    longest = int(widths.max())
    if longest > _LONGEST:
        return None
    # A number begins a line when a line end lies between it and the one before.
    per_number = 2 if dots is None else 3
    gap = int((starts[1:] - ends[:-1]).max()) if n > 1 else 1
    if gap > 1 and gap <= _WIDEST_GAP:
        _line_end_in_gap(marks, a, ink, gap)
    del ink
    if gap <= _WIDEST_GAP:
        first = marks[starts]
    else:
        # Each number has `per_number` marks in `edges` (start, point if marked, end), so
        # the marks up to a line end, divided by that, count the numbers before it
        # (searching the contiguous `edges` rather than the strided `starts`, which numpy
        # would copy first).
        line_ends = np.flatnonzero(marks)
        line_ends -= 1
        after = np.searchsorted(edges, line_ends, side="right") // per_number
        first = np.zeros(n, dtype=bool)
        first[after[after < n]] = True
    first[0] = True
    # A leading sign is set aside and applied at the end. A sign must be followed by a
    # digit or a point: the block's counts (:func:`_odd_numbers`) or the aligned conversion
    # refuse any other byte, the grouped one is told (below).
    lead = a[starts]
    negative = lead == 45
    signed = negative | (lead == 43)
    if signed.any():
        widths -= signed
        if int(widths.min()) < 1:
            return None
    # Digits after the point in each number (-1: no point); two points in one number is no
    # plain number.
    if dots is not None:
        after = ends - dots
        after -= 1
    else:
        dot_at = _offsets(np.flatnonzero(a == 46), starts + signed, ends)
        if dot_at is None:
            return None
        after = np.where(dot_at > 0, widths - dot_at, -1)
    odd = _odd_numbers(block, edges, per_number, letters,
                       punctuation - points - int(np.count_nonzero(signed)))
    values, rest = _aligned(a, ends, widths, after, dots is not None, check=odd is None)
    if odd is not None and odd.size:
        rest = _distinct(np.concatenate((rest, odd)))
    if rest.size:
        rest_starts = starts[rest] + signed[rest]
        behind = a[rest_starts]
        if np.any((behind == 45) | (behind == 43)):
            return None
        rest_widths = widths[rest]
        if rest.size <= _FEW_LEFT:
            # A few dozen numbers with an exponent or many digits: Python's float on each is
            # quicker than sorting them into shapes.
            part = _each(block, rest_starts, rest_widths)
        else:
            rest_after = after[rest]
            part = _grouped(a, rest_starts, rest_widths,
                            np.where(rest_after >= 0, rest_widths - rest_after, 0),
                            b"e" in block or b"E" in block)
        if part is None:
            return None
        values[rest] = part
    if negative.any():
        # Every value here is a magnitude (signs were set aside): setting the sign bit is
        # exact negation, -0.0 included, and much quicker than a masked ufunc.
        bits = values.view(np.uint64)
        bits |= negative.view(np.uint8).astype(np.uint64) << np.uint64(63)
    return values, first


#: The widest blank run between two numbers for which :func:`_line_end_in_gap` marks the
#: line starts (wider ones: the line ends are located and searched for instead).
_WIDEST_GAP = 16


def _line_end_in_gap(marks: np.ndarray, a: np.ndarray, scratch: np.ndarray, gap: int) -> None:
    """Turn ``marks`` (marks[i]: byte i - 1 of ``a`` ends a line) into: a line end lies in
    the blank run just before byte i, for runs of up to ``gap`` bytes. ``scratch`` (flags,
    one per byte) is overwritten.

    By doubling: with N[i] "a line end among the last w bytes before i, all blank from it
    on" and B[i] "the last w bytes before i are all blank", N[i] |= B[i] & N[i - w] and
    B[i] &= B[i - w] give the same for 2w bytes, so a few whole-block passes cover the run.
    N is only ever combined with B over bytes inside the block (i >= w), so B's entries
    whose window reaches before the block are never used.
    """
    size = a.size
    # blank[j]: byte j is blank (B[i] is blank[i - 1]).
    blank = np.less_equal(a, 32, out=scratch)
    width = 1
    while width < gap:
        # numpy reads an overlapping right-hand side whole before the in-place update.
        marks[width:] |= blank[width - 1:] & marks[:size + 1 - width]
        blank[width:] &= blank[:size - width]
        width *= 2


def _odd_numbers(block: bytes, edges: np.ndarray, marks_per_number: int, letters: int,
                 inner_punctuation: int) -> np.ndarray | None:
    """The numbers that hold a byte other than digits and one point (besides a leading sign),
    found from whole-block counts; None when the counts cannot tell which.

    ``edges`` are the numbers' marks in order, ``marks_per_number`` of them each (start,
    point, end or start, end). ``letters`` counts the bytes above '9'; ``inner_punctuation``
    counts the bytes '!'…'/' that are neither a point nor a number's leading sign. With none
    of either, every number is digits and one point. The usual exception is a few numbers in
    E-notation: when every letter is an 'e' or 'E' (found with ``bytes.find``, which scans at
    memory speed) and every other such byte is the sign straight after one, the numbers
    holding the letters are the odd ones. Anything else leaves the check to :func:`_aligned`,
    number by number.
    """
    if not letters:
        return _NONE if inner_punctuation == 0 else None
    at: list[int] = []
    for letter in b"eE":
        i = block.find(letter)
        while i >= 0:
            at.append(i)
            if len(at) > _FEW_LETTERS:
                return None
            i = block.find(letter, i + 1)
    if len(at) != letters:
        return None  # another letter, or a byte above 'z'
    found = np.array(at, dtype=np.intp)
    a = np.frombuffer(block, dtype=np.uint8)
    following = a[np.minimum(found + 1, a.size - 1)]
    signs = int(np.count_nonzero((following == 43) | (following == 45)))
    if signs != inner_punctuation:
        return None
    owner = np.searchsorted(edges, found, side="right")
    owner -= 1
    owner //= marks_per_number
    return _distinct(owner)


def _distinct(indices: np.ndarray) -> np.ndarray:
    """The distinct values of ``indices``, sorted (``np.unique`` would import numpy.ma, about
    10 ms of every ``refplane read``)."""
    indices = np.sort(indices)
    if indices.size > 1:
        indices = indices[np.concatenate(([True], indices[1:] != indices[:-1]))]
    return indices


_NONE = np.empty(0, dtype=np.intp)
#: Letters in a block located one by one (E-notation among plain numbers); with more, every
#: number is checked.
_FEW_LETTERS = 4096


#: Up to this many numbers left by the aligned pass are converted one by one.
_FEW_LEFT = 256


def _each(block: bytes, starts: np.ndarray, widths: np.ndarray) -> np.ndarray | None:
    """Python's correctly rounded ``float`` on each unsigned number; None if one is not a
    plain decimal number."""
    out = np.empty(starts.size)
    for i, (start, width) in enumerate(zip(starts.tolist(), widths.tolist())):
        text = block[start:start + width]
        if text[:1] in (b"+", b"-") or not NUMBER.fullmatch(text):
            return None
        out[i] = float(text)
    return out


def _aligned(a: np.ndarray, ends: np.ndarray, widths: np.ndarray, after: np.ndarray,
             all_points: bool = False, check: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """Values of the unsigned numbers ending at ``ends`` (``widths`` bytes long, ``after``
    digits after the point, -1 without one; ``all_points``: every one has a point), all at
    once; and the indices of those left to the grouped path (more than 23 digits, a mantissa
    of 10**19 or more, a rounding case that needs ``float`` and, with ``check``, any byte
    that is no digit, such as an exponent letter). Without ``check`` the caller has made
    sure that every byte of every number it does not leave aside is a digit or the point.

    The 24 bytes ending at each number are gathered as three little-endian words. Its digits
    are then right-aligned in three words with the point squeezed out: the bytes after the
    point are taken as they are, those before it from the same window one byte to the left
    (a shift by 8 bits across words), bytes before the number are cleared. Each word's
    eight digits become one integer with three multiply-shift steps (the usual "eight
    digits at once" method: pairs, then fours, then eights), so an 18-digit number costs a
    few integer operations rather than one per digit. The integer mantissa M (< 10**19,
    exact in uint64) is divided by 10**f, f the digits after the point: in double precision
    when M < 2**53 and f <= 22 (both exact, so the one rounding is correct), otherwise in
    x86 extended precision, where M is exact too, and rounded again to float64; as in
    :func:`fixed_width`, only results whose 64-bit value lies exactly half-way between two
    doubles can differ from a correctly rounded conversion, and those are redone with
    ``float``.
    """
    n = ends.size
    p10 = _pow10_extended()
    if p10 is None:
        return np.empty(n), np.arange(n)
    if n > _AT_ONCE:
        # A few ten thousand numbers at a time: the words and masks stay in the processor's
        # cache and their memory is reused from one part to the next.
        values = np.empty(n)
        left = []
        for lo in range(0, n, _AT_ONCE):
            hi = min(n, lo + _AT_ONCE)
            values[lo:hi], part = _aligned(a, ends[lo:hi], widths[lo:hi], after[lo:hi],
                                           all_points, check)
            left.append(part + lo)
        return values, np.concatenate(left)
    if all_points:
        digits = widths - 1
        unshifted = after  # bytes at the end taken as they are: those after the point
    else:
        has_dot = after >= 0
        digits = widths - has_dot
        unshifted = np.where(has_dot, after, 24)  # without a point: all of them
    # Every operation below runs over one flat, contiguous array of words: numpy's loops
    # over a short inner axis (the three words of a number) would be many times slower.
    words = _windows(a, ends - 24, 24, ordered=True).view("<u8")
    flat = words.reshape(-1)
    shifted = flat << np.uint64(8)
    shifted[1:] |= flat[:-1] >> np.uint64(56)
    # Bytes of the number after the point from `words`, before it from `shifted` (whose
    # first byte in a row comes from the row before: never used, at most 23 digits). The
    # masks are gathered as rows of three words from small tables (mode "clip": the indices
    # are valid, and numpy buffers the default mode's output).
    flat ^= shifted
    flat &= np.take(_KEEP, unshifted, axis=0, mode="clip").reshape(-1)
    flat ^= shifted
    del shifted
    if check:
        keep = np.take(_KEEP, digits, axis=0, mode="clip").reshape(-1)
        flat &= keep
        np.invert(keep, out=keep)
        keep &= _ZERO_DIGITS
        flat |= keep  # bytes before the number become '0'
        del keep
        # Every byte must now be an ASCII digit: below '0' the subtraction, above '9' the
        # addition sets the byte's top bit (a borrow or carry from a neighbour only ever
        # makes a bad word look bad).
        bad = flat - _ZERO_DIGITS
        bad |= flat + np.uint64(0x4646464646464646)
        bad &= np.uint64(0x8080808080808080)
        flat &= np.uint64(0x0F0F0F0F0F0F0F0F)
    else:
        # Digits only: keeping each kept byte's low four bits gives its value, and the
        # cleared bytes before the number read as leading zeros.
        flat &= np.take(_KEEP_LOW, digits, axis=0, mode="clip").reshape(-1)
        bad = None
    # Eight digits per word, most significant in the lowest byte: pairs, fours, eights.
    flat *= np.uint64(2561)
    flat >>= np.uint64(8)
    flat &= np.uint64(0x00FF00FF00FF00FF)
    flat *= np.uint64(6553601)
    flat >>= np.uint64(16)
    flat &= np.uint64(0x0000FFFF0000FFFF)
    flat *= np.uint64(42949672960001)
    flat >>= np.uint64(32)
    head = words[:, 0]
    m = head * np.uint64(10 ** 16)
    m += words[:, 1] * np.uint64(10 ** 8)
    m += words[:, 2]
    # Left out: no digits, more than 23, a mantissa of 10**19 or more (it may not fit in 64
    # bits), any byte that is no digit (an exponent letter, a sign inside).
    left = digits > _ALIGNED_DIGITS
    left |= digits == 0
    left |= head >= np.uint64(1000)
    del words, flat, head
    if bad is not None and bad.any():
        bad = bad.reshape(n, 3)
        left |= (bad[:, 0] | bad[:, 1] | bad[:, 2]) != 0
    del bad
    # Below 2**53 a mantissa is an exact double, as is 10**f for f <= 22, so one IEEE
    # division rounds M / 10**f correctly; in a file of shortest round-trip numbers that is
    # most of them, and double division is many times quicker than extended precision.
    values = m.astype(np.float64)
    values /= _P10_DOUBLE[after]
    wide = m >= np.uint64(1 << 53)
    wide |= after > 22
    wide = np.flatnonzero(wide)
    if wide.size:
        value = m[wide].astype(np.longdouble)
        value /= p10[after[wide]]
        low = value.view(np.uint64)[::2]
        # Rounding first to 64 bits and then to 53 can err only when the 64-bit result sits
        # exactly half-way between two doubles; those (about 1 in 2048) are redone exactly.
        left[wide] |= (low & np.uint64(0x7FF)) == np.uint64(0x400)
        values[wide] = value.astype(np.float64)
    return values, np.flatnonzero(left)


def _grouped(a: np.ndarray, starts: np.ndarray, widths: np.ndarray, dot_at: np.ndarray,
             letters: bool) -> np.ndarray | None:
    """Values of the unsigned numbers at ``starts``, sorted by shape and converted one shape
    at a time by :func:`_fixed_rows` (any row that is not a plain number: None)."""
    n = starts.size
    longest = int(widths.max())
    tokens = _windows(a, starts, longest)
    # Shape key: width, the offset of the point and where the exponent letter sits counted
    # from the number's end (a short range: keeps the key below 2**17, so the count of keys
    # present is cheap). The key only groups numbers; each group's layout is then checked
    # byte by byte, so a coarse key costs speed, never correctness.
    key = widths.astype(np.uint32) << 11
    key |= dot_at.astype(np.uint32) << 5
    if letters:
        inside = np.arange(longest) < widths[:, None]
        is_e = ((tokens | 32) == 101) & inside
        # Count from the end of the last letter in the number (0: none).
        last = longest - 1 - np.argmax(is_e[:, ::-1], axis=1)
        from_end = np.where(is_e.any(axis=1), np.minimum(widths - last, 7), 0)
        key |= from_end.astype(np.uint32)
    # Number the shapes present 0, 1, 2 … so that a 16-bit radix sort groups them.
    present = np.flatnonzero(np.bincount(key))
    if present.size > 65535:
        return None
    rank = np.zeros(int(present[-1]) + 1, dtype=np.uint16)
    rank[present] = np.arange(present.size, dtype=np.uint16)
    key = rank[key]
    order = np.argsort(key, kind="stable")
    key = key[order]
    bounds = np.concatenate(([0], np.flatnonzero(np.diff(key)) + 1, [n])).tolist()
    tokens = tokens[order]
    values = np.empty(n, dtype=np.float64)
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        width = int(widths[order[lo]])
        rows = tokens[lo:hi, :width]
        part = _fixed_rows(rows, rows[0].tobytes())
        if part is None:
            part = _one_by_one(rows)
            if part is None:
                return None
        values[order[lo:hi]] = part.reshape(-1)
    return values


def _windows(a: np.ndarray, starts: np.ndarray, width: int, ordered: bool = False) -> np.ndarray:
    """The ``width`` bytes from each start as the rows of a (starts × width) array: overlapping
    windows of ``a`` gathered in one step. The few windows that would run past either end of
    ``a`` are redone from a short copy of its head or tail padded with spaces (no padded
    copy of the whole block). ``ordered``: the starts rise, so the first and last tell
    whether any window runs past an end."""
    size = a.size
    last = size - width  # the last start whose window fits
    if last < 0:
        padded = np.full(size + width, 32, dtype=np.uint8)
        padded[:size] = a
        a, last = padded, size
    windows = np.ndarray(shape=(last + 1,), dtype=f"V{width}", buffer=a, strides=(1,))
    if ordered and starts.size and starts[0] >= 0 and starts[-1] <= last:
        return windows[starts].view(np.uint8).reshape(-1, width)
    out = windows[np.clip(starts, 0, last)].view(np.uint8).reshape(-1, width)
    late = np.flatnonzero(starts > last)
    if late.size:
        cut = int(starts[late].min())
        tail = np.full(size - cut + width, 32, dtype=np.uint8)
        tail[:size - cut] = a[cut:size]
        tail_windows = np.ndarray(shape=(size - cut + 1,), dtype=f"V{width}", buffer=tail,
                                  strides=(1,))
        out[late] = tail_windows[starts[late] - cut].view(np.uint8).reshape(-1, width)
    early = np.flatnonzero(starts < 0)
    if early.size:
        # Windows that begin before the block: spaces, then the block's first bytes.
        upto = min(size, int(starts[early].max()) + width)
        head = np.full(2 * width, 32, dtype=np.uint8)
        head[width:width + upto] = a[:upto]
        head_windows = np.ndarray(shape=(width + 1,), dtype=f"V{width}", buffer=head,
                                  strides=(1,))
        out[early] = head_windows[starts[early] + width].view(np.uint8).reshape(-1, width)
    return out


def _offsets(found: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray | None:
    """1-based offset of at most one marked byte inside each number (0: none there)."""
    n = starts.size
    if found.size == n and bool(np.all((found >= starts) & (found < ends))):
        return found - starts + 1  # the usual case: exactly one in every number
    out = np.zeros(n, dtype=np.int64)
    if found.size == 0:
        return out
    owner = np.searchsorted(starts, found, side="right") - 1
    if owner[0] < 0 or np.any(np.diff(owner) == 0) or np.any(found >= ends[owner]):
        return None  # two in one number, or one between numbers: not a plain number
    out[owner] = found - starts[owner] + 1
    return out


def _one_by_one(rows: np.ndarray) -> np.ndarray | None:
    """Python's ``float`` on each row's bytes (unusual shapes, long mantissas)."""
    out = np.empty(rows.shape[0])
    for i, raw in enumerate(rows):
        text = raw.tobytes()
        if not NUMBER.fullmatch(text):
            return None
        value = float(text)
        out[i] = value
    return out
