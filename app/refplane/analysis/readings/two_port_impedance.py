"""Impedance of a part measured in transmission, between two ports of equal reference Z0.

Two ways of mounting a two-terminal part on a two-port fixture are common practice:

series-through
    The part in series between port 1 and port 2 (the centre conductor runs through it).
    Then S21 = 2·Z0 / (2·Z0 + Z), so **Z = 2·Z0·(1 − S21) / S21**. It suits large
    impedances (small capacitors, large inductors, high-value resistors).
shunt-through
    The part from the through line to ground. Then S21 = 2·Z / (2·Z + Z0), so
    **Z = Z0·S21 / (2·(1 − S21))**. It suits small impedances (decoupling capacitors near
    self-resonance, low ESR, milliohm resistances).

Both follow from the ABCD matrix of a series impedance [[1, Z], [0, 1]] and of a shunt
admittance [[1, 0], [1/Z, 1]] between equal real references (e.g. Pozar, *Microwave
Engineering*, table 4.1 and the ABCD-to-S conversion, table 4.2 — from memory). They assume
the fixture's own lines have been removed (reference plane at the part) and that both
ports share one real Z0.

For fitting, the residual of a through measurement is taken on S21 itself, the measured
quantity. S21 maps to a reflection against an effective reference: series-through
S21 = (1 − Γ(Z; 2·Z0))/2, shunt-through S21 = (1 + Γ(Z; Z0/2))/2, where
Γ(Z; Zr) = (Z − Zr)/(Z + Zr). :func:`through_reference` gives that Zr and the scale.
"""

from __future__ import annotations

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: The two transmission mountings, as the command line names them.
THROUGH_KINDS = ("series", "shunt")


def _check_kind(kind: str) -> str:
    if kind not in THROUGH_KINDS:
        raise AnalysisError(f"unknown through mounting {kind!r}; use 'series' or 'shunt'")
    return kind


def series_through_z(s21, z0_ohm: float = 50.0) -> np.ndarray:
    """Impedance of a part in series between two ports: Z = 2·Z0·(1 − S21)/S21.

    S21 = 0 (no transmission: an open part) gives ``inf``.

    Examples
    --------
    >>> complex(series_through_z(2 / 3, 50.0))   # 50 Ω in series: S21 = 100/150
    (50+0j)
    """
    s = np.asarray(s21, dtype=np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = 2.0 * z0_ohm * (1.0 - s) / s
    return np.where(s == 0, complex(np.inf, 0.0), z)


def shunt_through_z(s21, z0_ohm: float = 50.0) -> np.ndarray:
    """Impedance of a part shunting a through line to ground: Z = Z0·S21/(2·(1 − S21)).

    S21 = 1 (the part is not there: an open) gives ``inf``.

    Examples
    --------
    >>> round(complex(shunt_through_z(2 / 3, 50.0)).real, 9)   # 50 Ω to ground: S21 = 100/150
    50.0
    """
    s = np.asarray(s21, dtype=np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = z0_ohm * s / (2.0 * (1.0 - s))
    return np.where(s == 1, complex(np.inf, 0.0), z)


def through_s21(z_ohm, kind: str, z0_ohm: float = 50.0) -> np.ndarray:
    """The S21 a part of impedance ``z_ohm`` gives in the ``kind`` mounting (the inverse)."""
    z = np.asarray(z_ohm, dtype=np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        if _check_kind(kind) == "series":
            s = 2.0 * z0_ohm / (2.0 * z0_ohm + z)
            return np.where(np.isinf(z), 0j, s)
        s = 2.0 * z / (2.0 * z + z0_ohm)
        return np.where(np.isinf(z), 1.0 + 0j, s)


def through_reference(kind: str, z0_ohm: float = 50.0) -> tuple[float, float]:
    """(Zr, scale) with |ΔS21| = scale·|ΔΓ(Z; Zr)| for the ``kind`` mounting (see module notes)."""
    if _check_kind(kind) == "series":
        return 2.0 * z0_ohm, 0.5
    return 0.5 * z0_ohm, 0.5


def through_impedance(sweep: Sweep, kind: str, *, drive_port: int = 1) -> tuple[np.ndarray, np.ndarray, float]:
    """Impedance of the part from a 2-port sweep's transmission.

    Parameters
    ----------
    sweep : Sweep
        A 2-port sweep with equal, real reference impedances on both ports.
    kind : {"series", "shunt"}
        How the part was mounted (see the module notes for the formulas).
    drive_port : {1, 2}
        1 uses S21 (port 1 drives), 2 uses S12. S21 is the default because low-cost
        analyzers measuring one direction only leave S12 empty.

    Returns
    -------
    (s_thru, z_ohm, z0_ohm)
        The transmission used, the impedance per point, and the common real Z0.

    Raises
    ------
    AnalysisError
        For a sweep that is not 2-port, unequal or complex references, or a bad port.
    """
    _check_kind(kind)
    if sweep.n_ports != 2:
        raise AnalysisError(
            f"a {kind}-through fit needs a 2-port sweep; this one has {sweep.n_ports} port(s)",
            file=sweep.source)
    sweep.check_port(drive_port)
    z0 = sweep.z0_ohm
    if not np.allclose(z0, z0[0], rtol=1e-12) or abs(z0[0].imag) > 1e-12 * abs(z0[0]):
        raise AnalysisError(
            "a through fit needs both ports referred to one real impedance; "
            f"this sweep has {', '.join(f'{complex(v):g}' for v in z0)} Ω", file=sweep.source)
    z0_ohm = float(z0[0].real)
    s = sweep.s[:, 1, 0] if drive_port == 1 else sweep.s[:, 0, 1]
    z = series_through_z(s, z0_ohm) if kind == "series" else shunt_through_z(s, z0_ohm)
    return np.asarray(s), z, z0_ohm
