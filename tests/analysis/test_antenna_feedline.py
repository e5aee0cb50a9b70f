"""The feedline between radio and antenna: impedance both ways and the loss budget.

Sources named beside each check:
- "handbook": the mismatched-lossy-line relation published in the amateur-radio handbook literature:
  total loss = 10·log10[(a² − |ρ|²)/(a(1 − |ρ|²))], a = 10^(ML/10), |ρ_in| = |ρ|/a; ML 1 dB with SWR 3
  at the load gives about 1.50 dB total and SWR about 2.32 at the input.
- "telegrapher": an exact, independent computation from the telegrapher's-equation solution of a uniform
  line, V(l) = V_L cosh γl + I_L Zc sinh γl, I(l) = I_L cosh γl + (V_L/Zc) sinh γl, power ½Re(V I*)
  (Pozar, Microwave Engineering, ch. 2 — from memory).
- scikit-rf as a reference library: ``DefinedGammaZ0(z0=Zc, z0_port=50).line`` cascaded with ``**``.
- "Pozar ch. 2": a half-wave lossless line repeats its load, Zin = ZL.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.antenna.feedline import handbook_total_loss_db, toward_antenna, toward_radio
from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S, LineOffset
from refplane.analysis.errors import AnalysisError


def _zc(line: LineOffset, f, z_ref=50.0):
    """The line's own impedance: the line model's, where it offers one; else its stated impedance."""
    if hasattr(line, "impedance_ohm"):
        return np.asarray(line.impedance_ohm(f, z_ref), dtype=complex)
    return np.full(np.shape(f), complex(line.line_z0_ohm or z_ref))


def _telegrapher(f, z_load, line, z_ref=50.0):
    """(Z at the input, total loss in dB) from the line's V/I solution (telegrapher)."""
    gl = line.gamma_l(f)
    zc = _zc(line, f, z_ref)
    i_l = np.ones_like(gl)
    v_l = z_load * i_l
    v_in = v_l * np.cosh(gl) + i_l * zc * np.sinh(gl)
    i_in = i_l * np.cosh(gl) + v_l / zc * np.sinh(gl)
    p_in = 0.5 * np.real(v_in * np.conj(i_in))
    p_l = 0.5 * np.real(v_l * np.conj(i_l))
    return v_in / i_in, 10 * np.log10(p_in / p_l)


@pytest.mark.parametrize("z_load", [150.0, 50.0 / 3.0, 50.0 * (1 + 0.5j) / (1 - 0.5j), 50.0 * (1 - 0.5j) / (1 + 0.5j)])
def test_handbook_example_ml_1db_swr_3(z_load):
    # handbook: ML 1 dB, SWR 3 at the load → ≈ 1.50 dB total, SWR ≈ 2.32 at the radio, whatever the load's phase.
    f = 14.1e6
    line = LineOffset.from_length(27.3, 0.66, loss_db=1.0, loss_ref_hz=f)
    r = toward_radio(f, z_load, line)
    assert float(r.vswr_antenna[0]) == pytest.approx(3.0, rel=1e-12)
    assert float(r.matched_loss_db[0]) == pytest.approx(1.0, rel=1e-12)
    assert float(r.total_loss_db[0]) == pytest.approx(1.50, abs=0.005)
    assert float(r.vswr_radio[0]) == pytest.approx(2.32, abs=0.005)
    assert float(r.total_loss_db[0]) == pytest.approx(float(handbook_total_loss_db(1.0, 3.0)), abs=1e-9)
    # telegrapher: the exact V/I computation gives the same input impedance and loss.
    z_in, loss = _telegrapher(np.array([f]), z_load, line)
    assert complex(r.z_radio_ohm[0]) == pytest.approx(complex(z_in[0]), rel=1e-9)
    assert float(r.total_loss_db[0]) == pytest.approx(float(loss[0]), abs=1e-9)
    assert float(r.mismatch_loss_extra_db[0]) == pytest.approx(float(loss[0]) - 1.0, abs=1e-9)


def test_handbook_relation_over_many_loads_and_losses():
    # handbook relation against the telegrapher computation for many loss / SWR / phase combinations.
    rng = np.random.default_rng(7)
    f = np.full(40, 7.1e6)
    for ml in (0.2, 1.0, 3.0, 6.0):
        line = LineOffset.from_length(31.0, 0.8, loss_db=ml, loss_ref_hz=7.1e6)
        rho = rng.uniform(0, 0.95, f.size) * np.exp(1j * rng.uniform(-np.pi, np.pi, f.size))
        z = 50 * (1 + rho) / (1 - rho)
        r = toward_radio(f, z, line)
        _, exact = _telegrapher(f, z, line)
        assert np.allclose(r.total_loss_db, exact, atol=1e-9)
        swr = (1 + np.abs(rho)) / (1 - np.abs(rho))
        assert np.allclose(r.total_loss_db, handbook_total_loss_db(ml, swr), atol=1e-9)
        # handbook: |ρ_in| = |ρ|/a.
        rho_in = (r.vswr_radio - 1) / (r.vswr_radio + 1)
        assert np.allclose(rho_in, np.abs(rho) / 10 ** (ml / 10), atol=1e-12)


