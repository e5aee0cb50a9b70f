"""Trace memory and maths, and another chart reference impedance.

References: scikit-rf as a reference library (``Network.__truediv__`` — element-wise division of
S —, ``Network.s_db``/``s_deg``, ``Network.interpolate`` with linear cartesian interpolation,
``Network.renormalize``) on the Touchstone files it ships; textbook identities (Pozar, Microwave
Engineering, ch. 2 — from memory): Γ = (Z − Z0)/(Z + Z0), an open is Γ = +1 and a short −1 against
any real Z0, 20·log10|a/b| = 20·log10|a| − 20·log10|b|.
"""

from __future__ import annotations

import pathlib
import warnings

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.analysis.readings.trace_math import chart_gamma, relative_to, renormalize

skrf = pytest.importorskip("skrf")
DATA = pathlib.Path(skrf.__file__).parent / "data"


def net(name):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(DATA / name))


def sweep_of(network, name):
    return Sweep(np.array(network.f, float), np.array(network.s, complex), np.array(network.z0[0], complex),
                 name=name)


def one_port(f, gamma, name, z0=50.0):
    return Sweep(np.asarray(f, float), np.asarray(gamma, complex), z0, name=name)


# ------------------------------------------------------------------------------ relative traces

@pytest.mark.parametrize("after, before", [("ind.s2p", "open.s2p"), ("ro,2.s1p", "ro,1.s1p")])
def test_ratio_db_and_degrees_match_scikit_rf_division(after, before):
    # Two different real sweeps on the same frequencies, element by element.
    a, b = net(after), net(before)
    assert np.array_equal(a.f, b.f)
    ref = (a / b)  # scikit-rf: element-wise complex division of the S-matrices
    r = relative_to(sweep_of(a, "after"), sweep_of(b, "before"))
    assert not r.interpolated and r.grid == "reference"
    np.testing.assert_allclose(r.ratio, ref.s, rtol=1e-12)
    np.testing.assert_allclose(r.difference_db, ref.s_db, atol=1e-9)
    np.testing.assert_allclose(r.difference_deg, ref.s_deg, atol=1e-9)
    np.testing.assert_allclose(r.difference, a.s - b.s, rtol=1e-12)


def test_known_before_and_after():
    # Halving |Γ| is −6.0206 dB (20·log10 0.5); turning it by a quarter turn is +90°.
    f = np.array([1e6, 2e6, 3e6])
    before = one_port(f, [0.5, 0.5, 0.5], "before")
    after = one_port(f, [0.25, 0.25j, -0.5], "after")
    r = relative_to(after, before)
    np.testing.assert_allclose(r.difference_db[:, 0, 0], [20 * np.log10(0.5)] * 2 + [0.0], atol=1e-12)
    np.testing.assert_allclose(r.difference_deg[:, 0, 0], [0.0, 90.0, 180.0], atol=1e-12)
    assert r.difference_deg[2, 0, 0] == 180.0  # (−180°, 180°]: a sign flip reads +180°
    np.testing.assert_allclose(r.ratio[:, 0, 0], [0.5, 0.5j, -1.0])


def test_interpolated_onto_the_reference_points_like_scikit_rf():
    a = net("ring slot.s2p")
    fine, coarse = sweep_of(a, "fine"), sweep_of(a[::7], "coarse")
    coarse = one_port(coarse.freq_hz[1:-1], coarse.s[1:-1] * 0.9, "stored")  # strictly inside
    r = relative_to(fine, coarse)  # onto the stored trace's points
    assert r.interpolated and np.array_equal(r.freq_hz, coarse.freq_hz)
    expect = a.interpolate(skrf.Frequency.from_f(coarse.freq_hz, unit="hz"), kind="linear", coords="cart")
    np.testing.assert_allclose(r.ratio[:, 0, 0], expect.s[:, 0, 0] / coarse.s[:, 0, 0], rtol=1e-9)
    # And the other way: on the sweep's points, the reference interpolated.
    r2 = relative_to(coarse, fine, grid="sweep")
    assert np.array_equal(r2.freq_hz, coarse.freq_hz)
    np.testing.assert_allclose(r2.ratio[:, 0, 0], coarse.s[:, 0, 0] / expect.s[:, 0, 0], rtol=1e-9)


def test_a_band_that_overlaps_in_part_is_trimmed_with_a_note():
    f1, f2 = np.linspace(1e8, 1e9, 10), np.linspace(5e8, 2e9, 16)
    r = relative_to(one_port(f2, np.full(16, 0.3), "new"), one_port(f1, np.full(10, 0.6), "old"))
    assert r.freq_hz[0] == 5e8 and r.freq_hz[-1] == 1e9
    assert any("only" in n for n in r.notes)
    np.testing.assert_allclose(r.difference_db, 20 * np.log10(0.5))


