"""Impedance readouts checked against textbook identities, a handbook table, scikit-rf and facts of the trade.

Sources named beside each check:
- "Pozar": D. M. Pozar, *Microwave Engineering*, ch. 2 (from memory) — Γ = (Z−Z0)/(Z+Z0),
  Z = Z0(1+Γ)/(1−Γ), VSWR = (1+|Γ|)/(1−|Γ|), RL = −20·log10|Γ|, ML = −10·log10(1−|Γ|²), Q = |X|/R,
  series L = X/(2πf), series C = −1/(2πf·X).
- "table": the exact VSWR ↔ |Γ| ↔ RL ↔ ML table in /work/shared/references.md (computed from Pozar's identities).
- "scikit-rf": skrf.Network conversions (Network.z, Network.y, s_vswr, s_db) and the files shipped in skrf.data.
- "common practice": facts of the trade, with tolerances.
"""

from __future__ import annotations

import math
import pathlib
from dataclasses import asdict

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import (
    Readout,
    gamma_to_y,
    gamma_to_z,
    mismatch_loss_db,
    parallel_equivalent,
    q_factor,
    readout,
    return_loss_db,
    series_equivalent,
    vswr,
    z_to_gamma,
)

# ---------------------------------------------------------------- closed-form identities (Pozar, ch. 2, from memory)


def test_gamma_of_known_loads():
    # Pozar ch. 2: Γ = (Z − Z0)/(Z + Z0). 100 Ω on 50 Ω → 1/3; 25 Ω → −1/3; 50 + j50 → (j50)/(100 + j50).
    assert z_to_gamma(100.0, 50.0) == pytest.approx(1 / 3, abs=1e-15)
    assert z_to_gamma(25.0, 50.0) == pytest.approx(-1 / 3, abs=1e-15)
    assert complex(z_to_gamma(50 + 50j, 50.0)) == pytest.approx(50j / (100 + 50j), abs=1e-15)
    # Matched load → Γ = 0 (Pozar).
    assert z_to_gamma(50.0, 50.0) == 0
    # Z0 = 75 Ω system (Pozar: the identities hold for any real Z0).
    assert z_to_gamma(75.0, 75.0) == 0
    assert z_to_gamma(150.0, 75.0) == pytest.approx(1 / 3, abs=1e-15)


def test_z_of_known_gammas():
    # Pozar ch. 2: Z = Z0 (1 + Γ)/(1 − Γ). Γ = 1/3 → 2·Z0; Γ = j → j·Z0 (a pure reactance on the unit circle).
    assert complex(gamma_to_z(1 / 3, 50.0)) == pytest.approx(100.0, rel=1e-14)
    assert complex(gamma_to_z(1j, 50.0)) == pytest.approx(50j, abs=1e-12)
    assert complex(gamma_to_z(-1j, 50.0)) == pytest.approx(-50j, abs=1e-12)
    assert complex(gamma_to_z(0.0, 75.0)) == 75.0


def test_admittance_is_reciprocal_of_impedance():
    # Pozar ch. 2: Y = 1/Z = (1 − Γ)/(Z0 (1 + Γ)).
    g = np.array([0.2 + 0.1j, -0.5j, 0.9, -0.3 + 0.4j])
    np.testing.assert_allclose(gamma_to_y(g, 50.0), 1.0 / gamma_to_z(g, 50.0), rtol=1e-14)
    # A short (Γ = −1) has infinite admittance; an open (Γ = 1) has zero (Pozar, limits).
    assert np.isinf(gamma_to_y(-1.0, 50.0))
    assert gamma_to_y(1.0, 50.0) == 0


def test_vswr_return_loss_mismatch_loss_formulas():
    # Pozar ch. 2: VSWR = (1+|Γ|)/(1−|Γ|), RL = −20 log10|Γ|, ML = −10 log10(1 − |Γ|²).
    mags = np.array([0.01, 0.1, 0.25, 0.5, 0.9, 0.999])
    g = mags * np.exp(1j * np.array([0.3, -2.0, 1.0, 3.1, -0.7, 0.0]))
    np.testing.assert_allclose(vswr(g), (1 + mags) / (1 - mags), rtol=1e-12)
    np.testing.assert_allclose(return_loss_db(g), -20 * np.log10(mags), rtol=1e-12)
    np.testing.assert_allclose(mismatch_loss_db(g), -10 * np.log10(1 - mags**2), rtol=1e-10)


