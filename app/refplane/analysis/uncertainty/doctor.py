"""The calibration doctor: what went wrong with a calibration, in plain sentences with their band.

Each check looks for one way a one-port calibration commonly goes wrong (common practice at
the bench) and says so in one sentence with the frequency band it concerns:

swapped standards
    The three-term solve fits *any* assignment of three measurements to three definitions
    exactly, so the wrong one cannot be seen in a misfit. It shows in the error terms: a
    working port has small raw directivity |e00| and source match |e11| (well under 1), and a
    reflection tracking whose phase, extrapolated to 0 Hz along its (cable-delay) slope, is
    near 0° (an open and short exchanged turn every term's sign: about 180°). Every other
    assignment is solved; when one is clearly more physical than the one given, the sentence
    names the exchanged standards and the band where the other assignment fits better.
kit described wrongly (offset delay)
    With a check standard: the corrected check's phase against its definition, fitted by a
    line in frequency, is a delay (Γ turns by 2ωΔτ); it is reported when the deviation
    exceeds the uncertainty. Without one: a short or open whose definition misses a length
    (an adapter) leaves a large source match growing with frequency in the solved terms; the
    delay that makes |e11| smallest is searched for, and reported when it shrinks the source
    match at least :data:`DELAY_GAIN` times.
connector repeatability
    Steps in the error terms from one point to the next (a connector moved or was
    re-tightened during the sweep) stand out against the terms' own point-to-point scatter;
    a jump there and straight back is one stray point. Smooth ripple in the raw terms is not
    judged: a test cable's mismatch against the port ripples them legitimately, and that is
    exactly what the calibration removes (repeatability between calibrations shows as drift).
passive device with |Γ| > 1
    After correction a passive device cannot reflect more than it receives; where it reads so,
    by how much, and against the uncertainty of |Γ|.
drift
    Standards measured again later, corrected with the saved calibration, against their
    definitions and the uncertainty.
check standard
    Judged against its uncertainty (the calibration's propagated one, the check's own
    definition uncertainty and its sweep's noise), not a fixed number.

Verdict: "good" (no finding), "usable with care", or "redo it".
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep
from refplane.analysis.units import format_frequency

#: Severity of a finding, mildest first.
SEVERITIES = ("note", "care", "redo")
#: Verdict for the worst severity found.
VERDICTS = {None: "good", "note": "good", "care": "usable with care", "redo": "redo it"}
#: Factor by which a corrected offset delay must shrink the source match to be reported.
DELAY_GAIN = 2.5
#: Smallest missing delay worth reporting, seconds.
DELAY_FLOOR_S = 3e-12
#: Radius factor of a 95 % circle for a circular normal complex deviation: √(−2·ln 0.05).
K_COMPLEX = math.sqrt(-2 * math.log(0.05))
#: A deviation counts as a finding when it passes this many times its 95 % uncertainty at any
#: point, or its uncertainty at more than :data:`SHARE_OVER` of the points: with hundreds of
#: points compared, one in twenty passes its 95 % radius by chance (for a circular normal,
#: 1.8 times the radius is passed with probability 6·10⁻⁵ per point).
RATIO_ANY = 1.8
SHARE_OVER = 0.2


@dataclass(frozen=True)
class Finding:
    """One thing the doctor found.

    Attributes
    ----------
    kind : str
        "swapped", "kit delay", "repeatability", "passive above 1", "drift" or "check".
    severity : str
        "note", "care" or "redo".
    band_hz : (float, float) or None
    sentence : str
        One plain sentence, band included.
    values : dict
        Numbers behind the sentence (for JSON).
    """

    kind: str
    severity: str
    band_hz: tuple[float, float] | None
    sentence: str
    values: dict = field(default_factory=dict)

    def json(self) -> dict:
        """The finding as ``refplane correct --json`` prints it."""
        return {"kind": self.kind, "severity": self.severity,
                "band_hz": list(self.band_hz) if self.band_hz else None,
                "sentence": self.sentence, "values": dict(self.values)}


@dataclass(frozen=True)
class Diagnosis:
    """The doctor's findings and verdict; ``notes`` are passes worth saying (not findings)."""

    findings: tuple[Finding, ...]
    notes: tuple[str, ...] = ()

    @property
    def verdict(self) -> str:
        """"good", "usable with care" or "redo it"."""
        worst = max((SEVERITIES.index(f.severity) for f in self.findings), default=None)
        return VERDICTS[None if worst is None else SEVERITIES[worst]]

    def json(self) -> dict:
        """The diagnosis as ``refplane correct --json`` prints it."""
        return {"verdict": self.verdict, "findings": [f.json() for f in self.findings],
                "notes": list(self.notes)}


