"""Line offsets checked against scikit-rf's transmission-line media and textbook line formulas."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from refplane.analysis.lines.deembed import (DB_PER_NEPER, SPEED_OF_LIGHT_M_S, LineOffset, add_offsets,
                                       describe_offsets, line_s, remove_offsets, with_port_offset)
from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma
from refplane.analysis.sweep import Sweep

skrf = pytest.importorskip("skrf")

# skrf handles f = 0 with a small offset of its own, so reference comparisons start above DC.
FREQ = np.linspace(1e6, 3e9, 301)


def _media(offset: LineOffset, length_m: float, z_port: float = 50.0):
    """scikit-rf line medium with the same γ (per metre) and characteristic impedance."""
    freq = skrf.Frequency.from_f(FREQ, unit="hz")
    zc = z_port if offset.line_z0_ohm is None else offset.line_z0_ohm
    return skrf.media.DefinedGammaZ0(freq, z0_port=z_port, z0=zc, gamma=offset.gamma_l(FREQ) / length_m)


def _sweep(network) -> Sweep:
    return Sweep(freq_hz=network.f, s=network.s, z0_ohm=network.z0[0])


LINES = [
    pytest.param(dict(loss_db=0.0), id="lossless-matched"),
    pytest.param(dict(loss_db=0.7, dielectric_loss_db=0.2), id="lossy-matched"),
    pytest.param(dict(loss_db=0.7, dielectric_loss_db=0.2, line_z0_ohm=75.0), id="lossy-75ohm"),
    pytest.param(dict(loss_db=0.3, line_z0_ohm=25.0), id="lossy-25ohm"),
]


@pytest.mark.parametrize("kw", LINES)
def test_line_two_port_matches_skrf_line(kw):
    # Reference: scikit-rf DefinedGammaZ0.line(d, unit='m'), a line of given γ and Z0 at 50 Ω ports.
    length = 0.37
    offset = LineOffset.from_length(length, 0.66, **kw)
    ref = _media(offset, length).line(length, unit="m")
    np.testing.assert_allclose(line_s(offset, FREQ, 50.0), ref.s, rtol=0, atol=1e-12)


@pytest.mark.parametrize("kw", LINES)
def test_removing_a_line_in_front_of_a_load_recovers_the_load(kw):
    # Reference: scikit-rf cascade (line ** load); removing the same line must give the load back.
    length = 0.37
    offset = LineOffset.from_length(length, 0.66, **kw)
    media = _media(offset, length)
    load = media.load(0.3 + 0.2j)
    measured = _sweep(media.line(length, unit="m") ** load)
    back = remove_offsets(measured, [offset])
    np.testing.assert_allclose(back.s[:, 0, 0], load.s[:, 0, 0], rtol=0, atol=1e-9)
    # And adding the line to the bare load gives skrf's cascade.
    np.testing.assert_allclose(add_offsets(_sweep(load), [offset]).s, measured.s, rtol=0, atol=1e-9)


@pytest.mark.parametrize("kw", LINES)
def test_removing_lines_from_both_ports_of_a_two_port(kw):
    # Reference: scikit-rf cascade line1 ** dut ** flipped(line2) of a 2-port; each port's line
    # removed with its own offset gives the 2-port back.
    rng = np.random.default_rng(7)
    freq = skrf.Frequency.from_f(FREQ, unit="hz")
    dut_s = 0.4 * (rng.normal(size=(FREQ.size, 2, 2)) + 1j * rng.normal(size=(FREQ.size, 2, 2)))
    dut = skrf.Network(frequency=freq, s=dut_s, z0=50)
    first = LineOffset.from_length(0.37, 0.66, **kw)
    second = LineOffset.from_length(0.12, 0.8, loss_db=0.2, line_z0_ohm=45.0)
    measured = _sweep(_media(first, 0.37).line(0.37, unit="m") ** dut
                      ** _media(second, 0.12).line(0.12, unit="m").flipped())
    back = remove_offsets(measured, [first, second])
    np.testing.assert_allclose(back.s, dut_s, rtol=0, atol=1e-9)
    # Only one port's line removed: S11 of the result equals skrf's cascade without line 1.
    only_second = _sweep(dut ** _media(second, 0.12).line(0.12, unit="m").flipped())
    np.testing.assert_allclose(remove_offsets(measured, [first]).s, only_second.s, rtol=0, atol=1e-9)
    np.testing.assert_allclose(remove_offsets(measured, [first, None]).s, only_second.s, rtol=0, atol=1e-9)


def test_quarter_wave_transformer_gives_z0_squared_over_zl():
    # Pozar, Microwave Engineering, ch. 2 (from memory): a lossless quarter-wave line of Z0
    # in front of ZL reads Zin = Z0² / ZL.
    f_q = 500e6
    offset = LineOffset(delay_s=1.0 / (4.0 * f_q), line_z0_ohm=70.7)
    zl = 100.0
    load = Sweep(np.array([f_q]), z_to_gamma(np.array([zl]), 50.0).reshape(1, 1, 1), 50.0)
    zin = gamma_to_z(add_offsets(load, [offset]).s[0, 0, 0], 50.0)
    assert zin == pytest.approx(70.7 ** 2 / zl, rel=1e-12)


def test_half_wave_line_repeats_the_load():
    # Pozar, Microwave Engineering, ch. 2 (from memory): a half-wave line gives Zin = ZL,
    # whatever its impedance.
    f_h = 300e6
    offset = LineOffset(delay_s=1.0 / (2.0 * f_h), line_z0_ohm=93.0)
    zl = 30.0 - 45.0j
    load = Sweep(np.array([f_h]), z_to_gamma(np.array([zl]), 50.0).reshape(1, 1, 1), 50.0)
    zin = gamma_to_z(add_offsets(load, [offset]).s[0, 0, 0], 50.0)
    assert zin == pytest.approx(zl, rel=1e-10)


def test_lossy_line_input_impedance_formula():
    # Textbook (Pozar ch. 2, from memory): Zin = Z0 (ZL + Z0 tanh γl) / (Z0 + ZL tanh γl).
    offset = LineOffset.from_length(2.5, 0.7, loss_db=1.5, dielectric_loss_db=0.4, line_z0_ohm=75.0)
    zl = 20.0 + 35.0j
    gl = offset.gamma_l(FREQ)
    expected = 75.0 * (zl + 75.0 * np.tanh(gl)) / (75.0 + zl * np.tanh(gl))
    load = Sweep(FREQ, np.full(FREQ.size, z_to_gamma(zl, 50.0)), 50.0)
    zin = gamma_to_z(add_offsets(load, [offset]).s[:, 0, 0], 50.0)
    np.testing.assert_allclose(zin, expected, rtol=1e-11)


def test_gamma_l_follows_sqrt_f_and_f_loss_laws():
    # Textbook: conductor (skin-effect) loss grows as √f, dielectric loss as f; 20·log10(e) dB per neper.
    # The loss-only form (no phase with the √f term) on request:
    offset = LineOffset(delay_s=1e-9, loss_db=0.4, dielectric_loss_db=0.1, loss_ref_hz=1e9, skin_phase=False)
    f = np.array([0.0, 1e9, 4e9])
    gl = offset.gamma_l(f)
    np.testing.assert_allclose(gl.real * DB_PER_NEPER, [0.0, 0.5, 0.4 * 2 + 0.1 * 4], atol=1e-12)
    np.testing.assert_allclose(gl.imag, 2 * np.pi * f * 1e-9, rtol=1e-15)
    # By default the √f conductor term carries its equal phase (causal skin effect, surface
    # impedance Zs = (1 + j)·√(πfμ/σ); Pozar §1.7): Im γl = 2πfτ + the conductor loss in nepers.
    causal = LineOffset(delay_s=1e-9, loss_db=0.4, dielectric_loss_db=0.1, loss_ref_hz=1e9).gamma_l(f)
    np.testing.assert_allclose(causal.real, gl.real, rtol=1e-15)
    np.testing.assert_allclose(causal.imag, 2 * np.pi * f * 1e-9 + 0.4 * np.sqrt(f / 1e9) / DB_PER_NEPER,
                               rtol=1e-12)
    assert DB_PER_NEPER == pytest.approx(8.685889638, rel=1e-9)  # from memory: 1 Np = 8.686 dB


def test_from_length_uses_exact_speed_of_light():
    # SI definition: c = 299 792 458 m/s exactly; delay = length / (vf · c).
    offset = LineOffset.from_length(0.2, 0.66)
    assert SPEED_OF_LIGHT_M_S == 299_792_458.0
    assert offset.delay_s == pytest.approx(0.2 / (0.66 * 299_792_458.0), rel=1e-15)
    assert offset.length_m(0.66) == pytest.approx(0.2, rel=1e-15)


def test_twenty_cm_open_cable_reads_short_at_quarter_wave_and_open_at_low_frequency():
    # Common practice (references.md): 20 cm of coax with vf 0.66 is a quarter wave near
    # c·0.66/(4·0.2) ≈ 247 MHz: an open at its end reads as a short there; below about 1 MHz
    # the short cable hardly moves the reading.
    f_q = SPEED_OF_LIGHT_M_S * 0.66 / (4 * 0.2)
    assert f_q == pytest.approx(247e6, rel=0.002)
    f = np.array([100e3, 1e6, f_q])
    open_end = Sweep(f, np.ones(3, complex), 50.0)
    seen = add_offsets(open_end, [LineOffset.from_length(0.2, 0.66, loss_db=0.1)]).s[:, 0, 0]
    assert abs(seen[2] - (-1.0)) < 0.02                    # reads as a short
    assert abs(seen[0] - 1.0) < 0.01 and abs(seen[1] - 1.0) < 0.02   # still an open


def test_open_at_far_end_shows_twice_the_one_way_loss_as_return_loss():
    # Common practice (references.md): a few metres of thin coax lose several dB near 1 GHz,
    # and an open at the far end shows about twice the one-way loss as return loss.
    cable = LineOffset.from_length(4.0, 0.66, loss_db=3.5)       # e.g. 4 m of thin coax, 3.5 dB at 1 GHz
    f = np.array([1e9])
    seen = add_offsets(Sweep(f, np.ones(1, complex), 50.0), [cable]).s[0, 0, 0]
    assert -20 * math.log10(abs(seen)) == pytest.approx(7.0, rel=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    delay=st.floats(-5e-9, 5e-9), loss=st.floats(0, 3), diel=st.floats(0, 1),
    z0=st.one_of(st.none(), st.floats(10, 200)), delay2=st.floats(0, 3e-9),
    seed=st.integers(0, 2 ** 16),
)
def test_adding_then_removing_returns_the_input(delay, loss, diel, z0, delay2, seed):
    # Algebraic identity: removal is the exact inverse of the cascade.
    rng = np.random.default_rng(seed)
    n = 40
    f = np.linspace(0, 2e9, n)
    s = 0.6 * (rng.uniform(-1, 1, (n, 2, 2)) + 1j * rng.uniform(-1, 1, (n, 2, 2)))
    sweep = Sweep(f, s, 50.0)
    offsets = [LineOffset(delay, loss, 1e9, diel, z0), LineOffset(delay2, 0.2, 1e9, 0.0, 60.0)]
    again = remove_offsets(add_offsets(sweep, offsets), offsets)
    np.testing.assert_allclose(again.s, s, rtol=0, atol=1e-12)
    one = Sweep(f, s[:, :1, :1], 50.0)
    np.testing.assert_allclose(add_offsets(remove_offsets(one, offsets[:1]), offsets[:1]).s, one.s,
                               rtol=0, atol=1e-12)


def test_matched_line_is_a_phase_rotation_and_attenuation():
    # Definition of a matched line: S_ij picks up e^(−γ_i l_i)·e^(−γ_j l_j).
    rng = np.random.default_rng(3)
    f = np.linspace(1e6, 1e9, 11)
    s = rng.normal(size=(11, 2, 2)) + 0j
    a, b = LineOffset(1e-9, 0.5), LineOffset(0.3e-9, 0.1, line_z0_ohm=50.0)
    out = add_offsets(Sweep(f, s, 50.0), [a, b]).s
    ta, tb = np.exp(-a.gamma_l(f)), np.exp(-b.gamma_l(f))
    np.testing.assert_allclose(out[:, 0, 0], s[:, 0, 0] * ta ** 2, rtol=1e-14)
    np.testing.assert_allclose(out[:, 1, 0], s[:, 1, 0] * ta * tb, rtol=1e-14)


def test_no_offsets_returns_the_sweep_and_keeps_metadata():
    sweep = Sweep(FREQ, np.zeros(FREQ.size, complex), 50.0, name="dut", comments=("c",))
    assert remove_offsets(sweep, None) is sweep
    assert remove_offsets(sweep, [LineOffset()]) is sweep
    out = remove_offsets(sweep, [LineOffset(1e-9)])
    assert (out.name, out.comments) == ("dut", ("c",))
    assert LineOffset().is_zero and LineOffset(line_z0_ohm=75).is_zero and not LineOffset(1e-12).is_zero


@pytest.mark.parametrize("kw, words", [
    (dict(loss_db=-0.1), "negative"),
    (dict(dielectric_loss_db=-1), "negative"),
    (dict(delay_s=float("nan")), "finite"),
    (dict(delay_s=float("inf")), "finite"),
    (dict(loss_ref_hz=0), "above zero"),
    (dict(line_z0_ohm=0), "above zero"),
    (dict(line_z0_ohm=-50), "above zero"),
    (dict(line_z0_ohm=50 + 1j), "real"),
    (dict(delay_s="x"), "not a number"),
])
def test_bad_line_values_are_refused(kw, words):
    with pytest.raises(AnalysisError, match=words):
        LineOffset(**kw)


@pytest.mark.parametrize("vf", [0, -0.5, 1.2, float("nan")])
def test_bad_velocity_factor_is_refused(vf):
    with pytest.raises(AnalysisError, match="velocity factor"):
        LineOffset.from_length(0.2, vf)


def test_too_many_offsets_is_an_error():
    sweep = Sweep(FREQ, np.zeros(FREQ.size, complex), 50.0)
    with pytest.raises(AnalysisError, match="2 line offsets given for a 1-port"):
        remove_offsets(sweep, [LineOffset(1e-9), LineOffset(1e-9)])
    with pytest.raises(AnalysisError, match="line offset was expected"):
        add_offsets(sweep, [1e-9])


def test_describe_offsets_names_each_port():
    lines = describe_offsets([None, LineOffset(1.01e-9, 0.4, line_z0_ohm=75.0)])
    assert len(lines) == 1 and lines[0].startswith("Refplane: port 2 line removed: delay 1.010 ns")
    assert "75 Ω" in lines[0] and "0.4 dB" in lines[0]


def test_offset_helpers_for_editing():
    # Delay from length: length / (vf · c), SI definition of c.
    base = LineOffset(1e-9, 0.4, 2e9, 0.1, 75.0)
    longer = base.with_length(0.3, 0.8)
    assert longer.delay_s == pytest.approx(0.3 / (0.8 * SPEED_OF_LIGHT_M_S), rel=1e-15)
    assert (longer.loss_db, longer.loss_ref_hz, longer.dielectric_loss_db, longer.line_z0_ohm) == (0.4, 2e9, 0.1, 75.0)
    assert base.stepped(-3, 1e-12).delay_s == pytest.approx(0.997e-9, rel=1e-14)
    assert with_port_offset((), 2, 2, base) == (LineOffset(), base)
    assert with_port_offset((base, None), 2, 1, None) == (LineOffset(), LineOffset())
    with pytest.raises(AnalysisError, match="port 3"):
        with_port_offset((), 2, 3, base)


@pytest.mark.parametrize("ports", [1, 2, 3])
def test_round_trip_with_complex_references_and_mismatched_lines(ports):
    # Algebraic identity: removal inverts the cascade, for complex port references too.
    rng = np.random.default_rng(ports)
    f = np.linspace(0, 2e9, 30)
    s = 0.5 * (rng.normal(size=(30, ports, ports)) + 1j * rng.normal(size=(30, ports, ports)))
    sweep = Sweep(f, s, np.array([50 + 10j, 35 - 5j, 75.0][:ports]))
    offsets = [LineOffset(1e-9, 0.3, 1e9, 0.1, 60.0), LineOffset(2e-9, 0.1),
               LineOffset(0.5e-9, 0, 1e9, 0, 93.0)][:ports]
    np.testing.assert_allclose(remove_offsets(add_offsets(sweep, offsets), offsets).s, s, rtol=0, atol=1e-12)


def test_one_port_shortcut_agrees_with_the_general_cascade():
    # The 1-port path renormalises Γ to the line's impedance; the N-port path cascades the
    # line's two-port S. Port 1 of a 2-port with nothing coupled to port 2 must read the same.
    rng = np.random.default_rng(11)
    f = np.linspace(0, 2e9, 30)
    g = 0.5 * (rng.normal(size=30) + 1j * rng.normal(size=30))
    s2 = np.zeros((30, 2, 2), complex)
    s2[:, 0, 0] = g
    s2[:, 1, 1] = 0.1
    line = LineOffset(1e-9, 0.3, 1e9, 0.1, 60.0)
    one = add_offsets(Sweep(f, g, 50 + 10j), [line]).s[:, 0, 0]
    two = add_offsets(Sweep(f, s2, np.array([50 + 10j, 50])), [line]).s[:, 0, 0]
    np.testing.assert_allclose(one, two, rtol=0, atol=1e-14)


@pytest.mark.parametrize("freq", [np.linspace(1e6, 6e9, 50_001), np.geomspace(1e5, 6e9, 20_001),
                                  np.arange(1, 30_002) * 2e5], ids=["even", "log", "integer-steps"])
@pytest.mark.parametrize("delay_s", [1.0108e-9, 47.3e-9, -2e-12])
def test_long_sweeps_match_the_plain_exponential(freq, delay_s):
    # Definition of a matched line: Γ at the far end = Γ · e^(+2γl). Long sweeps are worked
    # in blocks with a faster phase evaluation; they must agree with numpy's exponential to
    # the rounding of the phase itself (|2ωτ| up to about 3600 rad here).
    rng = np.random.default_rng(5)
    gamma = 0.8 * np.exp(1j * rng.uniform(-np.pi, np.pi, freq.size))
    line = LineOffset(delay_s, 0.4)
    out = remove_offsets(Sweep(freq, gamma, 50.0), [line]).s[:, 0, 0]
    expected = gamma * np.exp(2 * line.gamma_l(freq))
    np.testing.assert_allclose(out, expected, rtol=0, atol=5e-12)
