"""Cable characterisation from two sweeps of one cable: far end open, then far end shorted.

The open/short method
---------------------
A uniform line of characteristic impedance Zc and propagation γ, length l, reads at its near
end Zoc = Zc·coth(γl) with the far end open and Zsc = Zc·tanh(γl) with it shorted (Pozar,
*Microwave Engineering*, §2.3–2.7, the terminated lossy line; from memory). Hence

    Zc = √(Zoc·Zsc),        tanh(γl) = √(Zsc/Zoc) = Zsc / Zc,

with the root of Zc taken in the right half-plane (a passive line) and tanh(γl) then taken as
Zsc/Zc so the two roots agree. From t = tanh(γl), e^(−2γl) = (1 − t)/(1 + t): its magnitude
gives the one-way attenuation Re(γl) directly and its angle gives 2·Im(γl) modulo 2π.

Branch of the inverse tanh
--------------------------
The angle fixes the one-way phase βl only modulo π. It is followed across the sweep by phase
unwrapping, guided by a delay found first without unwrapping (the peak of the zero-padded
inverse FFT of the unit phasors, as the plane estimate does): the guide's linear phase is
taken out, the small remainder unwrapped, and the guide put back. That works while the
round trip turns less than about 0.45 turn between neighbouring points (2·τ·Δf < 0.45); a
coarser sweep is refused with the step it would need. The whole number of half-turns left at
the bottom of the band is fixed by extrapolating the phase (less its √f skin term) to DC,
where a line's phase is zero; a sweep whose phase does not extrapolate to near a whole number
of turns is refused too.

Fitted line model
-----------------
The causal line model of :mod:`refplane.analysis.lines.deembed` is fitted to γl(f):

    Re γl = A_c·√(f/f_ref) + A_d·(f/f_ref),     Im γl = 2π·f·τ + A_c·√(f/f_ref)

(A_c, A_d ≥ 0 in nepers, from the attenuation alone; τ from the phase less the skin term;
linear least squares, then a few rounds that put back the second-order terms by which the
full line's γl = √(Z'l·Y'l) departs from this low-loss form), and the high-frequency impedance Z0 is the median of Re(Zc(f)/g(f)), where
g(f) = Zc(f)/Z0 is the skin-effect law of the full line. The residual is the RMS over both
sweeps of |Γ_model − Γ_measured|, Γ_model being the fitted line ended in an ideal open and
short: 0 is a perfect fit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.lines.deembed import DB_PER_NEPER, SPEED_OF_LIGHT_M_S, LineOffset, check_velocity_factor
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: The largest fraction of a turn the round trip may turn between neighbouring points.
MAX_TURN_PER_STEP = 0.45


@dataclass(frozen=True, eq=False)
class CableResult:
    """What an open and a short sweep of one cable tell about it (one-way figures).

    Attributes
    ----------
    freq_hz : ndarray
        The frequencies used.
    z0_ohm : ndarray of complex
        Characteristic impedance at each frequency, √(Zoc·Zsc).
    gamma_l : ndarray of complex
        γ·l at each frequency: one-way attenuation in nepers + j·(one-way phase in radians),
        the phase unwrapped from DC.
    z0_fit_ohm : float
        The fitted high-frequency characteristic impedance.
    delay_s : float
        One-way delay (high-frequency; the skin term's phase is held apart).
    length_m, velocity_factor : float or None
        The physical length and velocity factor; one of them was given, the other follows
        from the delay (both ``None`` when neither was given).
    loss_ref_hz : float
        The frequency the losses are stated at.
    loss_conductor_db, loss_dielectric_db : float
        One-way conductor (√f) and dielectric (f) loss in dB at ``loss_ref_hz``.
    residual : float
        RMS over both sweeps of |Γ_model − Γ_measured| (0 is a perfect fit).
    band_hz : tuple of float
        The lowest and highest frequency used.

    Notes
    -----
    Built to take an uncertainty later: a ``u`` mapping with the keys of :meth:`json`
    (expanded, k = 2) can join without changing the figures.
    """

    freq_hz: np.ndarray
    z0_ohm: np.ndarray
    gamma_l: np.ndarray
    z0_fit_ohm: float
    delay_s: float
    length_m: float | None
    velocity_factor: float | None
    loss_ref_hz: float
    loss_conductor_db: float
    loss_dielectric_db: float
    residual: float
    band_hz: tuple[float, float]

    @property
    def n_points(self) -> int:
        """Number of swept points used."""
        return int(self.freq_hz.size)

    @property
    def loss_db(self) -> float:
        """Total one-way loss in dB at ``loss_ref_hz``."""
        return self.loss_conductor_db + self.loss_dielectric_db

    @property
    def loss_db_per_100m(self) -> float | None:
        """Total loss per 100 m at ``loss_ref_hz``, or ``None`` without a length."""
        if self.length_m is None or not self.length_m > 0:
            return None
        return self.loss_db * 100.0 / self.length_m

    def loss_at(self, freq_hz) -> np.ndarray:
        """The fitted one-way loss in dB at ``freq_hz`` (conductor + dielectric)."""
        ratio = np.abs(np.asarray(freq_hz, dtype=np.float64)) / self.loss_ref_hz
        return self.loss_conductor_db * np.sqrt(ratio) + self.loss_dielectric_db * ratio

    def offset(self) -> LineOffset:
        """The cable as a line to remove (full line model, its own fitted impedance)."""
        return LineOffset(delay_s=self.delay_s, loss_db=self.loss_conductor_db, loss_ref_hz=self.loss_ref_hz,
                          dielectric_loss_db=self.loss_dielectric_db, line_z0_ohm=self.z0_fit_ohm,
                          skin_phase=True, z0_follows_skin=True)

    def json(self) -> dict:
        """The one-way figures as plain JSON values (the keys of ``refplane cable --json``)."""
        return {"z0_ohm": self.z0_fit_ohm, "delay_s": self.delay_s, "length_m": self.length_m,
                "vf": self.velocity_factor, "loss_ref_hz": self.loss_ref_hz,
                "loss_conductor_db": self.loss_conductor_db, "loss_dielectric_db": self.loss_dielectric_db,
                "loss_db_per_100m": self.loss_db_per_100m, "residual": self.residual}


def _reflection(sweep: Sweep, port: int, what: str) -> tuple[np.ndarray, np.ndarray, complex]:
    if not isinstance(sweep, Sweep):
        raise AnalysisError(f"the {what} reading must be a sweep")
    sweep.check_port(port)
    return sweep.freq_hz, sweep.reflection(port), complex(sweep.z0_ohm[port - 1])


def _coarse_round_trip(freq_hz: np.ndarray, x: np.ndarray) -> float:
    """Round-trip delay maximising |Σ x·e^(+j2πf·t)| (no unwrapping; needs a near-even grid)."""
    u = x / np.where(np.abs(x) > 0, np.abs(x), 1.0)
    df = float(np.median(np.diff(freq_hz)))
    grid = np.arange(freq_hz[0], freq_hz[-1] + 0.5 * df, df)
    values = np.interp(grid, freq_hz, u.real) + 1j * np.interp(grid, freq_hz, u.imag)
    size = 1 << max(12, int(math.ceil(math.log2(16 * values.size))))
    power = np.abs(np.fft.ifft(values, size))
    m = int(np.argmax(power))
    if m >= 0.95 * size:
        m -= size
    return m / (size * df)


def characterise_cable(open_sweep: Sweep, short_sweep: Sweep, *, port: int = 1,
                       length_m: float | None = None, velocity_factor: float | None = None,
                       band_hz: tuple[float, float] | None = None,
                       loss_ref_hz: float = 1e9) -> CableResult:
    """Characteristic impedance, delay, velocity factor or length, and loss of a cable.

    Parameters
    ----------
    open_sweep, short_sweep : Sweep
        The same cable swept with its far end open, then shorted, on the same frequencies.
    port : int
        1-based port whose reflection is used (in both sweeps).
    length_m : float, optional
        The cable's physical length: the velocity factor follows (and the loss per 100 m).
    velocity_factor : float, optional
        The cable's velocity factor: the length follows. Not with ``length_m``.
    band_hz : (low, high), optional
        Use only the points inside this band (inclusive).
    loss_ref_hz : float
        The frequency to state the losses at.

    Returns
    -------
    CableResult

    Raises
    ------
    AnalysisError
        For sweeps on different frequencies, too few points, a sweep too coarse to follow
        the phase, readings that are not a line, or contradictory options.

    Examples
    --------
    >>> cable = characterise_cable(read_sweep("open.s1p"), read_sweep("short.s1p"),
    ...                            length_m=10.0)                        # doctest: +SKIP
    >>> cable.z0_fit_ohm, cable.velocity_factor, cable.loss_db_per_100m  # doctest: +SKIP
    """
    if length_m is not None and velocity_factor is not None:
        raise AnalysisError("give the cable's length or its velocity factor, not both")
    if length_m is not None:
        length_m = float(length_m)
        if not (math.isfinite(length_m) and length_m > 0):
            raise AnalysisError(f"the cable's length must be above zero, not {length_m!r}")
    if velocity_factor is not None:
        velocity_factor = check_velocity_factor(velocity_factor)
    ref = float(loss_ref_hz)
    if not (math.isfinite(ref) and ref > 0):
        raise AnalysisError("the loss reference frequency must be above zero")
    f, g_open, z_ref = _reflection(open_sweep, port, "open")
    f2, g_short, z_ref2 = _reflection(short_sweep, port, "short")
    if f.size != f2.size or not np.allclose(f, f2, rtol=1e-9, atol=0.0):
        raise AnalysisError("the open and short sweeps must be taken on the same frequencies")
    if z_ref != z_ref2:
        raise AnalysisError("the open and short sweeps must share their reference impedance")
    if band_hz is not None:
        low, high = (float(b) for b in band_hz)
        if not high > low:
            raise AnalysisError("the band's upper frequency must be above the lower")
        inside = (f >= low) & (f <= high)
        f, g_open, g_short = f[inside], g_open[inside], g_short[inside]
    keep = f > 0
    f, g_open, g_short = f[keep], g_open[keep], g_short[keep]
    if f.size < 5:
        raise AnalysisError(f"a cable needs at least 5 swept points above 0 Hz in the band; found {f.size}")
    if np.any(np.diff(f) <= 0):
        raise AnalysisError("the frequencies must rise from point to point")

    # Zc = √(Zoc·Zsc) and t = Zsc/Zc, written in Γ so an open or short read exactly as ±1
    # gives no infinities: Zoc·Zsc = Zr²·(1+Γo)(1+Γs)/((1−Γo)(1−Γs)).
    num_o, den_o = 1.0 + g_open, 1.0 - g_open
    num_s, den_s = 1.0 + g_short, 1.0 - g_short
    with np.errstate(divide="ignore", invalid="ignore"):
        zc = z_ref * np.sqrt(num_o * num_s / (den_o * den_s))
        zc = np.where(zc.real < 0, -zc, zc)
        t = z_ref * num_s / den_s / zc
        x = (1.0 - t) / (1.0 + t)                  # e^(−2γl)
    good = np.isfinite(zc) & np.isfinite(x) & (np.abs(x) > 0)
    if np.count_nonzero(good) < 5:
        raise AnalysisError("these readings are not an open and a short at the end of one cable "
                            "(check that the files are the right way round)")
    f, zc, x = f[good], zc[good], x[good]

    # One-way attenuation needs no unwrapping.
    alpha = -0.5 * np.log(np.abs(x))
    # One-way phase: guided unwrapping (see the module notes).
    df_max = float(np.max(np.diff(f)))
    round_trip = _coarse_round_trip(f, x)
    if abs(round_trip) * df_max > MAX_TURN_PER_STEP:
        need = MAX_TURN_PER_STEP / abs(round_trip)
        raise AnalysisError(
            f"the sweep is too coarse to follow this cable's phase: neighbouring points are up to "
            f"{df_max / 1e6:.4g} MHz apart, and a round trip of about {abs(round_trip) * 1e9:.4g} ns "
            f"turns {abs(round_trip) * df_max:.2f} turn between them; sweep with steps under "
            f"{need / 1e6:.3g} MHz (more points or a narrower span)")
    guide = 2.0 * np.pi * f * round_trip
    rest = np.unwrap(np.angle(x * np.exp(1j * guide)))
    if np.max(np.abs(np.diff(rest))) > 0.5 * np.pi:
        raise AnalysisError("the sweep is too coarse to follow the phase: it jumps by more than a quarter "
                            "turn between neighbouring points after the cable's delay is taken out; "
                            "sweep with finer steps")
    phase2 = guide - rest                          # 2·Im(γl), up to a whole number of turns

    # Losses from the attenuation: A_c·√r + A_d·r, both ≥ 0.
    from scipy.optimize import lsq_linear

    ratio = f / ref
    root = np.sqrt(ratio)
    if ratio.max() > 1.5 * ratio.min():
        fit = lsq_linear(np.column_stack([root, ratio]), alpha, bounds=(0.0, np.inf))
        a_c, a_d = (float(v) for v in fit.x)
    else:
        a_c, a_d = max(float(np.sum(root * alpha) / np.sum(root * root)), 0.0), 0.0
    # Whole turns: extrapolate the phase, less its skin term 2·A_c·√r, to DC.
    linear = phase2 - 2.0 * a_c * root
    design = np.column_stack([np.ones_like(f), f])
    (intercept, _), *_ = np.linalg.lstsq(design, linear, rcond=None)
    turns = round(float(intercept) / (2.0 * np.pi))
    if abs(float(intercept) - 2.0 * np.pi * turns) > 0.5 * np.pi:
        raise AnalysisError("the cable's phase does not extrapolate to zero at DC: the sweep is too coarse "
                            "to follow it (its steps may hide whole turns), starts too far from DC, or the "
                            "readings are not one uniform cable; sweep with finer steps from lower down")
    phase2 = phase2 - 2.0 * np.pi * turns
    beta_l = 0.5 * phase2
    gamma_l = alpha + 1j * beta_l
    # Delay through the origin once the skin term's phase is taken out.
    tau = float(np.sum(f * (beta_l - a_c * root)) / (2.0 * np.pi * np.sum(f * f)))
    if not tau > 0:
        raise AnalysisError("these readings show no delay; they are not an open and a short at the end of a cable")

    tau, a_c, a_d = _refine(f, gamma_l, tau, a_c, a_d, ref)
    shape = LineOffset(delay_s=tau, loss_db=a_c * DB_PER_NEPER, loss_ref_hz=ref,
                       dielectric_loss_db=a_d * DB_PER_NEPER, line_z0_ohm=1.0, z0_follows_skin=True)
    law = shape.impedance_ohm(f)                   # Zc(f) / Z0 of the full line
    z0_fit = float(np.median((zc / law).real))
    if not z0_fit > 0:
        raise AnalysisError("these readings give no positive line impedance; they are not a cable")
    vf = velocity_factor
    length = length_m
    if length is not None:
        vf = length / (tau * SPEED_OF_LIGHT_M_S)
    elif vf is not None:
        length = tau * vf * SPEED_OF_LIGHT_M_S
    result = CableResult(freq_hz=f, z0_ohm=zc, gamma_l=gamma_l, z0_fit_ohm=z0_fit, delay_s=tau,
                         length_m=length, velocity_factor=vf, loss_ref_hz=ref,
                         loss_conductor_db=a_c * DB_PER_NEPER, loss_dielectric_db=a_d * DB_PER_NEPER,
                         residual=math.nan, band_hz=(float(f[0]), float(f[-1])))
    return _with_residual(result, open_sweep, short_sweep, port)


def _refine(f, gamma_l, tau, a_c, a_d, ref, rounds: int = 4):
    """Fit the full line's γl = √(Z'l·Y'l), not only its low-loss form, from the linear start.

    The low-loss form leaves second-order terms (≈ A²/φ) that bias a lossy cable's fit at low
    frequency. Each round takes them as a fixed correction computed from the last round's
    line, and solves the same linear problems again: the losses from the attenuation alone,
    the delay from the phase less the skin term. The corrections are second order, so a few
    rounds settle to rounding.
    """
    from scipy.optimize import lsq_linear

    ratio = f / ref
    root = np.sqrt(ratio)
    design = np.column_stack([root, ratio])
    wide = ratio.max() > 1.5 * ratio.min()
    for _ in range(rounds):
        line = LineOffset(delay_s=tau, loss_db=a_c * DB_PER_NEPER, loss_ref_hz=ref,
                          dielectric_loss_db=a_d * DB_PER_NEPER, z0_follows_skin=True)
        low_loss = a_c * root + a_d * ratio + 1j * (2.0 * np.pi * f * tau + a_c * root)
        correction = line.gamma_l(f) - low_loss
        alpha = gamma_l.real - correction.real
        if wide:
            a_c, a_d = (float(v) for v in lsq_linear(design, alpha, bounds=(0.0, np.inf)).x)
        else:
            a_c = max(float(np.sum(root * alpha) / np.sum(root * root)), 0.0)
        beta = gamma_l.imag - correction.imag - a_c * root
        tau = float(np.sum(f * beta) / (2.0 * np.pi * np.sum(f * f)))
    return tau, a_c, a_d


def _with_residual(result: CableResult, open_sweep: Sweep, short_sweep: Sweep, port: int) -> CableResult:
    import dataclasses

    from refplane.analysis.lines.deembed import add_offsets

    f = result.freq_hz
    line = result.offset()
    z_ref = complex(open_sweep.z0_ohm[port - 1])
    errors = []
    for sweep, ideal in ((open_sweep, 1.0), (short_sweep, -1.0)):
        model = add_offsets(Sweep(f, np.full(f.size, ideal, complex), z_ref), [line]).s[:, 0, 0]
        measured = np.interp(f, sweep.freq_hz, sweep.reflection(port).real) \
            + 1j * np.interp(f, sweep.freq_hz, sweep.reflection(port).imag)
        errors.append(np.abs(model - measured))
    residual = float(np.sqrt(np.mean(np.concatenate(errors) ** 2)))
    return dataclasses.replace(result, residual=residual)
