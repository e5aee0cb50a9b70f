"""The causal line model (deembed.LineOffset) against textbook formulas and scikit-rf's Coaxial line."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.lines.deembed import (DB_PER_NEPER, SPEED_OF_LIGHT_M_S, LineOffset, add_offsets,
                                       line_s, remove_offsets)
from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma
from refplane.analysis.lines.plane import estimate_plane
from refplane.analysis.sweep import Sweep

skrf = pytest.importorskip("skrf")

MU0 = 4e-7 * math.pi          # H/m (close enough to the 2019 SI value for these tolerances; from memory)
EPS0 = 1.0 / (MU0 * SPEED_OF_LIGHT_M_S ** 2)


def _coax(freq_hz, *, z0=50.0, eps_r=2.25, tan_delta=3e-4, dout=2.95e-3, sigma=5.8e7):
    """scikit-rf Coaxial of copper (σ 5.8e7 S/m, from memory) and solid PE (εr 2.25, tanδ 3e-4;
    common practice), sized for ``z0`` by skrf's own from_Z0_Dout."""
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    return skrf.media.Coaxial.from_Z0_Dout(freq, z0_port=50, z0=z0, epsilon_r=eps_r, Dout=dout,
                                           tan_delta=tan_delta, sigma=sigma)


def _pozar_offset(length_m, *, z0=50.0, eps_r=2.25, tan_delta=3e-4, dout=2.95e-3, sigma=5.8e7,
                  ref_hz=1e9, **kw) -> LineOffset:
    """The same coax from Pozar's formulas (Microwave Engineering, §2.7 and table 2.1; from memory):
    R_s = √(πfμ0/σ), R' = R_s/(2π)·(1/a + 1/b), α_c = R'/(2·Z0), α_d = π·f·√εr·tanδ / c,
    one-way delay l·√εr / c."""
    b = dout / 2
    a = b / math.exp(2 * math.pi * z0 * math.sqrt(EPS0 * eps_r / MU0))
    rs = math.sqrt(math.pi * ref_hz * MU0 / sigma)
    r_per_m = rs / (2 * math.pi) * (1 / a + 1 / b)
    alpha_c = r_per_m / (2 * z0)
    alpha_d = math.pi * ref_hz * math.sqrt(eps_r) * tan_delta / SPEED_OF_LIGHT_M_S
    return LineOffset(delay_s=length_m * math.sqrt(eps_r) / SPEED_OF_LIGHT_M_S,
                      loss_db=alpha_c * length_m * DB_PER_NEPER, loss_ref_hz=ref_hz,
                      dielectric_loss_db=alpha_d * length_m * DB_PER_NEPER, **kw)


def test_causal_conductor_term_turns_as_many_radians_as_it_attenuates_nepers():
    # Pozar §1.7 (from memory): a good conductor's surface impedance Zs = (1 + j)·√(πfμ/σ) —
    # equal resistance and internal reactance — so γl gains A_c·(1 + j) from the skin effect.
    offset = LineOffset(delay_s=2e-9, loss_db=0.6, dielectric_loss_db=0.15, skin_phase=True)
    f = np.array([0.0, 1e8, 1e9, 4e9])
    gl = offset.gamma_l(f)
    a_c = 0.6 * np.sqrt(f / 1e9) / DB_PER_NEPER
    np.testing.assert_allclose(gl.real, a_c + 0.15 * f / 1e9 / DB_PER_NEPER, rtol=1e-14, atol=0)
    np.testing.assert_allclose(gl.imag, 2 * np.pi * f * 2e-9 + a_c, rtol=1e-14, atol=0)


