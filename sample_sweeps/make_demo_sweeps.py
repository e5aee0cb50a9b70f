"""Make Refplane's demo sweeps: invented, synthetic data computed from simple physical models.

Nothing here was measured. The scenario is made up for the examples: a small home workshop
bench (see README.md in this folder) where two people build a 75 Ω dummy load, check a few
parts, and tune a small antenna for the 2 m amateur band, with a low-cost vector network
analyzer. Each file is computed from a closed-form circuit or transmission-line model, with a
fixed random seed and a little complex noise (about −60 dB), and written through Refplane's own
Touchstone writer.

Run from the repository root::

    python sample_sweeps/make_demo_sweeps.py --overwrite          # regenerate in place
    python sample_sweeps/make_demo_sweeps.py --out /tmp/demo       # into another folder

Running it twice gives byte-identical files (tests/analysis/test_demo_sweeps.py checks that).
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

SEED = 20261201
C_M_PER_S = 299_792_458.0   # speed of light in vacuum (exact, SI definition)
Z0_OHM = 50.0               # the analyzer's reference impedance
NP_PER_DB = math.log(10) / 20  # nepers per dB

HEADER = (
    "SYNTHETIC DEMO DATA - invented for Refplane's examples, not a measurement.",
    "Computed from a closed-form model by sample_sweeps/make_demo_sweeps.py (seed {seed}, file {key}).",
)


@dataclass(frozen=True)
class DemoFile:
    """One file to write: where, what, and how it is formatted."""

    path: str            # relative to the output folder
    freq_hz: np.ndarray
    s: np.ndarray        # (n,) for a 1-port or (n, 2, 2)
    description: tuple[str, ...]
    fmt: str = "RI"
    freq_unit: str = "MHz"


# --------------------------------------------------------------------------- building blocks

def _rng(key: int) -> np.random.Generator:
    # One stream per file, so adding or reordering files never changes the others.
    return np.random.default_rng([SEED, key])


def _noise(rng: np.random.Generator, shape, level_db: float = -60.0) -> np.ndarray:
    """Complex Gaussian noise whose rms magnitude is ``level_db`` (dB re 1)."""
    sigma = 10 ** (level_db / 20) / math.sqrt(2)
    return sigma * (rng.standard_normal(shape) + 1j * rng.standard_normal(shape))


def _reflection_noise(rng: np.random.Generator, gamma: np.ndarray, level_db: float = -60.0) -> np.ndarray:
    """Add noise to a passive reflection, scaled down near the rim of the chart.

    A low-loss part (a capacitor at low frequency) sits within 1e-5 of |Γ| = 1; full −60 dB
    noise would push it outside the chart and make it read a negative resistance. Keeping the
    noise below (1 − |Γ|)/20 there keeps passive parts passive, which is what the demo is for.
    """
    scale = np.minimum(1.0, 20.0 * (1.0 - np.abs(gamma)))
    return gamma + scale * _noise(rng, gamma.shape, level_db)


def _gamma(z_ohm: np.ndarray, z0_ohm: float = Z0_OHM) -> np.ndarray:
    """Γ = (Z − Z0)/(Z + Z0) (Pozar, Microwave Engineering, ch. 2)."""
    return (z_ohm - z0_ohm) / (z_ohm + z0_ohm)


def _coax_one_way(freq_hz: np.ndarray, length_m: float, velocity_factor: float,
                  loss_db_at_1ghz: float) -> np.ndarray:
    """e^(−γl) of a matched coax: delay l/(vf·c), conductor loss growing as √f."""
    delay_s = length_m / (velocity_factor * C_M_PER_S)
    alpha_np = loss_db_at_1ghz * np.sqrt(freq_hz / 1e9) * NP_PER_DB
    return np.exp(-alpha_np - 2j * np.pi * freq_hz * delay_s)


def _abcd_to_s(a, b, c, d, z0_ohm: float = Z0_OHM) -> np.ndarray:
    """S of a two-port from its ABCD matrix (Pozar, Microwave Engineering, table 4.2)."""
    den = a + b / z0_ohm + c * z0_ohm + d
    s = np.empty(a.shape + (2, 2), dtype=np.complex128)
    s[..., 0, 0] = (a + b / z0_ohm - c * z0_ohm - d) / den
    s[..., 0, 1] = 2 * (a * d - b * c) / den
    s[..., 1, 0] = 2 / den
    s[..., 1, 1] = (-a + b / z0_ohm - c * z0_ohm + d) / den
    return s


def _series(z):
    one, zero = np.ones_like(z), np.zeros_like(z)
    return one, z, zero, one


def _shunt(y):
    one, zero = np.ones_like(y), np.zeros_like(y)
    return one, zero, y, one


def _cascade(*stages):
    a, b, c, d = stages[0]
    for a2, b2, c2, d2 in stages[1:]:
        a, b, c, d = a * a2 + b * c2, a * b2 + b * d2, c * a2 + d * c2, c * b2 + d * d2
    return a, b, c, d


# --------------------------------------------------------------------------- the models

def leaded_resistor_z(freq_hz: np.ndarray) -> np.ndarray:
    """A leaded 75 Ω film resistor: 10 nH of leads in series, 0.2 pF across its ends.

    At 470 MHz this reads about 77.5 + j26.6 Ω: the leads' inductance (about 9 nH apparent,
    the shunt capacitance pulling the 10 nH down a little).
    """
    w = 2 * np.pi * freq_hz
    return 1 / (1 / (75.0 + 1j * w * 10e-9) + 1j * w * 0.2e-12)


def chip_capacitor_z(freq_hz: np.ndarray) -> np.ndarray:
    """A 100 pF chip capacitor: ESR 0.1 Ω and ESL 0.8 nH in series; self-resonant near 563 MHz."""
    w = 2 * np.pi * freq_hz
    return 0.1 + 1j * w * 0.8e-9 + 1 / (1j * w * 100e-12)


def inductor_z(freq_hz: np.ndarray) -> np.ndarray:
    """A 470 nH air-wound inductor: 1.5 Ω at 100 MHz (skin effect, √f), 0.6 pF across the winding.

    Self-resonant (parallel) near 300 MHz; capacitive above.
    """
    w = 2 * np.pi * freq_hz
    r = 0.6 + 0.9 * np.sqrt(freq_hz / 100e6)
    return 1 / (1 / (r + 1j * w * 470e-9) + 1j * w * 0.6e-12)


ANTENNA_F0_HZ = 142.5e6
ANTENNA_R0_OHM = 38.0
ANTENNA_Q = 6.0


def antenna_z(freq_hz: np.ndarray) -> np.ndarray:
    """A small 2 m band whip with radials, cut a little long: a series R-L-C resonant at 142.5 MHz.

    Radiation resistance rises as f² (36 Ω at resonance), plus 2 Ω of ground and conductor
    loss; Q = 6 at resonance.
    """
    w0 = 2 * np.pi * ANTENNA_F0_HZ
    l_h = ANTENNA_Q * ANTENNA_R0_OHM / w0
    c_f = 1 / (w0**2 * l_h)
    w = 2 * np.pi * freq_hz
    r = 2.0 + (ANTENNA_R0_OHM - 2.0) * (freq_hz / ANTENNA_F0_HZ) ** 2
    return r + 1j * w * l_h + 1 / (1j * w * c_f)


# The feed cable of the antenna: 1.5 m of thin solid-polyethylene coax.
FEED_LENGTH_M = 1.5
FEED_VF = 0.66
FEED_LOSS_DB_AT_1GHZ = 1.0   # one way, whole length (about 0.67 dB/m, thin coax — common practice)

# The short test cable: 20 cm of the same kind of coax.
SHORT_LENGTH_M = 0.20
SHORT_LOSS_DB_AT_1GHZ = 0.13


def bandpass_filter_s(freq_hz: np.ndarray) -> np.ndarray:
    """A 3-pole Butterworth band-pass for 2 m, 146 MHz centre, 30 MHz wide, 50 Ω.

    Series L-C, shunt L∥C, series L-C from the low-pass prototype g = (1, 2, 1) (textbook
    band-pass transformation); inductors with Q = 120 (series) and 80 (shunt) at the centre.
    """
    f0, bw = 146e6, 30e6
    w0, frac = 2 * np.pi * f0, bw / f0
    g1, g2 = 1.0, 2.0
    l1, c1 = g1 * Z0_OHM / (w0 * frac), frac / (w0 * g1 * Z0_OHM)
    l2, c2 = frac * Z0_OHM / (w0 * g2), g2 / (w0 * frac * Z0_OHM)
    w = 2 * np.pi * freq_hz
    r1, r2 = w0 * l1 / 120, w0 * l2 / 80
    z_series = r1 + 1j * w * l1 + 1 / (1j * w * c1)
    y_shunt = 1 / (r2 + 1j * w * l2) + 1j * w * c2
    return _abcd_to_s(*_cascade(_series(z_series), _shunt(y_shunt), _series(z_series)))


# --------------------------------------------------------------------------- calibration demo

#: Standards as built (and as the standards file describes them): small, realistic parasitics.
STANDARDS = {
    "short": {"l0_h": 20e-12, "offset_delay_s": 31e-12},
    "open": {"c0_f": 50e-15, "offset_delay_s": 29e-12},
    "load": {"r_ohm": 50.0},
    "through": {"offset_delay_s": 45e-12},
}


def standard_gamma(kind: str, freq_hz: np.ndarray) -> np.ndarray:
    """Reflection of a short, open or load with a lossless offset of the reference impedance.

    Termination: open 1/(jωC0), short jωL0, load R; carried through e^(−2jωτ) of the offset
    (the usual offset-standard model of the calibration literature, lossless case — from memory).
    """
    d = STANDARDS[kind]
    w = 2 * np.pi * freq_hz
    if kind == "open":
        jwcz = 1j * w * d["c0_f"] * Z0_OHM
        term = (1 - jwcz) / (1 + jwcz)
    elif kind == "short":
        term = _gamma(1j * w * d["l0_h"])
    else:
        term = np.full(freq_hz.shape, _gamma(np.array(d["r_ohm"])), dtype=np.complex128)
    return term * np.exp(-2j * w * d.get("offset_delay_s", 0.0))


def error_terms(freq_hz: np.ndarray) -> dict[str, np.ndarray]:
    """An invented, smooth, frequency-dependent error box for both ports of the bench analyzer.

    Forward (port 1 drives): directivity e00 −40 → −30 dB, source match e11 about −22 dB,
    reflection tracking e10e01 with a 0.6 ns test cable and a little ripple; port 2 load match
    e22, transmission tracking e10e32, leakage e30 −50 → −40 dB. Reverse terms likewise.
    """
    f = freq_hz
    x = f / 1e9
    w = 2 * np.pi * f
    ripple1 = 1 + 0.02 * np.sin(2 * np.pi * f / 170e6)
    ripple2 = 1 + 0.015 * np.sin(2 * np.pi * f / 230e6 + 0.4)
    cable1 = np.exp(-0.3 * np.sqrt(x) * NP_PER_DB)   # 0.3 dB one way at 1 GHz
    cable2 = np.exp(-0.35 * np.sqrt(x) * NP_PER_DB)
    return {
        "e00": 10 ** ((-40 + 10 * x) / 20) * np.exp(1j * (0.7 - w * 0.9e-9)),
        "e11": 0.08 * (1 + 0.5 * x) * np.exp(1j * (2.2 - w * 1.4e-9)),
        "e10e01": 0.9 * ripple1 * cable1**2 * np.exp(-2j * w * 0.6e-9),
        "e22": 0.06 * (1 + 0.4 * x) * np.exp(1j * (-1.0 - w * 1.1e-9)),
        "e10e32": 0.85 * ripple2 * cable1 * cable2 * np.exp(-1j * w * (0.6e-9 + 0.7e-9)),
        "e30": 10 ** ((-50 + 10 * x) / 20) * np.exp(1j * (1.3 - w * 3e-9)),
        # reverse direction (port 2 drives)
        "e33": 10 ** ((-38 + 8 * x) / 20) * np.exp(1j * (-0.4 - w * 1.0e-9)),
        "e22_source": 0.07 * (1 + 0.4 * x) * np.exp(1j * (-0.8 - w * 1.1e-9)),
        "e23e32": 0.88 * ripple2 * cable2**2 * np.exp(-2j * w * 0.7e-9),
        "e11_load": 0.09 * (1 + 0.5 * x) * np.exp(1j * (2.0 - w * 1.4e-9)),
        "e23e01": 0.86 * ripple1 * cable1 * cable2 * np.exp(-1j * w * (0.6e-9 + 0.7e-9)),
        "e03": 10 ** ((-52 + 10 * x) / 20) * np.exp(1j * (0.2 - w * 3e-9)),
    }


def measure_one_port(e: dict[str, np.ndarray], gamma: np.ndarray) -> np.ndarray:
    """Γm = e00 + e10e01·Γ/(1 − e11·Γ) (three-term error model)."""
    return e["e00"] + e["e10e01"] * gamma / (1 - e["e11"] * gamma)


def measure_two_port(e: dict[str, np.ndarray], s: np.ndarray) -> np.ndarray:
    """Raw S of a two-port seen through the error box in both directions (12-term model)."""
    s11, s12, s21, s22 = s[:, 0, 0], s[:, 0, 1], s[:, 1, 0], s[:, 1, 1]
    out = np.empty_like(s)
    # forward: port 2 terminated in the analyzer's load match e22
    gin = s11 + s21 * s12 * e["e22"] / (1 - e["e22"] * s22)
    out[:, 0, 0] = measure_one_port(e, gin)
    den_f = (1 - e["e11"] * s11) * (1 - e["e22"] * s22) - e["e11"] * e["e22"] * s21 * s12
    out[:, 1, 0] = e["e30"] + e["e10e32"] * s21 / den_f
    # reverse: port 1 terminated in its load match e11_load
    gout = s22 + s12 * s21 * e["e11_load"] / (1 - e["e11_load"] * s11)
    out[:, 1, 1] = e["e33"] + e["e23e32"] * gout / (1 - e["e22_source"] * gout)
    den_r = (1 - e["e22_source"] * s22) * (1 - e["e11_load"] * s11) - e["e22_source"] * e["e11_load"] * s12 * s21
    out[:, 0, 1] = e["e03"] + e["e23e01"] * s12 / den_r
    return out


def _two_port_noise(rng: np.random.Generator, s: np.ndarray, *, passive: bool = False) -> np.ndarray:
    """S plus noise: −60 dB on reflection, −70 dB (the receivers' floor) on transmission.

    ``passive`` scales the reflection noise down near the rim, as for one-ports.
    """
    out = s + _noise(rng, s.shape, -70.0)
    for i in range(2):
        if passive:
            out[:, i, i] = _reflection_noise(rng, s[:, i, i])
        else:
            out[:, i, i] = s[:, i, i] + _noise(rng, s.shape[0], -60.0)
    return out


# --------------------------------------------------------------------------- the file list

def _bench_grid() -> np.ndarray:
    return 1e6 * np.arange(1, 1001, dtype=np.float64)           # 1 MHz to 1 GHz, 1 MHz steps


def _parts_grid() -> np.ndarray:
    # 401 points spaced logarithmically, rounded to whole kHz so the file holds them exactly.
    return np.round(np.geomspace(1e6, 1e9, 401), -3)


def _short_cable_grid() -> np.ndarray:
    # 100 kHz to 1 GHz, logarithmic (so the low end, where a short cable hardly matters, shows),
    # in whole hertz.
    return np.round(np.geomspace(100e3, 1e9, 1201))


def _antenna_grid() -> np.ndarray:
    return 100e6 + 0.25e6 * np.arange(401, dtype=np.float64)   # 100 to 200 MHz


def _filter_grid() -> np.ndarray:
    return 50e6 + 0.5e6 * np.arange(501, dtype=np.float64)     # 50 to 300 MHz


def _cal_grid() -> np.ndarray:
    return 2e6 * np.arange(1, 501, dtype=np.float64)           # 2 MHz to 1 GHz, 2 MHz steps


def demo_files() -> list[DemoFile]:
    """Every demo file, computed afresh (pure: no files touched)."""
    files: list[DemoFile] = []

    f = _bench_grid()
    files.append(DemoFile(
        "leaded_resistor_75ohm.s1p", f,
        _reflection_noise(_rng(1), _gamma(leaded_resistor_z(f))),
        ("A leaded 75 ohm film resistor meant for a small dummy load, measured right at its leads",
         "on a 50 ohm analyzer. Model: 75 ohm in series with 10 nH of lead inductance, 0.2 pF across",
         "its ends. At 470 MHz it reads about 77.5 + j26.6 ohm, i.e. about 9 nH in series.")))

    f = _parts_grid()
    files.append(DemoFile(
        "chip_capacitor_100pf.s1p", f,
        _reflection_noise(_rng(2), _gamma(chip_capacitor_z(f))),
        ("A 100 pF chip capacitor, read at its own pads (the test fixture already removed).",
         "Model: ESR 0.1 ohm, ESL 0.8 nH, in series with 100 pF; self-resonant near 563 MHz,",
         "inductive above."), freq_unit="kHz"))
    files.append(DemoFile(
        "inductor_470nh.s1p", f,
        _reflection_noise(_rng(3), _gamma(inductor_z(f))),
        ("A 470 nH air-wound inductor. Model: series R of 1.5 ohm at 100 MHz (0.6 + 0.9*sqrt(f/100 MHz)",
         "ohm, skin effect) with 470 nH, and 0.6 pF of winding capacitance across the whole;",
         "parallel self-resonance near 300 MHz, capacitive above."), freq_unit="kHz"))

    f = _antenna_grid()
    line = _coax_one_way(f, FEED_LENGTH_M, FEED_VF, FEED_LOSS_DB_AT_1GHZ)
    files.append(DemoFile(
        "antenna_2m_via_1m5_coax.s1p", f,
        _reflection_noise(_rng(4), _gamma(antenna_z(f)) * line**2),
        ("A small 2 m band whip with radials, measured at the analyzer end of its 1.5 m feed coax",
         "(velocity factor 0.66, delay 7.581 ns one way, 1.0 dB one-way loss at 1 GHz growing as sqrt(f)).",
         "Antenna model: series R-L-C resonant at 142.5 MHz (cut a little long), Q 6,",
         "R = 2 ohm loss + radiation resistance 36 ohm * (f/142.5 MHz)^2. Move the reference plane",
         "7.581 ns (or 1.5 m at vf 0.66) with 1.0 dB@1GHz loss to see the antenna itself.")))
    files.append(DemoFile(
        "coax_1m5_open_end.s1p", f,
        _reflection_noise(_rng(5), line**2),
        ("The same 1.5 m feed coax with the antenna unscrewed and its far end left open, for finding",
         "the reference plane from the sweep itself: delay 7.581 ns one way, 1.0 dB at 1 GHz (sqrt(f)).")))
    f = _filter_grid()
    files.append(DemoFile(
        "bandpass_filter_2m.s2p", f,
        _two_port_noise(_rng(6), bandpass_filter_s(f), passive=True),
        ("A 3-pole band-pass filter for the 2 m band, to keep FM broadcast out of the receiver:",
         "146 MHz centre, 30 MHz wide (Butterworth, series L-C / shunt L||C / series L-C), 50 ohm,",
         "inductor Q 120 and 80. Noise: -60 dB on reflection, -70 dB on transmission.")))

    f = _short_cable_grid()
    files.append(DemoFile(
        "coax_20cm_open_end.s1p", f,
        _reflection_noise(_rng(7), _coax_one_way(f, SHORT_LENGTH_M, FEED_VF, SHORT_LOSS_DB_AT_1GHZ) ** 2),
        ("A 20 cm piece of solid-polyethylene coax (velocity factor 0.66), far end open:",
         "delay 1.0108 ns one way, a quarter wave near 247 MHz where the open reads as a short;",
         "0.13 dB one-way loss at 1 GHz, growing as sqrt(f)."), freq_unit="Hz"))

    # Offline calibration: raw port-1 sweeps of the standards and a device, and raw two-ports.
    f = _cal_grid()
    e = error_terms(f)
    raw = "Raw, uncorrected: seen through an invented error box (directivity -40 to -30 dB, source match"
    raw2 = "about -22 dB, tracking with a 0.6 ns test cable and ripple). Correct with bench_standards.json."
    for key, kind, text in ((11, "short", "the short standard: 20 pH, offset delay 31 ps"),
                            (12, "open", "the open standard: 50 fF, offset delay 29 ps"),
                            (13, "load", "the load standard: 50 ohm")):
        files.append(DemoFile(
            f"calibration/raw_{kind}.s1p", f,
            measure_one_port(e, standard_gamma(kind, f)) + _noise(_rng(key), f.shape),
            (f"Port 1 measuring {text}.", raw, raw2)))
    files.append(DemoFile(
        "calibration/raw_leaded_resistor_75ohm.s1p", f,
        measure_one_port(e, _gamma(leaded_resistor_z(f))) + _noise(_rng(14), f.shape),
        ("Port 1 measuring the leaded 75 ohm resistor of leaded_resistor_75ohm.s1p.", raw, raw2)))
    through = np.zeros((f.size, 2, 2), dtype=np.complex128)
    through[:, 0, 1] = through[:, 1, 0] = np.exp(-2j * np.pi * f * STANDARDS["through"]["offset_delay_s"])
    raw_t = "Raw, uncorrected, both directions through the invented error box; leakage -50 to -40 dB."
    files.append(DemoFile(
        "calibration/raw_through.s2p", f,
        _two_port_noise(_rng(15), measure_two_port(e, through)),
        ("Port 1 to port 2 through the through standard (an adapter of 45 ps).", raw_t)))
    files.append(DemoFile(
        "calibration/raw_isolation.s2p", f,
        _two_port_noise(_rng(16), measure_two_port(e, np.zeros((f.size, 2, 2), dtype=np.complex128))),
        ("Both ports terminated in load standards: what reaches port 2 is the analyzer's own leakage.",
         raw_t)))
    files.append(DemoFile(
        "calibration/raw_bandpass_filter_2m.s2p", f,
        _two_port_noise(_rng(17), measure_two_port(e, bandpass_filter_s(f))),
        ("The 2 m band-pass filter of bandpass_filter_2m.s2p, between port 1 and port 2.", raw_t)))
    return files


def standards_json() -> dict:
    """The standards file for the calibration demo, in Refplane's standards format."""
    return {
        "format": "refplane-standards",
        "version": 1,
        "name": "bench standards (demo)",
        "note": "Synthetic demo data, invented: the definitions of the standards used to make the raw "
                "sweeps in this folder by sample_sweeps/make_demo_sweeps.py. Not a real kit.",
        "reference_z0_ohm": Z0_OHM,
        **{kind: dict(values) for kind, values in STANDARDS.items()},
    }


# --------------------------------------------------------------------------- writing

#: Resolution of the written S-parameters: 2^-24 ≈ 6e-8 (−144 dB), far below the −60 dB noise.
QUANTUM = 2.0 ** -24


def quantise(s: np.ndarray) -> np.ndarray:
    """Round real and imaginary parts to multiples of :data:`QUANTUM`.

    The writer prints 17 significant digits; rounding first keeps last-bit differences of
    exp/sin between machines out of the files, so regenerating elsewhere gives the same bytes.
    """
    return (np.round(s.real / QUANTUM) + 1j * np.round(s.imag / QUANTUM)) * QUANTUM


def write_all(out_dir: str | Path, *, overwrite: bool = False) -> list[Path]:
    """Write every demo file (and the standards file) under ``out_dir``; returns the paths."""
    from refplane.analysis.files.fileio import write_text_atomic
    from refplane.analysis.sweep import Sweep
    from refplane.analysis.files.touchstone import write

    out = Path(out_dir)
    written = []
    for item in demo_files():
        target = out / item.path
        target.parent.mkdir(parents=True, exist_ok=True)
        sweep = Sweep(item.freq_hz, quantise(item.s), Z0_OHM, name=Path(item.path).stem)
        header = tuple(line.format(seed=SEED, key=item.path) for line in HEADER)
        written.append(write(sweep, target, fmt=item.fmt, freq_unit=item.freq_unit, version="1.1",
                             comments=header + item.description, overwrite=overwrite))
    (out / "calibration").mkdir(parents=True, exist_ok=True)
    text = json.dumps(standards_json(), indent=2, allow_nan=False) + "\n"
    written.append(write_text_atomic(out / "calibration" / "bench_standards.json", text, overwrite=overwrite))
    return written


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=str(Path(__file__).resolve().parent),
                        help="folder to write into (default: this script's folder)")
    parser.add_argument("--overwrite", action="store_true", help="replace files that exist already")
    args = parser.parse_args(argv)
    from refplane.analysis.errors import AnalysisError

    try:
        for path in write_all(args.out, overwrite=args.overwrite):
            print(path)
    except AnalysisError as exc:
        print(f"make_demo_sweeps: {exc}", file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main())
