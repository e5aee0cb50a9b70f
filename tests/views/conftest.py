"""Fixtures for the window tests."""

import pytest

from model_sweeps import resistor_with_leads


@pytest.fixture
def r75():
    return resistor_with_leads()


@pytest.fixture(autouse=True)
def _private_settings(tmp_path_factory):
    """Each test writes its settings (recent files, theme) to a folder of its own, so runs in
    parallel never see each other's files."""
    from PySide6.QtCore import QSettings

    folder = str(tmp_path_factory.mktemp("settings"))
    for fmt in (QSettings.NativeFormat, QSettings.IniFormat):
        QSettings.setPath(fmt, QSettings.UserScope, folder)
    yield


@pytest.fixture
def window(qtbot):
    """The main window, shown offscreen, with problems swallowed instead of opening dialogs.

    Test files that need another set-up (errors recorded, a size) define their own ``window``.
    """
    from refplane.views.main_window import MainWindow

    w = MainWindow()
    w.show_error = lambda title, message: None
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.loader.cancel()
    w.loader.wait()
