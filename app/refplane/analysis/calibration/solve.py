"""Offline calibration: error terms from measured standards, applied to saved sweeps.

One port
--------
The three-term error model of a reflection measurement (network-analyzer calibration
literature, e.g. D. Rytting's papers on error models — from memory)::

    Γm = e00 + e10e01·Γ / (1 − e11·Γ)

with directivity e00, source match e11 and reflection tracking e10e01. Cross-multiplied it is
linear in three unknowns a, b, c (one equation per standard k, Γk known, Γmk measured)::

    Γk·a + b − Γk·Γmk·c = Γmk,      e00 = b,  e11 = −c,  e10e01 = a − b·c

Three standards give a 3 × 3 system per frequency, solved in closed form (Cramer's rule on
whole arrays, no loop over frequencies); four or more are solved in the least-squares sense,
every frequency at once (batched QR). Correction inverts the model::

    Γ = (Γm − e00) / (e10e01 + e11·(Γm − e00))

Two ports (enhanced response)
-----------------------------
With a through measured between port 1 and port 2, and port 1's one-port terms known, the
forward transmission is corrected for tracking e10e32, leakage e30 (from an optional isolation
measurement, both ports terminated) and port 1's source match. The forward error model of a
two-port measurement (same literature) is::

    S21m = e30 + e10e32·S21 / ((1 − e11·S11)(1 − e22·S22) − e11·e22·S21·S12)

where e22 is port 2's load match. Writing S11' = S11 + S21·S12·e22/(1 − e22·S22) — the DUT's
input reflection with port 2's match behind it, which is exactly what the one-port correction
of S11m gives — the denominator factors into (1 − e11·S11')(1 − e22·S22). Hence::

    S21 = (S21m − e30) / e10e32 · (1 − e11·S11') · (1 − e22·S22)

The last factor needs the DUT's S22, which a one-path measurement does not have, so the
correction applies the rest: ``S21 ≈ (S21m − e30)/e10e32 · (1 − e11·S11')``. **What remains
uncorrected is port 2's load match:** an error factor 1/(1 − e22·S22) on S21, and the term
S21·S12·e22/(1 − e22·S22) left in S11. It is small when the DUT's output is well matched or
port 2 is padded. From the through (known S11t, S21t, S22t), e22 and the tracking follow::

    S11't  = one-port corrected S11m of the through
    e22    = (S11't − S11t) / (S21t·S12t + S22t·(S11't − S11t))
    e10e32 = (S21m_t − e30) · (1 − e11·S11't) · (1 − e22·S22t) / S21t

e22 is reported (it tells how big the uncorrected part can be) but not applied.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.calibration.standards import StandardSet, grids_match, reflection, through_s
from refplane.analysis.sweep import Sweep

#: |e00| above this (−20 dB) is reported as poor directivity. Common practice (from memory): a
#: reflection bridge and test cable in good order show raw directivity better than about 20 dB.
POOR_DIRECTIVITY = 0.1
#: A check standard reading further than this from its definition (|ΔΓ|) gets a warning.
CHECK_TOLERANCE = 0.05
#: Least-squares residual (root-mean-square |ΔΓm|) above this gets a warning.
RESIDUAL_TOLERANCE = 0.02


# --------------------------------------------------------------------------- the one-port solve

@dataclass(frozen=True, eq=False)
class OnePortTerms:
    """The three error terms of one port, one complex value per frequency.

    Attributes
    ----------
    freq_hz : ndarray, shape (n,)
    directivity : ndarray, shape (n,)
        e00.
    source_match : ndarray, shape (n,)
        e11.
    reflection_tracking : ndarray, shape (n,)
        e10e01.
    """

    freq_hz: np.ndarray
    directivity: np.ndarray
    source_match: np.ndarray
    reflection_tracking: np.ndarray

    def correct(self, gamma_measured) -> np.ndarray:
        """Corrected reflection from raw reflection(s), shape (n,) or (n, k) for k devices."""
        gm = np.asarray(gamma_measured, dtype=np.complex128)
        extra = (slice(None),) + (None,) * (gm.ndim - 1)
        d = gm - self.directivity[extra]
        return d / (self.reflection_tracking[extra] + self.source_match[extra] * d)

    def measure(self, gamma) -> np.ndarray:
        """What the analyzer would read for a true reflection ``gamma`` (the forward model)."""
        g = np.asarray(gamma, dtype=np.complex128)
        extra = (slice(None),) + (None,) * (g.ndim - 1)
        return self.directivity[extra] + self.reflection_tracking[extra] * g / (1 - self.source_match[extra] * g)

    def on(self, freq_hz: np.ndarray) -> "OnePortTerms":
        """The terms interpolated (linearly, real and imaginary parts) onto other frequencies."""
        from refplane.analysis.readings.markers import interpolate

        return OnePortTerms(np.asarray(freq_hz, dtype=float),
                            *(interpolate(self.freq_hz, t, freq_hz) for t in
                              (self.directivity, self.source_match, self.reflection_tracking)))


def solve_one_port(freq_hz, measured, defined) -> tuple[OnePortTerms, np.ndarray]:
    """Solve the three-term error model from k ≥ 3 standards at every frequency at once.

    Parameters
    ----------
    freq_hz : array_like, shape (n,)
    measured : array_like, shape (n, k)
        Raw reflection of each standard.
    defined : array_like, shape (n, k)
        Known (defined) reflection of each standard.

    Returns
    -------
    terms : OnePortTerms
    residual : ndarray, shape (n,)
        Root-mean-square misfit of the k equations (zero for three standards).

    Raises
    ------
    AnalysisError
        Fewer than three standards, or standards that cannot tell the terms apart at some
        frequency (two alike).

    Examples
    --------
    >>> import numpy as np
    >>> f = np.array([1e9]); g = np.array([[-1, 1, 0]], complex)
    >>> terms, _ = solve_one_port(f, 0.1 + 0.8 * g / (1 - 0.2 * g), g)
    >>> complex(terms.directivity[0]), complex(terms.source_match[0])
    ((0.1+0j), (0.2+0j))
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    gm = np.asarray(measured, dtype=np.complex128)
    gd = np.asarray(defined, dtype=np.complex128)
    if gm.ndim != 2 or gm.shape != gd.shape or gm.shape[0] != f.size:
        raise AnalysisError("measured and defined reflections must both be (frequencies × standards)")
    k = gm.shape[1]
    if k < 3:
        raise AnalysisError(f"a one-port calibration needs at least 3 standards, {k} given")
    if k == 3:
        a, b, c = _cramer3(gd, gm)
        residual = np.zeros(f.size)
    else:
        a, b, c, residual = _least_squares(gd, gm)
    terms = OnePortTerms(f, b, -c, a - b * c)
    bad = ~(np.isfinite(a) & np.isfinite(b) & np.isfinite(c)) | (terms.reflection_tracking == 0)
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise AnalysisError(f"the standards do not determine the error terms at {_hz(f[i])} "
                            "(two of them read the same there)")
    return terms, residual


