"""Sweeps saved as CSV text: a header row naming the columns, then one row per frequency.

Accepted files
--------------
* Separator: comma, semicolon or tab (taken from the header row).
* Lines starting with ``#`` or ``!`` are comments, kept in :attr:`Sweep.comments`; blank
  lines are skipped.
* The first other line is the header. It needs a frequency column (a name containing
  "freq", or "f" alone) whose unit is taken from the name — "Frequency (MHz)", "freq_hz",
  "f [GHz]" — and is hertz when no unit is given.
* Then, per S-parameter, either real and imaginary columns ("re"/"real", "im"/"imag") or
  magnitude and phase columns ("mag"/"magnitude"/"abs", "phase"/"ang"/"angle"/"arg"). A
  magnitude whose name says "dB" is in decibels, otherwise linear; a phase is in degrees
  unless its name says "rad".
* Columns are one-port (S11) unless the names give S11, S21, S12 and S22 each (then the file
  is a two-port). Unnamed parameters ("re", "im") mean S11.
* The reference impedance is 50 Ω unless a comment line says ``z0 = 75`` (or ``Z0: 75 ohm``).

Anything else raises :class:`SweepFileError` with the file, the line and the reason.
"""

from __future__ import annotations

import math
import os
import re
from pathlib import Path

import numpy as np

from refplane.analysis.errors import SweepFileError, show_token
from refplane.analysis.sweep import Sweep

_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9, "thz": 1e12}
_Z0_COMMENT = re.compile(r"\bz0\s*[:=]\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)", re.IGNORECASE)
_PARAM = re.compile(r"(?<![a-z])s\s*([1-4])\s*,?\s*([1-4])(?!\d)", re.IGNORECASE)
_NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")
_WORD = re.compile(r"[a-z]+")

_REAL = {"re", "real"}
_IMAG = {"im", "imag", "imaginary"}
_MAG = {"mag", "magnitude", "abs", "db", "lin"}
_PHASE = {"phase", "ph", "ang", "angle", "arg", "deg", "rad"}


def _words(name: str) -> list[str]:
    # "S11_real" → ["s", "real"]; "Frequency (MHz)" → ["frequency", "mhz"]
    return _WORD.findall(re.sub(r"\d", " ", name.lower()))


def _frequency_scale(name: str) -> float | None:
    """Hz per unit for a frequency column name, or None when the name is not a frequency."""
    words = _words(name)
    if not any(w.startswith("freq") for w in words) and words[:1] != ["f"]:
        return None
    for w in words:
        if w in _UNITS:
            return _UNITS[w]
        for unit in sorted(_UNITS, key=len, reverse=True):
            if w.startswith("freq") and w.endswith(unit) and w != "freq":
                return _UNITS[unit]
    return 1.0


def _column_kind(name: str) -> str | None:
    """"re", "im", "mag_lin", "mag_db", "deg" or "rad" for a data column's name."""
    words = set(_words(name))
    if words & _REAL:
        return "re"
    if words & _IMAG:
        return "im"
    if words & _PHASE:
        return "rad" if "rad" in words or "radian" in words or "radians" in words else "deg"
    if words & _MAG:
        return "mag_db" if "db" in words else "mag_lin"
    return None


