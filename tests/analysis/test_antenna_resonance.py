"""Resonances, best match and VSWR bands of a reflection sweep.

Sources named beside each check:
- "textbook": a series R-L-C resonates at f0 = 1/(2π√(LC)) with Q = ω0·L/R; a parallel R-L-C at the
  same f0 with |Z| = R there and Q = ω0·C·R (any circuits text, e.g. Pozar, Microwave Engineering,
  ch. 6 — from memory).
- "Yaghjian and Best 2005": A. D. Yaghjian and S. R. Best, "Impedance, bandwidth, and Q of antennas",
  IEEE Trans. Antennas Propag., 2005: Q ≈ ω|Z'|/(2R) at a zero of X, and the VSWR ≤ s fractional
  bandwidth of a series R-L-C matched at resonance is (s − 1)/(Q√s) for high Q.
- "brute force": the analytic model evaluated and solved to machine precision with scipy's brentq.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.antenna.resonance import (
    analyse, best_match, find_resonances, max_impedance, vswr_bands)
from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import vswr, z_to_gamma
from refplane.analysis.readings.markers import gamma_at
from refplane.analysis.sweep import Sweep


def _series_rlc(f, r, l_h, c_f):
    w = 2 * np.pi * np.asarray(f, float)
    return r + 1j * w * l_h + 1 / (1j * w * c_f)


def _parallel_rlc(f, r, l_h, c_f):
    w = 2 * np.pi * np.asarray(f, float)
    return 1 / (1 / r + 1 / (1j * w * l_h) + 1j * w * c_f)


def _sweep(f, z, z0=50.0):
    return Sweep(np.asarray(f, float), z_to_gamma(z, z0), z0)


def test_series_resonance_between_points():
    # textbook: f0 = 1/(2π√(LC)), Q = ω0 L / R.
    r, l_h, c_f = 20.0, 2e-6, 25e-12
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))
    f = np.linspace(0.8023 * f0, 1.2023 * f0, 81)   # 0.5 % steps; f0 falls between points
    assert np.min(np.abs(f - f0)) > 1e-3 * f0
    res = find_resonances(_sweep(f, _series_rlc(f, r, l_h, c_f)))
    assert len(res) == 1
    assert res[0].kind == "series"
    # Interpolated, not the nearest point: the error is a small fraction of a step.
    assert res[0].freq_hz == pytest.approx(f0, rel=2e-5)
    assert res[0].r_ohm == pytest.approx(r, rel=2e-3)
    assert res[0].q == pytest.approx(2 * math.pi * f0 * l_h / r, rel=2e-3)


def test_parallel_resonance_kind_r_and_q():
    # textbook: parallel R-L-C, |Z| = R at f0 and Q = ω0 C R; Yaghjian and Best 2005: ω|Z'|/(2R) gives it.
    r, l_h, c_f = 2000.0, 1e-6, 100e-12
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))
    f = np.linspace(0.9 * f0, 1.1 * f0, 401)
    sw = _sweep(f, _parallel_rlc(f, r, l_h, c_f))
    res = find_resonances(sw)
    assert [x.kind for x in res] == ["parallel"]
    assert res[0].freq_hz == pytest.approx(f0, rel=1e-5)
    assert res[0].r_ohm == pytest.approx(r, rel=2e-3)
    assert res[0].q == pytest.approx(2 * math.pi * f0 * c_f * r, rel=5e-3)
    peak = max_impedance(sw)
    assert peak.freq_hz == pytest.approx(f0, rel=1e-4)
    assert peak.z_mag_ohm == pytest.approx(r, rel=2e-3)


def test_several_resonances_against_brute_force():
    # A series R-L-C in series with a parallel R-L-C (a two-resonance antenna-like model): every zero of X
    # and its direction, compared with brentq on the analytic reactance (brute force).
    from scipy.optimize import brentq

    def z(f):
        return _series_rlc(f, 15.0, 1.2e-6, 40e-12) + _parallel_rlc(f, 3000.0, 0.3e-6, 60e-12)

    f = np.linspace(5e6, 60e6, 1101)
    found = find_resonances(_sweep(f, z(f)))
    x = z(f).imag
    ref = [brentq(lambda v: float(z(v).imag), f[k], f[k + 1], xtol=1e-6)
           for k in range(f.size - 1) if x[k] * x[k + 1] < 0]
    assert len(found) == len(ref) >= 3
    for got, want in zip(found, ref):
        assert got.freq_hz == pytest.approx(want, rel=2e-5)
    kinds = [r.kind for r in found]
    # Foster (textbook): zeros and poles of a reactance alternate, so series and parallel alternate here.
    assert all(a != b for a, b in zip(kinds, kinds[1:]))
    # A marker placed where the search says reads X = 0 there (same interpolation as the markers).
    sw = _sweep(f, z(f))
    for r in found:
        assert abs(gamma_at(sw, r.freq_hz).imag) < 1e-12


@pytest.mark.parametrize("s", [1.5, 2.0, 3.0])
def test_vswr_band_high_q_closed_form(s):
    # Yaghjian and Best 2005: series R-L-C matched at resonance (R = Z0), FBW(s) = (s − 1)/(Q√s) for high Q.
    q, f0 = 50.0, 100e6
    l_h = q * 50.0 / (2 * math.pi * f0)
    c_f = 1 / ((2 * math.pi * f0) ** 2 * l_h)
    f = np.linspace(0.95 * f0, 1.05 * f0, 2001)
    bands = vswr_bands(_sweep(f, _series_rlc(f, 50.0, l_h, c_f)), vswr_limit=s)
    assert len(bands) == 1
    band = bands[0]
    assert band.width_hz / f0 == pytest.approx((s - 1) / (q * math.sqrt(s)), rel=1e-3)
    assert band.centre_hz == pytest.approx(f0, rel=1e-4)
    assert not band.clipped_low and not band.clipped_high


@pytest.mark.parametrize("q, r", [(1.5, 50.0), (4.0, 35.0), (10.0, 80.0)])
def test_vswr_band_low_q_brute_force(q, r):
    # brute force: band edges of the analytic model solved with brentq, against the band found on a 401-point sweep.
    from scipy.optimize import brentq

    f0, s = 50e6, 2.0
    l_h = q * r / (2 * math.pi * f0)
    c_f = 1 / ((2 * math.pi * f0) ** 2 * l_h)

    def excess(v):
        return float(vswr(z_to_gamma(_series_rlc(v, r, l_h, c_f), 50.0))) - s

    lo = brentq(excess, 0.05 * f0, f0, xtol=1e-3)
    hi = brentq(excess, f0, 20 * f0, xtol=1e-3)
    f = np.linspace(0.6 * lo, 1.3 * hi, 401)
    bands = vswr_bands(_sweep(f, _series_rlc(f, r, l_h, c_f)), vswr_limit=s)
    assert len(bands) == 1
    # The chord between points departs from the arc by ~|Γ|Δθ²/8 (markers.py); with these steps
    # that moves the edges by well under a part in 1e3.
    assert bands[0].start_hz == pytest.approx(lo, rel=1e-3)
    assert bands[0].stop_hz == pytest.approx(hi, rel=1e-3)
    # Edges read VSWR = s with the markers' interpolation (consistency, not a reference).
    sw = _sweep(f, _series_rlc(f, r, l_h, c_f))
    assert float(vswr(gamma_at(sw, bands[0].start_hz))) == pytest.approx(s, abs=1e-9)


def test_band_reaching_sweep_edge_is_flagged():
    f = np.linspace(10e6, 20e6, 101)
    z = 50 + 1j * (f - 10e6) * 1e-5          # matched at the first point, worsening upwards
    bands = vswr_bands(_sweep(f, z), vswr_limit=2.0)
    assert len(bands) == 1 and bands[0].clipped_low and not bands[0].clipped_high
    assert bands[0].start_hz == f[0]


def test_dip_between_points():
    # A trace that dips inside the 2:1 circle between two swept points only: the chord model finds it.
    f = np.array([1e6, 2e6, 3e6])
    g = np.array([0.3 + 0.5j, 0.3 - 0.5j, 0.9 + 0j])
    assert np.all(np.abs(g) > 1 / 3)
    bands = vswr_bands(Sweep(f, g, 50.0), vswr_limit=2.0)
    assert len(bands) == 1
    # |0.3 − j·y| = 1/3 where y = √(1/9 − 0.09) = 0.1453: edges at t = 0.5 ∓ 0.1453 of the first chord.
    y = math.sqrt(1 / 9 - 0.09)
    assert bands[0].start_hz == pytest.approx(1e6 + (0.5 - y) * 1e6, rel=1e-12)
    assert bands[0].stop_hz == pytest.approx(1e6 + (0.5 + y) * 1e6, rel=1e-12)
    best = best_match(Sweep(f, g, 50.0))
    assert best.freq_hz == pytest.approx(1.5e6)
    assert best.vswr == pytest.approx(1.3 / 0.7)   # |Γ| = 0.3 at the chord's midpoint (Pozar ch. 2 identity)


def test_best_match_between_points():
    # textbook: a series R-L-C of R = 45 Ω reads VSWR 50/45 = 1.111 at f0 (Pozar ch. 2 identity).
    r, l_h, c_f = 45.0, 1e-6, 20e-12
    f0 = 1 / (2 * math.pi * math.sqrt(l_h * c_f))
    f = np.linspace(0.9 * f0, 1.1 * f0, 401)
    b = best_match(_sweep(f, _series_rlc(f, r, l_h, c_f)))
    # The chord through the best point sits a little off the arc: within a fifth of a step (0.05 %).
    assert b.freq_hz == pytest.approx(f0, rel=1e-4)
    assert b.vswr == pytest.approx(50 / 45, rel=1e-4)
    assert b.return_loss_db == pytest.approx(-20 * math.log10(5 / 95), rel=1e-3)


def test_report_json_keys_and_bad_input():
    f = np.linspace(40e6, 60e6, 201)
    rep = analyse(_sweep(f, _series_rlc(f, 50.0, 1e-6, 10e-12)), vswr_limits=(2.0, 1.5))
    js = rep.json()
    assert set(js) >= {"resonances", "best", "bands"}
    assert set(js["resonances"][0]) == {"freq_hz", "r_ohm", "kind", "q"}
    assert set(js["best"]) == {"freq_hz", "vswr", "return_loss_db"}
    assert {b["vswr_limit"] for b in js["bands"]} == {2.0, 1.5}
    assert {"vswr_limit", "start_hz", "stop_hz", "centre_hz", "width_hz"} <= set(js["bands"][0])
    with pytest.raises(AnalysisError):
        vswr_bands(_sweep(f, _series_rlc(f, 50.0, 1e-6, 10e-12)), vswr_limit=1.0)
    with pytest.raises(AnalysisError):
        analyse(_sweep(f, _series_rlc(f, 50.0, 1e-6, 10e-12)), band_hz=(1e9, 2e9))
    with pytest.raises(AnalysisError):
        find_resonances(_sweep(f, _series_rlc(f, 50.0, 1e-6, 10e-12)), port=2)
