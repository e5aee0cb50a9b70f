"""Geometry of the Smith chart grid, as plain numpy arrays (no Qt here, so it is tested alone).

The chart plots the reflection coefficient Γ = (z − 1)/(z + 1) of a normalised impedance
z = r + jx (textbook bilinear map, e.g. Pozar, *Microwave Engineering*, ch. 2). Every
grid line is produced by mapping a line of constant r or constant x through that map, so
each lies inside the unit circle by construction (r ≥ 0 ⇔ |Γ| ≤ 1) and needs no clipping.
The admittance grid is the impedance grid turned half a turn (Γ → −Γ), since
y = 1/z maps Γ to −Γ.

Curves are returned as ``(x, y)`` arrays with NaN between separate lines, so one item draws
a whole family with ``connect="finite"``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Values labelled and drawn strongly: a readable set used on printed charts (common practice).
MAJOR_VALUES = (0.2, 0.5, 1.0, 2.0, 5.0)
#: Fainter in-between lines; cut short where they would crowd the right-hand edge.
MINOR_VALUES = (0.1, 0.3, 0.4, 0.6, 0.7, 0.8, 0.9, 1.5, 3.0, 4.0, 10.0)
#: How far (in the other coordinate) minor lines run before they stop.
MINOR_EXTENT = 3.0

_N = 360  # points per grid line: smooth at any zoom a user would choose


def _to_gamma(z: np.ndarray) -> np.ndarray:
    return (z - 1) / (z + 1)


def _spread(limit: float | None, n: int) -> np.ndarray:
    # Samples 0 … limit (or 0 … ∞) spaced so that points are roughly evenly spread on the
    # chart: t = tan(φ) with φ uniform maps to an even angle along the circle.
    if limit is None:
        phi = np.linspace(0.0, np.pi / 2, n)
        t = np.tan(phi)
        t[-1] = 1e12  # tan(π/2): the point Γ = 1 itself
        return t
    return np.tan(np.linspace(0.0, np.arctan(limit), n))


def resistance_circle(r: float, x_limit: float | None = None, n: int = _N) -> tuple[np.ndarray, np.ndarray]:
    """The line of constant normalised resistance ``r``, for |x| up to ``x_limit`` (None = all)."""
    t = _spread(x_limit, n // 2)
    x = np.concatenate([-t[::-1], t[1:]])
    g = _to_gamma(r + 1j * x)
    return g.real, g.imag


def reactance_arc(x: float, r_limit: float | None = None, n: int = _N) -> tuple[np.ndarray, np.ndarray]:
    """The line of constant normalised reactance ``x``, for r from 0 to ``r_limit`` (None = ∞)."""
    g = _to_gamma(_spread(r_limit, n) + 1j * x)
    return g.real, g.imag


def unit_circle(n: int = 721) -> tuple[np.ndarray, np.ndarray]:
    """The outer edge |Γ| = 1."""
    a = np.linspace(0.0, 2 * np.pi, n)
    return np.cos(a), np.sin(a)


def vswr_circle(vswr: float, n: int = 361) -> tuple[np.ndarray, np.ndarray]:
    """The circle of constant VSWR: |Γ| = (VSWR − 1)/(VSWR + 1) (textbook identity)."""
    if not vswr >= 1:
        raise ValueError("a VSWR is at least 1")
    rho = (vswr - 1) / (vswr + 1)
    a = np.linspace(0.0, 2 * np.pi, n)
    return rho * np.cos(a), rho * np.sin(a)


def _join(curves: list[tuple[np.ndarray, np.ndarray]]) -> tuple[np.ndarray, np.ndarray]:
    if not curves:
        return np.empty(0), np.empty(0)
    xs, ys = [], []
    for cx, cy in curves:
        xs += [cx, [np.nan]]
        ys += [cy, [np.nan]]
    return np.concatenate(xs[:-1]), np.concatenate(ys[:-1])


@dataclass(frozen=True)
class GridLabel:
    """A grid value's label: text, position on the chart, and the direction it sits in."""

    text: str
    """What is written ("0.5", "+j2", "−j0.2")."""
    x: float
    """Position, real part of Γ."""
    y: float
    """Position, imaginary part of Γ."""
    anchor: tuple[float, float]
    """Which point of the text sits at (x, y), as pyqtgraph text anchors (0..1, 0..1)."""


@dataclass(frozen=True)
class GridLines:
    """A whole grid as NaN-separated polylines and labels."""

    major: tuple[np.ndarray, np.ndarray]
    """Stronger lines (the labelled values)."""
    minor: tuple[np.ndarray, np.ndarray]
    """Fainter in-between lines."""
    axis: tuple[np.ndarray, np.ndarray]
    """The real axis (x = 0), from short to open."""
    labels: tuple[GridLabel, ...]
    """Value labels."""


def _fmt(v: float) -> str:
    return f"{v:g}"


