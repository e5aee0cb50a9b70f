"""The light plot offers the PlotWidget calls the frequency plots make, with the same effect."""

from __future__ import annotations

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
