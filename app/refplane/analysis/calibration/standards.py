"""Calibration standards: what a short, open, load or through really looks like, and their file.

A standard is described the way calibration-standard definitions are usually written in the
measurement literature (from memory): an *offset* — a short stretch of line between the
reference plane and the element, given by its one-way delay, its loss and its impedance —
followed by a *termination*:

* open: a fringing capacitance C(f) = C0 + C1·f + C2·f² + C3·f³ (F, F/Hz, F/Hz², F/Hz³);
* short: an inductance L(f) = L0 + L1·f + L2·f² + L3·f³ (H, H/Hz, H/Hz², H/Hz³);
* load: a resistance with an optional series inductance;
* through: just the offset line, as a two-port.

Offset line model
-----------------
The usual model of a lossy offset (from memory; it is the one calibration-standard
definitions are written for), with ω = 2πf, delay τ, loss δ in Ω/s and offset impedance Z0off:

    αl = δ·τ / (2·Z0off) · √(f / 1 GHz)                       (nepers)
    βl = ω·τ + αl                                                (radians)
    Zc = Z0off + (1 − j) · δ / (2ω) · √(f / 1 GHz)               (ohms)

The termination's reflection is taken against Zc, carried through e^(−2γl), and the result is
referred back to the reference impedance. Offset loss is written in the standards file in
GΩ/s (gigaohms per second), the unit the literature quotes it in; in Python it is held in SI
(Ω/s) as ``offset_loss_ohm_per_s``.

A standard may instead be given by a Touchstone file of its known response (1-port for a
reflect standard, 2-port for a through).

The standards file
------------------
A small JSON file of Refplane's own design, every number with its unit in the key::

    {"format": "refplane-standards", "version": 1, "reference_z0_ohm": 50.0,
     "short": {"l0_h": 0, "offset_delay_s": 30e-12, "offset_loss_gohm_per_s": 2.0},
     "open":  {"c0_f": 50e-15, "c1_f_per_hz": -300e-27, "offset_delay_s": 28e-12},
     "load":  {"r_ohm": 50.0},
     "through": {"offset_delay_s": 0},
     "additional": {"offset short": {"kind": "short", "offset_delay_s": 60e-12}},
     "checks": {"offset open": {"kind": "open", "offset_delay_s": 95e-12}}}

Missing sections mean ideal standards; ``"file": "open.s1p"`` (relative to the JSON file)
replaces a definition by measured data.
"""

from __future__ import annotations

import dataclasses
import json
import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterable, Mapping

import numpy as np

from refplane.analysis.errors import AnalysisError, SweepFileError
from refplane.analysis.files.fileio import Const, Number, Obj, SchemaError, Text, read_json, validate
from refplane.analysis.sweep import Sweep

FORMAT = "refplane-standards"
VERSION = 1
KINDS = ("short", "open", "load", "through")
#: Offset loss is written in GΩ/s in the file; this converts it to SI (Ω/s).
GOHM = 1e9

# Key in the JSON file → (field name in Standard, scale from the file's unit to SI).
_OFFSET_KEYS = {
    "offset_delay_s": ("offset_delay_s", 1.0),
    "offset_loss_gohm_per_s": ("offset_loss_ohm_per_s", GOHM),
    "offset_z0_ohm": ("offset_z0_ohm", 1.0),
}
_KIND_KEYS = {
    "open": {"c0_f": "c0_f", "c1_f_per_hz": "c1_f_per_hz", "c2_f_per_hz2": "c2_f_per_hz2",
             "c3_f_per_hz3": "c3_f_per_hz3"},
    "short": {"l0_h": "l0_h", "l1_h_per_hz": "l1_h_per_hz", "l2_h_per_hz2": "l2_h_per_hz2",
              "l3_h_per_hz3": "l3_h_per_hz3"},
    "load": {"r_ohm": "r_ohm", "series_l_h": "series_l_h"},
    "through": {},
}


#: Fields of a Standard that are not numbers of its definition.
_NOT_NUMERIC = frozenset({"kind", "data", "file", "uncertainties"})


