"""Residual error terms propagated from a calibration made in Refplane.

What goes in
------------
* the standards' definition uncertainties: every numeric field of a standards file may carry
  a standard uncertainty under the same key with ``_u`` appended (``"c0_f_u": 5e-15``);
* the noise of each standard's sweep, estimated from the sweep itself
  (:func:`refplane.analysis.uncertainty.noise.trace_noise`) or given.

How
---
A standard whose true reflection differs from its definition by δΓ_k, or whose sweep carries
noise δΓm_k, moves the solved error terms e00, e11 and e10e01 = t by δe (sensitivity
coefficients from re-solving with each input moved by its standard uncertainty, every
frequency at once). A device corrected with the moved terms reads, to first order
(differentiating Γ = (Γm − e00)/(t + e11·(Γm − e00))),

    ΔΓ = −(1 − e11·Γ)²/t·δe00 − Γ·(1 − e11·Γ)/t·δt − Γ²·δe11  =  D + T·Γ + M·Γ²

with residual directivity D = −δe00/t, tracking T = (2·e11·δe00 − δt)/t and source match
M = (e11·δt − e11²·δe00)/t − δe11: the residual-term model of EURAMET cg-12, here with
correlated, normally distributed terms. The result is their 6 × 6 real covariance
(Re D, Im D, Re T, Im T, Re M, Im M) at every frequency; for any device Γ, the covariance of
the corrected reading is A·C·Aᵀ with A the 2 × 6 real matrix of ΔΓ = D + T·Γ + M·Γ².
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.calibration.standards import GOHM, Standard, StandardSet, grids_match, reflection
from refplane.analysis.sweep import Sweep

#: Names of the six real components, in the covariance's order.
COMPONENTS = ("D.re", "D.im", "T.re", "T.im", "M.re", "M.im")


@dataclass(frozen=True, eq=False)
class CalibrationUncertainty:
    """Covariance of the residual terms D, T, M left by a calibration, per frequency.

    Attributes
    ----------
    freq_hz : ndarray (n,)
    cov : ndarray (n, 6, 6)
        Covariance of (Re D, Im D, Re T, Im T, Re M, Im M).
    sources : tuple of str
        Plain names of what went in ("open c0_f ± 5 fF", "noise of the load sweep", …).
    noise : dict of str to float
        σ per axis used for each standard's sweep.
    """

    freq_hz: np.ndarray
    cov: np.ndarray
    sources: tuple[str, ...] = ()
    noise: dict = field(default_factory=dict)

    def on(self, freq_hz) -> "CalibrationUncertainty":
        """The covariance interpolated linearly onto other frequencies (inside the band)."""
        from refplane.analysis.readings.markers import interpolate

        f = np.atleast_1d(np.asarray(freq_hz, dtype=float))
        if grids_match(f, self.freq_hz):
            return self
        cov = interpolate(self.freq_hz, self.cov, f).real
        return CalibrationUncertainty(f, cov, self.sources, dict(self.noise))

    def gamma_cov(self, gamma) -> np.ndarray:
        """Covariance (n, 2, 2) of a corrected reading ``gamma`` (n,) on this object's frequencies."""
        a = sensitivity_matrix(gamma)
        return a @ self.cov @ np.swapaxes(a, -1, -2)

    def magnitudes(self) -> dict[str, np.ndarray]:
        """Standard uncertainty of each complex residual term, √(var Re + var Im), (n,) each."""
        d = np.diagonal(self.cov, axis1=1, axis2=2)
        return {"directivity": np.sqrt(d[:, 0] + d[:, 1]), "tracking": np.sqrt(d[:, 2] + d[:, 3]),
                "source_match": np.sqrt(d[:, 4] + d[:, 5])}


