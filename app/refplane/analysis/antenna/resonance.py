"""Resonances, the best match and the usable bands of a reflection sweep.

Every search here reads *between* swept points with the same model the markers use
(:mod:`refplane.analysis.readings.markers`): Γ runs in a straight chord from one swept point to the
next. A marker placed at a frequency found here therefore reads exactly the value the search
found (X = 0 at a resonance, VSWR = s at a band edge), and no search snaps to the nearest point.

Resonance
    With a real reference Z0, Z = Z0 (1 + Γ)/(1 − Γ) gives Im Z = 2·Z0·Im Γ / |1 − Γ|², so the
    reactance changes sign exactly where Im Γ does; along a chord Im Γ is linear in frequency,
    and the crossing is found in closed form. A resonance where X rises through zero
    (dX/df > 0, |Z| small nearby) is called *series*; where X falls through zero (an
    anti-resonance, |Z| large nearby) it is called *parallel* (common practice; Foster's
    reactance theorem makes dX/df > 0 for any lossless one-port, so a falling X only happens
    through the peak of a lossy parallel resonance).
Q at a resonance
    Q = ω·|dZ/dω| / (2R) at the zero of X (Yaghjian and Best, IEEE Trans. Antennas Propag.,
    2005, eq. for Q_Z). It is the Q of the impedance as measured, every loss included
    (radiation, conductors, ground): for a series R-L-C it is ωL/R, for a parallel one ωCR.
    Fed from a matched generator, the circuit's Q is half of it.
Bands
    Each stretch where VSWR ≤ s, with its edges solved on the chords (|Γ| = (s − 1)/(s + 1)
    is a circle; a chord meets it where a quadratic in frequency vanishes). A band that runs
    past the end of the sweep is cut at the sweep's edge and flagged.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import gamma_to_z, return_loss_db, vswr
from refplane.analysis.sweep import Sweep
from refplane.analysis.units import format_frequency


def _finite_or_none(value: float) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None


@dataclass(frozen=True)
class Resonance:
    """One zero of the reactance.

    Attributes
    ----------
    freq_hz : float
        Where X crosses zero, between swept points.
    r_ohm : float
        The resistance there (Z is real there: R = |Z|).
    kind : str
        ``"series"`` (X rising through zero) or ``"parallel"`` (X falling through zero).
    q : float
        ω·|dZ/dω|/(2R) there (Yaghjian and Best 2005); NaN when R ≤ 0.
    """

    freq_hz: float
    r_ohm: float
    kind: str
    q: float

    def json(self) -> dict:
        """The resonance as ``refplane resonance --json`` prints it."""
        return {"freq_hz": self.freq_hz, "r_ohm": _finite_or_none(self.r_ohm), "kind": self.kind,
                "q": _finite_or_none(self.q)}


@dataclass(frozen=True)
class BestMatch:
    """The frequency of lowest VSWR, between swept points."""

    freq_hz: float
    vswr: float
    return_loss_db: float
    gamma: complex

    def json(self) -> dict:
        return {"freq_hz": self.freq_hz, "vswr": _finite_or_none(self.vswr),
                "return_loss_db": _finite_or_none(self.return_loss_db)}


@dataclass(frozen=True)
class VswrBand:
    """One stretch of frequency where VSWR ≤ ``vswr_limit``.

    ``clipped_low``/``clipped_high`` say that the band reaches the first/last swept point, so
    it may well continue beyond the sweep.
    """

    vswr_limit: float
    start_hz: float
    stop_hz: float
    clipped_low: bool = False
    clipped_high: bool = False

    @property
    def centre_hz(self) -> float:
        """Arithmetic centre (start + stop)/2."""
        return 0.5 * (self.start_hz + self.stop_hz)

    @property
    def width_hz(self) -> float:
        return self.stop_hz - self.start_hz

    def json(self) -> dict:
        return {"vswr_limit": self.vswr_limit, "start_hz": self.start_hz, "stop_hz": self.stop_hz,
                "centre_hz": self.centre_hz, "width_hz": self.width_hz,
                "clipped_low": self.clipped_low, "clipped_high": self.clipped_high}


@dataclass(frozen=True)
class PeakImpedance:
    """Where |Z| is largest, between swept points."""

    freq_hz: float
    z_mag_ohm: float
    z_ohm: complex

    def json(self) -> dict:
        return {"freq_hz": self.freq_hz, "z_mag_ohm": _finite_or_none(self.z_mag_ohm)}


@dataclass(frozen=True)
class ResonanceReport:
    """Everything :func:`analyse` finds in one reflection trace."""

    port: int
    z0_ohm: float
    band_hz: tuple[float, float]
    resonances: tuple[Resonance, ...]
    best: BestMatch
    bands: tuple[VswrBand, ...]
    max_z: PeakImpedance

    def json(self) -> dict:
        """The keys of ``refplane resonance --json`` (without the file name)."""
        return {"port": self.port, "z0_ohm": self.z0_ohm,
                "resonances": [r.json() for r in self.resonances],
                "best": self.best.json(),
                "bands": [b.json() for b in self.bands],
                "max_z": self.max_z.json()}


def _trace(sweep: Sweep, port: int, band_hz: tuple[float, float] | None):
    """Frequencies, Γ and the (real) reference of one port, inside ``band_hz``."""
    sweep.check_port(port)
    f = sweep.freq_hz
    g = sweep.reflection(port)
    z0 = complex(sweep.z0_ohm[port - 1])
    if z0.imag != 0.0:
        # The closed forms below need a real reference; re-refer Γ to |Z0|.
        z = gamma_to_z(g, z0)
        z0 = complex(abs(z0))
        with np.errstate(divide="ignore", invalid="ignore"):
            g = np.where(np.isinf(z), 1.0 + 0j, (z - z0) / (z + z0))
    if band_hz is not None:
        low, high = sorted(float(v) for v in band_hz)
        mask = (f >= low) & (f <= high)
        if not mask.any():
            raise AnalysisError(f"no swept point lies in {format_frequency(low)} to {format_frequency(high)}")
        f, g = f[mask], g[mask]
    return np.asarray(f, dtype=float), np.asarray(g, dtype=complex), z0.real


def _q_at(freq_hz: float, gamma: complex, dgamma_dw: complex, z0: float) -> tuple[float, float]:
    """(R, Q) at a point of the chord where X = 0, from dΓ/dω along the chord."""
    one_minus = 1.0 - gamma
    if abs(one_minus) < 1e-12:
        return math.inf, math.nan
    z = z0 * (1.0 + gamma) / one_minus
    dz_dw = 2.0 * z0 / one_minus**2 * dgamma_dw
    r = z.real
    if not r > 0:
        return r, math.nan
    return r, 2.0 * math.pi * freq_hz * abs(dz_dw) / (2.0 * r)


def find_resonances(sweep: Sweep, port: int = 1, *,
                    band_hz: tuple[float, float] | None = None) -> tuple[Resonance, ...]:
    """Every zero of the reactance of ``port``'s reflection, in increasing frequency.

    Parameters
    ----------
    sweep : Sweep
    port : int
        1-based port whose S_NN is read.
    band_hz : (float, float), optional
        Search only between these frequencies (swept points inside them).

    Returns
    -------
    tuple of Resonance
        Empty when X keeps one sign.

    Examples
    --------
    A series R-L-C (R 30 Ω, L 1 µH, C 10 pF resonates at 50.33 MHz):

    >>> import numpy as np
    >>> f = np.linspace(40e6, 60e6, 201); w = 2 * np.pi * f
    >>> z = 30 + 1j * w * 1e-6 + 1 / (1j * w * 10e-12)
    >>> res = find_resonances(Sweep(f, (z - 50) / (z + 50), 50.0))
    >>> round(res[0].freq_hz / 1e6, 2), res[0].kind, round(res[0].r_ohm, 1)
    (50.33, 'series', 30.0)
    """
    f, g, z0 = _trace(sweep, port, band_hz)
    w = 2.0 * math.pi * f
    im = g.imag
    # An open (Γ = 1) has no defined reactance; treat its sign as zero but never report it.
    usable = np.abs(1.0 - g) >= 1e-12
    sign = np.where(usable, np.sign(im), 0.0)
    found: list[tuple[float, Resonance]] = []
    # Only the few intervals where the sign changes are worked in Python.
    for k in np.flatnonzero(sign[:-1] * sign[1:] < 0):
        a, b = g[k], g[k + 1]
        t = im[k] / (im[k] - im[k + 1])
        freq = f[k] + t * (f[k + 1] - f[k])
        gam = complex((a + t * (b - a)).real, 0.0)
        slope = (b - a) / (w[k + 1] - w[k])
        r, q = _q_at(freq, gam, slope, z0)
        kind = "series" if im[k + 1] > im[k] else "parallel"
        found.append((float(freq), Resonance(float(freq), float(r), kind, float(q))))
    zero = np.flatnonzero((sign[1:-1] == 0) & usable[1:-1] & (sign[:-2] * sign[2:] < 0)) + 1
    for k in zero:
        slope = 0.5 * ((g[k + 1] - g[k]) / (w[k + 1] - w[k]) + (g[k] - g[k - 1]) / (w[k] - w[k - 1]))
        r, q = _q_at(f[k], complex(g[k]), slope, z0)
        kind = "series" if im[k + 1] > im[k - 1] else "parallel"
        found.append((float(f[k]), Resonance(float(f[k]), float(r), kind, float(q))))
    found = [res for _, res in sorted(found, key=lambda item: item[0])]
    return tuple(found)


def _chord_minimum(a: complex, b: complex) -> float:
    """The t in [0, 1] where |a + t(b − a)| is least."""
    d = b - a
    dd = (d * d.conjugate()).real
    if dd == 0.0:
        return 0.0
    return min(1.0, max(0.0, -(a.conjugate() * d).real / dd))


def best_match(sweep: Sweep, port: int = 1, *, band_hz: tuple[float, float] | None = None) -> BestMatch:
    """The frequency of lowest VSWR (|Γ| least), on the chords next to the best swept point.

    Returns
    -------
    BestMatch
        ``freq_hz``, ``vswr``, ``return_loss_db`` and Γ there.
    """
    f, g, _ = _trace(sweep, port, band_hz)
    k = int(np.argmin(np.abs(g)))
    best_f, best_g = float(f[k]), complex(g[k])
    for i in (k - 1, k):
        if 0 <= i < f.size - 1:
            t = _chord_minimum(complex(g[i]), complex(g[i + 1]))
            cand = complex(g[i] + t * (g[i + 1] - g[i]))
            if abs(cand) < abs(best_g):
                best_f, best_g = float(f[i] + t * (f[i + 1] - f[i])), cand
    return BestMatch(best_f, float(vswr(best_g)), float(return_loss_db(best_g)), best_g)


def _circle_roots(a: complex, b: complex, rho: float) -> list[float]:
    """The t in (0, 1) where the chord a → b meets the circle |Γ| = rho, sorted."""
    d = b - a
    qa = (d * d.conjugate()).real
    if qa == 0.0:
        return []
    qb = 2.0 * (a.conjugate() * d).real
    qc = (a * a.conjugate()).real - rho * rho
    disc = qb * qb - 4.0 * qa * qc
    if disc <= 0:
        return []  # misses the circle, or only touches it (a graze is no crossing)
    root = math.sqrt(disc)
    # The numerically stable pair of roots.
    q = -0.5 * (qb + math.copysign(root, qb))
    roots = [q / qa, qc / q] if q != 0.0 else [-qb / (2.0 * qa)]
    return sorted(t for t in roots if 0.0 < t < 1.0)


def vswr_bands(sweep: Sweep, port: int = 1, *, vswr_limit: float = 2.0,
               band_hz: tuple[float, float] | None = None) -> tuple[VswrBand, ...]:
    """Each stretch where VSWR ≤ ``vswr_limit``, edges solved between swept points.

    Parameters
    ----------
    vswr_limit : float
        Above 1, e.g. 2.0 for the usual 2:1 band.

    Returns
    -------
    tuple of VswrBand
        In increasing frequency; empty when the trace never gets that good.
    """
    s = float(vswr_limit)
    if not (math.isfinite(s) and s > 1.0):
        raise AnalysisError(f"a VSWR limit must be a number above 1, not {vswr_limit!r}")
    rho = (s - 1.0) / (s + 1.0)
    f, g, _ = _trace(sweep, port, band_hz)
    inside = np.abs(g) <= rho
    bands: list[VswrBand] = []
    start = float(f[0]) if inside[0] else None
    clipped_low = bool(inside[0])
    # Candidate intervals: an end inside and the other outside, or both outside with the chord
    # dipping inside between them. Everything else cannot meet the circle.
    d = g[1:] - g[:-1]
    dd = np.abs(d) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        t_min = np.clip(np.where(dd > 0, -np.real(np.conj(g[:-1]) * d) / dd, 0.0), 0.0, 1.0)
    dips = ~inside[:-1] & ~inside[1:] & (np.abs(g[:-1] + t_min * d) < rho)
    for k in np.flatnonzero((inside[:-1] != inside[1:]) | dips):
        a, b = complex(g[k]), complex(g[k + 1])
        roots = _circle_roots(a, b, rho)
        state = bool(inside[k])
        for t in roots:
            freq = float(f[k] + t * (f[k + 1] - f[k]))
            if state:
                bands.append(VswrBand(s, start, freq, clipped_low, False))
                clipped_low = False
            else:
                start = freq
            state = not state
        if state != bool(inside[k + 1]):
            # Rounding put the end point on the other side of the circle from the chord's end.
            freq = float(f[k + 1])
            if state:
                bands.append(VswrBand(s, start, freq, clipped_low, False))
                clipped_low = False
            else:
                start = freq
    if inside[-1]:
        bands.append(VswrBand(s, start, float(f[-1]), clipped_low, True))
    return tuple(bands)


def max_impedance(sweep: Sweep, port: int = 1, *,
                  band_hz: tuple[float, float] | None = None) -> PeakImpedance:
    """Where |Z| is largest, refined on the chords next to the largest swept point."""
    f, g, z0 = _trace(sweep, port, band_hz)
    z = gamma_to_z(g, z0)
    k = int(np.argmax(np.abs(z)))
    best = (float(f[k]), complex(z[k]))
    if not np.isfinite(abs(best[1])):
        return PeakImpedance(best[0], math.inf, best[1])
    t = np.linspace(0.0, 1.0, 257)
    for i in (k - 1, k):
        if 0 <= i < f.size - 1:
            chord = g[i] + t * (g[i + 1] - g[i])
            with np.errstate(divide="ignore", invalid="ignore"):
                zz = z0 * (1 + chord) / (1 - chord)
            j = int(np.nanargmax(np.abs(zz)))
            if abs(zz[j]) > abs(best[1]):
                best = (float(f[i] + t[j] * (f[i + 1] - f[i])), complex(zz[j]))
    return PeakImpedance(best[0], abs(best[1]), best[1])


def analyse(sweep: Sweep, port: int = 1, *, vswr_limits=(2.0,),
            band_hz: tuple[float, float] | None = None) -> ResonanceReport:
    """Resonances, best match, VSWR bands (one set per limit) and the |Z| peak of one port.

    Parameters
    ----------
    sweep : Sweep
    port : int
        1-based port.
    vswr_limits : sequence of float
        One or more VSWR limits above 1.
    band_hz : (float, float), optional
        Look only inside this band.

    Returns
    -------
    ResonanceReport
    """
    f, _, z0 = _trace(sweep, port, band_hz)
    bands: list[VswrBand] = []
    for s in vswr_limits:
        bands.extend(vswr_bands(sweep, port, vswr_limit=s, band_hz=band_hz))
    return ResonanceReport(
        port=port, z0_ohm=z0, band_hz=(float(f[0]), float(f[-1])),
        resonances=find_resonances(sweep, port, band_hz=band_hz),
        best=best_match(sweep, port, band_hz=band_hz),
        bands=tuple(bands),
        max_z=max_impedance(sweep, port, band_hz=band_hz))