def _band_text(band) -> str:
    lo, hi = band
    if lo == hi:
        return f"at {format_frequency(lo)}"
    return f"from {format_frequency(lo)} to {format_frequency(hi)}"


def _bands(freq_hz: np.ndarray, mask: np.ndarray) -> list[tuple[int, int]]:
    """Runs of True in ``mask`` as (first, last) index pairs."""
    idx = np.flatnonzero(mask)
    if idx.size == 0:
        return []
    breaks = np.flatnonzero(np.diff(idx) > 1)
    starts = np.r_[idx[0], idx[breaks + 1]]
    ends = np.r_[idx[breaks], idx[-1]]
    return list(zip(starts.tolist(), ends.tolist()))


# --------------------------------------------------------------------------- swapped standards

def dc_phase_deg(freq_hz: np.ndarray, tracking: np.ndarray) -> float | None:
    """Phase of the reflection tracking extrapolated to 0 Hz along its slope, degrees.

    The unwrapped phase is fitted by a straight line over the lowest quarter of the band (at
    least 3 points) and taken at 0 Hz. None when the phase turns too much between points to
    be followed (over 90°), or the band starts above a quarter of its span (too far to
    extrapolate; an exchanged short and open then cannot be told from the terms).
    """
    f = np.asarray(freq_hz, float)
    if f.size < 3 or f[0] > 0.25 * (f[-1] - f[0]):
        return None  # too few points, or the band starts too far from 0 Hz to extrapolate
    step = np.abs(np.angle(tracking[1:] / tracking[:-1]))
    if np.max(step) > np.pi / 2:
        return None
    k = max(3, f.size // 4)
    slope, at_zero = np.polyfit(f[:k], np.unwrap(np.angle(tracking))[:k], 1)
    return float(np.degrees(np.angle(np.exp(1j * at_zero))))


def _physical_cost(terms) -> tuple[np.ndarray, float]:
    cost = np.abs(terms.directivity) + np.abs(terms.source_match) + \
        np.clip(np.abs(terms.reflection_tracking) - 1.5, 0, None)
    phase = dc_phase_deg(terms.freq_hz, terms.reflection_tracking)
    return cost, (1.0 if phase is not None and abs(phase) > 90 else 0.0)


def check_swapped(freq_hz, gm: np.ndarray, gd: np.ndarray, names: Sequence[str]) -> list[Finding]:
    """Try every assignment of the first three measurements to the short, open and load."""
    from refplane.analysis.calibration.solve import solve_one_port

    scores = {}
    for perm in itertools.permutations(range(3)):
        order = list(perm) + list(range(3, gm.shape[1]))
        try:
            terms, _ = solve_one_port(freq_hz, gm[:, order], gd)
        except AnalysisError:
            continue
        cost, penalty = _physical_cost(terms)
        scores[perm] = (cost, penalty, float(np.median(cost)) + penalty)
    given = (0, 1, 2)
    if given not in scores:
        return []
    best = min(scores, key=lambda p: scores[p][2])
    if best == given or scores[best][2] + 0.2 > scores[given][2]:
        return []
    exchanged = [names[i] for i in range(3) if best[i] != i]
    cost_g, pen_g, _ = scores[given]
    cost_b, pen_b, _ = scores[best]
    f = np.asarray(freq_hz, float)
    better = cost_b < cost_g - 0.1
    phase_reason = "the reflection tracking's phase extrapolates to about 0° at 0 Hz, as a working port's does"
    if better.any():
        runs = _bands(f, better)
        first, last = max(runs, key=lambda r: r[1] - r[0])
        band = (float(f[first]), float(f[last]))
        why = (f"the port's raw directivity and source match read {np.median(cost_b[better]):.2f} "
               f"instead of {np.median(cost_g[better]):.2f} (a working port's are well under 1)")
        if pen_g > pen_b:
            why += f", and {phase_reason}"
    else:
        band = (float(f[0]), float(f[-1]))
        why = phase_reason
    if len(exchanged) == 2:
        what = f"the {exchanged[0]} and the {exchanged[1]} look swapped"
    else:
        what = "the short, open and load look mislabelled (each file belongs to another standard)"
    where = "above " + format_frequency(band[0]) if band[0] > f[0] and band[1] == f[-1] else _band_text(band)
    sentence = f"{what[0].upper()}{what[1:]} {where}: with them exchanged {why}; check which file is which."
    return [Finding("swapped", "redo", band, sentence,
                    {"assignment": {names[i]: names[best[i]] for i in range(3)}})]


# --------------------------------------------------------------------------- kit delay

def _delay_search(freq_hz, gm, gd_fn, span_s: float = 200e-12):
    from refplane.analysis.calibration.solve import solve_one_port

    def rms_e11(d):
        try:
            terms, _ = solve_one_port(freq_hz, gm, gd_fn(d))
        except AnalysisError:
            return math.inf
        return float(np.sqrt(np.mean(np.abs(terms.source_match) ** 2)))

    grid = np.linspace(-span_s, span_s, 161)
    values = np.array([rms_e11(d) for d in grid])
    i = int(np.argmin(values))
    lo, hi = grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)]
    fine = np.linspace(lo, hi, 41)
    fine_v = np.array([rms_e11(d) for d in fine])
    j = int(np.argmin(fine_v))
    return float(fine[j]), fine_v[j], rms_e11(0.0)


