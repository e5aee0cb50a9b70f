"""The reference-plane panel: fields ↔ model both ways, live stepping, estimate, save."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtGui import QWheelEvent

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S, LineOffset, add_offsets
from refplane.analysis.sweep import Sweep
from refplane.views.panels.offsets_panel import OffsetsPanel
from refplane.session.model import Session

from model_sweeps import resistor_with_leads, two_port_attenuator


def open_through_cable(length_m=0.2, vf=0.66, loss_db=0.1, name="cable_open") -> Sweep:
    """An ideal open seen through a line (common practice: 20 cm, vf 0.66 is λ/4 near 247 MHz)."""
    f = np.linspace(1e6, 1e9, 401)
    bare = Sweep(f, np.ones(f.size, complex), 50.0, name=name)
    return add_offsets(bare, [LineOffset.from_length(length_m, vf, loss_db=loss_db)]).replace(name=name)


@pytest.fixture
def setup(qtbot):
    state = Session()
    panel = OffsetsPanel(state)
    qtbot.addWidget(panel)
    return state, panel


def type_into(qtbot, edit, text):
    edit.setFocus()
    edit.selectAll()
    edit.setText(text)
    edit.editingFinished.emit()


def test_no_trace_disables_the_panel(setup):
    state, panel = setup
    assert not panel.delay_edit.isEnabled()
    assert panel.trace_label.text() == "no trace open"
    panel.step_delay(1)          # nothing to act on: no error, nothing changes
    assert state.trace_ids() == []


def test_typed_delay_reaches_the_model_and_the_chart_sweep(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    with qtbot.waitSignal(state.offsetsChanged):
        type_into(qtbot, panel.delay_edit, "1.0108 ns")
    assert state.trace(tid).offsets == (LineOffset(delay_s=1.0108e-9),)
    assert state.trace(tid).corrected


def test_length_and_velocity_factor_are_linked_to_the_delay(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    type_into(qtbot, panel.length_edit, "20 cm")          # no velocity factor yet
    assert "velocity factor" in panel.message.text()
    assert state.trace(tid).offsets == ()
    type_into(qtbot, panel.vf_edit, "0.66")
    type_into(qtbot, panel.length_edit, "20 cm")
    # delay = length / (vf · c), c = 299 792 458 m/s (SI definition)
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(0.2 / (0.66 * SPEED_OF_LIGHT_M_S), rel=1e-12)
    assert panel.delay_edit.text() == "1.0108 ns"
    # With the 20 cm removed, the open at the cable's end reads as an open again (|Γ| → 1, ∠ → 0)
    # apart from the cable's loss, which is not yet removed — and the phase that comes with the
    # skin-effect loss (equal to it in nepers, twice over the round trip; Pozar §1.7).
    gamma = state.displayed(tid).reflection(1)
    skin_np = 0.1 * np.sqrt(state.displayed(tid).freq_hz / 1e9) / (20 * np.log10(np.e))
    np.testing.assert_allclose(np.angle(gamma), -2 * skin_np, atol=1e-9)
    # Typing a delay updates the length shown.
    type_into(qtbot, panel.delay_edit, "2.0216 ns")
    assert panel.length_edit.text() == "400.00 mm"
    # Bad velocity factors are refused with a message, nothing changes.
    type_into(qtbot, panel.vf_edit, "1.4")
    assert "velocity factor" in panel.message.text()
    assert panel.vf_edit.text() == "0.66"


def test_loss_and_line_impedance_fields(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    type_into(qtbot, panel.delay_edit, "1 ns")
    type_into(qtbot, panel.loss_edit, "0.1 dB @ 1 GHz")
    type_into(qtbot, panel.z0_edit, "75 Ω")
    assert state.trace(tid).offsets == (LineOffset(1e-9, 0.1, 1e9, 0.0, 75.0),)
    type_into(qtbot, panel.z0_edit, "")
    assert state.trace(tid).offsets[0].line_z0_ohm is None
    type_into(qtbot, panel.loss_edit, "-1 dB")
    assert "must not be negative" in panel.message.text()
    assert state.trace(tid).offsets[0].loss_db == 0.1
    assert panel.loss_edit.text() == "0.1 dB @ 1 GHz"
    type_into(qtbot, panel.delay_edit, "3 furlongs")
    assert "unknown time unit" in panel.message.text()
    assert panel.delay_edit.text() == "1.0000 ns"


def test_keys_wheel_and_slider_step_the_delay_live(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    panel.step_combo.setCurrentIndex(2)                    # 10 ps steps
    with qtbot.waitSignal(state.offsetsChanged):
        qtbot.keyClick(panel.delay_edit, Qt.Key_Up)
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(10e-12)
    qtbot.keyClick(panel.delay_edit, Qt.Key_Up, Qt.ShiftModifier)
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(110e-12)
    qtbot.keyClick(panel.length_edit, Qt.Key_Down)
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(100e-12)
    wheel = QWheelEvent(QPointF(5, 5), QPointF(5, 5), QPoint(0, 0), QPoint(0, 240), Qt.NoButton,
                        Qt.NoModifier, Qt.NoScrollPhase, False)
    from PySide6.QtWidgets import QApplication

    QApplication.sendEvent(panel.delay_edit, wheel)
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(120e-12)
    assert panel.slider.value() == 12
    panel.slider.setValue(500)                             # 500 steps of 10 ps
    assert state.trace(tid).offsets[0].delay_s == pytest.approx(5e-9)
    assert panel.delay_edit.text() == "5.0000 ns"


def test_model_changes_show_in_the_fields_without_echo(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    events = []
    state.offsetsChanged.connect(events.append)
    state.set_offsets(tid, (LineOffset(2e-9, 0.4, 1e9, 0.0, 60.0),))
    assert events == [tid]                                 # the panel did not write back
    assert panel.delay_edit.text() == "2.0000 ns"
    assert panel.loss_edit.text() == "0.4 dB @ 1 GHz"
    assert panel.z0_edit.text() == "60 Ω"
    panel.reset_port()
    assert state.trace(tid).offsets == (LineOffset(),)
    assert not state.trace(tid).corrected
    assert panel.delay_edit.text() == ""


def test_ports_of_a_two_port_trace_are_edited_separately(setup, qtbot):
    state, panel = setup
    tid = state.add_sweep(two_port_attenuator())
    assert panel.port_combo.count() == 2
    type_into(qtbot, panel.delay_edit, "100 ps")
    panel.port_combo.setCurrentIndex(1)
    assert panel.delay_edit.text() == ""
    type_into(qtbot, panel.delay_edit, "250 ps")
    assert state.trace(tid).offsets == (LineOffset(100e-12), LineOffset(250e-12))
    panel.reset_all()
    assert state.trace(tid).offsets == ()


def test_switching_traces_follows_the_current_trace(setup, qtbot):
    state, panel = setup
    a = state.add_sweep(open_through_cable(), name="a")
    type_into(qtbot, panel.delay_edit, "1 ns")
    b = state.add_sweep(resistor_with_leads(), name="b")
    assert panel.trace_label.text() == "b" and panel.delay_edit.text() == ""
    state.set_current_trace(a)
    assert panel.delay_edit.text() == "1.0000 ns"
    state.remove_trace(a)
    state.remove_trace(b)
    assert panel.trace_label.text() == "no trace open"


def test_estimate_from_an_open_sets_the_plane(setup, qtbot):
    # The open at the end of 20 cm of vf-0.66 coax, 0.1 dB at 1 GHz: the estimate finds the
    # line (delay = length / (vf · c)) and the panel applies it; the open then reads as an open.
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    type_into(qtbot, panel.vf_edit, "0.66")
    panel.standard_combo.setCurrentIndex(panel.standard_combo.findData("open"))
    with qtbot.waitSignal(panel.estimateFinished, timeout=10000) as blocker:
        panel.estimate_button.click()
    assert blocker.args == [True]
    offset = state.trace(tid).offsets[0]
    assert offset.delay_s == pytest.approx(0.2 / (0.66 * SPEED_OF_LIGHT_M_S), rel=1e-6)
    assert offset.loss_db == pytest.approx(0.1, rel=1e-4)
    np.testing.assert_allclose(state.displayed(tid).reflection(1), 1.0, atol=1e-6)
    assert "Good fit" in panel.estimate_label.text()
    assert "1.0108 ns, 200.00 mm" in panel.estimate_label.text()


def test_estimate_failure_is_a_message_not_a_crash(setup, qtbot):
    state, panel = setup
    f = np.linspace(1e6, 1e9, 50)
    state.add_sweep(Sweep(f, np.zeros(50, complex), 50.0, name="load"))
    with qtbot.waitSignal(panel.estimateFinished, timeout=10000) as blocker:
        panel.estimate_button.click()
    assert blocker.args == [False]
    assert "not an open or a short" in panel.message.text()
    assert panel.estimate_button.isEnabled()


def test_save_corrected_sweep_records_offsets_and_protects_the_original(setup, qtbot, tmp_path):
    from refplane.analysis.files import touchstone

    state, panel = setup
    source = tmp_path / "cable_open.s1p"
    touchstone.write(open_through_cable(), source)
    original = source.read_text()
    tid = state.add_sweep(touchstone.read(source))
    state.set_offsets(tid, (LineOffset.from_length(0.2, 0.66, loss_db=0.1),))

    target = tmp_path / "fixed.s1p"
    panel.ask_save_path = lambda suggested: str(target)
    assert panel.save_corrected() == str(target)
    saved = touchstone.read(target)
    np.testing.assert_allclose(saved.s, state.displayed(tid).s, atol=1e-15)
    assert any("port 1 line removed: delay 1.011 ns" in c for c in saved.comments)
    assert any("corrected from" in c for c in saved.comments)

    # Choosing the original file asks first; saying no leaves it untouched.
    asked = []
    panel.ask_save_path = lambda suggested: str(source)
    panel.confirm = lambda text: asked.append(text) or False
    assert panel.save_corrected() is None
    assert asked and "original measurement" in asked[0]
    assert source.read_text() == original

    # A write that fails shows an error and changes nothing.
    errors = []
    panel.show_error = lambda title, text: errors.append(text)
    panel.ask_save_path = lambda suggested: str(tmp_path / "no_such_folder" / "x.s1p")
    assert panel.save_corrected() is None
    assert errors and "does not exist" in errors[0]


def test_cancelled_save_writes_nothing(setup, tmp_path):
    state, panel = setup
    state.add_sweep(open_through_cable())
    panel.ask_save_path = lambda suggested: None
    assert panel.save_corrected() is None
    assert list(tmp_path.iterdir()) == []


def test_dielectric_loss_and_skin_phase_fields(setup, qtbot):
    # Every term of the line model is editable: the dielectric loss (∝ f) restated at the
    # conductor loss's frequency, and the causal skin-effect phase (default on; Pozar §1.7).
    state, panel = setup
    tid = state.add_sweep(open_through_cable())
    type_into(qtbot, panel.loss_edit, "0.2 dB @ 1 GHz")
    type_into(qtbot, panel.dielectric_edit, "0.05 dB @ 500 MHz")
    line = state.trace(tid).offsets[0]
    assert line.dielectric_loss_db == pytest.approx(0.1) and line.loss_ref_hz == 1e9
    assert line.skin_phase and panel.skin_check.isChecked()
    panel.skin_check.setChecked(False)
    assert state.trace(tid).offsets[0].skin_phase is False
    state.set_offsets(tid, [LineOffset(1e-9, 0.3, 1e9, 0.2, skin_phase=True)])
    assert panel.skin_check.isChecked() and panel.dielectric_edit.text() == "0.2 dB @ 1 GHz"
