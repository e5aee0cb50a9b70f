"""Magnitude and angle to real and imaginary parts (the MA and DB formats of Touchstone)."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.files.touchstone.convert import _polar


def _reference(mag, deg):
    # Reference: the C library's extended-precision cosl and sinl of the angle converted in
    # extended precision (numpy's longdouble functions), about 1e-19 from the exact values.
    # π in extended precision: the double nearest π plus its remainder (1.2246e-16).
    pi = np.longdouble(np.pi) + np.longdouble(1.2246467991473532e-16)
    rad = deg.astype(np.longdouble) * pi / 180
    return (mag * np.cos(rad)).astype(np.float64), (mag * np.sin(rad)).astype(np.float64)


@pytest.mark.skipif(np.finfo(np.longdouble).nmant < 63,
                    reason="the reference needs x86 extended precision")
def test_parts_agree_with_extended_precision_within_a_few_1e_16():
    rng = np.random.default_rng(5)
    deg = np.concatenate([rng.uniform(-180, 180, 20000), rng.uniform(-720, 720, 2000),
                          np.arange(-360, 361, 15.0), [89.999999, 90.000001, -179.9999999]])
    mag = np.ones_like(deg)
    re, im = _polar(mag, deg)
    ref_re, ref_im = _reference(mag, deg)
    # numpy's cos(radians(deg)) errs by up to about 3e-16 within ±180° (the rounded radian
    # angle; more beyond, where the radian angle's own rounding grows): the half-angle form
    # is held to the same order.
    near = np.abs(deg) <= 180
    assert np.abs(re - ref_re)[near].max() < 5e-16
    assert np.abs(im - ref_im)[near].max() < 5e-16
    plain_re, plain_im = np.cos(np.radians(deg)), np.sin(np.radians(deg))
    assert np.abs(plain_re - ref_re)[near].max() < 5e-16
    assert np.abs(re - ref_re).max() <= np.abs(plain_re - ref_re).max() + 2e-16
    assert np.abs(im - ref_im).max() <= np.abs(plain_im - ref_im).max() + 2e-16


def test_whole_angles_and_magnitudes():
    # Facts of trigonometry: cos 0 = 1, sin 0 = 0, cos 180° = -1, cos 60° = 1/2, sin 30° = 1/2.
    re, im = _polar(np.array([0.5, 2.0, 1.0, 1.0, 1.0]), np.array([0.0, 180.0, 60.0, 30.0, -90.0]))
    assert re[0] == 0.5 and im[0] == 0.0
    assert re[1] == -2.0 and abs(im[1]) < 5e-16
    assert abs(re[2] - 0.5) < 2e-16 and abs(im[3] - 0.5) < 2e-16
    assert abs(re[4]) < 2e-16 and im[4] == -1.0
