"""The light plot offers the PlotWidget calls the frequency plots make, with the same effect."""

from __future__ import annotations

import re

import numpy as np
import pyqtgraph as pg
import pytest

from refplane.views.plot_area import PlotView


@pytest.fixture
def view(qtbot):
    v = PlotView(background="w")
    qtbot.addWidget(v)
    v.resize(500, 300)
    v.show()
    qtbot.waitExposed(v)
    return v


def test_curves_are_added_removed_and_fitted(qtbot, view):
    item = pg.PlotDataItem(np.array([1e6, 1e7, 1e8]), np.array([1.0, 2.0, 3.0]))
    view.addItem(item)
    view.addItem(item)  # twice is once
    assert view.getPlotItem().items == [item] and item.getViewBox() is view.getViewBox()
    view.getViewBox().autoRange()
    (x0, x1), (y0, y1) = view.getViewBox().viewRange()
    assert x0 <= 1e6 < 1e8 <= x1 and x1 - x0 < 1.2 * (1e8 - 1e6)  # fitted, with a little room
    assert y0 <= 1.0 < 3.0 <= y1 and y1 - y0 < 1.2 * 2.0
    view.removeItem(item)
    assert view.getPlotItem().items == [] and item.getViewBox() is None


def test_log_mode_plots_log10_of_frequency_on_curves_and_axis(qtbot, view):
    # pyqtgraph's log mode: view coordinates are log10 of the data (its documented convention).
    item = pg.PlotDataItem(np.array([1e6, 1e7, 1e8]), np.array([1.0, 2.0, 3.0]))
    view.addItem(item)
    view.setLogMode(x=True)
    np.testing.assert_allclose(item.getData()[0], [6.0, 7.0, 8.0])
    assert view.getAxis("bottom").logMode
    later = pg.PlotDataItem(np.array([1e3, 1e4]), np.array([0.0, 1.0]))
    view.addItem(later)  # added while in log mode: drawn in log mode too
    np.testing.assert_allclose(later.getData()[0], [3.0, 4.0])
    view.setLogMode(x=False)
    np.testing.assert_allclose(item.getData()[0], [1e6, 1e7, 1e8])
    assert not view.getAxis("bottom").logMode


def test_linked_plots_share_the_frequency_range(qtbot, view):
    other = PlotView(background="w")
    qtbot.addWidget(other)
    other.resize(view.size())
    other.show()
    qtbot.waitExposed(other)
    other.setXLink(view)
    view.getViewBox().setXRange(10.0, 20.0, padding=0)
    assert other.getViewBox().viewRange()[0] == pytest.approx([10.0, 20.0], abs=0.05)


def test_axis_label_carries_text_and_unit(qtbot, view):
    view.setLabel("left", "Return loss", units="dB")
    axis = view.getAxis("left")
    assert axis.labelText == "Return loss" and axis.labelUnits == "dB" and axis.label.isVisible()


def _tick_labels(view, width=600):
    axis = view.getAxis("bottom")
    lo, hi = view.getViewBox().viewRange()[0]
    return {spacing: axis.tickStrings(values, axis.autoSIPrefixScale, spacing)
            for spacing, values in axis.tickValues(lo, hi, width)}


def test_log_frequency_ticks_read_in_their_own_units(qtbot, view):
    # A log axis is labelled per decade in the decade's own SI prefix (BIPM SI brochure, table 7:
    # k = 1e3, M = 1e6, G = 1e9): 1 MHz, 10 MHz, 100 MHz, 1 GHz — common practice on analyzers.
    view.addItem(pg.PlotDataItem(np.logspace(6, 9, 50), np.linspace(0.0, 1.0, 50)))
    view.setLabel("bottom", "Frequency", units="Hz")
    view.setLogMode(x=True)
    view.getViewBox().autoRange()
    labels = _tick_labels(view)
    assert labels[1.0] == ["1 MHz", "10 MHz", "100 MHz", "1 GHz"]
    every = [text for texts in labels.values() for text in texts]
    assert "2 MHz" in every and "500 MHz" in every
    assert all(re.fullmatch(r"[1-9]\d{0,2} [kMG]?Hz", text) for text in every), every  # never 0.001 GHz
    axis = view.getAxis("bottom")
    assert "Frequency" in axis.labelString() and "GHz" not in axis.labelString()  # units are on the ticks
    # Back to a linear axis: one prefix for the axis, in its title, as before.
    view.setLogMode(x=False)
    view.getViewBox().autoRange()
    assert "(GHz)" in axis.labelString()


def test_log_ticks_across_kilohertz_and_gigahertz(qtbot, view):
    view.addItem(pg.PlotDataItem(np.array([3e3, 2e10]), np.array([0.0, 1.0])))
    view.setLabel("bottom", "Frequency", units="Hz")
    view.setLogMode(x=True)
    view.getViewBox().setXRange(3.0, 10.0, padding=0)
    # Seven decades across 600 px: pyqtgraph may label every other decade; each label is a whole
    # power of ten in the prefix that keeps its number at 1, 10 or 100.
    major = [t for spacing, texts in _tick_labels(view).items() if spacing is not None for t in texts]
    assert "1 kHz" in major and "1 GHz" in major
    assert all(re.fullmatch(r"(1|10|100) [kMG]Hz", text) for text in major), major
    assert _tick_labels(view, width=2000)[1.0] == ["1 kHz", "10 kHz", "100 kHz", "1 MHz", "10 MHz",
                                                  "100 MHz", "1 GHz", "10 GHz"]
