"""Propagating the uncertainty of Γ to every readout: linear by default, Monte Carlo where needed.

The input model (per reading)
-----------------------------
The reading's reflection Γ carries errors of two kinds (:class:`GammaModel`):

* *circular* terms — complex numbers of known magnitude b and unknown, uniformly distributed
  phase (the residual directivity, tracking and source match of EURAMET cg-12, and the
  interpolation bound between swept points). Per axis each has variance b²/2;
* a *Gaussian* part with a full 2 × 2 real covariance of (Re Γ, Im Γ) — trace noise, the
  uncertainty propagated from a calibration's standards, the reference-plane offsets.

Linear (GUM, JCGM 100)
----------------------
Each readout y(Γ) (|Γ|, R, X, series L or C, |Z|, VSWR, return loss, Q, parallel R and X …)
is linearised: J = ∂y/∂(Re Γ, Im Γ) by central differences. Then

    u²(y) = J·C·Jᵀ + Σ b_i²·|J|²/2

and the linearised output is Σ a_i·cos φ_i + N(0, J·C·Jᵀ) with a_i = b_i·|J|: arcsine terms
from the circular inputs and a normal term. The expanded uncertainty U is the half-width of
its symmetric 95 % interval, from the exact distribution of that sum
(:func:`coverage_halfwidth`). For a normal output U = 1.96·u (k = 2 in the usual rounding);
for residual terms alone U never exceeds the sure bound Σ a_i, so the |Γ| uncertainty never
exceeds the worst case D + T|Γ| + M|Γ|² (EURAMET cg-12), which 2·u alone would for a single
dominant term (√2 times the bound).

Monte Carlo (JCGM 101)
----------------------
Draws of Γ from the same model (uniform phases for the circular terms, a normal draw for the
Gaussian part), every readout computed exactly per draw (JCGM 101). The expanded uncertainty
is the half-width of the 95 % interval symmetric about the reading, i.e. the 95th percentile of
|y_draw − y| (for a symmetric output, the probabilistically symmetric interval of JCGM 101,
7.7; for |Γ| of a matched load, whose draws lie on one side, a sensible "≤"); the standard
uncertainty is the draws' standard deviation.

When the linearisation is poor
------------------------------
The readout is evaluated at Γ ± 2σ along both principal axes of Γ's covariance. Where the
curvature term |y(Γ+δ) + y(Γ−δ) − 2·y(Γ)|/2 exceeds a tenth of the linear term
|y(Γ+δ) − y(Γ−δ)|/2 for any readout, or a readout stops being finite inside the region
(near the open and short edges, R near zero, the reactance near zero for Q and series C),
the reading is propagated by Monte Carlo instead (``method="auto"``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import Readout

#: Readout keys that carry an uncertainty: the JSON point's keys less the frequency.
U_KEYS = tuple(k for k in Readout.JSON_KEYS if k != "freq_hz")

#: Coverage factor of the expanded uncertainty (about 95 % for a normal distribution).
COVERAGE_FACTOR = 2.0
#: Coverage probability the Monte Carlo interval is drawn for (JCGM 101).
COVERAGE_PROBABILITY = 0.95
#: Curvature over linear term above which the linearisation counts as poor.
NONLINEARITY_LIMIT = 0.1
#: Monte Carlo draws per reading by default.
DEFAULT_DRAWS = 20_000


@dataclass(frozen=True, eq=False)
class GammaModel:
    """What is known about the error of Γ at each reading point.

    Attributes
    ----------
    freq_hz : ndarray, shape (n,)
    gamma : ndarray of complex, shape (n,)
        The reading's reflection (best estimate).
    z0_ohm : float
        Reference impedance of the readouts.
    circular : ndarray, shape (n, m)
        Magnitudes of m circular (unknown-phase) contributions at each point.
    circular_names : tuple of str
        Their names (m of them).
    cov : ndarray, shape (n, 2, 2)
        Covariance of the Gaussian part of (Re Γ, Im Γ).
    gaussian_parts : dict of str to ndarray (n, 2, 2)
        The Gaussian part by source (they add up to ``cov``), for the budget.
    """

    freq_hz: np.ndarray
    gamma: np.ndarray
    z0_ohm: float
    circular: np.ndarray
    circular_names: tuple[str, ...]
    cov: np.ndarray
    gaussian_parts: dict = field(default_factory=dict)

    @property
    def total_cov(self) -> np.ndarray:
        """Covariance of (Re Γ, Im Γ) with every source, (n, 2, 2)."""
        circ = np.sum(self.circular**2, axis=-1) / 2
        return self.cov + circ[:, None, None] * np.eye(2)

    def budget(self) -> dict[str, np.ndarray]:
        """Standard uncertainty per axis of Γ from each source, √(trace(C)/2), shape (n,) each."""
        out = {name: self.circular[:, i] / np.sqrt(2) for i, name in enumerate(self.circular_names)}
        for name, c in self.gaussian_parts.items():
            out[name] = np.sqrt(np.clip(np.trace(c, axis1=-2, axis2=-1) / 2, 0, None))
        return out


def gaussian_model(freq_hz, gamma, z0_ohm: float, cov=None, circular=None,
                   circular_names: tuple[str, ...] = ()) -> GammaModel:
    """A :class:`GammaModel` from plain arrays (1-D ``gamma``; ``cov`` (n,2,2) or (2,2))."""
    g = np.atleast_1d(np.asarray(gamma, dtype=np.complex128))
    f = np.broadcast_to(np.asarray(freq_hz, dtype=np.float64), g.shape).copy()
    c = np.zeros((g.size, 2, 2)) if cov is None else np.broadcast_to(np.asarray(cov, float), (g.size, 2, 2)).copy()
    circ = np.zeros((g.size, 0)) if circular is None else np.asarray(circular, float).reshape(g.size, -1)
    return GammaModel(f, g, float(z0_ohm), circ, tuple(circular_names), c)


# --------------------------------------------------------------------------- readouts of Γ

def readout_values(freq_hz, gamma, z0_ohm: float, *, reference=None) -> dict[str, np.ndarray]:
    """Every readout of ``gamma`` as unmasked, smooth functions (for derivatives and draws).

    Same formulas as :func:`refplane.analysis.readings.impedance.readout` (Pozar ch. 2), except that
    series L = X/ω and series C = −1/(ωX) are computed whatever the sign of X, and the phase
    is unwrapped about ``reference`` (the central reading) so that draws do not jump by 360°.
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    g = np.asarray(gamma, dtype=np.complex128)
    w = 2 * np.pi * f
    mag = np.abs(g)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        z = z0_ohm * (1 + g) / (1 - g)
        y = 1.0 / z
        phase = np.angle(g) if reference is None else \
            np.angle(np.asarray(reference, complex)) + np.angle(g / np.asarray(reference, complex))
        out = {
            "gamma_re": g.real, "gamma_im": g.imag, "gamma_mag": mag,
            "gamma_deg": np.degrees(phase),
            "r_ohm": z.real, "x_ohm": z.imag, "z_mag_ohm": np.abs(z),
            "series_l_h": z.imag / w, "series_c_f": -1.0 / (w * z.imag),
            "parallel_r_ohm": 1.0 / y.real, "parallel_x_ohm": -1.0 / y.imag,
            "vswr": np.where(mag < 1, (1 + mag) / (1 - mag), np.inf),
            "return_loss_db": -20 * np.log10(mag),
            "q": np.abs(z.imag) / z.real,
        }
    return out