def sensitivity_matrix(gamma) -> np.ndarray:
    """The real 2 × 6 matrix A of ΔΓ = D + T·Γ + M·Γ² at each Γ, shape (n, 2, 6)."""
    g = np.atleast_1d(np.asarray(gamma, dtype=np.complex128))
    a = np.zeros(g.shape + (2, 6))
    for col, coef in enumerate((np.ones_like(g), g, g**2)):
        # (x + jy)·(c_r + j c_i) = (c_r x − c_i y) + j(c_i x + c_r y)
        a[..., 0, 2 * col], a[..., 0, 2 * col + 1] = coef.real, -coef.imag
        a[..., 1, 2 * col], a[..., 1, 2 * col + 1] = coef.imag, coef.real
    return a


def definition_uncertainties(std: Standard) -> dict[str, float]:
    """The standard uncertainties of a definition's fields, keyed by field name, SI.

    Read from the definition's ``uncertainties`` mapping; keys may be field names
    (``offset_loss_ohm_per_s``) or the file's keys (``offset_loss_gohm_per_s``, in GΩ/s).
    """
    raw = getattr(std, "uncertainties", None) or {}
    out = {}
    for key, value in dict(raw).items():
        name = key[:-2] if key.endswith("_u") else key
        if name == "offset_loss_gohm_per_s":
            name, value = "offset_loss_ohm_per_s", float(value) * GOHM
        if not hasattr(std, name):
            raise AnalysisError(f"{std.kind}: no field {name!r} for an uncertainty")
        value = float(value)
        if not (math.isfinite(value) and value >= 0):
            raise AnalysisError(f"{std.kind}: the uncertainty of {name} must be a number of at least 0")
        if value > 0:
            out[name] = value
    return out


def _field_shift(std: Standard, name: str, u: float, freq_hz, z0: float) -> np.ndarray:
    """(Γ(v + u) − Γ(v − u))/2: the definition's change for one standard uncertainty of a field."""
    value = getattr(std, name)
    if value is None:  # r_ohm None (= reference) or offset_z0_ohm None
        value = z0
    lo = value - u
    # Fields that must stay positive (loss, impedances): a one-sided step instead.
    if lo < 0 and name in ("offset_loss_ohm_per_s", "r_ohm", "offset_z0_ohm"):
        plus = reflection(dataclasses.replace(std, **{name: value + u}), freq_hz, z0)
        return plus - reflection(dataclasses.replace(std, **{name: value}), freq_hz, z0)
    plus = reflection(dataclasses.replace(std, **{name: value + u}), freq_hz, z0)
    minus = reflection(dataclasses.replace(std, **{name: lo}), freq_hz, z0)
    return (plus - minus) / 2


def _residual_terms(base, moved) -> np.ndarray:
    """(n, 6) real residual terms of moved error terms against the base ones."""
    e00, e11, t = base.directivity, base.source_match, base.reflection_tracking
    d00 = moved.directivity - e00
    d11 = moved.source_match - e11
    dt = moved.reflection_tracking - t
    D = -d00 / t
    T = (2 * e11 * d00 - dt) / t
    M = (e11 * dt - e11**2 * d00) / t - d11
    return np.stack([D.real, D.imag, T.real, T.imag, M.real, M.imag], axis=-1)


