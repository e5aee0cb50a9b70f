"""``read``: open a Touchstone file safely, take the bulk pass, fall back to the careful one."""

from __future__ import annotations

import os
import warnings
from pathlib import Path

from refplane.analysis.errors import AnalysisError, SweepFileError
from refplane.analysis.sweep import Sweep
from refplane.analysis.files.touchstone.fast import fast
from refplane.analysis.files.touchstone.header import TouchstoneWarning, ports_in_name, warn_port_impedance
from refplane.analysis.files.touchstone.source import Source


def read(path: str | os.PathLike) -> Sweep:
    """Read a Touchstone file (.sNp version 1.x, or version 2.0 .sNp / .ts).

    Parameters
    ----------
    path : path-like
        The file to read: a regular file of at most 1 GiB
        (:data:`refplane.analysis.files.fileio.MAX_INPUT_BYTES`).

    Returns
    -------
    Sweep
        Frequencies in Hz, S-parameters (Y, Z, G and H data are converted to S), the
        reference impedance of each port, and the file's comments.

    Raises
    ------
    SweepFileError
        For a missing, unreadable, non-regular, over-large or malformed file; the message
        is one line naming the file, the line and the reason, e.g.
        ``"a.s2p, line 14: a 2-port row needs 9 numbers, found 7"``.

    Warns
    -----
    TouchstoneWarning
        When a version 2.0 file lacks its final [End] (it is read all the same), and when
        comments give per-frequency port impedances, which Touchstone does not define and
        Refplane does not use.

    Examples
    --------
    >>> sweep = read("antenna.s1p")          # doctest: +SKIP
    >>> sweep.freq_hz[0], sweep.s[0, 0, 0]   # doctest: +SKIP
    """
    try:
        name = os.fspath(path)
    except TypeError:
        raise SweepFileError(f"not a file path: {path!r}") from None
    ext_ports = ports_in_name(name)
    if ext_ports == 0:
        raise SweepFileError("a .s0p file cannot hold network data (0 ports)", file=name)
    if ext_ports is not None and ext_ports > 999:
        raise SweepFileError("the file name gives more ports than Refplane reads (999)",
                             file=name)
    with Source(name) as src:
        result = fast(src, name, ext_ports)
    if result is None:
        # Imported when needed: most files never take the careful pass.
        from refplane.analysis.files.touchstone.careful import careful

        result = careful(name, ext_ports)
    head, freq_hz, s = result
    if head.missing_end:
        warnings.warn(f"{name}: the file ends without [End]; it was read as complete",
                      TouchstoneWarning, stacklevel=2)
    warn_port_impedance(head)
    try:
        return Sweep(freq_hz=freq_hz, s=s, z0_ohm=head.z0(), name=Path(name).stem, source=name,
                     comments=tuple(head.comments))
    except SweepFileError:
        raise
    except AnalysisError as exc:  # e.g. Z data of a network that has no S-parameters
        raise SweepFileError(exc.reason, file=name) from None
