"""Uncertainties written beside a Touchstone file (which has no place for them).

Two forms, each one row (or entry) per frequency of the sweep's reflection at one port:

* CSV: a header of comment lines (``#``), then ``freq_hz`` and, for every readout key of
  ``refplane read --json``, the value and its expanded uncertainty (``r_ohm``, ``r_ohm_U``);
* JSON: ``{"format": "refplane-uncertainty", "version": 1, "coverage_factor": 2,
  "coverage_probability": 0.95, "freq_hz": [...], "values": {key: [...]}, "U": {key: [...]},
  "method": [...], "sources": [...]}``.

Readouts that do not apply (series C where X > 0) are empty cells in CSV and ``null`` in JSON.
"""

from __future__ import annotations

import io
import json
import math
import os
from pathlib import Path

import numpy as np

from refplane.analysis.readings.impedance import readout
from refplane.analysis.uncertainty.propagate import U_KEYS, ReadoutUncertainty

FORMAT = "refplane-uncertainty"
VERSION = 1


def _clean(v: float):
    return float(v) if math.isfinite(v) else None


def uncertainty_json(u: ReadoutUncertainty, z0_ohm: float, *, sources=(), comments=()) -> dict:
    """The JSON object of an uncertainty file."""
    r = readout(u.freq_hz, u.gamma, z0_ohm)
    return {
        "format": FORMAT, "version": VERSION,
        "coverage_factor": 2, "coverage_probability": u.coverage_probability,
        "z0_ohm": float(z0_ohm),
        "comments": list(comments), "sources": list(sources),
        "freq_hz": [float(f) for f in u.freq_hz],
        "values": {k: [_clean(v) for v in np.asarray(getattr(r, k)).reshape(-1)] for k in U_KEYS},
        "U": {k: [_clean(v) for v in getattr(u, k)] for k in U_KEYS},
        "method": list(u.method),
    }


def uncertainty_csv(u: ReadoutUncertainty, z0_ohm: float, *, sources=(), comments=()) -> str:
    """The CSV text of an uncertainty file."""
    r = readout(u.freq_hz, u.gamma, z0_ohm)
    out = io.StringIO()
    for line in comments:
        out.write(f"# {line}\n")
    out.write("# U: expanded uncertainty, about 95 % (coverage factor k = 2), same unit as the value\n")
    for s in sources:
        out.write(f"# source: {s}\n")
    out.write(",".join(["freq_hz"] + [c for k in U_KEYS for c in (k, f"{k}_U")] + ["method"]) + "\n")
    values = {k: np.asarray(getattr(r, k)).reshape(-1) for k in U_KEYS}

    def cell(v):
        return repr(float(v)) if math.isfinite(v) else ""

    for i, f in enumerate(u.freq_hz):
        row = [repr(float(f))] + [c for k in U_KEYS for c in (cell(values[k][i]), cell(getattr(u, k)[i]))]
        out.write(",".join(row + [u.method[i]]) + "\n")
    return out.getvalue()


def write_uncertainty(path: str | os.PathLike, u: ReadoutUncertainty, z0_ohm: float, *, sources=(),
                      comments=(), overwrite: bool = False) -> Path:
    """Write CSV (``.csv``) or JSON (``.json``) atomically; an existing file only with ``overwrite``."""
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.files.fileio import write_text_atomic

    suffix = Path(path).suffix.lower()
    if suffix == ".csv":
        text = uncertainty_csv(u, z0_ohm, sources=sources, comments=comments)
    elif suffix == ".json":
        text = json.dumps(uncertainty_json(u, z0_ohm, sources=sources, comments=comments), allow_nan=False) + "\n"
    else:
        raise AnalysisError("an uncertainty file is written as .csv or .json", file=os.fspath(path))
    return write_text_atomic(path, text, overwrite=overwrite)
