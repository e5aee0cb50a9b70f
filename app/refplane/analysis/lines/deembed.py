"""Moving the reference plane: remove (de-embed) or add a length of transmission line per port.

The line model
--------------
Each port may carry one :class:`LineOffset`: a uniform line described by its one-way
electrical delay ``τ``, a conductor loss that grows as √f, a dielectric loss that grows as f,
and an optional characteristic impedance. With the one-way conductor and dielectric losses
in nepers

    A_c(f) = loss_db·√(f/f_ref) / 8.6859,     A_d(f) = dielectric_loss_db·(f/f_ref) / 8.6859

(20·log10(e) ≈ 8.6859 dB per neper; both vanish at f = 0), the line's γl is, in the
low-loss form,

    γl(f) = A_c(f)·(1 + j·s) + A_d(f) + j·2π·f·τ,      s = 1 if ``skin_phase`` else 0,

with a constant characteristic impedance Zc (``line_z0_ohm``, or the port's reference).

Why the conductor term carries a phase (``skin_phase=True``, the causal skin-effect model):
a good conductor's surface impedance is Zs = (1 + j)·√(π·f·μ/σ) — its resistance and its
internal reactance are equal and both grow as √f (Pozar, *Microwave Engineering*, 4th ed.,
§1.7 "the surface impedance of a good conductor" and §2.7 for the line's R, L, G, C; from
memory). Per unit length the line has Z' = jωL + (1 + j)·R_s(f) and Y' = jωC + G(f), so to
first order in the losses γ = α_c·(1 + j) + α_d + jβ: the skin effect delays the wave by
exactly as many radians as it attenuates it in nepers. A √f loss with no phase (s = 0, the
form Refplane used first, still the default of the dataclass so stored offsets read alike)
is not causal; on real cable it leaves a phase error that grows as √f.

With ``z0_follows_skin=True`` the line is taken literally as that R, L, G, C line instead of
its low-loss form (Pozar §2.1, γ = √(Z'Y'), Zc = √(Z'/Y')). In terms of the line's totals,
with φ = 2π·f·τ,

    Z'l/Z0 = jφ + 2·A_c·(1 + j),    Y'l·Z0 = jφ + 2·A_d,
    γl = √((jφ + 2A_c(1 + j))·(jφ + 2A_d)),     Zc(f) = Z0·√((jφ + 2A_c(1 + j)) / (jφ + 2A_d)),

where Z0 is the high-frequency impedance (``line_z0_ohm``, or the port's reference). Zc
rises above Z0 at low frequency as the conductor's internal reactance and resistance become
comparable with ωL (by a fraction ≈ (1 − j)·A_c/φ); γl reduces to the low-loss form above
when the losses are small against φ. The law holds where the skin depth is small against the
conductors (coax: above roughly 100 kHz to 1 MHz); it ignores the DC resistance, and the
small phase a constant-loss-tangent dielectric carries.

Matched lines (``line_z0_ohm`` None, or equal to the port's reference, and an impedance that
does not follow the skin law) only rotate and attenuate the waves, so each S_ij is
multiplied by e^(−γ_i l_i)·e^(−γ_j l_j) when a line is added and by the inverse when it is
removed. A line of another impedance is a full two-port (ABCD → S at the port's reference)
cascaded in front of the port; removing it uses the exact inverse of that cascade; a 1-port
takes a shortcut (Γ referred to the line's own impedance, where the line is matched) and a
2-port has the 2 × 2 algebra written out. Every path is vectorised over frequency and worked
in blocks of a few thousand points (no Python loop over points); adding and then removing
the same offsets returns the input to rounding. A lossless line takes exactly the same
arithmetic whatever the two model switches say.

A line of another impedance uses the same Γ = (Z − Z_ref)/(Z + Z_ref) definition as the rest
of Refplane, also for complex port references.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Speed of light in vacuum, m/s (exact by the SI definition of the metre).
SPEED_OF_LIGHT_M_S = 299_792_458.0

#: Decibels per neper: 20·log10(e).
DB_PER_NEPER = 20.0 / math.log(10.0)


def _finite(value, what: str) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise AnalysisError(f"the {what} {value!r} is not a number") from None
    if not math.isfinite(number):
        raise AnalysisError(f"the {what} must be a finite number, not {value!r}")
    return number


def check_velocity_factor(velocity_factor) -> float:
    """A velocity factor as a float, or :class:`AnalysisError` unless it lies in (0, 1]."""
    vf = _finite(velocity_factor, "velocity factor")
    if not 0.0 < vf <= 1.0:
        raise AnalysisError(f"a velocity factor must lie above 0 and at most 1, not {vf:g}")
    return vf


@dataclass(frozen=True)
class LineOffset:
    """A length of transmission line at one port, to remove from or add to a sweep.

    Parameters
    ----------
    delay_s : float
        One-way electrical delay in seconds. A negative delay stands for a line on the other
        side of the plane (removing it adds the line).
    loss_db : float
        One-way conductor loss in dB at ``loss_ref_hz``; scales as √f. Not negative.
    loss_ref_hz : float
        The frequency at which both losses are given, above zero.
    dielectric_loss_db : float
        One-way dielectric loss in dB at ``loss_ref_hz``; scales as f. Not negative.
    line_z0_ohm : float or None
        Characteristic impedance of the line, above zero; ``None`` means the line matches
        the sweep's reference impedance at that port. With ``z0_follows_skin`` this is the
        high-frequency value.
    skin_phase : bool
        Give the √f conductor loss its equal phase (the causal skin-effect model, see the
        module notes). False keeps the older loss-only form.
    z0_follows_skin : bool
        Treat the line as its full R, L, G, C line: the impedance rises above ``line_z0_ohm``
        at low frequency following the skin-effect law. Implies ``skin_phase``; needs a
        delay of zero or more.

    Examples
    --------
    >>> LineOffset.from_length(0.2, 0.66).delay_s   # doctest: +ELLIPSIS
    1.0108...e-09
    """

    delay_s: float = 0.0
    loss_db: float = 0.0
    loss_ref_hz: float = 1e9
    dielectric_loss_db: float = 0.0
    line_z0_ohm: float | None = None
    skin_phase: bool = True
    z0_follows_skin: bool = False

    def __post_init__(self) -> None:
        object.__setattr__(self, "z0_follows_skin", bool(self.z0_follows_skin))
        object.__setattr__(self, "skin_phase", bool(self.skin_phase) or self.z0_follows_skin)
        object.__setattr__(self, "delay_s", _finite(self.delay_s, "delay"))
        for name, what in (("loss_db", "loss"), ("dielectric_loss_db", "dielectric loss")):
            value = _finite(getattr(self, name), what)
            if value < 0:
                raise AnalysisError(f"the {what} must not be negative (got {value:g} dB); "
                                    "a passive line only loses power")
            object.__setattr__(self, name, value + 0.0)
        ref = _finite(self.loss_ref_hz, "loss reference frequency")
        if ref <= 0:
            raise AnalysisError(f"the loss reference frequency must be above zero, not {ref:g} Hz")
        object.__setattr__(self, "loss_ref_hz", ref)
        if self.line_z0_ohm is not None:
            if isinstance(self.line_z0_ohm, complex):
                raise AnalysisError("the line impedance must be a real number of ohms")
            z0 = _finite(self.line_z0_ohm, "line impedance")
            if z0 <= 0:
                raise AnalysisError(f"the line impedance must be above zero, not {z0:g} Ω")
            object.__setattr__(self, "line_z0_ohm", z0)
        if self.z0_follows_skin and self.delay_s < 0:
            raise AnalysisError("a line whose impedance follows the skin-effect law needs a delay of "
                                "zero or more (it describes a real length of cable)")

    @property
    def full_line(self) -> bool:
        """True when the line is worked as its full R, L, G, C line (impedance varies with f).

        Only a line with both length (delay) and conductor loss has that law; otherwise the
        low-loss form is exact or the only meaningful one.
        """
        return self.z0_follows_skin and self.loss_db > 0.0 and self.delay_s > 0.0

    def losses_np(self, freq_hz: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """One-way conductor and dielectric losses in nepers at ``freq_hz`` (A_c, A_d of the notes)."""
        ratio = np.abs(np.asarray(freq_hz, dtype=np.float64)) / self.loss_ref_hz
        return np.sqrt(ratio) * (self.loss_db / DB_PER_NEPER), ratio * (self.dielectric_loss_db / DB_PER_NEPER)

    def _full_terms(self, freq_hz: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(Z'l/Z0, Y'l·Z0) of the full line, see the module notes."""
        f = np.asarray(freq_hz, dtype=np.float64)
        a_c, a_d = self.losses_np(f)
        phi = (2.0 * math.pi * self.delay_s) * f
        return (2.0 * a_c + 1j * (phi + 2.0 * a_c)), (2.0 * a_d + 1j * phi)

    def impedance_ohm(self, freq_hz: np.ndarray, z_ref_ohm: complex = 50.0) -> np.ndarray:
        """The line's characteristic impedance at ``freq_hz`` (constant unless ``z0_follows_skin``).

        ``z_ref_ohm`` stands in for ``line_z0_ohm`` when that is ``None``. At f = 0 the
        high-frequency value is returned (the skin law does not reach DC).
        """
        f = np.asarray(freq_hz, dtype=np.float64)
        z0 = complex(z_ref_ohm) if self.line_z0_ohm is None else self.line_z0_ohm
        if not self.full_line:
            return np.full(f.shape, z0, dtype=np.complex128)
        zl, yl = self._full_terms(f)
        safe = yl != 0
        ratio = np.where(safe, zl / np.where(safe, yl, 1.0), 1.0)
        return z0 * np.sqrt(ratio)

    @classmethod
    def from_length(cls, length_m: float, velocity_factor: float, **kw) -> "LineOffset":
        """A line of physical ``length_m`` metres with the given velocity factor.

        The delay is ``length_m / (velocity_factor · c)`` with c = 299 792 458 m/s. Other
        keyword arguments (losses, ``line_z0_ohm``) pass through to the constructor.
        """
        length = _finite(length_m, "length")
        vf = check_velocity_factor(velocity_factor)
        return cls(delay_s=length / (vf * SPEED_OF_LIGHT_M_S), **kw)

    def length_m(self, velocity_factor: float) -> float:
        """The physical length in metres this delay stands for at ``velocity_factor``."""
        return self.delay_s * check_velocity_factor(velocity_factor) * SPEED_OF_LIGHT_M_S

    @property
    def is_zero(self) -> bool:
        """True when the line changes nothing (no delay and no loss), whatever its impedance."""
        return self.delay_s == 0.0 and self.loss_db == 0.0 and self.dielectric_loss_db == 0.0

    def with_changes(self, **changes) -> "LineOffset":
        """A copy with some fields changed (validated afresh)."""
        import dataclasses

        return dataclasses.replace(self, **changes)

    def with_length(self, length_m: float, velocity_factor: float) -> "LineOffset":
        """A copy whose delay is that of ``length_m`` at ``velocity_factor`` (losses and impedance kept)."""
        delay = LineOffset.from_length(length_m, velocity_factor).delay_s
        return self.with_changes(delay_s=delay)

    def stepped(self, steps: float, step_s: float) -> "LineOffset":
        """A copy with the delay moved by ``steps`` steps of ``step_s`` seconds (keys, wheel, slider)."""
        return self.with_changes(delay_s=self.delay_s + float(steps) * float(step_s))

    def gamma_l(self, freq_hz: np.ndarray) -> np.ndarray:
        """The line's γ·l at ``freq_hz``: attenuation in nepers plus j·(phase in radians)."""
        f = np.asarray(freq_hz, dtype=np.float64)
        if self.full_line:
            zl, yl = self._full_terms(f)
            return np.sqrt(zl * yl)          # principal root: Re ≥ 0, a wave that decays
        out = np.empty(f.shape, dtype=np.complex128)
        out.imag = (2.0 * math.pi * self.delay_s) * f
        if self.loss_db or self.dielectric_loss_db:
            ratio = f / self.loss_ref_hz
            alpha = np.sqrt(np.abs(ratio)) * (self.loss_db / DB_PER_NEPER)
            if self.skin_phase and self.loss_db:
                out.imag += alpha
            if self.dielectric_loss_db:
                alpha += ratio * (self.dielectric_loss_db / DB_PER_NEPER)
            out.real = alpha
        else:
            out.real = 0.0
        return out

    def describe(self, velocity_factor: float | None = None) -> str:
        """One line of plain text for file headers and logs."""
        from refplane.analysis.units import format_frequency, format_si

        parts = [f"delay {format_si(self.delay_s, 's')}"]
        if velocity_factor is not None:
            parts.append(f"({format_si(self.length_m(velocity_factor), 'm')} at velocity factor {velocity_factor:g})")
        if self.loss_db or self.dielectric_loss_db:
            ref = format_frequency(self.loss_ref_hz)
            parts.append(f"loss {self.loss_db:g} dB at {ref} (√f"
                         + (", with its equal phase)" if self.skin_phase and self.loss_db else ")"))
            if self.dielectric_loss_db:
                parts.append(f"dielectric loss {self.dielectric_loss_db:g} dB at {ref} (f)")
        parts.append("line impedance = reference" if self.line_z0_ohm is None
                     else f"line impedance {self.line_z0_ohm:g} Ω")
        if self.full_line:
            parts[-1] += " at high frequency, rising below as the skin-effect law says"
        return ", ".join(parts)