def _applicable(central: dict[str, np.ndarray], freq_hz) -> dict[str, np.ndarray]:
    """Which readouts apply at each point: the ones :func:`impedance.readout` shows a number for."""
    x = central["x_ohm"]
    r = central["r_ohm"]
    f = np.asarray(freq_hz, float)
    ok = {k: np.isfinite(v) for k, v in central.items()}
    ok["series_l_h"] = ok["series_l_h"] & (x > 0) & (f > 0)
    ok["series_c_f"] = ok["series_c_f"] & (x < 0) & (f > 0)
    ok["q"] = ok["q"] & (r > 0)
    ok["vswr"] = ok["vswr"] & (central["gamma_mag"] < 1)
    return ok


# --------------------------------------------------------------------------- the result

@dataclass(frozen=True, eq=False)
class ReadoutUncertainty:
    """Expanded uncertainties (k = 2, about 95 %) of every readout at the reading points.

    One attribute per key of ``refplane read --json``'s point (less ``freq_hz``), each an
    array (n,) in the readout's own unit; NaN where the readout does not apply or has no
    finite bound (an ∞ VSWR, say).

    Attributes
    ----------
    freq_hz : ndarray (n,)
    gamma : ndarray of complex (n,)
    cov_gamma : ndarray (n, 2, 2)
        Covariance of (Re Γ, Im Γ) from every source (the Monte Carlo draws' where used).
    method : tuple of str
        "linear" or "monte-carlo", per point.
    standard : dict of str to ndarray
        Standard uncertainties u of the same keys.
    budget : dict of str to ndarray
        Standard uncertainty per axis of Γ from each source.
    coverage_factor : float
        2.
    """

    freq_hz: np.ndarray
    gamma: np.ndarray
    cov_gamma: np.ndarray
    method: tuple[str, ...]
    gamma_re: np.ndarray
    gamma_im: np.ndarray
    gamma_mag: np.ndarray
    gamma_deg: np.ndarray
    r_ohm: np.ndarray
    x_ohm: np.ndarray
    z_mag_ohm: np.ndarray
    series_l_h: np.ndarray
    series_c_f: np.ndarray
    parallel_r_ohm: np.ndarray
    parallel_x_ohm: np.ndarray
    vswr: np.ndarray
    return_loss_db: np.ndarray
    q: np.ndarray
    standard: dict = field(default_factory=dict)
    budget: dict = field(default_factory=dict)
    coverage_factor: float = COVERAGE_FACTOR
    coverage_probability: float = COVERAGE_PROBABILITY

    def expanded(self) -> dict[str, np.ndarray]:
        """Key → expanded uncertainty array."""
        return {k: getattr(self, k) for k in U_KEYS}

    def at(self, index: int) -> "ReadoutUncertainty":
        """The uncertainty of one point (arrays of length 1)."""
        k = range(self.gamma.size)[index]  # IndexError for a point that does not exist
        i = slice(k, k + 1)
        return ReadoutUncertainty(
            freq_hz=self.freq_hz[i], gamma=self.gamma[i], cov_gamma=self.cov_gamma[i],
            method=self.method[i], **{k: getattr(self, k)[i] for k in U_KEYS},
            standard={k: v[i] for k, v in self.standard.items()},
            budget={k: v[i] for k, v in self.budget.items()},
            coverage_factor=self.coverage_factor, coverage_probability=self.coverage_probability)

    def json_point(self, index: int = 0) -> dict:
        """The "u" dict of one point for ``refplane read --json``: key → U (``None`` if none)."""
        out = {}
        for k in U_KEYS:
            v = float(getattr(self, k)[index])
            out[k] = v if math.isfinite(v) else None
        return out

    def region(self, index: int = 0, *, probability: float = COVERAGE_PROBABILITY, points: int = 72) -> np.ndarray:
        """The ``probability`` region of Γ at one point as a closed polygon, shape (points, 2) (re, im)."""
        return gamma_region(self.gamma[index], self.cov_gamma[index], probability=probability, points=points)


