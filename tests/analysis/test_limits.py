"""Limit grammar, evaluation over a band, guard-banded decisions and batch statistics."""

from __future__ import annotations

import math
import statistics

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.limits import (
    QUANTITIES, conformance_probability, cpk_one_sided, evaluate_limit, evaluate_limits,
    limit_statistics, overall_decision, parse_limit, parse_limits_text, quantity_values, read_limits,
)
from refplane.analysis.readings.impedance import Readout
from refplane.analysis.sweep import Sweep

# --- grammar ---------------------------------------------------------------------------


@pytest.mark.parametrize("text, quantity, op, value, band", [
    # The examples of the issue, one by one.
    ("vswr <= 1.5 over 144MHz:148MHz", "vswr", "<=", 1.5, (144e6, 148e6)),
    ("return_loss_db >= 20 over 0.8GHz:0.96GHz", "return_loss_db", ">=", 20.0, (0.8e9, 0.96e9)),
    ("s21_db >= -0.5 over 1MHz:1GHz", "s21_db", ">=", -0.5, (1e6, 1e9)),
    ("r_ohm >= 45 over 10MHz:100MHz", "r_ohm", ">=", 45.0, (10e6, 100e6)),
    # Units on the value, spaces and case are forgiven where unambiguous.
    ("series_l_h <= 12nH over 100 MHz : 500 MHz", "series_l_h", "<=", 12e-9, (100e6, 500e6)),
    ("r_ohm>=45Ω OVER 10M:100M", "r_ohm", ">=", 45.0, (10e6, 100e6)),
    ("z_mag_ohm <= 1k over 1kHz:10kHz", "z_mag_ohm", "<=", 1000.0, (1e3, 1e4)),
    ("return_loss_db >= 20dB over 1GHz:2GHz", "return_loss_db", ">=", 20.0, (1e9, 2e9)),
    ("VSWR ≤ 2 over 3.5MHz:3.8MHz", "vswr", "<=", 2.0, (3.5e6, 3.8e6)),
])
def test_examples_parse(text, quantity, op, value, band):
    lim = parse_limit(text)
    assert (lim.quantity, lim.op) == (quantity, op)
    assert lim.value == pytest.approx(value, rel=1e-12)
    assert lim.band_hz == pytest.approx(band, rel=1e-12)


def test_every_read_json_key_is_a_quantity():
    # The grammar promises the reading keys of `refplane read --json` (minus the frequency).
    assert set(Readout.JSON_KEYS) - {"freq_hz"} <= set(QUANTITIES)
    assert {"s21_db", "s21_deg"} <= set(QUANTITIES)


@pytest.mark.parametrize("text, words", [
    ("vswx <= 1.5 over 144MHz:148MHz", ["'vswx' is not a quantity", "did you mean vswr"]),
    ("vswr <= 1.5 over 148MHz:144MHz", ["148MHz:144MHz is reversed", "lower frequency first"]),
    ("vswr <= 1.5 over 144:148", ["'144' has no unit", "144MHz"]),
    ("vswr <= 1.5 over 144MHz:148", ["'148' has no unit"]),
    ("vswr < 1.5 over 144MHz:148MHz", ["'<' is not an operator", "<= (at most) or >= (at least)"]),
    ("vswr = 1.5 over 144MHz:148MHz", ["'=' is not an operator"]),
    ("vswr 1.5 over 144MHz:148MHz", ["after vswr comes <="]),
    ("vswr <= 1.5", ["'over F1:F2'"]),
    ("vswr <= over 1MHz:2MHz", ["value is missing"]),
    ("vswr <= abc over 1MHz:2MHz", ["'abc' is not a number"]),
    ("r_ohm >= 45dB over 1MHz:2MHz", ["'dB' is not a unit of r_ohm"]),
    ("vswr <= 1.5dB over 1MHz:2MHz", ["vswr has no unit"]),
    ("vswr <= 1.5 over 144MHz", ["needs two frequencies"]),
    ("vswr <= 1.5 over 144MHz:144MHz", ["is empty"]),
    ("vswr <= 1.5 over 144MHz:148Mhzz", ["unknown frequency unit"]),
    ("", ["empty limit"]),
    ("<= 1.5 over 1MHz:2MHz", ["does not start with a quantity"]),
])
def test_malformed_limits_say_what_is_wrong(text, words):
    with pytest.raises(AnalysisError) as err:
        parse_limit(text)
    message = str(err.value)
    assert "\n" not in message
    for w in words:
        assert w in message