# The exact table in /work/shared/references.md (computed from Pozar's identities):
# (VSWR, |Γ|, return loss dB, mismatch loss dB or None where the table gives none)
REFERENCE_TABLE = [
    (1.1, 0.04762, 26.444, None),
    (1.5, 0.2, 13.979, 0.1773),
    (2.0, 0.33333, 9.542, 0.5115),
    (3.0, 0.5, 6.021, 1.2494),
]


@pytest.mark.parametrize("swr, mag, rl_db, ml_db", REFERENCE_TABLE)
def test_reference_table(swr, mag, rl_db, ml_db):
    # Table in references.md: VSWR → |Γ| → RL → ML, to the digits printed there.
    g = (swr - 1) / (swr + 1)  # Pozar: |Γ| = (VSWR − 1)/(VSWR + 1)
    assert g == pytest.approx(mag, abs=5e-6)
    assert float(vswr(g)) == pytest.approx(swr, rel=1e-12)
    assert float(return_loss_db(g)) == pytest.approx(rl_db, abs=5e-4)
    if ml_db is not None:
        assert float(mismatch_loss_db(g)) == pytest.approx(ml_db, abs=5e-5)
    # The same from an impedance: a real load of VSWR·Z0 has that VSWR (Pozar: VSWR = R/Z0 for R > Z0).
    r = readout(100e6, z_to_gamma(swr * 50.0, 50.0), 50.0)
    assert r.vswr == pytest.approx(swr, rel=1e-12)
    assert r.gamma_mag == pytest.approx(mag, abs=5e-6)
    assert r.return_loss_db == pytest.approx(rl_db, abs=5e-4)


def test_q_factor_and_series_elements():
    # Pozar ch. 2 / any circuits text: Q = |X|/R; series L = X/(2πf); series C = −1/(2πf·X).
    f = 100e6
    w = 2 * math.pi * f
    z = np.array([10 + 62.83185307179586j, 5 - 159.15494309189535j, 50 + 0j])
    l_h, c_f = series_equivalent(z, f)
    assert l_h[0] == pytest.approx(62.83185307179586 / w, rel=1e-14)  # 100 nH
    assert l_h[0] == pytest.approx(100e-9, rel=1e-12)
    assert math.isnan(c_f[0])
    assert c_f[1] == pytest.approx(10e-12, rel=1e-12)
    assert math.isnan(l_h[1])
    # A pure resistance has neither (the docstring: exactly one unless X = 0).
    assert math.isnan(l_h[2]) and math.isnan(c_f[2])
    np.testing.assert_allclose(q_factor(z), [62.83185307179586 / 10, 159.15494309189535 / 5, 0.0], rtol=1e-14)


def test_parallel_equivalent_matches_admittance():
    # Circuits identity: with Y = 1/Z = G + jB, R_p = 1/G, X_p = −1/B; in parallel they give back Z.
    z = np.array([30 + 40j, 80 - 20j, 2 + 300j])
    rp, xp = parallel_equivalent(z)
    y = 1 / z
    np.testing.assert_allclose(rp, 1 / y.real, rtol=1e-14)
    np.testing.assert_allclose(xp, -1 / y.imag, rtol=1e-14)
    back = 1 / (1 / rp + 1 / (1j * xp))
    np.testing.assert_allclose(back, z, rtol=1e-13)


# ---------------------------------------------------------------- limits (Pozar: open, short, matched)


def test_open_limit():
    # Pozar: an open (Γ = 1) is Z = ∞, VSWR = ∞, return loss 0 dB, mismatch loss ∞.
    assert np.isinf(gamma_to_z(1.0, 50.0))
    assert np.isinf(vswr(1.0))
    assert return_loss_db(1.0) == 0.0
    assert not np.signbit(return_loss_db(1.0))  # 0 dB, not −0 dB
    assert np.isinf(mismatch_loss_db(1.0))
    r = readout(1e6, 1.0, 50.0)
    assert math.isinf(r.r_ohm) and math.isinf(r.z_mag_ohm) and math.isinf(r.vswr)
    assert r.return_loss_db == 0.0
    assert math.isnan(r.x_ohm) and math.isnan(r.q)
    assert z_to_gamma(np.inf, 50.0) == 1


def test_short_limit():
    # Pozar: a short (Γ = −1) is Z = 0: R = 0, X = 0, VSWR = ∞, return loss 0 dB.
    r = readout(1e6, -1.0, 50.0)
    assert r.r_ohm == 0.0 and r.x_ohm == 0.0 and r.z_mag_ohm == 0.0
    assert math.isinf(r.vswr)
    assert r.return_loss_db == 0.0
    assert math.isnan(r.series_l_h) and math.isnan(r.series_c_f)


