"""Geometry of the Smith chart grid, as plain numbers and numpy arrays (no Qt here, so it is tested alone).

The chart plots the reflection coefficient Γ = (z − 1)/(z + 1) of a normalised impedance
z = r + jx (textbook bilinear map, e.g. Pozar, *Microwave Engineering*, ch. 2). The map takes
lines to circles, so every grid line is an arc of a circle, kept exactly as centre, radius and
angles (:class:`GridArc`) and drawn as a true arc: a few curve pieces per line instead of
hundreds of points. A line of constant r ≥ 0 or constant x over r ≥ 0 lies inside the unit
circle (r ≥ 0 ⇔ |Γ| ≤ 1), so no line needs clipping. The admittance grid is the impedance
grid turned half a turn (Γ → −Γ), since y = 1/z maps Γ to −Γ.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Values labelled and drawn strongly: a readable set used on printed charts (common practice).
MAJOR_VALUES = (0.2, 0.5, 1.0, 2.0, 5.0)
#: Fainter in-between lines; cut short where they would crowd the right-hand edge.
MINOR_VALUES = (0.1, 0.3, 0.4, 0.6, 0.7, 0.8, 0.9, 1.5, 3.0, 4.0, 10.0)
#: How far (in the other coordinate) minor lines run before they stop.
MINOR_EXTENT = 3.0


def _to_gamma(z):
    return (z - 1) / (z + 1)


@dataclass(frozen=True)
class GridArc:
    """One grid line: an arc of the circle with centre (cx, cy) and ``radius``, on the Γ plane.

    The arc starts at angle ``start_rad`` (measured from the +Re Γ direction, anticlockwise as
    seen on the chart, Im Γ upwards) and turns through ``span_rad`` (negative: clockwise).
    """

    cx: float
    cy: float
    radius: float
    start_rad: float
    span_rad: float

    def points(self, n: int = 361) -> tuple[np.ndarray, np.ndarray]:
        """``n`` points along the arc, first to last, as (Re Γ, Im Γ) arrays."""
        a = self.start_rad + np.linspace(0.0, 1.0, n) * self.span_rad
        return self.cx + self.radius * np.cos(a), self.cy + self.radius * np.sin(a)

    def turned(self) -> GridArc:
        """The same arc turned half a turn about Γ = 0 (Γ → −Γ)."""
        return GridArc(-self.cx, -self.cy, self.radius, self.start_rad + math.pi, self.span_rad)


def _angle(arc_cx: float, arc_cy: float, z: complex) -> float:
    g = complex(_to_gamma(complex(z)))
    return math.atan2(g.imag - arc_cy, g.real - arc_cx) % (2 * math.pi)


def resistance_circle(r: float, x_limit: float | None = None) -> GridArc:
    """The line of constant normalised resistance ``r`` ≥ 0, for |x| up to ``x_limit`` (None = all).

    Textbook circle: centre (r/(1+r), 0), radius 1/(1+r); the whole circle touches Γ = 1.
    """
    if not r >= 0:
        raise ValueError("a resistance circle needs r ≥ 0")
    cx, radius = r / (1 + r), 1 / (1 + r)
    if x_limit is None:
        return GridArc(cx, 0.0, radius, 0.0, 2 * math.pi)
    # Γ(r + jX) lies above the axis at angle a in (0, π); the line runs from there through
    # Γ(r) (angle π) round to Γ(r − jX) at 2π − a.
    a = _angle(cx, 0.0, complex(r, x_limit))
    return GridArc(cx, 0.0, radius, a, 2 * math.pi - 2 * a)


def reactance_arc(x: float, r_limit: float | None = None) -> GridArc:
    """The line of constant normalised reactance ``x`` ≠ 0, for r from 0 to ``r_limit`` (None = ∞).

    Textbook circle: centre (1, 1/x), radius 1/|x|; the line runs from the rim (r = 0) towards
    the open-circuit point Γ = 1 (r = ∞).
    """
    if x == 0 or not math.isfinite(x):
        raise ValueError("a reactance arc needs a finite x ≠ 0 (x = 0 is the real axis)")
    ax = abs(x)
    cy = 1 / ax
    # Worked for +|x| (centre above the axis), where the line turns anticlockwise from the rim
    # (angle in (π/2, 3π/2)) to Γ = 1 straight below the centre (3π/2); −x is its mirror image.
    start = _angle(1.0, cy, complex(0.0, ax))
    end = 1.5 * math.pi if r_limit is None else _angle(1.0, cy, complex(r_limit, ax))
    if x > 0:
        return GridArc(1.0, cy, cy, start, end - start)
    return GridArc(1.0, -cy, cy, -start, start - end)


def unit_circle() -> GridArc:
    """The outer edge |Γ| = 1."""
    return GridArc(0.0, 0.0, 1.0, 0.0, 2 * math.pi)


def vswr_circle(vswr: float, n: int = 361) -> tuple[np.ndarray, np.ndarray]:
    """The circle of constant VSWR: |Γ| = (VSWR − 1)/(VSWR + 1) (textbook identity), as points."""
    if not vswr >= 1:
        raise ValueError("a VSWR is at least 1")
    rho = (vswr - 1) / (vswr + 1)
    a = np.linspace(0.0, 2 * np.pi, n)
    return rho * np.cos(a), rho * np.sin(a)


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
    """A whole grid as arcs, the real axis, and labels."""

    major: tuple[GridArc, ...]
    """Stronger lines (the labelled values)."""
    minor: tuple[GridArc, ...]
    """Fainter in-between lines."""
    axis: tuple[tuple[float, float], tuple[float, float]]
    """The real axis (x = 0), from short to open: its two ends as (Re Γ, Im Γ)."""
    labels: tuple[GridLabel, ...]
    """Value labels."""


def _fmt(v: float) -> str:
    return f"{v:g}"


def impedance_grid(major=MAJOR_VALUES, minor=MINOR_VALUES, minor_extent: float = MINOR_EXTENT) -> GridLines:
    """Constant-resistance circles and constant-reactance arcs, with labels.

    Resistance labels sit just above the real axis; reactance labels just outside the unit
    circle where each arc meets it, with sign (+ inductive, upper half; − capacitive, lower).
    """
    major_arcs, minor_arcs = [], []
    for v in major:
        major_arcs += [resistance_circle(v), reactance_arc(v), reactance_arc(-v)]
    for v in minor:
        minor_arcs += [resistance_circle(v, x_limit=minor_extent), reactance_arc(v, r_limit=minor_extent),
                       reactance_arc(-v, r_limit=minor_extent)]
    labels = [GridLabel("0", -1.0, 0.0, (1.05, 0.5)), GridLabel("∞", 1.0, 0.0, (-0.15, 0.5))]
    for v in major:
        g = (v - 1) / (v + 1)
        labels.append(GridLabel(_fmt(v), g, 0.0, (1.0, 1.0)))
        for sign in (1, -1):
            e = complex(_to_gamma(complex(0.0, sign * v)))
            # Outside the rim, pushed along the radius.
            anchor = (0.5 - 0.55 * e.real, 0.5 + 0.6 * e.imag)
            text = f"{'+' if sign > 0 else '−'}j{_fmt(v)}"
            labels.append(GridLabel(text, e.real * 1.02, e.imag * 1.02, anchor))
    return GridLines(major=tuple(major_arcs), minor=tuple(minor_arcs), axis=((-1.0, 0.0), (1.0, 0.0)),
                     labels=tuple(labels))


def admittance_grid(major=MAJOR_VALUES, minor=MINOR_VALUES, minor_extent: float = MINOR_EXTENT) -> GridLines:
    """The admittance grid: the impedance grid turned half a turn (Γ → −Γ), without labels."""
    imp = impedance_grid(major, minor, minor_extent)
    return GridLines(major=tuple(a.turned() for a in imp.major), minor=tuple(a.turned() for a in imp.minor),
                     axis=imp.axis, labels=())


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
    between points (:mod:`refplane.analysis.readings.markers`). Returns (freq_hz, screen distance).
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