def test_limit_file_holds_several_and_names_the_bad_line(tmp_path):
    good = tmp_path / "cable.limits"
    good.write_text("# cable assemblies, invented for the test\n\nvswr <= 1.3 over 800MHz:960MHz\n"
                    "return_loss_db >= 18 over 800MHz:960MHz  # the same, as return loss\n", encoding="utf-8")
    limits = read_limits(good)
    assert [lim.quantity for lim in limits] == ["vswr", "return_loss_db"]
    bad = tmp_path / "bad.limits"
    bad.write_text("vswr <= 1.3 over 800MHz:960MHz\nvswr <= 1.3 over 960MHz:800MHz\n", encoding="utf-8")
    with pytest.raises(AnalysisError) as err:
        read_limits(bad)
    assert err.value.line == 2 and str(bad) in str(err.value) and "reversed" in str(err.value)
    with pytest.raises(AnalysisError, match="holds no limit"):
        parse_limits_text("# nothing\n")
    with pytest.raises(AnalysisError, match="no such file"):
        read_limits(tmp_path / "missing.limits")


# --- evaluation ------------------------------------------------------------------------

def _sweep_of_gamma(freq_hz, gamma, z0=50.0, **kw) -> Sweep:
    return Sweep(np.asarray(freq_hz, float), np.asarray(gamma, complex).reshape(-1, 1, 1), z0, **kw)


def test_vswr_limit_finds_the_worst_swept_point_and_its_margin():
    # Γ real and known at each point; VSWR = (1 + |Γ|)/(1 − |Γ|) (Pozar, ch. 2).
    # |Γ| = 0.2 is VSWR 1.5 exactly (references: the exact table).
    f = np.linspace(100e6, 200e6, 11)
    g = np.full(f.size, 0.1)
    g[6] = 0.25                                     # 160 MHz: VSWR 1.6667
    res = evaluate_limit(parse_limit("vswr <= 1.5 over 120MHz:180MHz"), _sweep_of_gamma(f, g))
    assert res.decision == "fail" and res.passed is False
    assert res.worst_freq_hz == pytest.approx(160e6)
    assert res.worst_value == pytest.approx(1.25 / 0.75, rel=1e-12)
    assert res.margin == pytest.approx(1.5 - 1.25 / 0.75, rel=1e-12)
    # Swept points inside the band plus its two edges (both swept here).
    assert res.freq_hz == pytest.approx(np.linspace(120e6, 180e6, 7))
    ok = evaluate_limit(parse_limit("vswr <= 1.5 over 100MHz:150MHz"), _sweep_of_gamma(f, g))
    assert ok.decision == "pass"
    assert ok.margin == pytest.approx(1.5 - 1.1 / 0.9, rel=1e-12)


def test_band_edges_between_swept_points_are_interpolated():
    # |Γ| rises linearly from 0 at 100 MHz to 0.5 at 200 MHz on 3 points; an edge at 175 MHz
    # reads |Γ| = 0.375 by linear interpolation of Γ (the rule of refplane read).
    f = np.array([100e6, 150e6, 200e6])
    g = np.array([0.0, 0.25, 0.5])
    res = evaluate_limit(parse_limit("return_loss_db >= 6 over 110MHz:175MHz"), _sweep_of_gamma(f, g))
    assert res.freq_hz == pytest.approx([110e6, 150e6, 175e6])
    # Return loss = −20·log10|Γ| (Pozar, ch. 2).
    assert res.worst_freq_hz == pytest.approx(175e6)
    assert res.worst_value == pytest.approx(-20 * math.log10(0.375), rel=1e-12)
    assert res.decision == "pass"           # 8.52 dB ≥ 6 dB


def test_band_outside_the_sweep_is_refused():
    sw = _sweep_of_gamma([1e6, 2e6], [0, 0])
    with pytest.raises(AnalysisError, match="does not extrapolate"):
        evaluate_limit(parse_limit("vswr <= 2 over 1MHz:3MHz"), sw)


