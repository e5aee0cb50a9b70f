"""Antenna searches and matching on a 100 000-point sweep, against reading every point once.

Run on demand: ``pytest tests/benchmarks/test_antenna_speed.py -s -p no:randomly``. Ratios,
measured in the same run, not absolute times.

The reference is :func:`refplane.analysis.readings.impedance.readout` over every point of the same
sweep (Z, VSWR, return loss, Q … per point): the least the window or the command line does
with a sweep. The resonance search (resonances, best match, the 2:1 and 1.5:1 bands, the
largest |Z|) should cost about as much as that (within 1.25×, room for noise on a shared
machine); designing every matching network (each with its VSWR < 2 band, found outward from
the design frequency, and its part stress) within a few times that. The Bode–Fano fit is
reported beside it.
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from refplane.analysis.antenna.matching import match_sweep
from refplane.analysis.antenna.resonance import analyse
from refplane.analysis.readings.impedance import readout
from refplane.analysis.sweep import Sweep
from timing import paired

pytestmark = pytest.mark.benchmark

N_POINTS = 100_000
REPEATS = 7
TARGET_SEARCH = 1.25
TARGET_MATCH = 8.0


def _paired(reference, candidate, repeats: int = REPEATS) -> tuple[float, float]:
    return paired(reference, candidate, repeats)


def _antenna() -> Sweep:
    """An invented antenna-like load: a series R-L-C with a parallel resonance above it, 1 to 30 MHz."""
    f = np.linspace(1e6, 30e6, N_POINTS)
    w = 2 * np.pi * f
    z = 36 + 1j * w * 2e-6 + 1 / (1j * w * 0.25e-9) + 1 / (1 / 3000 + 1 / (1j * w * 0.5e-6) + 1j * w * 40e-12)
    return Sweep(f, (z - 50) / (z + 50), 50.0)


def test_resonance_search_speed():
    sweep = _antenna()
    g = sweep.reflection(1)
    ref, cand = _paired(lambda: readout(sweep.freq_hz, g, 50.0),
                        lambda: analyse(sweep, 1, vswr_limits=(2.0, 1.5)))
    ratio = cand / ref
    print(f"\nresonance search, {N_POINTS} points: {cand * 1e3:.1f} ms; readout of every point "
          f"{ref * 1e3:.1f} ms; ratio {ratio:.2f} (target ≤ {TARGET_SEARCH})")
    assert ratio <= TARGET_SEARCH


def test_matching_speed():
    sweep = _antenna()
    g = sweep.reflection(1)
    match_sweep(sweep, 7.3e6)      # warm the imports (scipy.optimize for the fit)
    ref, cand = _paired(lambda: readout(sweep.freq_hz, g, 50.0),
                        lambda: match_sweep(sweep, 7.3e6, power_w=100.0, bode_fano_limit=False))
    _, with_fit = _paired(lambda: None, lambda: match_sweep(sweep, 7.3e6, power_w=100.0), repeats=3)
    ratio = cand / ref
    print(f"\nevery matching network, {N_POINTS} points: {cand * 1e3:.1f} ms; readout {ref * 1e3:.1f} ms; "
          f"ratio {ratio:.2f} (target ≤ {TARGET_MATCH}); with the Bode–Fano fit {with_fit * 1e3:.0f} ms")
    assert ratio <= TARGET_MATCH