def check_kit_delay(freq_hz, gm: np.ndarray, standards, names: Sequence[str]) -> list[Finding]:
    """Search a missing offset delay between the open and the short (see the module notes).

    Only the difference of the two delays can be seen this way (a delay added to both just
    moves the reference plane), so the sentence names the one that looks too short.
    """
    import dataclasses

    from refplane.analysis.calibration.standards import reflection

    f = np.asarray(freq_hz, float)
    z0 = standards.reference_z0_ohm
    std = standards.reflect("open")
    if std.data is not None or standards.reflect("short").data is not None:
        return []
    gd0 = np.stack([reflection(standards.reflect(n), f, z0, interpolate=True) for n in names], axis=1)
    k = list(names).index("open")

    def gd_fn(d):
        gd = gd0.copy()
        gd[:, k] = reflection(dataclasses.replace(std, offset_delay_s=std.offset_delay_s + d), f, z0)
        return gd

    delay, rms_best, rms_now = _delay_search(f, gm, gd_fn)
    gain = rms_now / max(rms_best, 1e-12)
    if gain < DELAY_GAIN or abs(delay) < DELAY_FLOOR_S:
        return []
    name, other = ("open", "short") if delay > 0 else ("short", "open")
    now_s = standards.reflect(name).offset_delay_s
    missing = abs(delay)
    db = lambda x: 20 * math.log10(max(x, 1e-12))  # noqa: E731
    sentence = (f"The {name}'s offset delay in the kit description looks about {missing * 1e12:.0f} ps too short "
                f"against the {other}'s (from {format_frequency(f[0])} to {format_frequency(f[-1])}): with "
                f"{(now_s + missing) * 1e12:.0f} ps instead of {now_s * 1e12:.0f} ps the port's source match would "
                f"fall from {db(rms_now):.0f} dB to {db(rms_best):.0f} dB (RMS); is an adapter's length missing "
                "from its definition?")
    return [Finding("kit delay", "redo" if gain > 10 else "care", (float(f[0]), float(f[-1])), sentence,
                    {"standard": name, "missing_delay_s": missing, "source_match_now": rms_now,
                     "source_match_corrected": rms_best})]


