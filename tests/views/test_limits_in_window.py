"""Limits typed in the window: the panel's entry, its decisions in words, and the lines on the plots.

The reference is a series R-L-C whose VSWR at resonance is Z0/R (definition of VSWR for a
resistive load below Z0) and analysis.limits' own results (tested against the issue's examples
and JCGM 106 in tests/analysis)."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt

from refplane.analysis.limits import evaluate_limit, parse_limit
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session
from refplane.views.panels.limits_panel import LimitsPanel
from refplane.views.plots import CompanionPlots

pytestmark = pytest.mark.needs_qt

MUST_PASS = "vswr <= 2 over 99.5MHz:100.5MHz"
MUST_FAIL = "vswr >= 1.7 over 99.5MHz:100.5MHz"  # the VSWR dips to 50/30 = 1.667 at 100 MHz


def series_rlc(r=30.0, l_h=200e-9, f0=100e6):
    # Z = R + j(ωL − 1/(ωC)), resonant at f0 = 1/(2π√(LC)) (circuit theory).
    c_f = 1.0 / ((2 * np.pi * f0) ** 2 * l_h)
    f = np.linspace(50e6, 150e6, 201)
    w = 2 * np.pi * f
    return Sweep(f, z_to_gamma(r + 1j * (w * l_h - 1.0 / (w * c_f)), 50.0), 50.0, name="rlc")


@pytest.fixture
def setup(qtbot):
    state = Session()
    tid = state.add_sweep(series_rlc())
    state.set_current_trace(tid)
    state.set_display(upper_plot="vswr", lower_plot="r_x")
    plots = CompanionPlots(state)
    panel = LimitsPanel(state)
    for w in (plots, panel):
        qtbot.addWidget(w)
    plots.resize(700, 600)
    plots.show()
    qtbot.waitExposed(plots)
    return state, tid, plots, panel


def _type(qtbot, panel, text):
    panel.entry.setText("")
    qtbot.keyClicks(panel.entry, text)
    qtbot.keyClick(panel.entry, Qt.Key_Return)


def test_typed_limits_are_decided_like_analysis_limits(qtbot, setup):
    state, tid, plots, panel = setup
    _type(qtbot, panel, MUST_PASS)
    _type(qtbot, panel, MUST_FAIL)
    assert state.tool("limits").expressions == (MUST_PASS, MUST_FAIL)
    assert panel.entry.text() == "" and not panel.error.isVisible()
    sweep = state.viewed(tid)
    lines = panel.lines()
    for text, line in zip((MUST_PASS, MUST_FAIL), lines):
        ref = evaluate_limit(parse_limit(text), sweep)
        # The panel says the decision, worst frequency and margin in words: analysis.limits' sentence.
        assert line.endswith(ref.sentence())
    assert ": pass;" in lines[0] and ": FAIL;" in lines[1] and "100 MHz" in lines[1]


def test_a_malformed_limit_is_refused_in_one_line(qtbot, setup):
    state, _, _, panel = setup
    panel.show()
    _type(qtbot, panel, "vswr <= 2 over 150MHz:140MHz")
    assert panel.error.isVisible() and "reversed" in panel.error.text()
    assert "\n" not in panel.error.text()
    assert state.tool("limits").expressions == ()
    assert panel.entry.text()  # kept, to be corrected


def test_lines_are_placed_at_the_band_and_value_and_shaded_by_decision(qtbot, setup):
    state, _, plots, panel = setup
    state.set_tool("limits", expressions=(MUST_PASS, MUST_FAIL, "r_ohm >= 20 over 99MHz:101MHz"))
    plots.flush()
    upper = plots.upper.limit_items()
    lines = [i for i in upper if getattr(i, "limit_text", None)]
    assert [ln.limit_text for ln in lines] == [MUST_PASS, MUST_FAIL]
    for ln, value in zip(lines, (2.0, 1.7)):
        x, y = ln.getData()
        assert np.allclose(x, [99.5e6, 100.5e6]) and np.allclose(y, value)
    fills = [i for i in upper if hasattr(i, "decision")]
    assert [f.decision for f in fills] == ["pass", "fail"]
    for f, check in zip(fills, state.scene().limits):
        # Shaded between the limit and the readings analysis.limits tested, over the band.
        r = f.path().boundingRect()
        assert r.left() == pytest.approx(99.5e6) and r.right() == pytest.approx(100.5e6)
        values = check.result.values
        assert r.top() == pytest.approx(min(check.limit.value, np.nanmin(values)), rel=1e-6)
        assert r.bottom() == pytest.approx(max(check.limit.value, np.nanmax(values)), rel=1e-6)
    green, red = (f.brush().color() for f in fills)
    assert green.green() > green.red() and red.red() > red.green()
    # Each line is labelled in words as well as colour.
    import pyqtgraph as pg

    words = [i.textItem.toPlainText() for i in upper if isinstance(i, pg.TextItem)]
    assert words == ["≤ 2  pass", "≥ 1.7  FAIL"]
    # The R limit is on the lower plot (R and X), not on the VSWR plot.
    lower = [i for i in plots.lower.limit_items() if getattr(i, "limit_text", None)]
    assert [ln.limit_text for ln in lower] == ["r_ohm >= 20 over 99MHz:101MHz"]
    # Removing a limit in the panel takes its line away.
    panel.list.setCurrentRow(1)
    panel.remove_selected()
    plots.flush()
    assert [i.limit_text for i in plots.upper.limit_items() if getattr(i, "limit_text", None)] == [MUST_PASS]
    # Log frequency axis: the line keeps its band, drawn at log10 of its edges (pyqtgraph's log mode).
    state.set_display(log_frequency=True)
    plots.flush()
    (ln,) = [i for i in plots.upper.limit_items() if getattr(i, "limit_text", None)]
    assert np.allclose(ln.getData()[0], np.log10([99.5e6, 100.5e6]))


def test_the_window_builds_the_panel_only_when_shown(qtbot):
    from refplane.views.main_window import MainWindow

    window = MainWindow(Session())
    qtbot.addWidget(window)
    dock = window.docks["Limits"]
    assert not isinstance(dock.widget(), LimitsPanel)
    assert isinstance(dock.panel(), LimitsPanel)
