"""Connecting a widget to the session's events for as long as the widget lives.

The session is plain Python (psygnal events), so Qt does not drop a widget's connections when
the widget is destroyed, as it would between two QObjects. :func:`bind` connects and
disconnects again when the widget goes, so a closed dialog or a picture's twin chart is never
called after its C++ side is gone.
"""

from __future__ import annotations

from typing import Callable

from PySide6.QtCore import QObject


def bind(owner: QObject, signal, slot: Callable) -> None:
    """Connect ``slot`` to the session event ``signal`` until ``owner`` is destroyed."""
    signal.connect(slot)

    def drop(*_args) -> None:
        try:
            signal.disconnect(slot)
        except (ValueError, RuntimeError):
            pass

    owner.destroyed.connect(drop)
