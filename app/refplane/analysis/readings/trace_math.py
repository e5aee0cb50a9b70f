"""Trace memory and maths: one sweep seen relative to a stored reference, and the same sweep
on a chart of another reference impedance.

Relative to a reference
-----------------------
For before/after comparisons (a correction, a tuning step, a cable swapped) a sweep is
divided by a stored reference point by point: the ratio S/S_ref, its magnitude in dB
(20·log10|S| − 20·log10|S_ref|) and its phase in degrees (∠S − ∠S_ref, wrapped to
(−180°, 180°]), and the plain complex difference S − S_ref. When the two sweeps were taken on
different frequencies, one is interpolated onto the other's points inside the band they
share (linearly in real and imaginary parts, as markers are; never extrapolated).

Another chart reference impedance
---------------------------------
A reflection Γ measured against Z0 reads, against Z0', as
Γ' = (Γ − ρ)/(1 − ρΓ) with ρ = (Z0' − Z0)/(Z0' + Z0) — the same impedance Z, another chart
centre (e.g. a 75 Ω television or cable system viewed from a 50 Ω analyzer).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.markers import interpolate
from refplane.analysis.sweep import Sweep
from refplane.analysis.units import format_frequency

#: Whose frequencies a relative trace is shown on.
GRIDS = ("reference", "sweep")


@dataclass(frozen=True, eq=False)
class RelativeTrace:
    """A sweep relative to a reference, on one set of frequencies.

    Every array has shape (m, p, p) like :attr:`Sweep.s` (m frequencies, p ports), element by
    element: ``ratio[k, i, j]`` is S_ij of the sweep over S_ij of the reference at ``freq_hz[k]``.
    Where the reference is zero the ratio and the dB and degree differences are NaN (see notes).

    Attributes
    ----------
    freq_hz : ndarray, shape (m,)
    ratio : ndarray of complex
        Sweep ÷ reference.
    difference : ndarray of complex
        Sweep − reference (the vector change).
    difference_db : ndarray of float
        20·log10|sweep| − 20·log10|reference|, in dB.
    difference_deg : ndarray of float
        Phase of the sweep minus phase of the reference, degrees in (−180, 180].
    name, reference_name : str
        The two sweeps' names.
    grid : str
        "reference" or "sweep": whose frequencies these are.
    interpolated : bool
        True when the other sweep was interpolated onto them.
    notes : tuple of str
        Plain sentences on what was done (band trimmed, impedance changed, zeros met).
    """

    freq_hz: np.ndarray
    ratio: np.ndarray
    difference: np.ndarray
    difference_db: np.ndarray
    difference_deg: np.ndarray
    name: str
    reference_name: str
    grid: str
    interpolated: bool
    notes: tuple[str, ...] = ()

    def ratio_sweep(self, z0_ohm=50.0) -> Sweep:
        """The ratio as a sweep (for drawing as a trace; its points with a zero reference are
        left out, since a sweep holds finite values only)."""
        keep = np.all(np.isfinite(self.ratio.reshape(self.ratio.shape[0], -1)), axis=1)
        if not np.any(keep):
            raise AnalysisError(f"'{self.name}' ÷ '{self.reference_name}' has no finite point")
        p = self.ratio.shape[1]
        return Sweep(self.freq_hz[keep].copy(), self.ratio[keep].copy(), np.broadcast_to(z0_ohm, (p,)).copy(),
                     name=f"{self.name} ÷ {self.reference_name}",
                     comments=(f"ratio of {self.name} to the reference {self.reference_name}",))


def _band(sweep: Sweep) -> str:
    return f"{format_frequency(sweep.freq_hz[0])} to {format_frequency(sweep.freq_hz[-1])}"


def relative_to(sweep: Sweep, reference: Sweep, *, grid: str = "reference") -> RelativeTrace:
    """Show ``sweep`` relative to a stored ``reference``.

    Parameters
    ----------
    sweep : Sweep
        The sweep to compare (e.g. after a tuning step).
    reference : Sweep
        The stored trace (e.g. before it). Same number of ports.
    grid : {"reference", "sweep"}
        Whose frequencies the result is on; the other sweep is interpolated there when the two
        differ. Points outside the band both sweeps cover are left out, with a note.

    Returns
    -------
    RelativeTrace

    Raises
    ------
    AnalysisError
        When the port counts differ, the bands do not overlap, or no point of the chosen grid
        falls inside the shared band.

    Examples
    --------
    >>> import numpy as np
    >>> f = np.array([1e6, 2e6])
    >>> before = Sweep(f, np.array([0.5, 0.5 + 0j]), 50.0, name="before")
    >>> after = Sweep(f, np.array([0.25, 0.25j]), 50.0, name="after")
    >>> r = relative_to(after, before)
    >>> np.round(r.difference_db[:, 0, 0], 3).tolist(), r.difference_deg[:, 0, 0].tolist()
    ([-6.021, -6.021], [0.0, 90.0])
    """
    if grid not in GRIDS:
        raise AnalysisError(f"grid must be one of {', '.join(GRIDS)}, not {grid!r}")
    if sweep.n_ports != reference.n_ports:
        raise AnalysisError(f"'{sweep.name}' has {sweep.n_ports} port(s) but the reference "
                            f"'{reference.name}' has {reference.n_ports}; compare sweeps of the same device")
    notes: list[str] = []
    if not np.array_equal(sweep.z0_ohm, reference.z0_ohm):
        sweep = renormalize(sweep, reference.z0_ohm)
        notes.append(f"'{sweep.name}' was referred to the reference's impedance "
                     f"({_z0_text(reference.z0_ohm)}) before comparing")
    low = max(sweep.freq_hz[0], reference.freq_hz[0])
    high = min(sweep.freq_hz[-1], reference.freq_hz[-1])
    if low > high:
        raise AnalysisError(f"'{sweep.name}' ({_band(sweep)}) and the reference '{reference.name}' "
                            f"({_band(reference)}) share no frequencies; nothing to compare")
    same = (sweep.freq_hz.shape == reference.freq_hz.shape
            and np.allclose(sweep.freq_hz, reference.freq_hz, rtol=1e-12, atol=0.0))
    on, other = (reference, sweep) if grid == "reference" else (sweep, reference)
    if same:
        freq, s_on, s_other, interpolated = on.freq_hz, on.s, other.s, False
    else:
        tol = 1e-12 * max(abs(high), 1.0)
        inside = (on.freq_hz >= low - tol) & (on.freq_hz <= high + tol)
        if not np.any(inside):
            raise AnalysisError(f"no point of '{on.name}' lies in the band both sweeps cover "
                                f"({format_frequency(low)} to {format_frequency(high)}); compare on "
                                f"the other sweep's points")
        freq = on.freq_hz[inside]
        s_on, s_other = on.s[inside], interpolate(other.freq_hz, other.s, freq)
        interpolated = True
        notes.append(f"'{other.name}' interpolated onto the points of '{on.name}'")
        if not np.all(inside):
            notes.append(f"compared from {format_frequency(freq[0])} to {format_frequency(freq[-1])} only, "
                         f"the band both sweeps cover ({int(np.sum(~inside))} point(s) of '{on.name}' left out)")
    s_sweep, s_ref = (s_other, s_on) if grid == "reference" else (s_on, s_other)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = s_sweep / s_ref
        db = 20 * np.log10(np.abs(s_sweep)) - 20 * np.log10(np.abs(s_ref))
    zero_ref = s_ref == 0
    ratio = np.where(zero_ref, np.nan + 0j, ratio)
    db = np.where(np.isfinite(db), db, np.nan)
    deg = np.where(zero_ref | (s_sweep == 0), np.nan, np.angle(ratio, deg=True))
    # np.angle gives (−180°, 180°]; a ratio of exactly −1 lands on +180°, never −180°.
    deg = np.where(deg == -180.0, 180.0, deg)
    if np.any(zero_ref):
        notes.append(f"the reference is zero at {int(np.sum(np.any(zero_ref, axis=(1, 2))))} point(s); "
                     "no ratio there")
    return RelativeTrace(freq_hz=np.asarray(freq, float), ratio=ratio, difference=s_sweep - s_ref,
                         difference_db=db, difference_deg=deg, name=sweep.name,
                         reference_name=reference.name, grid=grid, interpolated=interpolated,
                         notes=tuple(notes))


def _z0_text(z0) -> str:
    z0 = np.atleast_1d(z0)
    values = {complex(z) for z in z0}
    text = lambda z: f"{z.real:g} Ω" if z.imag == 0 else f"{z.real:g}{z.imag:+g}j Ω"  # noqa: E731
    return text(z0[0]) if len(values) == 1 else ", ".join(text(complex(z)) for z in z0)


def _real_positive(z0, what: str) -> np.ndarray:
    z = np.asarray(z0, dtype=np.complex128)
    if np.any(z.imag != 0) or np.any(~np.isfinite(z)) or np.any(z.real <= 0):
        raise AnalysisError(f"{what} must be real and positive (got {_z0_text(z)})")
    return z.real


def chart_gamma(gamma, z0_ohm: float, chart_z0_ohm: float) -> np.ndarray:
    """A reflection measured against ``z0_ohm`` as it reads on a chart of ``chart_z0_ohm``.

    Γ' = (Γ − ρ)/(1 − ρΓ) with ρ = (Z0' − Z0)/(Z0' + Z0): the same impedance
    Z = Z0·(1 + Γ)/(1 − Γ), seen from the other reference. Opens and shorts stay where they are.

    Examples
    --------
    >>> complex(chart_gamma(0.2, 50.0, 75.0))  # a 75 Ω load: 0.2 on a 50 Ω chart, centre on 75 Ω
    0j
    """
    z0 = float(_real_positive(z0_ohm, "the sweep's reference impedance"))
    z1 = float(_real_positive(chart_z0_ohm, "the chart's reference impedance"))
    rho = (z1 - z0) / (z1 + z0)
    g = np.asarray(gamma, dtype=np.complex128)
    return (g - rho) / (1 - rho * g)


def renormalize(sweep: Sweep, z0_ohm) -> Sweep:
    """The same device's S-parameters referred to other (real) port impedances.

    For real reference impedances Z0 → Z0' per port, with ρ_i = (Z0'_i − Z0_i)/(Z0'_i + Z0_i),
    R = diag(ρ) and A = diag(√(1 − ρ_i²)):  S' = A⁻¹ (S − R)(I − R S)⁻¹ A. For one port this is
    :func:`chart_gamma`. (Power-wave renormalisation, K. Kurokawa, "Power waves and the
    scattering matrix", IEEE Trans. MTT, 1965 — from memory; checked against scikit-rf.)

    Parameters
    ----------
    sweep : Sweep
    z0_ohm : float or array_like, shape (p,)
        The new reference impedance(s), real and positive.

    Returns
    -------
    Sweep
        A new sweep; its comments say what was done.
    """
    old = _real_positive(sweep.z0_ohm, "the sweep's reference impedance")
    new = np.broadcast_to(_real_positive(z0_ohm, "the new reference impedance"), old.shape).astype(float)
    if np.array_equal(old, new):
        return sweep
    rho = (new - old) / (new + old)
    if sweep.n_ports == 1:
        s = chart_gamma(sweep.s[:, 0, 0], float(old[0]), float(new[0]))[:, None, None]
    else:
        p = sweep.n_ports
        a = np.sqrt(1 - rho ** 2)
        r = np.diag(rho).astype(np.complex128)
        # (S − R)(I − R S)⁻¹ for every frequency at once: solve X (I − R S) = (S − R) by transposes.
        lhs = np.swapaxes(np.eye(p) - r @ sweep.s, -1, -2)
        rhs = np.swapaxes(sweep.s - r, -1, -2)
        core = np.swapaxes(np.linalg.solve(lhs, rhs), -1, -2)
        s = core * (a[None, None, :] / a[None, :, None])
    return sweep.replace(s=s, z0_ohm=new.astype(np.complex128),
                         comments=tuple(sweep.comments) + (f"referred to {_z0_text(new)} (was {_z0_text(old)})",))
