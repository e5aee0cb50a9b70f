"""Refplane's analysis layer: plain functions and frozen dataclasses over numpy arrays.

Nothing under this package imports Qt; ``tests/analysis/test_layering.py`` enforces it.
All quantities are SI (Hz, ohm, s, m, H, F); units are carried in names (``freq_hz``).
Bad input raises :class:`refplane.analysis.errors.AnalysisError` (or its subclass
:class:`~refplane.analysis.errors.SweepFileError` for files).
"""

from refplane.analysis.errors import AnalysisError, SweepFileError

__all__ = ["AnalysisError", "SweepFileError"]
