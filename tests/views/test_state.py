"""The window's model, driven directly with no widgets."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings import read_points
from refplane.session.present import readout_cells
from refplane.session.model import PALETTE, Session

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator


class Recorder:
    def __init__(self, state: Session):
        self.events: list[tuple] = []
        for name in ("tracesChanged", "traceChanged", "offsetsChanged", "overlaysChanged",
                     "markersChanged", "markerMoving", "markerMoved", "bandChanging", "bandChanged",
                     "currentTraceChanged", "currentMarkerChanged"):
            getattr(state, name).connect(lambda *a, n=name: self.events.append((n, *a)))

    def names(self):
        return [e[0] for e in self.events]


def test_add_and_remove_traces_assigns_ids_and_palette_colours():
    state = Session()
    rec = Recorder(state)
    a = state.add_sweep(resistor_with_leads())
    b = state.add_sweep(series_rc(), name="bead")
    assert state.trace_ids() == [a, b]
    assert state.trace(b).name == "bead"
    # Okabe–Ito order, one colour per trace.
    assert [t.colour for t in state.traces()] == list(PALETTE[:2])
    assert rec.names().count("tracesChanged") == 2
    assert state.current_trace == b
    state.remove_trace(a)
    assert state.trace_ids() == [b]
    with pytest.raises(KeyError):
        state.trace(a)
    c = state.add_sweep(series_rc())
    assert c not in (a, b)  # ids are never reused


def test_rename_recolour_hide_and_port_emit_trace_changed():
    state = Session()
    tid = state.add_sweep(two_port_attenuator())
    rec = Recorder(state)
    state.set_name(tid, "pad 6 dB")
    state.set_colour(tid, "#123456")
    state.set_visible(tid, False)
    state.set_port(tid, 2)
    t = state.trace(tid)
    assert (t.name, t.colour, t.visible, t.port) == ("pad 6 dB", "#123456", False, 2)
    assert rec.events == [("traceChanged", tid)] * 4
    with pytest.raises(AnalysisError):
        state.set_port(tid, 3)
    state.set_name(tid, "pad 6 dB")  # no change, no signal
    assert len(rec.events) == 4


def test_zero_offsets_are_identity_without_deembedding():
    state = Session()
    sweep = resistor_with_leads()
    tid = state.add_sweep(sweep)
    assert state.displayed(tid) is sweep and not state.trace(tid).corrected
    state.set_offsets(tid, ())
    assert state.displayed(tid) is sweep
    with pytest.raises(AnalysisError):
        state.set_offsets(tid, (object(), object()))  # two offsets for a 1-port


def test_offsets_use_deembed_when_present():
    deembed = pytest.importorskip("refplane.analysis.lines.deembed")
    state = Session()
    sweep = resistor_with_leads()
    tid = state.add_sweep(sweep)
    rec = Recorder(state)
    off = (deembed.LineOffset(delay_s=100e-12),)
    state.set_offsets(tid, off)
    expected = deembed.remove_offsets(sweep, off)
    assert state.trace(tid).corrected
    np.testing.assert_allclose(state.displayed(tid).s, expected.s, rtol=0, atol=1e-15)
    assert ("offsetsChanged", tid) in rec.events
    # A lossless 100 ps one-way delay turns Γ by 2·ω·τ at most (phase of a line, textbook).
    assert np.allclose(np.abs(state.displayed(tid).s), np.abs(sweep.s))


def test_overlays_add_replace_remove():
    state = Session()
    tid = state.add_sweep(resistor_with_leads())
    rec = Recorder(state)
    model = series_rc()
    state.set_overlay(tid, "R+L", model)
    assert dict(state.trace(tid).overlays) == {"R+L": model}
    state.set_overlay(tid, "R+L", None)
    assert dict(state.trace(tid).overlays) == {}
    assert rec.events == [("overlaysChanged", tid)] * 2
    with pytest.raises(AnalysisError):
        state.set_overlay(tid, "bad", two_port_attenuator())


def test_marker_readout_equals_read_points():
    # Z = 75 + jω·9 nH at 470 MHz: X = 2π·470e6·9e-9 ≈ 26.58 Ω (closed form, common practice).
    state = Session()
    sweep = resistor_with_leads()
    tid = state.add_sweep(sweep)
    mid = state.add_marker(tid, 470e6)
    expected = readout_cells(read_points(sweep, [470e6]).readout.at(0))
    assert state.marker_cells(mid) == expected
    r = state.marker_readout(mid)
    assert r.r_ohm == pytest.approx(75.0, abs=0.05)
    assert r.x_ohm == pytest.approx(2 * np.pi * 470e6 * 9e-9, rel=2e-3)
    assert r.series_l_h == pytest.approx(9e-9, rel=2e-3)


def test_marker_outside_sweep_is_refused_and_moves_are_clamped():
    state = Session()
    tid = state.add_sweep(resistor_with_leads())
    with pytest.raises(AnalysisError):
        state.add_marker(tid, 5e9)
    mid = state.add_marker(tid, 100e6)
    rec = Recorder(state)
    assert state.move_marker(mid, 2e9) == 1e9
    assert state.move_marker(mid, 0.0) == 1e6
    assert rec.names() == ["markerMoving", "markerMoved", "markerMoving", "markerMoved"]


def test_live_drag_emits_moving_then_one_moved():
    state = Session()
    tid = state.add_sweep(resistor_with_leads())
    mid = state.add_marker(tid, 100e6)
    rec = Recorder(state)
    for f in (110e6, 120e6, 130e6):
        state.move_marker(mid, f, finished=False)
    state.move_marker(mid, 130e6)
    assert rec.names() == ["markerMoving"] * 3 + ["markerMoved"]
    assert state.marker(mid).freq_hz == 130e6


def test_step_marker_walks_swept_points():
    state = Session()
    sweep = resistor_with_leads(n=11, f1=100e6, f2=200e6)  # 10 MHz steps
    tid = state.add_sweep(sweep)
    mid = state.add_marker(tid, 125e6)  # between two points
    assert state.step_marker(mid, +1) == 130e6
    assert state.step_marker(mid, +1) == 140e6
    assert state.step_marker(mid, -1) == 130e6
    state.move_marker(mid, 125e6)
    assert state.step_marker(mid, -1) == 120e6
    assert state.step_marker(mid, -100) == 100e6
    assert state.step_marker(mid, +100) == 200e6


def test_removing_a_trace_removes_its_markers():
    state = Session()
    a = state.add_sweep(resistor_with_leads())
    b = state.add_sweep(series_rc())
    m1 = state.add_marker(a, 100e6)
    m2 = state.add_marker(b, 100e6)
    assert state.current_marker == m2
    state.remove_trace(b)
    assert [m.id for m in state.markers()] == [m1]
    assert state.current_marker == m1
    state.remove_marker(m1)
    assert state.markers() == [] and state.current_marker == -1


def test_replace_sweep_keeps_identity_and_clamps_markers():
    state = Session()
    tid = state.add_sweep(resistor_with_leads(), name="mine")
    mid = state.add_marker(tid, 900e6)
    state.replace_sweep(tid, resistor_with_leads(f2=500e6))
    assert state.trace(tid).name == "mine"
    assert state.marker(mid).freq_hz == 500e6


def test_band_live_and_finished():
    state = Session()
    rec = Recorder(state)
    state.set_band((300e6, 100e6), finished=False)
    assert state.band == (100e6, 300e6)
    state.set_band((100e6, 300e6))
    assert rec.names() == ["bandChanging", "bandChanged"]
    state.set_band(None)
    assert state.band is None
    with pytest.raises(AnalysisError):
        state.set_band((1e6, 1e6))
