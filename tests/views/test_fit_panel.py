"""The fit panel: band from the state, a fit off the UI thread, result shown, dashed overlay."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.circuits.models import MODELS
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.views.panels.fit_panel import OVERLAY_NAME, FitPanel
from refplane.session.model import Session

from model_sweeps import resistor_with_leads, two_port_attenuator


def _bridged_resistor() -> Sweep:
    # Closed form (R + jωL) ∥ C, checked against scikit-rf in tests/analysis/test_circuits.py.
    f = np.linspace(10e6, 1.5e9, 151)
    z = MODELS["resistor-leads"].impedance(f, {"r_ohm": 75.0, "l_h": 9.5e-9, "c_f": 0.12e-12})
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name="leaded")


@pytest.fixture
def panel(qtbot):
    state = Session()
    widget = FitPanel(state)
    qtbot.addWidget(widget)
    yield widget
    widget.wait()


def _fit(qtbot, panel) -> bool:
    with qtbot.waitSignal(panel.fitFinished, timeout=20000) as blocker:
        panel.fit()
    return blocker.args[0]


def test_automatic_fit_names_the_leads_and_draws_a_dashed_curve(qtbot, panel):
    tid = panel.state.add_sweep(_bridged_resistor())
    assert _fit(qtbot, panel)
    assert panel.result.model_id == "resistor-leads"
    assert "lead inductance" in panel.sentence.text()
    rows = panel.parameter_rows()
    # Parts in words, not code keys (the resistor model's inductance is its leads').
    assert [r[0] for r in rows] == ["Resistance", "Lead inductance", "Shunt capacitance"]
    assert rows[1][1].startswith("9.5") and rows[1][1].endswith("nH") and rows[1][2].startswith("± ")
    assert panel.ranking_rows()[0][0] == "resistor-leads"
    assert len(panel.ranking_rows()) == 7
    overlay = panel.state.trace(tid).overlays[OVERLAY_NAME]
    assert overlay.n_ports == 1
    np.testing.assert_allclose(overlay.reflection(1), panel.state.trace(tid).displayed.reflection(1), atol=1e-9)
    panel.remove_curve()
    assert OVERLAY_NAME not in panel.state.trace(tid).overlays


def test_band_follows_the_state_and_limits_the_fit(qtbot, panel):
    panel.state.add_sweep(resistor_with_leads())
    panel.state.set_band((100e6, 300e6))
    assert "100 MHz" in panel.band_edit.text() and "300 MHz" in panel.band_edit.text()
    idx = panel.model_combo.findData("series-rl")
    panel.model_combo.setCurrentIndex(idx)
    assert _fit(qtbot, panel)
    low, high = panel.result.band_hz
    assert 100e6 <= low and high <= 300e6
    assert panel.result.model_id == "series-rl"
    # The fixture's leaded resistor: 75 Ω with 9 nH (closed form).
    assert panel.result.params["l_h"] == pytest.approx(9e-9, rel=1e-6)


def test_typed_band_is_used_and_a_bad_one_is_reported(qtbot, panel):
    panel.state.add_sweep(resistor_with_leads())
    panel.band_edit.setText("200 MHz : 400 MHz")
    assert _fit(qtbot, panel)
    assert panel.result.band_hz[0] >= 200e6
    panel.band_edit.setText("a lot")
    assert panel.fit() is None
    assert "band" in panel.message.text()
    panel.band_edit.setText("5 GHz : 6 GHz")
    assert not _fit(qtbot, panel)
    assert "holds no swept point" in panel.message.text()
    # The earlier result stays on show, and the panel keeps working.
    assert panel.result is not None
    panel.band_edit.clear()
    assert _fit(qtbot, panel)


def test_without_a_trace_the_panel_says_so(panel):
    assert panel.fit() is None
    assert "Open a sweep" in panel.message.text()


def test_through_fit_of_a_two_port_draws_no_reflection_curve(qtbot, panel):
    tid = panel.state.add_sweep(two_port_attenuator())
    panel.measurement_combo.setCurrentIndex(panel.measurement_combo.findData("series"))
    assert _fit(qtbot, panel)
    assert panel.result.measurement == "series-through"
    assert OVERLAY_NAME not in panel.state.trace(tid).overlays
    assert "through" in panel.message.text()


def test_closing_the_fitted_trace_clears_the_result(qtbot, panel):
    tid = panel.state.add_sweep(resistor_with_leads())
    assert _fit(qtbot, panel)
    panel.state.remove_trace(tid)
    assert panel.result is None
    assert panel.parameter_rows() == []


def test_changing_the_trace_after_a_fit_asks_for_a_refit(qtbot, panel):
    from refplane.analysis.lines.deembed import LineOffset

    tid = panel.state.add_sweep(resistor_with_leads())
    assert _fit(qtbot, panel)
    assert panel.message.text() == ""
    panel.state.set_offsets(tid, (LineOffset(delay_s=10e-12),))
    assert "Fit again" in panel.message.text()


def test_the_panel_docks_in_the_window(qtbot):
    from refplane.views.main_window import MainWindow

    window = MainWindow()
    qtbot.addWidget(window)
    fit_panel = FitPanel(window.state)
    dock = window.add_side_panel("Fit", fit_panel)
    assert dock.widget().widget() is fit_panel  # inside its scroll area
    tid = window.state.add_sweep(_bridged_resistor())
    assert _fit(qtbot, fit_panel)
    assert OVERLAY_NAME in window.state.trace(tid).overlays
    fit_panel.wait()