def gamma_region(gamma: complex, cov, *, probability: float = COVERAGE_PROBABILITY, points: int = 72) -> np.ndarray:
    """The ``probability`` region of a bivariate normal Γ as a polygon for drawing.

    The ellipse (x − Γ)ᵀ·C⁻¹·(x − Γ) = χ²₂(p), where the chi-square quantile with two degrees
    of freedom is −2·ln(1 − p) (5.99 for 95 %; GUM-S2, JCGM 102, for a bivariate output).

    Returns
    -------
    ndarray, shape (points, 2)
        Real and imaginary parts of the polygon's corners, first corner not repeated.
    """
    if not 0 < probability < 1:
        raise AnalysisError("the probability of a region must lie between 0 and 1")
    c = np.asarray(cov, dtype=float).reshape(2, 2)
    vals, vecs = np.linalg.eigh((c + c.T) / 2)
    radius = math.sqrt(-2 * math.log(1 - probability))
    t = np.linspace(0, 2 * np.pi, points, endpoint=False)
    circle = np.stack([np.cos(t), np.sin(t)])
    shape = vecs @ (np.sqrt(np.clip(vals, 0, None))[:, None] * circle) * radius
    g = complex(gamma)
    return np.stack([g.real + shape[0], g.imag + shape[1]], axis=1)


