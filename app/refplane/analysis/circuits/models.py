"""Two-terminal equivalent circuits: the forward models the fitter matches to a sweep.

Every model is a :class:`CircuitModel`: an id (used on the command line), a plain-English
name, its parameter keys in SI units (the unit is in the key: ``r_ohm``, ``l_h``, ``c_f``),
a vectorised impedance ``Z(f)`` and a closed-form linear first estimate from measured
impedance, so that a fit needs no starting values from the user.

Models and their parameter keys
-------------------------------
=============== ========================= ===============================================
id              parameters                topology (ω = 2πf)
=============== ========================= ===============================================
series-rl       r_ohm, l_h                Z = R + jωL
series-rc       r_ohm, c_f                Z = R + 1/(jωC)
series-rlc      r_ohm, l_h, c_f           Z = R + jωL + 1/(jωC)
parallel-rc     r_ohm, c_f                Y = 1/R + jωC
parallel-rl     r_ohm, l_h                Y = 1/R + 1/(jωL)
parallel-rlc    r_ohm, l_h, c_f           Y = 1/R + 1/(jωL) + jωC
resistor-leads  r_ohm, l_h, c_f           Z = (R + jωL) ∥ C: the resistor R in series with
                                          its lead inductance L, that branch bridged by
                                          the shunt (body and pad) capacitance C
capacitor       esr_ohm, esl_h, c_f       Z = ESR + jω·ESL + 1/(jωC)
inductor        r_ohm, l_h, c_f           Z = (R + jωL) ∥ C: winding resistance R in series
                                          with L, bridged by the winding capacitance C
=============== ========================= ===============================================

Aliases
-------
Two pairs share one circuit. ``capacitor`` *is* ``series-rlc`` under a capacitor's names
(``esr_ohm``, ``esl_h``, ``c_f``), and ``inductor`` *is* ``resistor-leads`` under an
inductor's reading. Each pair shares one impedance function and one estimate, and carries
the same :attr:`CircuitModel.circuit`; they differ only in keys and wording. A fit of either
member of a pair gives the same numbers; automatic selection fits each circuit once and
then names it with :func:`reading_for` (see there for the rule).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Mapping

import numpy as np

from refplane.analysis.errors import AnalysisError

ImpedanceFn = Callable[..., np.ndarray]
EstimateFn = Callable[[np.ndarray, np.ndarray], tuple[float, ...]]
ResonanceFn = Callable[..., float]

_UNITS = {"ohm": "Ω", "h": "H", "f": "F"}


def unit_of(key: str) -> str:
    """The display unit of a parameter key: ``"l_h"`` → ``"H"``, ``"esr_ohm"`` → ``"Ω"``."""
    return _UNITS[key.rsplit("_", 1)[1]]


def _cplx(re, im) -> np.ndarray:
    # Built part by part: 1j * inf would give a NaN real part.
    re = np.asarray(re, dtype=np.float64)
    im = np.asarray(im, dtype=np.float64)
    out = np.empty(np.broadcast_shapes(re.shape, im.shape), dtype=np.complex128)
    out.real = re
    out.imag = im
    return out


def _from_admittance(g, b) -> np.ndarray:
    y = _cplx(g, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = 1.0 / y
    return np.where(y == 0, complex(np.inf, 0.0), z)


# ---------------------------------------------------------------------------------------
# Impedance functions, each Z(ω, *params) with params in the circuit's own order.

def _z_series_rl(w, r, l):
    return _cplx(r + 0.0 * w, w * l)


def _z_series_rc(w, r, c):
    return _cplx(r + 0.0 * w, -1.0 / (w * c))


def _z_series_rlc(w, r, l, c):
    return _cplx(r + 0.0 * w, w * l - 1.0 / (w * c))


def _z_parallel_rc(w, r, c):
    return _from_admittance(1.0 / r + 0.0 * w, w * c)


def _z_parallel_rl(w, r, l):
    return _from_admittance(1.0 / r + 0.0 * w, -1.0 / (w * l))


def _z_parallel_rlc(w, r, l, c):
    return _from_admittance(1.0 / r + 0.0 * w, w * c - 1.0 / (w * l))


def _z_rl_bridged_c(w, r, l, c):
    # (R + jωL) ∥ C = (R + jωL) / (1 − ω²LC + jωRC)
    branch = _cplx(r + 0.0 * w, w * l)
    denom = _cplx(1.0 - w * w * l * c, w * r * c)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = branch / denom
    return np.where(denom == 0, complex(np.inf, 0.0), z)


# ---------------------------------------------------------------------------------------
# Closed-form first estimates. Each solves a linear least-squares problem in quantities
# that enter Z (or Y) linearly, rows weighted by 1/|Z| (or 1/|Y|) so every point counts by
# its relative error rather than by its size. Values that come out non-positive (the data
# does not show that element) are replaced by one that makes the element's effect small
# across the band, a safe place for the iterative fit to start from.

def _lstsq(rows: np.ndarray, rhs: np.ndarray, weight: np.ndarray) -> np.ndarray:
    a = rows * weight[:, None]
    # Columns differ by many orders of magnitude (ω against 1/ω); scale each to unit norm
    # first, or the small ones fall below the solver's rank cut-off.
    norm = np.linalg.norm(a, axis=0)
    norm[norm == 0] = 1.0
    sol, *_ = np.linalg.lstsq(a / norm, rhs * weight, rcond=None)
    return sol / norm


def _pos(value: float, fallback: float) -> float:
    return float(value) if np.isfinite(value) and value > 0 else float(fallback)


def _scales(w: np.ndarray, z: np.ndarray) -> tuple[float, float, float, float]:
    mag = np.abs(z)
    zmax, zmin = float(np.max(mag)), float(np.min(mag))
    return float(w.min()), float(w.max()), max(zmin, 1e-6), max(zmax, 1e-6)


def _small_l(w, z):  # an inductance whose reactance is a tenth of the smallest |Z| at the top
    wmin, wmax, zmin, zmax = _scales(w, z)
    return 0.1 * zmin / wmax


def _small_c(w, z):  # a capacitance whose reactance is ten times the largest |Z| at the top
    wmin, wmax, zmin, zmax = _scales(w, z)
    return 1.0 / (10.0 * zmax * wmax)


def _large_c(w, z):  # a series capacitance whose reactance is a tenth of the smallest |Z| at the bottom
    wmin, wmax, zmin, zmax = _scales(w, z)
    return 10.0 / (zmin * wmin)


def _large_l(w, z):  # a shunt inductance whose reactance is ten times the largest |Z| at the bottom
    wmin, wmax, zmin, zmax = _scales(w, z)
    return 10.0 * zmax / wmin


def _r_guess(z):
    return _pos(float(np.mean(z.real)), max(float(np.median(np.abs(z))), 1e-3))


def _est_series_rl(w, z):
    wt = 1.0 / np.abs(z)
    (l,) = _lstsq(w[:, None], z.imag, wt)
    return _r_guess(z), _pos(l, _small_l(w, z))


def _est_series_rc(w, z):
    # X = −S/ω with S = 1/C.
    wt = 1.0 / np.abs(z)
    (s,) = _lstsq((-1.0 / w)[:, None], z.imag, wt)
    return _r_guess(z), _pos(1.0 / s if s > 0 else np.nan, _large_c(w, z))


def _est_series_rlc(w, z):
    # X = ωL − S/ω, linear in (L, S = 1/C); the same as X·ω = Lω² − 1/C row by row.
    wt = 1.0 / np.abs(z)
    l, s = _lstsq(np.column_stack([w, -1.0 / w]), z.imag, wt)
    return _r_guess(z), _pos(l, _small_l(w, z)), _pos(1.0 / s if s > 0 else np.nan, _large_c(w, z))


def _admittance(z):
    with np.errstate(divide="ignore", invalid="ignore"):
        return 1.0 / z


def _g_guess(y, z):
    g = float(np.mean(y.real))
    return 1.0 / g if g > 0 else max(10.0 * float(np.max(np.abs(z))), 1.0)


def _est_parallel_rc(w, z):
    y = _admittance(z)
    wt = 1.0 / np.abs(y)
    (c,) = _lstsq(w[:, None], y.imag, wt)
    return _g_guess(y, z), _pos(c, _small_c(w, z))


def _est_parallel_rl(w, z):
    # B = −Γ/ω with Γ = 1/L.
    y = _admittance(z)
    wt = 1.0 / np.abs(y)
    (gam,) = _lstsq((-1.0 / w)[:, None], y.imag, wt)
    return _g_guess(y, z), _pos(1.0 / gam if gam > 0 else np.nan, _large_l(w, z))


def _est_parallel_rlc(w, z):
    # B = ωC − Γ/ω, linear in (C, Γ = 1/L).
    y = _admittance(z)
    wt = 1.0 / np.abs(y)
    c, gam = _lstsq(np.column_stack([w, -1.0 / w]), y.imag, wt)
    return (_g_guess(y, z), _pos(1.0 / gam if gam > 0 else np.nan, _large_l(w, z)),
            _pos(c, _small_c(w, z)))


def _est_rl_bridged_c(w, z):
    # Z(1 + jωRC − ω²LC) = R + jωL rearranges to Z = R + jωL − jω(RC)Z + ω²(LC)Z, which is
    # linear in (R, L, RC, LC) (the usual linearisation of a rational fit). Real and
    # imaginary parts give two rows per point.
    zr, zi = z.real, z.imag
    zero = np.zeros_like(w)
    rows = np.vstack([np.column_stack([np.ones_like(w), zero, w * zi, w * w * zr]),
                      np.column_stack([zero, w, -w * zr, w * w * zi])])
    wt = np.concatenate([1.0 / np.abs(z)] * 2)
    r, l, rc, lc = _lstsq(rows, np.concatenate([zr, zi]), wt)
    r = _pos(r, _r_guess(z))
    l = _pos(l, _small_l(w, z))
    c = lc / l if lc > 0 else (rc / r if rc > 0 else np.nan)
    return r, l, _pos(c, _small_c(w, z))


# ---------------------------------------------------------------------------------------
# Self-resonance (reactance zero with the capacitive and inductive parts in balance).

def _srf_lc(l, c):
    return 1.0 / (2 * math.pi * math.sqrt(l * c))


def _srf_rl_bridged_c(r, l, c):
    # Im Z = 0 where ωC = ωL/(R² + ω²L²), i.e. ω² = 1/(LC) − (R/L)²; none when that is ≤ 0.
    w2 = 1.0 / (l * c) - (r / l) ** 2
    return math.sqrt(w2) / (2 * math.pi) if w2 > 0 else math.nan


@dataclass(frozen=True)
class CircuitModel:
    """One two-terminal equivalent circuit.

    Attributes
    ----------
    id : str
        The command-line id (``"series-rl"``).
    name : str
        Plain-English name ("resistance in series with inductance").
    param_names : tuple of str
        Parameter keys in SI units, in the order of the impedance function.
    topology : str
        The circuit, written out (``"Z = R + jωL"``).
    circuit : str
        The id of the underlying circuit; aliases share it (``capacitor`` → ``series-rlc``).
    phrase : str
        A ``str.format`` template naming the parts, keys as fields; used for the sentence.
    """

    id: str
    name: str
    param_names: tuple[str, ...]
    topology: str
    circuit: str
    phrase: str
    _z: ImpedanceFn = field(repr=False, compare=False)
    _estimate: EstimateFn = field(repr=False, compare=False)
    _srf: ResonanceFn | None = field(default=None, repr=False, compare=False)

    @property
    def n_params(self) -> int:
        """Number of free parameters."""
        return len(self.param_names)

    @property
    def has_resonance(self) -> bool:
        """True when the circuit can self-resonate (it holds both an L and a C)."""
        return self._srf is not None

    def values(self, params: Mapping[str, float]) -> tuple[float, ...]:
        """The parameter values in this model's order; raises for missing or bad ones."""
        missing = [k for k in self.param_names if k not in params]
        if missing:
            raise AnalysisError(
                f"model {self.id} needs parameters {', '.join(self.param_names)}; missing {', '.join(missing)}")
        out = tuple(float(params[k]) for k in self.param_names)
        for key, value in zip(self.param_names, out):
            if not (math.isfinite(value) and value > 0):
                raise AnalysisError(f"model {self.id}: {key} must be a finite positive number, got {value!r}")
        return out

    def impedance(self, freq_hz, params: Mapping[str, float]) -> np.ndarray:
        """Impedance of the circuit at ``freq_hz`` (vectorised).

        Parameters
        ----------
        freq_hz : float or array_like
            Frequencies above 0 Hz.
        params : mapping
            Every key in :attr:`param_names`, SI values above zero.

        Returns
        -------
        ndarray of complex
            Z in ohms, the shape of ``freq_hz``; ``inf`` where the circuit is an open.

        Examples
        --------
        >>> z = MODELS["series-rl"].impedance(470e6, {"r_ohm": 75.0, "l_h": 9e-9})
        >>> round(float(z.real), 3), round(float(z.imag), 3)
        (75.0, 26.578)
        """
        return self.impedance_of(freq_hz, self.values(params))

    def impedance_of(self, freq_hz, values: tuple[float, ...]) -> np.ndarray:
        """As :meth:`impedance`, with the values as a tuple in :attr:`param_names` order (unchecked)."""
        f = np.asarray(freq_hz, dtype=np.float64)
        if not np.all(np.isfinite(f)) or np.any(f <= 0):
            raise AnalysisError("circuit impedance needs finite frequencies above 0 Hz")
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self._z(2 * np.pi * f, *values)

    def estimate(self, freq_hz: np.ndarray, z_ohm: np.ndarray) -> dict[str, float]:
        """A closed-form first estimate of the parameters from measured impedance.

        Points where Z is not finite or is zero are left out.

        Raises
        ------
        AnalysisError
            When fewer than two usable points remain.
        """
        f = np.asarray(freq_hz, dtype=np.float64)
        z = np.asarray(z_ohm, dtype=np.complex128)
        ok = np.isfinite(z) & (z != 0) & (f > 0)
        if np.count_nonzero(ok) < 2:
            raise AnalysisError(
                f"model {self.id}: fewer than two points with a finite, non-zero impedance to start from "
                "(the sweep reads as an ideal open or short throughout the band)")
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            values = self._estimate(2 * np.pi * f[ok], z[ok])
        return dict(zip(self.param_names, (float(v) for v in values)))

    def self_resonance_hz(self, params: Mapping[str, float]) -> float:
        """Self-resonant frequency (reactance zero) in Hz; NaN when the circuit has none."""
        if self._srf is None:
            return math.nan
        return float(self._srf(*self.values(params)))


