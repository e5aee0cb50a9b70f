"""Markers ▸ Find in the window: each search places markers, the table says what they follow,
a band's width and centre are shown, and markers follow when offsets are edited."""

from __future__ import annotations

import math

import numpy as np
import pytest
from PySide6.QtWidgets import QInputDialog

from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep

L_H, C_F = 100e-9, 10e-12
F0 = 1.0 / (2.0 * math.pi * math.sqrt(L_H * C_F))  # series resonance, 1/(2π√(LC)) (textbook)


def series_rlc(r_ohm=30.0):
    f = np.linspace(100e6, 220e6, 1201)
    w = 2 * np.pi * f
    z = r_ohm + 1j * w * L_H + 1 / (1j * w * C_F)
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name="rlc")




def _action(menu, text):
    return next(a for a in menu.actions() if a.text() == text)


def test_find_menu_places_markers_that_follow(window, qtbot, monkeypatch):
    from refplane.analysis.lines.deembed import LineOffset

    menu = window.find_menu
    _action(menu, "Resonances (X = 0)").trigger()
    assert "Open a sweep first" in window.marker_table.message.text()
    tid = window.state.add_sweep(series_rlc())
    _action(menu, "Resonances (X = 0)").trigger()
    (m,) = window.state.markers()
    assert m.freq_hz == pytest.approx(F0, rel=1e-5)
    assert window.marker_table.header(0) == "1 · series resonance"
    monkeypatch.setattr(QInputDialog, "getDouble", lambda *a, **k: (2.0, True))
    _action(menu, "Band where VSWR ≤ …").trigger()
    assert len(window.state.markers()) == 3
    found = window.marker_table.found
    assert found.isVisible() and "VSWR ≤ 2" in found.text() and "width" in found.text()
    before = found.text()
    # Edit the offsets: following markers move, and the band's sentence with them. (A line's
    # loss changes |Γ| and so the VSWR band; its delay alone would move only the resonance.)
    window.state.set_offsets(tid, (LineOffset(delay_s=-200e-12, loss_db=0.3, loss_ref_hz=150e6),))
    assert window.state.markers()[0].freq_hz != pytest.approx(F0, rel=1e-4)
    assert found.text() != before


def test_find_button_carries_the_same_searches(window):
    window.marker_table.find_menu.aboutToShow.emit()  # filled when first opened
    texts = [a.text() for a in window.marker_table.find_button.menu().actions() if a.text()]
    assert texts == [a.text() for a in window.find_menu.actions() if a.text()]
    window.state.add_sweep(series_rlc(r_ohm=200.0))
    monkeypatch_limit = [a for a in window.find_menu.actions() if a.text() == "Largest |Z|"][0]
    monkeypatch_limit.trigger()
    assert window.state.markers()[0].follows == "max-z"


def test_export_marker_table_writes_csv_numbers(window, tmp_path):
    import csv

    tid = window.state.add_sweep(series_rlc())
    window.state.find_markers(tid, "band", vswr_limit=2.0)
    path = tmp_path / "markers.csv"
    window.ask_table_path = lambda: str(path)
    window.ask_export_table()
    rows = list(csv.reader(path.read_text().splitlines()))
    header, low, high, diff = rows[0], rows[1], rows[2], rows[3]
    col = next(i for i, h in enumerate(header) if h.startswith("Frequency"))
    # Plain numbers a spreadsheet sums: the difference row is high − low (common practice).
    assert float(diff[col]) == pytest.approx(float(high[col]) - float(low[col]))
    # Never overwrites without being asked.
    assert window.export_table(str(path)) is None