@dataclass(frozen=True, eq=False)
class Standard:
    """One calibration standard's definition (SI units throughout).

    Parameters
    ----------
    kind : {"short", "open", "load", "through"}
        What the standard is.
    offset_delay_s : float
        One-way delay of the offset line, seconds.
    offset_loss_ohm_per_s : float
        Offset loss in Ω/s (the file holds it in GΩ/s); zero for a lossless offset.
    offset_z0_ohm : float or None
        Offset line impedance; ``None`` means the reference impedance.
    c0_f, c1_f_per_hz, c2_f_per_hz2, c3_f_per_hz3 : float
        Open: fringing capacitance polynomial in frequency.
    l0_h, l1_h_per_hz, l2_h_per_hz2, l3_h_per_hz3 : float
        Short: inductance polynomial in frequency.
    r_ohm, series_l_h : float or None
        Load: resistance (``None`` means the reference impedance) and series inductance.
    data : Sweep or None
        A known response read from a file, used instead of the model when given.
    file : str or None
        Where ``data`` came from.
    uncertainties : mapping of str to float
        Standard uncertainties (k = 1, same SI unit as the value) of some of the numeric
        fields above, keyed by field name (``"offset_delay_s"``). The standards file gives
        them as ``<key>_u`` beside a value (``"offset_delay_s_u": 0.5e-12``). Empty by
        default; kept for uncertainty propagation.
    """

    kind: str
    offset_delay_s: float = 0.0
    offset_loss_ohm_per_s: float = 0.0
    offset_z0_ohm: float | None = None
    c0_f: float = 0.0
    c1_f_per_hz: float = 0.0
    c2_f_per_hz2: float = 0.0
    c3_f_per_hz3: float = 0.0
    l0_h: float = 0.0
    l1_h_per_hz: float = 0.0
    l2_h_per_hz2: float = 0.0
    l3_h_per_hz3: float = 0.0
    r_ohm: float | None = None
    series_l_h: float = 0.0
    data: Sweep | None = None
    file: str | None = None
    uncertainties: Mapping[str, float] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise AnalysisError(f"unknown kind of standard {self.kind!r} (use one of {', '.join(KINDS)})")
        numeric = {f.name for f in dataclasses.fields(self)} - _NOT_NUMERIC
        checked = {}
        for key, u in dict(self.uncertainties).items():
            if key not in numeric:
                raise AnalysisError(f"{self.kind}: an uncertainty is given for {key!r}, which is "
                                    "not a numeric field of a standard")
            if not isinstance(u, (int, float)) or isinstance(u, bool) or not (math.isfinite(u) and u >= 0):
                raise AnalysisError(f"{self.kind}: the uncertainty of {key} must be a finite "
                                    f"number ≥ 0, not {u!r}")
            checked[key] = float(u)
        object.__setattr__(self, "uncertainties", checked)
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if f.name in _NOT_NUMERIC or value is None:
                continue
            if not isinstance(value, (int, float)) or isinstance(value, bool) or not math.isfinite(value):
                raise AnalysisError(f"{self.kind}: {f.name} must be a finite number, not {value!r}")
            object.__setattr__(self, f.name, float(value))
        if self.offset_loss_ohm_per_s < 0:
            raise AnalysisError(f"{self.kind}: the offset loss must not be negative")
        if self.offset_z0_ohm is not None and self.offset_z0_ohm <= 0:
            raise AnalysisError(f"{self.kind}: the offset impedance must be above 0 Ω")
        if self.r_ohm is not None and self.r_ohm < 0:
            raise AnalysisError(f"{self.kind}: the load resistance must not be negative")
        if self.data is not None:
            want = 2 if self.kind == "through" else 1
            if self.data.n_ports != want and not (want == 1 and self.data.n_ports >= 1):
                raise AnalysisError(f"a {self.kind} needs a {want}-port data file, "
                                    f"this one has {self.data.n_ports} ports", file=self.file)

    @property
    def is_ideal(self) -> bool:
        """True when the definition is the textbook ideal (no offset, no parasitics, no data)."""
        if self.data is not None:
            return False
        defaults = Standard(self.kind)
        return all(getattr(self, f.name) == getattr(defaults, f.name)
                   for f in dataclasses.fields(self) if f.name not in _NOT_NUMERIC)

    def describe(self) -> str:
        """A short plain description, for file headers and the window."""
        if self.data is not None:
            return f"{self.kind} from data file {self.file or self.data.source or self.data.name}"
        if self.is_ideal:
            return f"ideal {self.kind}"
        parts = [self.kind]
        for key, (name, scale) in {**_OFFSET_KEYS, **{k: (v, 1.0) for k, v in _KIND_KEYS[self.kind].items()}}.items():
            value = getattr(self, name)
            if value is not None and value != getattr(Standard(self.kind), name):
                parts.append(f"{key}={value / scale:.6g}")
        return " ".join(parts)


