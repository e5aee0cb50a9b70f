"""Writing Touchstone 1.1 and 2.0 files: fixed-width E-notation, 17 significant digits, atomic."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Iterable, Sequence

import numpy as np

from refplane.analysis.errors import SweepFileError
from refplane.analysis.sweep import Sweep
from refplane.analysis.files.touchstone.header import FORMATS, FREQ_UNITS, UNIT_NAMES, ports_in_name

#: Numbers per line the writer puts in a matrix row of three or more ports (1.x allows at most 4 pairs).
_PAIRS_PER_LINE = 4


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
    if fmt_low not in FORMATS:
        raise SweepFileError(f"unknown Touchstone data format {fmt!r} (use RI, MA or DB)", file=path)
    if unit_low not in FREQ_UNITS:
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
    named = ports_in_name(os.fspath(path))
    if version == "1.1":
        if named != n:
            raise SweepFileError(f"a {n}-port Touchstone 1.1 file must be named .s{n}p",
                                 file=path)
        if np.any(z0.real != z0.real[0]):
            raise SweepFileError("Touchstone 1.1 holds one reference impedance for all ports; "
                                 "this sweep's differ, so write version 2.0", file=path)
    elif named is not None and named != n:
        raise SweepFileError(f"a {n}-port file cannot be named .s{named}p", file=path)

    lines: list[str] = []
    for text in comments:
        for part in str(text).splitlines() or [""]:
            lines.append(f"! {part}".rstrip())
    r = z0.real[0]
    option = f"# {UNIT_NAMES[unit_low]} S {fmt_low.upper()} R {r:.17g}"
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
    body = _format_body(sweep, order, fmt_low, FREQ_UNITS[unit_low], n)
    text = "\n".join(lines) + "\n" + body
    if version == "2.0":
        text += "[End]\n"
    return _atomic(path, text, overwrite)


def _atomic(path, text: str, overwrite: bool) -> Path:
    from refplane.analysis.files.fileio import write_text_atomic

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
