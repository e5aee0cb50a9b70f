"""The user's work, free of Qt: the evented model, its resolved scene, text rules, jobs and files.

- :mod:`~refplane.session.model` — :class:`Session`: traces, markers, band, display options,
  fit settings and calibration inputs, announcing each change (psygnal);
- :mod:`~refplane.session.resolve` / :mod:`~refplane.session.scene` — ``resolve(session)``,
  the frozen :class:`Scene` of everything drawn and read;
- :mod:`~refplane.session.present` — every number → text rule;
- :mod:`~refplane.session.jobs` — read, fit, estimate, calibrate, correct: never raise;
- :mod:`~refplane.session.files` — session files (versioned JSON).

Nothing here imports PySide6 or pyqtgraph (an import-linter contract checks it).
"""
