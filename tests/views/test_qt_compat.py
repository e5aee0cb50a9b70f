"""The guard against PySide6 6.12's reference-count fault on Python < 3.12."""

import sys

from refplane.views import qt_compat


def test_guard_only_on_the_affected_combination():
    if qt_compat.affected():
        assert qt_compat.guard_singletons()
        assert sys.getrefcount(None) > 1 << 39
    else:
        assert qt_compat.guard_singletons() is False


def test_many_repaints_do_not_exhaust_none(qtbot):
    # A few thousand events used to abort the interpreter ("deallocating None") with
    # PySide6 6.12.0 on Python 3.11; with the guard (or an unaffected PySide6) it survives.
    from PySide6.QtWidgets import QApplication, QWidget

    w = QWidget()
    qtbot.addWidget(w)
    w.show()
    before = sys.getrefcount(None)
    for _ in range(3000):
        w.repaint()
        QApplication.processEvents()
    assert sys.getrefcount(None) > 1000
    if not qt_compat.affected():
        assert abs(sys.getrefcount(None) - before) < 100  # no leak at all where unaffected