def check_kit_delay_from_check(chk, u_dev: np.ndarray) -> list[Finding]:
    """A reflective check standard turned against its definition by a delay."""
    f = chk.freq_hz
    use = np.abs(chk.defined) > 0.5
    if use.sum() < 3 or not np.any(chk.deviation > u_dev):
        return []
    ratio = chk.corrected[use] / chk.defined[use]
    phase = np.unwrap(np.angle(ratio))
    w2 = 4 * np.pi * f[use]
    # Γ_corrected = Γ_defined · e^(−j·2ω·Δτ): least squares through the origin in 2ω.
    delay = -float(np.sum(w2 * phase) / np.sum(w2 * w2))
    explained = np.abs(chk.corrected[use] - chk.defined[use] * np.exp(-1j * w2 * delay))
    if abs(delay) < DELAY_FLOOR_S or np.max(explained) > 0.5 * np.max(chk.deviation[use]):
        return []
    # Reading less delay than defined puts the calibrated plane beyond the true one: the short's
    # and open's definitions then miss that much line (and the reverse).
    how = "shorter" if delay < 0 else "longer"
    wrong = "too short (an adapter's length left out of their definitions?)" if delay < 0 else "too long"
    sentence = (f"The check standard {chk.name!r} reads as if its line were {abs(delay) * 1e12:.0f} ps {how} than "
                f"defined (from {format_frequency(f[0])} to {format_frequency(f[-1])}): the short's and open's "
                f"offset delays in the kit description look {abs(delay) * 1e12:.0f} ps {wrong}.")
    return [Finding("kit delay", "care", (float(f[0]), float(f[-1])), sentence,
                    {"standard": "short and open", "missing_delay_s": -delay, "check": chk.name})]


# --------------------------------------------------------------------------- repeatability

def check_repeatability(terms, *, floor: float = 0.004, factor: float = 10.0) -> list[Finding]:
    """Steps from one point to the next in the error terms (connector moved during the sweep).

    The tracking is followed as the logarithm of its point-to-point ratio, ln(t_(i+1)/t_i) (a
    cable's delay makes that nearly constant, a step makes one point stand out, a stray point
    two of opposite sign), directivity and source match
    as plain differences; each against its running median over 7 points. A step is reported
    above ``factor`` times the robust scatter and above ``floor`` (0.004 ≈ 0.035 dB). A sweep
    whose tracking turns more than 90° between points somewhere is too sparse to judge.
    """
    from scipy.ndimage import median_filter

    f = terms.freq_hz
    if f.size < 9:
        return []
    t = terms.reflection_tracking
    out = []
    ratio = t[1:] / t[:-1]
    if np.max(np.abs(np.angle(ratio))) > np.pi / 2:
        # Over 90° per point somewhere: too few points per turn to tell a step from the trace.
        return []
    # Log of the ratio with its phase unwrapped along the band: steps near ±180° stay continuous.
    log_ratio = np.log(np.abs(ratio)) + 1j * np.unwrap(np.angle(ratio))
    for label, d in (("reflection tracking", log_ratio),
                     ("directivity", np.diff(terms.directivity) / np.abs(t[1:])),
                     ("source match", np.diff(terms.source_match))):
        smooth = median_filter(d.real, 7, mode="nearest") + 1j * median_filter(d.imag, 7, mode="nearest")
        jump = np.abs(d - smooth)
        spread = np.concatenate([(d - smooth).real, (d - smooth).imag])
        sigma = 1.4826 * np.median(np.abs(spread - np.median(spread)))
        limit = max(factor * sigma, floor)
        big = np.flatnonzero(jump > limit)
        if big.size == 0:
            continue
        i = int(big[np.argmax(jump[big])])
        if label == "reflection tracking":
            dev = d[i] - smooth[i]
            size = f"about {abs(dev.real) * 20 / math.log(10):.2f} dB and {abs(math.degrees(dev.imag)):.0f}°"
        else:
            size = f"{abs(jump[i]):.3f}"
        extra = f" (and {big.size - 1} more)" if big.size > 1 else ""
        # A jump straight back at the next point is one stray point, not a step.
        neighbours = [j for j in (i - 1, i + 1) if 0 <= j < d.size]
        spike = any(jump[j] > limit and np.real((d[j] - smooth[j]) * np.conj(d[i] - smooth[i])) < 0
                    for j in neighbours)
        if spike:
            k = i + 1 if (i + 1 in neighbours and jump[i + 1] > limit) else i
            band = (float(f[k]), float(f[k]))
            sentence = (f"The {label} has a stray point at {format_frequency(f[k])}, off by {size}{extra}: "
                        "something disturbed that point of a standard's sweep (a touched cable or connector, "
                        "interference); measure the standards again, keeping everything still.")
        else:
            band = (float(f[i]), float(f[i + 1]))
            sentence = (f"The {label} steps by {size} between {format_frequency(band[0])} and "
                        f"{format_frequency(band[1])}{extra}: a connector or cable moved while the standards "
                        "were swept; tighten it to its torque, keep the cable still and measure the standards "
                        "again.")
        out.append(Finding("repeatability", "care", band, sentence,
                           {"term": label, "step": float(jump[i]), "steps": int(big.size)}))
    return out


