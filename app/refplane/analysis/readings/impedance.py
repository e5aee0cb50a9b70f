"""Reflection coefficient ⇄ impedance ⇄ admittance, and the readouts a practitioner reads.

The identities are the textbook ones (e.g. Pozar, *Microwave Engineering*, ch. 2):
Γ = (Z − Z0)/(Z + Z0), Z = Z0 (1 + Γ)/(1 − Γ), VSWR = (1 + |Γ|)/(1 − |Γ|),
return loss = −20·log10|Γ| dB, mismatch loss = −10·log10(1 − |Γ|²) dB, Q = |X|/R,
series L = X/(2πf) for X > 0 and series C = −1/(2πf·X) for X < 0.

Every function here is vectorised: scalars in give 0-d results, arrays give arrays.
Limits are kept finite where the physics is: an ideal open (Γ = 1) reads Z = ∞, VSWR = ∞,
return loss 0 dB; an ideal short reads R = 0 and Q = ∞. Undefined values are NaN (shown
as "—" in tables and ``null`` in JSON), never an exception.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from refplane.analysis.errors import AnalysisError

ArrayLike = np.ndarray | complex | float


def _check_z0(z0_ohm) -> np.ndarray:
    z0 = np.asarray(z0_ohm, dtype=np.complex128)
    if not np.all(np.isfinite(z0)) or np.any(z0.real <= 0):
        raise AnalysisError("the reference impedance must be finite with a positive real part")
    return z0


def gamma_to_z(gamma: ArrayLike, z0_ohm: ArrayLike = 50.0) -> np.ndarray:
    """Impedance from reflection coefficient, Z = Z0 (1 + Γ)/(1 − Γ); Γ = 1 gives ∞."""
    g = np.asarray(gamma, dtype=np.complex128)
    z0 = _check_z0(z0_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = z0 * (1 + g) / (1 - g)
    # An exact open: report a real infinity rather than complex NaN.
    return np.where(g == 1, complex(np.inf, 0.0), z)


def z_to_gamma(z_ohm: ArrayLike, z0_ohm: ArrayLike = 50.0) -> np.ndarray:
    """Reflection coefficient from impedance, Γ = (Z − Z0)/(Z + Z0); an infinite Z gives Γ = 1."""
    z = np.asarray(z_ohm, dtype=np.complex128)
    z0 = _check_z0(z0_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        g = (z - z0) / (z + z0)
    return np.where(np.isinf(z), 1.0 + 0j, g)


def gamma_to_y(gamma: ArrayLike, z0_ohm: ArrayLike = 50.0) -> np.ndarray:
    """Admittance from reflection coefficient, Y = (1 − Γ)/(Z0 (1 + Γ)); Γ = −1 gives ∞."""
    g = np.asarray(gamma, dtype=np.complex128)
    z0 = _check_z0(z0_ohm)
    with np.errstate(divide="ignore", invalid="ignore"):
        y = (1 - g) / (z0 * (1 + g))
    return np.where(g == -1, complex(np.inf, 0.0), y)


def vswr(gamma: ArrayLike) -> np.ndarray:
    """Voltage standing-wave ratio (1 + |Γ|)/(1 − |Γ|).

    ∞ for |Γ| = 1 (total reflection). NaN for |Γ| > 1: an active or mis-calibrated load
    has no standing-wave ratio (the formula would give a negative number).
    """
    mag = np.abs(np.asarray(gamma, dtype=np.complex128))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = (1 + mag) / (1 - mag)
    return np.where(mag > 1, np.nan, np.where(mag == 1, np.inf, out))


def return_loss_db(gamma: ArrayLike) -> np.ndarray:
    """Return loss −20·log10|Γ| in dB, positive for a passive load; ∞ for a perfect match."""
    mag = np.abs(np.asarray(gamma, dtype=np.complex128))
    with np.errstate(divide="ignore"):
        # Adding 0.0 turns the −0.0 of a perfect reflection into 0.0.
        return -20.0 * np.log10(mag) + 0.0


def mismatch_loss_db(gamma: ArrayLike) -> np.ndarray:
    """Mismatch loss −10·log10(1 − |Γ|²) in dB; ∞ for |Γ| = 1, NaN (not defined) for |Γ| > 1."""
    mag = np.abs(np.asarray(gamma, dtype=np.complex128))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = -10.0 * np.log10(1 - mag**2)
    return np.where(mag > 1, np.nan, np.where(mag == 1, np.inf, out))


def series_equivalent(z_ohm: ArrayLike, freq_hz: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Series equivalent inductance and capacitance of Z = R + jX at ``freq_hz``.

    Returns
    -------
    l_h, c_f : ndarray
        ``l_h = X/(2πf)`` where X > 0, else NaN; ``c_f = −1/(2πf·X)`` where X < 0, else NaN.
        Exactly one of them is a number unless X = 0 or f = 0.
    """
    x = np.asarray(z_ohm, dtype=np.complex128).imag
    w = 2 * np.pi * np.asarray(freq_hz, dtype=np.float64)
    with np.errstate(divide="ignore", invalid="ignore"):
        l_h = np.where((x > 0) & (w > 0) & np.isfinite(x), x / w, np.nan)
        c_f = np.where((x < 0) & (w > 0) & np.isfinite(x), -1.0 / (w * x), np.nan)
    return l_h, c_f


