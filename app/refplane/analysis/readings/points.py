"""One path from a sweep to the numbers people read: the window's marker table, the command
line's table and JSON, and the legend of a rendered chart all read their values through
:func:`read_points`, so they cannot disagree. Turning them into text is
:mod:`refplane.session.present`'s job."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from refplane.analysis.readings.impedance import Readout, readout
from refplane.analysis.readings.markers import gamma_at
from refplane.analysis.sweep import Sweep


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