# --------------------------------------------------------------------------- passive devices

def magnitude_u(gamma, cov) -> np.ndarray:
    """Expanded (k = 2) uncertainty of |Γ| from Γ's covariance: 2·√(r̂ᵀ·C·r̂), r̂ = Γ/|Γ|."""
    g = np.asarray(gamma, complex)
    mag = np.where(np.abs(g) > 0, np.abs(g), 1.0)
    r = np.stack([g.real / mag, g.imag / mag], axis=-1)
    return 2 * np.sqrt(np.clip(np.einsum("ni,nij,nj->n", r, cov, r), 0, None))


def check_passive(name: str, freq_hz, gamma, cov) -> list[Finding]:
    """A passive device reading |Γ| > 1 after correction: where, by how much, against U."""
    f = np.asarray(freq_hz, float)
    mag = np.abs(gamma)
    over = mag > 1
    if not over.any():
        return []
    u = magnitude_u(gamma, cov)
    excess = mag - 1
    beyond = over & (excess > u)
    out = []
    # The worst point: among those beyond their uncertainty when there are any.
    pool = beyond if beyond.any() else over
    i = int(np.argmax(np.where(pool, excess, -np.inf)))
    runs = _bands(f, over)
    first, last = runs[0][0], runs[-1][1]
    band = (float(f[first]), float(f[last]))
    if beyond.any():
        sentence = (f"{name} reads |Γ| up to {mag[i]:.3f} {_band_text(band)}, more than a passive device can "
                    f"(above 1 by {excess[i]:.3f} at {format_frequency(f[i])}, beyond its uncertainty "
                    f"±{u[i]:.3f}): the calibration is off there, or the device is not passive.")
        sev = "redo" if excess[i] > 3 * max(u[i], 1e-6) else "care"
    else:
        sentence = (f"{name} reads |Γ| up to {mag[i]:.3f} {_band_text(band)}, just above 1 but within its "
                    f"uncertainty (±{u[i]:.3f}).")
        sev = "note"
    out.append(Finding("passive above 1", sev, band, sentence,
                       {"device": name, "max_gamma_mag": float(mag[i]), "u_gamma_mag": float(u[i]),
                        "at_hz": float(f[i])}))
    return out


# --------------------------------------------------------------------------- drift and checks

def deviation_u(cal_u, freq_hz, defined, *, noise_sigma: float = 0.0, definition_cov=None) -> np.ndarray:
    """95 % radius of a corrected standard's complex deviation from its definition.

    The calibration's propagated covariance at the standard's Γ, plus the standard's own
    definition covariance and its sweep's noise; the radius of a circular normal's 95 % circle
    is √(−2·ln 0.05) ≈ 2.45 σ per axis (JCGM 102 for a bivariate quantity).
    """
    n = np.asarray(freq_hz).size
    cov = np.zeros((n, 2, 2)) if cal_u is None else cal_u.on(freq_hz).gamma_cov(defined)
    if definition_cov is not None:
        cov = cov + definition_cov
    var = np.trace(cov, axis1=1, axis2=2) / 2 + noise_sigma**2
    return K_COMPLEX * np.sqrt(var)


