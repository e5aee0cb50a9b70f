"""Every source of a reading's uncertainty put together, at the points a user reads.

The path of a reading is: the sweep at the calibration plane (raw, or corrected by a saved
calibration) → the reference-plane offsets removed → interpolated at the reading frequency.
The uncertainty follows the same path:

1. at the calibration plane, at the reading's reflection Γp:
   * stated residual terms (:class:`ResidualTerms`): circular, magnitudes |D|, |T|·|Γp|,
     |M|·|Γp|²;
   * the calibration's propagated residual terms (:class:`CalibrationUncertainty`): normal,
     covariance A(Γp)·C·A(Γp)ᵀ;
   * trace noise: normal, σ² per axis (from the sweep, given, or from repeated sweeps);
   * the interpolation bound between swept points: circular, of the bound's magnitude;
2. carried through the offset removal by its complex derivative k = dΓ/dΓp (a circular term's
   magnitude scales by |k|, a covariance as K·C·Kᵀ with K the real 2 × 2 form of k);
3. plus each offset parameter's standard uncertainty (delay, loss, line impedance) times the
   reading's sensitivity to it (central differences over ± one uncertainty).

Sources at the calibration plane given together add (stated residual terms for an instrument's
own corrected performance, beside a Refplane calibration's propagated ones, for instance).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep
from refplane.analysis.uncertainty.propagate import DEFAULT_DRAWS, GammaModel, ReadoutUncertainty, propagate
from refplane.analysis.uncertainty.residual import ResidualTerms


@dataclass(frozen=True)
class OffsetUncertainty:
    """Standard uncertainties of one port's line offset (SI; 0 means exactly known).

    Attributes
    ----------
    delay_s : float
        Of the one-way delay (for a length and velocity factor, see :meth:`from_length`).
    loss_db : float
        Of the one-way conductor loss at the offset's reference frequency.
    line_z0_ohm : float
        Of the line's impedance.
    """

    delay_s: float = 0.0
    loss_db: float = 0.0
    line_z0_ohm: float = 0.0

    def __post_init__(self) -> None:
        for name in ("delay_s", "loss_db", "line_z0_ohm"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v >= 0):
                raise AnalysisError(f"the uncertainty of the offset's {name} must be a number of at least 0")

    @staticmethod
    def from_length(length_m: float, velocity_factor: float, u_length_m: float = 0.0,
                    u_velocity_factor: float = 0.0, **kw) -> "OffsetUncertainty":
        """From a length and velocity factor: τ = L/(vf·c), so
        u(τ)² = (u(L)/(vf·c))² + (L·u(vf)/(vf²·c))² (GUM, law of propagation)."""
        from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S as C

        u = math.hypot(u_length_m / (velocity_factor * C), length_m * u_velocity_factor / (velocity_factor**2 * C))
        return OffsetUncertainty(delay_s=u, **kw)

    @property
    def is_zero(self) -> bool:
        """True when nothing is uncertain."""
        return self.delay_s == 0 and self.loss_db == 0 and self.line_z0_ohm == 0


@dataclass(frozen=True)
class UncertaintyOptions:
    """What is known about a reading's errors (all optional).

    Attributes
    ----------
    residual : ResidualTerms or None
        An instrument's corrected performance.
    calibration : CalibrationUncertainty or None
        A Refplane calibration's propagated residual terms (port 1 only).
    noise : "auto", "none", float, or ndarray (n,) on the sweep's frequencies
        Trace noise σ per axis; "auto" estimates it from the sweep.
    interpolation : bool
        Include the interpolation bound between swept points.
    offset_u : OffsetUncertainty or None
        Standard uncertainties of the offset line at the port read.
    method : {"auto", "linear", "monte-carlo"}
    draws : int
    seed : int or None
    """

    residual: ResidualTerms | None = None
    calibration: object | None = None
    noise: object = "auto"
    interpolation: bool = True
    offset_u: OffsetUncertainty | None = None
    method: str = "auto"
    draws: int = DEFAULT_DRAWS
    seed: int | None = 0


def _noise_sigma(plane: Sweep, port: int, noise, at: np.ndarray) -> np.ndarray:
    from refplane.analysis.readings.markers import interpolate
    from refplane.analysis.uncertainty.noise import trace_noise

    if isinstance(noise, str):
        if noise == "none":
            return np.zeros(at.size)
        if noise == "auto":
            g = plane.reflection(port)
            return np.full(at.size, trace_noise(g) if g.size >= 5 else 0.0)
        raise AnalysisError(f"noise must be auto, none or a number, not {noise!r}")
    arr = np.asarray(noise, dtype=float)
    if arr.ndim == 0:
        if not (math.isfinite(float(arr)) and arr >= 0):
            raise AnalysisError("the trace noise must be a number of at least 0")
        return np.full(at.size, float(arr))
    if arr.shape != plane.freq_hz.shape:
        raise AnalysisError("the noise per frequency must have one value per swept point")
    return interpolate(plane.freq_hz, arr, at).real


def _real2(k: np.ndarray) -> np.ndarray:
    out = np.empty(k.shape + (2, 2))
    out[..., 0, 0], out[..., 0, 1] = k.real, -k.imag
    out[..., 1, 0], out[..., 1, 1] = k.imag, k.real
    return out


def _through_offsets(plane_s: np.ndarray, f: float, z0, port: int, offsets) -> complex:
    from refplane.analysis.lines.deembed import remove_offsets

    sw = Sweep(np.array([f]), plane_s[None], z0)
    return complex(remove_offsets(sw, offsets).s[0, port - 1, port - 1])


def gamma_model(plane: Sweep, at_hz, *, port: int = 1, offsets: Sequence | None = None,
                options: UncertaintyOptions = UncertaintyOptions()) -> GammaModel:
    """The error model of Γ at each reading frequency (see the module notes).

    Parameters
    ----------
    plane : Sweep
        The sweep at the calibration plane (corrected already when a calibration applies).
    at_hz : array_like
        Reading frequencies inside the sweep.
    port : int
    offsets : sequence of LineOffset or None, one per port, optional
        The lines removed before reading (as :func:`refplane.analysis.lines.deembed.remove_offsets`).
    options : UncertaintyOptions
    """
    from refplane.analysis.readings.markers import gamma_at, s_at
    from refplane.analysis.uncertainty.noise import interpolation_bound

    plane.check_port(port)
    at = np.atleast_1d(np.asarray(at_hz, dtype=float))
    gp = np.atleast_1d(gamma_at(plane, at, port))
    n = at.size
    circular, names = [], []
    parts: dict[str, np.ndarray] = {}
    if options.residual is not None:
        circular.append(options.residual.amplitudes(gp))
        names += ["residual directivity", "residual tracking", "residual source match"]
    if options.interpolation:
        circular.append(interpolation_bound(plane.freq_hz, plane.reflection(port), at)[:, None])
        names.append("interpolation")
    circ = np.concatenate(circular, axis=1) if circular else np.zeros((n, 0))
    if options.calibration is not None:
        if port != 1:
            raise AnalysisError("a calibration's uncertainty applies to port 1 only")
        cu = options.calibration.on(at)
        parts["calibration"] = cu.gamma_cov(gp)
    sigma = _noise_sigma(plane, port, options.noise, at)
    if np.any(sigma > 0):
        parts["trace noise"] = sigma[:, None, None] ** 2 * np.eye(2)

    active = offsets is not None and any(o is not None for o in offsets)
    if not active:
        gamma = gp
        cov = sum(parts.values()) if parts else np.zeros((n, 2, 2))
        return GammaModel(at, gamma, float(plane.z0_ohm[port - 1].real), circ, tuple(names),
                          np.asarray(cov, dtype=float), parts)

    # Carry the plane's model through the offset removal, point by point.
    s_plane = np.atleast_3d(s_at(plane, at)).reshape(n, plane.n_ports, plane.n_ports)
    gamma = np.empty(n, complex)
    k = np.empty(n, complex)
    off_parts = np.zeros((n, 2, 2))
    h = 1e-6
    target = offsets[port - 1]
    ou = options.offset_u or OffsetUncertainty()
    for i in range(n):
        s = s_plane[i]
        gamma[i] = _through_offsets(s, at[i], plane.z0_ohm, port, offsets)
        plus, minus = s.copy(), s.copy()
        plus[port - 1, port - 1] += h
        minus[port - 1, port - 1] -= h
        k[i] = (_through_offsets(plus, at[i], plane.z0_ohm, port, offsets)
                - _through_offsets(minus, at[i], plane.z0_ohm, port, offsets)) / (2 * h)
        if target is None or ou.is_zero:
            continue
        for name, u in (("delay_s", ou.delay_s), ("loss_db", ou.loss_db), ("line_z0_ohm", ou.line_z0_ohm)):
            if u == 0:
                continue
            value = getattr(target, name)
            if name == "line_z0_ohm" and value is None:
                value = float(plane.z0_ohm[port - 1].real)
            moved = []
            for v in (value + u, value - u):
                if v < 0 or (name == "line_z0_ohm" and v <= 0):
                    moved.append(None)
                    continue
                o2 = tuple(dataclasses.replace(o, **{name: v}) if j == port - 1 else o
                           for j, o in enumerate(offsets))
                moved.append(_through_offsets(s, at[i], plane.z0_ohm, port, o2))
            if moved[1] is None:  # one-sided where the parameter cannot go below zero
                d = moved[0] - gamma[i]
            else:
                d = (moved[0] - moved[1]) / 2
            vec = np.array([d.real, d.imag])
            off_parts[i] += np.outer(vec, vec)
    kk = _real2(k)
    parts = {name: kk @ c @ np.swapaxes(kk, -1, -2) for name, c in parts.items()}
    if np.any(off_parts):
        parts["reference-plane offset"] = off_parts
    circ = circ * np.abs(k)[:, None]
    cov = sum(parts.values()) if parts else np.zeros((n, 2, 2))
    return GammaModel(at, gamma, float(plane.z0_ohm[port - 1].real), circ, tuple(names),
                      np.asarray(cov, dtype=float), parts)


def uncertain_points(plane: Sweep, at_hz, *, port: int = 1, offsets: Sequence | None = None,
                     options: UncertaintyOptions = UncertaintyOptions()) -> ReadoutUncertainty:
    """Every readout's expanded uncertainty at ``at_hz`` (see :func:`gamma_model`).

    Examples
    --------
    >>> import numpy as np
    >>> from refplane.analysis.sweep import Sweep
    >>> sw = Sweep(np.linspace(1e8, 1e9, 11), np.full(11, 0.2 + 0.1j), 50.0)
    >>> u = uncertain_points(sw, [5e8], options=UncertaintyOptions(
    ...     residual=ResidualTerms(0.01, 0.0, 0.0), noise="none"))
    >>> round(float(u.gamma_mag[0]), 4)    # a single circular term: its 95 % half-width
    0.01
    """
    model = gamma_model(plane, at_hz, port=port, offsets=offsets, options=options)
    return propagate(model, method=options.method, draws=options.draws, seed=options.seed)
