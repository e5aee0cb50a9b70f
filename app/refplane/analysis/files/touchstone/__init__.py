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
are checked (five numbers per row, increasing frequencies, the count [Number of Noise
Frequencies] gives) but not kept. A 2.0 file that lacks only its final [End] is read with a
:class:`TouchstoneWarning`.

Comments (``!`` to the end of a line) may appear anywhere; their text is kept, in order, in
:attr:`Sweep.comments`. Comments are free text in UTF-8, Windows-1252 or Latin-1 (a
degree sign from an instrument); numbers, keywords and the option line are ASCII. A UTF-8
byte-order mark and bare carriage-return line ends are accepted. Comments that give
per-frequency port impedances (``! Port Impedance …``, written by some simulators; not
Touchstone) are not used, and a :class:`TouchstoneWarning` names their line.

Every problem raises :class:`SweepFileError`: one line naming the file, the line and the
reason. Only regular files are read (a named pipe or a device is refused at once), up to
1 GiB, stopping at the first NUL byte or at a line longer than 8 MiB.

Modules
-------
header    the option line, 2.0 keywords, comments, decoding
source    bounded, linear-time reading of a file's bytes
numbers   exact vectorised number conversion (fixed-width and varying-width layouts)
fast      the bulk pass
careful   the line-by-line pass with exact line numbers
convert   numbers to S (data formats, element orders, Y/Z/G/H to S)
writer    writing 1.1 and 2.0 files

Speed
-----
The numeric body is read a megabyte at a time (the text is never held whole), with
comments cut out only where a ``!`` occurs. Lines sharing one layout (fixed-width
E-notation) and numbers of varying width (shortest round-trip text, tabs, mixed spacing)
are both converted by vectorised exact parsers (:mod:`.numbers`). When this bulk pass meets
anything irregular, a careful line-by-line pass re-reads the file to find the exact line
and reason (or to handle a rare legal irregularity such as a 1.x noise block). Both passes
give bit-for-bit the same sweep.
"""

from __future__ import annotations

from refplane.analysis.files.touchstone.header import TouchstoneWarning
from refplane.analysis.files.touchstone.numbers import fixed_width as _fixed_width
from refplane.analysis.files.touchstone.reader import read
from refplane.analysis.files.touchstone.writer import write

__all__ = ["read", "write", "TouchstoneWarning"]


def _careful(name, ext_ports):
    """The careful pass alone (tests compare it with the bulk pass)."""
    from refplane.analysis.files.touchstone.careful import careful

    return careful(name, ext_ports)