def test_line_of_another_impedance_against_skrf():
    # scikit-rf as a reference: a 75 Ω lossy line in a 50 Ω system, cascaded in front of the load.
    skrf = pytest.importorskip("skrf")
    f = np.linspace(1e6, 30e6, 59)
    line = LineOffset.from_length(12.0, 0.78, loss_db=0.8, loss_ref_hz=30e6, line_z0_ohm=75.0)
    z_load = 20 + 1j * 2 * np.pi * f * 1e-6 + 1 / (1j * 2 * np.pi * f * 2e-9)
    freq = skrf.Frequency.from_f(f, unit="hz")
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50, z0=_zc(line, f), gamma=line.gamma_l(f) / 12.0)
    load = skrf.Network(frequency=freq, s=((z_load - 50) / (z_load + 50)).reshape(-1, 1, 1), z0=50)
    ref = media.line(12.0, unit="m") ** load
    r = toward_radio(f, z_load, line)
    assert np.allclose(r.z_radio_ohm, ref.z[:, 0, 0], rtol=1e-9)
    z_in, loss = _telegrapher(f, z_load, line)
    assert np.allclose(r.total_loss_db, loss, atol=1e-9)


def test_both_ways_agree():
    f = np.linspace(3e6, 30e6, 28)
    line = LineOffset.from_length(18.0, 0.66, loss_db=1.5, loss_ref_hz=30e6)
    z_ant = 30 + 1j * np.linspace(-200, 300, f.size)
    there = toward_radio(f, z_ant, line, power_w=100.0)
    back = toward_antenna(f, there.z_radio_ohm, line, power_w=100.0)
    assert np.allclose(back.z_antenna_ohm, z_ant, rtol=1e-9)
    assert np.allclose(back.total_loss_db, there.total_loss_db, atol=1e-9)
    assert np.allclose(back.power_at_antenna_w, there.power_at_antenna_w, rtol=1e-9)


def test_half_wave_lossless_line_repeats_the_load_and_loses_nothing():
    # Pozar ch. 2: Zin = ZL for a half-wave lossless line; no loss, all the power reaches the load.
    f = 10e6
    half = 0.5 * 0.66 * SPEED_OF_LIGHT_M_S / f
    line = LineOffset.from_length(half, 0.66)
    r = toward_radio(f, 12 - 80j, line, power_w=100.0)
    assert complex(r.z_radio_ohm[0]) == pytest.approx(12 - 80j, rel=1e-9)
    assert float(r.total_loss_db[0]) == pytest.approx(0.0, abs=1e-9)
    assert float(r.power_at_antenna_w[0]) == pytest.approx(100.0, rel=1e-9)


def test_power_and_open_load():
    f = 14e6
    line = LineOffset.from_length(10.0, 0.66, loss_db=2.0, loss_ref_hz=f)
    matched = toward_radio(f, 50.0, line, power_w=100.0)
    # common practice: 2 dB of matched loss passes 10^(−0.2) = 63.1 % of the power.
    assert float(matched.power_at_antenna_w[0]) == pytest.approx(100 * 10 ** -0.2, rel=1e-12)
    assert float(matched.mismatch_loss_extra_db[0]) == pytest.approx(0.0, abs=1e-12)
    open_end = toward_radio(f, np.inf, line, power_w=100.0)
    assert math.isinf(float(open_end.total_loss_db[0]))
    assert float(open_end.power_at_antenna_w[0]) == 0.0
    assert open_end.json_points()[0]["total_loss_db"] is None
    assert toward_radio(f, 50.0, line).json_points()[0]["power_at_antenna_w"] is None
    assert set(matched.json_points()[0]) >= {"freq_hz", "z_radio_ohm", "z_antenna_ohm", "vswr_radio",
                                             "vswr_antenna", "matched_loss_db", "total_loss_db",
                                             "power_at_antenna_w"}


def test_bad_input():
    line = LineOffset.from_length(10.0, 0.66)
    with pytest.raises(AnalysisError):
        toward_radio(14e6, 50.0, line, power_w=-1.0)
    with pytest.raises(AnalysisError):
        toward_radio(0.0, 50.0, line)
    with pytest.raises(AnalysisError):
        toward_radio(14e6, 50.0, "10 m")


@pytest.mark.parametrize("options", [{"skin_phase": True}, {"z0_follows_skin": True}])
def test_richer_line_models_against_the_telegrapher(options):
    # telegrapher: when the line model carries the skin effect's phase or an impedance that follows the skin
    # law (complex, frequency-dependent Zc), the budget still equals the exact V/I computation with that γl
    # and Zc, and the matched loss is Re(γl) in dB (a wave on a line ended in its own impedance decays as e^(−αz)).
    import dataclasses

    if not set(options) <= {x.name for x in dataclasses.fields(LineOffset)}:
        pytest.skip("this line model has no such option")
    f = np.linspace(0.5e6, 30e6, 60)
    line = LineOffset.from_length(40.0, 0.66, loss_db=2.0, loss_ref_hz=30e6, **options)
    z_ant = 25 + 1j * np.linspace(-150, 200, f.size)
    r = toward_radio(f, z_ant, line, power_w=100.0)
    z_in, loss = _telegrapher(f, z_ant, line)
    assert np.allclose(r.z_radio_ohm, z_in, rtol=1e-9)
    assert np.allclose(r.total_loss_db, loss, atol=1e-9)
    assert np.allclose(r.matched_loss_db, 20 / math.log(10) * line.gamma_l(f).real, rtol=1e-12)
    back = toward_antenna(f, r.z_radio_ohm, line)
    assert np.allclose(back.z_antenna_ohm, z_ant, rtol=1e-8)