@pytest.mark.parametrize("z0", [50.0, 75.0, 93.0])
def test_full_line_matches_skrf_coaxial_gamma_and_impedance(z0):
    # scikit-rf Coaxial (Schelkunoff conductor impedance, internal inductance included) against
    # the full-line model built from Pozar's low-loss formulas; 10 MHz to 3 GHz, 10 m. (Below
    # about 10 MHz the inner conductor of thin coax is only a few skin depths thick, where the
    # surface-impedance law the model rests on starts to fail.)
    f = np.geomspace(10e6, 3e9, 200)
    coax = _coax(f, z0=z0)
    offset = _pozar_offset(10.0, z0=z0, line_z0_ohm=z0, z0_follows_skin=True)
    gl_ref = coax.gamma * 10.0
    np.testing.assert_allclose(offset.gamma_l(f), gl_ref, rtol=2e-3)
    # The attenuation alone (a small part of γl) agrees within 3 % from 50 MHz up; below, the
    # thin inner conductor of 93 Ω coax is only a few skin depths thick (6 % off at 10 MHz).
    high = f >= 50e6
    np.testing.assert_allclose(offset.gamma_l(f[high]).real, gl_ref[high].real, rtol=0.03)
    np.testing.assert_allclose(offset.impedance_ohm(f), coax.z0, rtol=2e-3)
    # The impedance really does rise at low frequency (about 1 % at 10 MHz for thin coax), as skrf's does.
    assert abs(offset.impedance_ohm(f[:1])[0]) > 1.005 * z0 and abs(coax.z0[0]) > 1.005 * z0


def test_loss_only_model_misses_coax_phase_and_causal_model_gets_it():
    # The phase of skrf Coaxial's γl beyond the delay is the skin term A_c (radians = nepers).
    f = np.linspace(10e6, 3e9, 300)
    coax = _coax(f)
    causal = _pozar_offset(3.0, skin_phase=True)
    plain = _pozar_offset(3.0, skin_phase=False)
    gl_ref = coax.gamma * 3.0
    assert np.max(np.abs(causal.gamma_l(f).imag - gl_ref.imag)) < 0.003
    assert np.max(np.abs(plain.gamma_l(f).imag - gl_ref.imag)) > 0.1


def test_lossy_full_line_input_impedance_formula():
    # Pozar §2.7 (from memory): Zin = Zc (ZL + Zc tanh γl) / (Zc + ZL tanh γl), with the
    # line's own Zc(f) and γl(f).
    f = np.geomspace(1e6, 2e9, 120)
    offset = LineOffset.from_length(4.0, 0.66, loss_db=1.4, dielectric_loss_db=0.3, line_z0_ohm=75.0,
                                    z0_follows_skin=True)
    zl = 20.0 + 35.0j
    zc, t = offset.impedance_ohm(f), np.tanh(offset.gamma_l(f))
    expected = zc * (zl + zc * t) / (zc + zl * t)
    load = Sweep(f, np.full(f.size, z_to_gamma(zl, 50.0)), 50.0)
    zin = gamma_to_z(add_offsets(load, [offset]).s[:, 0, 0], 50.0)
    np.testing.assert_allclose(zin, expected, rtol=1e-10)
    np.testing.assert_allclose(remove_offsets(Sweep(f, z_to_gamma(zin, 50.0), 50.0), [offset]).s[:, 0, 0],
                               z_to_gamma(zl, 50.0), atol=1e-10)


def test_full_line_two_port_matches_skrf_defined_gamma_z0():
    # scikit-rf DefinedGammaZ0 given our γ and Zc(f) per frequency: the same two-port.
    f = np.geomspace(1e6, 3e9, 150)
    offset = LineOffset.from_length(2.0, 0.7, loss_db=0.9, dielectric_loss_db=0.2, z0_follows_skin=True)
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50,
                                      z0=offset.impedance_ohm(f, 50.0), gamma=offset.gamma_l(f) / 2.0)
    np.testing.assert_allclose(line_s(offset, f, 50.0), media.line(2.0, unit="m").s, atol=1e-12)


@pytest.mark.parametrize("kw", [dict(skin_phase=True), dict(z0_follows_skin=True),
                                dict(skin_phase=True, line_z0_ohm=75.0)])
def test_lossless_results_do_not_depend_on_the_model_switches(kw):
    # A lossless line is the same line whatever the loss model says: bit for bit.
    rng = np.random.default_rng(3)
    f = np.linspace(1e6, 3e9, 5001)
    s = 0.5 * (rng.normal(size=(f.size, 2, 2)) + 1j * rng.normal(size=(f.size, 2, 2)))
    sweep = Sweep(f, s, 50.0)
    base = LineOffset(delay_s=1.3e-9, line_z0_ohm=kw.get("line_z0_ohm"))
    other = LineOffset(delay_s=1.3e-9, **kw)
    for fn in (add_offsets, remove_offsets):
        assert np.array_equal(fn(sweep, [base, None]).s, fn(sweep, [other, None]).s)
        one = Sweep(f, s[:, :1, :1], 50.0)
        assert np.array_equal(fn(one, [base]).s, fn(one, [other]).s)


