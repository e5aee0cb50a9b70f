"""Marker tables as CSV for a spreadsheet: plain numbers, units in the header."""

from __future__ import annotations

import csv
import io
import os
from pathlib import Path
from typing import Sequence

from refplane.batch import csv_number

#: Column headings (with units) for the keys of ``refplane read --json``.
MARKER_COLUMNS = (
    ("freq_hz", "frequency (Hz)"), ("gamma_re", "gamma real"), ("gamma_im", "gamma imaginary"),
    ("gamma_mag", "|gamma|"), ("gamma_deg", "gamma angle (deg)"), ("r_ohm", "R (ohm)"), ("x_ohm", "X (ohm)"),
    ("z_mag_ohm", "|Z| (ohm)"), ("series_l_h", "series L (H)"), ("series_c_f", "series C (F)"),
    ("parallel_r_ohm", "parallel R (ohm)"), ("parallel_x_ohm", "parallel X (ohm)"), ("vswr", "VSWR"),
    ("return_loss_db", "return loss (dB)"), ("q", "Q"),
)


def markers_csv(sections: Sequence) -> str:
    """The marker tables of report sections as one CSV text, one row per sweep and marker.

    Numbers are written in full precision with an ASCII minus and no thousands separators;
    a value that does not apply (series C of an inductive part) is an empty cell.
    """
    buf = io.StringIO()
    out = csv.writer(buf, lineterminator="\n")
    out.writerow(["file", "port", "marker"] + [title for _, title in MARKER_COLUMNS])
    for section in sections:
        if section.readings is None:
            continue
        name = section.file or section.sweep.name
        for i in range(section.readings.freq_hz.size):
            point = section.readings.readout.at(i).json_point()
            out.writerow([name, section.port, i + 1] + [csv_number(point[key]) for key, _ in MARKER_COLUMNS])
    return buf.getvalue()


def write_markers_csv(sections: Sequence, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write :func:`markers_csv` atomically (an existing file only with ``overwrite``)."""
    from refplane.analysis.files.fileio import write_text_atomic

    return write_text_atomic(path, markers_csv(sections), overwrite=overwrite)