def _model(id, name, keys, topology, circuit, phrase, z, est, srf=None) -> CircuitModel:
    return CircuitModel(id=id, name=name, param_names=tuple(keys), topology=topology,
                        circuit=circuit, phrase=phrase, _z=z, _estimate=est, _srf=srf)


#: Every model, by id, in the order the command line lists them.
MODELS: dict[str, CircuitModel] = {m.id: m for m in (
    _model("series-rl", "resistance in series with inductance", ("r_ohm", "l_h"),
           "Z = R + jωL", "series-rl", "{r_ohm} in series with {l_h}",
           _z_series_rl, _est_series_rl),
    _model("series-rc", "resistance in series with capacitance", ("r_ohm", "c_f"),
           "Z = R + 1/(jωC)", "series-rc", "{r_ohm} in series with {c_f}",
           _z_series_rc, _est_series_rc),
    _model("series-rlc", "resistance, inductance and capacitance in series", ("r_ohm", "l_h", "c_f"),
           "Z = R + jωL + 1/(jωC)", "series-rlc", "{r_ohm}, {l_h} and {c_f} in series",
           _z_series_rlc, _est_series_rlc, lambda r, l, c: _srf_lc(l, c)),
    _model("parallel-rc", "resistance in parallel with capacitance", ("r_ohm", "c_f"),
           "Y = 1/R + jωC", "parallel-rc", "{r_ohm} in parallel with {c_f}",
           _z_parallel_rc, _est_parallel_rc),
    _model("parallel-rl", "resistance in parallel with inductance", ("r_ohm", "l_h"),
           "Y = 1/R + 1/(jωL)", "parallel-rl", "{r_ohm} in parallel with {l_h}",
           _z_parallel_rl, _est_parallel_rl),
    _model("parallel-rlc", "resistance, inductance and capacitance in parallel", ("r_ohm", "l_h", "c_f"),
           "Y = 1/R + 1/(jωL) + jωC", "parallel-rlc", "{r_ohm}, {l_h} and {c_f} in parallel",
           _z_parallel_rlc, _est_parallel_rlc, lambda r, l, c: _srf_lc(l, c)),
    _model("resistor-leads", "resistor with lead inductance and shunt capacitance", ("r_ohm", "l_h", "c_f"),
           "Z = (R + jωL) ∥ C: R in series with its lead inductance L, bridged by the shunt capacitance C",
           "resistor-leads", "a {r_ohm} resistor with {l_h} of lead inductance and {c_f} across it",
           _z_rl_bridged_c, _est_rl_bridged_c, _srf_rl_bridged_c),
    _model("capacitor", "capacitor with series resistance (ESR) and series inductance (ESL)",
           ("esr_ohm", "esl_h", "c_f"),
           "Z = ESR + jω·ESL + 1/(jωC) (the series R-L-C circuit under a capacitor's names)",
           "series-rlc", "a {c_f} capacitor with ESR {esr_ohm} and ESL {esl_h}",
           _z_series_rlc, _est_series_rlc, lambda r, l, c: _srf_lc(l, c)),
    _model("inductor", "inductor with winding resistance and winding capacitance", ("r_ohm", "l_h", "c_f"),
           "Z = (R + jωL) ∥ C: winding resistance R in series with L, bridged by the winding capacitance C",
           "resistor-leads", "a {l_h} inductor with {r_ohm} winding resistance and {c_f} across it",
           _z_rl_bridged_c, _est_rl_bridged_c, _srf_rl_bridged_c),
)}