def test_resistance_and_series_inductance_against_known_loads():
    # A 75 Ω resistor with 9 nH of lead inductance (a fact of the trade, references): R = 75,
    # series L = X/(2πf) = 9 nH at every frequency.
    f = np.linspace(100e6, 500e6, 9)
    z = 75 + 2j * np.pi * f * 9e-9
    sw = _sweep_of_gamma(f, (z - 50) / (z + 50))
    r = evaluate_limit(parse_limit("r_ohm >= 74.9 over 100MHz:500MHz"), sw)
    assert r.decision == "pass" and r.worst_value == pytest.approx(75.0, rel=1e-9)
    l_res = evaluate_limit(parse_limit("series_l_h <= 8nH over 200MHz:300MHz"), sw)
    assert l_res.decision == "fail" and l_res.worst_value == pytest.approx(9e-9, rel=1e-9)
    # Series C has no value for an inductive part: the limit cannot be met.
    c_res = evaluate_limit(parse_limit("series_c_f <= 1nF over 200MHz:300MHz"), sw)
    assert c_res.decision == "fail" and math.isnan(c_res.worst_value)


def test_transmission_needs_two_ports_and_reads_s21_like_skrf():
    skrf = pytest.importorskip("skrf")
    ntwk = skrf.data.ring_slot  # a real two-port measurement shipped with scikit-rf
    sw = Sweep(ntwk.f, ntwk.s, ntwk.z0[0])
    at = ntwk.f[5:20]
    # scikit-rf's s_db and s_deg are the reference for 20·log10|S21| and its angle.
    assert quantity_values(sw, "s21_db", at) == pytest.approx(ntwk.s_db[5:20, 1, 0], abs=1e-9)
    assert quantity_values(sw, "s21_deg", at) == pytest.approx(ntwk.s_deg[5:20, 1, 0], abs=1e-9)
    assert quantity_values(sw, "vswr", at, port=2) == pytest.approx(ntwk.s_vswr[5:20, 1, 1], rel=1e-9)
    one = _sweep_of_gamma([1e6, 2e6], [0, 0])
    with pytest.raises(AnalysisError, match="needs a sweep of two ports"):
        evaluate_limit(parse_limit("s21_db >= -1 over 1MHz:2MHz"), one)


# --- guard-banded decisions (JCGM 106:2012) --------------------------------------------

def _flat_vswr_sweep(vswr_value: float) -> Sweep:
    rho = (vswr_value - 1) / (vswr_value + 1)
    return _sweep_of_gamma(np.linspace(1e9, 2e9, 5), np.full(5, rho))


@pytest.mark.parametrize("reading, expected", [
    (1.40, "pass"),            # 0.10 inside a limit with U = 0.05: beyond the guard band
    (1.45, "pass"),            # exactly U inside: on the acceptance limit, accepted
    (1.48, "indeterminate"),   # inside, but by less than U
    (1.53, "indeterminate"),   # outside, but by less than U
    (1.56, "fail"),            # more than U outside
])
def test_guard_band_of_one_expanded_uncertainty(reading, expected):
    # JCGM 106:2012 clause 8: acceptance limit A_U = T_U − w (guarded acceptance) and, for
    # rejection, T_U + w (guarded rejection), here with w = U.
    lim = parse_limit("vswr <= 1.5 over 1GHz:2GHz")
    res = evaluate_limit(lim, _flat_vswr_sweep(reading), u=0.05)
    assert res.decision == expected
    assert "JCGM 106" in res.rule and "U" in res.rule
    plain = evaluate_limit(lim, _flat_vswr_sweep(reading))
    assert plain.decision == ("pass" if reading <= 1.5 else "fail")
    assert "JCGM 106" in plain.rule


def test_uncertainty_per_swept_point_is_used_point_by_point():
    lim = parse_limit("vswr <= 1.5 over 1GHz:2GHz")
    sw = _flat_vswr_sweep(1.4)
    u = np.array([0.01, 0.01, 0.2, 0.01, 0.01])         # one poorly known point
    res = evaluate_limit(lim, sw, u=u)
    assert res.decision == "indeterminate"
    with pytest.raises(AnalysisError, match="one per swept point"):
        evaluate_limit(lim, sw, u=np.ones(3))


