"""Trace memory and the chart reference impedance in the window: menus, chart, plots, readouts."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtWidgets import QInputDialog

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.views.main_window import MainWindow

from model_sweeps import resistor_with_leads


@pytest.fixture
def window(qtbot):
    w = MainWindow()
    w.errors = []
    w.show_error = lambda title, message: w.errors.append(message)
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.loader.cancel()
    w.loader.wait()


def test_store_memory_then_compare_after_a_correction(window):
    assert not window.relative_db_action.isEnabled()
    tid = window.state.add_sweep(resistor_with_leads())
    window.store_memory_action.trigger()
    assert window.state.memory is not None and window.relative_db_action.isEnabled()
    assert window.chart._memory is not None and window.chart._memory.isVisible()
    window.state.set_offsets(tid, (LineOffset(delay_s=50e-12),))
    window.relative_db_action.trigger()
    window.plots.flush()
    assert window.plots.upper.quantity == "memory_db" and window.plots.lower.quantity == "memory_deg"
    assert window.plots.upper.chooser.currentData() == "memory_db"
    # A lossless line changes no magnitude (0 dB everywhere) but turns the phase.
    ys = [i.getData()[1] for i in window.plots.upper.curve_items()]
    assert all(np.allclose(y[np.isfinite(y)], 0.0, atol=1e-9) for y in ys)
    assert "relative to" in window.plots.upper.note.text()
    window.forget_memory_action.trigger()
    assert window.state.memory is None and window.chart._memory is None


def test_a_75_ohm_chart_from_the_view_menu(window, monkeypatch):
    f = np.linspace(1e6, 100e6, 51)
    tid = window.state.add_sweep(Sweep(freq_hz=f, s=np.full(51, 0.2 + 0j), z0_ohm=50.0, name="75 Ω load"))
    mid = window.state.add_marker(tid, 50e6)
    monkeypatch.setattr(QInputDialog, "getText", lambda *a, **k: ("75 Ω", True))
    window.chart_z0_action.trigger()
    assert window.state.display.chart_z0_ohm == 75.0
    # Γ = (Z − Z0)/(Z + Z0): 75 Ω sits at the centre of a 75 Ω chart (definition).
    x, y = window.chart.trace_item(tid).curve.getData()
    np.testing.assert_allclose(x + 1j * y, 0.0, atol=1e-12)
    assert window.marker_table.cells(mid)["VSWR"] == "1.000"
    assert "75 Ω" in window.marker_table.found.text()
    assert "(ref. 75 Ω)" in window.chart.hover_text(0.1 + 0.1j)
    monkeypatch.setattr(QInputDialog, "getText", lambda *a, **k: ("", True))
    window.chart_z0_action.trigger()
    assert window.state.display.chart_z0_ohm is None
    assert window.marker_table.cells(mid)["VSWR"] == "1.500"
    monkeypatch.setattr(QInputDialog, "getText", lambda *a, **k: ("minus five", True))
    window.chart_z0_action.trigger()
    assert window.errors and window.state.display.chart_z0_ohm is None


def test_a_picture_says_what_the_memory_and_chart_reference_are(window, tmp_path):
    from refplane.views.render import ChartPicture

    tid = window.state.add_sweep(resistor_with_leads())
    window.state.store_memory(tid)
    window.state.set_display(chart_z0_ohm=75.0)
    window.state.find_markers(tid, "best-match")
    picture = ChartPicture(window.state)
    text = picture.legend_html()
    assert "thin dashed: " in text and "against 75 Ω" in text
    picture.deleteLater()
