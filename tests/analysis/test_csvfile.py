"""CSV sweeps: each accepted header form, checked against scikit-rf's values for the data
files it ships (``skrf.data``): S as real/imaginary (``Network.s``), dB magnitude
(``Network.s_db``), linear magnitude (``Network.s_mag``) and phase (``Network.s_deg``,
``Network.s_rad``)."""

from __future__ import annotations

import pathlib
import warnings

import numpy as np
import pytest

from refplane.analysis.files import csvfile
from refplane.analysis.files.loading import read_sweep

skrf = pytest.importorskip("skrf")
DATA = pathlib.Path(skrf.__file__).parent / "data"


def _net(name):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(DATA / name))


def _write(path, header, columns, sep=",", comments=()):
    lines = [f"# {c}" for c in comments] + [sep.join(header)]
    for row in zip(*columns):
        lines.append(sep.join(repr(float(v)) for v in row))
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.mark.parametrize("freq_header,scale", [
    ("Frequency (MHz)", 1e6), ("freq_hz", 1.0), ("f [GHz]", 1e9), ("Freq", 1.0),
    ("frequency_khz", 1e3), ("FreqGHz", 1e9)])
@pytest.mark.parametrize("sep", [",", ";", "\t"])
def test_real_imaginary_columns_match_skrf(tmp_path, freq_header, scale, sep):
    # Source: scikit-rf's reading of its shipped file ring slot measured.s1p (Network.f, .s).
    net = _net("ring slot measured.s1p")
    g = net.s[:, 0, 0]
    path = _write(tmp_path / "a.csv", [freq_header, "S11 re", "S11 im"], [net.f / scale, g.real, g.imag],
                  sep=sep, comments=["measured antenna, for the test"])
    sweep = read_sweep(path)
    np.testing.assert_allclose(sweep.freq_hz, net.f, rtol=1e-15)
    np.testing.assert_allclose(sweep.s[:, 0, 0], g, rtol=1e-15, atol=1e-16)
    assert sweep.comments == ("measured antenna, for the test",)
    assert sweep.z0_ohm[0] == 50


@pytest.mark.parametrize("mag_header,phase_header", [
    ("S11 dB", "S11 phase (deg)"), ("mag dB", "angle"), ("|S11| (dB)", "S11 phase rad"),
    ("S11 mag", "S11 ang"), ("magnitude", "phase [rad]")])
def test_magnitude_phase_columns_match_skrf(tmp_path, mag_header, phase_header):
    # Source: scikit-rf's Network.s_db / s_mag / s_deg / s_rad for its shipped short.s1p-like file.
    net = _net("ring slot measured.s1p")
    db = "db" in mag_header.lower()
    rad = "rad" in phase_header.lower()
    mag = net.s_db[:, 0, 0] if db else net.s_mag[:, 0, 0]
    phase = net.s_rad[:, 0, 0] if rad else net.s_deg[:, 0, 0]
    path = _write(tmp_path / "m.csv", ["Frequency (GHz)", mag_header, phase_header],
                  [net.f / 1e9, mag, phase])
    sweep = csvfile.read(path)
    np.testing.assert_allclose(sweep.s[:, 0, 0], net.s[:, 0, 0], rtol=1e-12, atol=1e-13)


def test_two_port_columns_match_skrf(tmp_path):
    # Source: scikit-rf's shipped two-port ntwk1.s2p (Network.s, S_ij = s[:, i-1, j-1]).
    net = _net("ntwk1.s2p")
    header = ["freq_hz"]
    cols = [net.f]
    for i, j in ((1, 1), (2, 1), (1, 2), (2, 2)):
        header += [f"S{i}{j}_real", f"S{i}{j}_imag"]
        cols += [net.s[:, i - 1, j - 1].real, net.s[:, i - 1, j - 1].imag]
    sweep = csvfile.read(_write(tmp_path / "two.csv", header, cols))
    assert sweep.n_ports == 2
    np.testing.assert_allclose(sweep.s, net.s, rtol=1e-15, atol=1e-16)


def test_reference_impedance_from_comment(tmp_path):
    path = tmp_path / "z.csv"
    path.write_text("! cable TV feed\n# z0 = 75\nfreq_hz,re,im\n1e6,0.1,0.2\n2e6,0.1,0.3\n")
    sweep = csvfile.read(path)
    assert sweep.z0_ohm[0] == 75
    assert sweep.comments == ("cable TV feed", "z0 = 75")


def test_quoted_headers_and_blank_lines(tmp_path):
    path = tmp_path / "q.csv"
    path.write_text('"Frequency (MHz)","Re","Im"\n\n470,0.2,0.3\n480,0.25,0.35\n')
    sweep = csvfile.read(path)
    np.testing.assert_array_equal(sweep.freq_hz, [470e6, 480e6])
    np.testing.assert_array_equal(sweep.s[:, 0, 0], [0.2 + 0.3j, 0.25 + 0.35j])
