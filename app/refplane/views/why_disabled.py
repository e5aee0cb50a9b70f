"""A click on a control that cannot act yet says why, in the status bar.

Qt gives a disabled control no mouse events, so without this a click on it does nothing at
all. An application-wide event filter sees the press first and shows the control's tooltip
(which says why it is disabled and what would enable it) in the window's status bar.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject
from PySide6.QtWidgets import QAbstractButton, QComboBox, QLineEdit, QWidget


class WhyDisabled(QObject):
    """Shows a disabled control's tooltip in ``window``'s status bar when it is clicked."""

    SHOW_MS = 6000

    def __init__(self, window):
        super().__init__(window)
        self.window = window
        self.last_text = ""

    def eventFilter(self, watched, event) -> bool:  # noqa: N802 - Qt's name
        if event.type() == QEvent.MouseButtonPress and isinstance(watched, QWidget) \
                and isinstance(watched, (QAbstractButton, QComboBox, QLineEdit)) \
                and not watched.isEnabled() and watched.window() is self.window:
            text = watched.toolTip().strip() or "This control cannot act yet."
            self.last_text = text
            self.window.statusBar().showMessage(text, self.SHOW_MS)
        return False
