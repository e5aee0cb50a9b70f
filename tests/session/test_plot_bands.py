"""Uncertainty bands on the frequency plots: value ± the engine's expanded uncertainty (k = 2).

The engine itself is checked against JCGM 101 Monte Carlo in tests/analysis; here the band must
carry exactly the engine's number at swept points, and follow first-order propagation (GUM,
JCGM 100 eq. 10) for VSWR from |Γ|."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.readings.impedance import vswr, z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session import plot_bands
from refplane.session.model import Session
from refplane.session.tool_settings import UncertaintySettings
from refplane.session.uncertainty_view import reading_uncertainty


def series_rlc(n=201, f0=100e6, r=30.0, l_h=200e-9):
    # Series R-L-C: Z = R + j(ωL − 1/(ωC)), resonant at f0 = 1/(2π√(LC)) (circuit theory).
    c_f = 1.0 / ((2 * np.pi * f0) ** 2 * l_h)
    f = np.linspace(50e6, 150e6, n)
    w = 2 * np.pi * f
    z = r + 1j * (w * l_h - 1.0 / (w * c_f))
    return Sweep(f, z_to_gamma(z, 50.0), 50.0, name="rlc")


SETTINGS = dict(enabled=True, method="linear", noise="none")


def _session(sweep, **settings):
    s = Session()
    tid = s.add_sweep(sweep)
    s.set_tool("uncertainty", **{**SETTINGS, **settings})
    return s, tid


@pytest.mark.parametrize("quantity,keys", [("vswr", ("vswr",)), ("return_loss", ("return_loss_db",)),
                                           ("r_x", ("r_ohm", "x_ohm")), ("z_mag", ("z_mag_ohm",))])
def test_half_width_at_a_swept_point_is_the_engines_u(quantity, keys):
    sweep = series_rlc()
    s, tid = _session(sweep)
    s.set_display(upper_plot=quantity)
    view = s.scene().plots[0]
    assert len(view.bands) == len(keys)
    i = 77
    u = reading_uncertainty(s.tool("uncertainty"), sweep, [sweep.freq_hz[i]])
    for band, curve, key in zip(view.bands, view.curves, keys):
        assert band.trace_id == tid and band.label == curve.label
        assert (band.upper[i] - band.lower[i]) / 2 == pytest.approx(float(getattr(u, key)[0]), rel=1e-9)
        assert (band.upper[i] + band.lower[i]) / 2 == pytest.approx(curve.y[i], rel=1e-12)


def test_vswr_band_follows_first_order_propagation_from_directivity_alone():
    # Directivity alone, |D| = 0.01 (40 dB): U(|Γ|) = 0.01 (the engine's documented example);
    # VSWR = (1+ρ)/(1−ρ), so U(VSWR) = 2/(1−ρ)² · U(ρ) to first order (JCGM 100 eq. 10).
    sweep = series_rlc()
    s, _ = _session(sweep, directivity_db=40.0, source_match_db=200.0, tracking_db=0.0, interpolation=False)
    s.set_display(upper_plot="vswr")
    band, = s.scene().plots[0].bands
    rho = np.abs(sweep.reflection(1))
    i = int(np.argmin(np.abs(sweep.freq_hz - 100e6)))  # at resonance ρ = |30−50|/80 = 0.25
    assert rho[i] == pytest.approx(0.25, abs=1e-3)
    half = (band.upper[i] - band.lower[i]) / 2
    assert half == pytest.approx(2 / (1 - rho[i]) ** 2 * 0.01, rel=0.02)
    assert (band.upper[i] + band.lower[i]) / 2 == pytest.approx(vswr(sweep.reflection(1)[i]))


def test_no_band_when_off_or_for_quantities_without_a_u():
    sweep = series_rlc()
    s, _ = _session(sweep)
    s.set_display(upper_plot="vswr", lower_plot="phase")
    assert s.scene().plots[0].bands and not s.scene().plots[1].bands
    s.set_tool("uncertainty", enabled=False)
    assert s.scene().plots[0].bands == ()
    s.set_tool("uncertainty", enabled=True)
    assert s.scene().plots[0].bands
    # A hidden trace has no band.
    s.set_visible(s.traces()[0].id, False)
    assert s.scene().plots[0].bands == ()


def test_a_big_sweep_is_read_on_a_thinned_grid_and_cached():
    sweep = series_rlc(n=5001)
    s, _ = _session(sweep)
    s.set_display(upper_plot="return_loss")
    band, = s.scene().plots[0].bands
    assert band.freq_hz.size == 5001
    grid = plot_bands.thinned_indices(5001)
    assert grid.size <= plot_bands.MAX_POINTS and grid[0] == 0 and grid[-1] == 5000
    u = reading_uncertainty(s.tool("uncertainty"), sweep, sweep.freq_hz[grid])
    half = (band.upper - band.lower) / 2
    assert np.allclose(half[grid], u.return_loss_db, rtol=1e-9)
    # Between grid points the half-width lies between its neighbours' (linear interpolation).
    j = grid[10] + 3
    lo, hi = sorted((u.return_loss_db[10], u.return_loss_db[11]))
    assert lo - 1e-12 <= half[j] <= hi + 1e-12
    # A scene resolved again (another quantity and back) reuses the band.
    s.set_display(upper_plot="vswr")
    s.set_display(upper_plot="return_loss")
    assert s.scene().plots[0].bands[0] is band


def test_auto_reads_the_band_linearly():
    assert plot_bands.band_settings(UncertaintySettings(enabled=True)).method == "linear"
    mc = UncertaintySettings(enabled=True, method="monte-carlo")
    assert plot_bands.band_settings(mc) is mc
