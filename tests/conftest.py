"""Test set-up shared by every layer: GUI tests run offscreen, always.

``REFPLANE_NO_QT=1 python -m pytest -p no:pytest-qt tests/analysis tests/session tests/cli`` runs
the layers that must work without Qt with PySide6 and pyqtgraph made unimportable, which
proves they do (CI runs it; tests that draw pictures are skipped there).
"""

import importlib.abc
import os
import sys

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# Keep QSettings (recent files, theme) out of the tester's own settings.
os.environ.setdefault("XDG_CONFIG_HOME", os.path.join(os.path.dirname(__file__), ".config-for-tests"))

# Sweeps made from closed-form models (tests/model_sweeps.py) for every layer's tests.
sys.path.insert(0, os.path.dirname(__file__))

NO_QT = os.environ.get("REFPLANE_NO_QT") == "1"
QT_PACKAGES = ("PySide6", "shiboken6", "pyqtgraph", "PyQt5", "PyQt6", "pytestqt")


class _NoQt(importlib.abc.MetaPathFinder):
    """Makes Qt unimportable, as on a machine without it."""

    def find_spec(self, name, path=None, target=None):
        if name.split(".")[0] in QT_PACKAGES:
            raise ModuleNotFoundError(f"No module named {name!r} (Qt is hidden for this run)", name=name)
        return None


if NO_QT:
    sys.meta_path.insert(0, _NoQt())
    collect_ignore = ["views", "benchmarks"]


def pytest_configure(config):
    config.addinivalue_line("markers", "needs_qt: draws with Qt; skipped in the Qt-free run")


def pytest_collection_modifyitems(config, items):
    if not NO_QT:
        return
    skip = pytest.mark.skip(reason="needs Qt; this run proves the Qt-free layers work without it")
    for item in items:
        if "needs_qt" in item.keywords:
            item.add_marker(skip)


# Hypothesis profiles: a modest default for every run, and "long" on demand for the
# mutation test of the readers (``pytest --hypothesis-profile=long``: at least 20,000 inputs).
try:
    from hypothesis import HealthCheck, settings
except ImportError:  # pragma: no cover - hypothesis is a test dependency
    pass
else:
    settings.register_profile("default", max_examples=150, deadline=None,
                              suppress_health_check=[HealthCheck.too_slow])
    settings.register_profile("long", max_examples=25_000, deadline=None,
                              suppress_health_check=[HealthCheck.too_slow,
                                                     HealthCheck.filter_too_much])
    settings.load_profile(os.environ.get("REFPLANE_HYPOTHESIS_PROFILE", "default"))
