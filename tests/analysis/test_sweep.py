"""The sweep container: validation messages and immutability.

Source for the conventions checked: the Touchstone file format specification (IBIS Open Forum, v1.1/2.0 —
from memory): frequencies increase, S is points × ports × ports, S_ij relates port i to port j, each port has
a reference impedance with a positive real part.
"""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep


def _two_port(n=5):
    f = np.linspace(1e6, 1e9, n)
    s = np.zeros((n, 2, 2), complex)
    s[:, 0, 0] = 0.1
    s[:, 1, 0] = 0.9
    s[:, 0, 1] = 0.8
    s[:, 1, 1] = 0.2j
    return Sweep(f, s, 50.0, name="two")


def test_basic_fields():
    sw = _two_port()
    assert sw.n_ports == 2 and sw.n_points == 5
    assert sw.freq_hz.dtype == np.float64 and sw.s.dtype == np.complex128
    np.testing.assert_array_equal(sw.z0_ohm, [50, 50])  # scalar broadcast to every port (documented)
    # Touchstone convention: S_ij is s[:, i-1, j-1]; reflection(2) is S22.
    np.testing.assert_array_equal(sw.reflection(1), 0.1)
    np.testing.assert_array_equal(sw.reflection(2), 0.2j)


def test_one_dimensional_s_is_a_one_port():
    sw = Sweep([1e6, 2e6, 3e6], [0.1, 0.2, 0.3j], 75.0)
    assert sw.s.shape == (3, 1, 1) and sw.n_ports == 1
    assert sw.z0_ohm.shape == (1,)


@pytest.mark.parametrize("freq, match", [
    ([1e6, 1e6, 2e6], "increase strictly; point 2"),
    ([1e6, 3e6, 2e6], "increase strictly; point 3"),
    ([1e6, np.nan, 2e6], "not a finite"),
    ([1e6, np.inf, 2e6], "not a finite"),
    ([-1e6, 1e6, 2e6], "negative"),
])
def test_bad_frequencies(freq, match):
    with pytest.raises(AnalysisError, match=match):
        Sweep(np.array(freq), np.zeros(3, complex), 50.0)


def test_empty_and_wrong_dimension_frequencies():
    with pytest.raises(AnalysisError, match="non-empty"):
        Sweep(np.array([]), np.zeros((0, 1, 1)), 50.0)
    with pytest.raises(AnalysisError, match="one-dimensional"):
        Sweep(np.ones((2, 2)), np.zeros((4, 1, 1)), 50.0)


@pytest.mark.parametrize("shape", [(4, 1, 1), (3, 2, 1), (3, 2), (3, 2, 2, 2)])
def test_shape_mismatch(shape):
    with pytest.raises(AnalysisError, match="do not fit 3 frequencies"):
        Sweep(np.array([1e6, 2e6, 3e6]), np.zeros(shape, complex), 50.0)


def test_non_finite_s_names_the_point():
    s = np.zeros((3, 1, 1), complex)
    s[1, 0, 0] = complex(np.nan, 0)
    with pytest.raises(AnalysisError, match=r"point 2 \(2e\+06 Hz\)"):
        Sweep(np.array([1e6, 2e6, 3e6]), s, 50.0)


@pytest.mark.parametrize("z0", [0.0, -50.0, np.nan, np.inf, [50.0, 50.0, 50.0], [50.0], -5 + 50j])
def test_bad_reference_impedance(z0):
    with pytest.raises(AnalysisError, match="reference impedance"):
        Sweep(np.array([1e6, 2e6]), np.zeros((2, 2, 2), complex), z0)


def test_per_port_reference_impedances():
    sw = Sweep(np.array([1e6, 2e6]), np.zeros((2, 2, 2), complex), [50.0, 75.0])
    np.testing.assert_array_equal(sw.z0_ohm, [50, 75])


@pytest.mark.parametrize("port", [0, 3, -1, 1.0, "1", None])
def test_port_checks(port):
    sw = _two_port()
    with pytest.raises(AnalysisError, match="does not exist; this sweep has 2 port"):
        sw.check_port(port)
    with pytest.raises(AnalysisError):
        sw.reflection(port)


def test_arrays_are_read_only():
    sw = _two_port()
    for array in (sw.freq_hz, sw.s, sw.z0_ohm, sw.reflection(1)):
        with pytest.raises(ValueError):
            array[0] = 0
    with pytest.raises(AttributeError):
        sw.name = "other"  # frozen dataclass


def test_replace_validates_afresh_and_keeps_original():
    sw = _two_port()
    renamed = sw.replace(name="renamed", comments=["a", "b"])
    assert renamed.name == "renamed" and renamed.comments == ("a", "b")
    assert sw.name == "two"
    assert renamed.s is sw.s  # shared, not copied: both read-only
    with pytest.raises(AnalysisError):
        sw.replace(freq_hz=sw.freq_hz[::-1].copy())