def impedance_grid(major=MAJOR_VALUES, minor=MINOR_VALUES, minor_extent: float = MINOR_EXTENT) -> GridLines:
    """Constant-resistance circles and constant-reactance arcs, with labels.

    Resistance labels sit just above the real axis; reactance labels just outside the unit
    circle where each arc meets it, with sign (+ inductive, upper half; − capacitive, lower).
    """
    major_curves, minor_curves = [], []
    for v in major:
        major_curves.append(resistance_circle(v))
        major_curves.append(reactance_arc(v))
        major_curves.append(reactance_arc(-v))
    for v in minor:
        minor_curves.append(resistance_circle(v, x_limit=minor_extent))
        minor_curves.append(reactance_arc(v, r_limit=minor_extent))
        minor_curves.append(reactance_arc(-v, r_limit=minor_extent))
    labels = [GridLabel("0", -1.0, 0.0, (1.05, 0.5)), GridLabel("∞", 1.0, 0.0, (-0.15, 0.5))]
    for v in major:
        g = (v - 1) / (v + 1)
        labels.append(GridLabel(_fmt(v), g, 0.0, (1.0, 1.0)))
        for sign in (1, -1):
            e = complex(_to_gamma(np.complex128(1j * sign * v)))
            # Outside the rim, pushed along the radius.
            anchor = (0.5 - 0.55 * e.real, 0.5 + 0.6 * e.imag)
            text = f"{'+' if sign > 0 else '−'}j{_fmt(v)}"
            labels.append(GridLabel(text, e.real * 1.02, e.imag * 1.02, anchor))
    axis = (np.array([-1.0, 1.0]), np.array([0.0, 0.0]))
    return GridLines(major=_join(major_curves), minor=_join(minor_curves), axis=axis,
                     labels=tuple(labels))


def admittance_grid(major=MAJOR_VALUES, minor=MINOR_VALUES, minor_extent: float = MINOR_EXTENT) -> GridLines:
    """The admittance grid: the impedance grid turned half a turn (Γ → −Γ), without labels."""
    imp = impedance_grid(major, minor, minor_extent)
    neg = lambda c: (-c[0], -c[1])  # noqa: E731
    return GridLines(major=neg(imp.major), minor=neg(imp.minor), axis=imp.axis, labels=())


def nearest_on_polyline(px: float, py: float, x: np.ndarray, y: np.ndarray,
                        scale_x: float = 1.0, scale_y: float = 1.0) -> tuple[int, float, float]:
    """The point of a polyline nearest to (px, py): segment index, fraction along it, distance.

    ``scale_x``/``scale_y`` convert data units to screen units (pixels per unit) so that
    "nearest" means nearest on screen. The marker drag uses the fraction to place a
    marker between swept points: frequency = f[i] + t·(f[i+1] − f[i]).

    Returns
    -------
    (i, t, distance) : (int, float, float)
        ``0 <= i < len(x) - 1`` (``i = 0, t = 0`` for a single point), ``0 <= t <= 1``,
        distance in the scaled units.
    """
    x = np.asarray(x, dtype=float) * scale_x
    y = np.asarray(y, dtype=float) * scale_y
    px, py = px * scale_x, py * scale_y
    if x.size == 1:
        return 0, 0.0, float(np.hypot(x[0] - px, y[0] - py))
    dx, dy = np.diff(x), np.diff(y)
    len2 = dx * dx + dy * dy
    with np.errstate(invalid="ignore", divide="ignore"):
        t = ((px - x[:-1]) * dx + (py - y[:-1]) * dy) / len2
    t = np.where(len2 > 0, np.clip(t, 0.0, 1.0), 0.0)
    cx, cy = x[:-1] + t * dx, y[:-1] + t * dy
    d2 = (cx - px) ** 2 + (cy - py) ** 2
    i = int(np.argmin(d2))
    return i, float(t[i]), float(np.sqrt(d2[i]))


def frequency_near(px: float, py: float, x: np.ndarray, y: np.ndarray, freq_hz: np.ndarray,
                   scale_x: float = 1.0, scale_y: float = 1.0) -> tuple[float, float]:
    """The frequency of the trace point nearest (px, py), interpolated along the segment.

    Linear along the chord between two swept points, matching how readings interpolate
    between points (:mod:`refplane.analysis.markers`). Returns (freq_hz, screen distance).
    """
    i, t, dist = nearest_on_polyline(px, py, x, y, scale_x, scale_y)
    if freq_hz.size == 1:
        return float(freq_hz[0]), dist
    f = float(freq_hz[i] + t * (freq_hz[i + 1] - freq_hz[i]))
    return f, dist


def thin_polyline(x: np.ndarray, y: np.ndarray, step: float) -> tuple[np.ndarray, np.ndarray]:
    """Drop points that lie within ``step`` (along the curve) of the last kept point.

    For drawing only: with ``step`` = half a pixel the thinned curve is indistinguishable on
    screen from the full one, but a 100 000-point sweep becomes a few thousand points. A point
    is kept whenever the distance travelled along the curve enters a new multiple of ``step``,
    so noise and sharp turns (long travel) keep their points; the first and last are always kept.
    """
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    n = x.size
    if n <= 2 or not step > 0:
        return x, y
    travel = np.empty(n)
    travel[0] = 0.0
    np.cumsum(np.hypot(np.diff(x), np.diff(y)), out=travel[1:])
    bins = np.floor(travel / step)
    keep = np.empty(n, dtype=bool)
    keep[0] = True
    keep[1:] = bins[1:] != bins[:-1]
    keep[-1] = True
    return x[keep], y[keep]
