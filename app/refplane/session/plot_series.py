"""What each companion plot shows, as arrays computed by the analysis layer (no Qt here).

Each quantity maps a sweep and a reflection port to one or more named curves over
frequency. The values come from :mod:`refplane.analysis.readings.impedance`, the same functions the
marker readouts use, so a plot and the marker table agree at every swept point.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from refplane.analysis.sweep import Sweep


@dataclass(frozen=True)
class Curve:
    """One curve of a plot."""

    label: str
    """Legend text ("R", "X", "|S21|")."""
    y: np.ndarray
    """Values, one per swept frequency."""
    dashed: bool = False
    """Drawn dashed (the second curve of a pair, e.g. X beside R)."""
    freq_hz: np.ndarray | None = None
    """Its own frequencies, when not the sweep's (a comparison keeps only those both cover)."""


@dataclass(frozen=True)
class Quantity:
    """A plot the user can choose."""

    key: str
    """Stable identifier (settings, tests)."""
    title: str
    """Shown in the chooser."""
    axis: str
    """Y-axis name."""
    unit: str
    """Y-axis unit ("dB", "Ω", "°" or "")."""
    two_port: bool = False
    """Only offered for sweeps with two or more ports."""
    needs_memory: bool = False
    """Shows each trace relative to the stored trace (trace memory)."""


QUANTITIES = (
    Quantity("return_loss", "Return loss", "Return loss", "dB"),
    Quantity("vswr", "VSWR", "VSWR", ""),
    Quantity("r_x", "Resistance and reactance", "R, X", "Ω"),
    Quantity("z_mag", "|Z|", "|Z|", "Ω"),
    Quantity("phase", "Phase of reflection", "∠Γ", "°"),
    Quantity("s21_db", "Transmission |S21|", "|S21|", "dB", two_port=True),
    Quantity("s21_phase", "Phase of S21", "∠S21", "°", two_port=True),
    Quantity("memory_db", "Relative to memory, dB", "Γ − memory", "dB", needs_memory=True),
    Quantity("memory_deg", "Relative to memory, phase", "∠Γ − ∠memory", "°", needs_memory=True),
    Quantity("memory_ratio", "Divided by memory", "|Γ ÷ memory|", "", needs_memory=True),
)

BY_KEY = {q.key: q for q in QUANTITIES}


def curves(sweep: Sweep, port: int, key: str, *, memory: Sweep | None = None) -> tuple[Curve, ...]:
    """The curves of quantity ``key`` for ``sweep``'s reflection at ``port`` (empty if not applicable).

    The quantities relative to the memory need ``memory`` (a stored 1-port reflection); they
    are computed by :func:`refplane.analysis.readings.trace_math.relative_to` on the memory's
    frequencies, inside the band both cover, and are empty without a memory or overlap.
    """
    from refplane.analysis.readings import impedance as imp

    if BY_KEY[key].needs_memory:
        return _relative(sweep, port, key, memory)
    g = sweep.reflection(port)
    z0 = sweep.z0_ohm[port - 1]
    with np.errstate(all="ignore"):
        if key == "return_loss":
            return (Curve(f"RL S{port}{port}", imp.return_loss_db(g)),)
        if key == "vswr":
            return (Curve(f"VSWR S{port}{port}", imp.vswr(g)),)
        if key == "r_x":
            z = imp.gamma_to_z(g, z0)
            return (Curve("R", z.real), Curve("X", z.imag, dashed=True))
        if key == "z_mag":
            return (Curve("|Z|", np.abs(imp.gamma_to_z(g, z0))),)
        if key == "phase":
            return (Curve(f"∠S{port}{port}", np.degrees(np.angle(g))),)
        if sweep.n_ports < 2:
            return ()
        s21 = sweep.s[:, 1, 0]
        if key == "s21_db":
            # 20·log10|S21| is minus the "return loss" formula applied to S21.
            return (Curve("|S21|", -imp.return_loss_db(s21)),)
        if key == "s21_phase":
            return (Curve("∠S21", np.degrees(np.angle(s21))),)
    raise KeyError(key)


def _relative(sweep: Sweep, port: int, key: str, memory: Sweep | None) -> tuple[Curve, ...]:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.readings.trace_math import relative_to

    if memory is None:
        return ()
    one = Sweep(freq_hz=sweep.freq_hz, s=sweep.s[:, port - 1, port - 1].reshape(-1, 1, 1),
                z0_ohm=sweep.z0_ohm[port - 1:port], name=sweep.name)
    try:
        rel = relative_to(one, memory, grid="reference")
    except AnalysisError:
        return ()  # no frequencies in common: nothing to show for this trace
    if key == "memory_db":
        return (Curve(f"Δ|S{port}{port}|", rel.difference_db[:, 0, 0], freq_hz=rel.freq_hz),)
    if key == "memory_deg":
        return (Curve(f"Δ∠S{port}{port}", rel.difference_deg[:, 0, 0], freq_hz=rel.freq_hz),)
    return (Curve(f"|S{port}{port} ÷ memory|", np.abs(rel.ratio[:, 0, 0]), freq_hz=rel.freq_hz),)


def finite_for_plot(x: np.ndarray, y: np.ndarray, log_x: bool) -> tuple[np.ndarray, np.ndarray]:
    """Make arrays drawable: non-finite y (an ideal open, a perfect match) becomes a gap (NaN),
    and points at x ≤ 0 are dropped on a log axis."""
    y = np.where(np.isfinite(y), y, np.nan)
    if log_x:
        keep = x > 0
        return x[keep], y[keep]
    return x, y
