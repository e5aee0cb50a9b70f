"""``refplane read``: table and JSON output, frequency forms, ports, and status 2 on bad input.

Readouts are checked against scikit-rf (``Network.z``, ``Network.s_vswr``, ``Network.s_db``)
on a file it ships, and against the textbook identities for a generated load.
"""

from __future__ import annotations

import json
import math
import pathlib
import subprocess
import sys
import warnings

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")
DATA = pathlib.Path(skrf.__file__).parent / "data"
POINT_KEYS = {"freq_hz", "gamma_re", "gamma_im", "gamma_mag", "gamma_deg", "r_ohm", "x_ohm",
              "z_mag_ohm", "series_l_h", "series_c_f", "parallel_r_ohm", "parallel_x_ohm",
              "vswr", "return_loss_db", "q"}


def _net(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(path))


def _run(*args):
    return subprocess.run([sys.executable, "-m", "refplane", "read", *map(str, args)],
                          capture_output=True, text=True, timeout=120)


@pytest.fixture
def leaded_resistor(tmp_path):
    """A 75 Ω resistor with 9 nH of lead inductance, 10 kHz to 3 GHz, in a 50 Ω system."""
    f = np.linspace(1e4, 3e9, 3001)
    f = np.union1d(f, [470e6])
    z = 75 + 1j * 2 * np.pi * f * 9e-9
    gamma = (z - 50) / (z + 50)  # Pozar, Microwave Engineering, ch. 2: Γ = (Z − Z0)/(Z + Z0)
    sweep = Sweep(freq_hz=f, s=gamma, z0_ohm=50.0, name="resistor")
    return touchstone.write(sweep, tmp_path / "resistor.s1p", freq_unit="MHz",
                            comments=["invented test load: 75 ohm with 9 nH leads"])


@pytest.fixture
def capacitor(tmp_path):
    """A 10 pF capacitor in series with 2 Ω, 100 MHz to 1 GHz (X < 0 throughout)."""
    f = np.linspace(1e8, 1e9, 91)
    z = 2 - 1j / (2 * np.pi * f * 10e-12)
    sweep = Sweep(freq_hz=f, s=(z - 50) / (z + 50), z0_ohm=50.0)
    return touchstone.write(sweep, tmp_path / "cap.s1p")


