"""Cable characterisation from an open and a short, against scikit-rf's Coaxial and DefinedGammaZ0
lines and Pozar's coax formulas."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.lines.deembed import DB_PER_NEPER, SPEED_OF_LIGHT_M_S, LineOffset, remove_offsets
from refplane.analysis.errors import AnalysisError
from refplane.analysis.lines.cable import characterise_cable
from refplane.analysis.sweep import Sweep

skrf = pytest.importorskip("skrf")

# Pozar, Microwave Engineering §2.7 (from memory): for a coax of dielectric εr and loss tangent
# tanδ, α_d = π·f·√εr·tanδ / c; the velocity factor is 1/√εr; from_Z0_Dout sizes b/a for Z0.
EPS_R, TAN_D = 2.25, 3e-4        # solid polyethylene (common practice)


def _pair(media, length_m):
    line = media.line(length_m, unit="m")
    f = media.frequency.f
    return Sweep(f, (line ** media.open()).s, 50.0), Sweep(f, (line ** media.short()).s, 50.0)


DINT = 0.9e-3                    # inner conductor diameter of RG-58-like coax (common practice)


def _dout(z0):
    """Outer diameter for ``z0`` around a 0.9 mm inner conductor: b/a = exp(2π·Z0·√(ε/μ0)),
    the same relation skrf's from_Z0_Dout uses (Pozar table 2.1: Z0 = η/(2π)·ln(b/a))."""
    return DINT * math.exp(2 * math.pi * z0 * math.sqrt(EPS_R) / 376.730313)


def _coax(f, z0):
    # A 0.9 mm inner conductor for every impedance: a thin 93 Ω inner conductor would be only a
    # few skin depths thick at 10 MHz, where no surface-impedance law (ours or Pozar's) holds.
    freq = skrf.Frequency.from_f(f, unit="hz")
    return skrf.media.Coaxial.from_Z0_Dout(freq, z0_port=50, z0=z0, epsilon_r=EPS_R, Dout=_dout(z0),
                                           tan_delta=TAN_D, sigma=5.8e7)


CASES = [(0.1, 3e9, 301), (3.0, 3e9, 1001), (30.0, 1e9, 2001)]


@pytest.mark.parametrize("z0", [50.0, 75.0, 93.0])
@pytest.mark.parametrize("length_m, f_hi, n", CASES)
def test_coaxial_open_short_pair_gives_z0_vf_and_loss(z0, length_m, f_hi, n):
    f = np.linspace(10e6, f_hi, n)
    opened, shorted = _pair(_coax(f, z0), length_m)
    cable = characterise_cable(opened, shorted, length_m=length_m)
    assert cable.z0_fit_ohm == pytest.approx(z0, rel=1e-4)
    assert cable.velocity_factor == pytest.approx(1 / math.sqrt(EPS_R), rel=1e-4)
    alpha_d_db = math.pi * 1e9 * math.sqrt(EPS_R) * TAN_D / SPEED_OF_LIGHT_M_S * DB_PER_NEPER * length_m
    # √f and f are much alike over one decade (to 1 GHz): the split is looser there.
    assert cable.loss_dielectric_db == pytest.approx(alpha_d_db, rel=0.03 if f_hi > 2e9 else 0.06)   # seen: ≤ 1.1 %, ≤ 3.3 %
    assert cable.loss_db_per_100m == pytest.approx(cable.loss_db * 100 / length_m)
    assert cable.residual < 0.005
    # Z0 against frequency: skrf's own complex Zc (which rises at low frequency) within 0.3 %.
    np.testing.assert_allclose(cable.z0_ohm, _coax(cable.freq_hz, z0).z0, rtol=3e-3)
    # Common practice: solid-PE coax has a velocity factor near 0.66.
    assert cable.velocity_factor == pytest.approx(0.66, abs=0.01)


def test_coaxial_conductor_loss_matches_pozar():
    # Pozar §2.7 (from memory): R_s = √(πfμ0/σ), R' = R_s/(2π)·(1/a + 1/b), α_c = R'/(2·Z0).
    f = np.linspace(10e6, 3e9, 1001)
    opened, shorted = _pair(_coax(f, 50.0), 3.0)
    cable = characterise_cable(opened, shorted, velocity_factor=1 / 1.5)
    mu0 = 4e-7 * math.pi
    a, b = DINT / 2, _dout(50.0) / 2
    rs = math.sqrt(math.pi * 1e9 * mu0 / 5.8e7)
    alpha_c_db = rs / (2 * math.pi) * (1 / a + 1 / b) / (2 * 50.0) * DB_PER_NEPER * 3.0
    assert cable.loss_conductor_db == pytest.approx(alpha_c_db, rel=0.02)
    assert cable.length_m == pytest.approx(3.0, rel=1e-4)
    # Common practice: a few metres of thin coax lose several dB near 1 GHz (RG-58 about 0.5–0.7 dB/m).
    assert 1.0 < cable.loss_db < 2.5