def ideal(kind: str) -> Standard:
    """The ideal standard of a kind (Γ = −1, +1, 0, or a perfect through)."""
    return Standard(kind)


@dataclass(frozen=True, eq=False)
class StandardSet:
    """The definitions of the standards used together for one calibration.

    ``additional`` are further reflect standards used in the solve (an offset short, a load
    at another position: more than three standards are solved by least squares); ``checks``
    are verification standards, never used in the solve, only compared after correction.
    Both are tuples of ``(name, Standard)`` pairs, in file order.
    """

    short: Standard = field(default_factory=lambda: ideal("short"))
    open: Standard = field(default_factory=lambda: ideal("open"))
    load: Standard = field(default_factory=lambda: ideal("load"))
    through: Standard = field(default_factory=lambda: ideal("through"))
    additional: tuple[tuple[str, Standard], ...] = ()
    checks: tuple[tuple[str, Standard], ...] = ()
    reference_z0_ohm: float = 50.0
    name: str = "ideal standards"
    source: str | None = None

    def __post_init__(self) -> None:
        for attr in KINDS:
            if getattr(self, attr).kind != attr:
                raise AnalysisError(f"the {attr} entry is defined as a {getattr(self, attr).kind}")
        if not (math.isfinite(self.reference_z0_ohm) and self.reference_z0_ohm > 0):
            raise AnalysisError("the reference impedance must be a positive number of ohms")
        names = [n for n, _ in self.additional] + [n for n, _ in self.checks]
        clash = sorted({n for n in names if names.count(n) > 1 or n in KINDS})
        if clash:
            raise AnalysisError(f"standard name(s) used twice: {', '.join(clash)}")
        for name, std in self.additional:
            if std.kind == "through":
                raise AnalysisError(f"additional standard {name!r}: only reflect standards "
                                    "(short, open, load) can be added to the one-port solve")

    def reflect(self, name: str) -> Standard:
        """The reflect standard called ``name`` (short, open, load, an additional or a check one)."""
        if name in ("short", "open", "load"):
            return getattr(self, name)
        for n, std in self.additional + self.checks:
            if n == name:
                return std
        raise AnalysisError(f"no standard called {name!r} is defined")

    @property
    def solve_names(self) -> tuple[str, ...]:
        """Names of the reflect standards used in the one-port solve, in order."""
        return ("short", "open", "load") + tuple(n for n, _ in self.additional)


# --------------------------------------------------------------------------- responses

def _offset_terms(std: Standard, freq_hz: np.ndarray, z0_ref: float) -> tuple[np.ndarray, np.ndarray]:
    """Characteristic impedance Zc and propagation γl of the offset line at each frequency."""
    z_off = z0_ref if std.offset_z0_ohm is None else std.offset_z0_ohm
    w = 2 * np.pi * freq_hz
    tau, loss = std.offset_delay_s, std.offset_loss_ohm_per_s
    if loss == 0:
        zc = np.full(freq_hz.shape, complex(z_off))
        gl = 1j * w * tau
        return zc, gl
    if np.any(freq_hz <= 0):
        raise AnalysisError(f"{std.kind}: a lossy offset is only defined above 0 Hz; "
                            "the sweep includes 0 Hz")
    root = np.sqrt(freq_hz / 1e9)
    alpha_l = loss * tau / (2 * z_off) * root
    zc = z_off + (1 - 1j) * loss / (2 * w) * root
    gl = alpha_l + 1j * (w * tau + alpha_l)
    return zc, gl


def _termination_gamma(std: Standard, freq_hz: np.ndarray, zc: np.ndarray, z0_ref: float) -> np.ndarray:
    """Reflection of the terminating element, referred to the offset's impedance Zc."""
    f = freq_hz
    w = 2 * np.pi * f
    if std.kind == "open":
        c = std.c0_f + std.c1_f_per_hz * f + std.c2_f_per_hz2 * f**2 + std.c3_f_per_hz3 * f**3
        jwcz = 1j * w * c * zc  # written without 1/(jωC), so C = 0 or f = 0 is exactly Γ = +1
        return (1 - jwcz) / (1 + jwcz)
    if std.kind == "short":
        l_h = std.l0_h + std.l1_h_per_hz * f + std.l2_h_per_hz2 * f**2 + std.l3_h_per_hz3 * f**3
        z = 1j * w * l_h
        return (z - zc) / (z + zc)
    r = z0_ref if std.r_ohm is None else std.r_ohm
    z = r + 1j * w * std.series_l_h
    with np.errstate(divide="ignore", invalid="ignore"):
        g = (z - zc) / (z + zc)
    return np.where(z + zc == 0, -1.0 + 0j, g)