def test_conformance_probability_follows_jcgm_106_clause_7():
    norm = pytest.importorskip("scipy.stats").norm
    # JCGM 106:2012, 7.3, Table 1 (one-sided upper limit, Gaussian): z = (T_U − y)/u gives
    # p_c = Φ(z): z = 1.645 ↔ 0.95, 2.326 ↔ 0.99, 3.090 ↔ 0.999 (values from memory; they are
    # the standard normal quantiles, checked here against scipy).
    for z, pc in ((1.645, 0.95), (2.326, 0.99), (3.090, 0.999)):
        assert conformance_probability(10 - z, 1.0, upper=10) == pytest.approx(pc, abs=5e-4)
        assert conformance_probability(10 - z, 1.0, upper=10) == pytest.approx(norm.cdf(z), rel=1e-12)
    # A reading on the guarded acceptance limit with w = U = 2u: p_c = Φ(2) ≈ 0.977
    # (JCGM 106, clause 8, from memory); LimitResult reports the same for its worst point.
    res = evaluate_limit(parse_limit("vswr <= 1.5 over 1GHz:2GHz"), _flat_vswr_sweep(1.45), u=0.05)
    assert res.conformance_probability == pytest.approx(norm.cdf(2.0), rel=1e-9)
    # Two-sided interval, the numbers of JCGM 106's example in 7.4 (y = 13.6, u = 1.8,
    # T_L = 12.5, T_U = 16.3, as quoted by metrologyrules.com, 2022): p_c = Φ(1.5) − Φ(−0.611).
    pc = conformance_probability(13.6, 1.8, lower=12.5, upper=16.3)
    assert pc == pytest.approx(norm.cdf(16.3, 13.6, 1.8) - norm.cdf(12.5, 13.6, 1.8), rel=1e-12)
    assert pc == pytest.approx(0.66, abs=0.005)


def test_overall_decision_orders_fail_then_indeterminate():
    sw = _flat_vswr_sweep(1.48)
    limits = [parse_limit("vswr <= 1.5 over 1GHz:2GHz"), parse_limit("vswr >= 1.0 over 1GHz:2GHz")]
    results = evaluate_limits(limits, sw, u={"vswr": 0.05})
    assert [r.decision for r in results] == ["indeterminate", "pass"]
    assert overall_decision(results) == "indeterminate"
    results = evaluate_limits(limits + [parse_limit("vswr <= 1.2 over 1GHz:2GHz")], sw)
    assert overall_decision(results) == "fail"


# --- statistics across a batch -----------------------------------------------------------

def test_cpk_one_sided_matches_the_nist_sematech_handbook():
    # NIST/SEMATECH e-Handbook of Statistical Methods, 6.1.6 (example from memory):
    # USL = 20, LSL = 8, μ = 16, σ = 2 → CPU = (20 − 16)/6 = 0.667, CPL = (16 − 8)/6 = 1.333.
    assert cpk_one_sided(16, 2, 20, "<=") == pytest.approx(4 / 6)
    assert cpk_one_sided(16, 2, 8, ">=") == pytest.approx(8 / 6)


def test_limit_statistics_over_worst_values():
    lim = parse_limit("vswr <= 1.5 over 1GHz:2GHz")
    worst = [1.2, 1.3, 1.25, 1.35, float("nan")]
    st = limit_statistics(lim, worst, ["a", "b", "c", "d", "e"])
    finite = worst[:4]
    # Python's statistics module as the reference for mean and sample standard deviation.
    assert st.count == 4
    assert st.mean == pytest.approx(statistics.mean(finite))
    assert st.spread == pytest.approx(statistics.stdev(finite))
    assert (st.worst, st.worst_file) == (1.35, "d")
    assert st.cpk == pytest.approx((1.5 - statistics.mean(finite)) / (3 * statistics.stdev(finite)))
    low = limit_statistics(parse_limit("return_loss_db >= 20 over 1GHz:2GHz"), [25.0, 22.0, 30.0])
    assert low.worst == 22.0 and low.cpk == pytest.approx((25.666666666 - 20) / (3 * statistics.stdev([25, 22, 30])))
    assert limit_statistics(lim, [1.2]).cpk is None
    assert limit_statistics(lim, [1.2, 1.2]).cpk is None
