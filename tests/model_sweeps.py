"""Sweeps for the window tests, made from closed-form models (no invented measurements)."""

from __future__ import annotations

import numpy as np
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep


def resistor_with_leads(n: int = 201, f1: float = 1e6, f2: float = 1e9, r_ohm: float = 75.0,
                        l_h: float = 9e-9, name: str = "r75") -> Sweep:
    """Γ of Z = R + jωL against 50 Ω (a leaded resistor: common practice, see references.md)."""
    f = np.linspace(f1, f2, n)
    z = r_ohm + 1j * 2 * np.pi * f * l_h
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name=name)


def series_rc(n: int = 101, f1: float = 10e6, f2: float = 500e6, r_ohm: float = 20.0,
              c_f: float = 10e-12, name: str = "rc") -> Sweep:
    """Γ of Z = R + 1/(jωC) against 50 Ω (series RC, closed form)."""
    f = np.linspace(f1, f2, n)
    z = r_ohm + 1 / (1j * 2 * np.pi * f * c_f)
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name=name)


def two_port_attenuator(n: int = 51, name: str = "pad") -> Sweep:
    """A matched 2-port with |S21| = −6 dB and a 1 ns delay (S11 = S22 = small resistive mismatch)."""
    f = np.linspace(10e6, 1e9, n)
    s = np.zeros((n, 2, 2), complex)
    s21 = 10 ** (-6 / 20) * np.exp(-2j * np.pi * f * 1e-9)
    s[:, 0, 0] = z_to_gamma(60.0, 50.0)
    s[:, 1, 1] = z_to_gamma(40.0, 50.0)
    s[:, 1, 0] = s[:, 0, 1] = s21
    return Sweep(freq_hz=f, s=s, z0_ohm=50.0, name=name)


def write_sweep(sweep: Sweep, path) -> str:
    """Write a sweep as Touchstone with Refplane's writer (RI, GHz, version 1.1)."""
    from refplane.analysis.files.touchstone import write

    return str(write(sweep, path, fmt="RI", comments=("test sweep made from a closed-form model",)))