def _check_grid(std: Standard, freq_hz: np.ndarray, interpolate: bool) -> None:
    if std.data is None:
        return
    if grids_match(std.data.freq_hz, freq_hz):
        return
    if not interpolate:
        raise AnalysisError(
            f"the {std.kind} data file has {std.data.n_points} points on other frequencies than the "
            f"measurement ({freq_hz.size} points); measure on the same points or allow interpolation",
            file=std.file)
    lo, hi = std.data.freq_hz[0], std.data.freq_hz[-1]
    if freq_hz[0] < lo * (1 - 1e-9) or freq_hz[-1] > hi * (1 + 1e-9):
        raise AnalysisError(
            f"the {std.kind} data file covers {lo:.6g}–{hi:.6g} Hz, not the whole measured band "
            f"{freq_hz[0]:.6g}–{freq_hz[-1]:.6g} Hz; Refplane does not extrapolate", file=std.file)


def _data_on(std: Standard, freq_hz: np.ndarray) -> np.ndarray:
    from refplane.analysis.readings.markers import interpolate as interp

    data = std.data
    if grids_match(data.freq_hz, freq_hz):
        return np.array(data.s)
    at = np.clip(freq_hz, data.freq_hz[0], data.freq_hz[-1])
    return interp(data.freq_hz, data.s, at)


def reflection(std: Standard, freq_hz, z0_ohm: float = 50.0, *, interpolate: bool = False) -> np.ndarray:
    """The known reflection coefficient of a reflect standard at each frequency.

    Parameters
    ----------
    std : Standard
        A short, open or load.
    freq_hz : array_like, shape (n,)
        Frequencies, Hz.
    z0_ohm : float
        Reference impedance the result is referred to.
    interpolate : bool
        For a data-file definition on other frequencies: interpolate it (linearly in real and
        imaginary parts) instead of refusing.

    Returns
    -------
    ndarray of complex, shape (n,)
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    if std.kind == "through":
        raise AnalysisError("a through is a two-port standard; it has no single reflection")
    _check_grid(std, f, interpolate)
    if std.data is not None:
        g = _data_on(std, f)[:, 0, 0]
        zd = complex(std.data.z0_ohm[0])
        if zd != z0_ohm:
            from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma

            g = z_to_gamma(gamma_to_z(g, zd), z0_ohm)
        return g
    zc, gl = _offset_terms(std, f, z0_ohm)
    g1 = _termination_gamma(std, f, zc, z0_ohm) * np.exp(-2 * gl)
    if np.all(zc == z0_ohm):
        return g1
    # Referred to Zc so far; move to the reference impedance through Z.
    with np.errstate(divide="ignore", invalid="ignore"):
        z = zc * (1 + g1) / (1 - g1)
        g = (z - z0_ohm) / (z + z0_ohm)
    return np.where(g1 == 1, 1.0 + 0j, g)


def through_s(std: Standard, freq_hz, z0_ohm: float = 50.0, *, interpolate: bool = False) -> np.ndarray:
    """The known S matrix of a through standard, shape (n, 2, 2), referred to ``z0_ohm``.

    A model through is a line of characteristic impedance Zc and propagation γl; with
    ρ = (Zc − Z0)/(Zc + Z0) and P = e^(−γl) (textbook, e.g. Pozar ch. 4 — from memory):
    S11 = S22 = ρ(1 − P²)/(1 − ρ²P²), S21 = S12 = P(1 − ρ²)/(1 − ρ²P²).
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    if std.kind != "through":
        raise AnalysisError(f"a {std.kind} is not a through")
    _check_grid(std, f, interpolate)
    if std.data is not None:
        if not np.allclose(std.data.z0_ohm, z0_ohm):
            raise AnalysisError("the through data file has another reference impedance than the "
                                "standards", file=std.file)
        return _data_on(std, f)
    zc, gl = _offset_terms(std, f, z0_ohm)
    rho = (zc - z0_ohm) / (zc + z0_ohm)
    p = np.exp(-gl)
    den = 1 - rho**2 * p**2
    s = np.empty((f.size, 2, 2), dtype=np.complex128)
    s[:, 0, 0] = s[:, 1, 1] = rho * (1 - p**2) / den
    s[:, 0, 1] = s[:, 1, 0] = p * (1 - rho**2) / den
    return s