def read(path: str | os.PathLike) -> Sweep:
    """Read a CSV sweep (see the module notes for the accepted forms).

    Parameters
    ----------
    path : path-like
        The file to read.

    Returns
    -------
    Sweep
        A one-port sweep, or a two-port one when the header names S11, S21, S12 and S22.

    Raises
    ------
    SweepFileError
        With the file, line and reason when the file cannot be understood.
    """
    from refplane.analysis.files.fileio import read_limited

    name = os.fspath(path)
    raw = read_limited(name, "a CSV file")
    if not raw.strip():
        raise SweepFileError("the file is empty", file=name)
    if b"\x00" in raw:
        line = raw.count(b"\n", 0, raw.index(b"\x00")) + 1
        raise SweepFileError("the file holds NUL bytes: it looks like a binary file, not CSV text",
                             file=name, line=line)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        # Comments and column names saved by instruments are often Windows-1252 ("°C");
        # numbers are ASCII and are checked cell by cell.
        text = raw.decode("cp1252", errors="strict") if _cp1252_ok(raw) else raw.decode("latin-1")

    comments: list[str] = []
    header: list[str] | None = None
    header_line = 0
    sep = ","
    rows: list[list[float]] = []
    row_lines: list[int] = []
    for number, line in enumerate(text.splitlines(), 1):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped[0] in "#!":
            comments.append(stripped[1:].strip())
            continue
        if header is None:
            sep = next((c for c in (",", ";", "\t") if c in stripped), ",")
            header = [h.strip().strip('"').strip() for h in stripped.split(sep)]
            header_line = number
            continue
        cells = [c.strip().strip('"').strip() for c in stripped.split(sep)]
        if len(cells) != len(header):
            raise SweepFileError(f"this row has {len(cells)} values, but the header on line "
                                 f"{header_line} names {len(header)} columns",
                                 file=name, line=number)
        values = []
        for cell, col in zip(cells, header):
            if len(cell) > 100 or not (cell.isascii() and _NUMBER.fullmatch(cell)):
                raise SweepFileError(f"{show_token(cell)} in column {show_token(col, 30)} is "
                                     "not a number", file=name, line=number)
            value = float(cell)
            if not math.isfinite(value):
                raise SweepFileError(f"{show_token(cell)} in column {show_token(col, 30)} is "
                                     "too large to be a finite number", file=name, line=number)
            values.append(value)
        rows.append(values)
        row_lines.append(number)
    if header is None:
        raise SweepFileError("the file has no header row (only comments)", file=name)
    if not rows:
        raise SweepFileError("the file has a header but no rows of numbers", file=name,
                             line=header_line)

    layout = _layout(header, name, header_line)
    table = np.asarray(rows, dtype=np.float64)
    freq_col, scale = layout["freq"]
    with np.errstate(over="ignore"):
        freq_hz = table[:, freq_col] * scale
    if not np.isfinite(freq_hz).all():
        k = int(np.argmin(np.isfinite(freq_hz)))
        raise SweepFileError(f"the frequency {table[k, freq_col]:g} is too large", file=name,
                             line=row_lines[k])
    for k in range(1, freq_hz.size):
        if not freq_hz[k] > freq_hz[k - 1]:
            raise SweepFileError(
                f"the frequency {table[k, freq_col]:g} does not increase (the row before has "
                f"{table[k - 1, freq_col]:g}); frequencies must increase strictly",
                file=name, line=row_lines[k])
    if freq_hz[0] < 0:
        raise SweepFileError("frequencies must not be negative", file=name, line=row_lines[0])

    params = layout["params"]
    n = 2 if len(params) == 4 else 1
    s = np.empty((freq_hz.size, n, n), dtype=np.complex128)
    with np.errstate(over="ignore", invalid="ignore"):
        for (i, j), cols in params.items():
            s[:, i, j] = _complex(table, cols)
    finite = np.isfinite(s.view(np.float64).reshape(s.shape[0], -1)).all(axis=1)
    if not finite.all():
        k = int(np.argmin(finite))
        raise SweepFileError("this row's values are too large: the S-parameters overflow (is a "
                             "dB value far too high?)", file=name, line=row_lines[k])
    z0 = 50.0
    for c in comments:
        found = _Z0_COMMENT.search(c)
        if found and len(found.group(1)) > 100:
            raise SweepFileError("the reference impedance z0 in a comment is not a usable number",
                                 file=name)
        if found:
            z0 = float(found.group(1))
            if not (math.isfinite(z0) and z0 > 0):
                raise SweepFileError(f"the reference impedance z0 = {found.group(1)} must be a "
                                     "positive number of ohms", file=name)
            break
    return Sweep(freq_hz=freq_hz, s=s, z0_ohm=z0, name=Path(name).stem, source=name,
                 comments=tuple(comments))


def _cp1252_ok(raw: bytes) -> bool:
    try:
        raw.decode("cp1252")
    except UnicodeDecodeError:
        return False
    return True


def _complex(table: np.ndarray, cols: dict[str, int]) -> np.ndarray:
    if "re" in cols:
        return table[:, cols["re"]] + 1j * table[:, cols["im"]]
    mag_kind = "mag_db" if "mag_db" in cols else "mag_lin"
    mag = table[:, cols[mag_kind]]
    if mag_kind == "mag_db":
        mag = 10.0 ** (mag / 20.0)
    phase_kind = "rad" if "rad" in cols else "deg"
    phase = table[:, cols[phase_kind]]
    if phase_kind == "deg":
        phase = np.radians(phase)
    return mag * np.exp(1j * phase)


def _layout(header: list[str], name: str, line: int) -> dict:
    """Which column is the frequency and which columns make up each S-parameter."""
    freq = None
    params: dict[tuple[int, int], dict[str, int]] = {}
    for col, title in enumerate(header):
        scale = _frequency_scale(title)
        if scale is not None and freq is None:
            freq = (col, scale)
            continue
        kind = _column_kind(title)
        if kind is None:
            raise SweepFileError(
                f"column {show_token(title, 40)} is neither a frequency nor a real/imaginary or "
                "magnitude/phase column", file=name, line=line)
        found = _PARAM.search(title)
        key = (int(found.group(1)) - 1, int(found.group(2)) - 1) if found else (0, 0)
        group = params.setdefault(key, {})
        slot = "phase" if kind in ("deg", "rad") else ("mag" if kind.startswith("mag") else kind)
        if any(_slot(k) == slot for k in group):
            raise SweepFileError(f"column {title!r} repeats a column of S{key[0] + 1}{key[1] + 1}",
                                 file=name, line=line)
        group[kind] = col
    if freq is None:
        raise SweepFileError("no frequency column: the header needs a column named like "
                             "'Frequency (MHz)', 'freq_hz' or 'f [GHz]'", file=name, line=line)
    if not params:
        raise SweepFileError("no data columns: the header needs real/imaginary or "
                             "magnitude/phase columns", file=name, line=line)
    keys = set(params)
    if keys not in ({(0, 0)}, {(0, 0), (1, 0), (0, 1), (1, 1)}):
        names = ", ".join(f"S{i + 1}{j + 1}" for i, j in sorted(keys))
        raise SweepFileError(f"the columns give {names}; a CSV sweep holds S11 alone, or S11, "
                             "S21, S12 and S22", file=name, line=line)
    for (i, j), group in params.items():
        slots = {_slot(k) for k in group}
        if slots not in ({"re", "im"}, {"mag", "phase"}):
            have = ", ".join(header[c] for c in group.values())
            raise SweepFileError(
                f"S{i + 1}{j + 1} needs a real and an imaginary column, or a magnitude and a "
                f"phase column; found {have}", file=name, line=line)
    return {"freq": freq, "params": params}


def _slot(kind: str) -> str:
    if kind in ("deg", "rad"):
        return "phase"
    if kind.startswith("mag"):
        return "mag"
    return kind
