"""Trace memory (a stored trace, others shown relative to it) and a chart reference impedance
other than the files', through the session and its Scene."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session

from model_sweeps import resistor_with_leads


def _load(z_ohm, z0=50.0, f=None):
    f = np.linspace(1e6, 100e6, 101) if f is None else f
    z = np.broadcast_to(np.asarray(z_ohm, complex), f.shape)
    return Sweep(freq_hz=f, s=z_to_gamma(z, z0).reshape(-1, 1, 1), z0_ohm=z0, name="load")


def test_a_75_ohm_load_sits_at_the_centre_of_a_75_ohm_chart():
    # Γ = (Z − Z0)/(Z + Z0) (definition): a 75 Ω resistor reads Γ = 0.2 against 50 Ω and 0
    # against 75 Ω; VSWR 1.5 and 1.
    s = Session()
    tid = s.add_sweep(_load(75.0))
    mid = s.add_marker(tid, 50e6)
    assert s.scene().marker(mid).readout.vswr == pytest.approx(1.5)
    np.testing.assert_allclose(s.scene().trace(tid).gamma, 0.2, atol=1e-12)
    s.set_display(chart_z0_ohm=75.0)
    scene = s.scene()
    np.testing.assert_allclose(scene.trace(tid).gamma, 0.0, atol=1e-12)
    assert scene.trace(tid).z0_ohm == 75.0 and scene.chart_z0_ohm == 75.0
    assert scene.marker(mid).readout.vswr == pytest.approx(1.0)
    # The impedance itself does not change with the chart.
    assert scene.marker(mid).readout.r_ohm == pytest.approx(75.0)
    s.set_display(upper_plot="vswr")
    np.testing.assert_allclose(s.scene().plots[0].curves[0].y, 1.0, atol=1e-9)
    with pytest.raises(Exception):
        s.set_display(chart_z0_ohm=-5)


def test_the_raw_trace_and_overlays_move_to_the_chart_reference_too():
    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    s.set_offsets(tid, (LineOffset(delay_s=30e-12),))
    s.set_overlay(tid, "fitted model", _load(75.0, f=s.displayed(tid).freq_hz))
    s.set_display(chart_z0_ohm=75.0)
    t = s.scene().trace(tid)
    assert t.raw_gamma is not None
    np.testing.assert_allclose(t.overlays[0].gamma, 0.0, atol=1e-12)


def test_a_trace_relative_to_its_stored_self_before_a_line_is_removed():
    # Removing a lossless line of one-way delay τ turns Γ by 2ωτ and leaves |Γ| alone
    # (a line's reflection phase is −2βl: Pozar, Microwave Engineering, sec. 2.3), so the
    # corrected trace relative to the stored, uncorrected one is 0 dB and +720°·f·τ (wrapped).
    s = Session()
    tid = s.add_sweep(resistor_with_leads(n=101, f1=1e6, f2=500e6))
    s.store_memory(tid)
    assert s.memory.name == "leaded · S11" or s.memory.name.endswith("· S11")
    tau = 100e-12
    s.set_offsets(tid, (LineOffset(delay_s=tau),))
    s.set_display(upper_plot="memory_db", lower_plot="memory_deg")
    upper, lower = s.scene().plots
    # The corrected trace (the faded uncorrected one is the memory itself: 0 dB, 0°).
    (db,) = [c for c in upper.curves if c.alpha == 1.0]
    (deg,) = [c for c in lower.curves if c.alpha == 1.0]
    np.testing.assert_allclose(db.y, 0.0, atol=1e-9)
    expected = np.angle(np.exp(1j * np.radians(720.0 * deg.freq_hz * tau)), deg=True)
    np.testing.assert_allclose(deg.y, expected, atol=1e-6)  # removing the line adds +2ωτ
    assert "relative to" in lower.note
    s.set_display(upper_plot="memory_ratio")
    np.testing.assert_allclose([c for c in s.scene().plots[0].curves if c.alpha == 1.0][0].y, 1.0, atol=1e-9)
    s.clear_memory()
    assert s.scene().plots[0].curves == () and "store a trace" in s.scene().plots[0].note


def test_memory_and_chart_reference_survive_a_session_file(tmp_path):
    from refplane.analysis.files.loading import read_sweep
    from refplane.session.files import open_session, save_session

    from model_sweeps import write_sweep

    path = write_sweep(resistor_with_leads(n=51), tmp_path / "r.s1p")
    s = Session()
    tid = s.add_sweep(read_sweep(path))
    s.store_memory(tid)
    s.set_display(chart_z0_ohm=75.0, upper_plot="memory_db", lower_plot="z_mag", log_y=("z_mag",),
                  upper_view=(10e6, 20e6, -1.0, 1.0))
    again, notes = open_session(save_session(s, tmp_path / "w.refplane"))
    assert notes == []
    assert again.display.chart_z0_ohm == 75.0 and again.memory.name == s.memory.name
    assert again.display.log_y == ("z_mag",) and again.display.upper_view == (10e6, 20e6, -1.0, 1.0)
    np.testing.assert_allclose(again.memory.sweep.s, s.memory.sweep.s, atol=1e-12)
    assert again.scene().same_as(s.scene())


def test_undo_brings_back_a_closed_trace_and_removed_markers():
    s = Session()
    a = s.add_sweep(resistor_with_leads(), name="a")
    b = s.add_sweep(resistor_with_leads(), name="b")
    m1, m2, m3 = s.add_marker(a, 100e6), s.add_marker(b, 200e6), s.add_marker(a, 300e6)
    before = s.scene()
    s.remove_trace(a)
    assert s.undo_text() == "close a" and len(s.markers()) == 1
    assert s.undo() == "close a"
    after = s.scene()
    assert [t.name for t in after.traces] == ["a", "b"]
    assert [(m.id, m.number, m.freq_hz) for m in after.markers] == \
        [(m.id, m.number, m.freq_hz) for m in before.markers]
    s.remove_marker(m2)
    assert s.undo_text() == "remove marker 2"
    s.undo()
    assert [m.id for m in s.markers()] == [m1, m2, m3]
    s.clear_markers()
    s.clear()
    assert s.undo() == "close all traces" and len(s.traces()) == 2 and s.markers() == []
    assert s.undo() == "remove all markers" and len(s.markers()) == 3
    assert s.undo() is None
