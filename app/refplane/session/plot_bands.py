"""Uncertainty bands for the frequency plots: each curve's value ± its expanded uncertainty (no Qt).

When the session's ``"uncertainty"`` settings are on, the plots of quantities that carry a
± (return loss, VSWR, R and X, |Z|) draw a translucent band around each visible trace's curve.
The ± comes from the same engine as the marker readings
(:func:`refplane.session.uncertainty_view.trace_uncertainty`), read at swept points only:

- on at most :data:`MAX_POINTS` swept frequencies spread evenly over the sweep (every point of
  a smaller sweep), so a 100 000-point sweep costs the same as a 401-point one; between those
  the half-width is interpolated linearly for drawing;
- with the linear propagation when the settings say ``"auto"``: the automatic switch to
  Monte Carlo (JCGM 101) where the linearisation is poor costs ten times as much per point,
  which suits a marker but not a whole curve on every change. A band therefore matches the
  marker's ± wherever the marker is read linearly; a user who asks for Monte Carlo
  everywhere gets it on the band too (on fewer points, :data:`MAX_POINTS_MONTE_CARLO`).

Results are cached per (trace record, settings): a new trace record (another file, offsets,
port) or changed settings computes anew; zoom, colour or marker changes cost nothing.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

#: Plot quantity → for each of its curves (in ``plot_series.curves`` order) the engine's key.
BAND_KEYS: dict[str, tuple[str, ...]] = {
    "return_loss": ("return_loss_db",),
    "vswr": ("vswr",),
    "r_x": ("r_ohm", "x_ohm"),
    "z_mag": ("z_mag_ohm",),
}

#: Most swept points read for one trace's band (linear propagation).
MAX_POINTS = 401
#: Most swept points read when the settings ask for Monte Carlo everywhere.
MAX_POINTS_MONTE_CARLO = 101


@dataclass(frozen=True, eq=False)
class BandView:
    """A shaded band around one curve of a frequency plot: ``y ± u`` (k = 2)."""

    trace_id: int
    """The trace it belongs to."""
    label: str
    """The curve it surrounds ("R", "VSWR S11")."""
    freq_hz: np.ndarray
    """Frequencies (the curve's)."""
    lower: np.ndarray
    """Curve value minus the expanded uncertainty (NaN where none is known)."""
    upper: np.ndarray
    """Curve value plus the expanded uncertainty."""
    colour: str
    """The trace's colour, ``#rrggbb`` (drawn translucent)."""


def thinned_indices(n: int, most: int = MAX_POINTS) -> np.ndarray:
    """Indices of at most ``most`` swept points spread evenly over ``n`` (first and last kept)."""
    if n <= most:
        return np.arange(n)
    return np.unique(np.linspace(0, n - 1, most).round().astype(int))


def band_settings(settings):
    """The settings the bands are computed with (``"auto"`` read linearly; see the module notes)."""
    if settings.method == "auto":
        return dataclasses.replace(settings, method="linear")
    return settings


def trace_u(settings, trace, cache: dict | None = None):
    """The engine's ``ReadoutUncertainty`` on the trace's thinned grid, or None.

    None when the ± is off or the engine refuses (a frequency outside the calibration's band,
    unreadable settings: the uncertainty panel says why; the plot then simply has no band).
    """
    if settings is None or not getattr(settings, "enabled", False):
        return None
    key = (id(trace), settings)
    if cache is not None:
        hit = cache.get(key)
        if hit is not None and hit[0] is trace:
            return hit[1]
    from refplane.analysis.errors import AnalysisError
    from refplane.session.uncertainty_view import trace_uncertainty

    used = band_settings(settings)
    most = MAX_POINTS_MONTE_CARLO if used.method == "monte-carlo" else MAX_POINTS
    freq = trace.raw.freq_hz
    try:
        result = trace_uncertainty(used, trace, freq[thinned_indices(freq.size, most)])
    except AnalysisError:
        result = None
    if cache is not None:
        cache[key] = (trace, result)
    return result


def half_width(u, key: str, freq_hz: np.ndarray) -> np.ndarray:
    """Expanded uncertainty of ``key`` at ``freq_hz``, interpolated between the grid's points.

    NaN outside the grid and (generally) beside a point with no finite value.
    """
    values = np.asarray(getattr(u, key), dtype=float)
    grid = np.asarray(u.freq_hz, dtype=float)
    if grid.size == 1:
        return np.where(freq_hz == grid[0], values[0], np.nan)
    # A NaN neighbour (an ∞ VSWR has no finite bound) leaves a gap in the band.
    return np.interp(freq_hz, grid, values, left=np.nan, right=np.nan)


def bands(settings, trace, quantity: str, curves, cache: dict | None = None) -> tuple[BandView, ...]:
    """Bands for one trace's curves of ``quantity`` (empty when it has no ± or the ± is off).

    Parameters
    ----------
    settings : UncertaintySettings or None
        ``session.tool("uncertainty")`` (None: no bands).
    trace : Trace
        The session's trace record.
    quantity : str
        The plot's quantity key (``plot_series.BY_KEY``).
    curves : sequence of CurveView
        The trace's curves on that plot; only the displayed trace's own (opaque, not model
        overlays, not the faded uncorrected trace) get a band, in order of ``BAND_KEYS``.
    cache : dict, optional
        Kept between calls (per session) so unchanged traces are not read again.
    """
    keys = BAND_KEYS.get(quantity)
    if not keys or not trace.visible:
        return ()
    own = [c for c in curves if c.trace_id == trace.id and c.alpha >= 1.0 and c.style != "dotted"]
    if not own:
        return ()
    u = trace_u(settings, trace, cache)
    if u is None:
        return ()
    out = []
    for key, curve in zip(keys, own):
        w = half_width(u, key, curve.freq_hz)
        with np.errstate(invalid="ignore"):
            out.append(BandView(trace.id, curve.label, curve.freq_hz, curve.y - w, curve.y + w, curve.colour))
    return tuple(out)
