"""Speed of solving and applying a one-port calibration on 100 000 points, as a ratio against
scikit-rf's skrf.calibration.OnePort on the same data in the same run (run on demand:
``pytest tests/benchmarks/test_calibration_speed.py -s``)."""

import time
import warnings

import numpy as np
import pytest

from refplane.analysis.calibration.solve import solve_one_port

pytestmark = pytest.mark.benchmark

N = 100_000


def _data(n_standards: int):
    rng = np.random.default_rng(1)
    f = np.linspace(1e6, 6e9, N)
    w = 2 * np.pi * f
    e00 = 0.05 * np.exp(1j * w * 0.3e-9)
    e11 = 0.1 * np.exp(-1j * w * 0.5e-9)
    e10e01 = 0.9 * np.exp(-2j * w * 1e-9)
    ideals = [np.full(N, -1 + 0j), np.full(N, 1 + 0j), np.zeros(N, complex),
              -np.exp(-2j * w * 40e-12), np.exp(-2j * w * 70e-12)][:n_standards]
    noise = lambda: 1e-3 * (rng.normal(size=N) + 1j * rng.normal(size=N))  # noqa: E731
    meas = [e00 + e10e01 * g / (1 - e11 * g) + (noise() if n_standards > 3 else 0) for g in ideals]
    dut = e00 + e10e01 * 0.3 / (1 - e11 * 0.3)
    return f, meas, ideals, dut


def _best(fn, repeats=3):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


@pytest.mark.parametrize("n_standards", [3, 5])
def test_one_port_solve_and_apply_at_least_as_fast_as_scikit_rf(n_standards):
    import skrf as rf

    f, meas, ideals, dut = _data(n_standards)
    fr = rf.Frequency.from_f(f, unit="Hz")
    net = lambda s: rf.Network(frequency=fr, s=s, z0=50)  # noqa: E731
    m_nets, i_nets, dut_net = [net(m) for m in meas], [net(g) for g in ideals], net(dut)
    gm, gd = np.stack(meas, 1), np.stack(ideals, 1)

    def ours():
        terms, _ = solve_one_port(f, gm, gd)
        return terms.correct(dut)

    def theirs():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            cal = rf.calibration.OnePort(measured=m_nets, ideals=i_nets)
            cal.run()
            return cal.apply_cal(dut_net).s[:, 0, 0]

    t_ours, a = _best(ours)
    t_ref, b = _best(theirs)
    assert np.max(np.abs(a - b)) < 1e-9  # the same answer, or the timing means nothing
    ratio = t_ref / t_ours
    print(f"\none-port calibration, {N} points, {n_standards} standards: Refplane {t_ours * 1e3:.1f} ms, "
          f"scikit-rf OnePort {t_ref * 1e3:.1f} ms, Refplane is {ratio:.1f}x as fast")
    assert t_ours <= t_ref