# --------------------------------------------------------------------------- linear

def _jacobians(model: GammaModel, central: dict, step: float = 1e-7) -> dict[str, np.ndarray]:
    g = model.gamma
    plus_re = readout_values(model.freq_hz, g + step, model.z0_ohm, reference=g)
    minus_re = readout_values(model.freq_hz, g - step, model.z0_ohm, reference=g)
    plus_im = readout_values(model.freq_hz, g + 1j * step, model.z0_ohm, reference=g)
    minus_im = readout_values(model.freq_hz, g - 1j * step, model.z0_ohm, reference=g)
    with np.errstate(invalid="ignore"):
        return {k: np.stack([(plus_re[k] - minus_re[k]) / (2 * step),
                             (plus_im[k] - minus_im[k]) / (2 * step)], axis=-1) for k in U_KEYS}


def coverage_halfwidth(amplitudes, sigma, *, probability: float = COVERAGE_PROBABILITY,
                       bins: int = 2048) -> np.ndarray:
    """Half-width of the symmetric ``probability`` interval of Σ a_i·cos φ_i + N(0, σ²).

    The linearised output of a reading is such a sum: each circular input contributes an
    arcsine-distributed term of amplitude a_i (its magnitude times |∂y/∂Γ|), the Gaussian
    inputs a normal term. Its distribution is the convolution of theirs, computed here on a
    grid (``bins`` cells over ±(Σ a_i + 6σ); the arcsine's cell masses from its distribution
    function F(x) = 1/2 + arcsin(x/a)/π, the normal's from Φ) by FFT. This is linear
    propagation of the distributions rather than of the variances only; for a normal output
    it gives 1.96·u, for a single arcsine term a·sin(π·p/2) ≤ a: never more than the sure bound.

    Parameters
    ----------
    amplitudes : ndarray, shape (N, m)
    sigma : ndarray, shape (N,)

    Returns
    -------
    ndarray, shape (N,)
    """
    a = np.atleast_2d(np.asarray(amplitudes, dtype=float))
    s = np.asarray(sigma, dtype=float).reshape(-1)
    # The half-width scales with the inputs, so only the shape matters: rows are scaled to unit
    # standard uncertainty, their amplitudes sorted (the sum does not care about order) and
    # rounded to a part in 2000 (a change of U far below its own uncertainty), and each distinct
    # shape is convolved once — a smooth sweep has few distinct shapes.
    scale = np.sqrt(np.sum(a**2, axis=1) / 2 + s**2)
    good = np.isfinite(scale) & (scale > 0)
    out = np.where(np.isfinite(scale) & (scale == 0), 0.0, np.nan)
    if not good.any():
        return out
    shapes = np.concatenate([-np.sort(-a[good] / scale[good, None], axis=1), (s[good] / scale[good])[:, None]],
                            axis=1)
    shapes = np.round(shapes * 2000) / 2000
    unique, inverse = np.unique(shapes, axis=0, return_inverse=True)
    unit = _halfwidth_exact(unique[:, :-1], unique[:, -1], probability=probability, bins=bins)
    out[good] = unit[inverse.reshape(-1)] * scale[good]
    return out


