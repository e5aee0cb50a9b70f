"""Error terms saved to a file of Refplane's own, and read back to correct later sweeps.

The calibration file is JSON::

    {"format": "refplane-calibration", "version": 1,
     "reference_z0_ohm": 50.0,
     "freq_hz": [1e8, ...],
     "terms": {"directivity": {"re": [...], "im": [...]},
               "source_match": {...}, "reflection_tracking": {...},
               "transmission_tracking": {...}, "isolation": {...}, "load_match_port2": {...}},
     "residual": [...], "quality": "good", "verdict": "...", "warnings": [...],
     "description": ["standards: ...", ...]}

The error terms are dimensionless complex ratios, stored as lists of real and imaginary
parts; numbers are written with full precision (Python's shortest round-trip form), so a
saved and re-read calibration corrects bit for bit like the one in memory. The three
transmission terms are present only when a through was measured.
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import numpy as np

from refplane.analysis.calibration import Calibration, OnePortTerms, TransmissionTerms
from refplane.analysis.errors import SweepFileError
from refplane.analysis.fileio import read_json

FORMAT = "refplane-calibration"
VERSION = 1
_PORT1 = ("directivity", "source_match", "reflection_tracking")
_TRANS = {"transmission_tracking": "transmission_tracking", "isolation": "isolation",
          "load_match_port2": "load_match"}


def _pack(values: np.ndarray) -> dict[str, list[float]]:
    v = np.asarray(values, dtype=np.complex128)
    return {"re": v.real.tolist(), "im": v.imag.tolist()}


def calibration_to_json(cal: Calibration) -> dict:
    """The JSON object of a calibration file."""
    terms = {name: _pack(getattr(cal.port1, name)) for name in _PORT1}
    if cal.transmission is not None:
        for key, attr in _TRANS.items():
            terms[key] = _pack(getattr(cal.transmission, attr))
    return {
        "format": FORMAT, "version": VERSION,
        "reference_z0_ohm": float(cal.reference_z0_ohm),
        "freq_hz": np.asarray(cal.freq_hz, dtype=float).tolist(),
        "terms": terms,
        "residual": (np.zeros(cal.n_points) if cal.residual is None else np.asarray(cal.residual)).tolist(),
        "quality": cal.quality, "verdict": cal.verdict,
        "warnings": list(cal.warnings), "description": list(cal.description),
        "checks": [c.summary() for c in cal.checks],
        **({"uncertainty": _uncertainty_json(cal.uncertainty)} if cal.uncertainty is not None else {}),
    }


def _uncertainty_json(cu) -> dict:
    from refplane.analysis.uncertainty.calprop import to_json

    return to_json(cu)


def save_calibration(cal: Calibration, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a calibration file atomically; an existing file is kept unless ``overwrite``.

    Raises
    ------
    SweepFileError
        When the file exists and ``overwrite`` is false, or the folder does not exist.
    """
    from refplane.analysis.fileio import write_text_atomic

    obj = calibration_to_json(cal)
    for values in obj["terms"].values():
        if not all(math.isfinite(x) for x in values["re"] + values["im"]):
            raise SweepFileError("the error terms contain non-finite values; not saved", file=path)
    return write_text_atomic(path, json.dumps(obj, allow_nan=False) + "\n", overwrite=overwrite)


def _unpack(obj, key: str, n: int, fname: str) -> np.ndarray:
    entry = obj.get(key)
    if not isinstance(entry, dict) or set(entry) != {"re", "im"}:
        raise SweepFileError(f"term {key!r} must be an object with 're' and 'im' lists", file=fname)
    try:
        re = np.asarray(entry["re"], dtype=np.float64)
        im = np.asarray(entry["im"], dtype=np.float64)
    except (TypeError, ValueError):
        raise SweepFileError(f"term {key!r} holds something other than numbers", file=fname) from None
    if re.shape != (n,) or im.shape != (n,):
        raise SweepFileError(f"term {key!r} needs {n} real and {n} imaginary values, one per frequency",
                             file=fname)
    if not (np.all(np.isfinite(re)) and np.all(np.isfinite(im))):
        raise SweepFileError(f"term {key!r} has non-finite values", file=fname)
    return re + 1j * im


