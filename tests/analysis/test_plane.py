"""Plane estimates from opens and shorts at the end of known lines (scikit-rf media as reference)."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S, LineOffset, add_offsets, remove_offsets
from refplane.analysis.errors import AnalysisError
from refplane.analysis.lines.plane import estimate_plane
from refplane.analysis.sweep import Sweep

skrf = pytest.importorskip("skrf")

IDEAL = {"open": 1.0, "short": -1.0}


def _through_line(standard, offset, freq_hz, *, noise=0.0, outliers=0, seed=1):
    """An ideal open/short seen through ``offset`` (matched line), with noise and wild points."""
    rng = np.random.default_rng(seed)
    bare = Sweep(freq_hz, np.full(freq_hz.size, IDEAL[standard], complex), 50.0)
    gamma = add_offsets(bare, [offset]).s[:, 0, 0].copy()
    gamma += noise * (rng.normal(size=freq_hz.size) + 1j * rng.normal(size=freq_hz.size))
    if outliers:
        where = rng.choice(freq_hz.size, outliers, replace=False)
        gamma[where] = 0.9 * np.exp(1j * rng.uniform(0, 2 * np.pi, outliers))
    return Sweep(freq_hz, gamma, 50.0, name=standard)


@pytest.mark.parametrize("standard", ["open", "short"])
@pytest.mark.parametrize("length_m, n, f_hi", [(0.2, 201, 1e9), (3.0, 801, 3e9), (25.0, 1601, 1e9)])
def test_recovers_delay_and_loss_with_noise_and_outliers(standard, length_m, n, f_hi):
    # Synthetic check of the estimator's own model (line γl from the textbook √f loss law):
    # noise of 0.005 RMS per part (fixed seed) and 4 wild points.
    freq = np.linspace(1e6, f_hi, n)
    truth = LineOffset.from_length(length_m, 0.66, loss_db=0.8)
    sweep = _through_line(standard, truth, freq, noise=0.005, outliers=4)
    est = estimate_plane(sweep, standard=standard, velocity_factor=0.66)
    assert est.delay_s == pytest.approx(truth.delay_s, rel=2e-3, abs=2e-12)
    assert est.length_m == pytest.approx(length_m, rel=2e-3, abs=1e-3)
    assert est.loss_db == pytest.approx(0.8, abs=0.03)
    assert est.n_points == n
    assert est.typical_error < 0.02
    assert est.verdict().startswith("good fit")


def test_long_cable_with_phase_wrapping_many_times_per_sweep_and_coarse_steps():
    # 48 m of coax (vf 0.8 → 200 ns one way): the round-trip phase turns 0.4 turn between
    # points 1 MHz apart and 400 turns over the sweep; no unwrapping is needed.
    freq = np.arange(1, 1001) * 1e6
    truth = LineOffset.from_length(48.0, 0.8, loss_db=6.0)
    assert 2 * 1e6 * truth.delay_s == pytest.approx(0.4, rel=0.001)   # turns per step
    sweep = _through_line("short", truth, freq, noise=0.002, outliers=3, seed=4)
    est = estimate_plane(sweep, standard="short")
    assert est.delay_s == pytest.approx(truth.delay_s, rel=1e-4)
    assert est.loss_db == pytest.approx(6.0, abs=0.1)
    assert est.length_m is None


def test_unevenly_spaced_points():
    # Log-spaced sweep, as some analyzers save: the coarse search resamples, the fine fit does not.
    freq = np.geomspace(300e3, 3e9, 1201)
    truth = LineOffset.from_length(1.5, 0.7, loss_db=0.5)
    est = estimate_plane(_through_line("open", truth, freq, noise=0.003, seed=9), standard="open")
    assert est.delay_s == pytest.approx(truth.delay_s, rel=1e-3)
    assert est.loss_db == pytest.approx(0.5, abs=0.03)


def test_skrf_line_ended_in_open_and_short():
    # Reference: scikit-rf DefinedGammaZ0.line (given γ, 50 Ω) cascaded with
    # skrf's own ideal open and short; Refplane must find the line skrf was given.
    freq_hz = np.linspace(10e6, 2e9, 400)
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    vf, length = 0.66, 1.2
    beta = 2 * np.pi * freq_hz / (vf * SPEED_OF_LIGHT_M_S)
    alpha = 1.2 / 8.685889638 * np.sqrt(freq_hz / 1e9) / length      # 1.2 dB one way at 1 GHz
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50, z0=50, gamma=alpha + 1j * beta)
    for standard, end in (("open", media.open()), ("short", media.short())):
        net = media.line(length, unit="m") ** end
        est = estimate_plane(Sweep(net.f, net.s, 50.0), standard=standard, velocity_factor=vf)
        assert est.length_m == pytest.approx(length, rel=1e-6)
        assert est.loss_db == pytest.approx(1.2, rel=1e-6)
        assert est.residual < 1e-6


def test_skrf_delay_line_in_seconds():
    # Reference: scikit-rf media.line(d, unit='s') — a matched line given by its delay.
    freq_hz = np.linspace(1e6, 1e9, 500)
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50, z0=50,
                                      gamma=2j * np.pi * freq_hz / (0.7 * SPEED_OF_LIGHT_M_S))
    net = media.line(3.3e-9, unit="s") ** media.short()
    est = estimate_plane(Sweep(net.f, net.s, 50.0), standard="short")
    assert est.delay_s == pytest.approx(3.3e-9, rel=1e-6)
    assert est.loss_db == pytest.approx(0.0, abs=1e-9)


def test_removing_the_estimate_gives_the_ideal_standard():
    freq = np.linspace(1e6, 1.5e9, 301)
    truth = LineOffset.from_length(0.5, 0.66, loss_db=0.3)
    sweep = _through_line("open", truth, freq)
    est = estimate_plane(sweep, standard="open")
    corrected = remove_offsets(sweep, [est.offset()])
    np.testing.assert_allclose(corrected.reflection(1), 1.0, atol=1e-6)


def test_wrong_standard_is_noticed():
    # An open said to be a short: the fit is poor and the verdict names the other standard.
    freq = np.linspace(1e6, 1e9, 201)
    sweep = _through_line("open", LineOffset.from_length(0.3, 0.66, loss_db=0.2), freq, noise=0.002)
    est = estimate_plane(sweep, standard="short")
    assert est.residual > 1.0 and est.other_residual < 0.02
    assert "reads like an open rather than a short" in est.verdict()


def test_band_limits_the_points_used():
    freq = np.linspace(1e6, 3e9, 300)
    truth = LineOffset.from_length(0.2, 0.66, loss_db=0.4)
    sweep = _through_line("open", truth, freq)
    est = estimate_plane(sweep, standard="open", band_hz=(100e6, 1e9))
    assert est.band_hz[0] >= 100e6 and est.band_hz[1] <= 1e9
    assert est.n_points == int(np.count_nonzero((freq >= 100e6) & (freq <= 1e9)))
    assert est.delay_s == pytest.approx(truth.delay_s, rel=1e-6)


def test_port_of_a_two_port_sweep():
    freq = np.linspace(1e6, 1e9, 101)
    s = np.zeros((101, 2, 2), complex)
    s[:, 1, 1] = -1.0
    truth = LineOffset(2e-9, 0.5)
    sweep = add_offsets(Sweep(freq, s, 50.0), [None, truth])
    est = estimate_plane(sweep, standard="short", port=2)
    assert est.delay_s == pytest.approx(2e-9, rel=1e-6)


@pytest.mark.parametrize("kw, words", [
    (dict(standard="load"), "open' or 'short"),
    (dict(standard="open", port=3), "port 3 does not exist"),
    (dict(standard="open", band_hz=(5e9, 6e9)), "at least 3"),
    (dict(standard="open", band_hz=(2e9, 1e9)), "upper frequency"),
    (dict(standard="open", velocity_factor=1.5), "velocity factor"),
])
def test_bad_requests_are_refused(kw, words):
    sweep = _through_line("open", LineOffset(1e-9), np.linspace(1e6, 1e9, 50))
    with pytest.raises(AnalysisError, match=words):
        estimate_plane(sweep, **kw)


def test_a_matched_load_is_not_mistaken_for_a_standard():
    freq = np.linspace(1e6, 1e9, 50)
    with pytest.raises(AnalysisError, match="not an open or a short"):
        estimate_plane(Sweep(freq, np.zeros(50, complex), 50.0), standard="open")
    # A 50 Ω-ish load with a little reflection: a fit is made but reported as poor.
    est = estimate_plane(Sweep(freq, np.full(50, 0.05 + 0j), 50.0), standard="open")
    assert est.verdict().startswith("poor fit")
