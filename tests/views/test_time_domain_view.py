"""The time-domain view: settings ⇄ session, the curve and readings equal to the analysis (checked
there against Hines and Stinehelfer's example and scikit-rf lines), markers, gate, gated trace."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.lines.deembed import DB_PER_NEPER, SPEED_OF_LIGHT_M_S
from refplane.analysis.lines.time_domain import gate, time_response
from refplane.analysis.sweep import Sweep
from refplane.session import tool_text
from refplane.session.tool_jobs import GATE_OVERLAY
from refplane.session.model import Session
from refplane.views.panels import tool_widgets as tw
from refplane.views.time_domain import TimeDomainView

pytestmark = pytest.mark.needs_qt
skrf = pytest.importorskip("skrf")
C = SPEED_OF_LIGHT_M_S


def media(f, z0=50.0, vf=0.66, loss_db_per_m=0.0):
    """scikit-rf line medium with the causal skin-effect γ and constant Z0 (as tests/analysis/test_time_domain.py)."""
    a = loss_db_per_m / DB_PER_NEPER * np.sqrt(f / 1e9)
    return skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50, z0=z0,
                                     gamma=2j * np.pi * f / (vf * C) + a * (1 + 1j))


def step_50_to_75() -> Sweep:
    """Hines and Stinehelfer (1974): 1 m of 50 Ω line, then 2 m of 75 Ω ended in 75 Ω; harmonic grid."""
    f = 2e6 * np.arange(1, 1501)
    l50, l75 = media(f, 50.0), media(f, 75.0)
    net = l50.line(1.0, unit="m") ** l75.line(2.0, unit="m") ** l50.resistor(75.0) ** l50.short()
    return Sweep(f, net.s, 50.0, name="50 into 75")


@pytest.fixture
def setup(qtbot):
    state = Session()
    view = TimeDomainView(state)
    qtbot.addWidget(view)
    yield state, view
    view.wait()


def test_no_trace_says_what_to_do(setup):
    _state, view = setup
    assert "Open a sweep" in view.message.text()
    assert view.curve_data()[0].size == 0


def test_impulse_step_and_impedance_of_a_50_to_75_ohm_line(setup):
    state, view = setup
    sweep = step_50_to_75()
    state.add_sweep(sweep)
    view.wait()
    td = view.response
    expected = time_response(sweep, mode="lowpass", window="kaiser:6", velocity_factor=0.66)
    x, y = view.curve_data()
    np.testing.assert_allclose(x, expected.distance_m)
    np.testing.assert_allclose(y, expected.impulse)
    assert tw.rows_of(view.event_table) == tool_text.event_rows(expected)
    # Hines and Stinehelfer: the junction at 1 m reflects ρ = (75 − 50)/(75 + 50) = +0.2.
    assert abs(td.events[0].distance_m - 1.0) <= td.resolution_m
    assert float(tw.rows_of(view.event_table)[0][1]) == pytest.approx(0.2, abs=0.01)
    # Resolution and range stated on the plot and beside it.
    assert f"resolution {tool_text.si(td.resolution_m, 'm', 3)}" in view.note_item.textItem.toPlainText()
    assert "range" in view.summary.text() and "Kaiser β=6" in view.summary.text()
    # Step: ρ = 0.2 after the junction; impedance 75 Ω.
    state.set_tool("time_domain", show="step")
    assert view.show_combo.currentData() == "step"
    x, y = view.curve_data()
    assert y[np.argmin(abs(x - 2.0))] == pytest.approx(0.2, abs=0.005)
    view.show_combo.setCurrentIndex(view.show_combo.findData("impedance"))
    assert state.tool("time_domain").show == "impedance"
    x, y = view.curve_data()
    assert y[np.argmin(abs(x - 2.0))] == pytest.approx(75.0, abs=0.8)
    assert y[np.argmin(abs(x - 0.5))] == pytest.approx(50.0, abs=0.5)


def test_markers_read_distance_rho_and_impedance(setup):
    state, view = setup
    state.add_sweep(step_50_to_75())
    view.wait()
    state.set_tool("time_domain", markers_m=(0.5, 2.0))
    rows = view.marker_rows()
    expected = tool_text.time_marker_rows(view.response, (0.5, 2.0))
    assert rows == expected
    assert rows[1][1] == "2.000 m" and float(rows[1][3]) == pytest.approx(0.2, abs=0.005)
    assert rows[1][4].endswith("Ω") and float(rows[1][4].split()[0]) == pytest.approx(75.0, abs=0.8)
    assert len(view.marker_lines) == 2 and view.marker_lines[1].value() == 2.0
    # Dragging a marker line writes the session (without a new transform).
    job = view._job
    view.marker_lines[0].setValue(1.5)
    view.marker_lines[0].sigPositionChangeFinished.emit(view.marker_lines[0])
    assert state.tool("time_domain").markers_m == (1.5, 2.0) and view._job == job
    view.add_marker()                        # at the strongest event
    assert len(state.tool("time_domain").markers_m) == 3 and len(view.marker_lines) == 3
    view.clear_markers_button.click()
    assert state.tool("time_domain").markers_m == () and view.marker_lines == []


def test_settings_both_ways_and_a_new_transform_only_when_needed(setup):
    state, view = setup
    state.add_sweep(step_50_to_75())
    view.wait()
    view.vf_spin.setValue(0.8)
    assert state.tool("time_domain").vf == pytest.approx(0.8)
    view.wait()
    assert view.response.velocity_factor == pytest.approx(0.8)
    view.window_combo.setCurrentIndex(view.window_combo.findData("hann"))
    view.wait()
    assert state.tool("time_domain").window == "hann" and view.response.window.name == "hann"
    assert not view.beta_spin.isEnabled()
    state.set_tool("time_domain", mode="bandpass", window="kaiser", kaiser_beta=9.0)
    assert view.mode_combo.currentData() == "bandpass" and view.beta_spin.value() == 9.0
    view.wait()
    assert view.response.mode == "bandpass" and view.response.window.beta == 9.0
    # Step and impedance are low-pass only: their choices are greyed out.
    assert not view.show_combo.model().item(1).isEnabled()


def test_gate_dragged_and_the_gated_sweep_opened_as_a_trace(setup):
    state, view = setup
    # scikit-rf: a 0.4-reflecting device behind 1 m of line, a bad joint (2 cm of 65 Ω), 2 m more.
    f = np.linspace(10e6, 3e9, 1500)
    m50, m65 = media(f, 50.0, loss_db_per_m=0.1), media(f, 65.0, loss_db_per_m=0.1)
    device = m50.load(0.4 * np.exp(-2j * np.pi * f * 0.2e-9))
    measured = m50.line(1.0, unit="m") ** m65.line(0.02, unit="m") ** m50.line(2.0, unit="m") ** device
    sweep = Sweep(f, measured.s, 50.0, name="cable with joint")
    state.add_sweep(sweep)
    state.set_tool("time_domain", mode="bandpass")
    view.wait()
    assert [round(e.distance_m, 1) for e in view.response.events[:2]] == [3.0, 1.0]
    view.set_gate_around_event()
    s = state.tool("time_domain")
    assert s.gate_start_m < 3.0 < s.gate_stop_m and view.gate_item.isVisible()
    view.wait()
    tid = state.trace_ids()[0]
    overlay = state.trace(tid).overlays[GATE_OVERLAY]
    np.testing.assert_allclose(overlay.s, gate(sweep, s.gate_start_m, s.gate_stop_m, velocity_factor=0.66,
                                               window="kaiser:6").sweep.s)
    # While the gate is dragged the overlay follows (the session is not written until the drag ends).
    before = state.tool("time_domain")
    view.gate_item.lines[0].setValue(2.6)      # one step of a drag: sigRegionChanged, not finished
    view.wait()
    assert view.gated.start_m == pytest.approx(2.6) and state.tool("time_domain") == before
    # Drag the gate on the plot: the session follows when the drag ends.
    view.gate_item.setRegion((2.5, 3.5))
    assert (state.tool("time_domain").gate_start_m, state.tool("time_domain").gate_stop_m) == (2.5, 3.5)
    view.open_gated()
    view.wait()
    ids = state.trace_ids()
    assert len(ids) == 2 and "gated 2.5–3.5 m" in state.trace(ids[1]).name
    expected = gate(sweep, 2.5, 3.5, velocity_factor=0.66, window="kaiser:6")
    np.testing.assert_allclose(state.trace(ids[1]).raw.s, expected.sweep.s)
    view.clear_gate_button.click()
    assert state.tool("time_domain").gate_start_m is None and not view.gate_item.isVisible()
    assert GATE_OVERLAY not in state.trace(tid).overlays
    state.set_tool("time_domain", gate_start_m=2.5, gate_stop_m=3.5, gate_overlay=False)
    view.wait()
    assert GATE_OVERLAY not in state.trace(tid).overlays and not view.overlay_check.isChecked()


def test_caution_is_shown(setup):
    _state, view = setup
    from PySide6.QtWidgets import QLabel

    texts = " ".join(label.text() for label in view.findChildren(QLabel))
    assert "Discharge a cable" in texts and "transmitter may feed" in texts


def test_follows_the_window_theme(setup):
    state, view = setup
    from refplane.views.theme import DARK

    state.set_display(theme="dark")
    assert view.plot.backgroundBrush().color().name() == DARK.chart_bg