@pytest.mark.parametrize("z0", [50.0, 75.0, 93.0])
@pytest.mark.parametrize("length_m, f_hi, n", CASES)
def test_defined_gamma_z0_line_gives_its_own_terms_back(z0, length_m, f_hi, n):
    # scikit-rf DefinedGammaZ0 given the causal γ (conductor 0.5 dB/m, dielectric 0.1 dB/m at
    # 1 GHz, vf 0.8) and the Zc(f) of the full line: the fit must return those numbers.
    f = np.linspace(10e6, f_hi, n)
    truth = LineOffset.from_length(length_m, 0.8, loss_db=0.5 * length_m, dielectric_loss_db=0.1 * length_m,
                                   line_z0_ohm=z0, z0_follows_skin=True)
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50,
                                      z0=truth.impedance_ohm(f), gamma=truth.gamma_l(f) / length_m)
    cable = characterise_cable(*_pair(media, length_m), velocity_factor=0.8)
    assert cable.z0_fit_ohm == pytest.approx(z0, rel=1e-6)
    assert cable.delay_s == pytest.approx(truth.delay_s, rel=1e-6)
    assert cable.length_m == pytest.approx(length_m, rel=1e-6)
    assert cable.loss_conductor_db == pytest.approx(truth.loss_db, rel=1e-4)
    assert cable.loss_dielectric_db == pytest.approx(truth.dielectric_loss_db, rel=1e-4)
    assert cable.loss_db_per_100m == pytest.approx(60.0, rel=1e-4)
    assert cable.residual < 1e-6
    np.testing.assert_allclose(cable.gamma_l, truth.gamma_l(f), rtol=1e-7)


def test_constant_impedance_lossy_line_with_loss_only_gamma():
    # DefinedGammaZ0 with a constant 75 Ω and α ∝ √f without the skin phase (not a causal line):
    # Z0 is still found, the loss still read from the attenuation, and the residual tells.
    f = np.linspace(10e6, 2e9, 801)
    alpha = 0.3 / DB_PER_NEPER * np.sqrt(f / 1e9)
    beta = 2 * np.pi * f / (0.66 * SPEED_OF_LIGHT_M_S)
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50, z0=75,
                                      gamma=alpha + 1j * beta)
    cable = characterise_cable(*_pair(media, 5.0), length_m=5.0)
    assert cable.z0_fit_ohm == pytest.approx(75.0, rel=2e-3)
    assert cable.velocity_factor == pytest.approx(0.66, rel=2e-3)
    assert cable.loss_conductor_db + cable.loss_dielectric_db == pytest.approx(1.5, rel=0.01)
    np.testing.assert_allclose(cable.z0_ohm, 75.0, rtol=1e-9)          # √(Zoc·Zsc), exactly


def test_lossless_quarter_wave_textbook_identities():
    # Pozar §2.3 (from memory): a lossless line reads Zsc = jZ0·tan βl and Zoc = −jZ0·cot βl.
    # Built from those formulas directly (no line code of ours): Z0 and the delay come back.
    f = np.linspace(1e6, 500e6, 400)
    tau, z0 = 2.5e-9, 93.0
    bl = 2 * np.pi * f * tau
    zsc, zoc = 1j * z0 * np.tan(bl), -1j * z0 / np.tan(bl)
    opened = Sweep(f, (zoc - 50) / (zoc + 50), 50.0)
    shorted = Sweep(f, (zsc - 50) / (zsc + 50), 50.0)
    cable = characterise_cable(opened, shorted)
    assert cable.z0_fit_ohm == pytest.approx(z0, rel=1e-6)
    assert cable.delay_s == pytest.approx(tau, rel=1e-6)
    assert cable.loss_db == pytest.approx(0.0, abs=1e-4)      # rounding near the poles of tan βl
    assert cable.length_m is None and cable.velocity_factor is None and cable.loss_db_per_100m is None
    # Quarter wave at 1/(4τ) = 100 MHz: βl = π/2 there (Pozar: Zin = Z0²/ZL).
    at = np.argmin(abs(f - 100e6))
    assert cable.gamma_l[at].imag == pytest.approx(2 * np.pi * f[at] * tau, rel=1e-9)


