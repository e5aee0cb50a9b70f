"""Small, self-contained SVG pictures for reports: the chart with markers, and a quantity
against frequency with its limit line. Pure Python and numpy; no Qt, no external links.

The chart maps Γ to the picture directly (real part right, imaginary part up). Its grid is
the usual one: circles of constant resistance r = R/Z0 (centre r/(1 + r), radius 1/(1 + r))
and arcs of constant reactance x = X/Z0, drawn by mapping z = s + jx for s ≥ 0 through
Γ = (z − 1)/(z + 1).
"""

from __future__ import annotations

import math
from html import escape
from typing import Sequence

import numpy as np

GRID_R = (0.2, 0.5, 1.0, 2.0, 5.0)
GRID_X = (0.2, 0.5, 1.0, 2.0, 5.0)
TRACE_COLOURS = ("#1f5fbf", "#c0392b", "#1e8449", "#8e44ad", "#b9770e", "#17806d")
MAX_POINTS = 2000   # more points than this are thinned for the picture only


def _thin(n: int) -> np.ndarray:
    if n <= MAX_POINTS:
        return np.arange(n)
    return np.unique(np.linspace(0, n - 1, MAX_POINTS).round().astype(int))


def _fmt(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def _polyline(xs: Sequence[float], ys: Sequence[float], **attrs) -> str:
    pts = " ".join(f"{_fmt(x)},{_fmt(y)}" for x, y in zip(xs, ys))
    extra = " ".join(f'{k.replace("_", "-")}="{v}"' for k, v in attrs.items())
    return f'<polyline points="{pts}" fill="none" {extra}/>'


def smith_chart_svg(traces: Sequence[tuple[str, np.ndarray]],
                    markers: Sequence[tuple[int, str, complex]] = (), *,
                    size: int = 440, title: str = "") -> str:
    """An SVG chart of reflection traces with numbered markers.

    Parameters
    ----------
    traces : sequence of (label, gamma)
        Reflection coefficients (complex arrays) to draw as lines.
    markers : sequence of (trace index, label, gamma)
        Points to mark, e.g. ``(0, "1", 0.2+0.1j)``.
    size : int
        Width and height in pixels.
    title : str
        Shown in the picture's ``<title>`` (read by screen readers).
    """
    pad = 26
    radius = (size - 2 * pad) / 2
    cx = cy = size / 2

    def xy(g) -> tuple[np.ndarray, np.ndarray]:
        g = np.asarray(g, dtype=complex)
        return cx + radius * g.real, cy - radius * g.imag

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{size}" height="{size}" '
           f'viewBox="0 0 {size} {size}" role="img" font-family="sans-serif">',
           f"<title>{escape(title or 'Smith chart')}</title>",
           f'<rect width="{size}" height="{size}" fill="#ffffff"/>',
           f'<g stroke="#b8bec6" stroke-width="0.8" fill="none">',
           f'<circle cx="{_fmt(cx)}" cy="{_fmt(cy)}" r="{_fmt(radius)}" stroke="#59606a" stroke-width="1.4"/>',
           f'<line x1="{_fmt(cx - radius)}" y1="{_fmt(cy)}" x2="{_fmt(cx + radius)}" y2="{_fmt(cy)}"/>']
    for r in GRID_R:
        c, rad = r / (1 + r), 1 / (1 + r)
        out.append(f'<circle cx="{_fmt(cx + radius * c)}" cy="{_fmt(cy)}" r="{_fmt(radius * rad)}"/>')
    s = np.tan(np.linspace(0, math.pi / 2 * 0.999, 90))
    for x in GRID_X:
        for sign in (1, -1):
            z = s + 1j * sign * x
            px, py = xy((z - 1) / (z + 1))
            out.append(_polyline(np.append(px, cx + radius), np.append(py, cy)))
    out.append("</g>")
    out.append('<g font-size="10" fill="#59606a">')
    for r in GRID_R:
        gx = (r - 1) / (r + 1)
        out.append(f'<text x="{_fmt(cx + radius * gx + 2)}" y="{_fmt(cy - 3)}">{_fmt(r)}</text>')
    for x in GRID_X:
        for sign in (1, -1):
            g = (1j * sign * x - 1) / (1j * sign * x + 1)
            tx, ty = cx + (radius + 12) * g.real, cy - (radius + 12) * g.imag
            label = f"{'+' if sign > 0 else '−'}j{_fmt(x)}"
            out.append(f'<text x="{_fmt(tx)}" y="{_fmt(ty + 3)}" text-anchor="middle">{label}</text>')
    out.append("</g>")
    for i, (label, gamma) in enumerate(traces):
        g = np.asarray(gamma, dtype=complex)
        keep = _thin(g.size)
        px, py = xy(g[keep])
        colour = TRACE_COLOURS[i % len(TRACE_COLOURS)]
        out.append(f'<g><title>{escape(label)}</title>'
                   + _polyline(px, py, stroke=colour, stroke_width="1.8", stroke_linejoin="round") + "</g>")
    for trace, label, gamma in markers:
        colour = TRACE_COLOURS[trace % len(TRACE_COLOURS)]
        mx, my = xy(gamma)
        out.append(f'<circle cx="{_fmt(float(mx))}" cy="{_fmt(float(my))}" r="4" fill="#ffffff" '
                   f'stroke="{colour}" stroke-width="1.6"/>')
        out.append(f'<text x="{_fmt(float(mx) + 6)}" y="{_fmt(float(my) - 6)}" font-size="11" '
                   f'fill="{colour}" font-weight="bold">{escape(label)}</text>')
    out.append("</svg>")
    return "\n".join(out)


