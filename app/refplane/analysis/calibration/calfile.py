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

from refplane.analysis.calibration.solve import Calibration, OnePortTerms, TransmissionTerms
from refplane.analysis.errors import SweepFileError
from refplane.analysis.files.fileio import Const, ListOf, Number, Obj, Text, read_json, validate

FORMAT = "refplane-calibration"
VERSION = 1
_PORT1 = ("directivity", "source_match", "reflection_tracking")
_TRANS = {"transmission_tracking": "transmission_tracking", "isolation": "isolation",
          "load_match_port2": "load_match"}


def schema(n_points: int | None = None) -> Obj:
    """The calibration file's layout, declared once; ``n_points`` (the length of freq_hz)
    fixes the length of every per-frequency list."""
    finite = Number()

    def per_freq(item, what):
        return ListOf(item, length=n_points, what=what)

    term = Obj({"re": per_freq(finite, "real values, one per frequency"),
                "im": per_freq(finite, "imaginary values, one per frequency")},
               required=("re", "im"))
    lines = ListOf(Text())
    return Obj({
        "format": Const(FORMAT, f"must be {FORMAT!r}, not {{}}: this is not a calibration file"),
        "version": Const(VERSION, f"calibration file version {{}} is not supported (this "
                         f"Refplane reads version {VERSION})"),
        "reference_z0_ohm": Number(above=0),
        "freq_hz": ListOf(Number(minimum=0), nonempty=True, increasing=True),
        "terms": Obj({k: term for k in (*_PORT1, *_TRANS)}, required=_PORT1),
        "residual": per_freq(Number(minimum=0), "values, one per frequency"),
        "quality": Text(choices=("good", "fair", "poor")),
        "verdict": Text(),
        "warnings": lines, "description": lines, "checks": lines,
        # The propagated uncertainty, checked in full by uncertainty.calprop.from_json.
        "uncertainty": Obj(values=_Anything()),
    }, required=("format", "version", "reference_z0_ohm", "freq_hz", "terms"))


class _Anything:
    """A value checked later by the code that reads it (keeps the key known to the schema)."""

    def check(self, value, path):
        return value


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
    from refplane.analysis.files.fileio import write_text_atomic

    obj = calibration_to_json(cal)
    for values in obj["terms"].values():
        if not all(math.isfinite(x) for x in values["re"] + values["im"]):
            raise SweepFileError("the error terms contain non-finite values; not saved", file=path)
    return write_text_atomic(path, json.dumps(obj, allow_nan=False) + "\n", overwrite=overwrite)


def _unpack(terms: dict, key: str, n: int, fname: str) -> np.ndarray:
    entry = terms[key]
    re = np.asarray(entry["re"], dtype=np.float64)
    im = np.asarray(entry["im"], dtype=np.float64)
    if re.shape != (n,) or im.shape != (n,):
        raise SweepFileError(f"terms.{key}: needs {n} real and {n} imaginary values, one per "
                             "frequency", file=fname)
    return re + 1j * im


def calibration_from_json(obj, *, file: str | os.PathLike | None = None) -> Calibration:
    """Build a :class:`Calibration` from the parsed JSON of a calibration file.

    The document is first checked against :func:`schema`; every fault is one line naming
    the file, the key path and the reason.
    """
    fname = os.fspath(file) if file is not None else "calibration"
    if isinstance(obj, dict) and "format" in obj and obj.get("format") != FORMAT:
        raise SweepFileError(f"not a calibration file: 'format' must be {FORMAT!r}", file=fname)
    freq_list = obj.get("freq_hz") if isinstance(obj, dict) else None
    obj = validate(obj, schema(len(freq_list) if isinstance(freq_list, list) else None), fname)
    freq = np.asarray(obj["freq_hz"], dtype=np.float64)
    z0 = obj["reference_z0_ohm"]
    terms = obj["terms"]
    n = freq.size
    port1 = OnePortTerms(freq, *(_unpack(terms, k, n, fname) for k in _PORT1))
    present = [k for k in _TRANS if k in terms]
    trans = None
    if present:
        if len(present) != len(_TRANS):
            raise SweepFileError(f"terms: transmission terms need all of {', '.join(_TRANS)}",
                                 file=fname)
        trans = TransmissionTerms(*(_unpack(terms, k, n, fname) for k in _TRANS))
    residual = np.asarray(obj.get("residual", [0.0] * n), dtype=float)
    if residual.shape != (n,):
        raise SweepFileError(f"residual: needs one value per frequency ({n})", file=fname)
    quality = obj.get("quality", "good")
    description = tuple(obj.get("description", ())) + tuple(
        f"check result: {c}" for c in obj.get("checks", ()))
    if file is not None:
        description = (f"calibration file: {fname}",) + description
    uncertainty = None
    if "uncertainty" in obj:
        from refplane.analysis.uncertainty.calprop import from_json

        uncertainty = from_json(obj["uncertainty"], freq, file=fname)
    return Calibration(freq, float(z0), port1, trans, residual, tuple(obj.get("warnings", ())),
                       quality, str(obj.get("verdict", "")), description, uncertainty=uncertainty)


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