def parallel_equivalent(z_ohm: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Parallel equivalent of Z: the R_p and X_p that, in parallel, give the same Z.

    With Y = 1/Z = G + jB: R_p = 1/G and X_p = −1/B (∞ where G or B is zero).
    """
    z = np.asarray(z_ohm, dtype=np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        y = np.where(np.isinf(z), 0j, 1.0 / z)
        rp = np.where(y.real == 0, np.inf, 1.0 / y.real)
        xp = np.where(y.imag == 0, np.inf, -1.0 / y.imag)
    return rp, xp


def q_factor(z_ohm: ArrayLike) -> np.ndarray:
    """Quality factor |X|/R; ∞ for R = 0 with X ≠ 0, NaN where R < 0 or Z is infinite."""
    z = np.asarray(z_ohm, dtype=np.complex128)
    r, x = z.real, np.abs(z.imag)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(r > 0, x / r, np.where((r == 0) & (x > 0), np.inf, np.nan))
    return np.where(np.isfinite(r) & np.isfinite(x), q, np.nan)


@dataclass(frozen=True)
class Readout:
    """Everything Refplane reads off one reflection coefficient at one frequency.

    Fields are floats for a single point, or arrays of one shape for many points.
    NaN marks a value that does not apply (series C when X > 0, say).
    """

    freq_hz: float
    z0_ohm: float
    gamma_re: float
    gamma_im: float
    gamma_mag: float
    gamma_deg: float
    r_ohm: float
    x_ohm: float
    z_mag_ohm: float
    series_l_h: float
    series_c_f: float
    parallel_r_ohm: float
    parallel_x_ohm: float
    vswr: float
    return_loss_db: float
    mismatch_loss_db: float
    q: float

    #: Keys of one point in ``refplane read --json``, in the documented order.
    JSON_KEYS = (
        "freq_hz", "gamma_re", "gamma_im", "gamma_mag", "gamma_deg", "r_ohm", "x_ohm",
        "z_mag_ohm", "series_l_h", "series_c_f", "parallel_r_ohm", "parallel_x_ohm",
        "vswr", "return_loss_db", "q",
    )

    def at(self, index: int) -> "Readout":
        """The readout of one point of a many-point readout."""
        return Readout(**{k: float(np.asarray(v).reshape(-1)[index]) if np.ndim(v) else float(v)
                          for k, v in asdict(self).items()})

    def json_point(self) -> dict[str, float | None]:
        """The point as ``refplane read --json`` prints it; NaN and ∞ become ``None``."""
        out: dict[str, float | None] = {}
        for key in self.JSON_KEYS:
            value = float(getattr(self, key))
            out[key] = value if math.isfinite(value) else None
        return out


def readout(freq_hz: ArrayLike, gamma: ArrayLike, z0_ohm: float = 50.0) -> Readout:
    """Compute every readout of reflection coefficient(s) ``gamma`` at reference ``z0_ohm``.

    Parameters
    ----------
    freq_hz : float or ndarray
        Frequency of each value, in hertz (needed for series L and C).
    gamma : complex or ndarray
        Reflection coefficient(s), referred to ``z0_ohm``.
    z0_ohm : float
        Reference impedance (real), ohms.

    Returns
    -------
    Readout
        Floats for scalar input; arrays of the broadcast shape otherwise.

    Examples
    --------
    >>> r = readout(470e6, z_to_gamma(75 + 27j, 50.0), 50.0)
    >>> round(r.r_ohm, 6), round(r.series_l_h * 1e9, 3)
    (75.0, 9.143)
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    g = np.asarray(gamma, dtype=np.complex128)
    z0 = complex(_check_z0(z0_ohm))
    z = gamma_to_z(g, z0)
    l_h, c_f = series_equivalent(z, f)
    rp, xp = parallel_equivalent(z)
    with np.errstate(invalid="ignore"):
        zr = np.where(np.isinf(z), np.inf, z.real)
        zx = np.where(np.isinf(z), np.nan, z.imag)
    fields = dict(
        freq_hz=np.broadcast_to(f, g.shape) if g.ndim else f,
        z0_ohm=np.full(g.shape, z0.real),
        gamma_re=g.real, gamma_im=g.imag, gamma_mag=np.abs(g),
        gamma_deg=np.degrees(np.angle(g)),
        r_ohm=zr, x_ohm=zx, z_mag_ohm=np.abs(z),
        series_l_h=l_h, series_c_f=c_f, parallel_r_ohm=rp, parallel_x_ohm=xp,
        vswr=vswr(g), return_loss_db=return_loss_db(g), mismatch_loss_db=mismatch_loss_db(g),
        q=q_factor(z),
    )
    if g.ndim == 0 and f.ndim == 0:
        return Readout(**{k: float(v) for k, v in fields.items()})
    shape = np.broadcast_shapes(g.shape, f.shape)
    return Readout(**{k: np.broadcast_to(np.asarray(v, dtype=float), shape) for k, v in fields.items()})
