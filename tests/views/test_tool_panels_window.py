"""The tool panels in the window: registered as docks, built only when first shown, in the side
column (antenna, cable, uncertainty) or beside the marker table (time domain)."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt

from refplane.session.model import Session

pytestmark = pytest.mark.needs_qt


def test_docks_are_placeholders_until_shown_then_their_panels(qtbot):
    from refplane.views.main_window import MainWindow
    from refplane.views.panels.antenna_panel import AntennaPanel
    from refplane.views.panels.cable_panel import CablePanel
    from refplane.views.panels.uncertainty_panel import UncertaintyPanel
    from refplane.views.time_domain import TimeDomainView

    window = MainWindow(Session())
    qtbot.addWidget(window)
    kinds = {"Antenna": AntennaPanel, "Cable": CablePanel, "Uncertainty": UncertaintyPanel,
             "Time domain": TimeDomainView}
    for title, kind in kinds.items():
        dock = window.docks[title]
        assert not isinstance(dock.widget(), kind)          # nothing built at start-up
        panel = dock.panel()
        assert isinstance(panel, kind) and dock.widget() is panel and dock.panel() is panel
    for title in ("Antenna", "Cable", "Uncertainty"):
        assert window.dockWidgetArea(window.docks[title]) == Qt.LeftDockWidgetArea
    assert window.dockWidgetArea(window.docks["Time domain"]) == Qt.BottomDockWidgetArea
    # Every panel listed under View ▸ Panels, to hide and show.
    titles = [a.text() for a in window._panels_menu.actions()]
    assert all(t in titles for t in kinds)


def test_showing_a_tab_builds_its_panel(qtbot):
    from refplane.views.main_window import MainWindow
    from refplane.views.panels.cable_panel import CablePanel

    window = MainWindow(Session())
    qtbot.addWidget(window)
    window.show()
    dock = window.docks["Cable"]
    dock.raise_()
    qtbot.waitUntil(lambda: isinstance(dock.widget(), CablePanel), timeout=5000)