#: Ids accepted by the fitter: every model, plus "auto".
MODEL_CHOICES = ("auto",) + tuple(MODELS)

#: One model per distinct circuit, the candidates of automatic selection.
CIRCUITS = tuple(m.id for m in MODELS.values() if m.circuit == m.id)


def get_model(model_id: str) -> CircuitModel:
    """The model with id ``model_id``; an unknown id raises :class:`AnalysisError` listing the known ones."""
    try:
        return MODELS[model_id]
    except (KeyError, TypeError):
        raise AnalysisError(
            f"unknown model {model_id!r}; choose one of: {', '.join(MODEL_CHOICES)}") from None


def reading_for(circuit_id: str, params: Mapping[str, float], centre_hz: float) -> str:
    """The model id under which automatic selection reports a fitted circuit.

    A series R-L-C circuit reads as a ``capacitor`` when its capacitive reactance
    1/(ωC) exceeds its resistance at ``centre_hz`` (the part behaves as a capacitor, with
    ESR and ESL as its imperfections); otherwise as ``series-rlc``. An (R + jωL) ∥ C circuit
    reads as an ``inductor`` when ωL exceeds R at ``centre_hz``, otherwise as a
    ``resistor-leads``. Other circuits keep their own id.

    Parameters
    ----------
    circuit_id : str
        One of :data:`CIRCUITS`.
    params : mapping
        The fitted values under that circuit's keys (``r_ohm``, ``l_h``, ``c_f``).
    centre_hz : float
        Where to compare (automatic selection uses the band's geometric centre).
    """
    w = 2 * math.pi * centre_hz
    if circuit_id == "series-rlc":
        return "capacitor" if 1.0 / (w * params["c_f"]) > params["r_ohm"] else "series-rlc"
    if circuit_id == "resistor-leads":
        return "inductor" if w * params["l_h"] > params["r_ohm"] else "resistor-leads"
    return circuit_id


def rename(params: Mapping[str, float], source: CircuitModel, target: CircuitModel) -> dict[str, float]:
    """Carry values between two models of one circuit (``series-rlc`` ⇄ ``capacitor``)."""
    if source.circuit != target.circuit:
        raise AnalysisError(f"models {source.id} and {target.id} are different circuits")
    return dict(zip(target.param_names, (params[k] for k in source.param_names)))