def calibration_uncertainty(measured: Mapping[str, Sweep], standards: StandardSet | None = None, *,
                            noise: str | float | Mapping[str, float] = "auto") -> CalibrationUncertainty:
    """Propagate the standards' uncertainties and sweep noise to the residual terms.

    Parameters
    ----------
    measured : mapping name → Sweep
        The raw standards as given to :func:`refplane.analysis.calibration.solve.calibrate`, on
        the short's frequencies (others are interpolated onto them).
    standards : StandardSet
        Their definitions, with ``uncertainties`` where known.
    noise : "auto", "none", float or mapping name → float
        σ per axis of each standard's sweep: estimated from each sweep ("auto"), none, one
        value for all, or one per standard.

    Returns
    -------
    CalibrationUncertainty
    """
    from refplane.analysis.calibration.solve import solve_one_port
    from refplane.analysis.readings.markers import interpolate
    from refplane.analysis.uncertainty.noise import trace_noise

    std = standards or StandardSet()
    names = std.solve_names
    missing = [n for n in names if n not in measured]
    if missing:
        raise AnalysisError(f"no measurement given for: {', '.join(missing)}")
    f = np.asarray(measured["short"].freq_hz, dtype=float)
    z0 = std.reference_z0_ohm
    gm = np.stack([measured[n].s[:, 0, 0] if grids_match(measured[n].freq_hz, f)
                   else interpolate(measured[n].freq_hz, measured[n].s[:, 0, 0], f) for n in names], axis=1)
    gd = np.stack([reflection(std.reflect(n), f, z0, interpolate=True) for n in names], axis=1)
    base, _ = solve_one_port(f, gm, gd)

    sources: list[str] = []
    columns: list[np.ndarray] = []  # each (n, 6): residual terms for one standard input

    def moved_terms(gm2, gd2):
        terms, _ = solve_one_port(f, gm2, gd2)
        return _residual_terms(base, terms)

    for k, name in enumerate(names):
        definition = std.reflect(name)
        for field_name, u in definition_uncertainties(definition).items():
            shift = _field_shift(definition, field_name, u, f, z0)
            gd2 = gd.copy()
            gd2[:, k] += shift
            columns.append(moved_terms(gm, gd2))
            sources.append(f"{name}: {field_name} ± {u:.3g} (standard uncertainty)")
    sigmas: dict[str, float] = {}
    for k, name in enumerate(names):
        if noise == "none":
            sigma = 0.0
        elif noise == "auto":
            sigma = trace_noise(gm[:, k]) if f.size >= 5 else 0.0
        elif isinstance(noise, Mapping):
            sigma = float(noise.get(name, 0.0))
        else:
            sigma = float(noise)
        sigmas[name] = sigma
        if sigma > 0:
            for step in (sigma, 1j * sigma):
                gm2 = gm.copy()
                gm2[:, k] += step
                columns.append(moved_terms(gm2, gd))
            sources.append(f"{name}: sweep noise σ = {sigma:.2g} per axis")
    cov = np.zeros((f.size, 6, 6))
    for col in columns:
        cov += col[:, :, None] * col[:, None, :]
    return CalibrationUncertainty(f, cov, tuple(sources), sigmas)


# --------------------------------------------------------------------------- file form

def to_json(cu: CalibrationUncertainty) -> dict:
    """The uncertainty as saved inside a calibration file (the 21 upper-triangle entries)."""
    iu = np.triu_indices(6)
    return {"components": list(COMPONENTS), "cov_upper": cu.cov[:, iu[0], iu[1]].tolist(),
            "sources": list(cu.sources), "noise": {k: float(v) for k, v in cu.noise.items()}}


def from_json(obj, freq_hz, *, file: str = "calibration") -> CalibrationUncertainty:
    """Read back :func:`to_json`'s object."""
    from refplane.analysis.errors import SweepFileError

    f = np.asarray(freq_hz, dtype=float)
    if not isinstance(obj, dict) or list(obj.get("components", [])) != list(COMPONENTS):
        raise SweepFileError("'uncertainty' must list the components " + ", ".join(COMPONENTS), file=file)
    try:
        upper = np.asarray(obj.get("cov_upper"), dtype=float)
    except (TypeError, ValueError):
        raise SweepFileError("'uncertainty' holds something other than numbers", file=file) from None
    if upper.shape != (f.size, 21) or not np.all(np.isfinite(upper)):
        raise SweepFileError(f"'uncertainty' needs 21 finite values for each of {f.size} frequencies",
                             file=file)
    iu = np.triu_indices(6)
    cov = np.zeros((f.size, 6, 6))
    cov[:, iu[0], iu[1]] = upper
    cov[:, iu[1], iu[0]] = upper
    sources = obj.get("sources", [])
    noise = obj.get("noise", {})
    if not isinstance(sources, list) or not all(isinstance(s, str) for s in sources) or not isinstance(noise, dict):
        raise SweepFileError("'uncertainty': 'sources' must be text lines and 'noise' an object", file=file)
    return CalibrationUncertainty(f, cov, tuple(sources), {str(k): float(v) for k, v in noise.items()})
