"""The folder each kind of file dialog opens in: the last one used for that purpose.

Sweeps, sessions, pictures, corrected sweeps and calibration files usually live in different
places (a measurement folder, a project folder, a report folder); each dialog starts where the
last dialog of the same purpose ended, kept in the application's settings between runs.
"""

from __future__ import annotations

import os

#: Purposes a dialog may name, with the settings key that keeps each one's folder.
PURPOSES = {
    "sweeps": "last_folder",              # the key used before purposes existed, kept
    "sessions": "last_session_folder",
    "pictures": "last_picture_folder",
    "corrected": "last_corrected_folder",
    "calibration": "last_calibration_folder",
    "tables": "last_table_folder",
}


def _settings():
    from PySide6.QtCore import QSettings

    return QSettings("Refplane", "Refplane")


def last_folder(purpose: str) -> str:
    """The folder the last dialog for ``purpose`` ended in ("" when none yet).

    A purpose never used falls back to the sweeps' folder, where the work usually is.
    """
    settings = _settings()
    folder = str(settings.value(PURPOSES[purpose], "") or "")
    if not folder and purpose != "sweeps":
        folder = str(settings.value(PURPOSES["sweeps"], "") or "")
    return folder if folder and os.path.isdir(folder) else ""


def remember_folder(purpose: str, path: str) -> None:
    """Remember the folder of ``path`` (a file or a folder) for the next dialog of ``purpose``."""
    if not path:
        return
    folder = path if os.path.isdir(path) else os.path.dirname(os.path.abspath(path))
    _settings().setValue(PURPOSES[purpose], folder)


def in_last_folder(purpose: str, name: str) -> str:
    """``name`` placed in the last folder of ``purpose``: a suggestion for a save dialog."""
    folder = last_folder(purpose)
    return os.path.join(folder, name) if folder and not os.path.isabs(name) else name