def _is_matched(offset: LineOffset, z_ref: complex) -> bool:
    if offset.full_line:
        return False
    return offset.line_z0_ohm is None or (z_ref.imag == 0.0 and offset.line_z0_ohm == z_ref.real)


def _phasor_direct(f: np.ndarray, w: float) -> np.ndarray:
    out = np.empty(f.shape, dtype=np.complex128)
    phase = f * w
    np.cos(phase, out=out.real)
    np.sin(phase, out=out.imag)
    return out


_ROW = 128


def _phasor(f: np.ndarray, w: float) -> np.ndarray:
    """e^(j·w·f), quickly on (nearly) evenly spaced frequencies.

    On an even grid f_k = f_0 + k·Δf, e^(jwf) splits into e^(jw(f_0 + q·R·Δf)) · e^(jw·r·Δf)
    with k = q·R + r, so a few hundred sines and cosines and one outer product replace one
    per point. The grid's own small departures x = w·(f_k − f_0 − k·Δf) (rounding, or a
    slightly uneven grid) are put back with e^(jx) = 1 + jx − x²/2, whose next term is below
    2e-16 for |x| ≤ 1e-5; beyond that the sines and cosines are taken point by point. The
    result agrees with the direct one to the rounding of w·f itself.
    """
    n = f.size
    if w == 0.0:
        return np.ones(n, dtype=np.complex128)
    if n < 4 * _ROW:
        return _phasor_direct(f, w)
    f0 = float(f[0])
    df = (float(f[-1]) - f0) / (n - 1)
    k = np.arange(n, dtype=np.float64)
    x = f - (f0 + k * df)
    x *= w
    if not np.max(np.abs(x)) <= 1e-5:
        return _phasor_direct(f, w)
    rows = -(-n // _ROW)
    within = _phasor_direct(np.arange(_ROW) * df, w)
    starts = _phasor_direct(f0 + (df * _ROW) * np.arange(rows), w)
    out = (starts[:, None] * within[None, :]).reshape(-1)[:n]
    correction = np.empty(n, dtype=np.complex128)
    correction.imag = x
    np.multiply(x, x, out=x)
    x *= -0.5
    x += 1.0
    correction.real = x
    out *= correction
    return out


def _exp_gamma_l(offset: LineOffset, freq_hz: np.ndarray, k: float) -> np.ndarray:
    """e^(k·γl) at ``freq_hz`` (called block by block on long sweeps; see :func:`_phasor`)."""
    f = freq_hz
    if offset.full_line:
        return np.exp(k * offset.gamma_l(f))
    out = _phasor(f, k * 2.0 * math.pi * offset.delay_s)
    if offset.loss_db or offset.dielectric_loss_db:
        scratch = f * (1.0 / offset.loss_ref_hz)
        if offset.skin_phase and offset.loss_db:
            # (1 + j)·A_c: the conductor term turns the phasor by as many radians as nepers.
            a_c = np.sqrt(np.abs(scratch)) * (k * offset.loss_db / DB_PER_NEPER)
            alpha = a_c + scratch * (k * offset.dielectric_loss_db / DB_PER_NEPER)
            return out * np.exp(alpha + 1j * a_c)
        if offset.dielectric_loss_db:
            alpha = np.sqrt(np.abs(scratch)) * (k * offset.loss_db / DB_PER_NEPER)
            alpha += scratch * (k * offset.dielectric_loss_db / DB_PER_NEPER)
            scratch = alpha
        else:
            np.sqrt(np.abs(scratch, out=scratch), out=scratch)
            scratch *= k * offset.loss_db / DB_PER_NEPER
        np.exp(scratch, out=scratch)
        out.real *= scratch
        out.imag *= scratch
    return out


def _line_terms(offset: LineOffset, freq_hz: np.ndarray, z_ref: complex) -> tuple[np.ndarray, np.ndarray]:
    """The line's (S11 = S22, S21 = S12) at reference ``z_ref`` on both ends."""
    p = _exp_gamma_l(offset, freq_hz, -1.0)
    if _is_matched(offset, z_ref):
        return np.zeros_like(p), p
    # With ρ = (Zc − Zref)/(Zc + Zref) and P = e^(−γl): S11 = ρ(1 − P²)/(1 − ρ²P²) and
    # S21 = P(1 − ρ²)/(1 − ρ²P²) — the ABCD → S conversion of a uniform line, rearranged.
    # |ρ| < 1 and |P| ≤ 1, so the denominator never vanishes.
    zc = offset.impedance_ohm(freq_hz, z_ref) if offset.full_line else offset.line_z0_ohm
    rho = (zc - z_ref) / (zc + z_ref)
    p2 = p * p
    den = 1.0 - (rho * rho) * p2
    s11 = rho * (1.0 - p2) / den
    s21 = p * (1.0 - rho * rho) / den
    return s11, s21


def line_s(offset: LineOffset, freq_hz: np.ndarray, z_ref_ohm: complex = 50.0) -> np.ndarray:
    """The line as a two-port S-matrix, shape (n, 2, 2), at reference ``z_ref_ohm`` on both ends.

    Port 1 of the result faces the instrument and port 2 the device. Equivalent to
    ABCD = [[cosh γl, Zc·sinh γl], [sinh γl / Zc, cosh γl]] and the usual ABCD → S
    conversion with equal reference impedances (Pozar, Microwave Engineering, table 4.2 —
    from memory). S follows Γ = (Z − Z_ref)/(Z + Z_ref), as the rest of Refplane does.
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    s11, s21 = _line_terms(offset, f, complex(z_ref_ohm))
    out = np.empty((f.size, 2, 2), dtype=np.complex128)
    out[:, 0, 0] = s11
    out[:, 1, 1] = s11
    out[:, 0, 1] = s21
    out[:, 1, 0] = s21
    return out


def _normalise(sweep: Sweep, offsets: Sequence[LineOffset | None] | None) -> list[LineOffset | None]:
    if not isinstance(sweep, Sweep):
        raise AnalysisError("offsets apply to a sweep")
    if offsets is None:
        return [None] * sweep.n_ports
    if isinstance(offsets, LineOffset):
        offsets = (offsets,)
    items = list(offsets)
    if len(items) > sweep.n_ports:
        raise AnalysisError(f"{len(items)} line offsets given for a {sweep.n_ports}-port sweep")
    for item in items:
        if item is not None and not isinstance(item, LineOffset):
            raise AnalysisError(f"a line offset was expected, not {type(item).__name__}")
    items += [None] * (sweep.n_ports - len(items))
    return [None if (o is None or o.is_zero) else o for o in items]


def _all_matched(sweep: Sweep, offsets: list[LineOffset | None]) -> bool:
    return all(o is None or _is_matched(o, complex(sweep.z0_ohm[i])) for i, o in enumerate(offsets))


# Points per block. Working through the sweep in blocks keeps every temporary small: on a
# 100 000-point sweep, whole-array temporaries cost more in fresh memory pages than in
# arithmetic (measured: ten chained operations took 7× longer whole than in blocks).
_BLOCK = 8192


def _matched_block(f, s, z0, offsets, removing: bool) -> np.ndarray:
    sign = 1.0 if removing else -1.0
    if s.shape[1] == 1:
        # One exponential of 2γl: the path a live chart takes on every change of an offset.
        factor = _exp_gamma_l(offsets[0], f, 2.0 * sign)
        factor *= s[:, 0, 0]
        return factor.reshape(-1, 1, 1)
    u = np.ones((f.size, s.shape[1]), dtype=np.complex128)
    for i, o in enumerate(offsets):
        if o is not None:
            u[:, i] = _exp_gamma_l(o, f, sign)
    return u[:, :, None] * s * u[:, None, :]


def _one_port_block(f, s, z0, offsets, removing: bool) -> np.ndarray:
    """A mismatched line at a 1-port, by renormalising.

    Referred to the line's own impedance Zc the line is matched, so Γ there only turns by
    e^(∓2γl). With r = (Zc − Zref)/(Zc + Zref), Γ referred to Zc is (Γ − r)/(1 − r·Γ)
    and back (Γ' + r)/(1 + r·Γ') — the change of reference of Γ = (Z − Zref)/(Z + Zref).
    Equal to the two-port cascade of :func:`line_s`, with fewer operations per point.
    """
    offset = offsets[0]
    z_ref = complex(z0[0])
    zc = offset.impedance_ohm(f, z_ref) if offset.full_line else offset.line_z0_ohm
    r = (zc - z_ref) / (zc + z_ref)
    g = s[:, 0, 0]
    den = 1.0 - r * g
    if np.any(den == 0):
        raise AnalysisError("the line cannot be applied: the reading equals minus the line's impedance")
    g_line = g - r
    g_line /= den
    g_line *= _exp_gamma_l(offset, f, 2.0 if removing else -2.0)
    den = r * g_line
    den += 1.0
    if np.any(den == 0):
        raise AnalysisError("the line cannot be applied: the reading equals minus the line's impedance")
    g_line += r
    g_line /= den
    return g_line.reshape(-1, 1, 1)


def _two_port_block(f, s, z0, offsets, removing: bool) -> np.ndarray:
    """The general cascade (see :func:`add_offsets`, :func:`remove_offsets`) written out for 2 × 2.

    numpy's batched small-matrix routines cost more per point than the arithmetic itself.
    """
    terms = []
    for i, o in enumerate(offsets):
        if o is None:
            terms.append((0.0, 1.0))      # no line: no reflection, full transmission
        else:
            terms.append(_line_terms(o, f, complex(z0[i])))
    (m0, t0), (m1, t1) = terms
    b00, b01, b10, b11 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    if removing:
        b00 = (b00 - m0) / (t0 * t0)
        b01 = b01 / (t0 * t1)
        b10 = b10 / (t1 * t0)
        b11 = (b11 - m1) / (t1 * t1)
        a00, a01, a10, a11 = 1.0 + b00 * m0, b01 * m1, b10 * m0, 1.0 + b11 * m1
    else:
        a00, a01, a10, a11 = 1.0 - b00 * m0, -b01 * m1, -b10 * m0, 1.0 - b11 * m1
    det = a00 * a11 - a01 * a10
    if np.any(det == 0):
        verb = "removed" if removing else "added"
        raise AnalysisError(f"the lines cannot be {verb}: the cascade is singular at some frequency")
    inv_det = 1.0 / det
    out = np.empty_like(s)
    out[:, 0, 0] = (a11 * b00 - a01 * b10) * inv_det
    out[:, 0, 1] = (a11 * b01 - a01 * b11) * inv_det
    out[:, 1, 0] = (a00 * b10 - a10 * b00) * inv_det
    out[:, 1, 1] = (a00 * b11 - a10 * b01) * inv_det
    if not removing:
        out[:, 0, 0] *= t0 * t0
        out[:, 0, 0] += m0
        out[:, 0, 1] *= t0 * t1
        out[:, 1, 0] *= t1 * t0
        out[:, 1, 1] *= t1 * t1
        out[:, 1, 1] += m1
    return out


def _n_port_block(f, s, z0, offsets, removing: bool) -> np.ndarray:
    m, p = f.size, s.shape[1]
    match = np.zeros((m, p), dtype=np.complex128)   # a uniform line matches alike from both ends
    t = np.ones((m, p), dtype=np.complex128)        # and transmits alike both ways
    for i, o in enumerate(offsets):
        if o is not None:
            match[:, i], t[:, i] = _line_terms(o, f, complex(z0[i]))
    eye = np.eye(p, dtype=np.complex128)
    idx = np.arange(p)
    try:
        if removing:
            x = s.copy()
            x[:, idx, idx] -= match
            inv = 1.0 / t
            x = inv[:, :, None] * x * inv[:, None, :]
            return np.linalg.solve(eye + x * match[:, None, :], x)
        inner = np.linalg.solve(eye - s * match[:, None, :], s)
    except np.linalg.LinAlgError:
        verb = "removed" if removing else "added"
        raise AnalysisError(f"the lines cannot be {verb}: the cascade is singular at some frequency") from None
    out = t[:, :, None] * inner * t[:, None, :]
    out[:, idx, idx] += match
    return out


def _cascade(sweep: Sweep, items: list[LineOffset | None], removing: bool) -> Sweep:
    if _all_matched(sweep, items):
        kernel = _matched_block
    elif sweep.n_ports == 1:
        kernel = _one_port_block
    elif sweep.n_ports == 2:
        kernel = _two_port_block
    else:
        kernel = _n_port_block
    f, s, z0 = sweep.freq_hz, sweep.s, sweep.z0_ohm
    out = np.empty(s.shape, dtype=np.complex128)
    for start in range(0, f.size, _BLOCK):
        stop = min(start + _BLOCK, f.size)
        out[start:stop] = kernel(f[start:stop], s[start:stop], z0, items, removing)
    return sweep.replace(s=out)


def add_offsets(sweep: Sweep, offsets: Sequence[LineOffset | None] | None) -> Sweep:
    """The sweep as it would read with a line added in front of each port.

    Parameters
    ----------
    sweep : Sweep
        The measured (or modelled) sweep.
    offsets : sequence of LineOffset or None
        One entry per port, in port order. A shorter sequence, or ``None`` entries, leave
        the remaining ports alone; more entries than ports raise :class:`AnalysisError`.

    Returns
    -------
    Sweep
        A new sweep with the same frequencies, references, name, source and comments.

    Notes
    -----
    With per-port fixture terms (diagonal matrices E11, E21, E22 of the lines' S at the
    ports' references) the cascade is M = E11 + E21·S·(I − E22·S)⁻¹·E21, evaluated as
    E11 + E21·solve(I − S·E22, S)·E21 in one batched solve over frequency.
    """
    items = _normalise(sweep, offsets)
    if all(o is None for o in items):
        return sweep
    return _cascade(sweep, items, removing=False)


def remove_offsets(sweep: Sweep, offsets: Sequence[LineOffset | None] | None) -> Sweep:
    """The sweep with a line removed from in front of each port (the plane moved to its far end).

    Parameters
    ----------
    sweep : Sweep
        The measured sweep, taken through the lines.
    offsets : sequence of LineOffset or None
        One entry per port, in port order (see :func:`add_offsets`).

    Returns
    -------
    Sweep
        The sweep at the far end of the lines; ``add_offsets`` of the result gives the
        input back.

    Raises
    ------
    AnalysisError
        For more offsets than ports, or where a mismatched line makes the removal singular
        (a lossless half-wave of another impedance never is; this guards the degenerate
        case only).

    Notes
    -----
    Inverting the cascade of :func:`add_offsets`: X = E21⁻¹·(M − E11)·E21⁻¹, then
    S = X·(I + E22·X)⁻¹ = solve(I + X·E22, X), batched over frequency.
    """
    items = _normalise(sweep, offsets)
    if all(o is None for o in items):
        return sweep
    return _cascade(sweep, items, removing=True)


def with_port_offset(offsets: Sequence[LineOffset | None] | None, n_ports: int, port: int,
                     offset: LineOffset | None) -> tuple[LineOffset, ...]:
    """One LineOffset per port (``LineOffset()`` where none), with 1-based ``port`` set to ``offset``."""
    if not 1 <= int(port) <= int(n_ports):
        raise AnalysisError(f"port {port} does not exist; this sweep has {n_ports} port(s)")
    items = [o if o is not None else LineOffset() for o in list(offsets or ())[:n_ports]]
    items += [LineOffset()] * (n_ports - len(items))
    items[int(port) - 1] = offset if offset is not None else LineOffset()
    return tuple(items)


def describe_offsets(offsets: Sequence[LineOffset | None] | None, *, removed: bool = True) -> tuple[str, ...]:
    """Comment lines recording the offsets applied to a sweep, one per port with a line."""
    verb = "removed" if removed else "added"
    lines = []
    for port, offset in enumerate(offsets or (), start=1):
        if offset is not None and not offset.is_zero:
            lines.append(f"Refplane: port {port} line {verb}: {offset.describe()}")
    return tuple(lines)