def test_active_load_has_no_vswr_or_mismatch_loss():
    # Pozar ch. 2: VSWR = (1 + |Γ|)/(1 − |Γ|) and mismatch loss −10·log10(1 − |Γ|²) describe
    # a passive load (|Γ| ≤ 1); for |Γ| > 1 (an active or mis-calibrated load) the formulas give
    # a negative ratio and the log of a negative number. Return loss −20·log10|Γ| stays defined
    # (negative). Issue 13: NaN in the analysis, "n/a (|Γ| > 1)" in the table, null in JSON.
    from refplane.session.present import NOT_DEFINED_ACTIVE as NOT_PASSIVE, readout_cells, summary_line

    r = readout(1e9, 1.25 + 0j, 50.0)
    assert math.isnan(r.vswr) and math.isnan(r.mismatch_loss_db)
    assert r.return_loss_db == pytest.approx(-20 * math.log10(1.25), rel=1e-14)
    assert readout_cells(r)["VSWR"] == NOT_PASSIVE == "n/a (|Γ| > 1)"
    assert NOT_PASSIVE in summary_line(r)
    assert r.json_point()["vswr"] is None
    assert "−1.94 dB" in readout_cells(r)["Return loss"]  # −20·log10(1.25) = −1.938 dB
    # Just inside the rim VSWR is still a (large) number.
    assert readout(1e9, 0.999, 50.0).vswr == pytest.approx(1999.0, rel=1e-9)


def test_matched_limit():
    # Pozar: a matched load (Γ = 0) has VSWR 1, infinite return loss and no mismatch loss.
    r = readout(1e6, 0.0, 50.0)
    assert r.vswr == 1.0
    assert math.isinf(r.return_loss_db) and r.return_loss_db > 0
    assert r.mismatch_loss_db == 0.0
    assert r.r_ohm == 50.0 and r.x_ohm == 0.0
    assert r.q == 0.0
    # JSON turns the infinity into null (no invalid JSON).
    assert r.json_point()["return_loss_db"] is None


def test_reactive_short_has_infinite_q():
    # Pozar: R = 0 with X ≠ 0 is a lossless reactance, Q = ∞ (q_factor's documented limit).
    assert np.isinf(q_factor(0 + 25j))
    assert np.isnan(q_factor(-1 + 25j))  # negative R: Q does not apply (documented)


def test_bad_reference_impedance_raises():
    for z0 in (0.0, -50.0, np.nan, np.inf):
        with pytest.raises(AnalysisError, match="reference impedance"):
            gamma_to_z(0.1, z0)
        with pytest.raises(AnalysisError):
            readout(1e6, 0.1, z0)


# ---------------------------------------------------------------- round trips (hypothesis; Pozar identities invert)

finite = st.floats(min_value=1e-3, max_value=1e5, allow_nan=False, allow_infinity=False)


@settings(max_examples=300, deadline=None)
@given(r=finite, x=st.floats(min_value=-1e5, max_value=1e5), z0=st.floats(min_value=1.0, max_value=600.0))
def test_round_trip_z_gamma_z(r, x, z0):
    # Pozar: Z → Γ → Z is the identity for any passive Z and real Z0 > 0.
    z = complex(r, x)
    g = complex(z_to_gamma(z, z0))
    assert abs(g) <= 1.0 + 1e-12  # a passive load (R ≥ 0) stays inside the chart
    back = complex(gamma_to_z(g, z0))
    # Conditioning: near Γ = 1 the inverse loses digits as 1/|1 − Γ|.
    tol = 1e-9 * abs(z) + 1e-9 * z0
    assert abs(back - z) <= tol


@settings(max_examples=300, deadline=None)
@given(mag=st.floats(min_value=0.0, max_value=0.999), ang=st.floats(min_value=-math.pi, max_value=math.pi))
def test_round_trip_gamma_z_gamma(mag, ang):
    # Pozar: Γ → Z → Γ, and Y·Z = 1.
    g = mag * complex(math.cos(ang), math.sin(ang))
    z = complex(gamma_to_z(g, 50.0))
    assert abs(complex(z_to_gamma(z, 50.0)) - g) < 1e-12
    assert abs(complex(gamma_to_y(g, 50.0)) * z - 1) < 1e-10
    # RL and VSWR are two views of |Γ|: |Γ| = 10^(−RL/20) = (VSWR−1)/(VSWR+1) (Pozar).
    if mag > 0:
        assert 10 ** (-float(return_loss_db(g)) / 20) == pytest.approx(mag, rel=1e-12)
        s = float(vswr(g))
        assert (s - 1) / (s + 1) == pytest.approx(mag, rel=1e-9, abs=1e-15)