def grids_match(a_hz: np.ndarray, b_hz: np.ndarray) -> bool:
    """True when two frequency lists are the same points (to a part in 10⁹ of the top frequency).

    The tolerance allows for files that write frequencies with few digits in GHz.
    """
    a, b = np.asarray(a_hz, dtype=float), np.asarray(b_hz, dtype=float)
    if a.shape != b.shape:
        return False
    scale = max(float(np.max(np.abs(a))), float(np.max(np.abs(b))), 1.0)
    return bool(np.all(np.abs(a - b) <= 1e-9 * scale))


# --------------------------------------------------------------------------- the JSON file

def _definition_keys(kind: str) -> dict[str, tuple[str, float]]:
    """File key → (Standard field, scale from the file's unit to SI) for a kind."""
    return {**_OFFSET_KEYS, **{k: (v, 1.0) for k, v in _KIND_KEYS[kind].items()}}


def _value_schema(field_name: str) -> Number:
    if field_name == "offset_loss_ohm_per_s":
        return Number(minimum=0)
    if field_name == "offset_z0_ohm":
        return Number(above=0, nullable=True)
    if field_name == "r_ohm":
        return Number(minimum=0, nullable=True)
    return Number()


def definition_schema(kind: str | None) -> Obj:
    """The layout of one standard's definition (``kind`` fixed by its section, or None for
    a named entry that says its own 'kind'). Every numeric key may have a ``<key>_u``
    companion: its standard uncertainty, a finite number ≥ 0, in the same unit."""

    def keys(entry: dict, path: str) -> dict:
        given = entry.get("kind", kind)
        if kind is not None and given != kind:
            raise SchemaError(_path(path, "kind"), f"must be {kind!r} in the {kind!r} section, "
                                                   f"not {given!r}")
        if given not in KINDS:
            raise SchemaError(_path(path, "kind") if "kind" in entry else path,
                              f"say which kind of standard it is: one of {', '.join(KINDS)}")
        out: dict = {"kind": Text(choices=KINDS), "file": Text(nonempty=True), "note": Text()}
        for key, (name, _scale) in _definition_keys(given).items():
            out[key] = _value_schema(name)
            out[key + "_u"] = Number(minimum=0)
        return out

    return Obj(keys, required=() if kind is not None else ("kind",))


def _path(path: str, key: str) -> str:
    return f"{path}.{key}" if path else key


def schema() -> Obj:
    """The standards file's layout, declared once (checked by :func:`fileio.validate`)."""
    named = Obj(values=definition_schema(None))
    return Obj({
        "format": Const(FORMAT, f"must be {FORMAT!r}, not {{}}: this is not a standards file"),
        "version": Const(VERSION, f"standards file version {{}} is not supported (this "
                         f"Refplane reads version {VERSION})"),
        "name": Text(), "note": Text(),
        "reference_z0_ohm": Number(above=0),
        **{kind: definition_schema(kind) for kind in KINDS},
        "additional": named, "checks": named,
    }, required=("format", "version"))


def _standard_from_json(entry: dict, kind: str | None, label: str, base: Path, file: str) -> Standard:
    """A Standard from a definition already checked against :func:`definition_schema`."""
    given_kind = entry.get("kind", kind)
    allowed = _definition_keys(given_kind)
    values: dict[str, object] = {}
    uncertainties: dict[str, float] = {}
    data_file = entry.get("file")
    for key, value in entry.items():
        if key in ("kind", "file", "note"):
            continue
        if key.endswith("_u") and key[:-2] in allowed:
            name, scale = allowed[key[:-2]]
            uncertainties[name] = value * scale
            continue
        name, scale = allowed[key]
        values[name] = None if value is None else value * scale
    data = None
    if data_file is not None:
        if values:
            raise SweepFileError(f"{label}: give either a data file or model values, not both", file=file)
        path = Path(data_file)
        if not path.is_absolute():
            path = base / path
        from refplane.analysis.files.loading import read_sweep

        data = read_sweep(path)
        data_file = str(path)
    try:
        return Standard(given_kind, data=data, file=data_file, uncertainties=uncertainties,
                        **values)
    except SweepFileError:
        raise
    except AnalysisError as exc:
        raise SweepFileError(f"{label}: {exc.reason}", file=exc.file or file) from None


