"""Matching networks for a load at one frequency, with parts one can buy and what they must carry.

Designs (Pozar, Microwave Engineering, ch. 5, worked out here in the load's own terms)
------------------------------------------------------------------------------------
Every design transforms the load Z_L to a real target R_s (the source; by default the port's
reference). Parts are always listed **from the load toward the source**.

L-networks
    *Shunt part next to the load*, then a series part: with Y_L = G + jB_L, the total
    susceptance after the shunt part must be B' = ±√(G/R_s − G²) (needs G ≤ 1/R_s), and the
    series part cancels the reactance left, X = B'/(G² + B'²). *Series part next to the load*,
    then a shunt part: the total reactance after the series part must be X' = ±√(R·R_s − R²)
    (needs R ≤ R_s), and the shunt part cancels the susceptance left, B = X'/(R² + X'²).
    Both signs of both forms are tried, so every L-network that exists for the load is found
    (two, or four when the load lies inside both circles).
Pi and T for a chosen loaded Q
    Two L sections back to back through a virtual resistance R_v: for the Pi,
    R_v = R_high/(Q² + 1) below both the source and the load's parallel resistance; for the T,
    R_v = R_low·(Q² + 1) above both the source and the load's series resistance (the usual
    definition of the loaded Q of these networks, common practice). The low-pass forms are
    designed (shunt capacitors in the Pi, series inductors in the T), which also attenuate
    a transmitter's harmonics.
Quarter-wave transformer
    A line of Z1 = √(R_s·R) a quarter wave long matches a real R; a complex load is first
    turned real by a length of line of impedance R_s (to the nearer of the voltage maximum
    or minimum).
Single shunt stub
    A line of impedance R_s from the load to where Re(Y) = 1/R_s (there cos ∠Γ = −|Γ|),
    then an open or a shorted stub of impedance R_s that cancels the susceptance left.

For each design: exact values; the nearest values of a chosen IEC 60063 series; the VSWR at
the design frequency with those rounded parts; the band around the design frequency where
VSWR < 2 with them, using the measured load across the sweep; the peak voltage across and
RMS current through each part at a given power; and the network's path on the chart from the
load to the centre (Γ points, referred to the chart's reference).

The best any lossless network could do
    The Bode–Fano limit (Fano 1950; Pozar ch. 5): for a parallel R-C load,
    ∫ ln(1/|Γ|) dω ≤ π/(RC), so no network keeps |Γ| ≤ Γm over more than
    Δω = π/(RC·ln(1/Γm)). The load's equivalent circuit is fitted around the design frequency
    (:mod:`refplane.analysis.circuits.fitting`) and its limit reported for VSWR 2 (Γm = 1/3).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from refplane.analysis.antenna.eseries import nearest
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Speed of light in vacuum, m/s (exact, SI).
_C0 = 299_792_458.0

#: A load closer than this to the target (|Γ|) needs no network.
MATCHED_GAMMA = 1e-6

#: Points drawn along each part's arc on the chart.
PATH_POINTS_PER_PART = 48

CAUTION = (
    "Matching parts at transmitter power carry high voltage and current: rate every part with "
    "a wide margin above the peak voltage and RMS current shown (and mind heating). RF exposure "
    "limits apply whenever an antenna is driven. Never connect the analyzer to a line a "
    "transmitter can feed. Follow local codes and licensed practice.")


@dataclass(frozen=True)
class Part:
    """One part of a matching network.

    Attributes
    ----------
    kind : str
        ``"L"`` (inductor), ``"C"`` (capacitor) or ``"line"`` (a length of transmission line).
    place : str
        ``"series"`` (in the signal path) or ``"shunt"`` (to ground).
    value : float
        Henries, farads, or for a line its physical length in metres.
    unit : str
        ``"H"``, ``"F"`` or ``"m"``.
    standard_value : float or None
        The nearest value of the chosen series (``None`` for lines: cut to length).
    reactance_ohm : float
        For L and C: the reactance at the design frequency (X of a series part, −1/B of a shunt one).
    peak_voltage_v, rms_current_a : float or None
        Peak voltage across and RMS current through the part at the given power (for a line,
        the largest along it); ``None`` without a power.
    line_z0_ohm, electrical_deg, end : float, float, str or None
        For lines: impedance, electrical length at the design frequency, and for a stub its
        far end, ``"open"`` or ``"short"``.
    """

    kind: str
    place: str
    value: float
    unit: str
    standard_value: float | None = None
    reactance_ohm: float = math.nan
    peak_voltage_v: float | None = None
    rms_current_a: float | None = None
    line_z0_ohm: float | None = None
    electrical_deg: float | None = None
    end: str | None = None

    def json(self) -> dict:
        out = {"kind": self.kind, "place": self.place, "value": self.value, "unit": self.unit,
               "standard_value": self.standard_value, "peak_voltage_v": self.peak_voltage_v,
               "rms_current_a": self.rms_current_a}
        if self.kind == "line":
            out.update(line_z0_ohm=self.line_z0_ohm, electrical_deg=self.electrical_deg, end=self.end)
        return out

    def describe(self) -> str:
        """Plain words, e.g. ``shunt C 0.92 pF``."""
        from refplane.analysis.units import format_si

        if self.kind == "line":
            what = f"{'stub' if self.place == 'shunt' else 'line'} of {self.line_z0_ohm:.4g} Ω, " \
                   f"{format_si(self.value, 'm')} ({self.electrical_deg:.1f}°)"
            return f"{self.place} {what}" + (f", {self.end} at the far end" if self.end else "")
        return f"{self.place} {self.kind} {format_si(self.value, self.unit)}"


@dataclass(frozen=True, eq=False)
class Network:
    """One matching network and what it achieves.

    Attributes
    ----------
    topology : str
        ``"L"``, ``"pi"``, ``"T"``, ``"quarter-wave"``, ``"open-stub"`` or ``"short-stub"``; ``"none"``
        (no parts) when the load is already matched.
    parts : tuple of Part
        From the load toward the source.
    vswr_exact, vswr_standard : float
        VSWR at the design frequency (relative to the target) with exact and with rounded parts.
    band_vswr2_hz : (float, float) or None
        Around the design frequency, where VSWR < 2 with the rounded parts and the measured
        load; ``None`` when even the design frequency is not below 2.
    band_clipped : bool
        True when that band reaches an end of the sweep (it may continue beyond).
    q : float or None
        The loaded Q the network was designed for (Pi and T), else None.
    path_gamma : ndarray of complex
        The network's path on the chart, load → centre, as Γ referred to the chart's reference.
    """

    topology: str
    parts: tuple[Part, ...]
    vswr_exact: float
    vswr_standard: float
    band_vswr2_hz: tuple[float, float] | None
    band_clipped: bool = False
    q: float | None = None
    path_gamma: np.ndarray = field(default_factory=lambda: np.zeros(0, complex), repr=False)

    def describe(self) -> str:
        """Parts in words, from the load toward the source."""
        if not self.parts:
            return "nothing needed (already matched)"
        return "from the load: " + ", then ".join(p.describe() for p in self.parts)

    def json(self) -> dict:
        return {"topology": self.topology, "description": self.describe(),
                "q": self.q, "parts": [p.json() for p in self.parts],
                "vswr_exact": self.vswr_exact, "vswr_standard": self.vswr_standard,
                "band_vswr2_hz": list(self.band_vswr2_hz) if self.band_vswr2_hz else None,
                "band_clipped": bool(self.band_clipped)}


@dataclass(frozen=True)
class BodeFano:
    """The widest band any lossless network could match the load over, for |Γ| ≤ ``gamma_max``.

    Attributes
    ----------
    max_width_hz : float
        Δf = Δω/2π from the Bode–Fano integral with an ideal flat in-band response.
    vswr_limit : float
    model_id : str
        The circuit fitted to the load around the design frequency (a circuit id of
        :mod:`refplane.analysis.circuits.models`).
    params : dict
        Its values (SI), under the keys of the model the fit chose.
    basis : str
        Which integral was used, or ``"local Q (approximate)"`` for circuits without a closed form.
    fit_residual_rel : float
        RMS relative misfit of that circuit over the window: large values mean the limit is rough.
    """

    max_width_hz: float
    vswr_limit: float
    model_id: str
    params: dict
    basis: str
    fit_residual_rel: float

    def json(self) -> dict:
        return {"max_width_hz": self.max_width_hz, "vswr_limit": self.vswr_limit, "model": self.model_id,
                "params": dict(self.params), "basis": self.basis, "fit_residual_rel": self.fit_residual_rel}


@dataclass(frozen=True, eq=False)
class MatchResult:
    """Every network designed for one load at one frequency."""

    freq_hz: float
    load_ohm: complex
    target_ohm: float
    z_ref_ohm: float
    series: str
    power_w: float | None
    networks: tuple[Network, ...]
    bode_fano: BodeFano | None
    notes: tuple[str, ...] = ()

    def json(self) -> dict:
        """The keys of ``refplane match --json`` (without the file name)."""
        return {"freq_hz": self.freq_hz, "load_ohm": [self.load_ohm.real, self.load_ohm.imag],
                "target_ohm": self.target_ohm, "series": self.series, "power_w": self.power_w,
                "networks": [n.json() for n in self.networks],
                "bode_fano_max_width_hz": self.bode_fano.max_width_hz if self.bode_fano else None,
                "bode_fano": self.bode_fano.json() if self.bode_fano else None,
                "notes": list(self.notes)}


# --------------------------------------------------------------------------- designs
# A design is a list of "elements" from the load toward the source, each a small dict:
#   {"place": "series"|"shunt", "x": reactance} for lumped parts (series X, or shunt part of
#   reactance x = −1/B), or {"place": ..., "line": Zc, "deg": electrical length, "end": ...}.

_TINY = 1e-12


def _series(x: float) -> dict:
    return {"place": "series", "x": float(x)}


def _shunt_b(b: float) -> dict:
    return {"place": "shunt", "x": -1.0 / float(b)}


def _keep(elements: list[dict], scale: float) -> list[dict]:
    """Drop lumped parts that do nothing (zero series reactance or zero shunt susceptance)."""
    out = []
    for e in elements:
        if "x" in e:
            if e["place"] == "series" and abs(e["x"]) <= _TINY * scale:
                continue
            if e["place"] == "shunt" and not math.isfinite(e["x"]):
                continue
        out.append(e)
    return out


def l_networks(z_load: complex, r_s: float) -> list[list[dict]]:
    """Every two-element L-network matching ``z_load`` to ``r_s`` (elements load → source)."""
    zl = complex(z_load)
    out = []
    y = 1.0 / zl
    g, b_l = y.real, y.imag
    if 0 < g <= 1.0 / r_s * (1 + 1e-12):
        root = math.sqrt(max(g / r_s - g * g, 0.0))
        for b_total in ((root, -root) if root > 0 else (0.0,)):
            x_series = b_total / (g * g + b_total * b_total)
            shunt_b = b_total - b_l
            els = []
            if abs(shunt_b) > _TINY / r_s:
                els.append(_shunt_b(shunt_b))
            els.append(_series(x_series))
            out.append(_keep(els, r_s))
    r, x_l = zl.real, zl.imag
    if 0 < r <= r_s * (1 + 1e-12):
        root = math.sqrt(max(r * r_s - r * r, 0.0))
        for x_total in ((root, -root) if root > 0 else (0.0,)):
            shunt_b = x_total / (r * r + x_total * x_total)
            els = [_series(x_total - x_l)]
            if abs(shunt_b) > _TINY / r_s:
                els.append(_shunt_b(shunt_b))
            out.append(_keep(els, r_s))
    # The same network may come out of both families (a load on the G = 1/R_s circle, say).
    unique = []
    for els in out:
        key = tuple((e["place"], round(e["x"], 9)) for e in els)
        if key not in [tuple((e["place"], round(e["x"], 9)) for e in u) for u in unique]:
            unique.append(els)
    return unique


def pi_min_q(z_load: complex, r_s: float) -> float:
    """The smallest loaded Q a Pi network can have for this load: √(R_high/R_low − 1)."""
    rp = 1.0 / (1.0 / complex(z_load)).real
    hi, lo = max(rp, r_s), min(rp, r_s)
    return math.sqrt(hi / lo - 1.0)


def t_min_q(z_load: complex, r_s: float) -> float:
    """The smallest loaded Q a T network can have for this load: √(R_high/R_low − 1)."""
    r = complex(z_load).real
    hi, lo = max(r, r_s), min(r, r_s)
    return math.sqrt(hi / lo - 1.0)


def pi_network(z_load: complex, r_s: float, q: float) -> list[dict]:
    """Low-pass Pi (shunt, series, shunt from the load) of loaded Q ``q``."""
    y = 1.0 / complex(z_load)
    g, b_l = y.real, y.imag
    rp = 1.0 / g
    r_v = max(rp, r_s) / (q * q + 1.0)
    if not r_v < min(rp, r_s) * (1 - 1e-12):
        raise AnalysisError(f"a Pi network for this load needs a loaded Q above {pi_min_q(z_load, r_s):.3g}")
    b1 = math.sqrt(g / r_v - g * g)                 # load side, capacitive total susceptance
    x1 = -b1 / (g * g + b1 * b1)                    # reactance left at the virtual resistance
    x2 = math.sqrt(r_v * r_s - r_v * r_v)           # source side, inductive series reactance
    b3 = x2 / (r_v * r_v + x2 * x2)
    return _keep([_shunt_b(b1 - b_l) if abs(b1 - b_l) > _TINY / r_s else {"place": "shunt", "x": math.inf},
                  _series(-x1 + x2), _shunt_b(b3)], r_s)


def t_network(z_load: complex, r_s: float, q: float) -> list[dict]:
    """Low-pass T (series, shunt, series from the load) of loaded Q ``q``."""
    zl = complex(z_load)
    r, x_l = zl.real, zl.imag
    r_v = min(r, r_s) * (q * q + 1.0)
    if not r_v > max(r, r_s) * (1 + 1e-12):
        raise AnalysisError(f"a T network for this load needs a loaded Q above {t_min_q(z_load, r_s):.3g}")
    x1 = math.sqrt(r * r_v - r * r)                 # load side, inductive total reactance
    b1 = x1 / (r * r + x1 * x1)
    gv = 1.0 / r_v
    b2 = math.sqrt(gv / r_s - gv * gv)              # source side, capacitive susceptance
    x3 = b2 / (gv * gv + b2 * b2)
    return _keep([_series(x1 - x_l), _shunt_b(b1 + b2), _series(x3)], r_s)


def quarter_wave(z_load: complex, r_s: float) -> list[dict]:
    """A line of R_s to the nearer real point (if the load is complex), then a λ/4 of √(R_s·R)."""
    zl = complex(z_load)
    gam = (zl - r_s) / (zl + r_s)
    rho, phi = abs(gam), math.degrees(math.atan2(gam.imag, gam.real))
    els = []
    if abs(zl.imag) > 1e-9 * abs(zl) and rho > 0:
        # Along a line of R_s, Γ turns by −2θ: real and positive at θ = φ/2, negative at θ = (φ − 180°)/2.
        to_max = (phi / 2.0) % 180.0
        to_min = ((phi - 180.0) / 2.0) % 180.0
        if to_max <= to_min:
            theta, r_real = to_max, r_s * (1 + rho) / (1 - rho)
        else:
            theta, r_real = to_min, r_s * (1 - rho) / (1 + rho)
        els.append({"place": "series", "line": r_s, "deg": theta, "end": None})
    else:
        r_real = zl.real
    if abs(r_real - r_s) > 1e-12 * r_s:
        els.append({"place": "series", "line": math.sqrt(r_s * r_real), "deg": 90.0, "end": None})
    return els


def shunt_stub(z_load: complex, r_s: float, end: str) -> list[dict]:
    """A line of R_s to the nearest point where G = 1/R_s, then an ``open`` or ``short`` stub of R_s."""
    zl = complex(z_load)
    gam = (zl - r_s) / (zl + r_s)
    rho = abs(gam)
    if rho < 1e-12:
        return []
    phi = math.atan2(gam.imag, gam.real)
    best = None
    for target in (math.acos(-rho), -math.acos(-rho)):
        two_bd = (phi - target) % (2 * math.pi)     # Γ(d) = Γ_L·e^(−j2βd)
        if best is None or two_bd < best[0]:
            best = (two_bd, target)
    two_bd, target = best
    g_d = rho * complex(math.cos(target), math.sin(target))
    b = ((1 - g_d) / (1 + g_d)).imag               # normalised susceptance to cancel
    if end == "open":
        bl = math.atan(-b) % math.pi                 # y = j·tan βl
    elif end == "short":
        bl = math.atan2(1.0, b) % math.pi            # y = −j·cot βl
    else:
        raise AnalysisError(f"a stub ends open or short, not {end!r}")
    els = []
    if two_bd > 1e-12:
        els.append({"place": "series", "line": r_s, "deg": math.degrees(two_bd / 2.0), "end": None})
    els.append({"place": "shunt", "line": r_s, "deg": math.degrees(bl), "end": end})
    return els


# --------------------------------------------------------------------------- evaluation

def _lumped_value(x: float, w0: float) -> tuple[str, float]:
    """(kind, value) of a part of reactance ``x`` at ω0: L = x/ω0 for x > 0, C = −1/(ω0·x) for x < 0."""
    return ("L", x / w0) if x > 0 else ("C", -1.0 / (w0 * x))


def _part_z(kind: str, value: float, w: np.ndarray) -> np.ndarray:
    return 1j * w * value if kind == "L" else 1.0 / (1j * w * value)


def _line_in(z: np.ndarray, zc: float, theta: np.ndarray) -> np.ndarray:
    t = np.tan(theta)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = zc * (z + 1j * zc * t) / (zc + 1j * z * t)
    # Where tan βl is infinite (a quarter wave, exactly), the line inverts: Zc²/Z.
    return np.where(np.isfinite(t), out, zc * zc / z)


def _stub_y(zc: float, theta: np.ndarray, end: str) -> np.ndarray:
    if end == "open":
        return 1j * np.tan(theta) / zc
    with np.errstate(divide="ignore"):
        return 1.0 / (1j * zc * np.tan(theta))


def _input_z(elements: list[dict], z_load: np.ndarray, freq_hz: np.ndarray, f0: float,
             values: list[tuple[str, float] | None]) -> np.ndarray:
    """Z looking into the network from the source, with lumped values ``values`` (one per element)."""
    w = 2 * np.pi * freq_hz
    z = np.array(z_load, dtype=complex)
    for e, val in zip(elements, values):
        if "line" in e:
            theta = np.radians(e["deg"]) * freq_hz / f0
            if e["place"] == "series":
                z = _line_in(z, e["line"], theta)
            else:
                z = 1.0 / (1.0 / z + _stub_y(e["line"], theta, e["end"]))
        else:
            ze = _part_z(val[0], val[1], w)
            z = z + ze if e["place"] == "series" else 1.0 / (1.0 / z + 1.0 / ze)
    return z


def _vswr_to(z: np.ndarray, r_s: float) -> np.ndarray:
    mag = np.abs((z - r_s) / (z + r_s))
    with np.errstate(divide="ignore"):
        return np.where(mag < 1, (1 + mag) / (1 - mag), np.inf)


def _stress(elements: list[dict], values, z_load: complex, w0: float, power_w: float):
    """(peak volts, RMS amps) per element at ``power_w`` delivered into the matched network.

    The network is lossless and matched at ω0, so ``power_w`` reaches the load:
    |I_L| = √(2P/R_L) (peak), V_L = I_L·Z_L; then walk toward the source.
    """
    zl = complex(z_load)
    if not zl.real > 0:
        return [(math.nan, math.nan)] * len(elements)
    i = math.sqrt(2.0 * power_w / zl.real) + 0j
    v = i * zl
    out = []
    for e, val in zip(elements, values):
        if "line" in e:
            zc, theta_total = e["line"], math.radians(e["deg"])
            x = np.linspace(0.0, theta_total, 257)
            if e["place"] == "series":
                vv = v * np.cos(x) + 1j * i * zc * np.sin(x)
                ii = i * np.cos(x) + 1j * (v / zc) * np.sin(x)
                out.append((float(np.max(np.abs(vv))), float(np.max(np.abs(ii))) / math.sqrt(2)))
                v, i = complex(vv[-1]), complex(ii[-1])
            else:
                if e["end"] == "open":
                    v_end = v / math.cos(theta_total)
                    vv, ii = v_end * np.cos(x), 1j * v_end / zc * np.sin(x)
                else:
                    i_end = v / (1j * zc * math.sin(theta_total))
                    vv, ii = 1j * i_end * zc * np.sin(x), i_end * np.cos(x)
                out.append((float(np.max(np.abs(vv))), float(np.max(np.abs(ii))) / math.sqrt(2)))
                i = i + complex(ii[-1])
        else:
            ze = complex(_part_z(val[0], val[1], np.array(w0)))
            if e["place"] == "series":
                out.append((abs(i * ze), abs(i) / math.sqrt(2)))
                v = v + i * ze
            else:
                ie = v / ze
                out.append((abs(v), abs(ie) / math.sqrt(2)))
                i = i + ie
    return out


def _path(elements: list[dict], values, z_load: complex, f0: float, z_ref: float) -> np.ndarray:
    """Γ (referred to ``z_ref``) along the network from the load to the source, part by part."""
    w0 = 2 * math.pi * f0
    z = complex(z_load)
    t = np.linspace(0.0, 1.0, PATH_POINTS_PER_PART)
    pieces = [np.array([z])]
    for e, val in zip(elements, values):
        if "line" in e:
            theta = math.radians(e["deg"]) * t
            if e["place"] == "series":
                zz = _line_in(np.full(t.shape, z), e["line"], theta)
            else:
                with np.errstate(divide="ignore", invalid="ignore"):
                    zz = 1.0 / (1.0 / z + _stub_y(e["line"], theta, e["end"]))
        else:
            ze = complex(_part_z(val[0], val[1], np.array(w0)))
            if e["place"] == "series":
                zz = z + t * ze
            else:
                zz = 1.0 / (1.0 / z + t / ze)
        pieces.append(zz[1:])
        z = complex(zz[-1])
    zs = np.concatenate(pieces)
    with np.errstate(divide="ignore", invalid="ignore"):
        g = (zs - z_ref) / (zs + z_ref)
    return np.where(np.isfinite(zs), g, 1.0 + 0j)


def _band(freq_hz: np.ndarray, vswr_values: np.ndarray, f0: float,
          refine=None) -> tuple[tuple[float, float] | None, bool]:
    """The stretch around ``f0`` where VSWR < 2; (band, clipped).

    ``freq_hz`` must hold ``f0`` itself. Each edge lies between a point inside and one outside;
    ``refine(fa, fb)`` (if given) returns (frequencies, VSWR) on a fine grid between them,
    and the edge is interpolated linearly on that grid, else between the two points.
    """
    k = int(np.argmin(np.abs(freq_hz - f0)))
    if not vswr_values[k] < 2.0:
        return None, False
    outside = np.flatnonzero(~(vswr_values < 2.0))
    below, above = outside[outside < k], outside[outside > k]
    lo = int(below[-1]) + 1 if below.size else 0
    hi = int(above[0]) - 1 if above.size else freq_hz.size - 1
    clipped = lo == 0 or hi == freq_hz.size - 1

    def edge(i_in: int, i_out: int) -> float:
        fa, fb = float(freq_hz[i_in]), float(freq_hz[i_out])
        if refine is not None:
            ff, vv = refine(fa, fb)
        else:
            ff, vv = np.array([fa, fb]), np.array([vswr_values[i_in], vswr_values[i_out]])
        j = int(np.argmax(~(vv < 2.0)))          # the first fine point outside, walking out
        a, b = vv[j - 1], vv[j]
        if not np.isfinite(b):
            return float(ff[j - 1])
        return float(ff[j - 1] + (2.0 - a) / (b - a) * (ff[j] - ff[j - 1]))

    start = float(freq_hz[0]) if lo == 0 else edge(lo, lo - 1)
    stop = float(freq_hz[-1]) if hi == freq_hz.size - 1 else edge(hi, hi + 1)
    return (start, stop), clipped


#: Points of the fine grid an edge of the VSWR < 2 band is placed on, between two swept points.
EDGE_POINTS = 257


def evaluate(topology: str, elements: list[dict], *, z_load: complex, freq_hz: float, r_s: float,
             z_ref_ohm: float, series: str = "E24", power_w: float | None = None, vf: float = 0.66,
             sweep_freq_hz: np.ndarray | None = None, sweep_z_ohm: np.ndarray | None = None,
             load_at=None, q: float | None = None) -> Network:
    """Turn a design's elements into a :class:`Network`: values, rounding, VSWR, band, stress, path.

    Parameters
    ----------
    topology : str
    elements : list of dict
        From a design function (:func:`l_networks`, :func:`pi_network`, …).
    z_load : complex
        The load at the design frequency ``freq_hz``.
    r_s : float
        The target (source) resistance.
    z_ref_ohm : float
        The chart's reference, for the path.
    series : str
        IEC 60063 series for the rounded values.
    power_w : float, optional
        Power into the network, for the part stress.
    vf : float
        Velocity factor of the coax used for lines and stubs (physical lengths).
    sweep_freq_hz, sweep_z_ohm : ndarray, optional
        The load across a sweep, for the VSWR < 2 band.
    load_at : callable, optional
        ``load_at(freq_hz) -> Z`` between swept points (as the markers read them), to place
        the band's edges on a fine grid; without it they are interpolated between points.
    q : float, optional
        Recorded loaded Q (Pi, T).
    """
    f0 = float(freq_hz)
    w0 = 2 * math.pi * f0
    exact, rounded, parts = [], [], []
    wavelength = vf * _C0 / f0
    for e in elements:
        if "line" in e:
            exact.append(None)
            rounded.append(None)
            parts.append(Part("line", e["place"], e["deg"] / 360.0 * wavelength, "m", None,
                              line_z0_ohm=float(e["line"]), electrical_deg=float(e["deg"]), end=e["end"]))
        else:
            kind, value = _lumped_value(e["x"], w0)
            std = nearest(value, series)
            exact.append((kind, value))
            rounded.append((kind, std))
            parts.append(Part(kind, e["place"], value, "H" if kind == "L" else "F", std, reactance_ohm=e["x"]))
    f_arr = np.array([f0])
    zin_exact = _input_z(elements, np.array([z_load]), f_arr, f0, exact)
    zin_std = _input_z(elements, np.array([z_load]), f_arr, f0, rounded)
    band, clipped = None, False
    if sweep_freq_hz is not None and sweep_z_ohm is not None:
        sf = np.asarray(sweep_freq_hz, float)
        sz = np.asarray(sweep_z_ohm, complex)
        if not np.any(sf == f0) and sf[0] < f0 < sf[-1]:
            at = int(np.searchsorted(sf, f0))
            sf, sz = np.insert(sf, at, f0), np.insert(sz, at, complex(z_load))
        refine = None
        if load_at is not None:
            def refine(fa, fb):
                ff = np.linspace(fa, fb, EDGE_POINTS)
                return ff, _vswr_to(_input_z(elements, load_at(ff), ff, f0, rounded), r_s)
        # Work outward from f0 in windows that double, so a narrow band on a long sweep only
        # costs the points near it.
        k0 = int(np.argmin(np.abs(sf - f0)))
        half = 1024
        while True:
            lo, hi = max(0, k0 - half), min(sf.size, k0 + half + 1)
            zin = _input_z(elements, sz[lo:hi], sf[lo:hi], f0, rounded)
            band, clipped = _band(sf[lo:hi], _vswr_to(zin, r_s), f0, refine)
            if band is None or not clipped or (lo == 0 and hi == sf.size):
                break
            if (band[0] > sf[lo] or lo == 0) and (band[1] < sf[hi - 1] or hi == sf.size):
                break
            half *= 2
        if band is not None:
            clipped = bool(band[0] <= sf[0] or band[1] >= sf[-1])
    if power_w is not None:
        stress = _stress(elements, exact, z_load, w0, power_w)
        parts = [_with_stress(p, s) for p, s in zip(parts, stress)]
    path = _path(elements, exact, z_load, f0, z_ref_ohm)
    path.setflags(write=False)
    return Network(topology=topology, parts=tuple(parts),
                   vswr_exact=float(_vswr_to(zin_exact, r_s)[0]),
                   vswr_standard=float(_vswr_to(zin_std, r_s)[0]),
                   band_vswr2_hz=band, band_clipped=clipped, q=q, path_gamma=path)


def _with_stress(part: Part, stress: tuple[float, float]) -> Part:
    import dataclasses

    v, i = stress
    return dataclasses.replace(part, peak_voltage_v=float(v) if math.isfinite(v) else None,
                               rms_current_a=float(i) if math.isfinite(i) else None)


# --------------------------------------------------------------------------- Bode–Fano

#: Circuits with a closed-form Bode–Fano integral (Fano 1950; Pozar ch. 5), by fitted circuit id.
_BF_KIND = {"parallel-rc": "∫ln(1/|Γ|)dω ≤ π/(RC)", "parallel-rlc": "∫ln(1/|Γ|)dω ≤ π/(RC)",
            "series-rl": "∫ln(1/|Γ|)dω ≤ πR/L", "series-rlc": "∫ln(1/|Γ|)dω ≤ πR/L",
            "series-rc": "∫ω⁻²ln(1/|Γ|)dω ≤ πRC", "parallel-rl": "∫ω⁻²ln(1/|Γ|)dω ≤ πL/R"}


def bode_fano_width_hz(circuit: str, values: tuple[float, ...], f0_hz: float, vswr_limit: float = 2.0) -> float:
    """Widest band (Hz) with VSWR ≤ ``vswr_limit`` any lossless network could give this circuit.

    An ideal response, |Γ| = Γm in band and 1 outside, turns each Bode–Fano integral into a
    width: Δω = π/(RC·ln(1/Γm)) for a parallel R-C (or R-L-C), π·R/(L·ln(1/Γm)) for a series
    R-L (or R-L-C); for a series R-C and a parallel R-L the integrand carries ω⁻² and a band
    centred geometrically on ω0 gives Δω = π·R·C·ω0²/ln(1/Γm) and π·(L/R)·ω0²/ln(1/Γm).

    Parameters
    ----------
    circuit : str
        A circuit id of :mod:`refplane.analysis.circuits.models` with a closed form (see ``_BF_KIND``).
    values : tuple of float
        Its values in the model's order: (R, L), (R, C) or (R, L, C).
    """
    s = float(vswr_limit)
    ln = math.log((s + 1.0) / (s - 1.0))     # ln(1/Γm)
    w0 = 2 * math.pi * f0_hz
    if circuit in ("parallel-rc",):
        r, c = values
        dw = math.pi / (r * c * ln)
    elif circuit == "parallel-rlc":
        r, _, c = values
        dw = math.pi / (r * c * ln)
    elif circuit == "series-rl":
        r, l_h = values
        dw = math.pi * r / (l_h * ln)
    elif circuit == "series-rlc":
        r, l_h, _ = values
        dw = math.pi * r / (l_h * ln)
    elif circuit == "series-rc":
        r, c = values
        dw = math.pi * r * c * w0 * w0 / ln
    elif circuit == "parallel-rl":
        r, l_h = values
        dw = math.pi * (l_h / r) * w0 * w0 / ln
    else:
        raise AnalysisError(f"no closed-form Bode–Fano limit for the {circuit} circuit")
    return dw / (2 * math.pi)


def bode_fano(freq_hz: np.ndarray, z_ohm: np.ndarray, f0_hz: float, *, z_ref_ohm: float = 50.0,
              vswr_limit: float = 2.0, window: float = 0.1, max_points: int = 400) -> BodeFano:
    """Fit the load's equivalent circuit around ``f0_hz`` and give its Bode–Fano limit.

    Parameters
    ----------
    freq_hz, z_ohm : ndarray
        The load over a sweep.
    f0_hz : float
        Design frequency.
    window : float
        Fit the points within f0·(1 ± window) (widened until there are at least 8 points).
    max_points : int
        At most this many of them, spread evenly, are fitted.

    Returns
    -------
    BodeFano
        For a fitted circuit without a closed form, the limit for the load's local Q at f0,
        Δf = f0·π/(Q·ln(1/Γm)) (the series-R-L/R-C result written with Q = |X|/R), marked approximate.
    """
    from refplane.analysis.circuits.fitting import fit_impedance

    f = np.asarray(freq_hz, float)
    z = np.asarray(z_ohm, complex)
    ok = (f > 0) & np.isfinite(z)
    f, z = f[ok], z[ok]
    win = float(window)
    while True:
        mask = (f >= f0_hz * (1 - win)) & (f <= f0_hz * (1 + win))
        if mask.sum() >= 8 or win > 10:
            break
        win *= 2
    if mask.sum() < 4:
        raise AnalysisError("too few swept points near the design frequency to fit the load")
    idx = np.flatnonzero(mask)
    if idx.size > max_points:
        # A few hundred points pin a three-part circuit down; more only slow the fit.
        idx = idx[np.unique(np.linspace(0, idx.size - 1, max_points).round().astype(int))]
    fit = fit_impedance(f[idx], z[idx], z_ref_ohm=z_ref_ohm, model="auto")
    circuit = fit.model.circuit
    values = fit.model.values(fit.params)
    s = float(vswr_limit)
    if circuit in _BF_KIND:
        width = bode_fano_width_hz(circuit, values, f0_hz, s)
        basis = _BF_KIND[circuit]
    else:
        zf = complex(fit.impedance(f0_hz))
        q = abs(zf.imag) / zf.real if zf.real > 0 else math.inf
        width = f0_hz * math.pi / (q * math.log((s + 1) / (s - 1))) if q > 0 else math.inf
        basis = "local Q (approximate)"
    return BodeFano(max_width_hz=float(width), vswr_limit=s, model_id=circuit,
                    params={k: float(v) for k, v in fit.params.items()}, basis=basis,
                    fit_residual_rel=float(fit.residual_rel))


# --------------------------------------------------------------------------- all at once

def design_all(z_load: complex, freq_hz: float, *, target_ohm: float = 50.0, z_ref_ohm: float | None = None,
               series: str = "E24", power_w: float | None = None, q: float | None = None,
               vf: float = 0.66, sweep_freq_hz: np.ndarray | None = None,
               sweep_z_ohm: np.ndarray | None = None, load_at=None) -> tuple[tuple[Network, ...], tuple[str, ...]]:
    """Every network this module designs, for one load at one frequency.

    Returns
    -------
    (networks, notes)
        The L-networks that exist, a Pi and a T of loaded Q ``q`` (default: 3, or 1.5 × the
        smallest possible where that is higher), the quarter-wave transformer and the open and
        shorted single shunt stubs; notes say what was left out and why.
    """
    from refplane.analysis.antenna.eseries import series_values
    from refplane.analysis.lines.deembed import check_velocity_factor

    zl = complex(z_load)
    r_s = float(target_ohm)
    if not (math.isfinite(r_s) and r_s > 0):
        raise AnalysisError(f"the target must be a positive resistance, not {target_ohm!r}")
    if not (math.isfinite(zl.real) and math.isfinite(zl.imag)) or not zl.real > 0:
        raise AnalysisError(f"the load {zl.real:.4g}{zl.imag:+.4g}j Ω has no positive resistance; "
                            "a lossless network cannot match it")
    if not (math.isfinite(freq_hz) and freq_hz > 0):
        raise AnalysisError("the design frequency must be above zero")
    series_values(series)
    vf = check_velocity_factor(vf)
    if power_w is not None and not (math.isfinite(power_w) and power_w >= 0):
        raise AnalysisError(f"the power must be zero or more watts, not {power_w!r}")
    if q is not None and not (math.isfinite(q) and q > 0):
        raise AnalysisError(f"the loaded Q must be a positive number, not {q!r}")
    z_ref = r_s if z_ref_ohm is None else float(z_ref_ohm)
    kw = dict(z_load=zl, freq_hz=freq_hz, r_s=r_s, z_ref_ohm=z_ref, series=series, power_w=power_w,
              vf=vf, sweep_freq_hz=sweep_freq_hz, sweep_z_ohm=sweep_z_ohm, load_at=load_at)
    nets, notes = [], []
    if abs((zl - r_s) / (zl + r_s)) < MATCHED_GAMMA:
        # Any design would be parts of vanishing reactance (a femtofarad, or farads in series).
        notes.append(f"the load is already matched to {r_s:g} Ω (VSWR below {1 + 2 * MATCHED_GAMMA:.7g})")
        return (evaluate("none", [], **kw),), tuple(notes)
    for els in l_networks(zl, r_s):
        nets.append(evaluate("L", els, **kw))
    for name, qmin_fn, design in (("pi", pi_min_q, pi_network), ("T", t_min_q, t_network)):
        qmin = qmin_fn(zl, r_s)
        q_use = q if q is not None else max(3.0, 1.5 * qmin)
        if q_use <= qmin * (1 + 1e-9):
            notes.append(f"no {name} network of loaded Q {q_use:g}: this load needs Q above {qmin:.3g}")
            continue
        nets.append(evaluate(name, design(zl, r_s, q_use), q=q_use, **kw))
    nets.append(evaluate("quarter-wave", quarter_wave(zl, r_s), **kw))
    for end in ("open", "short"):
        nets.append(evaluate(f"{end}-stub", shunt_stub(zl, r_s, end), **kw))
    return tuple(nets), tuple(notes)


def match_sweep(sweep: Sweep, freq_hz: float, *, port: int = 1, target_ohm: float | None = None,
                series: str = "E24", power_w: float | None = None, q: float | None = None,
                vf: float = 0.66, bode_fano_limit: bool = True) -> MatchResult:
    """Design every network for ``port``'s load at ``freq_hz`` (read between swept points).

    Parameters
    ----------
    sweep : Sweep
        The load, with the reference plane already where the network will go.
    freq_hz : float
        Design frequency inside the sweep.
    port : int
    target_ohm : float, optional
        Resistance to match to (default: the port's reference).
    series : str
        ``"E12"``, ``"E24"`` or ``"E96"``.
    power_w : float, optional
        Power into the network, for part stress.
    q : float, optional
        Loaded Q of the Pi and T networks.
    vf : float
        Velocity factor of the coax for lines and stubs.
    bode_fano_limit : bool
        Fit the load and give the Bode–Fano limit (skipped silently when the fit fails).

    Returns
    -------
    MatchResult
    """
    from refplane.analysis.readings.impedance import gamma_to_z
    from refplane.analysis.readings.markers import gamma_at

    sweep.check_port(port)
    z_ref = complex(sweep.z0_ohm[port - 1])
    if z_ref.imag != 0:
        raise AnalysisError("matching needs a real reference impedance at the port")
    f0 = float(freq_hz)
    zl = complex(gamma_to_z(gamma_at(sweep, f0, port), z_ref))
    r_s = z_ref.real if target_ohm is None else float(target_ohm)
    f = sweep.freq_hz

    def load_at(freq):
        return gamma_to_z(gamma_at(sweep, freq, port), z_ref)

    nets, notes = design_all(zl, f0, target_ohm=r_s, z_ref_ohm=z_ref.real, series=series, power_w=power_w,
                             q=q, vf=vf, sweep_freq_hz=f, sweep_z_ohm=gamma_to_z(sweep.reflection(port), z_ref),
                             load_at=load_at)
    bf = None
    if bode_fano_limit:
        try:
            bf = bode_fano(f, gamma_to_z(sweep.reflection(port), z_ref), f0, z_ref_ohm=z_ref.real)
        except AnalysisError as exc:
            notes = notes + (f"no Bode–Fano limit: {exc}",)
    return MatchResult(freq_hz=f0, load_ohm=zl, target_ohm=r_s, z_ref_ohm=z_ref.real,
                       series=series.upper(), power_w=power_w, networks=nets, bode_fano=bf, notes=notes)
