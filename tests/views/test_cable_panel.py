"""The cable panel: traces and settings ⇄ session, figures equal to the analysis (checked there
against scikit-rf's Coaxial line), and the cable handed to the reference-plane offsets."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.lines.cable import characterise_cable
from refplane.analysis.sweep import Sweep
from refplane.session import tool_text
from refplane.session.model import Session
from refplane.views.panels.cable_panel import CablePanel

pytestmark = pytest.mark.needs_qt
skrf = pytest.importorskip("skrf")

EPS_R, TAN_D = 2.25, 3e-4   # solid polyethylene (common practice): velocity factor 1/√2.25 = 0.667


def coax(f, z0=75.0):
    """scikit-rf's Coaxial line, 0.9 mm copper inner conductor, PE dielectric (as tests/analysis/test_cable.py)."""
    dint = 0.9e-3
    dout = dint * math.exp(2 * math.pi * z0 * math.sqrt(EPS_R) / 376.730313)
    return skrf.media.Coaxial.from_Z0_Dout(skrf.Frequency.from_f(f, unit="hz"), z0_port=50, z0=z0,
                                           epsilon_r=EPS_R, Dout=dout, tan_delta=TAN_D, sigma=5.8e7)


@pytest.fixture
def cable_traces():
    f = np.linspace(10e6, 3e9, 1001)
    media = coax(f)
    line = media.line(3.0, unit="m")
    open_ = Sweep(f, (line ** media.open()).s, 50.0, name="rg cable open")
    short = Sweep(f, (line ** media.short()).s, 50.0, name="rg cable short")
    load = Sweep(f, (line ** media.load(0.2 - 0.4j)).s, 50.0, name="load via cable")
    return open_, short, load, media.load(0.2 - 0.4j).s[:, 0, 0]


@pytest.fixture
def setup(qtbot):
    state = Session()
    panel = CablePanel(state)
    qtbot.addWidget(panel)
    yield state, panel
    panel.wait()


def test_asks_for_two_traces(setup):
    _state, panel = setup
    assert "Choose the open and the shorted trace" in panel.message.text()
    assert panel.rows() == [] and not panel.remove_button.isEnabled()


def test_guesses_the_pair_from_names_and_shows_the_analysis_figures(setup, cable_traces):
    state, panel = setup
    open_, short, _load, _ = cable_traces
    state.add_sweep(open_)
    state.add_sweep(short)
    panel.wait()
    s = state.tool("cable")
    assert (s.open_trace, s.short_trace) == ("rg cable open", "rg cable short")
    assert panel.open_combo.currentData() == "rg cable open"
    state.set_tool("cable", length_m=3.0)
    panel.wait()
    rows = dict(panel.rows())
    expected = characterise_cable(open_, short, length_m=3.0)
    assert panel.rows() == [list(r) for r in tool_text.cable_rows(expected)]
    # scikit-rf Coaxial of 75 Ω with PE: Z0 about 75 Ω, velocity factor 1/√εr = 0.6667 (Pozar §2.7).
    assert abs(panel.result.z0_fit_ohm - 75.0) < 0.75
    assert panel.result.velocity_factor == pytest.approx(1 / math.sqrt(EPS_R), rel=0.01)
    assert rows["Velocity factor"] == f"{expected.velocity_factor:.4f}"
    assert rows["Loss per 100 m at 1 GHz"].endswith("dB")


def test_fields_write_the_session_and_follow_it(setup):
    state, panel = setup
    panel.known_combo.setCurrentIndex(panel.known_combo.findData("vf"))
    assert state.tool("cable").known == "vf" and panel.vf_spin.isEnabled() and not panel.length_edit.isEnabled()
    panel.vf_spin.setValue(0.82)
    assert state.tool("cable").vf == pytest.approx(0.82)
    panel.length_edit.setText("10 ft")
    panel.length_edit.editingFinished.emit()
    assert state.tool("cable").length_m == pytest.approx(3.048)
    panel.band_edit.setText("100 MHz : 1 GHz")
    panel.band_edit.editingFinished.emit()
    assert state.tool("cable").band_text == "100 MHz : 1 GHz"
    panel.band_edit.setText("nonsense")
    panel.band_edit.editingFinished.emit()
    assert state.tool("cable").band_text == "100 MHz : 1 GHz" and panel.message.text()
    state.set_tool("cable", known="length", length_m=2.5, loss_ref_hz=100e6)
    assert panel.length_edit.text() == "2.5 m" and panel.ref_edit.text() == "100 MHz"
    assert panel.known_combo.currentData() == "length"


def test_knowing_the_velocity_factor_gives_the_length(setup, cable_traces):
    state, panel = setup
    open_, short, _load, _ = cable_traces
    state.add_sweep(open_)
    state.add_sweep(short)
    state.set_tool("cable", known="vf", vf=round(1 / math.sqrt(EPS_R), 6))
    panel.wait()
    # 3 m of line at its own velocity factor (the length the sweeps were made with).
    assert panel.result.length_m == pytest.approx(3.0, rel=0.01)
    assert dict(panel.rows())["Loss per 100 m at 1 GHz"].endswith("dB")


def test_the_found_cable_is_removed_from_the_current_trace(setup, cable_traces):
    state, panel = setup
    open_, short, load, truth = cable_traces
    state.add_sweep(open_)
    state.add_sweep(short)
    tid = state.add_sweep(load)
    state.set_current_trace(tid)
    state.set_tool("cable", length_m=3.0)
    panel.wait()
    assert panel.remove_button.isEnabled()
    panel.remove_button.click()
    offset = state.trace(tid).offsets[0]
    assert offset == panel.result.offset()
    # The line found takes 3 m of skrf Coaxial off the load within 0.005 (the bound).
    assert np.max(np.abs(state.displayed(tid).reflection(1) - truth)) < 0.005
    assert state.trace(tid).velocity_factor(1) == pytest.approx(panel.result.velocity_factor)
    panel.vf_button.click()
    assert state.tool("time_domain").vf == pytest.approx(panel.result.velocity_factor, abs=1e-6)


def test_too_coarse_a_sweep_says_so(setup):
    state, panel = setup
    f = np.linspace(10e6, 3e9, 51)
    media = coax(f)
    line = media.line(3.0, unit="m")
    state.add_sweep(Sweep(f, (line ** media.open()).s, 50.0, name="open"))
    state.add_sweep(Sweep(f, (line ** media.short()).s, 50.0, name="short"))
    panel.wait()
    assert panel.result is None and "too coarse" in panel.message.text()


def test_caution_is_shown(setup):
    _state, panel = setup
    from PySide6.QtWidgets import QLabel

    texts = " ".join(label.text() for label in panel.findChildren(QLabel))
    assert "Discharge a cable" in texts and "transmitter may feed" in texts