def test_json_has_exact_keys_and_matches_skrf(capsys):
    # Source: scikit-rf's Network.z (of the one-port S11, i.e. the input impedance with
    # port 2 matched), s_vswr and s_db for its shipped ntwk1.s2p, at a swept point.
    path = DATA / "ntwk1.s2p"
    net = _net(path)
    k = 30
    f = net.f[k]
    assert main(["read", str(path), "--at", repr(float(f)), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == {"file", "port", "z0_ohm", "points"}
    assert out["file"] == str(path) and out["port"] == 1 and out["z0_ohm"] == 50
    (point,) = out["points"]
    assert set(point) == POINT_KEYS
    z = net.s11.z[k, 0, 0]
    assert point["freq_hz"] == f
    assert math.isclose(point["r_ohm"], z.real, rel_tol=1e-9)
    assert math.isclose(point["x_ohm"], z.imag, rel_tol=1e-9)
    assert math.isclose(point["vswr"], net.s_vswr[k, 0, 0], rel_tol=1e-9)
    assert math.isclose(point["return_loss_db"], -net.s_db[k, 0, 0], rel_tol=1e-9)
    assert math.isclose(point["gamma_re"], net.s[k, 0, 0].real, rel_tol=1e-12)


def test_port_2_reads_s22(capsys):
    # Source: scikit-rf's Network.s[:, 1, 1] (S22) and Network.z for the shipped ntwk1.s2p.
    path = DATA / "ntwk1.s2p"
    net = _net(path)
    k = 50
    assert main(["read", str(path), "--at", repr(float(net.f[k])), "--port", "2", "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    assert math.isclose(point["gamma_re"], net.s[k, 1, 1].real, rel_tol=1e-12)
    assert math.isclose(point["gamma_im"], net.s[k, 1, 1].imag, rel_tol=1e-12)
    assert math.isclose(point["r_ohm"], net.s22.z[k, 0, 0].real, rel_tol=1e-9)
    assert math.isclose(point["vswr"], net.s_vswr[k, 1, 1], rel_tol=1e-9)


def test_leaded_resistor_reads_75_plus_j27(capsys, leaded_resistor):
    # Common practice: a leaded 75 Ω resistor near 470 MHz reads about 75 Ω in series with
    # ~9 nH, X = 2π·470 MHz·9 nH ≈ +26.6 Ω (≈ j27).
    assert main(["read", str(leaded_resistor), "--at", "470MHz", "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    assert math.isclose(point["r_ohm"], 75.0, rel_tol=1e-9)
    assert math.isclose(point["x_ohm"], 2 * math.pi * 470e6 * 9e-9, rel_tol=1e-9)
    assert abs(point["x_ohm"] - 27) < 0.5
    assert math.isclose(point["series_l_h"], 9e-9, rel_tol=1e-9)
    assert point["series_c_f"] is None  # X > 0: no series capacitance


def test_series_l_null_when_capacitive(capsys, capacitor):
    # Pozar ch. 2 (from memory): series C = −1/(2πf·X) for X < 0.
    assert main(["read", str(capacitor), "--at", "500MHz", "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    assert point["series_l_h"] is None
    assert math.isclose(point["series_c_f"], 10e-12, rel_tol=1e-9)
    assert math.isclose(point["r_ohm"], 2.0, rel_tol=1e-9)


@pytest.mark.parametrize("text,hz", [("470MHz", 470e6), ("470 MHz", 470e6), ("470M", 470e6),
                                     ("4.7e8", 4.7e8), ("2.4GHz", 2.4e9), ("50kHz", 50e3)])
def test_frequency_forms(capsys, leaded_resistor, text, hz):
    assert main(["read", str(leaded_resistor), "--at", text, "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    assert point["freq_hz"] == hz
    # X = ωL of the generated file (linear interpolation between points spaced 1 MHz).
    assert math.isclose(point["x_ohm"], 2 * math.pi * hz * 9e-9, rel_tol=2e-3, abs_tol=1e-3)


def test_table_output_in_a_separate_process(leaded_resistor):
    done = _run(leaded_resistor, "--at", "470 MHz", "--at", "1GHz")
    assert done.returncode == 0, done.stderr
    lines = done.stdout.splitlines()
    assert str(leaded_resistor) in lines[0] and "50 Ω" in lines[0]
    header = lines[1]
    for label in ("Frequency", "R", "X", "Series L/C", "VSWR", "Return loss", "Q"):
        assert label in header
    assert lines[3].startswith("470 MHz") and "75.00 Ω" in lines[3] and "L 9.000 nH" in lines[3]
    assert lines[4].startswith("1 GHz")


def test_json_in_a_separate_process(leaded_resistor):
    done = _run(leaded_resistor, "--at", "470M", "--json")
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    assert set(out["points"][0]) == POINT_KEYS


def test_out_of_band_is_status_2_one_line(leaded_resistor):
    done = _run(leaded_resistor, "--at", "5GHz")
    assert done.returncode == 2
    assert done.stdout == ""
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "outside the sweep" in lines[0]
    assert "Traceback" not in done.stderr


def test_out_of_band_in_process(capsys, leaded_resistor):
    assert main(["read", str(leaded_resistor), "--at", "1kHz"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "outside the sweep" in err[0]


def test_malformed_file_is_status_2_naming_file_and_line(tmp_path):
    path = tmp_path / "broken.s2p"
    path.write_text("# GHz S RI R 50\n1 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8\n2 0.1 0.2 0.3\n")
    done = _run(path, "--at", "1GHz")
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1
    assert str(path) in lines[0] and "line 3" in lines[0] and "needs 9 numbers, found 4" in lines[0]
    assert "Traceback" not in done.stderr


def test_malformed_file_in_process(capsys, tmp_path):
    path = tmp_path / "broken.s1p"
    path.write_text("# GHz S RI R 50\n1 0.1 0.2\n0.5 0.1 0.2\n")
    assert main(["read", str(path), "--at", "1GHz"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and str(path) in err[0] and "line 3" in err[0]


def test_missing_port_is_status_2(capsys):
    assert main(["read", str(DATA / "ntwk1.s2p"), "--at", "2GHz", "--port", "3"]) == 2
    assert "port 3" in capsys.readouterr().err
