"""The uncertainty panel: settings ⇄ session both ways, and the preview equal to the session's
uncertainty function (itself checked against the engine and ``refplane read --json``)."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session import present, uncertainty_view
from refplane.session.model import Session
from refplane.views.panels.uncertainty_panel import UncertaintyPanel

pytestmark = pytest.mark.needs_qt


def load_sweep(z=77.6 + 26.4j, n=201):
    f = np.linspace(100e6, 1e9, n)
    return Sweep(f, np.full(n, z_to_gamma(z, 50.0)), 50.0, name="load")


@pytest.fixture
def setup(qtbot):
    state = Session()
    panel = UncertaintyPanel(state)
    qtbot.addWidget(panel)
    yield state, panel
    panel.wait()


def test_widgets_write_the_session(setup):
    state, panel = setup
    panel.enabled_check.setChecked(True)
    assert state.tool("uncertainty").enabled
    panel.directivity_spin.setValue(46.0)
    panel.match_spin.setValue(38.0)
    panel.tracking_spin.setValue(0.05)
    s = state.tool("uncertainty")
    assert (s.directivity_db, s.source_match_db, s.tracking_db) == (46.0, 38.0, 0.05)
    panel.noise_edit.setText("-60 dB")
    panel.noise_edit.editingFinished.emit()
    assert state.tool("uncertainty").noise == "level"
    assert state.tool("uncertainty").noise_level == pytest.approx(1e-3)   # 10^(−60/20)
    panel.delay_u_edit.setText("2 ps")
    panel.delay_u_edit.editingFinished.emit()
    assert state.tool("uncertainty").offset_delay_u_s == pytest.approx(2e-12)
    panel.loss_u_edit.setText("0.05 dB")
    panel.loss_u_edit.editingFinished.emit()
    assert state.tool("uncertainty").offset_loss_u_db == 0.05
    panel.method_combo.setCurrentIndex(panel.method_combo.findData("linear"))
    assert state.tool("uncertainty").method == "linear"
    panel.residual_check.setChecked(False)
    assert not state.tool("uncertainty").use_residual and not panel.directivity_spin.isEnabled()
    panel.z0_u_edit.setText("minus one")
    panel.z0_u_edit.editingFinished.emit()
    assert state.tool("uncertainty").offset_line_z0_u_ohm == 0.0 and panel.message.text()


def test_the_session_writes_the_widgets(setup):
    state, panel = setup
    state.set_tool("uncertainty", enabled=True, directivity_db=30.0, noise="none", interpolation=False,
                   offset_line_z0_u_ohm=1.5)
    assert panel.enabled_check.isChecked() and panel.directivity_spin.value() == 30.0
    assert panel.noise_combo.currentData() == "none" and not panel.interp_check.isChecked()
    assert panel.z0_u_edit.text() == "1.5 Ω" and not panel.noise_edit.isEnabled()
    assert "directivity 30.0 dB" in panel.sources_label.text()


def test_preview_of_the_current_marker_equals_the_session_function(setup):
    state, panel = setup
    tid = state.add_sweep(load_sweep())
    mid = state.add_marker(tid, 470e6)
    panel.wait()
    assert panel.preview.text() == ""          # off by default
    state.set_tool("uncertainty", enabled=True, noise="none")
    panel.wait()
    settings = state.tool("uncertainty")
    u = uncertainty_view.trace_uncertainty(settings, state.trace(tid), [470e6])
    expected = present.summary_line_with_u(state.marker_readout(mid), u.json_point(0))
    assert expected in panel.preview.text() and "± " in panel.preview.text() and "(k = 2)" in expected
    assert panel.uncertainty.json_point(0) == u.json_point(0)
    # It follows the marker.
    state.move_marker(mid, 800e6)
    panel.wait()
    assert "800 MHz" in panel.preview.text()


def test_a_file_that_is_not_a_calibration_is_refused(setup, tmp_path):
    state, panel = setup
    bad = tmp_path / "notes.json"
    bad.write_text("{}")
    panel.set_calibration_file(str(bad))
    assert state.tool("uncertainty").calibration_file == "" and panel.message.text()
    state.set_tool("uncertainty", calibration_file="/somewhere/port1.json")
    assert panel.cal_edit.text() == "/somewhere/port1.json"
    panel.cal_clear.click()
    assert state.tool("uncertainty").calibration_file == ""
