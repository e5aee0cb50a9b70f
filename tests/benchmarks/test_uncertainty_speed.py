"""Uncertainty of every point of a 5 000-point sweep, as ratios measured in one run.

Run on demand: ``pytest tests/benchmarks/test_uncertainty_speed.py -s``.

Targets
-------
1. Linear propagation (every readout, the exact 95 % half-width of the linearised output) at
   least 5× faster than a plain Monte Carlo of the same model with 2 000 draws per point —
   the reason for propagating linearly by default (JCGM 101 would otherwise be the only way).
2. The automatic choice (linear, Monte Carlo at the points where the linearisation is poor)
   within 1.5× of the plain Monte Carlo on a sweep where about half the points need it.
"""

import time

import numpy as np
import pytest

from refplane.analysis.sweep import Sweep
from refplane.analysis.uncertainty.reading import UncertaintyOptions, uncertain_points
from refplane.analysis.uncertainty.residual import parse_residual

pytestmark = pytest.mark.benchmark

N = 5000


def _sweep():
    f = np.linspace(1e6, 1e9, N)
    z = 75 + 2j * np.pi * f * 9e-9  # a leaded resistor: X near zero at the bottom of the band
    return Sweep(f, (z - 50) / (z + 50), 50.0)


def _best(fn, repeats=2):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def test_linear_and_auto_against_plain_monte_carlo():
    sw = _sweep()
    spec = parse_residual("40dB,35dB,0.1dB")

    def run(method):
        return lambda: uncertain_points(sw, sw.freq_hz, options=UncertaintyOptions(
            residual=spec, noise=0.001, interpolation=False, method=method, draws=2000))

    t_lin, _ = _best(run("linear"))
    t_auto, auto = _best(run("auto"))
    t_mc, _ = _best(run("monte-carlo"), repeats=1)
    share = np.mean([m == "monte-carlo" for m in auto.method])
    print(f"\n{N} points: linear {t_lin:.2f} s, auto {t_auto:.2f} s ({share:.0%} by Monte Carlo), "
          f"Monte Carlo (2000 draws) {t_mc:.2f} s; linear {t_mc / t_lin:.1f}x faster")
    assert t_lin * 5 <= t_mc
    assert t_auto <= 1.5 * t_mc
