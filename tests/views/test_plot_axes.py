"""Each plot's value axis: fits the visible traces, a log scale for VSWR and |Z|, and a zoom
that is kept in the session and can be reset."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session
from refplane.views.plots import CompanionPlots


def _resistor(r_ohm, name, spread=0.0):
    # A resistance rising linearly by ``spread`` over the sweep (flat data would leave
    # pyqtgraph's auto-range keeping the previous height).
    f = np.linspace(1e6, 100e6, 51)
    r = r_ohm + spread * np.linspace(0.0, 1.0, 51)
    return Sweep(freq_hz=f, s=z_to_gamma(r + 0j, 50.0), z0_ohm=50.0, name=name)


@pytest.fixture
def plots(qtbot):
    state = Session()
    w = CompanionPlots(state)
    qtbot.addWidget(w)
    w.resize(600, 500)
    w.show()
    qtbot.waitExposed(w)
    return w


def _y_range(plot):
    plot.flush()
    plot.viewbox.autoRange(padding=0) if plot.state.display.__getattribute__(f"{plot.slot}_view") is None else None
    return plot.viewbox.viewRange()[1]


def test_the_value_axis_fits_the_visible_traces_only(plots):
    s = plots.state
    s.set_display(upper_plot="vswr")
    near = s.add_sweep(_resistor(55.0, "near", 10.0))  # VSWR 1.1 to 1.3 (= R/50, definition)
    far = s.add_sweep(_resistor(5000.0, "far"))     # VSWR 100
    lo, hi = _y_range(plots.upper)
    assert hi >= 100 - 1e-6
    s.set_visible(far, False)
    lo, hi = _y_range(plots.upper)
    assert 1.0 < lo <= 1.1 + 1e-9 and 1.3 - 1e-9 <= hi < 1.5
    assert near in [c.trace_id for c in s.scene().plots[0].curves]


def test_log_scale_for_vswr_and_impedance_only(plots):
    s = plots.state
    s.add_sweep(_resistor(5000.0, "far"))
    s.set_display(upper_plot="return_loss")
    assert not plots.upper.log_y_box.isEnabled()
    s.set_display(upper_plot="z_mag")
    assert plots.upper.log_y_box.isEnabled()
    plots.upper.log_y_box.setChecked(True)
    assert s.display.log_y == ("z_mag",)
    assert plots.upper.plot.getPlotItem().log_y
    # Drawn as log10 of |Z| (pyqtgraph's log mode maps the data).
    plots.upper.flush()
    (item,) = plots.upper.curve_items()
    assert np.allclose(item.curve.getData()[1], math.log10(5000.0))
    # Another quantity has its own scale; coming back keeps the choice.
    s.set_display(upper_plot="return_loss")
    assert not plots.upper.plot.getPlotItem().log_y
    s.set_display(upper_plot="z_mag")
    assert plots.upper.plot.getPlotItem().log_y and plots.upper.log_y_box.isChecked()
    with pytest.raises(Exception):
        s.set_display(log_y=("return_loss",))


def test_a_zoom_is_kept_in_the_session_and_reset(plots, qtbot):
    s = plots.state
    s.add_sweep(_resistor(60.0, "near"))
    s.set_display(upper_plot="r_x")
    plots.upper.flush()
    plots.upper.viewbox.setRange(xRange=(20e6, 40e6), yRange=(0, 10), padding=0)
    plots.upper._on_zoomed_by_hand()
    f0, f1, y0, y1 = s.display.upper_view
    assert (f0, f1) == pytest.approx((20e6, 40e6)) and (y0, y1) == pytest.approx((0, 10))
    plots.upper.zoom_button.click()
    qtbot.wait(30)  # the linked frequency axis settles on the next turn of the event loop
    assert s.display.upper_view is None
    (x0, x1), (lo, hi) = plots.upper.viewbox.viewRange()
    assert x0 <= 1e6 + 1 and x1 >= 100e6 - 1 and lo <= 0 <= hi and hi >= 60 - 1e-6
    # A zoom from a session file is shown.
    s.set_display(upper_view=(10e6, 20e6, 50.0, 70.0))
    (x0, x1), (lo, hi) = plots.upper.viewbox.viewRange()
    assert (x0, x1) == pytest.approx((10e6, 20e6)) and (lo, hi) == pytest.approx((50, 70))