def _cramer3(gd: np.ndarray, gm: np.ndarray):
    # Rows (Γk, 1, −Γk·Γmk) · (a, b, c) = Γmk for k = 0, 1, 2, solved on whole arrays.
    g0, g1, g2 = gd.T
    m0, m1, m2 = gm.T
    p0, p1, p2 = -g0 * m0, -g1 * m1, -g2 * m2
    det = g0 * (p2 - p1) - (g1 * p2 - g2 * p1) + p0 * (g1 - g2)
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / det
        a = (m0 * (p2 - p1) - (m1 * p2 - m2 * p1) + p0 * (m1 - m2)) * inv
        b = (g0 * (m1 * p2 - m2 * p1) - m0 * (g1 * p2 - g2 * p1) + p0 * (g1 * m2 - g2 * m1)) * inv
        c = (g0 * (m2 - m1) - (g1 * m2 - g2 * m1) + m0 * (g1 - g2)) * inv
    return a, b, c


def _least_squares(gd: np.ndarray, gm: np.ndarray):
    system = np.stack([gd, np.ones_like(gd), -gd * gm], axis=-1)  # (n, k, 3)
    q, r = np.linalg.qr(system)  # batched over frequency
    rhs = np.conj(np.swapaxes(q, -1, -2)) @ gm[:, :, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        singular = np.abs(np.diagonal(r, axis1=1, axis2=2)).min(axis=1) <= 1e-14 * np.abs(r).max(axis=(1, 2))
    x = np.full((gd.shape[0], 3), np.nan + 0j)
    ok = ~singular
    if np.any(ok):
        x[ok] = np.linalg.solve(r[ok], rhs[ok])[:, :, 0]
    fit = (system @ x[:, :, None])[:, :, 0]
    residual = np.sqrt(np.mean(np.abs(fit - gm) ** 2, axis=1))
    return x[:, 0], x[:, 1], x[:, 2], residual


# --------------------------------------------------------------------------- two-port terms

@dataclass(frozen=True, eq=False)
class TransmissionTerms:
    """Forward transmission error terms from a through (and optional isolation) measurement.

    Attributes
    ----------
    transmission_tracking : ndarray, shape (n,)
        e10e32.
    isolation : ndarray, shape (n,)
        e30, the port-to-port leakage (zeros when no isolation measurement was given).
    load_match : ndarray, shape (n,)
        e22, port 2's load match, estimated from the through. Reported, **not** corrected.
    """

    transmission_tracking: np.ndarray
    isolation: np.ndarray
    load_match: np.ndarray

    def on(self, freq_from: np.ndarray, freq_hz: np.ndarray) -> "TransmissionTerms":
        """The terms interpolated from ``freq_from`` onto ``freq_hz``."""
        from refplane.analysis.readings.markers import interpolate

        return TransmissionTerms(*(interpolate(freq_from, t, freq_hz) for t in
                                   (self.transmission_tracking, self.isolation, self.load_match)))


def solve_transmission(port1: OnePortTerms, through_measured: np.ndarray, through_defined: np.ndarray,
                       isolation_s21: np.ndarray | None = None) -> TransmissionTerms:
    """Transmission tracking, leakage and port-2 match from a measured through.

    Parameters
    ----------
    port1 : OnePortTerms
        Port 1's terms, on the same frequencies.
    through_measured, through_defined : ndarray, shape (n, 2, 2)
        Raw and known S of the through.
    isolation_s21 : ndarray, shape (n,), optional
        Raw S21 with both ports terminated (the leakage e30).
    """
    tm = np.asarray(through_measured, dtype=np.complex128)
    td = np.asarray(through_defined, dtype=np.complex128)
    e30 = np.zeros(tm.shape[0], complex) if isolation_s21 is None else np.asarray(isolation_s21, complex)
    s11t, s21t, s12t, s22t = td[:, 0, 0], td[:, 1, 0], td[:, 0, 1], td[:, 1, 1]
    if np.any(s21t == 0):
        raise AnalysisError("the through's definition has no transmission")
    s11c = port1.correct(tm[:, 0, 0])
    d = s11c - s11t
    e22 = d / (s21t * s12t + s22t * d)
    e10e32 = (tm[:, 1, 0] - e30) * (1 - port1.source_match * s11c) * (1 - e22 * s22t) / s21t
    if np.any(np.abs(e10e32) == 0) or not np.all(np.isfinite(e10e32)):
        raise AnalysisError("the through measurement shows no transmission at some frequency")
    return TransmissionTerms(e10e32, e30, e22)


# --------------------------------------------------------------------------- the calibration

@dataclass(frozen=True, eq=False)
class CheckResult:
    """A check standard after correction compared with its definition."""

    name: str
    freq_hz: np.ndarray
    corrected: np.ndarray
    defined: np.ndarray

    @property
    def deviation(self) -> np.ndarray:
        """|Γcorrected − Γdefined| at each frequency."""
        return np.abs(self.corrected - self.defined)

    @property
    def worst(self) -> tuple[float, float]:
        """(largest deviation, frequency in Hz where it occurs)."""
        i = int(np.argmax(self.deviation))
        return float(self.deviation[i]), float(self.freq_hz[i])

    def summary(self) -> str:
        """One plain line for reports."""
        dev, at = self.worst
        return f"check standard {self.name!r}: largest deviation |ΔΓ| = {dev:.4f} at {_hz(at)}"


@dataclass(frozen=True, eq=False)
class Calibration:
    """Error terms with what is known about how good they are.

    Attributes
    ----------
    freq_hz : ndarray, shape (n,)
    reference_z0_ohm : float
        The impedance corrected results are referred to.
    port1 : OnePortTerms
    transmission : TransmissionTerms or None
    residual : ndarray, shape (n,)
        Least-squares misfit (zeros with three standards).
    warnings : tuple of str
        Plain sentences about the standards and the result.
    quality : str
        "good", "fair" or "poor".
    verdict : str
        One plain sentence summing up ``quality``.
    description : tuple of str
        How it was made (standards, files), for headers of corrected files.
    checks : tuple of CheckResult
    uncertainty : CalibrationUncertainty or None
        Residual-term covariance propagated from the standards
        (:mod:`refplane.analysis.uncertainty.calprop`), when it was worked out.
    """

    freq_hz: np.ndarray
    reference_z0_ohm: float
    port1: OnePortTerms
    transmission: TransmissionTerms | None = None
    residual: np.ndarray | None = None
    warnings: tuple[str, ...] = ()
    quality: str = "good"
    verdict: str = ""
    description: tuple[str, ...] = ()
    checks: tuple[CheckResult, ...] = field(default_factory=tuple)
    uncertainty: object | None = None

    @property
    def n_points(self) -> int:
        """Number of frequencies."""
        return int(self.freq_hz.size)


def _hz(f: float) -> str:
    from refplane.analysis.units import format_frequency

    return format_frequency(float(f))


def _align(named: Sequence[tuple[str, Sweep]], freq_hz: np.ndarray, interpolate: bool,
           warnings: list[str]) -> list[np.ndarray]:
    """S of each sweep on ``freq_hz``: as is when the grid matches, else interpolated or refused."""
    from refplane.analysis.readings.markers import interpolate as interp

    out = []
    for name, sw in named:
        if grids_match(sw.freq_hz, freq_hz):
            out.append(np.asarray(sw.s))
            continue
        where = sw.source or sw.name
        if not interpolate:
            raise AnalysisError(
                f"the {name} measurement has {sw.n_points} points from {_hz(sw.freq_hz[0])} to "
                f"{_hz(sw.freq_hz[-1])}, the others {freq_hz.size} from {_hz(freq_hz[0])} to "
                f"{_hz(freq_hz[-1])}; measure on the same frequencies or allow interpolation",
                file=where)
        if freq_hz[0] < sw.freq_hz[0] * (1 - 1e-12) or freq_hz[-1] > sw.freq_hz[-1] * (1 + 1e-12):
            raise AnalysisError(f"the {name} measurement does not cover {_hz(freq_hz[0])} to "
                                f"{_hz(freq_hz[-1])}; Refplane does not extrapolate", file=where)
        out.append(interp(sw.freq_hz, sw.s, np.clip(freq_hz, sw.freq_hz[0], sw.freq_hz[-1])))
        warnings.append(f"the {name} measurement was interpolated onto the short's {freq_hz.size} "
                        "frequencies; results between measured points are less certain")
    return out


def calibrate(measured: Mapping[str, Sweep], standards: StandardSet | None = None, *,
              through: Sweep | None = None, isolation: Sweep | None = None,
              checks: Mapping[str, Sweep] | None = None, interpolate: bool = False) -> Calibration:
    """Solve the error terms from measured standards.

    Parameters
    ----------
    measured : mapping of name → Sweep
        "short", "open" and "load" (port 1 reflection is used), plus one entry per
        ``standards.additional`` name to use more than three standards (least squares).
    standards : StandardSet, optional
        Definitions; ideal standards when omitted.
    through : Sweep, optional
        A 2-port measurement of the through, for transmission correction.
    isolation : Sweep, optional
        A 2-port measurement with both ports terminated (leakage); needs ``through``.
    checks : mapping of name → Sweep, optional
        Measured check standards defined in ``standards.checks``; compared after correction.
    interpolate : bool
        Allow measurements (and data-file definitions) on other frequencies than the short's,
        interpolated onto the short's frequencies with a warning. Off by default: mismatched
        frequencies are refused.

    Returns
    -------
    Calibration
    """
    std = standards or StandardSet()
    warnings: list[str] = []
    names = std.solve_names
    missing = [n for n in names if n not in measured]
    if missing:
        raise AnalysisError(f"no measurement given for: {', '.join(missing)}")
    unknown = sorted(set(measured) - set(names))
    if unknown:
        raise AnalysisError(f"measurement(s) {', '.join(unknown)} have no definition; add them to the "
                            "standards file's 'additional' section")
    if isolation is not None and through is None:
        raise AnalysisError("an isolation measurement is only used together with a through")
    for label, sw in [*( (n, measured[n]) for n in names), ("through", through), ("isolation", isolation)]:
        if sw is not None and not isinstance(sw, Sweep):
            raise AnalysisError(f"the {label} measurement is not a sweep")
    for label, sw in (("through", through), ("isolation", isolation)):
        if sw is not None and sw.n_ports < 2:
            raise AnalysisError(f"the {label} measurement needs 2 ports, this one has {sw.n_ports}",
                                file=sw.source or sw.name)
    freq = np.asarray(measured["short"].freq_hz)
    z0 = std.reference_z0_ohm
    sweeps = _align([(n, measured[n]) for n in names], freq, interpolate, warnings)
    gm = np.stack([s[:, 0, 0] for s in sweeps], axis=1)
    gd = np.stack([_defined(std.reflect(n), n, freq, z0, interpolate, warnings) for n in names], axis=1)
    _warn_inputs(names, gm, gd, freq, warnings)
    terms, residual = solve_one_port(freq, gm, gd)

    transmission = None
    if through is not None:
        pair = [("through", through)] + ([("isolation", isolation)] if isolation is not None else [])
        aligned = _align(pair, freq, interpolate, warnings)
        td = _through_defined(std, freq, z0, interpolate, warnings)
        iso = aligned[1][:, 1, 0] if isolation is not None else None
        transmission = solve_transmission(terms, aligned[0][:, :2, :2], td, iso)

    check_results = []
    for name, sw in (checks or {}).items():
        definition = std.reflect(name)
        if name in names:
            raise AnalysisError(f"{name!r} is used in the solve; a check standard must be a separate one")
        aligned = _align([(f"check {name!r}", sw)], freq, interpolate, warnings)[0]
        check_results.append(CheckResult(name, freq, terms.correct(aligned[:, 0, 0]),
                                         _defined(definition, name, freq, z0, interpolate, warnings)))

    _warn_result(terms, residual, transmission, check_results, freq, warnings)
    quality, verdict = _verdict(warnings)
    description = (f"standards: {std.name}" + (f" ({std.source})" if std.source else ""),
                   *(f"{n}: {std.reflect(n).describe()}; measured {_where(measured[n])}" for n in names))
    if through is not None:
        description += (f"through: {std.through.describe()}; measured {_where(through)}",)
    if isolation is not None:
        description += (f"isolation: measured {_where(isolation)}",)
    return Calibration(freq, z0, terms, transmission, residual, tuple(dict.fromkeys(warnings)),
                       quality, verdict, description, tuple(check_results))


def _where(sw: Sweep) -> str:
    return sw.source or sw.name


def _defined(definition, name, freq, z0, interpolate, warnings) -> np.ndarray:
    if definition.data is not None and not grids_match(definition.data.freq_hz, freq) and interpolate:
        warnings.append(f"the {name} definition file was interpolated onto the measured frequencies")
    return reflection(definition, freq, z0, interpolate=interpolate)


def _through_defined(std: StandardSet, freq, z0, interpolate, warnings) -> np.ndarray:
    d = std.through
    if d.data is not None and not grids_match(d.data.freq_hz, freq) and interpolate:
        warnings.append("the through definition file was interpolated onto the measured frequencies")
    return through_s(d, freq, z0, interpolate=interpolate)


# --------------------------------------------------------------------------- plausibility checks

def _warn_inputs(names, gm: np.ndarray, gd: np.ndarray, freq: np.ndarray, warnings: list[str]) -> None:
    # Identical or nearly identical readings: the same file chosen twice, or a standard not
    # changed between measurements. Compared relative to how far apart the definitions are.
    for i, j in itertools.combinations(range(len(names)), 2):
        apart_def = np.abs(gd[:, i] - gd[:, j])
        apart_meas = np.abs(gm[:, i] - gm[:, j])
        if np.all(apart_meas == 0):
            raise AnalysisError(f"the {names[i]} and {names[j]} measurements are identical; "
                                "the same file was probably chosen twice")
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(apart_def > 0.2, apart_meas / apart_def, np.inf)
        k = int(np.argmin(ratio))
        if ratio[k] < 0.1:
            warnings.append(f"the {names[i]} and {names[j]} read nearly the same (at {_hz(freq[k])}); "
                            "was the standard changed between the two measurements?")
    # The load should read near the middle between open and short (scaled by their spread).
    main = [names.index(n) for n in ("short", "open", "load")]
    mid = (gm[:, main[0]] + gm[:, main[1]]) / 2
    spread = np.abs(gm[:, main[0]] - gm[:, main[1]]) / 2
    mid_d = (gd[:, main[0]] + gd[:, main[1]]) / 2
    spread_d = np.abs(gd[:, main[0]] - gd[:, main[1]]) / 2
    with np.errstate(divide="ignore", invalid="ignore"):
        off = np.abs(gm[:, main[2]] - mid) / spread - np.abs(gd[:, main[2]] - mid_d) / spread_d
    off = np.where(np.isfinite(off), off, 0.0)
    k = int(np.argmax(off))
    if off[k] > 0.4:
        warnings.append(f"the load reads far from the reference impedance (at {_hz(freq[k])}, "
                        f"{off[k]:.2f} of the open–short spread away from where it should be); "
                        "check that it is the right load and firmly connected")


def tracking_phase_at_dc_deg(terms: OnePortTerms) -> float | None:
    """Phase of the reflection tracking extrapolated to 0 Hz, in degrees (None if unknowable).

    The tracking of a bridge and cable is |t|·e^(−j2ωτ) with a phase near 0° as f → 0
    (common practice: an analyzer's reflection path is normalised that way), so the phase,
    unwrapped and fitted by a straight line over the lowest quarter of the band, should
    extrapolate to about 0°. An open and short swapped turn every term's sign: about 180°.
    """
    f = terms.freq_hz
    phase = np.angle(terms.reflection_tracking)
    if f.size < 3:
        return float(np.degrees(phase[0])) if f[0] < 1e6 else None
    if f[0] > 0.25 * (f[-1] - f[0]):
        return None  # the band starts too far from 0 Hz to extrapolate to it
    step = np.abs(np.angle(terms.reflection_tracking[1:] / terms.reflection_tracking[:-1]))
    if np.max(step) > np.pi / 2:
        return None  # too few points per turn to follow the phase reliably
    k = max(3, f.size // 4)
    unwrapped = np.unwrap(phase)
    slope, at_zero = np.polyfit(f[:k], unwrapped[:k], 1)
    return float(np.degrees(np.angle(np.exp(1j * at_zero))))


def _warn_result(terms: OnePortTerms, residual, transmission, checks, freq, warnings: list[str]) -> None:
    phase0 = tracking_phase_at_dc_deg(terms)
    if phase0 is not None and abs(phase0) > 135:
        warnings.append(f"the short and open look swapped: the reflection tracking extrapolates to "
                        f"{phase0:.0f}° at 0 Hz, where a port normally shows about 0°; check which "
                        "file is which")
    e00 = np.abs(terms.directivity)
    k = int(np.argmax(e00))
    if e00[k] > POOR_DIRECTIVITY:
        warnings.append(f"poor directivity: raw |e00| reaches {20 * np.log10(e00[k]):.1f} dB at {_hz(freq[k])} "
                        f"(worse than {20 * np.log10(POOR_DIRECTIVITY):.0f} dB); small reflections "
                        "will be uncertain even after correction")
    e11 = np.abs(terms.source_match)
    k = int(np.argmax(e11))
    if e11[k] > 0.5:
        warnings.append(f"poor source match: |e11| reaches {20 * np.log10(e11[k]):.1f} dB at {_hz(freq[k])}")
    trk = np.abs(terms.reflection_tracking)
    k = int(np.argmin(trk))
    if trk[k] < 0.01:
        warnings.append(f"very little signal returns: reflection tracking falls to "
                        f"{20 * np.log10(trk[k]):.1f} dB at {_hz(freq[k])}; is the port connected?")
    if residual is not None and residual.size and np.max(residual) > RESIDUAL_TOLERANCE:
        k = int(np.argmax(residual))
        warnings.append(f"the standards disagree with their definitions by up to {residual[k]:.3f} "
                        f"(least-squares misfit, at {_hz(freq[k])}); check the definitions")
    if transmission is not None:
        e22 = np.abs(transmission.load_match)
        k = int(np.argmax(e22))
        if e22[k] > 0.1:
            warnings.append(f"port 2 load match reaches {20 * np.log10(e22[k]):.1f} dB at {_hz(freq[k])}; "
                            "it is not corrected, so S21 of poorly matched devices stays uncertain")
    for chk in checks:
        dev, at = chk.worst
        if dev > CHECK_TOLERANCE:
            warnings.append(f"{chk.summary()}, more than {CHECK_TOLERANCE}")


_SERIOUS = ("swapped", "nearly the same", "far from the reference", "very little signal", "check standard")


def _verdict(warnings: Sequence[str]) -> tuple[str, str]:
    if not warnings or all("interpolated" in w for w in warnings):
        return "good", "The calibration looks good: the standards read as expected."
    if any(key in w for w in warnings for key in _SERIOUS):
        return "poor", "The calibration looks poor: check the standards and measure them again."
    return "fair", "The calibration is usable, with care: see the warnings."


# --------------------------------------------------------------------------- applying it

@dataclass(frozen=True, eq=False)
class Corrected:
    """A corrected sweep and what the user should know about it."""

    sweep: Sweep
    warnings: tuple[str, ...] = ()


def correction_notes(cal: Calibration) -> tuple[str, ...]:
    """Header lines recording how a sweep was corrected."""
    lines = ["corrected offline by Refplane: one-port three-term model (directivity, source match, "
             "reflection tracking) at port 1"]
    if cal.transmission is not None:
        lines.append("S21 corrected by enhanced response: transmission tracking, port 1 source match"
                     + (", leakage subtracted" if np.any(cal.transmission.isolation != 0) else "")
                     + "; port 2 load match NOT corrected; S12 and S22 as measured (uncorrected)")
    lines.extend(cal.description)
    lines.append(f"calibration quality: {cal.quality}")
    return tuple(lines)


def correct(cal: Calibration, dut: Sweep, *, interpolate: bool = False) -> Corrected:
    """Apply a calibration to one device sweep.

    Port 1's reflection is corrected with the one-port terms. For a 2-port sweep and a
    calibration with a through, S21 is corrected too (enhanced response, see the module
    notes); S12 and S22 are kept as measured and the header says so.

    Parameters
    ----------
    cal : Calibration
    dut : Sweep
    interpolate : bool
        When the device was swept on other frequencies: interpolate the error terms onto its
        frequencies (inside the calibrated band only) with a warning, instead of refusing.
    """
    warnings: list[str] = []
    freq = np.asarray(dut.freq_hz)
    port1, trans = cal.port1, cal.transmission
    if not grids_match(freq, cal.freq_hz):
        where = dut.source or dut.name
        if not interpolate:
            raise AnalysisError(
                f"the device was swept on {dut.n_points} points from {_hz(freq[0])} to {_hz(freq[-1])}, "
                f"the calibration has {cal.n_points} from {_hz(cal.freq_hz[0])} to {_hz(cal.freq_hz[-1])}; "
                "measure on the same frequencies or allow interpolation", file=where)
        if freq[0] < cal.freq_hz[0] * (1 - 1e-12) or freq[-1] > cal.freq_hz[-1] * (1 + 1e-12):
            raise AnalysisError(f"the device's sweep goes outside the calibrated band {_hz(cal.freq_hz[0])} "
                                f"to {_hz(cal.freq_hz[-1])}; Refplane does not extrapolate", file=where)
        at = np.clip(freq, cal.freq_hz[0], cal.freq_hz[-1])
        port1 = port1.on(at)
        trans = trans.on(cal.freq_hz, at) if trans is not None else None
        warnings.append(f"{dut.name}: the error terms were interpolated onto the device's {dut.n_points} "
                        f"frequencies (calibrated on {cal.n_points}); accuracy between calibrated points is lower")
    s = np.array(dut.s)
    s[:, 0, 0] = port1.correct(dut.s[:, 0, 0])
    if dut.n_ports >= 2:
        if trans is not None:
            s[:, 1, 0] = (dut.s[:, 1, 0] - trans.isolation) / trans.transmission_tracking * \
                (1 - port1.source_match * s[:, 0, 0])
            warnings.append(f"{dut.name}: S12 and S22 are as measured (uncorrected); port 2 load match "
                            "is not corrected")
        else:
            warnings.append(f"{dut.name}: only S11 is corrected (no through was measured); the other "
                            "parameters are as measured")
    if dut.n_ports > 2:
        warnings.append(f"{dut.name}: ports beyond 2 are left as measured")
    notes = correction_notes(cal) + tuple(f"raw file comment: {c}" for c in dut.comments)
    z0 = np.array(dut.z0_ohm)
    z0[: min(2, dut.n_ports)] = cal.reference_z0_ohm
    out = dut.replace(s=s, z0_ohm=z0, comments=notes, name=f"{dut.name} (corrected)")
    return Corrected(out, tuple(warnings))


def correct_many(cal: Calibration, duts: Sequence[Sweep], *, interpolate: bool = False) -> tuple[Corrected, ...]:
    """Apply a calibration to several device sweeps (each vectorised over frequency)."""
    return tuple(correct(cal, d, interpolate=interpolate) for d in duts)


def terms_db(cal: Calibration) -> dict[str, np.ndarray]:
    """The error-term magnitudes in dB, for plots and tables (20·log10|term|)."""
    with np.errstate(divide="ignore"):
        out = {
            "directivity": 20 * np.log10(np.abs(cal.port1.directivity)),
            "source match": 20 * np.log10(np.abs(cal.port1.source_match)),
            "reflection tracking": 20 * np.log10(np.abs(cal.port1.reflection_tracking)),
        }
        if cal.transmission is not None:
            out["transmission tracking"] = 20 * np.log10(np.abs(cal.transmission.transmission_tracking))
            if np.any(cal.transmission.isolation != 0):
                out["leakage"] = 20 * np.log10(np.abs(cal.transmission.isolation))
            out["port 2 load match"] = 20 * np.log10(np.abs(cal.transmission.load_match))
    return out
