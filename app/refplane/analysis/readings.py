"""One path from a sweep to the numbers people read: the window's marker table, the command
line's table and JSON, and the legend of a rendered chart all come through here, so they
cannot disagree."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from refplane.analysis.impedance import Readout, readout
from refplane.analysis.markers import gamma_at
from refplane.analysis.sweep import Sweep
from refplane.analysis.units import format_frequency, format_si


@dataclass(frozen=True)
class PointReadings:
    """Readouts of one port of a sweep at chosen frequencies."""

    port: int
    z0_ohm: float
    freq_hz: np.ndarray
    gamma: np.ndarray
    readout: Readout


def read_points(sweep: Sweep, at_hz: Sequence[float] | np.ndarray, port: int = 1) -> PointReadings:
    """Interpolate ``port``'s reflection at ``at_hz`` and compute every readout.

    Raises
    ------
    AnalysisError
        For a port the sweep does not have, or a frequency outside the sweep.
    """
    sweep.check_port(port)
    at = np.atleast_1d(np.asarray(at_hz, dtype=np.float64))
    gamma = np.atleast_1d(gamma_at(sweep, at, port))
    z0 = float(sweep.z0_ohm[port - 1].real)
    return PointReadings(port=port, z0_ohm=z0, freq_hz=at, gamma=gamma,
                         readout=readout(at, gamma, z0))


def _num(value: float, unit: str, decimals: int = 2) -> str:
    if math.isnan(value):
        return "—"
    if math.isinf(value):
        return f"{'−∞' if value < 0 else '∞'} {unit}".strip()
    text = f"{value:,.{decimals}f}".replace(",", " ").replace("-", "−")
    return f"{text} {unit}".strip()


def series_part(r: Readout) -> tuple[str, str]:
    """The equivalent series element as (label, value): ("L", "9.14 nH") or ("C", "3.39 pF")."""
    if not math.isnan(r.series_l_h):
        return "L", format_si(r.series_l_h, "H", 4)
    if not math.isnan(r.series_c_f):
        return "C", format_si(r.series_c_f, "F", 4)
    return "L/C", "—"


def _u_decimals(u: float) -> int:
    """Decimal places that show an expanded uncertainty to one significant figure, or two when
    its first digit is 1 or 2 (GUM, JCGM 100, 7.2.6: at most two significant figures)."""
    exponent = math.floor(math.log10(u))
    lead = u / 10**exponent
    return max(0, -exponent + (1 if lead < 2.95 else 0))


def format_pm(value: float, u: float | None, unit: str, *, si: bool = False) -> str:
    """A value with its expanded uncertainty: "77.6 ± 0.8 Ω", "8.92 nH ± 0.31 nH".

    The value is rounded to the uncertainty's last shown digit. Without a finite ``u`` the
    plain value is returned (as :func:`_num` or :func:`format_si` would show it).

    Examples
    --------
    >>> format_pm(77.634, 0.81, "Ω")
    '77.6 ± 0.8 Ω'
    >>> format_pm(8.923e-9, 0.27e-9, "H", si=True)
    '8.92 nH ± 0.27 nH'
    """
    if u is None or not math.isfinite(u) or not math.isfinite(value):
        return format_si(value, unit, 4) if si else _num(value, unit)
    if si:
        number, _, prefixed = format_si(value, unit, 6).partition(" ")
        scale = value / float(number) if float(number) != 0 else 1.0
        scale = abs(scale)
    else:
        prefixed, scale = unit, 1.0
    shown_u = u / scale
    if shown_u == 0:
        return f"{_num(value / scale, prefixed, 4)} ± 0"
    d = _u_decimals(shown_u)
    v_text = f"{value / scale:,.{d}f}".replace(",", " ").replace("-", "−")
    u_text = f"{shown_u:.{d}f}"
    if si:
        return f"{v_text} {prefixed} ± {u_text} {prefixed}".strip()
    return f"{v_text} ± {u_text} {unit}".strip()


def readout_cells(r: Readout, u: dict | None = None) -> dict[str, str]:
    """A single-point readout as ordered display cells, label → text with scaled units.

    ``u`` (optional): expanded uncertainties keyed like :meth:`Readout.json_point`
    (e.g. ``ReadoutUncertainty.json_point()``); the cells then read "77.6 ± 0.8 Ω".
    """
    if u is not None:
        return _cells_with_u(r, u)
    kind, value = series_part(r)
    return {
        "Frequency": format_frequency(r.freq_hz),
        "R": _num(r.r_ohm, "Ω"),
        "X": _num(r.x_ohm, "Ω"),
        "Series L/C": f"{kind} {value}" if value != "—" else "—",
        "|Z|": _num(r.z_mag_ohm, "Ω"),
        "|Γ|": _num(r.gamma_mag, "", 4),
        "∠Γ": _num(r.gamma_deg, "°", 1),
        "VSWR": _num(r.vswr, "", 3),
        "Return loss": _num(r.return_loss_db, "dB"),
        "Q": _num(r.q, "", 3),
        "Parallel R": _num(r.parallel_r_ohm, "Ω"),
        "Parallel X": _num(r.parallel_x_ohm, "Ω"),
    }


def summary_line(r: Readout) -> str:
    """A one-line reading for legends: "470 MHz: 75.20 Ω + j27.01 Ω (L 9.146 nH), VSWR 1.81"."""
    kind, value = series_part(r)
    if math.isinf(r.r_ohm):
        z = "open (Z = ∞)"
    else:
        sign = "+" if r.x_ohm >= 0 else "−"
        z = f"{_num(r.r_ohm, 'Ω')} {sign} j{_num(abs(r.x_ohm), 'Ω')}"
    series = f" ({kind} {value})" if value != "—" else ""
    return f"{format_frequency(r.freq_hz)}: {z}{series}, VSWR {_num(r.vswr, '', 2)}"


def _cells_with_u(r: Readout, u: dict) -> dict[str, str]:
    def pm(key, unit, si=False):
        return format_pm(getattr(r, key), u.get(key), unit, si=si)

    if not math.isnan(r.series_l_h):
        series = f"L {pm('series_l_h', 'H', True)}"
    elif not math.isnan(r.series_c_f):
        series = f"C {pm('series_c_f', 'F', True)}"
    else:
        series = "—"
    return {
        "Frequency": format_frequency(r.freq_hz),
        "R": pm("r_ohm", "Ω"),
        "X": pm("x_ohm", "Ω"),
        "Series L/C": series,
        "|Z|": pm("z_mag_ohm", "Ω"),
        "|Γ|": pm("gamma_mag", ""),
        "∠Γ": pm("gamma_deg", "°"),
        "VSWR": pm("vswr", ""),
        "Return loss": pm("return_loss_db", "dB"),
        "Q": pm("q", ""),
        "Parallel R": pm("parallel_r_ohm", "Ω"),
        "Parallel X": pm("parallel_x_ohm", "Ω"),
    }


def summary_line_with_u(r: Readout, u: dict) -> str:
    """"470 MHz: 77.6 Ω ± 0.8 Ω + j26.4 Ω ± 0.9 Ω (L 8.92 nH ± 0.31 nH), VSWR 1.81 ± 0.02 (k = 2)"."""
    if math.isinf(r.r_ohm):
        return summary_line(r)
    sign = "+" if r.x_ohm >= 0 else "−"
    rx = format_pm(r.r_ohm, u.get("r_ohm"), "Ω")
    xx = format_pm(abs(r.x_ohm), u.get("x_ohm"), "Ω")
    if not math.isnan(r.series_l_h):
        series = f" (L {format_pm(r.series_l_h, u.get('series_l_h'), 'H', si=True)})"
    elif not math.isnan(r.series_c_f):
        series = f" (C {format_pm(r.series_c_f, u.get('series_c_f'), 'F', si=True)})"
    else:
        series = ""
    return (f"{format_frequency(r.freq_hz)}: {rx} {sign} j{xx}{series}, "
            f"VSWR {format_pm(r.vswr, u.get('vswr'), '')} (k = 2)")
