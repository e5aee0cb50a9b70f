"""The ± of a reading from the session's ``"uncertainty"`` settings (no Qt).

:func:`reading_uncertainty` turns the settings (:class:`~refplane.session.tool_settings.UncertaintySettings`)
and a trace into the uncertainty engine's result at one or more frequencies; resolve and the
uncertainty panel both call it, so the marker cells and the panel's preview cannot disagree.
:func:`marker_u` gives the ``u`` mapping :func:`refplane.session.present.readout_cells` takes.

The reading's path is the trace's: its sweep at the calibration plane (``trace.raw``) with its
offsets removed. Residual terms, the calibration's propagated terms, trace noise and the
interpolation bound apply at that plane and are carried through the offset removal; the
offsets' own uncertainties are added after it (see :mod:`refplane.analysis.uncertainty.reading`).
"""

from __future__ import annotations

import functools
import math
import os
from typing import Sequence

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep


def residual_terms(settings):
    """The settings' stated corrected performance as ``ResidualTerms`` (None when not used).

    Directivity and source match are dB below full reflection, tracking ±dB of the magnitude,
    the way data sheets state them (EURAMET cg-12): |D| = 10^(−dB/20), |T| = 10^(dB/20) − 1.
    """
    from refplane.analysis.uncertainty.residual import ResidualTerms

    if not settings.use_residual:
        return None
    for name in ("directivity_db", "source_match_db", "tracking_db"):
        v = getattr(settings, name)
        if not (isinstance(v, (int, float)) and math.isfinite(v)):
            raise AnalysisError(f"the uncertainty setting {name} must be a number")
    return ResidualTerms(directivity=10 ** (-abs(settings.directivity_db) / 20),
                         tracking=10 ** (abs(settings.tracking_db) / 20) - 1,
                         source_match=10 ** (-abs(settings.source_match_db) / 20))


@functools.lru_cache(maxsize=4)
def _calibration_u(path: str, mtime_ns: int, size: int):
    # Keyed by the file's time and size: a calibration saved again is read again.
    from refplane.analysis.calibration.calfile import load_calibration

    cal = load_calibration(path)
    if cal.uncertainty is None:
        raise AnalysisError(f"{os.path.basename(path)} holds no propagated uncertainty "
                            "(saved by an older Refplane); calibrate again and save it")
    return cal.uncertainty


def calibration_uncertainty(path: str):
    """The propagated uncertainty held in a saved calibration file (read once per version of the file)."""
    try:
        st = os.stat(path)
    except OSError as exc:
        raise AnalysisError(f"{path}: {exc.strerror or exc}") from None
    return _calibration_u(os.path.abspath(path), st.st_mtime_ns, st.st_size)


def options(settings, *, calibration=None):
    """The engine's ``UncertaintyOptions`` for the settings (None when the ± is switched off).

    ``calibration`` (a ``CalibrationUncertainty``) overrides the settings' calibration file.
    """
    from refplane.analysis.uncertainty.reading import OffsetUncertainty, UncertaintyOptions

    if not settings.enabled:
        return None
    if settings.noise in ("auto", "none"):
        noise = settings.noise
    elif settings.noise == "level":
        noise = float(settings.noise_level)
    else:
        raise AnalysisError(f"noise must be auto, none or level, not {settings.noise!r}")
    cal = calibration
    if cal is None and settings.calibration_file:
        cal = calibration_uncertainty(settings.calibration_file)
    ou = OffsetUncertainty(delay_s=float(settings.offset_delay_u_s), loss_db=float(settings.offset_loss_u_db),
                           line_z0_ohm=float(settings.offset_line_z0_u_ohm))
    return UncertaintyOptions(residual=residual_terms(settings), calibration=cal, noise=noise,
                              interpolation=bool(settings.interpolation), offset_u=None if ou.is_zero else ou,
                              method=settings.method)


def reading_uncertainty(settings, sweep: Sweep, freq_hz, *, port: int = 1, offsets: Sequence | None = None,
                        calibration=None):
    """The engine's result (``ReadoutUncertainty``) at ``freq_hz``, or None when the ± is off.

    Parameters
    ----------
    settings : UncertaintySettings
        ``session.tool("uncertainty")``.
    sweep : Sweep
        The sweep at the calibration plane — ``trace.raw`` — when ``offsets`` are given; else
        the displayed sweep (then the offsets' own uncertainties are not counted).
    freq_hz : float or array_like
        Reading frequencies (markers), inside the sweep.
    port : int
        1-based port read.
    offsets : sequence of LineOffset, optional
        The trace's offsets (``trace.offsets``), removed from ``sweep`` before reading.
    calibration : CalibrationUncertainty, optional
        Overrides the settings' calibration file (for a calibration held in memory).

    Raises
    ------
    AnalysisError
        Bad settings, an unreadable calibration file, a frequency outside the sweep or the
        calibration's band.

    Examples
    --------
    >>> import numpy as np
    >>> from refplane.session.tool_settings import UncertaintySettings
    >>> sw = Sweep(np.linspace(1e8, 1e9, 11), np.full(11, 0.2 + 0.1j), 50.0)
    >>> s = UncertaintySettings(enabled=True, directivity_db=40.0, source_match_db=200.0,
    ...                         tracking_db=0.0, noise="none")
    >>> round(float(reading_uncertainty(s, sw, 5e8).gamma_mag[0]), 4)   # |D| = 0.01 alone
    0.01
    """
    from refplane.analysis.uncertainty.reading import uncertain_points

    opts = options(settings, calibration=calibration)
    if opts is None:
        return None
    offsets = tuple(offsets) if offsets else None
    if offsets is not None and all(getattr(o, "is_zero", False) for o in offsets):
        offsets = None
    return uncertain_points(sweep, freq_hz, port=port, offsets=offsets, options=opts)


def trace_uncertainty(settings, trace, freq_hz, *, calibration=None):
    """:func:`reading_uncertainty` along a session trace's own path (raw sweep, offsets, port)."""
    return reading_uncertainty(settings, trace.raw, freq_hz, port=trace.port, offsets=trace.offsets or None,
                               calibration=calibration)


def marker_u(settings, trace, freq_hz: float, *, calibration=None) -> dict | None:
    """The ``u`` mapping of one marker for :func:`refplane.session.present.readout_cells` (None when off)."""
    u = trace_uncertainty(settings, trace, [float(freq_hz)], calibration=calibration)
    return None if u is None else u.json_point(0)


def sources_sentence(settings) -> str:
    """What the ± is made of, in words (for the panel and reports)."""
    if not settings.enabled:
        return "No uncertainty is shown."
    parts = []
    r = residual_terms(settings)
    if r is not None:
        parts.append(f"the instrument's corrected performance ({r.describe()})")
    if settings.calibration_file:
        parts.append(f"the saved calibration {os.path.basename(settings.calibration_file)}")
    if settings.noise == "auto":
        parts.append("trace noise estimated from each sweep")
    elif settings.noise == "level":
        parts.append(f"trace noise σ = {settings.noise_level:.2g} per axis")
    if settings.interpolation:
        parts.append("reading between swept points")
    if settings.offset_delay_u_s or settings.offset_loss_u_db or settings.offset_line_z0_u_ohm:
        parts.append("the reference-plane offset's values")
    head = "± is the expanded uncertainty (k = 2, about 95 %) from "
    text = head + (", ".join(parts) if parts else "nothing (every source is off)") + "."
    if r is None and not settings.calibration_file:
        text += (" Without the instrument's performance or a calibration, the ± leaves out the "
                 "calibration's own errors.")
    return text