def test_line_estimated_from_an_open_removes_three_metres_of_coax_within_0_005():
    # The acceptance check: 3 m of scikit-rf Coaxial (copper, solid PE), an open at its
    # end measured 10 MHz–3 GHz; the line estimated from it, removed in front of a load at the
    # end of the same cable, leaves |ΔΓ| ≤ 0.005 at every point.
    f = np.linspace(10e6, 3e9, 1001)
    coax = _coax(f)
    cable = coax.line(3.0, unit="m")
    est = estimate_plane(Sweep(f, (cable ** coax.open()).s, 50.0), standard="open", velocity_factor=1 / 1.5)
    assert est.length_m == pytest.approx(3.0, rel=2e-3)
    for load_gamma in (0.3 + 0.2j, 0.0, -0.6j, 0.9):
        load = coax.load(load_gamma)
        back = remove_offsets(Sweep(f, (cable ** load).s, 50.0), [est.offset()]).s[:, 0, 0]
        assert np.max(np.abs(back - load.s[:, 0, 0])) <= 0.005
    # The model without the skin term's phase could not do this (the issue measured 0.064).
    plain = LineOffset(est.delay_s, est.loss_db, est.loss_ref_hz, est.dielectric_loss_db, skin_phase=False)
    back = remove_offsets(Sweep(f, (cable ** coax.load(0.3 + 0.2j)).s, 50.0), [plain]).s[:, 0, 0]
    assert np.max(np.abs(back - (0.3 + 0.2j))) > 0.05
    # Common practice: a few metres of thin coax lose several dB near 1 GHz (round trip here).
    assert 2 * (est.loss_db + est.dielectric_loss_db) > 2.0


def test_estimate_splits_conductor_and_dielectric_loss_of_coax():
    # Pozar's α_c and α_d for the same coax (see _pozar_offset) against the estimate from an open.
    f = np.linspace(10e6, 3e9, 1001)
    coax = _coax(f, tan_delta=1e-3)
    truth = _pozar_offset(3.0, tan_delta=1e-3)
    est = estimate_plane(Sweep(f, (coax.line(3.0, unit="m") ** coax.open()).s, 50.0), standard="open")
    assert est.loss_db == pytest.approx(truth.loss_db, rel=0.05)
    assert est.dielectric_loss_db == pytest.approx(truth.dielectric_loss_db, rel=0.15)
    assert est.skin_phase


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=40, deadline=None)
@given(delay=st.floats(1e-10, 5e-9), loss=st.floats(0, 1), diel=st.floats(0, 0.3),
       z0=st.one_of(st.none(), st.floats(20, 150)), full=st.booleans(), seed=st.integers(0, 10_000))
def test_adding_then_removing_a_causal_or_full_line_returns_the_input(delay, loss, diel, z0, full, seed):
    # Removing is the exact inverse of adding (cascade algebra), whatever the model switches say.
    # Losses per nanosecond of delay up to 1 dB (conductor) and 0.3 dB (dielectric) at 1 GHz:
    # several times the lossiest thin coax (RG-174 about 0.26 dB/ns; common practice, from memory).
    loss, diel = loss * delay * 1e9, diel * delay * 1e9
    rng = np.random.default_rng(seed)
    f = np.linspace(1e6, 3e9, 64)
    s = 0.45 * (rng.normal(size=(f.size, 2, 2)) + 1j * rng.normal(size=(f.size, 2, 2)))
    sweep = Sweep(f, s, 50.0)
    offset = LineOffset(delay, loss, 1e9, diel, z0, skin_phase=True, z0_follows_skin=full)
    back = remove_offsets(add_offsets(sweep, [offset, offset]), [offset, offset])
    np.testing.assert_allclose(back.s, s, atol=1e-9)
    one = Sweep(f, s[:, :1, :1], 50.0)
    np.testing.assert_allclose(remove_offsets(add_offsets(one, [offset]), [offset]).s, one.s, atol=1e-9)
