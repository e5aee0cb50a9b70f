"""``refplane resonance``, ``feedline`` and ``match``: JSON keys, values against outside references,
the cautions in help and output, and status 2 on bad requests.

Sources named beside each check:
- "textbook": series R-L-C resonance f0 = 1/(2π√(LC)), Q = ω0L/R; Γ = (Z − Z0)/(Z + Z0)
  (Pozar, Microwave Engineering, ch. 2 and 6 — from memory).
- scikit-rf as a reference library: a matched line of known length and velocity factor cascaded in
  front of the model (``DefinedGammaZ0.line`` and ``**``).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")

C0 = 299_792_458.0
R_ANT, L_ANT, C_ANT = 36.0, 2.0e-6, 0.25e-9      # a series R-L-C "antenna", f0 ≈ 7.118 MHz
F0 = 1 / (2 * math.pi * math.sqrt(L_ANT * C_ANT))


def _antenna_z(f):
    w = 2 * np.pi * f
    return R_ANT + 1j * w * L_ANT + 1 / (1j * w * C_ANT)


@pytest.fixture
def antenna_through_line(tmp_path):
    """The model antenna measured through 5 m of lossless 50 Ω line, vf 0.66 (cascaded with scikit-rf)."""
    f = np.linspace(6.0e6, 8.2e6, 441)
    freq = skrf.Frequency.from_f(f, unit="hz")
    z = _antenna_z(f)
    load = skrf.Network(frequency=freq, s=((z - 50) / (z + 50)).reshape(-1, 1, 1), z0=50)
    media = skrf.media.DefinedGammaZ0(freq, z0=50, gamma=1j * 2 * np.pi * f / (0.66 * C0))
    measured = media.line(5.0, unit="m") ** load
    sweep = Sweep(f, measured.s[:, 0, 0], 50.0, name="antenna")
    return touchstone.write(sweep, tmp_path / "antenna.s1p", freq_unit="MHz",
                            comments=["invented test antenna: series RLC behind 5 m of line"])


@pytest.fixture
def antenna_file(tmp_path):
    f = np.linspace(6.0e6, 8.2e6, 441)
    z = _antenna_z(f)
    return touchstone.write(Sweep(f, (z - 50) / (z + 50), 50.0), tmp_path / "feedpoint.s1p")


def _status(argv) -> int:
    """Exit status of ``refplane ARGV`` run in-process (argparse usage errors raise SystemExit)."""
    try:
        return main([str(a) for a in argv])
    except SystemExit as exc:
        return int(exc.code)


def _json(capsys, *argv):
    assert main([str(a) for a in argv]) == 0
    return json.loads(capsys.readouterr().out)


# ---------------------------------------------------------------- resonance


def test_resonance_after_removing_the_line(capsys, antenna_through_line):
    out = _json(capsys, "resonance", antenna_through_line, "--length", "5m", "--vf", "0.66", "--json")
    assert set(out) >= {"file", "port", "resonances", "best", "bands"}
    series = [r for r in out["resonances"] if r["kind"] == "series"]
    assert len(series) == 1
    # textbook: f0 = 1/(2π√(LC)), R there = 36 Ω, Q = ω0 L / R.
    assert series[0]["freq_hz"] == pytest.approx(F0, rel=1e-5)
    assert series[0]["r_ohm"] == pytest.approx(R_ANT, rel=1e-3)
    assert series[0]["q"] == pytest.approx(2 * math.pi * F0 * L_ANT / R_ANT, rel=1e-3)
    # textbook: VSWR 50/36 at resonance.
    assert out["best"]["vswr"] == pytest.approx(50 / 36, rel=1e-3)
    band = [b for b in out["bands"] if b["vswr_limit"] == 2.0]
    assert len(band) == 1
    assert set(band[0]) >= {"vswr_limit", "start_hz", "stop_hz", "centre_hz", "width_hz"}
    assert band[0]["start_hz"] < F0 < band[0]["stop_hz"]


def test_resonance_human_output_and_several_limits(capsys, antenna_file):
    assert main(["resonance", str(antenna_file), "--vswr", "2", "--vswr", "1.5"]) == 0
    text = capsys.readouterr().out
    assert "series" in text and "VSWR" in text and "≤ 1.5" in text and "≤ 2" in text


def test_resonance_help_carries_caution():
    proc = subprocess.run([sys.executable, "-m", "refplane", "resonance", "--help"],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0
    assert "transmitter" in proc.stdout and "licensed practice" in proc.stdout


@pytest.mark.parametrize("extra", [["--vswr", "0.9"], ["--vswr", "abc"], ["--port", "2"],
                                   ["--band", "1GHz:2GHz"]])
def test_resonance_bad_requests_exit_2(capsys, antenna_file, extra):
    assert _status(["resonance", antenna_file, *extra]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1


# ---------------------------------------------------------------- feedline


@pytest.fixture
def load_150(tmp_path):
    f = np.linspace(13e6, 15e6, 21)
    z = np.full(f.size, 150.0 + 0j)
    return touchstone.write(Sweep(f, (z - 50) / (z + 50), 50.0), tmp_path / "ant150.s1p")


POINT_KEYS = {"freq_hz", "z_radio_ohm", "z_antenna_ohm", "vswr_radio", "vswr_antenna",
              "matched_loss_db", "total_loss_db", "power_at_antenna_w"}


def test_feedline_json_handbook_example(capsys, load_150):
    # handbook (amateur-radio handbook relation): ML 1 dB, SWR 3 at the antenna → ≈ 1.50 dB total, SWR ≈ 2.32.
    out = _json(capsys, "feedline", load_150, "--length", "20m", "--vf", "0.66", "--loss", "1dB@14MHz",
                "--power", "100W", "--at", "14MHz", "--json")
    point = out["points"][0]
    assert set(point) >= POINT_KEYS
    assert point["vswr_antenna"] == pytest.approx(3.0)
    assert point["total_loss_db"] == pytest.approx(1.50, abs=0.005)
    assert point["vswr_radio"] == pytest.approx(2.32, abs=0.005)
    assert point["power_at_antenna_w"] == pytest.approx(100 * 10 ** (-point["total_loss_db"] / 10))
    assert point["z_antenna_ohm"] == pytest.approx([150.0, 0.0])


def test_feedline_toward_antenna_removes_the_line(capsys, antenna_through_line):
    # scikit-rf made the file by cascading 5 m of vf 0.66 line in front of the model; removing it gives the model.
    out = _json(capsys, "feedline", antenna_through_line, "--length", "5m", "--vf", "0.66", "--at", "7MHz",
                "--toward", "antenna", "--json")
    z = _antenna_z(np.array([7e6]))[0]
    assert out["points"][0]["z_antenna_ohm"] == pytest.approx([z.real, z.imag], rel=1e-6, abs=1e-6)
    assert out["points"][0]["power_at_antenna_w"] is None


def test_feedline_human_output_cautions_with_power(capsys, load_150):
    assert main(["feedline", str(load_150), "--length", "20m", "--vf", "0.66", "--loss", "1dB@14MHz",
                 "--power", "100W", "--at", "14MHz"]) == 0
    text = capsys.readouterr().out
    assert "1.50 dB" in text and "RF exposure" in text and "licensed practice" in text


@pytest.mark.parametrize("extra", [["--power", "-5W"], ["--length=-3m"], ["--vf", "1.5"], ["--at", "1GHz"],
                                   ["--loss", "x"]])
def test_feedline_bad_requests_exit_2(capsys, load_150, extra):
    argv = ["feedline", load_150, "--length", "20m", "--vf", "0.66", "--at", "14MHz"]
    assert _status(argv + extra) == 2
    assert capsys.readouterr().err.count("\n") == 1


# ---------------------------------------------------------------- match


@pytest.fixture
def pozar_load(tmp_path):
    """ZL = 200 − j100 Ω (constant) from 400 to 600 MHz, in a 100 Ω reference."""
    f = np.linspace(400e6, 600e6, 201)
    z = np.full(f.size, 200 - 100j)
    return touchstone.write(Sweep(f, (z - 100) / (z + 100), 100.0), tmp_path / "pozar.s1p")


def test_match_json_pozar_example(capsys, pozar_load):
    # Pozar, Microwave Engineering, ch. 5 worked example (from memory, recomputed in the analysis tests):
    # shunt 0.92 pF + series 38.8 nH, or shunt 46.1 nH + series 2.61 pF.
    out = _json(capsys, "match", pozar_load, "--at", "500MHz", "--json")
    assert set(out) >= {"freq_hz", "load_ohm", "target_ohm", "networks", "bode_fano_max_width_hz"}
    assert out["load_ohm"] == pytest.approx([200.0, -100.0])
    assert out["target_ohm"] == 100.0
    ls = [n for n in out["networks"] if n["topology"] == "L"]
    values = sorted((p["kind"], p["place"], p["value"]) for n in ls for p in n["parts"])
    want = sorted([("C", "shunt", 0.92e-12), ("L", "series", 38.8e-9), ("L", "shunt", 46.1e-9),
                   ("C", "series", 2.61e-12)])
    for got, ref in zip(values, want):
        assert got[:2] == ref[:2]
        assert got[2] == pytest.approx(ref[2], rel=6e-3)
    for n in out["networks"]:
        assert n["vswr_exact"] == pytest.approx(1.0, abs=1e-8)
        for p in n["parts"]:
            assert set(p) >= {"kind", "place", "value", "unit", "standard_value", "peak_voltage_v", "rms_current_a"}


def test_match_after_removing_the_line_with_power(capsys, antenna_through_line):
    out = _json(capsys, "match", antenna_through_line, "--length", "5m", "--vf", "0.66", "--at", "7.3MHz",
                "--power", "100W", "--series", "E12", "--json")
    z = _antenna_z(np.array([7.3e6]))[0]
    assert out["load_ohm"] == pytest.approx([z.real, z.imag], rel=1e-4)
    # Bode–Fano (Fano 1950) for the series R-L-C antenna: Δf = R/(2L·ln 3).
    assert out["bode_fano_max_width_hz"] == pytest.approx(R_ANT / (2 * L_ANT * math.log(3)), rel=1e-3)
    lumped = [p for n in out["networks"] for p in n["parts"] if p["kind"] in ("L", "C")]
    assert lumped and all(p["peak_voltage_v"] > 0 and p["rms_current_a"] > 0 for p in lumped)


def test_match_human_output_has_parts_and_caution(capsys, antenna_file):
    assert main(["match", str(antenna_file), "--at", "7.3MHz", "--power", "100W", "--to", "50"]) == 0
    text = capsys.readouterr().out
    assert "Bode–Fano" in text and "peak V" in text and "RMS I" in text
    assert "high voltage" in text and "licensed practice" in text


def test_match_help_carries_caution():
    proc = subprocess.run([sys.executable, "-m", "refplane", "match", "--help"],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0
    assert "high voltage" in proc.stdout and "transmitter" in proc.stdout


@pytest.mark.parametrize("extra", [["--at", "1GHz"], ["--series", "E7"], ["--to", "-50"], ["--q", "0"],
                                   ["--power", "lots"], ["--port", "3"]])
def test_match_bad_requests_exit_2(capsys, antenna_file, extra):
    argv = ["match", antenna_file, "--at", "7.3MHz"]
    if extra[0] == "--at":
        argv = ["match", antenna_file]
    assert _status(argv + extra) == 2
    assert capsys.readouterr().err.count("\n") == 1
