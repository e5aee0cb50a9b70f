"""Fixtures for the window tests."""

import pytest

from model_sweeps import resistor_with_leads
from refplane.views.qt_compat import guard_singletons

# PySide6 6.12 on Python < 3.12 runs down the reference counts of None/True/False (see
# refplane.views.qt_compat); without this the test process aborts after a few hundred repaints.
guard_singletons()


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