def _nice_ticks(low: float, high: float, count: int = 5) -> list[float]:
    if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
        return [low]
    raw = (high - low) / count
    mag = 10 ** math.floor(math.log10(raw))
    step = min((m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw), default=10 * mag)
    first = math.ceil(low / step)
    ticks = []
    # Counted, not accumulated: a step far below the values' own resolution cannot loop forever.
    for k in range(first, first + 4 * count + 2):
        v = k * step
        if v > high + step * 1e-9:
            break
        ticks.append(0.0 if abs(v) < step * 1e-9 else v)
    return ticks or [low]


_PREFIXES = ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"), (1e-12, "p"),
             (1e-15, "f"))


def _scale(values: np.ndarray, unit: str) -> tuple[float, str]:
    """A display scale and unit label: henries as nH, ohms as kΩ, frequencies as MHz."""
    shown = {"ohm": "Ω", "deg": "°"}.get(unit, unit)
    if unit not in ("ohm", "H", "F", "Hz"):
        return 1.0, shown
    finite = np.abs(values[np.isfinite(values)])
    big = float(finite.max()) if finite.size else 1.0
    for scale, prefix in _PREFIXES:
        if big >= scale * 0.9995:
            return scale, prefix + shown
    return _PREFIXES[-1][0], _PREFIXES[-1][1] + shown


def _tick_text(v: float) -> str:
    return f"{v:.6g}".replace("-", "−")


