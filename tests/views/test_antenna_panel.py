"""The antenna panel: settings ⇄ session both ways, results following the marker and offsets,
numbers equal to the analysis (itself checked against outside references), the path on the chart."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.antenna.matching import match_sweep
from refplane.analysis.antenna.resonance import analyse
from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session import tool_text, tools
from refplane.session.model import Session
from refplane.views.panels import tool_widgets as tw
from refplane.views.panels.antenna_panel import AntennaPanel, two_line

pytestmark = pytest.mark.needs_qt


def series_rlc(r_ohm=50.0, f0_hz=14e6, q=20.0, f1=12e6, f2=16e6, n=801, name="dipole model") -> Sweep:
    """A series R-L-C antenna model (common practice for a dipole near its first resonance)."""
    f = np.linspace(f1, f2, n)
    w, w0 = 2 * np.pi * f, 2 * np.pi * f0_hz
    l_h = q * r_ohm / w0
    c_f = 1 / (w0 ** 2 * l_h)
    z = r_ohm + 1j * w * l_h + 1 / (1j * w * c_f)
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name=name)


def constant_load(z_ohm, z0=50.0, f1=10e6, f2=20e6, n=201, name="load") -> Sweep:
    f = np.linspace(f1, f2, n)
    return Sweep(freq_hz=f, s=np.full((n, 1, 1), z_to_gamma(complex(z_ohm), z0)), z0_ohm=z0, name=name)


@pytest.fixture
def setup(qtbot):
    state = Session()
    panel = AntennaPanel(state)
    qtbot.addWidget(panel)
    yield state, panel
    panel.wait()


def type_into(edit, text):
    edit.setText(text)
    edit.editingFinished.emit()


def test_no_sweep_asks_for_one(setup):
    _state, panel = setup
    assert "Open a sweep" in panel.message.text()
    assert tw.rows_of(panel.resonance_table) == []


def test_resonance_and_band_of_a_series_rlc_against_closed_forms(setup):
    state, panel = setup
    q, f0 = 20.0, 14e6
    state.add_sweep(series_rlc(q=q, f0_hz=f0))
    panel.wait()
    rows = tw.rows_of(panel.resonance_table)
    # Series RLC: X = 0 at f0 = 1/(2π√(LC)), R there = 50 Ω, Q = ω0·L/R (Yaghjian and Best 2005).
    assert len(rows) == 1 and rows[0][1] == "series"
    assert rows[0][0] == "14 MHz" and rows[0][2] == "50.0 Ω" and rows[0][3] == "20"
    # VSWR ≤ s where |X| ≤ R(s−1)/√s (Γ = jX/(2R + jX)); solve ωL − 1/(ωC) = ±R(s−1)/√s exactly.
    s, r = 2.0, 50.0
    l_h = q * r / (2 * np.pi * f0)
    x = r * (s - 1) / math.sqrt(s)
    w0 = 2 * np.pi * f0
    hi = (x + math.sqrt(x * x + 4 * l_h * l_h * w0 * w0)) / (2 * l_h) / (2 * np.pi)
    lo = (-x + math.sqrt(x * x + 4 * l_h * l_h * w0 * w0)) / (2 * l_h) / (2 * np.pi)
    report = panel.results.resonance.value
    band = report.bands[0]
    assert band.start_hz == pytest.approx(lo, rel=1e-6) and band.stop_hz == pytest.approx(hi, rel=1e-6)
    # Closed form for high Q: fractional width (s − 1)/(Q√s) (Yaghjian and Best 2005), within 1 %.
    assert band.width_hz / f0 == pytest.approx((s - 1) / (q * math.sqrt(s)), rel=0.01)
    # The table shows exactly the analysis result's numbers.
    assert tw.rows_of(panel.band_table) == two_line(tool_text.band_rows(
        analyse(state.displayed(state.trace_ids()[0]), vswr_limits=(2.0,))))
    assert "Best match 1.00:1" in panel.best_label.text()


def test_vswr_limit_setting_both_ways(setup):
    state, panel = setup
    state.add_sweep(series_rlc())
    panel.wait()
    width2 = panel.results.resonance.value.bands[0].width_hz
    state.set_tool("antenna", vswr_limit=1.5)
    assert panel.vswr_spin.value() == pytest.approx(1.5)
    panel.wait()
    assert panel.results.resonance.value.bands[0].vswr_limit == 1.5
    assert panel.results.resonance.value.bands[0].width_hz < width2
    panel.vswr_spin.setValue(3.0)           # the widget writes the session
    assert state.tool("antenna").vswr_limit == 3.0


def test_feedline_fields_write_the_session_and_read_back(setup):
    state, panel = setup
    type_into(panel.length_edit, "65 ft")
    assert state.tool("antenna").feed_length_m == pytest.approx(65 * 0.3048)
    type_into(panel.loss_edit, "1.2 dB @ 14 MHz")
    assert (state.tool("antenna").feed_loss_db, state.tool("antenna").feed_loss_ref_hz) == (1.2, 14e6)
    type_into(panel.z0_edit, "75")
    assert state.tool("antenna").feed_line_z0_ohm == 75.0
    type_into(panel.power_edit, "1.5 kW")
    assert state.tool("antenna").power_w == 1500.0
    panel.vf_spin.setValue(0.82)
    assert state.tool("antenna").feed_vf == pytest.approx(0.82)
    panel.series_combo.setCurrentIndex(panel.series_combo.findData("E96"))
    assert state.tool("antenna").series == "E96"
    # Bad text leaves the session alone and says why.
    type_into(panel.length_edit, "twelve")
    assert state.tool("antenna").feed_length_m == pytest.approx(65 * 0.3048)
    assert panel.feed_note.text()
    # The session writes the fields.
    state.set_tool("antenna", feed_length_m=10.0, power_w=5.0, target_ohm=12.5, feed_toward="antenna")
    assert panel.length_edit.text() == "10 m" and panel.power_edit.text() == "5 W"
    assert panel.target_edit.text() == "12.5 Ω" and panel.toward_combo.currentData() == "antenna"


def test_settings_survive_a_session_file_round_trip():
    state = Session()
    state.set_tool("antenna", feed_length_m=20.0, feed_line_z0_ohm=75.0, series="E12", network="pi 1")
    value = state.tool("antenna")
    assert tools.from_json("antenna", tools.to_json(value)) == value


def test_feedline_at_the_marker_against_the_handbook_relation(setup):
    state, panel = setup
    # 150 Ω on a 50 Ω line: SWR 3 at the load. 1 dB matched loss at the marker's frequency.
    tid = state.add_sweep(constant_load(150.0))
    state.add_marker(tid, 14e6)
    state.set_tool("antenna", feed_length_m=10.0, feed_vf=0.66, feed_loss_db=1.0, feed_loss_ref_hz=14e6,
                   power_w=100.0)
    panel.wait()
    rows = dict(tw.rows_of(panel.feed_table))
    # Amateur-radio handbook relation total = 10·log10[(a² − ρ²)/(a(1 − ρ²))], a = 10^(ML/10):
    # 1 dB matched and SWR 3 give about 1.50 dB total and SWR about 2.32 at the radio.
    a, rho = 10 ** 0.1, 0.5
    total = 10 * math.log10((a * a - rho * rho) / (a * (1 - rho * rho)))
    rho_in = rho / a
    assert rows["Total loss"] == f"{total:.2f} dB" == "1.50 dB"
    assert rows["SWR at the radio"] == f"{(1 + rho_in) / (1 - rho_in):.2f}" == "2.32"
    assert rows["Matched loss"] == "1.00 dB"
    assert rows["Power at antenna (of 100 W)"] == f"{100 * 10 ** (-total / 10):.3g} W"
    # What the table shows is the analysis result, written down.
    result = panel.results.feedline.value
    assert tw.rows_of(panel.feed_table) == [list(r) for r in tool_text.feedline_rows(result)]


def test_no_feedline_length_says_what_is_missing(setup):
    state, panel = setup
    tid = state.add_sweep(constant_load(150.0))
    state.add_marker(tid, 14e6)
    panel.wait()
    assert "length" in panel.feed_note.text()
    assert tw.rows_of(panel.feed_table) == []


def test_matching_at_the_marker_follows_pozar_and_the_analysis(setup, qtbot):
    state, panel = setup
    # Pozar, Microwave Engineering, L-network example: ZL = 200 − j100 Ω to 100 Ω at 500 MHz;
    # one solution a shunt 0.92 pF then a series 38.8 nH (from memory; recomputed 38.98 nH here).
    tid = state.add_sweep(constant_load(200 - 100j, z0=100.0, f1=400e6, f2=600e6))
    state.add_marker(tid, 500e6)
    panel.wait()
    match = panel.results.match.value
    first = match.networks[0]
    c = [p for p in first.parts if p.kind == "C"][0]
    ind = [p for p in first.parts if p.kind == "L"][0]
    assert c.value == pytest.approx(0.92e-12, rel=0.01) and ind.value == pytest.approx(38.8e-9, rel=0.01)
    assert tool_text.part_rows(first)[0][:3] == ["shunt C", "922.8 fF", "910 fF"]  # 0.91 pF is E24
    assert tw.rows_of(panel.parts_table)[0][:2] == ["shunt C", "922.8 fF\n910 fF"]
    assert [r[0] for r in tw.rows_of(panel.parts_table)] == [r[0] for r in tool_text.part_rows(first)]
    expected = match_sweep(state.displayed(tid), 500e6, power_w=100.0, series="E24", vf=0.66)
    assert [n.topology for n in match.networks] == [n.topology for n in expected.networks]
    assert panel.network_combo.count() == len(expected.networks)
    # Choose another network in the list: the session remembers it and the parts follow.
    panel.network_combo.setCurrentIndex(1)
    assert state.tool("antenna").network == "L 2"
    assert tw.rows_of(panel.parts_table)[1][2] == "\n".join(tool_text.part_rows(match.networks[1])[1][3:])
    assert panel.parts_text().splitlines()[0].startswith("L-network 2")
    panel.copy_parts()
    from PySide6.QtGui import QGuiApplication

    assert "shunt L" in QGuiApplication.clipboard().text()
    assert "Bode–Fano" in panel.bode_fano_label.text()


def test_path_on_the_chart_runs_from_the_load_to_the_centre(setup):
    state, panel = setup
    tid = state.add_sweep(constant_load(20 + 30j))
    state.add_marker(tid, 14e6)
    paths = []
    panel.pathChanged.connect(paths.append)
    panel.wait()
    g = paths[-1]
    assert g is not None and abs(g[0] - z_to_gamma(20 + 30j, 50.0)) < 1e-9 and abs(g[-1]) < 1e-6
    state.set_tool("antenna", draw_path=False)
    assert paths[-1] is None and not panel.draw_check.isChecked()
    panel.draw_check.setChecked(True)
    assert state.tool("antenna").draw_path and paths[-1] is not None


def test_results_follow_the_marker_and_the_offsets(setup):
    state, panel = setup
    tid = state.add_sweep(series_rlc())
    mid = state.add_marker(tid, 13.5e6)
    panel.wait()
    assert "13.5 MHz" in panel.match_heading.text()
    state.move_marker(mid, 14.5e6)
    panel.wait()
    assert "14.5 MHz" in panel.match_heading.text()
    load_before = panel.results.match.value.load_ohm
    state.set_offsets(tid, [LineOffset(delay_s=2e-9)])
    panel.wait()
    assert panel.results.request.sweep is state.displayed(tid)
    assert panel.results.match.value.load_ohm != pytest.approx(load_before)


def test_a_newer_request_supersedes_an_older_one(setup):
    state, panel = setup
    tid = state.add_sweep(series_rlc())
    mid = state.add_marker(tid, 13e6)
    first = panel.refresh()
    state.move_marker(mid, 15e6)
    second = panel.refresh()
    panel.wait()
    assert second > first and panel.results.request.job == second
    assert panel.results.request.freq_hz == 15e6


def test_open_the_far_end_as_a_trace(setup):
    state, panel = setup
    tid = state.add_sweep(constant_load(150.0))
    state.set_tool("antenna", feed_length_m=10.0, feed_loss_db=1.0, feed_loss_ref_hz=14e6)
    panel.open_far_end()
    panel.wait()
    ids = state.trace_ids()
    assert len(ids) == 2
    far = state.trace(ids[1]).raw
    # SWR at the radio end of a lossy line is lower than at the load (handbook relation, as above).
    g = abs(far.reflection(1))
    assert np.all(g < 0.5) and g[np.argmin(abs(far.freq_hz - 14e6))] == pytest.approx(0.5 / 10 ** 0.1, rel=1e-6)
    assert "at the radio" in state.trace(ids[1]).name
    assert state.trace(tid).raw is not far


def test_cautions_are_shown(setup):
    _state, panel = setup
    from PySide6.QtWidgets import QLabel

    texts = " ".join(label.text() for label in panel.findChildren(QLabel))
    assert "Never connect the analyzer to a line a transmitter can feed" in texts
    assert "RF exposure" in texts and "local codes" in texts


def test_the_window_builds_the_panel_when_shown_and_draws_the_path(qtbot):
    from refplane.views.main_window import MainWindow

    window = MainWindow(Session())
    qtbot.addWidget(window)
    dock = window.docks["Antenna"]
    panel = dock.panel()
    assert isinstance(panel, AntennaPanel) and dock.panel() is panel
    tid = window.state.add_sweep(constant_load(20 + 30j))
    window.state.add_marker(tid, 14e6)
    panel.wait()
    items = [i for i in window.chart.view.addedItems if hasattr(i, "show_path")]
    assert len(items) == 1 and items[0].isVisible()
    x, y = items[0].getData()
    assert complex(x[0], y[0]) == pytest.approx(z_to_gamma(20 + 30j, 50.0))