def calibration_from_json(obj, *, file: str | os.PathLike | None = None) -> Calibration:
    """Build a :class:`Calibration` from the parsed JSON of a calibration file."""
    fname = os.fspath(file) if file is not None else "calibration"
    if not isinstance(obj, dict) or obj.get("format") != FORMAT:
        raise SweepFileError(f"not a calibration file: 'format' must be {FORMAT!r}", file=fname)
    if obj.get("version") != VERSION:
        raise SweepFileError(f"calibration file version {obj.get('version')!r} is not supported "
                             f"(this Refplane reads version {VERSION})", file=fname)
    try:
        freq = np.asarray(obj.get("freq_hz"), dtype=np.float64)
    except (TypeError, ValueError):
        raise SweepFileError("'freq_hz' must be a list of numbers", file=fname) from None
    if freq.ndim != 1 or freq.size == 0 or not np.all(np.isfinite(freq)) or np.any(np.diff(freq) <= 0):
        raise SweepFileError("'freq_hz' must be a non-empty list of increasing frequencies", file=fname)
    z0 = obj.get("reference_z0_ohm")
    if not isinstance(z0, (int, float)) or isinstance(z0, bool) or not (math.isfinite(z0) and z0 > 0):
        raise SweepFileError("'reference_z0_ohm' must be a positive number", file=fname)
    terms = obj.get("terms")
    if not isinstance(terms, dict):
        raise SweepFileError("'terms' is missing", file=fname)
    unknown = sorted(set(terms) - set(_PORT1) - set(_TRANS))
    if unknown:
        raise SweepFileError(f"unknown error term(s): {', '.join(unknown)}", file=fname)
    n = freq.size
    port1 = OnePortTerms(freq, *(_unpack(terms, k, n, fname) for k in _PORT1))
    present = [k for k in _TRANS if k in terms]
    trans = None
    if present:
        if len(present) != len(_TRANS):
            raise SweepFileError(f"transmission terms need all of {', '.join(_TRANS)}", file=fname)
        trans = TransmissionTerms(*(_unpack(terms, k, n, fname) for k in _TRANS))
    residual = np.asarray(obj.get("residual", np.zeros(n)), dtype=float)
    if residual.shape != (n,):
        raise SweepFileError("'residual' needs one value per frequency", file=fname)

    def strings(key: str) -> tuple[str, ...]:
        value = obj.get(key, [])
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise SweepFileError(f"'{key}' must be a list of text lines", file=fname)
        return tuple(value)

    quality = obj.get("quality", "good")
    if quality not in ("good", "fair", "poor"):
        raise SweepFileError("'quality' must be good, fair or poor", file=fname)
    description = strings("description") + tuple(f"check result: {c}" for c in strings("checks"))
    if file is not None:
        description = (f"calibration file: {fname}",) + description
    uncertainty = None
    if "uncertainty" in obj:
        from refplane.analysis.uncertainty.calprop import from_json

        uncertainty = from_json(obj["uncertainty"], freq, file=fname)
    return Calibration(freq, float(z0), port1, trans, residual, strings("warnings"), quality,
                       str(obj.get("verdict", "")), description, uncertainty=uncertainty)


def load_calibration(path: str | os.PathLike) -> Calibration:
    """Read a calibration file written by :func:`save_calibration`.

    Raises
    ------
    SweepFileError
        Missing or unreadable file, bad JSON (with its line), or terms of the wrong shape.
    """
    fname = os.fspath(path)
    obj = read_json(fname, "a calibration file")
    return calibration_from_json(obj, file=fname)