def _halfwidth_exact(a: np.ndarray, s: np.ndarray, *, probability: float, bins: int) -> np.ndarray:
    from scipy.special import ndtr

    out = np.full(s.size, np.nan)
    half = np.sum(a, axis=1) + 6 * s
    ok = np.isfinite(half) & (half > 0)
    out[np.isfinite(half) & (half == 0)] = 0.0
    rows = np.flatnonzero(ok)
    j = np.arange(bins) - bins // 2
    for start in range(0, rows.size, 256):
        r = rows[start:start + 256]
        step = (2 * half[r] / bins)[:, None]
        lo_edge, hi_edge = (j - 0.5) * step, (j + 0.5) * step
        spectrum = np.ones((r.size, bins), dtype=np.complex128)
        for col in range(a.shape[1]):
            amp = a[r, col][:, None]
            with np.errstate(divide="ignore", invalid="ignore"):
                cdf = lambda x: np.where(amp > 0, 0.5 + np.arcsin(np.clip(x / amp, -1, 1)) / np.pi,  # noqa: E731
                                         (x >= 0).astype(float))
                pmf = cdf(hi_edge) - cdf(lo_edge)
            spectrum *= np.fft.fft(np.fft.ifftshift(pmf, axes=1), axis=1)
        sg = s[r][:, None]
        with np.errstate(divide="ignore", invalid="ignore"):
            pmf = np.where(sg > 0, ndtr(hi_edge / sg) - ndtr(lo_edge / sg), (np.abs(j) == 0).astype(float)[None, :])
        spectrum *= np.fft.fft(np.fft.ifftshift(pmf, axes=1), axis=1)
        dist = np.clip(np.fft.fftshift(np.fft.ifft(spectrum, axis=1).real, axes=1), 0, None)
        dist /= dist.sum(axis=1, keepdims=True)
        # Mass inside ±x_k: fold the symmetric distribution about zero.
        centre = bins // 2
        folded = dist[:, centre:].copy()
        folded[:, 1:] += dist[:, centre - 1::-1][:, :folded.shape[1] - 1]
        inside = np.cumsum(folded, axis=1)
        k = np.argmax(inside >= probability, axis=1)
        prev = np.maximum(k - 1, 0)
        p0, p1 = inside[np.arange(r.size), prev], inside[np.arange(r.size), k]
        frac = np.where(p1 > p0, (probability - p0) / np.where(p1 > p0, p1 - p0, 1), 0.0)
        out[r] = (prev + np.clip(frac, 0, 1) * (k - prev) + 0.5) * step[:, 0]
    return out


def linear(model: GammaModel) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
    """Linear propagation: (expanded U, standard u) per readout key, arrays (n,).

    U is the half-width of the symmetric 95 % interval of the linearised output
    (:func:`coverage_halfwidth`); for a normal output that is about 2·u.
    """
    central = readout_values(model.freq_hz, model.gamma, model.z0_ohm)
    jac = _jacobians(model, central)
    ok = _applicable(central, model.freq_hz)
    circ = model.circular
    expanded, standard = {}, {}
    n = model.gamma.size
    amps, sigmas = [], []
    with np.errstate(invalid="ignore", over="ignore"):
        for k in U_KEYS:
            j = jac[k]
            var_g = np.clip(np.einsum("ni,nij,nj->n", j, model.cov, j), 0, None)
            jn = np.linalg.norm(j, axis=-1)
            standard[k] = np.sqrt(var_g + np.sum(circ**2, axis=-1) * jn**2 / 2)
            amps.append(circ * jn[:, None])
            sigmas.append(np.sqrt(var_g))
    half = coverage_halfwidth(np.concatenate(amps).reshape(len(U_KEYS) * n, -1) if circ.shape[1] else
                              np.zeros((len(U_KEYS) * n, 0)), np.concatenate(sigmas))
    for i, k in enumerate(U_KEYS):
        big_u = half[i * n:(i + 1) * n]
        good = ok[k] & np.isfinite(big_u) & np.isfinite(standard[k])
        expanded[k] = np.where(good, big_u, np.nan)
        standard[k] = np.where(good, standard[k], np.nan)
    return expanded, standard