# ---------------------------------------------------------------- readout as a whole


def test_readout_scalar_and_array_agree():
    f = np.array([1e6, 10e6, 100e6])
    g = np.array([0.1 + 0.2j, -0.3 + 0.1j, 0.5j])
    many = readout(f, g, 50.0)
    assert many.r_ohm.shape == (3,)
    for i in range(3):
        one = readout(float(f[i]), complex(g[i]), 50.0)
        assert isinstance(one.r_ohm, float)
        # NaN fields (series C where X > 0) compare equal with assert_equal, not with ==.
        np.testing.assert_equal(asdict(one), asdict(many.at(i)))
    # Pozar: Z = Z0 (1 + Γ)/(1 − Γ)
    z = 50 * (1 + g) / (1 - g)
    np.testing.assert_allclose(many.r_ohm, z.real, rtol=1e-14)
    np.testing.assert_allclose(many.x_ohm, z.imag, rtol=1e-14)
    np.testing.assert_allclose(many.gamma_deg, np.degrees(np.angle(g)), rtol=1e-14)


def test_json_point_has_documented_keys():
    r = readout(470e6, z_to_gamma(75 + 27j, 50.0), 50.0)
    point = r.json_point()
    assert tuple(point) == Readout.JSON_KEYS
    assert point["series_c_f"] is None  # X > 0: no series C
    assert point["series_l_h"] == pytest.approx(27 / (2 * math.pi * 470e6), rel=1e-12)


# ---------------------------------------------------------------- facts of the trade (common practice)


def test_leaded_resistor_reads_lead_inductance():
    # Common practice (references.md): a leaded 75 Ω resistor with about 9 nH of leads reads about
    # 75 + j27 Ω at 470 MHz, i.e. series L ≈ 9 nH. X = 2π·470 MHz·9 nH = 26.58 Ω.
    f = 470e6
    z = 75 + 1j * 2 * math.pi * f * 9e-9
    r = readout(f, z_to_gamma(z, 50.0), 50.0)
    assert r.r_ohm == pytest.approx(75.0, rel=1e-12)
    assert r.x_ohm == pytest.approx(27.0, abs=0.5)
    assert r.series_l_h == pytest.approx(9e-9, rel=1e-12)
    assert math.isnan(r.series_c_f)
    # ... and with 0.2 pF across its ends and 10 nH leads the reading stays near 77 Ω + 9 nH, the
    # references.md reading (common practice; tolerance a few per cent).
    w = 2 * math.pi * f
    z2 = 1 / (1 / (75 + 1j * w * 10e-9) + 1j * w * 0.2e-12)
    r2 = readout(f, z_to_gamma(z2, 50.0), 50.0)
    assert r2.r_ohm == pytest.approx(77.0, rel=0.02)
    assert r2.series_l_h == pytest.approx(9e-9, rel=0.03)


def test_capacitor_series_c_readout():
    # Textbook reactance X = −1/(2πfC): 10 pF at 100 MHz is −159.15 Ω, read back as 10 pF.
    f = 100e6
    x = -1 / (2 * math.pi * f * 10e-12)
    assert x == pytest.approx(-159.15, abs=0.005)
    r = readout(f, z_to_gamma(complex(0.2, x), 50.0), 50.0)
    assert r.x_ohm == pytest.approx(-159.15, abs=0.005)
    assert r.series_c_f == pytest.approx(10e-12, rel=1e-12)
    assert math.isnan(r.series_l_h)
    assert r.q == pytest.approx(159.15494309189535 / 0.2, rel=1e-12)


def test_chart_positions_of_standards():
    # Common practice (references.md): a 50 Ω load at the centre, an open at the right edge, a short at the left.
    assert abs(complex(z_to_gamma(50.0))) == 0
    assert complex(z_to_gamma(np.inf)) == 1
    assert complex(z_to_gamma(0.0)) == -1


# ---------------------------------------------------------------- scikit-rf as a reference


def _one_port(freq_hz, gamma, z0=50.0):
    import skrf

    frequency = skrf.Frequency.from_f(np.asarray(freq_hz, dtype=float), unit="Hz")
    return skrf.Network(frequency=frequency, s=np.asarray(gamma).reshape(-1, 1, 1), z0=z0)