def standards_from_json(obj, *, file: str | os.PathLike | None = None) -> StandardSet:
    """Build a :class:`StandardSet` from the parsed JSON of a standards file.

    The document is checked against :func:`schema` first: every fault is one line naming
    the file, the key path and the reason. Data-file definitions are resolved relative to
    ``file``'s folder (or the working folder).
    """
    fname = os.fspath(file) if file is not None else "standards"
    base = Path(fname).parent if file is not None else Path(".")
    if not isinstance(obj, Mapping):
        raise SweepFileError("a standards file holds one JSON object", file=fname)
    obj = validate(dict(obj), schema(), fname)
    kw: dict[str, object] = {}
    for kind in KINDS:
        if kind in obj:
            kw[kind] = _standard_from_json(obj[kind], kind, kind, base, fname)
    for group in ("additional", "checks"):
        entries = obj.get(group, {})
        kw[group] = tuple((str(name), _standard_from_json(entry, None, f"{group}[{name!r}]",
                                                          base, fname))
                          for name, entry in entries.items())
    z0 = obj.get("reference_z0_ohm", 50.0)
    name = obj.get("name", Path(fname).stem if file is not None else "standards")
    try:
        return StandardSet(reference_z0_ohm=float(z0), name=str(name),
                           source=os.fspath(file) if file is not None else None, **kw)
    except SweepFileError:
        raise
    except AnalysisError as exc:
        raise SweepFileError(exc.reason, file=fname) from None


def load_standards(path: str | os.PathLike) -> StandardSet:
    """Read a standards file (see the module notes for its layout).

    Raises
    ------
    SweepFileError
        Missing file, bad JSON (with its line), unknown keys, bad values; always naming the file.
    """
    fname = os.fspath(path)
    obj = read_json(fname, "a standards file")
    return standards_from_json(obj, file=fname)


def _standard_to_json(std: Standard, base: Path | None, with_kind: bool) -> dict:
    out: dict[str, object] = {"kind": std.kind} if with_kind else {}
    if std.data is not None:
        path = Path(std.file or std.data.source or "")
        if base is not None:
            try:
                path = Path(os.path.relpath(path, base))
            except ValueError:  # another drive on Windows
                pass
        out["file"] = path.as_posix()
        return out
    defaults = Standard(std.kind)
    for key, (name, scale) in _definition_keys(std.kind).items():
        value = getattr(std, name)
        if value != getattr(defaults, name):
            out[key] = None if value is None else value / scale
        if name in std.uncertainties:
            out[key + "_u"] = std.uncertainties[name] / scale
    return out


def standards_to_json(standards: StandardSet, *, base: str | os.PathLike | None = None) -> dict:
    """The JSON object of a standards file (data-file paths made relative to ``base``)."""
    base_path = Path(base) if base is not None else None
    obj: dict[str, object] = {"format": FORMAT, "version": VERSION, "name": standards.name,
                              "reference_z0_ohm": standards.reference_z0_ohm}
    for kind in KINDS:
        obj[kind] = _standard_to_json(getattr(standards, kind), base_path, with_kind=False)
    for group in ("additional", "checks"):
        pairs = getattr(standards, group)
        if pairs:
            obj[group] = {n: _standard_to_json(s, base_path, with_kind=True) for n, s in pairs}
    return obj


def save_standards(standards: StandardSet, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a standards file atomically; an existing file is kept unless ``overwrite``."""
    from refplane.analysis.files.fileio import write_text_atomic

    target = Path(path)
    text = json.dumps(standards_to_json(standards, base=target.parent), indent=2, allow_nan=False)
    return write_text_atomic(target, text + "\n", overwrite=overwrite)


def definition_keys(kind: str) -> tuple[str, ...]:
    """The standards-file keys a model definition of ``kind`` may hold (unit in each name)."""
    if kind not in KINDS:
        raise AnalysisError(f"unknown kind of standard {kind!r}")
    return tuple(_KIND_KEYS[kind]) + tuple(_OFFSET_KEYS)


def names_of(pairs: Iterable[tuple[str, Standard]]) -> tuple[str, ...]:
    """The names of ``(name, Standard)`` pairs."""
    return tuple(n for n, _ in pairs)
