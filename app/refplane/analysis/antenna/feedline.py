"""The feedline between radio and antenna: what the radio sees, and where the power goes.

The line is a :class:`refplane.analysis.lines.deembed.LineOffset` (length and velocity factor or
delay, loss, line impedance) and is worked through that module's public two-port,
:func:`refplane.analysis.lines.deembed.line_s`, so this module follows whatever line model it holds.

Both directions
    *Toward the radio*: from Z at the antenna (the feedpoint), Z at the radio end is
    Γ_in = S11 + S12·S21·Γ_L / (1 − S22·Γ_L). *Toward the antenna*: from Z measured at the radio
    end, the same relation solved for Γ_L: Γ_L = D / (S12·S21 + S22·D) with D = Γ_in − S11
    (the reference-plane move of ``refplane read --length …``).
Loss budget
    With a unit incident wave at the radio end, the line accepts P_in = 1 − |Γ_in|² and the
    antenna receives P_L = |S21|²·(1 − |Γ_L|²)/|1 − S22·Γ_L|². *Total loss* = 10·log10(P_in/P_L);
    *matched loss* = the loss of the same line ended in its own impedance, 20·log10(e)·Re(γl);
    the *extra loss from the mismatch* is their difference. For a line of real impedance this
    is the exact form of the amateur-radio handbook relation
    total = 10·log10[(a² − |ρ|²)/(a·(1 − |ρ|²))] with a = 10^(ML/10) and |ρ| at the load
    relative to the line's impedance, |ρ_in| = |ρ|/a.
Power
    ``power_w`` is the power the transmitter (with any tuner at the radio end) puts into the
    line; the antenna receives ``power_w · 10^(−total/10)``. The rest heats the line — at
    high power and high SWR, a line can overheat and its voltage rating matter.
VSWR
    ``vswr_radio`` and ``vswr_antenna`` are relative to the system reference ``z_ref_ohm``
    (the radio's and the analyzer's impedance, normally 50 Ω); on a line of that same
    impedance they are also the SWR on the line at each end.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.lines.deembed import DB_PER_NEPER, LineOffset, line_s
from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import gamma_to_z, vswr, z_to_gamma


@dataclass(frozen=True, eq=False)
class FeedlineResult:
    """Impedances, SWR and the loss budget at both ends of a feedline, per frequency.

    Attributes
    ----------
    freq_hz : ndarray, shape (n,)
    z_radio_ohm, z_antenna_ohm : ndarray of complex, shape (n,)
        Impedance at the radio end and at the antenna end.
    vswr_radio, vswr_antenna : ndarray, shape (n,)
        VSWR relative to ``z_ref_ohm`` at each end.
    matched_loss_db : ndarray
        Loss of the line ended in its own impedance.
    total_loss_db : ndarray
        Power into the line over power into the antenna, in dB (∞ into an open or short).
    mismatch_loss_extra_db : ndarray
        ``total_loss_db − matched_loss_db``: the extra loss the mismatch causes in the line.
    power_at_antenna_w : ndarray or None
        Power reaching the antenna for ``power_w`` into the line; ``None`` without a power.
    power_w : float or None
    z_ref_ohm : float
    toward : str
        ``"radio"`` (input was Z at the antenna) or ``"antenna"`` (input was Z at the radio end).
    line : LineOffset
    """

    freq_hz: np.ndarray
    z_radio_ohm: np.ndarray
    z_antenna_ohm: np.ndarray
    vswr_radio: np.ndarray
    vswr_antenna: np.ndarray
    matched_loss_db: np.ndarray
    total_loss_db: np.ndarray
    mismatch_loss_extra_db: np.ndarray
    power_at_antenna_w: np.ndarray | None
    power_w: float | None
    z_ref_ohm: float
    toward: str
    line: LineOffset

    def json_points(self) -> list[dict]:
        """One dict per frequency with the keys of ``refplane feedline --json``."""

        def num(v):
            v = float(v)
            return v if math.isfinite(v) else None

        def cplx(z):
            z = complex(z)
            return [num(z.real), num(z.imag)] if not math.isinf(abs(z)) else [None, None]

        out = []
        for k in range(self.freq_hz.size):
            out.append({
                "freq_hz": float(self.freq_hz[k]),
                "z_radio_ohm": cplx(self.z_radio_ohm[k]),
                "z_antenna_ohm": cplx(self.z_antenna_ohm[k]),
                "vswr_radio": num(self.vswr_radio[k]),
                "vswr_antenna": num(self.vswr_antenna[k]),
                "matched_loss_db": num(self.matched_loss_db[k]),
                "total_loss_db": num(self.total_loss_db[k]),
                "mismatch_loss_extra_db": num(self.mismatch_loss_extra_db[k]),
                "power_at_antenna_w": (None if self.power_at_antenna_w is None
                                       else num(self.power_at_antenna_w[k])),
            })
        return out


def _check(freq_hz, z_ohm, line, z_ref_ohm, power_w):
    f = np.atleast_1d(np.asarray(freq_hz, dtype=np.float64))
    z = np.broadcast_to(np.asarray(z_ohm, dtype=np.complex128), f.shape)
    if not isinstance(line, LineOffset):
        raise AnalysisError("a feedline is described by a LineOffset (length, velocity factor, loss)")
    if f.ndim != 1 or not np.all(np.isfinite(f)) or np.any(f <= 0):
        raise AnalysisError("feedline frequencies must be finite and above zero")
    zr = float(z_ref_ohm)
    if not (math.isfinite(zr) and zr > 0):
        raise AnalysisError(f"the reference impedance must be a positive number of ohms, not {z_ref_ohm!r}")
    if power_w is not None:
        p = float(power_w)
        if not (math.isfinite(p) and p >= 0):
            raise AnalysisError(f"the power must be a number of watts, zero or more, not {power_w!r}")
        power_w = p
    return f, np.array(z), zr, power_w


def _budget(f, s, g_in, g_load, line, zr, power_w, toward) -> FeedlineResult:
    s21, s22 = s[:, 1, 0], s[:, 1, 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        p_in = 1.0 - np.abs(g_in) ** 2
        p_load = np.abs(s21) ** 2 * (1.0 - np.abs(g_load) ** 2) / np.abs(1.0 - s22 * g_load) ** 2
        total = 10.0 * np.log10(p_in / p_load)
    total = np.where(p_load <= 0, np.inf, total)
    matched = DB_PER_NEPER * np.real(line.gamma_l(f))
    power = None
    if power_w is not None:
        power = power_w * 10.0 ** (-total / 10.0)
    return FeedlineResult(
        freq_hz=f, z_radio_ohm=gamma_to_z(g_in, zr), z_antenna_ohm=gamma_to_z(g_load, zr),
        vswr_radio=vswr(g_in), vswr_antenna=vswr(g_load),
        matched_loss_db=matched, total_loss_db=total, mismatch_loss_extra_db=total - matched,
        power_at_antenna_w=power, power_w=power_w, z_ref_ohm=zr, toward=toward, line=line)


def toward_radio(freq_hz, z_antenna_ohm, line: LineOffset, *, z_ref_ohm: float = 50.0,
                 power_w: float | None = None) -> FeedlineResult:
    """What the radio sees through ``line`` when the antenna presents ``z_antenna_ohm``.

    Parameters
    ----------
    freq_hz : float or array_like
        Frequencies, above zero.
    z_antenna_ohm : complex or array_like
        Impedance at the antenna end of the line (broadcast against ``freq_hz``).
    line : LineOffset
        The feedline; its ``line_z0_ohm`` (``None``: the reference) is the line's impedance.
    z_ref_ohm : float
        The system reference (the radio's impedance) for the VSWR figures.
    power_w : float, optional
        Power into the line at the radio end, watts.

    Returns
    -------
    FeedlineResult

    Examples
    --------
    1 dB of matched loss and SWR 3 at the antenna (150 Ω on a 50 Ω line):

    >>> from refplane.analysis.lines.deembed import LineOffset
    >>> line = LineOffset(delay_s=10e-9, loss_db=1.0, loss_ref_hz=14e6)
    >>> r = toward_radio(14e6, 150.0, line)
    >>> round(float(r.total_loss_db[0]), 2), round(float(r.vswr_radio[0]), 2)
    (1.5, 2.32)
    """
    f, z, zr, power_w = _check(freq_hz, z_antenna_ohm, line, z_ref_ohm, power_w)
    s = line_s(line, f, zr)
    g_load = z_to_gamma(z, zr)
    with np.errstate(divide="ignore", invalid="ignore"):
        g_in = s[:, 0, 0] + s[:, 0, 1] * s[:, 1, 0] * g_load / (1.0 - s[:, 1, 1] * g_load)
    return _budget(f, s, g_in, g_load, line, zr, power_w, "radio")


def toward_antenna(freq_hz, z_radio_ohm, line: LineOffset, *, z_ref_ohm: float = 50.0,
                   power_w: float | None = None) -> FeedlineResult:
    """The impedance at the antenna when ``z_radio_ohm`` is measured at the radio end of ``line``.

    The same budget as :func:`toward_radio`; parameters alike, with the impedance given at
    the radio end. A reading that no passive antenna behind this line could give (more
    reflection than the line's own loss allows) yields |Γ| > 1 at the antenna and no loss
    figures (NaN), rather than an error.
    """
    f, z, zr, power_w = _check(freq_hz, z_radio_ohm, line, z_ref_ohm, power_w)
    s = line_s(line, f, zr)
    g_in = z_to_gamma(z, zr)
    d = g_in - s[:, 0, 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        g_load = d / (s[:, 0, 1] * s[:, 1, 0] + s[:, 1, 1] * d)
    result = _budget(f, s, g_in, g_load, line, zr, power_w, "antenna")
    active = np.abs(g_load) > 1.0 + 1e-12
    if np.any(active):
        nan = np.where(active, np.nan, 0.0)
        result = dataclasses.replace(
            result, total_loss_db=result.total_loss_db + nan,
            mismatch_loss_extra_db=result.mismatch_loss_extra_db + nan,
            power_at_antenna_w=(None if result.power_at_antenna_w is None else result.power_at_antenna_w + nan))
    return result


def handbook_total_loss_db(matched_loss_db, swr_at_load) -> np.ndarray:
    """The handbook relation for a mismatched line of real impedance, in closed form.

    total = 10·log10[(a² − |ρ|²)/(a·(1 − |ρ|²))], a = 10^(ML/10), |ρ| = (SWR − 1)/(SWR + 1)
    (published in the amateur-radio handbook literature). Exact for a line of real
    impedance, whatever the phase of the load; given here for quick estimates and checks.
    """
    a = 10.0 ** (np.asarray(matched_loss_db, dtype=float) / 10.0)
    s = np.asarray(swr_at_load, dtype=float)
    rho = (s - 1.0) / (s + 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 10.0 * np.log10((a * a - rho * rho) / (a * (1.0 - rho * rho)))
