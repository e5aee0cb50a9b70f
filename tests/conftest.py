"""Test set-up shared by every layer: GUI tests run offscreen, always."""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# Keep QSettings (recent files, theme) out of the tester's own settings.
os.environ.setdefault("XDG_CONFIG_HOME", os.path.join(os.path.dirname(__file__), ".config-for-tests"))

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
