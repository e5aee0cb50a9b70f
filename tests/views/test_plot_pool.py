"""The frequency plots keep their curve items between redraws and update them in place."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.readings.impedance import vswr, z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session
from refplane.views.plots import CompanionPlots


def _resistor(r_ohm, name):
    f = np.linspace(1e6, 100e6, 51)
    return Sweep(freq_hz=f, s=np.full(51, z_to_gamma(r_ohm + 0j, 50.0)), z0_ohm=50.0, name=name)


@pytest.fixture
def plots(qtbot):
    w = CompanionPlots(Session())
    qtbot.addWidget(w)
    w.resize(600, 500)
    w.show()
    qtbot.waitExposed(w)
    return w


def test_curve_items_are_reused_and_extras_removed(plots):
    s = plots.state
    s.set_display(upper_plot="vswr")
    a = s.add_sweep(_resistor(100.0, "a"))
    b = s.add_sweep(_resistor(25.0, "b"))
    plots.flush()
    first = plots.upper.curve_items()
    assert len(first) == 2
    # Another quantity: the same two items carry the new data.
    s.set_display(upper_plot="z_mag")
    plots.flush()
    again = plots.upper.curve_items()
    assert [id(i) for i in again] == [id(i) for i in first]
    ys = sorted(float(i.getData()[1][0]) for i in again)
    assert np.allclose(ys, [25.0, 100.0])  # |Z| of a resistor is R (definition)
    # R and X: four curves, the first two reused, two added; X dashed through a new pen.
    s.set_display(upper_plot="r_x")
    plots.flush()
    four = plots.upper.curve_items()
    assert len(four) == 4 and [id(i) for i in four[:2]] == [id(i) for i in first]
    # Hiding one trace drops the extra items from the plot.
    s.set_visible(b, False)
    plots.flush()
    two = plots.upper.curve_items()
    assert len(two) == 2
    in_plot = [i for i in plots.upper.plot.getPlotItem().items if i in four]
    assert len(in_plot) == 2
    s.set_display(upper_plot="vswr")
    plots.flush()
    items = plots.upper.curve_items()
    assert len(items) == 1
    # VSWR of a 100 Ω resistor on 50 Ω is 2 (VSWR = R/Z0 for R > Z0, definition).
    assert np.allclose(items[0].getData()[1], 2.0)
    assert np.allclose(items[0].getData()[1], vswr(z_to_gamma(100.0 + 0j, 50.0)))
    assert a in [c.trace_id for c in s.scene().plots[0].curves]


def test_a_colour_change_reaches_the_reused_item(plots):
    from PySide6.QtGui import QColor

    s = plots.state
    tid = s.add_sweep(_resistor(75.0, "a"))
    plots.flush()
    (item,) = plots.upper.curve_items()
    s.set_colour(tid, "#123456")
    plots.flush()
    (again,) = plots.upper.curve_items()
    assert again is item
    assert again.opts["pen"].color().name() == QColor("#123456").name()


def test_uncertainty_bands_are_drawn_and_removed(plots):
    # The band's numbers are the session's (tests/session/test_plot_bands.py checks them
    # against the engine); here the plot draws exactly those and drops them when off.
    from refplane.analysis.readings.impedance import z_to_gamma as zg

    s = plots.state
    f = np.linspace(50e6, 150e6, 101)
    w = 2 * np.pi * f
    z = 30 + 1j * (w * 200e-9 - 1 / (w * 12.66e-12))  # series R-L-C (circuit theory)
    s.add_sweep(Sweep(f, zg(z, 50.0), 50.0, name="rlc"))
    s.set_display(upper_plot="r_x", lower_plot="phase")
    plots.flush()
    assert plots.upper.band_items() == []
    s.set_tool("uncertainty", enabled=True, method="linear", noise="none")
    plots.flush()
    bands = s.scene().plots[0].bands
    drawn = plots.upper.band_items()
    assert len(drawn) == len(bands) == 2  # R and X
    assert plots.lower.band_items() == []  # phase of reflection has no band
    for (low, high, fill), band in zip(drawn, bands):
        assert np.allclose(low.getData()[1], band.lower) and np.allclose(high.getData()[1], band.upper)
        assert 0 < fill.brush().color().alphaF() < 0.5  # translucent: the curve shows through
        # The fill follows its edges: it spans the sweep and the band's values.
        r = fill.path().boundingRect()
        assert r.left() == pytest.approx(f[0]) and r.right() == pytest.approx(f[-1])
        assert r.top() == pytest.approx(np.nanmin(band.lower)) and r.bottom() == pytest.approx(np.nanmax(band.upper))
        assert fill in plots.upper.plot.getPlotItem().items
    s.set_tool("uncertainty", enabled=False)
    plots.flush()
    assert plots.upper.band_items() == []
    assert not any(i for (lo, hi, fl) in drawn for i in (lo, hi, fl) if i in plots.upper.plot.getPlotItem().items)