def test_bands_that_do_not_overlap_are_refused_plainly():
    low = one_port([1e6, 2e6], [0.1, 0.2], "hf antenna")
    high = one_port([1e8, 2e8], [0.1, 0.2], "vhf antenna")
    with pytest.raises(AnalysisError, match="share no frequencies") as err:
        relative_to(high, low)
    assert "1 MHz to 2 MHz" in str(err.value) and "100 MHz to 200 MHz" in str(err.value)


def test_no_point_inside_the_shared_band_is_refused():
    sparse = one_port([1e6, 10e6], [0.1, 0.2], "sparse")
    dense = one_port([4e6, 5e6], [0.1, 0.2], "dense")
    with pytest.raises(AnalysisError, match="no point of 'sparse'"):
        relative_to(dense, sparse)
    assert relative_to(dense, sparse, grid="sweep").freq_hz.tolist() == [4e6, 5e6]


def test_zero_reference_reads_nan_with_a_note_and_ports_must_match():
    f = [1e6, 2e6]
    r = relative_to(one_port(f, [0.2, 0.2], "a"), one_port(f, [0.0, 0.4], "b"))
    assert np.isnan(r.ratio[0, 0, 0]) and np.isnan(r.difference_db[0, 0, 0]) and np.isnan(r.difference_deg[0, 0, 0])
    assert r.difference_db[1, 0, 0] == pytest.approx(20 * np.log10(0.5))
    assert any("zero" in n for n in r.notes)
    assert r.ratio_sweep().n_points == 1  # the finite point only
    with pytest.raises(AnalysisError, match="port"):
        relative_to(sweep_of(net("ntwk1.s2p"), "two"), one_port(net("ntwk1.s2p").f, np.zeros(len(net("ntwk1.s2p").f)), "one"))
    with pytest.raises(AnalysisError, match="grid"):
        relative_to(one_port(f, [0.2, 0.2], "a"), one_port(f, [0.2, 0.2], "b"), grid="mine")


def test_different_reference_impedances_are_compared_on_the_reference_s():
    f = np.array([1e6, 2e6])
    z = np.array([75.0, 100.0 + 20j])
    on50 = one_port(f, z_to_gamma(z, 50.0), "on 50", 50.0)
    on75 = one_port(f, z_to_gamma(z, 75.0), "on 75", 75.0)
    r = relative_to(on50, on75)  # the same impedances: ratio 1 once both are on 75 Ω
    np.testing.assert_allclose(r.ratio[1, 0, 0], 1.0, atol=1e-12)
    np.testing.assert_allclose(r.difference[0, 0, 0], 0.0, atol=1e-12)
    assert any("75 Ω" in n for n in r.notes)


# ------------------------------------------------------------------------------ renormalisation

@pytest.mark.parametrize("file, new_z0", [("ntwk1.s2p", [75.0, 75.0]), ("ntwk1.s2p", [75.0, 30.0]),
                                          ("ring slot.s2p", [25.0, 100.0]), ("ro,1.s1p", [75.0])])
def test_renormalize_matches_scikit_rf(file, new_z0):
    a = net(file)
    mine = renormalize(sweep_of(a, "dut"), new_z0 if a.nports > 1 else new_z0[0])
    ref = a.copy()
    ref.renormalize(np.array(new_z0))  # real impedances: every wave definition agrees
    np.testing.assert_allclose(mine.s, ref.s, atol=1e-12)
    np.testing.assert_allclose(mine.z0_ohm, new_z0)
    assert "referred to" in mine.comments[-1]


def test_chart_gamma_textbook_identities():
    # A 75 Ω load is at the centre of a 75 Ω chart; an open and a short stay at the rim's ends.
    assert abs(chart_gamma(z_to_gamma(75.0, 50.0), 50.0, 75.0)) < 1e-15
    np.testing.assert_allclose(chart_gamma([1.0, -1.0], 50.0, 75.0), [1.0, -1.0])
    # The impedance read is the same on either chart: Z = Z0'(1 + Γ')/(1 − Γ').
    z = np.array([10 + 5j, 50.0, 75 + 27j, 300 - 120j])
    g75 = chart_gamma(z_to_gamma(z, 50.0), 50.0, 75.0)
    np.testing.assert_allclose(gamma_to_z(g75, 75.0), z, rtol=1e-12)
    np.testing.assert_allclose(g75, z_to_gamma(z, 75.0), atol=1e-15)
    # There and back again.
    np.testing.assert_allclose(chart_gamma(g75, 75.0, 50.0), z_to_gamma(z, 50.0), atol=1e-15)


def test_renormalize_refuses_complex_or_negative_references():
    s = one_port([1e6], [0.1], "x")
    with pytest.raises(AnalysisError, match="real and positive"):
        renormalize(s, 50 + 5j)
    with pytest.raises(AnalysisError, match="real and positive"):
        chart_gamma(0.1, 50.0, -75.0)
    assert renormalize(s, 50.0) is s  # nothing to do
