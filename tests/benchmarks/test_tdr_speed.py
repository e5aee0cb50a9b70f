"""A 10 001-point sweep to the time domain (window, resampling, DC, events) and gated, against a bare
numpy FFT pipeline doing the same resampling, windowing and transforms.

Run on demand: ``pytest tests/benchmarks/test_tdr_speed.py -s -p no:randomly``. The ratio is
measured in the same run; absolute times are printed for the README's table.
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from refplane.analysis.lines.time_domain import gate, prepare_gate, time_response
from refplane.analysis.sweep import Sweep
from timing import paired

pytestmark = pytest.mark.benchmark

N_POINTS = 10_001
REPEATS = 15
TARGET_RATIO = 3.0
C = 299_792_458.0


def _paired(reference, candidate, repeats: int = REPEATS) -> tuple[float, float]:
    return paired(reference, candidate, repeats)


def _sweep() -> Sweep:
    # A cable with a joint at 1 m and a device at 3 m, swept 10 MHz … 3 GHz (not a harmonic grid,
    # so the low-pass transform resamples and extrapolates DC).
    f = np.linspace(10e6, 3e9, N_POINTS)
    t1, t2 = 2 * 1.0 / (0.66 * C), 2 * 3.0 / (0.66 * C)
    gamma = 0.1 * np.exp(-2j * np.pi * f * t1) + 0.4 * np.exp(-2j * np.pi * f * t2) * np.exp(-f / 1e10)
    return Sweep(f, gamma, 50.0, name="bench")


def _bare(f: np.ndarray, gamma: np.ndarray, near_s: float, far_s: float) -> None:
    """The same numerical steps, written as plainly as numpy allows (no checks, no events)."""
    n = f.size
    df = (f[-1] - f[0]) / (n - 1)
    # strongest event (band-pass, Kaiser), for the delay-compensated resampling
    size = 4 * n
    k = int(np.argmax(np.abs(np.fft.ifft(gamma * np.kaiser(n, 6.0), size))))
    t_c = k / (size * df)
    u = gamma * np.exp(2j * np.pi * t_c * f)
    kk = int(round(f[-1] / df))
    grid = (f[-1] / kk) * np.arange(kk + 1)
    line = np.polyfit(f[:5], u[:5], 1)
    fx, fu = np.r_[0.0, f], np.r_[line[-1].real, u]
    values = (np.interp(grid, fx, fu.real) + 1j * np.interp(grid, fx, fu.imag)) * np.exp(-2j * np.pi * t_c * grid)
    w = np.kaiser(2 * kk + 1, 6.0)[kk:]
    raw = np.fft.irfft(values * w, 8 * kk)
    np.cumsum(raw)
    # gating: band-pass on the sweep's points, gate, back, divide by the gate's unit response
    w = np.kaiser(n, 6.0)
    t = np.arange(size) / (size * df)
    g = ((t >= near_s) & (t <= far_s)).astype(float)
    padded = np.zeros(size, complex)
    padded[:n] = gamma * w
    gated = np.fft.fft(np.fft.ifft(padded) * g)[:n]
    padded[:n] = w
    ref = np.fft.fft(np.fft.ifft(padded) * g)[:n]
    gated / ref


def test_time_domain_with_window_and_gating_within_target_of_bare_numpy():
    sweep = _sweep()
    near, far = 2.5, 3.5
    scale = 0.66 * C / 2

    def ours():
        time_response(sweep, mode="lowpass", window="kaiser", velocity_factor=0.66)
        gate(sweep, near, far, velocity_factor=0.66, window="kaiser")

    def bare():
        _bare(sweep.freq_hz, sweep.reflection(1), near / scale, far / scale)

    ours()                      # first call: imports and the window's cached figures
    ref_s, ours_s = _paired(bare, ours)
    ratio = ours_s / ref_s
    print(f"\n{N_POINTS}-point sweep → low-pass time domain + gate: Refplane {ours_s * 1e3:.1f} ms, "
          f"bare numpy {ref_s * 1e3:.1f} ms, ratio {ratio:.2f} (target ≤ {TARGET_RATIO})")
    assert ratio <= TARGET_RATIO


def test_dragging_a_gate_within_target_of_bare_numpy():
    # Per drag step: the gate shape at the new span, the gated transform back, the renormalising
    # unit response — against the same products and FFTs in bare numpy.
    sweep = _sweep()
    plan = prepare_gate(sweep)
    scale = 0.66 * C / 2
    n, size = sweep.freq_hz.size, plan.size
    dt = 1.0 / (plan.step_hz * size)
    t = np.arange(size) * dt
    spans = [(2.4 + 0.01 * i, 3.4 + 0.01 * i) for i in range(REPEATS)]
    state = {"i": 0}

    def ours():
        near, far = spans[state["i"] % REPEATS]
        plan.apply(near, far, velocity_factor=0.66)

    def bare():
        near, far = spans[state["i"] % REPEATS]
        state["i"] += 1
        g = ((t >= near / scale) & (t <= far / scale)).astype(float)
        gated = np.fft.fft(plan.response * g)[:n]
        half = 0.5 * (far - near) / scale
        g0 = (np.abs(np.where(t > 0.5 / plan.step_hz, t - 1.0 / plan.step_hz, t)) <= half).astype(float)
        gated / np.fft.fft(plan.unit_response * g0)[:n]

    ours()
    ref_s, ours_s = _paired(bare, ours)
    ratio = ours_s / ref_s
    print(f"\ngate drag step on {N_POINTS} points: Refplane {ours_s * 1e3:.1f} ms, bare numpy {ref_s * 1e3:.1f} ms, "
          f"ratio {ratio:.2f} (target ≤ {TARGET_RATIO})")
    assert ratio <= TARGET_RATIO