def linearity_poor(model: GammaModel) -> np.ndarray:
    """True at points where the linearisation is poor (see the module notes), shape (n,)."""
    cov = model.total_cov
    vals, vecs = np.linalg.eigh(cov)
    central = readout_values(model.freq_hz, model.gamma, model.z0_ohm)
    ok = _applicable(central, model.freq_hz)
    n = model.gamma.size
    poor = np.zeros(n, dtype=bool)
    lin2 = {k: np.zeros(n) for k in U_KEYS}
    curv = {k: np.zeros(n) for k in U_KEYS}
    for axis in range(2):
        d = COVERAGE_FACTOR * np.sqrt(np.clip(vals[:, axis], 0, None))
        delta = (vecs[:, 0, axis] + 1j * vecs[:, 1, axis]) * d
        plus = readout_values(model.freq_hz, model.gamma + delta, model.z0_ohm, reference=model.gamma)
        minus = readout_values(model.freq_hz, model.gamma - delta, model.z0_ohm, reference=model.gamma)
        with np.errstate(invalid="ignore", over="ignore"):
            for k in U_KEYS:
                y0, yp, ym = central[k], plus[k], minus[k]
                # A readout that stops being finite inside the region (VSWR past |Γ| = 1).
                poor |= ok[k] & ~(np.isfinite(yp) & np.isfinite(ym)) & (d > 0)
                lin2[k] += np.nan_to_num((yp - ym) / 2) ** 2
                curv[k] = np.maximum(curv[k], np.nan_to_num(np.abs(yp + ym - 2 * y0) / 2))
                # Sign changes of X inside the region: Q and series C have a kink or a pole there.
                if k in ("q", "series_c_f"):
                    poor |= ok[k] & (np.sign(plus["x_ohm"]) != np.sign(minus["x_ohm"])) & (d > 0)
        poor |= (np.abs(model.gamma) + d >= 1) & (d > 0)
    for k in U_KEYS:
        # The curvature measured against the readout's whole linear spread (both axes).
        poor |= ok[k] & (curv[k] > NONLINEARITY_LIMIT * np.sqrt(lin2[k]))
    return poor


# --------------------------------------------------------------------------- Monte Carlo

def draw_gamma(model: GammaModel, index, draws: int, rng: np.random.Generator) -> np.ndarray:
    """``draws`` values of Γ at point(s) ``index`` from the model (JCGM 101 sampling).

    ``index`` an int gives shape (draws,); an array of k indices gives (k, draws).
    """
    idx = np.atleast_1d(np.asarray(index))
    g = np.repeat(model.gamma[idx][:, None], draws, axis=1)
    circ = model.circular[idx]
    for col in range(circ.shape[1]):
        b = circ[:, col][:, None]
        if np.any(b > 0):
            g = g + b * np.exp(2j * np.pi * rng.random((idx.size, draws)))
    c = model.cov[idx]
    if np.any(c != 0):
        vals, vecs = np.linalg.eigh((c + np.swapaxes(c, -1, -2)) / 2)
        z = rng.standard_normal((idx.size, 2, draws)) * np.sqrt(np.clip(vals, 0, None))[:, :, None]
        xy = vecs @ z
        g = g + xy[:, 0] + 1j * xy[:, 1]
    return g[0] if np.ndim(index) == 0 else g


