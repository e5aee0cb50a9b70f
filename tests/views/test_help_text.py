"""Help ▸ Using the window names the menus as they are, and covers what the window does."""

from __future__ import annotations

import re

import pytest

from refplane.views.help_text import USAGE_HTML
from refplane.views.main_window import MainWindow

MENUS = ("File", "Edit", "View", "Traces", "Markers", "Tools", "Help")
PATH = re.compile(r"\b(" + "|".join(MENUS) + r") ▸ ([A-Z][^<()\n,;]*?)(?=</b>|\s\(|\)|,| or | and |\.\s|\n)")


@pytest.fixture
def window(qtbot):
    w = MainWindow()
    qtbot.addWidget(w)
    return w


def _entries(menu):
    out = {}
    for action in menu.actions():
        text = action.text().replace("&", "")
        if text:
            out[text] = action
    return out


def test_every_menu_path_in_the_help_exists(window):
    top = {a.text().replace("&", ""): a.menu() for a in window.menuBar().actions() if a.menu()}
    paths = PATH.findall(USAGE_HTML)
    assert len(paths) >= 15
    for menu_name, entry in paths:
        entries = _entries(top[menu_name])
        entry = entry.strip()
        assert any(text.startswith(entry) for text in entries), f"{menu_name} ▸ {entry} is not in the menu"


def test_the_help_covers_every_part_of_the_window():
    text = USAGE_HTML.lower()
    for topic in ("reference plane", "fit", "calibrate from standards", "save session", "open session",
                  "find", "best match", "resonance", "vswr ≤", "memory", "chart reference impedance",
                  "undo", "log", "right-click"):
        assert topic in text, topic


def test_the_help_page_fits_a_small_screen(window, qtbot):
    window.show_usage()
    dialog = window.usage_dialog
    qtbot.addWidget(dialog)
    screen = window.screen().availableGeometry()
    assert dialog.width() <= screen.width() and dialog.height() <= screen.height() - 40
    dialog.close()
