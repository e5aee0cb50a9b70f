"""Finding the reference plane: the line that turns a measured open or short into the ideal one.

A bare cable or fixture ended in an open (Γ = +1) or a short (Γ = −1) and measured through a
matched line reads Γ_m = Γ_ideal · e^(−2γl): the round trip turns the phase by −4π·f·τ and
attenuates by twice the one-way loss. :func:`estimate_plane` finds the one-way delay τ and
the one-way conductor (√f) and dielectric (f) losses that bring the reading back to the ideal
standard.

How
---
1. Delay, coarse: the ratio r = Γ_m / Γ_ideal, reduced to unit phasors (so a few wild
   points cannot dominate), is searched for the delay that maximises |Σ r_k·e^(+j4π f_k τ)|,
   on a fine grid by a zero-padded FFT. This needs no phase unwrapping, so coarse
   sampling and long cables (phase wrapping many times) are no trouble as long as the round
   trip turns less than half a turn between neighbouring points. The searched window is
   −5 % … 95 % of the unambiguous span 1/(2·Δf).
2. Delay, fine: a robust (soft-L1) least-squares fit of the remaining, now small, phase
   error against −4π·f·Δτ through the origin.
3. Loss: −20·log10|r| = 2·(loss_db·√(f/f_ref) + dielectric_loss_db·f/f_ref), fitted by
   least squares with a Huber loss (scale from the median absolute deviation), not below
   zero; the dielectric term is kept only when it lowers the sum of squares by a tenth.
4. Model: the line model of :mod:`refplane.analysis.lines.deembed` is tried three ways — causal
   (the √f loss with its equal phase; the delay is fitted to the phase left after removing
   it), loss only (the √f loss without phase, as synthetic data and older files may have),
   and the full R, L, G, C line whose impedance follows the skin-effect law at low frequency
   (delay refined by a bounded 1-D search). Each later one must lower the median error by 5 %
   to be chosen; the estimate reports which model won.
5. Residual: the RMS of |Γ_corrected − Γ_ideal| over the band, with every point counted.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.lines.deembed import DB_PER_NEPER, SPEED_OF_LIGHT_M_S, LineOffset
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

_IDEAL = {"open": 1.0, "short": -1.0}


def _article(standard: str) -> str:
    return f"an {standard}" if standard == "open" else f"a {standard}"

#: Below this RMS error the standard and line model explain the reading well.
GOOD_RESIDUAL = 0.05
#: Above this RMS error the reading is not a plain line ended in the stated standard.
POOR_RESIDUAL = 0.2


@dataclass(frozen=True)
class PlaneEstimate:
    """The line found in front of an open or short, one-way.

    Attributes
    ----------
    delay_s : float
        One-way electrical delay in seconds.
    loss_db : float
        One-way conductor loss in dB at ``loss_ref_hz`` (scales as √f).
    loss_ref_hz : float
        Reference frequency of ``loss_db`` and ``dielectric_loss_db``.
    length_m : float or None
        Physical length for the given velocity factor; ``None`` when none was given.
    residual : float
        RMS of |Γ_corrected − Γ_ideal| over the band (0 is a perfect fit; 2 is as far off
        as a reflection can be).
    n_points : int
        Number of swept points used.
    standard : str
        "open" or "short", as assumed.
    other_residual : float
        The same residual when the other standard is assumed instead; much smaller than
        ``residual`` means the end is probably the other standard.
    band_hz : tuple of float
        The lowest and highest frequency used.
    typical_error : float
        The median of |Γ_corrected − Γ_ideal|: unlike ``residual``, a few wild points
        hardly move it.
    dielectric_loss_db : float
        One-way dielectric loss in dB at ``loss_ref_hz`` (scales as f).
    skin_phase : bool
        True when the conductor loss carries its equal phase (the causal skin-effect model,
        see :mod:`refplane.analysis.lines.deembed`).
    z0_follows_skin : bool
        True when the line's impedance follows the skin-effect law at low frequency (the
        full R, L, G, C line, high-frequency impedance = the port's reference).
    """

    delay_s: float
    loss_db: float
    loss_ref_hz: float
    length_m: float | None
    residual: float
    n_points: int
    standard: str = "open"
    other_residual: float = math.nan
    band_hz: tuple[float, float] = (math.nan, math.nan)
    typical_error: float = math.nan
    dielectric_loss_db: float = 0.0
    skin_phase: bool = False
    z0_follows_skin: bool = False

    @property
    def model(self) -> str:
        """Which line model explained the reading best: "causal", "loss only" or "full line"."""
        return "full line" if self.z0_follows_skin else ("causal" if self.skin_phase else "loss only")

    def offset(self) -> LineOffset:
        """The estimate as a :class:`LineOffset` (impedance: the port's reference)."""
        return LineOffset(delay_s=self.delay_s, loss_db=self.loss_db, loss_ref_hz=self.loss_ref_hz,
                          dielectric_loss_db=self.dielectric_loss_db, skin_phase=self.skin_phase,
                          z0_follows_skin=self.z0_follows_skin)

    def verdict(self) -> str:
        """A plain sentence on how well the stated standard and a uniform line explain the data."""
        other = "short" if self.standard == "open" else "open"
        typical = self.typical_error if math.isfinite(self.typical_error) else self.residual
        if (math.isfinite(self.other_residual) and self.other_residual < 0.5 * self.residual
                and typical > GOOD_RESIDUAL):
            return f"poor fit: the end reads like {_article(other)} rather than {_article(self.standard)}"
        if typical <= GOOD_RESIDUAL:
            text = f"good fit: a uniform line ended in an ideal {self.standard} explains the reading"
        elif typical <= POOR_RESIDUAL:
            text = (f"fair fit: the {self.standard} is not ideal (fringing capacitance or lead "
                    "inductance), the line is not uniform, or the readings are noisy")
        else:
            return (f"poor fit: this does not read as a line ended in {_article(self.standard)}; "
                    "check the standard, the band and the port")
        if self.residual > 3 * max(typical, 1e-3) and self.residual > GOOD_RESIDUAL:
            text += "; a few points stand well apart from the rest"
        return text

    def json(self) -> dict:
        """The one-way figures as plain JSON values."""
        return {"delay_s": self.delay_s, "loss_db": self.loss_db, "loss_ref_hz": self.loss_ref_hz,
                "dielectric_loss_db": self.dielectric_loss_db, "skin_phase": self.skin_phase,
                "z0_follows_skin": self.z0_follows_skin, "model": self.model,
                "length_m": self.length_m, "residual": self.residual}


def _coarse_delay(freq_hz: np.ndarray, u: np.ndarray) -> tuple[float, float]:
    """Delay maximising |Σ u·e^(+j4πfτ)|, by FFT on a uniform grid; returns (delay, grid step)."""
    steps = np.diff(freq_hz)
    df = float(np.median(steps))
    if df <= 0:
        raise AnalysisError("the frequencies are too close together to find a delay")
    uniform = np.allclose(steps, df, rtol=1e-6, atol=0.0)
    if uniform:
        f0, values = float(freq_hz[0]), u
    else:
        # Unevenly spaced: resample onto the median spacing for the coarse search only; the
        # fine fit below uses the measured points themselves.
        count = min(int(round((freq_hz[-1] - freq_hz[0]) / df)) + 1, 8 * freq_hz.size)
        grid = np.linspace(freq_hz[0], freq_hz[-1], max(count, 2))
        df = float(grid[1] - grid[0])
        values = np.interp(grid, freq_hz, u.real) + 1j * np.interp(grid, freq_hz, u.imag)
        f0 = float(grid[0])
    size = 1 << max(12, int(math.ceil(math.log2(16 * values.size))))
    # Σ_k v_k e^(+j2π k m / M) for m = 0..M−1 is M·ifft; round-trip delay 2τ = m / (M·Δf).
    power = np.abs(np.fft.ifft(values, size))
    m = np.arange(size)
    round_trip = m / (size * df)
    span = 1.0 / df
    round_trip = np.where(m >= 0.95 * size, round_trip - span, round_trip)
    best = int(np.argmax(power))
    del f0  # the start frequency only multiplies the sum by a unit phasor
    return 0.5 * float(round_trip[best]), 0.5 / (size * df)


def _fine_delay(freq_hz: np.ndarray, u: np.ndarray, tau0: float, step: float) -> float:
    from scipy.optimize import least_squares, minimize_scalar

    def minus_power(tau: float) -> float:
        return -float(np.abs(np.sum(u * np.exp(4j * np.pi * freq_hz * tau))))

    coarse = minimize_scalar(minus_power, bounds=(tau0 - 2 * step, tau0 + 2 * step), method="bounded",
                             options={"xatol": step * 1e-6})
    tau1 = float(coarse.x) if coarse.success else tau0
    scale_hz = float(np.max(np.abs(freq_hz))) or 1.0

    def phase_error(p: np.ndarray) -> np.ndarray:
        # Scaled so the parameter is of order one: p = 4π·f_max·Δτ (radians at the top of the band).
        return np.angle(u * np.exp(4j * np.pi * freq_hz * tau1) * np.exp(1j * p[0] * freq_hz / scale_hz))

    fit = least_squares(phase_error, x0=[0.0], loss="soft_l1", f_scale=0.1)
    return tau1 + float(fit.x[0]) / (4 * np.pi * scale_hz)


def _fit_loss(freq_hz: np.ndarray, mag: np.ndarray, loss_ref_hz: float) -> tuple[float, float]:
    """One-way (conductor, dielectric) loss in dB at ``loss_ref_hz`` from |Γ_m/Γ_ideal|.

    −20·log10|r| / 2 = a·√(f/f_ref) + b·(f/f_ref), both not negative, fitted with a Huber
    loss (scale from the median absolute deviation of a first, conductor-only fit).
    """
    from scipy.optimize import least_squares

    keep = (freq_hz > 0) & (mag > 0)
    if not np.any(keep):
        return 0.0, 0.0
    ratio = freq_hz[keep] / loss_ref_hz
    x = np.sqrt(ratio)
    y = -20.0 * np.log10(mag[keep]) / 2.0          # one-way loss in dB at each point
    start = max(float(np.median(y / x)), 0.0)
    resid = y - start * x
    mad = 1.4826 * float(np.median(np.abs(resid - np.median(resid))))
    scale = max(mad, 1e-6)

    def error(p: np.ndarray) -> np.ndarray:
        return p[0] * x - y

    fit = least_squares(error, x0=[start], bounds=([0.0], [np.inf]), loss="huber", f_scale=scale)
    conductor = max(float(fit.x[0]), 0.0)
    if x.size < 4 or ratio.max() <= 1.5 * ratio.min():
        return conductor, 0.0          # too narrow a band to tell √f from f

    def error2(p: np.ndarray) -> np.ndarray:
        return p[0] * x + p[1] * ratio - y

    both = least_squares(error2, x0=[conductor, 0.0], bounds=([0.0, 0.0], [np.inf, np.inf]),
                         loss="huber", f_scale=scale)
    # Keep the dielectric term only when it earns its place: the two terms are much alike over
    # a narrow band, and noise alone must not move loss from one to the other.
    before = float(np.sum(both.fun ** 2)) if both.success else math.inf
    alone = float(np.sum(error(np.array([conductor])) ** 2))
    if both.success and both.x[1] > 0 and before < 0.9 * alone:
        return max(float(both.x[0]), 0.0), max(float(both.x[1]), 0.0)
    return conductor, 0.0


#: The ways the line's losses may be modelled, in the order tried (see :func:`estimate_plane`).
MODELS = ("causal", "loss only", "full line")


def _model_offset(model: str, tau: float, loss: tuple[float, float], ref: float) -> LineOffset:
    return LineOffset(delay_s=tau, loss_db=loss[0], loss_ref_hz=ref, dielectric_loss_db=loss[1],
                      skin_phase=model != "loss only", z0_follows_skin=model == "full line")


def _errors(freq_hz: np.ndarray, gamma: np.ndarray, ideal: float, offset: LineOffset) -> np.ndarray:
    if offset.full_line:
        from refplane.analysis.lines.deembed import remove_offsets

        back = remove_offsets(Sweep(freq_hz, gamma, 50.0), [offset]).s[:, 0, 0]
        return np.abs(back - ideal)
    return np.abs(gamma * np.exp(2.0 * offset.gamma_l(freq_hz)) - ideal)


def _fit(freq_hz: np.ndarray, gamma: np.ndarray, ideal: float, loss_ref_hz: float, coarse=None,
         models=MODELS):
    r = gamma / ideal
    mag = np.abs(r)
    ok = mag > 0
    if np.count_nonzero(ok) < 3:
        raise AnalysisError("the reflection is zero at nearly every point; this is not an open or a short")
    u = np.where(ok, r / np.where(ok, mag, 1.0), 0.0)
    # |Σ u·e^(j4πfτ)| does not change when u changes sign, so the coarse delay found for one
    # standard serves for the other.
    tau0, step = coarse if coarse is not None else _coarse_delay(freq_hz, u)
    loss = _fit_loss(freq_hz, mag, loss_ref_hz)
    conductor_np = np.sqrt(np.abs(freq_hz) / loss_ref_hz) * (loss[0] / DB_PER_NEPER)
    best = None
    for model in models if loss[0] > 0 else models[:1]:
        if model == "full line":
            # Start from the causal delay and let the full line's own phase settle it.
            from scipy.optimize import minimize_scalar

            t_c = best[1].delay_s if best is not None else tau0
            scale = 1e-3 * max(abs(t_c), step)

            def rms(t: float) -> float:
                off = _model_offset(model, max(t_c + t * scale, 0.0), loss, loss_ref_hz)
                return float(np.sqrt(np.mean(_errors(freq_hz, gamma, ideal, off) ** 2)))

            res = minimize_scalar(rms, bounds=(-20.0, 20.0), method="bounded", options={"xatol": 1e-4})
            tau = max(t_c + float(res.x) * scale, 0.0)
        else:
            # The causal model's conductor term turns the round trip by 2·A_c radians more.
            turned = u * np.exp(2j * conductor_np) if model == "causal" else u
            tau = _fine_delay(freq_hz, turned, tau0, step)
        offset = _model_offset(model, tau, loss, loss_ref_hz)
        error = _errors(freq_hz, gamma, ideal, offset)
        rms_error = float(np.sqrt(np.mean(error ** 2)))
        typical = float(np.median(error))
        # Judged by the median error, which a few wild points hardly move; a later (less
        # preferred) model must do clearly better to be chosen.
        if best is None or typical < 0.95 * best[2]:
            best = (rms_error, offset, typical)
    rms_error, offset, typical = best
    return offset, rms_error, typical, (tau0, step)


def estimate_plane(sweep: Sweep, *, standard: str = "open", port: int = 1,
                   band_hz: tuple[float, float] | None = None,
                   velocity_factor: float | None = None,
                   loss_ref_hz: float = 1e9) -> PlaneEstimate:
    """Estimate the one-way line between the reference plane and an open or short.

    Parameters
    ----------
    sweep : Sweep
        A sweep of the cable or fixture with the stated standard at its far end.
    standard : {"open", "short"}
        What terminates the line.
    port : int
        1-based port whose reflection is used.
    band_hz : (low, high), optional
        Use only the points inside this band (inclusive); by default the whole sweep.
    velocity_factor : float, optional
        When given, ``length_m`` is reported as well.
    loss_ref_hz : float
        Frequency at which the loss is reported.

    Returns
    -------
    PlaneEstimate

    Raises
    ------
    AnalysisError
        For an unknown standard, a port the sweep lacks, a band with fewer than 3 points, or
        a reading with no reflection to speak of.

    Notes
    -----
    The line is taken as matched to the port's reference impedance, and the standard as
    ideal. The delay is found without unwrapping; it must be under about 95 % of
    1/(2·Δf), the longest one-way delay the spacing Δf can tell apart.

    Examples
    --------
    >>> est = estimate_plane(sweep, standard="open", velocity_factor=0.66)   # doctest: +SKIP
    >>> est.offset()                                                       # doctest: +SKIP
    """
    key = str(standard).strip().lower()
    if key not in _IDEAL:
        raise AnalysisError(f"the standard must be 'open' or 'short', not {standard!r}")
    if not isinstance(sweep, Sweep):
        raise AnalysisError("a plane estimate needs a sweep")
    sweep.check_port(port)
    ref = float(loss_ref_hz)
    if not (math.isfinite(ref) and ref > 0):
        raise AnalysisError("the loss reference frequency must be above zero")
    vf = None
    if velocity_factor is not None:
        vf = float(velocity_factor)
        if not (math.isfinite(vf) and 0 < vf <= 1):
            raise AnalysisError(f"a velocity factor must lie above 0 and at most 1, not {velocity_factor!r}")
    freq = sweep.freq_hz
    gamma = sweep.reflection(port)
    if band_hz is not None:
        low, high = (float(b) for b in band_hz)
        if not high > low:
            raise AnalysisError("the band's upper frequency must be above the lower")
        inside = (freq >= low) & (freq <= high)
        freq, gamma = freq[inside], gamma[inside]
    if freq.size < 3:
        raise AnalysisError(f"a plane estimate needs at least 3 swept points in the band; found {freq.size}")
    line, residual, typical, coarse = _fit(freq, gamma, _IDEAL[key], ref)
    other = "short" if key == "open" else "open"
    _, other_residual, _, _ = _fit(freq, gamma, _IDEAL[other], ref, coarse, models=MODELS[:2])
    tau = line.delay_s
    length = tau * vf * SPEED_OF_LIGHT_M_S if vf is not None else None
    return PlaneEstimate(delay_s=tau, loss_db=line.loss_db, loss_ref_hz=ref, length_m=length,
                         residual=residual, n_points=int(freq.size), standard=key,
                         other_residual=other_residual, band_hz=(float(freq[0]), float(freq[-1])),
                         typical_error=typical, dielectric_loss_db=line.dielectric_loss_db,
                         skin_phase=line.skin_phase, z0_follows_skin=line.z0_follows_skin)
