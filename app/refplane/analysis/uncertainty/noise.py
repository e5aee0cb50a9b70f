"""Trace noise: how much a reflection reading scatters from sweep to sweep.

From one sweep (the default)
----------------------------
The second difference of neighbouring points, d_i = Γ_(i−1) − 2·Γ_i + Γ_(i+1), cancels
everything that varies smoothly (a straight line exactly, a gently curving trace nearly),
and leaves white noise of standard deviation σ per axis as noise of variance
(1 + 4 + 1)·σ² = 6σ²; the k-th difference leaves C(2k, k)·σ² (the sum of its squared
binomial weights). The robust scatter (median absolute deviation × 1.4826, the normal
consistency constant) of the real and the imaginary parts of the k-th difference, pooled,
divided by √C(2k, k), estimates σ. A trace that turns quickly between points (a long cable
before the port turns Γ by a sizeable angle φ per point) leaves about φ^k of itself in the
k-th difference, so the estimate is taken for k = 2 … 6 and the smallest kept: a gently
curving trace reads on the second difference, a fast-turning one on a higher one. What is
left is an upper bound. (Difference-based noise estimators are common practice in signal
processing; the variances follow from the variance of a sum of independent terms.)

From repeated sweeps
--------------------
Several sweeps of the same device give σ directly at every frequency: the sample standard
deviation of the real and imaginary parts, pooled over both axes (n − 1 degrees of freedom
each).
"""

from __future__ import annotations

import math
from typing import Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError

#: Median absolute deviation → standard deviation for normal data.
MAD_TO_SIGMA = 1.4826


def trace_noise(gamma) -> float:
    """Standard deviation per axis of the noise on a trace, from its second differences.

    Parameters
    ----------
    gamma : array_like of complex, shape (n,)
        One reflection trace, n ≥ 5 points.

    Returns
    -------
    float
        σ per axis (real or imaginary part); 0.0 for a trace with no scatter at all.
    """
    g = np.asarray(gamma, dtype=np.complex128).reshape(-1)
    g = g[np.isfinite(g)]
    if g.size < 5:
        raise AnalysisError("at least 5 points are needed to estimate the trace noise")
    best = math.inf
    d = g
    for order in range(1, 7):
        d = np.diff(d)
        if order < 2:
            continue
        if d.size < 3:
            break
        parts = np.concatenate([d.real, d.imag])
        mad = np.median(np.abs(parts - np.median(parts)))
        best = min(best, MAD_TO_SIGMA * mad / math.sqrt(math.comb(2 * order, order)))
    return float(best)


def repeat_noise(traces: Sequence) -> np.ndarray:
    """σ per axis at every frequency from repeated sweeps of one device (shape (n,)).

    Parameters
    ----------
    traces : sequence of array_like, each shape (n,)
        Two or more reflection traces on the same frequencies.
    """
    stack = np.asarray([np.asarray(t, dtype=np.complex128) for t in traces])
    if stack.ndim != 2 or stack.shape[0] < 2:
        raise AnalysisError("repeated sweeps: give at least two traces of one length")
    var = (np.var(stack.real, axis=0, ddof=1) + np.var(stack.imag, axis=0, ddof=1)) / 2
    return np.sqrt(var)


def interpolation_bound(freq_hz, gamma, at_hz) -> np.ndarray:
    """Largest error of linear interpolation between swept points, at ``at_hz``.

    Between points i and i+1 with t = (f − f_i)/(f_(i+1) − f_i), linear interpolation errs by
    t·(1 − t)/2 · h²·Γ'' (the textbook remainder of linear interpolation), and h²·Γ'' is
    estimated by the larger of the second differences at i and i+1. At a swept point the
    bound is 0. (See :mod:`refplane.analysis.readings.markers` for the same bound written for a trace
    turning by Δθ per point.)
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    g = np.asarray(gamma, dtype=np.complex128)
    at = np.atleast_1d(np.asarray(at_hz, dtype=np.float64))
    if f.size < 3:
        return np.zeros(at.shape)
    d2 = np.zeros(f.size)
    d2[1:-1] = np.abs(g[:-2] - 2 * g[1:-1] + g[2:])
    d2[0], d2[-1] = d2[1], d2[-2]
    right = np.clip(np.searchsorted(f, at, side="right"), 1, f.size - 1)
    left = right - 1
    t = np.clip((at - f[left]) / (f[right] - f[left]), 0.0, 1.0)
    bound = t * (1 - t) / 2 * np.maximum(d2[left], d2[right])
    exact = (f[left] == at) | (f[right] == at)
    return np.where(exact, 0.0, bound)