def frequency_plot_svg(freq_hz: np.ndarray, values: np.ndarray, *, quantity: str, unit: str = "",
                       limits: Sequence[tuple[str, float, tuple[float, float], str]] = (),
                       worst: Sequence[tuple[float, float]] = (), width: int = 440, height: int = 240,
                       title: str = "") -> str:
    """An SVG plot of a quantity against frequency with limit lines over their bands.

    Parameters
    ----------
    freq_hz, values : ndarray
        The quantity at each swept frequency (NaN and ∞ leave gaps).
    quantity, unit : str
        Axis label and unit of ``values`` (SI: "ohm", "H", "F", "dB", "deg" or "").
    limits : sequence of (op, value, (low_hz, high_hz), decision)
        Limit lines; the band is shaded, green when the limit passed, red when it failed,
        amber when indeterminate.
    worst : sequence of (freq_hz, value)
        Points to ring (each limit's worst point).
    """
    left, right, top, bottom = 62, 14, 22, 38
    pw, ph = width - left - right, height - top - bottom
    f = np.asarray(freq_hz, float)
    v = np.asarray(values, float)
    fs, funit = _scale(f, "Hz")
    ys, yunit = _scale(np.concatenate([v, [lv for _, lv, _, _ in limits]]), unit)
    # With limits, the vertical range follows the readings near the limited bands (a VSWR of
    # thousands far outside the band would flatten the part that is judged); readings
    # outside the range are drawn at its edge.
    near = np.isfinite(v)
    if limits:
        inside = np.zeros(f.size, dtype=bool)
        for _, _, (b0, b1), _ in limits:
            pad = 0.25 * (b1 - b0)
            inside |= (f >= b0 - pad) & (f <= b1 + pad)
        if (near & inside).any():
            near &= inside
    finite = v[near]
    candidates = list(finite) + [lv for _, lv, _, _ in limits]
    lo, hi = (min(candidates), max(candidates)) if candidates else (0.0, 1.0)
    if hi - lo <= 1e-9 * max(abs(lo), abs(hi)):   # flat: give the line some room
        lo, hi = lo - max(abs(lo) * 0.1, 1e-12), hi + max(abs(hi) * 0.1, 1e-12)
    span = hi - lo
    lo, hi = lo - 0.06 * span, hi + 0.06 * span
    f0, f1 = float(f[0]), float(f[-1]) if f.size > 1 else float(f[0]) + 1.0

    def px(freq):
        return left + (np.asarray(freq, float) - f0) / (f1 - f0) * pw

    def py(val):
        return top + (hi - np.clip(np.asarray(val, float), lo, hi)) / (hi - lo) * ph

    label = f"{quantity} ({yunit})" if yunit else quantity
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" role="img" font-family="sans-serif" font-size="10">',
           f"<title>{escape(title or label)}</title>",
           f'<rect width="{width}" height="{height}" fill="#ffffff"/>']
    shade = {"pass": "#d5f0dc", "fail": "#f6d3d0", "indeterminate": "#fbe7c2"}
    line = {"pass": "#1e8449", "fail": "#c0392b", "indeterminate": "#b9770e"}
    for op, value, (b0, b1), decision in limits:
        x0, x1 = float(px(max(b0, f0))), float(px(min(b1, f1)))
        out.append(f'<rect x="{_fmt(x0)}" y="{top}" width="{_fmt(max(x1 - x0, 0.5))}" height="{ph}" '
                   f'fill="{shade.get(decision, "#e8e8e8")}"/>')
    out.append(f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="none" stroke="#59606a"/>')
    out.append('<g stroke="#d0d4da" stroke-width="0.6">')
    yticks = _nice_ticks(lo / ys, hi / ys)
    xticks = _nice_ticks(f0 / fs, f1 / fs)
    for t in yticks:
        y = float(py(t * ys))
        out.append(f'<line x1="{left}" y1="{_fmt(y)}" x2="{left + pw}" y2="{_fmt(y)}"/>')
    for t in xticks:
        x = float(px(t * fs))
        out.append(f'<line x1="{_fmt(x)}" y1="{top}" x2="{_fmt(x)}" y2="{top + ph}"/>')
    out.append("</g>")
    out.append('<g fill="#3b4048">')
    for t in yticks:
        out.append(f'<text x="{left - 4}" y="{_fmt(float(py(t * ys)) + 3)}" text-anchor="end">{_tick_text(t)}</text>')
    for t in xticks:
        out.append(f'<text x="{_fmt(float(px(t * fs)))}" y="{top + ph + 13}" text-anchor="middle">{_tick_text(t)}</text>')
    out.append(f'<text x="{left + pw / 2}" y="{height - 6}" text-anchor="middle">frequency ({funit})</text>')
    out.append(f'<text x="12" y="{top + ph / 2}" text-anchor="middle" '
               f'transform="rotate(-90 12 {top + ph / 2})">{escape(label)}</text>')
    out.append("</g>")
    # The curve, broken where the quantity has no value.
    keep = _thin(f.size)
    fk, vk = f[keep], v[keep]
    ok = np.isfinite(vk)
    start = None
    for i in range(len(vk) + 1):
        if i < len(vk) and ok[i]:
            if start is None:
                start = i
        elif start is not None:
            seg = slice(start, i)
            out.append(_polyline(px(fk[seg]), py(vk[seg]), stroke=TRACE_COLOURS[0], stroke_width="1.5"))
            start = None
    for op, value, (b0, b1), decision in limits:
        x0, x1 = float(px(max(b0, f0))), float(px(min(b1, f1)))
        y = float(py(value))
        out.append(f'<line x1="{_fmt(x0)}" y1="{_fmt(y)}" x2="{_fmt(x1)}" y2="{_fmt(y)}" '
                   f'stroke="{line.get(decision, "#59606a")}" stroke-width="1.6" stroke-dasharray="5 3"/>')
        out.append(f'<text x="{_fmt(x1 - 2)}" y="{_fmt(y - 4 if op == "<=" else y + 11)}" text-anchor="end" '
                   f'fill="{line.get(decision, "#59606a")}">{escape(op)} {_tick_text(value / ys)}</text>')
    for wf, wv in worst:
        if math.isfinite(wv):
            out.append(f'<circle cx="{_fmt(float(px(wf)))}" cy="{_fmt(float(py(wv)))}" r="4.5" fill="none" '
                       f'stroke="#c0392b" stroke-width="1.5"/>')
    out.append("</svg>")
    return "\n".join(out)