@pytest.mark.parametrize("z0", [50.0, 75.0, 25.0])
def test_random_gamma_against_skrf(z0):
    # scikit-rf: Network.z, Network.y, s_vswr and s_db (s_db = 20·log10|S| = −RL) for a 1-port.
    rng = np.random.default_rng(20261201)
    n = 400
    mag = np.sqrt(rng.uniform(0, 0.98, n))
    g = mag * np.exp(1j * rng.uniform(-np.pi, np.pi, n))
    f = np.linspace(1e6, 1e9, n)
    net = _one_port(f, g, z0)
    np.testing.assert_allclose(gamma_to_z(g, z0), net.z[:, 0, 0], rtol=1e-11)
    np.testing.assert_allclose(gamma_to_y(g, z0), net.y[:, 0, 0], rtol=1e-11)
    np.testing.assert_allclose(vswr(g), net.s_vswr[:, 0, 0], rtol=1e-12)
    np.testing.assert_allclose(return_loss_db(g), -net.s_db[:, 0, 0], rtol=1e-12)


def _skrf_data_files(ports):
    import skrf.data

    folder = pathlib.Path(skrf.data.__file__).parent
    return sorted(p for p in folder.glob(f"*.s{ports}p"))


def _compare_with_skrf(net, port_index):
    # Diagonal S_ii of skrf's network, read by Refplane at that port's own z0, against skrf's 1-port
    # sub-network for the same port (scikit-rf: Network.s11.z etc.).
    g = net.s[:, port_index, port_index]
    z0 = complex(net.z0[0, port_index])
    sub = net.subnetwork([port_index])
    # skrf warns on ideal shorts and on S = 0 (zero S21 of a reflect standard); those points are
    # left out of the comparison below, so its warnings are silenced here.
    with np.errstate(all="ignore"):
        skrf_z, skrf_y = sub.z[:, 0, 0], sub.y[:, 0, 0]
        skrf_vswr, skrf_db = net.s_vswr[:, port_index, port_index], net.s_db[:, port_index, port_index]
    # skrf's s_vswr is negative for |S| > 1, where VSWR is not defined: Refplane gives NaN
    # there ("n/a (|Γ| > 1)" in tables, null in JSON; issue 13) and ∞ at |Γ| = 1 exactly.
    inside = np.abs(g) < 1 - 1e-9
    # Ideal shorts and delay-shorts sit on the rim (|Γ| = 1): Z and Y still compare away from Γ = ±1.
    away_from_open = np.abs(g - 1) > 1e-6
    away_from_short = np.abs(g + 1) > 1e-6
    np.testing.assert_allclose(gamma_to_z(g[away_from_open], z0), skrf_z[away_from_open],
                               rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(gamma_to_y(g[away_from_short], z0), skrf_y[away_from_short],
                               rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(vswr(g[inside]), skrf_vswr[inside], rtol=1e-9)
    assert np.all(np.isinf(vswr(g[np.abs(g) == 1])))
    assert np.all(np.isnan(vswr(g[np.abs(g) > 1])))
    nonzero = np.abs(g) > 0
    np.testing.assert_allclose(return_loss_db(g[nonzero]), -skrf_db[nonzero], rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("path", _skrf_data_files(1), ids=lambda p: p.name)
def test_skrf_data_one_ports(path):
    # scikit-rf: the measured and modelled 1-port files shipped in skrf.data.
    import skrf

    net = skrf.Network(str(path))
    _compare_with_skrf(net, 0)


@pytest.mark.parametrize("path", _skrf_data_files(2), ids=lambda p: p.name)
def test_skrf_data_two_port_diagonals(path):
    # scikit-rf: diagonal terms of the shipped 2-port files, each at its own port's z0.
    import skrf

    net = skrf.Network(str(path))
    for port_index in range(2):
        _compare_with_skrf(net, port_index)


def test_skrf_two_port_with_75_ohm_ports():
    # scikit-rf: a 2-port with z0 = 75 Ω at both ports; S11 and S22 each read at 75 Ω.
    import skrf

    rng = np.random.default_rng(7)
    n = 50
    s = (rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))) * 0.3
    frequency = skrf.Frequency.from_f(np.linspace(1e6, 2e9, n), unit="Hz")
    net = skrf.Network(frequency=frequency, s=s, z0=75.0)
    for port_index in range(2):
        _compare_with_skrf(net, port_index)
