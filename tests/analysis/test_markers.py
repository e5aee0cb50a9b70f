"""Marker values between swept points, and the searches that place markers.

Sources named beside each check:
- "geometry": a straight chord between two points of a circle of radius ρ that subtend an angle Δθ at the
  centre lies inside the circle by at most ρ(1 − cos(Δθ/2)), at its midpoint (plane geometry, from memory);
  this is the bound markers.py documents.
- "textbook": a matched lossless delay line of one-way delay τ ended in an open reflects Γ = e^(−j2ωτ);
  a series R-L-C resonates at f0 = 1/(2π√(LC)); a parallel L-C resonates at the same f0 with |Z| → ∞
  (any circuits or microwave text, e.g. Pozar ch. 2 and 6 — from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import vswr, z_to_gamma
from refplane.analysis.readings.markers import (
    check_inside,
    gamma_at,
    interpolate,
    min_vswr_frequency,
    nearest_index,
    s_at,
    zero_reactance_frequencies,
)
from refplane.analysis.sweep import Sweep


def _one_port(freq_hz, gamma, z0=50.0):
    return Sweep(np.asarray(freq_hz, float), np.asarray(gamma, complex), z0)


def _series_rlc(freq_hz, r, l_h, c_f):
    w = 2 * np.pi * freq_hz
    return r + 1j * w * l_h + 1 / (1j * w * c_f)


# ---------------------------------------------------------------- interpolation


def test_exact_at_swept_points():
    rng = np.random.default_rng(1)
    f = np.sort(rng.uniform(1e6, 1e9, 57))
    g = rng.normal(size=57) * 0.3 + 1j * rng.normal(size=57) * 0.3
    sw = _one_port(f, g)
    got = gamma_at(sw, f)
    # Documented: at a swept frequency the value is the measured one, bit for bit.
    assert np.array_equal(got, g)
    assert gamma_at(sw, float(f[0])) == g[0] and gamma_at(sw, float(f[-1])) == g[-1]


def test_linear_between_points():
    f = np.array([1e6, 2e6, 4e6])
    g = np.array([0.0, 1.0 + 1j, -1.0 + 0j])
    sw = _one_port(f, g)
    # Straight-line interpolation in Re and Im (documented).
    assert complex(gamma_at(sw, 1.25e6)) == pytest.approx(0.25 + 0.25j, abs=1e-15)
    assert complex(gamma_at(sw, 3e6)) == pytest.approx(0.0 + 0.5j, abs=1e-15)
    out = gamma_at(sw, [1.5e6, 2.5e6])
    assert out.shape == (2,)


def test_shapes_of_interpolate_and_s_at():
    f = np.linspace(1e6, 10e6, 10)
    s = np.zeros((10, 2, 2), complex)
    s[:, 1, 0] = np.linspace(0, 0.9, 10)
    sw = Sweep(f, s, 50.0)
    assert s_at(sw, 5.5e6).shape == (2, 2)
    assert s_at(sw, [2e6, 5.5e6, 7e6]).shape == (3, 2, 2)
    assert complex(s_at(sw, 5.5e6)[1, 0]) == pytest.approx(0.45, abs=1e-15)
    assert interpolate(f, s, np.array([[2e6, 3e6]])).shape == (1, 2, 2, 2)
    # a one-point sweep reads its one value at its one frequency
    one = _one_port([5e6], [0.3j])
    assert complex(gamma_at(one, 5e6)) == 0.3j


@pytest.mark.parametrize("deg_per_point", [1.0, 5.0, 20.0, 45.0])
def test_error_bound_on_a_pure_delay(deg_per_point):
    # Textbook: an open at the end of a matched lossless line of one-way delay τ reads Γ = e^(−j2ωτ).
    tau = 1.0e-9
    # Choose the step so the trace turns deg_per_point degrees between swept points: Δθ = 2·2π·Δf·τ.
    dtheta = math.radians(deg_per_point)
    df = dtheta / (4 * math.pi * tau)
    f = 10e6 + df * np.arange(40)
    gamma = np.exp(-2j * 2 * np.pi * f * tau)
    sw = _one_port(f, gamma)
    # Read densely between the points and compare with the true delay.
    fine = np.linspace(f[0], f[-1], 40 * 64 + 1)
    got = gamma_at(sw, fine)
    true = np.exp(-2j * 2 * np.pi * fine * tau)
    bound = 1.0 * (1 - math.cos(dtheta / 2))  # geometry: |Γ|(1 − cos(Δθ/2)), documented in markers.py
    # The chord lies inside the circle by at most the bound...
    assert np.all(np.abs(got) >= 1 - bound - 1e-12)
    # ...reaching it exactly at each midpoint, where the true value is on the same radius.
    mid = (f[:-1] + f[1:]) / 2
    got_mid = gamma_at(sw, mid)
    np.testing.assert_allclose(np.abs(got_mid), math.cos(dtheta / 2), rtol=1e-12)
    np.testing.assert_allclose(np.abs(got_mid - np.exp(-4j * np.pi * mid * tau)), bound, rtol=1e-6, atol=1e-14)
    # For a pure delay (phase linear in f) the full complex error, radial and along the arc, is
    # largest at the midpoint too, so the documented bound holds for the error as a whole.
    assert np.max(np.abs(got - true)) <= bound * (1 + 1e-9) + 1e-15


def test_documented_accuracy_figure():
    # markers.py: under 0.1 % of |Γ| for Δθ < 5° (geometry: 1 − cos(2.5°) = 0.095 %).
    assert 1 - math.cos(math.radians(5) / 2) < 1e-3


def test_outside_the_sweep_is_refused_with_both_edges():
    sw = _one_port(np.linspace(1e6, 1e9, 11), np.zeros(11))
    for bad in (0.5e6, 1.5e9, -1.0):
        with pytest.raises(AnalysisError) as info:
            gamma_at(sw, bad)
        message = str(info.value)
        assert "1 MHz" in message and "1 GHz" in message, message
        assert "outside the sweep" in message
    with pytest.raises(AnalysisError, match="outside the sweep"):
        gamma_at(sw, [2e6, 3e9])  # one bad frequency among good ones
    with pytest.raises(AnalysisError, match="not a finite"):
        gamma_at(sw, np.nan)


def test_band_edges_tolerate_rounding():
    # "1GHz" typed by a user matches a stop frequency stored as 1.000000000e9 give or take an ulp.
    f = np.linspace(1e6, 1e9, 11)
    at = check_inside(f, [1e9 * (1 + 1e-15), 1e6 * (1 - 1e-16)])
    assert at[0] == 1e9 and at[1] == 1e6


def test_nearest_index():
    f = np.array([1.0, 2.0, 4.0, 8.0])
    assert [nearest_index(f, x) for x in (0.0, 1.4, 1.6, 3.1, 5.0, 7.0, 100.0)] == [0, 0, 1, 2, 2, 3, 3]


# ---------------------------------------------------------------- marker searches


def test_series_resonance_of_rlc():
    # Textbook: a series R-L-C has zero reactance at f0 = 1/(2π√(LC)).
    r, l_h, c_f = 5.0, 470e-9, 10e-12
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))  # ≈ 73.4 MHz
    f = np.linspace(10e6, 200e6, 191)  # 1 MHz steps, f0 falls between points
    sw = _one_port(f, z_to_gamma(_series_rlc(f, r, l_h, c_f)))
    found = zero_reactance_frequencies(sw)
    assert found.size == 1
    # Linear interpolation of X between 1 MHz points: within a few kHz of f0.
    assert found[0] == pytest.approx(f0, rel=1e-4)


def test_parallel_resonance_of_lc():
    # Textbook: a parallel L-C (with a little series loss in L) resonates where its |Z| peaks,
    # at f0 ≈ 1/(2π√(LC)); the reactance jumps from +large to −large there.
    l_h, c_f, r_l = 470e-9, 2.2e-12, 0.5
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))  # ≈ 156.5 MHz
    f = np.linspace(50e6, 300e6, 251)
    w = 2 * np.pi * f
    z = 1 / (1 / (r_l + 1j * w * l_h) + 1j * w * c_f)
    sw = _one_port(f, z_to_gamma(z))
    found = zero_reactance_frequencies(sw)
    assert found.size == 1
    # With loss r_l the zero-reactance point of R+jωL ∥ C is f0·√(1 − r_l²C/L): a shift of ~1e-6.
    assert found[0] == pytest.approx(f0 * math.sqrt(1 - r_l**2 * c_f / l_h), rel=1e-4)


def test_band_limits_the_search_and_empty_band_is_refused():
    # Textbook: a quarter-wave open stub (delay τ) has series resonances at odd multiples of 1/(4τ).
    tau = 1.0e-9
    f = np.linspace(1e6, 1.6e9, 1600)
    sw = _one_port(f, 0.98 * np.exp(-4j * np.pi * f * tau))
    everything = zero_reactance_frequencies(sw)
    # Zero reactance at every multiple of 1/(4τ) = 250 MHz (series- and parallel-type alternately).
    np.testing.assert_allclose(everything, 250e6 * np.arange(1, 7), rtol=2e-3)
    some = zero_reactance_frequencies(sw, band_hz=(600e6, 1.1e9))
    np.testing.assert_allclose(some, [750e6, 1000e6], rtol=2e-3)
    with pytest.raises(AnalysisError, match="no swept point"):
        zero_reactance_frequencies(sw, band_hz=(2e9, 3e9))


def test_min_vswr_frequency():
    # Textbook: a series R-L-C with R = 50 Ω is matched (VSWR 1) at its resonance f0 = 1/(2π√(LC)).
    l_h, c_f = 100e-9, 10e-12
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))  # 159.15 MHz
    f = np.linspace(100e6, 200e6, 1001)
    g = z_to_gamma(_series_rlc(f, 50.0, l_h, c_f))
    sw = _one_port(f, g)
    best = min_vswr_frequency(sw)
    assert best == pytest.approx(f0, abs=0.1e6)  # nearest swept point (100 kHz spacing)
    assert best in f
    assert vswr(gamma_at(sw, best)) == pytest.approx(1.0, abs=0.01)
    # Within a band that excludes f0 the best point is the band edge nearer to it.
    assert min_vswr_frequency(sw, band_hz=(170e6, 190e6)) == pytest.approx(170e6)
    with pytest.raises(AnalysisError):
        min_vswr_frequency(sw, band_hz=(300e6, 400e6))


def test_searches_refuse_missing_ports():
    sw = _one_port(np.linspace(1e6, 1e9, 11), np.full(11, 0.2))
    for port in (0, 2, 3):
        with pytest.raises(AnalysisError, match="does not exist"):
            zero_reactance_frequencies(sw, port)
        with pytest.raises(AnalysisError, match="does not exist"):
            min_vswr_frequency(sw, port)
        with pytest.raises(AnalysisError, match="does not exist"):
            gamma_at(sw, 1e6, port)


def test_searches_on_port_two():
    # Port 2 of a 2-port sweep is searched with port 2's own reference (the sweep's z0 per port).
    f = np.linspace(10e6, 200e6, 191)
    z = _series_rlc(f, 5.0, 470e-9, 10e-12)
    s = np.zeros((f.size, 2, 2), complex)
    s[:, 0, 0] = z_to_gamma(50 + 10j, 50.0)  # inductive everywhere: no resonance on port 1
    s[:, 1, 1] = z_to_gamma(z, 75.0)
    sw = Sweep(f, s, [50.0, 75.0])
    found = zero_reactance_frequencies(sw, 2)
    assert found[0] == pytest.approx(1 / (2 * math.pi * math.sqrt(470e-9 * 10e-12)), rel=1e-4)
    assert zero_reactance_frequencies(sw, 1).size == 0
