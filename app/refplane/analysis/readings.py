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


#: Shown where a reading is not defined because the load reflects more than it receives.
NOT_PASSIVE = "n/a (|Γ| > 1)"


def _passive_only(r: Readout, value: float, unit: str, decimals: int) -> str:
    # VSWR and mismatch loss are defined for passive loads only (|Γ| ≤ 1).
    return NOT_PASSIVE if r.gamma_mag > 1 else _num(value, unit, decimals)


def readout_cells(r: Readout) -> dict[str, str]:
    """A single-point readout as ordered display cells, label → text with scaled units."""
    kind, value = series_part(r)
    return {
        "Frequency": format_frequency(r.freq_hz),
        "R": _num(r.r_ohm, "Ω"),
        "X": _num(r.x_ohm, "Ω"),
        "Series L/C": f"{kind} {value}" if value != "—" else "—",
        "|Z|": _num(r.z_mag_ohm, "Ω"),
        "|Γ|": _num(r.gamma_mag, "", 4),
        "∠Γ": _num(r.gamma_deg, "°", 1),
        "VSWR": _passive_only(r, r.vswr, "", 3),
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
    return f"{format_frequency(r.freq_hz)}: {z}{series}, VSWR {_passive_only(r, r.vswr, '', 2)}"