def check_drift(name: str, freq_hz, corrected, defined, u_dev, *, most: int = 3) -> list[Finding]:
    """A re-measured standard against its definition through the saved calibration, per band.

    Bands are the runs of points beyond the uncertainty (runs a few points apart are joined);
    the ``most`` worst are reported, one sentence each.
    """
    f = np.asarray(freq_hz, float)
    dev = np.abs(corrected - defined)
    ratio = dev / np.maximum(u_dev, 1e-9)
    bad = ratio > 1
    if not (np.any(ratio > RATIO_ANY) or bad.mean() > SHARE_OVER):
        return []
    runs = _bands(f, bad)
    joined = [list(runs[0])]
    for first, last in runs[1:]:
        if first - joined[-1][1] <= 5:
            joined[-1][1] = last
        else:
            joined.append([first, last])
    joined.sort(key=lambda r: -np.max(ratio[r[0]:r[1] + 1]))
    out = []
    for first, last in joined[:most]:
        i = first + int(np.argmax(ratio[first:last + 1]))
        if ratio[i] <= 1:
            continue
        band = (float(f[first]), float(f[last]))
        sentence = (f"The calibration has moved {_band_text(band)}: the re-measured {name} reads up to "
                    f"{dev[i]:.3f} away from its definition there, {ratio[i]:.1f} times its uncertainty "
                    f"(±{u_dev[i]:.3f}); calibrate again before trusting readings in that band.")
        out.append(Finding("drift", "redo" if ratio[i] > 3 else "care", band, sentence,
                           {"standard": name, "max_deviation": float(dev[i]), "u": float(u_dev[i]),
                            "at_hz": float(f[i])}))
    return out


def check_against_u(chk, u_dev) -> tuple[list[Finding], str | None]:
    """A check standard judged against its uncertainty: (findings, pass note)."""
    dev = chk.deviation
    ratio = dev / np.maximum(u_dev, 1e-9)
    i = int(np.argmax(ratio))
    if not (ratio[i] > RATIO_ANY or np.mean(ratio > 1) > SHARE_OVER):
        j = int(np.argmax(dev))
        return [], (f"check standard {chk.name!r} passes: largest deviation {dev[j]:.4f} at "
                    f"{format_frequency(chk.freq_hz[j])}, within its uncertainty ±{u_dev[j]:.4f}")
    runs = _bands(chk.freq_hz, ratio > 1)
    band = (float(chk.freq_hz[runs[0][0]]), float(chk.freq_hz[runs[-1][1]]))
    sentence = (f"The check standard {chk.name!r} fails {_band_text(band)}: it reads {dev[i]:.4f} from its "
                f"definition at {format_frequency(chk.freq_hz[i])}, {ratio[i]:.1f} times its uncertainty "
                f"(±{u_dev[i]:.4f}).")
    return [Finding("check", "redo" if ratio[i] > 3 else "care", band, sentence,
                    {"standard": chk.name, "max_deviation": float(dev[i]), "u": float(u_dev[i]),
                     "at_hz": float(chk.freq_hz[i])})], None


# --------------------------------------------------------------------------- all together

def _definition_cov(std, freq_hz, z0):
    from refplane.analysis.uncertainty.calprop import _field_shift, definition_uncertainties

    cov = np.zeros((np.asarray(freq_hz).size, 2, 2))
    for name, u in definition_uncertainties(std).items():
        d = _field_shift(std, name, u, freq_hz, z0)
        v = np.stack([d.real, d.imag], axis=-1)
        cov += v[:, :, None] * v[:, None, :]
    return cov


