"""Test set-up shared by every layer: GUI tests run offscreen, always."""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# Keep QSettings (recent files, theme) out of the tester's own settings.
os.environ.setdefault("XDG_CONFIG_HOME", os.path.join(os.path.dirname(__file__), ".config-for-tests"))