def test_result_removes_the_cable_in_front_of_a_load():
    # The cable found, handed on as the line to remove, takes 3 m of skrf Coaxial off a load.
    f = np.linspace(10e6, 3e9, 1001)
    coax = _coax(f, 75.0)
    cable = characterise_cable(*_pair(coax, 3.0))
    load = coax.load(0.2 - 0.4j)
    back = remove_offsets(Sweep(f, (coax.line(3.0, unit="m") ** load).s, 50.0), [cable.offset()])
    assert np.max(np.abs(back.s[:, 0, 0] - load.s[:, 0, 0])) < 0.005


@pytest.mark.parametrize("n, words", [(401, "too coarse.*steps under"), (51, "too coarse")])
def test_too_coarse_a_sweep_is_refused(n, words):
    # 30 m at vf 0.8: round trip 250 ns. 401 points to 1 GHz (2.5 MHz steps) turn 0.62 turn
    # between points — refused with the step it needs (under 0.45/250 ns = 1.8 MHz); 51 points
    # (20 MHz steps, 5 turns) hide whole turns, and the phase no longer extrapolates to DC.
    f = np.linspace(10e6, 1e9, n)
    truth = LineOffset.from_length(30.0, 0.8, loss_db=5.0, skin_phase=True)
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50, z0=50,
                                      gamma=truth.gamma_l(f) / 30.0)
    with pytest.raises(AnalysisError, match=words):
        characterise_cable(*_pair(media, 30.0))


@pytest.mark.parametrize("kw, words", [
    (dict(length_m=1.0, velocity_factor=0.7), "not both"),
    (dict(length_m=-1.0), "above zero"),
    (dict(velocity_factor=1.5), "velocity factor"),
    (dict(band_hz=(2e9, 1e9)), "upper frequency"),
    (dict(band_hz=(5e9, 6e9)), "at least 5"),
    (dict(port=2), "port 2"),
])
def test_bad_requests(kw, words):
    f = np.linspace(10e6, 1e9, 101)
    opened, shorted = _pair(_coax(f, 50.0), 1.0)
    with pytest.raises(AnalysisError, match=words):
        characterise_cable(opened, shorted, **kw)


def test_mismatched_frequencies_and_non_cables_are_refused():
    f = np.linspace(10e6, 1e9, 101)
    opened, shorted = _pair(_coax(f, 50.0), 1.0)
    other = Sweep(f * 1.01, shorted.s, 50.0)
    with pytest.raises(AnalysisError, match="same frequencies"):
        characterise_cable(opened, other)
    flat = Sweep(f, np.zeros(f.size, complex), 50.0)       # two matched loads: no cable at all
    with pytest.raises(AnalysisError):
        characterise_cable(flat, flat)


def test_noisy_open_and_short_still_give_the_cable():
    # 0.003 RMS noise per part on both readings (fixed seed) of 3 m of skrf Coaxial: Z0 within
    # 0.1 %, vf within 0.05 %, conductor loss within 3 %, dielectric within 15 % of the clean fit.
    rng = np.random.default_rng(11)
    f = np.linspace(10e6, 3e9, 1001)
    opened, shorted = _pair(_coax(f, 50.0), 3.0)
    clean = characterise_cable(opened, shorted, length_m=3.0)

    def noisy(sweep):
        return Sweep(f, sweep.s[:, 0, 0] + 0.003 * (rng.normal(size=f.size) + 1j * rng.normal(size=f.size)), 50.0)

    cable = characterise_cable(noisy(opened), noisy(shorted), length_m=3.0)
    assert cable.z0_fit_ohm == pytest.approx(50.0, rel=1e-3)
    assert cable.velocity_factor == pytest.approx(1 / 1.5, rel=5e-4)
    assert cable.loss_conductor_db == pytest.approx(clean.loss_conductor_db, rel=0.03)
    assert cable.loss_dielectric_db == pytest.approx(clean.loss_dielectric_db, rel=0.15)
    assert 0.002 < cable.residual < 0.01          # the noise shows in the residual, nothing else