def monte_carlo(model: GammaModel, *, draws: int = DEFAULT_DRAWS, seed: int | None = 0, points=None):
    """Monte Carlo propagation (JCGM 101) at the chosen points (default all).

    Returns
    -------
    expanded, standard : dict of str to ndarray (n,)
        NaN at points not chosen.
    cov : ndarray (n, 2, 2)
        Sample covariance of Γ at the chosen points (the model's elsewhere).
    """
    if draws < 100:
        raise AnalysisError("a Monte Carlo run needs at least 100 draws")
    rng = np.random.default_rng(seed)
    n = model.gamma.size
    chosen = np.arange(n) if points is None else np.flatnonzero(points)
    central = readout_values(model.freq_hz, model.gamma, model.z0_ohm)
    ok = _applicable(central, model.freq_hz)
    expanded = {k: np.full(n, np.nan) for k in U_KEYS}
    standard = {k: np.full(n, np.nan) for k in U_KEYS}
    cov = model.total_cov.copy()
    # Points in blocks, so that a block's draws stay a few megabytes.
    block = max(1, 200_000 // draws)
    for start in range(0, chosen.size, block):
        idx = chosen[start:start + block]
        g = draw_gamma(model, idx, draws, rng)
        dre, dim = g.real - g.real.mean(axis=1, keepdims=True), g.imag - g.imag.mean(axis=1, keepdims=True)
        cov[idx] = np.stack([np.stack([(dre * dre).sum(1), (dre * dim).sum(1)], -1),
                             np.stack([(dre * dim).sum(1), (dim * dim).sum(1)], -1)], -2) / (draws - 1)
        values = readout_values(model.freq_hz[idx][:, None], g, model.z0_ohm, reference=model.gamma[idx][:, None])
        with np.errstate(divide="ignore", invalid="ignore"):
            susceptance = np.imag(1.0 / (model.z0_ohm * (1 + g) / (1 - g)))
        # Readouts with a pole inside the region: no bound (Q and parallel R where R changes
        # sign — the region crosses the edge of the chart —, series C where X does, parallel X
        # where the susceptance does).
        crosses = {"q": values["r_ohm"], "parallel_r_ohm": values["r_ohm"], "series_c_f": values["x_ohm"],
                   "parallel_x_ohm": susceptance}
        for k in U_KEYS:
            v = values[k]
            finite = np.all(np.isfinite(v), axis=1)
            if k in crosses:
                sign = np.sign(crosses[k])
                finite &= np.all(sign == sign[:, :1], axis=1)
            with np.errstate(invalid="ignore"):
                u95 = np.quantile(np.abs(v - central[k][idx][:, None]), COVERAGE_PROBABILITY, axis=1)
                sd = np.std(v, axis=1, ddof=1)
            # Part of the region without a finite value (|Γ| ≥ 1 for VSWR): no bound, NaN.
            use = ok[k][idx] & finite
            expanded[k][idx] = np.where(use, u95, np.nan)
            standard[k][idx] = np.where(use, sd, np.nan)
    return expanded, standard, cov


def propagate(model: GammaModel, *, method: str = "auto", draws: int = DEFAULT_DRAWS,
              seed: int | None = 0) -> ReadoutUncertainty:
    """Uncertainty of every readout from the model of Γ's error.

    Parameters
    ----------
    model : GammaModel
    method : {"auto", "linear", "monte-carlo"}
        "auto" is linear except where the linearisation is poor (see the module notes).
    draws : int
        Monte Carlo draws per point.
    seed : int or None
        Seed of the Monte Carlo draws (fixed by default, so a reading repeats exactly).
    """
    if method not in ("auto", "linear", "monte-carlo"):
        raise AnalysisError(f"unknown propagation method {method!r} (auto, linear or monte-carlo)")
    expanded, standard = linear(model)
    cov = model.total_cov
    n = model.gamma.size
    use_mc = np.zeros(n, bool) if method == "linear" else \
        np.ones(n, bool) if method == "monte-carlo" else linearity_poor(model)
    if np.any(use_mc):
        mc_u, mc_s, mc_cov = monte_carlo(model, draws=draws, seed=seed, points=use_mc)
        for k in U_KEYS:
            expanded[k] = np.where(use_mc, mc_u[k], expanded[k])
            standard[k] = np.where(use_mc, mc_s[k], standard[k])
        cov = np.where(use_mc[:, None, None], mc_cov, cov)
    methods = tuple("monte-carlo" if m else "linear" for m in use_mc)
    return ReadoutUncertainty(freq_hz=model.freq_hz, gamma=model.gamma, cov_gamma=cov, method=methods,
                              **expanded, standard=standard, budget=model.budget())