def diagnose(cal, *, measured: Mapping[str, Sweep] | None = None, standards=None,
             checks: Mapping[str, Sweep] | None = None, devices: Sequence[tuple[str, Sweep]] = (),
             recheck: Mapping[str, Sweep] | None = None) -> Diagnosis:
    """Run every check that the inputs allow.

    Parameters
    ----------
    cal : Calibration
        The calibration (its ``uncertainty`` is used where present).
    measured : mapping name → Sweep, optional
        The raw standards it was solved from (swapped standards, kit delay).
    standards : StandardSet, optional
        Their definitions (default ideal).
    checks : mapping name → Sweep, optional
        Raw check-standard sweeps (the calibration's own ``checks`` are used otherwise).
    devices : sequence of (name, corrected Sweep)
        Corrected devices, taken as passive.
    recheck : mapping name → Sweep, optional
        Standards measured again later, to compare through ``cal`` (drift).
    """
    from refplane.analysis.readings.markers import interpolate
    from refplane.analysis.calibration.standards import StandardSet, grids_match, reflection
    from refplane.analysis.uncertainty.noise import trace_noise

    std = standards or StandardSet()
    z0 = std.reference_z0_ohm
    findings: list[Finding] = []
    notes: list[str] = []
    cal_u = cal.uncertainty
    if measured is not None:
        names = std.solve_names
        f = np.asarray(measured["short"].freq_hz, float)
        gm = np.stack([measured[n].s[:, 0, 0] if grids_match(measured[n].freq_hz, f)
                       else interpolate(measured[n].freq_hz, measured[n].s[:, 0, 0], f) for n in names], axis=1)
        gd = np.stack([reflection(std.reflect(n), f, z0, interpolate=True) for n in names], axis=1)
        swapped = check_swapped(f, gm, gd, names)
        findings += swapped
        if not swapped:
            findings += check_kit_delay(f, gm, std, names)
    findings += check_repeatability(cal.port1)
    for chk in cal.checks:
        sigma = 0.0
        if checks and chk.name in checks:
            sigma = trace_noise(checks[chk.name].s[:, 0, 0]) if checks[chk.name].n_points >= 5 else 0.0
        defcov = _definition_cov(std.reflect(chk.name), chk.freq_hz, z0) if standards is not None else None
        u_dev = deviation_u(cal_u, chk.freq_hz, chk.defined, noise_sigma=sigma, definition_cov=defcov)
        found, note = check_against_u(chk, u_dev)
        findings += found
        if note:
            notes.append(note)
        findings += check_kit_delay_from_check(chk, u_dev)
    for name, sweep in devices:
        g = sweep.s[:, 0, 0]
        cov = np.zeros((g.size, 2, 2))
        if cal_u is not None and grids_match(sweep.freq_hz, cal_u.freq_hz):
            cov = cal_u.gamma_cov(g)
        elif cal_u is not None:
            cov = cal_u.on(sweep.freq_hz).gamma_cov(g)
        if g.size >= 5:
            cov = cov + trace_noise(g) ** 2 * np.eye(2)
        findings += check_passive(name, sweep.freq_hz, g, cov)
    for name, sweep in (recheck or {}).items():
        from refplane.analysis.calibration.solve import correct

        corrected = correct(cal, sweep, interpolate=True).sweep
        f = corrected.freq_hz
        definition = reflection(std.reflect(name), f, z0, interpolate=True)
        # The same physical standard: its definition's error cancels (the calibration absorbed
        # it), so only the noise of the first and of the new measurement count, each divided
        # by the tracking's magnitude to refer it to the corrected reading.
        sigma = trace_noise(sweep.s[:, 0, 0]) if sweep.n_points >= 5 else 0.0
        sigma0 = float(cal_u.noise.get(name, 0.0)) if cal_u is not None else 0.0
        track = float(np.median(np.abs(cal.port1.reflection_tracking)))
        u_dev = deviation_u(None, f, definition, noise_sigma=math.hypot(sigma, sigma0) / track)
        found = check_drift(name, f, corrected.s[:, 0, 0], definition, u_dev)
        findings += found
        if not found:
            dev = np.abs(corrected.s[:, 0, 0] - definition)
            j = int(np.argmax(dev))
            notes.append(f"the re-measured {name} agrees with the saved calibration within its uncertainty "
                         f"(largest deviation {dev[j]:.4f} at {format_frequency(f[j])}, ±{u_dev[j]:.4f})")
    return Diagnosis(tuple(findings), tuple(notes))
