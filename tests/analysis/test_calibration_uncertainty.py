"""Uncertainty propagated from a calibration's standards, against scikit-rf's
skrf.calibration.OnePort solved on Monte Carlo draws of the standards (JCGM 101), and the
calibration file round trip."""

import dataclasses
import warnings

import numpy as np
import pytest

from refplane.analysis.calibration.calfile import calibration_from_json, calibration_to_json
from refplane.analysis.calibration.solve import calibrate
from refplane.analysis.calibration.standards import Standard, StandardSet, reflection, standards_from_json
from refplane.analysis.sweep import Sweep
from refplane.analysis.uncertainty.calprop import calibration_uncertainty, definition_uncertainties

N = 11
F = np.linspace(100e6, 3e9, N)
W = 2 * np.pi * F
BOX = (0.05 * np.exp(1j * W * 0.2e-9), 0.1 * np.exp(-1j * W * 0.3e-9), 0.9 * np.exp(-2j * W * 0.8e-9))
SIGMA = 0.002

KIT = {
    "format": "refplane-standards", "version": 1, "name": "test kit (invented)",
    "short": {"l0_h": 5e-12, "l0_h_u": 3e-12, "offset_delay_s": 30e-12, "offset_delay_s_u": 1.5e-12},
    "open": {"c0_f": 50e-15, "c0_f_u": 8e-15, "offset_delay_s": 30e-12, "offset_delay_s_u": 1.5e-12},
    "load": {"r_ohm": 50.0, "r_ohm_u": 0.6},
}


def raw(gamma):
    e00, e11, t = (b.reshape((-1,) + (1,) * (np.ndim(gamma) - 1)) for b in BOX)
    return e00 + t * gamma / (1 - e11 * gamma)


def test_u_keys_are_read_from_the_standards_file():
    std = standards_from_json(KIT)
    assert definition_uncertainties(std.open) == {"c0_f": 8e-15, "offset_delay_s": 1.5e-12}
    assert definition_uncertainties(std.load) == {"r_ohm": 0.6}
    assert std.open.c0_f == 50e-15


def test_propagated_uncertainty_matches_scikit_rf_on_monte_carlo_draws():
    import skrf as rf

    std = standards_from_json(KIT)
    names = ("short", "open", "load")
    nominal = {n: reflection(std.reflect(n), F) for n in names}
    measured = {n: Sweep(F, raw(nominal[n]), 50.0, name=n) for n in names}
    cu = calibration_uncertainty(measured, std, noise=SIGMA)

    dut = 0.4 * np.exp(1j * W * 0.5e-9)
    dut_raw = raw(dut)
    rng = np.random.default_rng(4)
    fr = rf.Frequency.from_f(F, unit="Hz")
    net = lambda s: rf.Network(frequency=fr, s=s.reshape(-1, 1, 1), z0=50)  # noqa: E731
    ideals = [net(nominal[n]) for n in names]
    draws = 300
    errors = np.empty((draws, N), complex)
    for d in range(draws):
        truth = {}
        for n in names:
            s = std.reflect(n)
            changes = {k: getattr(s, k) if getattr(s, k) is not None else 50.0 for k in definition_uncertainties(s)}
            changes = {k: v + u * rng.standard_normal() for (k, v), u in zip(changes.items(),
                                                                            definition_uncertainties(s).values())}
            truth[n] = reflection(dataclasses.replace(s, **changes), F)
        meas = [net(raw(truth[n]) + SIGMA * (rng.standard_normal(N) + 1j * rng.standard_normal(N)))
                for n in names]
        # Reference: skrf.calibration.OnePort with the nominal definitions (what the user believes).
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            cal = rf.calibration.OnePort(measured=meas, ideals=ideals)
            errors[d] = cal.apply_cal(net(dut_raw)).s[:, 0, 0] - dut
    sample = np.array([np.cov(np.stack([errors[:, i].real, errors[:, i].imag])) for i in range(N)])
    ours = cu.gamma_cov(dut)
    u_ref = np.sqrt(np.trace(sample, axis1=1, axis2=2))
    u_ours = np.sqrt(np.trace(ours, axis1=1, axis2=2))
    # 300 draws estimate a standard deviation to about ±4 % (1/√(2·300)); allow 15 %.
    assert np.allclose(u_ours, u_ref, rtol=0.15), np.c_[u_ours, u_ref]


def test_saved_calibration_keeps_its_uncertainty():
    std = standards_from_json(KIT)
    names = ("short", "open", "load")
    measured = {n: Sweep(F, raw(reflection(std.reflect(n), F)), 50.0, name=n) for n in names}
    cal = calibrate(measured, std)
    cal = dataclasses.replace(cal, uncertainty=calibration_uncertainty(measured, std, noise=SIGMA))
    back = calibration_from_json(calibration_to_json(cal))
    assert np.allclose(back.uncertainty.cov, cal.uncertainty.cov, rtol=1e-12, atol=0)
    assert back.uncertainty.sources == cal.uncertainty.sources


def test_ideal_standards_without_noise_give_no_uncertainty():
    names = ("short", "open", "load")
    std = StandardSet()
    measured = {n: Sweep(F, raw(reflection(std.reflect(n), F)), 50.0, name=n) for n in names}
    cu = calibration_uncertainty(measured, std, noise="none")
    assert np.all(cu.cov == 0)


def test_bad_u_key_is_refused():
    from refplane.analysis.errors import SweepFileError

    bad = dict(KIT, open={"c0_f": 50e-15, "c0_f_u": -1})
    with pytest.raises(SweepFileError):
        standards_from_json(bad)
    with pytest.raises(SweepFileError):
        standards_from_json(dict(KIT, open={"c0_f": 50e-15, "nonsense_u": 1}))
    assert Standard("open", c0_f=1e-15).is_ideal is False
