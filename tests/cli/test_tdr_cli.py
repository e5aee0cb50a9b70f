"""``refplane tdr``: JSON keys, events against scikit-rf lines, gating to a file, status 2."""

from __future__ import annotations

import json

import numpy as np
import pytest

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S as C
from refplane.analysis.files.loading import read_sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")

KEYS = {"file", "port", "mode", "window", "vf", "resolution_m", "range_m", "events"}


def _run(argv) -> int:
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


def _media(f, z0, loss_db_per_m=0.0):
    """scikit-rf line with vf 0.66 and the causal skin-effect γ (references.md), constant Z0."""
    a = loss_db_per_m / 8.685889638 * np.sqrt(f / 1e9)
    return skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0_port=50, z0=z0,
                                     gamma=2j * np.pi * f / (0.66 * C) + a * (1 + 1j))


@pytest.fixture(scope="module")
def joint(tmp_path_factory):
    # A device reflecting 0.4 behind 1 m of cable, a bad joint (2 cm of 65 Ω) and 2 m more;
    # and the device behind the cable alone, for the gated check. Written by skrf.
    folder = tmp_path_factory.mktemp("tdr")
    f = np.linspace(10e6, 3e9, 1500)
    m50, m65 = _media(f, 50.0, 0.1), _media(f, 65.0, 0.1)
    device = m50.load(0.4 * np.exp(-2j * np.pi * f * 0.2e-9))
    (m50.line(1.0, unit="m") ** m65.line(0.02, unit="m") ** m50.line(2.0, unit="m") ** device).write_touchstone(
        "joint", dir=str(folder), skrf_comment=False)
    alone = m50.line(3.02, unit="m") ** device
    return folder, str(folder / "joint.s1p"), alone


@pytest.mark.parametrize("mode", ["lowpass", "bandpass"])
def test_json_keys_and_the_distance_to_the_open_end(tmp_path, capsys, mode):
    # references.md: distance = vf·c·t/2; an open at the end of 7 m (vf 0.66) lies at 7 m within
    # one resolution cell. skrf line, harmonic sweep 3 MHz … 1.5 GHz.
    f = 3e6 * np.arange(1, 501)
    m = _media(f, 50.0)
    (m.line(7.0, unit="m") ** m.open()).write_touchstone("open7", dir=str(tmp_path), skrf_comment=False)
    assert _run(["tdr", str(tmp_path / "open7.s1p"), "--vf", "0.66", "--mode", mode, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == KEYS
    assert out["mode"] == mode and out["window"] == "Kaiser β=6" and out["vf"] == 0.66 and out["port"] == 1
    assert out["range_m"] == pytest.approx(0.66 * C / 2 / 3e6, rel=1e-9)
    first = out["events"][0]
    assert set(first) == {"distance_m", "time_s", "rho", "return_loss_db"}
    assert abs(first["distance_m"] - 7.0) <= out["resolution_m"]
    assert first["time_s"] == pytest.approx(2 * 7.0 / (0.66 * C), abs=2 * out["resolution_m"] / (0.66 * C))
    assert first["rho"] == pytest.approx(1.0, abs=0.02)


def test_summary_lists_joint_and_device_and_states_resolution(joint, capsys):
    _, path, _ = joint
    assert _run(["tdr", path, "--vf", "0.66", "--window", "hann"]) == 0
    text = capsys.readouterr().out
    assert "Hann window" in text and "resolution" in text and "range" in text and "DC extrapolated" in text
    assert "3.041 m" in text and "994.0 mm" in text      # the device at 3.02 m + 2 cm of joint; the joint at 1 m


def test_gate_writes_the_device_alone(joint, capsys):
    folder, path, alone = joint
    out = folder / "gated.s1p"
    assert _run(["tdr", path, "--vf", "0.66", "--mode", "bandpass", "--gate", "2.5m:3.5m", "-o", str(out)]) == 0
    assert "wrote" in capsys.readouterr().err
    gated = read_sweep(out)
    err = np.abs(gated.reflection(1) - alone.s[:, 0, 0])
    assert np.max(err[30:-30]) < 0.03            # the joint's transmission cannot be gated away
    # Never overwrite without --force.
    assert _run(["tdr", path, "--vf", "0.66", "--gate", "2.5m:3.5m", "-o", str(out)]) == 2
    assert "--force" in capsys.readouterr().err
    assert _run(["tdr", path, "--vf", "0.66", "--gate", "2.5m:3.5m", "-o", str(out), "--force"]) == 0


def test_cable_loss_compensates_event_sizes(tmp_path, capsys):
    # 30 m of lossy coax (0.5 dB/m at 1 GHz, causal skin effect): the open at its end reads ρ ≈ 1
    # once the cable's 50 dB/100 m is given.
    f = 1e6 * np.arange(1, 1001)
    m = _media(f, 50.0, 0.5)
    (m.line(30.0, unit="m") ** m.open()).write_touchstone("lossy", dir=str(tmp_path), skrf_comment=False)
    assert _run(["tdr", str(tmp_path / "lossy.s1p"), "--vf", "0.66", "--json"]) == 0
    plain = json.loads(capsys.readouterr().out)["events"][0]["rho"]
    assert _run(["tdr", str(tmp_path / "lossy.s1p"), "--vf", "0.66", "--cable-loss", "50dB@1GHz", "--json"]) == 0
    fixed = json.loads(capsys.readouterr().out)["events"][0]["rho"]
    assert plain < 0.5 and fixed == pytest.approx(1.0, abs=0.08)


def test_help_carries_the_cautions(capsys):
    assert _run(["tdr", "--help"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "discharge it" in out and "transmitter may feed" in out


@pytest.mark.parametrize("extra, words", [
    (["--window", "triangle"], "unknown window"),
    (["--mode", "sideways"], "invalid choice"),
    (["-o", "x.s1p"], "--gate"),
    (["--gate", "3m:2m", "-o", "GATED"], "beyond"),
    (["--gate", "2m", "-o", "GATED"], "NEAR:FAR"),
    (["--vf", "1.2"], "velocity factor"),
    (["--port", "3"], "port 3"),
])
def test_bad_requests_exit_with_status_2(joint, capsys, extra, words):
    folder, path, _ = joint
    extra = [str(folder / "never.s1p") if a == "GATED" else a for a in extra]
    assert _run(["tdr", path, *extra]) == 2
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1
    assert not (folder / "never.s1p").exists()
