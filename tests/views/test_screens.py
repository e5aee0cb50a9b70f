"""The main window on laptop screens: it fits, every control is in reach, nothing widens it later.

Screens common beside a bench analyzer (common practice): 1280×800 and 1366×768 laptops and an
older 1024×768 display, each less a 40 px task bar, as a desktop's free area.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import QPoint, QRect
from PySide6.QtWidgets import (QAbstractButton, QAbstractSpinBox, QComboBox, QDockWidget, QLineEdit, QScrollArea,
                               QWidget)

from refplane.views.main_window import MainWindow

from model_sweeps import resistor_with_leads

SCREENS = {"1280x800": QRect(0, 0, 1280, 760), "1366x768": QRect(0, 0, 1366, 728),
           "1024x768": QRect(0, 0, 1024, 728)}
#: Room for the window frame and title bar (as MainWindow.fit_to allows).
FRAME_W, FRAME_H = 24, 48
CONTROLS = (QAbstractButton, QComboBox, QLineEdit, QAbstractSpinBox)


@pytest.fixture
def laptop_window(qtbot, request):
    available = SCREENS[request.param]
    w = MainWindow()
    w.show_error = lambda title, message: None
    qtbot.addWidget(w)
    w.state.add_sweep(resistor_with_leads(), name="a sweep with a rather long name, as files are named")
    w.state.add_marker(w.state.current_trace, 300e6)
    w.state.add_marker(w.state.current_trace, 600e6)
    w.fit_to(available)
    w.show()
    qtbot.waitExposed(w)
    w.available = available
    yield w
    w.loader.cancel()
    w.loader.wait()


def _scroll_parent(widget: QWidget) -> QScrollArea | None:
    p = widget.parentWidget()
    while p is not None:
        if isinstance(p, QScrollArea):
            return p
        p = p.parentWidget()
    return None


def _dock_of(widget: QWidget) -> QDockWidget | None:
    p = widget.parentWidget()
    while p is not None and not isinstance(p, QDockWidget):
        p = p.parentWidget()
    return p


def _controls_out_of_reach(window: MainWindow) -> list[str]:
    """Visible controls that lie outside the window, or outside their panel sideways."""
    out = []
    for widget in window.findChildren(QWidget):
        if not isinstance(widget, CONTROLS) or not widget.isVisibleTo(window) or not widget.isVisible():
            continue
        if widget.parentWidget() is not None and widget.parentWidget().inherits("QAbstractSpinBox"):
            continue
        dock = _dock_of(widget)
        if dock is not None and not window.rect().intersects(dock.geometry()):
            continue  # a dock behind another's tab: reached by its tab
        top_left = widget.mapTo(window, QPoint(0, 0))
        rect = QRect(top_left, widget.size())
        area = _scroll_parent(widget)
        if area is not None:
            # In a scroll area a control is reached by scrolling up and down, but it must
            # never be cut off sideways (the panel scrolls vertically only).
            view = area.viewport()
            left = view.mapTo(window, QPoint(0, 0)).x()
            if rect.left() < left - 1 or rect.right() > left + view.width() + 1:
                out.append(f"{type(widget).__name__} {getattr(widget, 'text', lambda: '')()!r} sideways")
            continue
        if not window.rect().contains(rect):
            out.append(f"{type(widget).__name__} {getattr(widget, 'text', lambda: '')()!r} at {rect}")
    return out


@pytest.mark.parametrize("laptop_window", list(SCREENS), indirect=True)
def test_the_window_fits_the_screen_and_every_control_is_in_reach(laptop_window):
    w, available = laptop_window, laptop_window.available
    minimum = w.minimumSizeHint().expandedTo(w.minimumSize())
    assert minimum.width() + FRAME_W <= available.width(), minimum
    assert minimum.height() + FRAME_H <= available.height(), minimum
    assert w.width() + FRAME_W <= available.width() and w.height() + FRAME_H <= available.height()
    assert _controls_out_of_reach(w) == []
    # The chart keeps a usable size: at least a third of the screen's width, and square enough.
    assert w.chart.width() >= available.width() // 3 - 40 and w.chart.height() >= 300


@pytest.mark.parametrize("laptop_window", ["1280x800"], indirect=True)
def test_nothing_widens_the_window_after_start(laptop_window, qtbot):
    w = laptop_window
    before = w.size()
    fit = w.fit_panel()
    w.docks["Fit"].raise_()
    with qtbot.waitSignal(fit.fitFinished, timeout=20000):
        fit.fit()
    tid = w.state.current_trace
    w.state.set_name(tid, "an even longer name " * 8)
    w.state.add_marker(tid, 123.456789e6)
    qtbot.wait(50)
    assert w.size() == before
    minimum = w.minimumSizeHint().expandedTo(w.minimumSize())
    assert minimum.width() + FRAME_W <= w.available.width()
    assert _controls_out_of_reach(w) == []
