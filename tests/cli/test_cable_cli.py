"""``refplane cable``: JSON keys and values against scikit-rf's Coaxial line, summary, status 2."""

from __future__ import annotations

import json
import math
import shlex

import numpy as np
import pytest

from refplane.cli import main

skrf = pytest.importorskip("skrf")

KEYS = {"z0_ohm", "delay_s", "length_m", "vf", "loss_ref_hz", "loss_conductor_db", "loss_dielectric_db",
        "loss_db_per_100m", "residual"}


def _run(argv) -> int:
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


@pytest.fixture(scope="module")
def cable_files(tmp_path_factory):
    # 10 m of scikit-rf Coaxial, 75 Ω, copper in solid PE (εr 2.25, tanδ 3e-4), ended in skrf's
    # open, short and a load Γ = 0.25j; written by skrf as Touchstone.
    folder = tmp_path_factory.mktemp("cable")
    f = np.linspace(5e6, 2e9, 2001)
    freq = skrf.Frequency.from_f(f, unit="hz")
    dout = 0.9e-3 * math.exp(2 * math.pi * 75 * 1.5 / 376.730313)
    coax = skrf.media.Coaxial.from_Z0_Dout(freq, z0_port=50, z0=75, epsilon_r=2.25, Dout=dout,
                                           tan_delta=3e-4, sigma=5.8e7)
    line = coax.line(10.0, unit="m")
    for name, end in (("open", coax.open()), ("short", coax.short()), ("load", coax.load(0.25j))):
        (line ** end).write_touchstone(name, dir=str(folder), skrf_comment=False)
    return {name: str(folder / f"{name}.s1p") for name in ("open", "short", "load")}


def test_json_has_exactly_the_issue_keys_and_the_cable_s_figures(cable_files, capsys):
    assert _run(["cable", "--open", cable_files["open"], "--short", cable_files["short"],
                 "--length", "10m", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == KEYS
    assert out["z0_ohm"] == pytest.approx(75.0, rel=1e-3)           # skrf's Coaxial was sized for 75 Ω
    assert out["vf"] == pytest.approx(1 / 1.5, rel=1e-3)             # 1/√εr (Pozar ch. 2, from memory)
    assert out["delay_s"] == pytest.approx(10.0 * 1.5 / 299_792_458.0, rel=1e-3)
    assert out["length_m"] == 10.0 and out["loss_ref_hz"] == 1e9
    # α_d = π·f·√εr·tanδ/c per metre (Pozar §2.7, from memory), 10 m, in dB.
    assert out["loss_dielectric_db"] == pytest.approx(math.pi * 1e9 * 1.5 * 3e-4 / 299_792_458.0
                                                      * 8.685889638 * 10, rel=0.05)
    total = out["loss_conductor_db"] + out["loss_dielectric_db"]
    assert out["loss_db_per_100m"] == pytest.approx(total * 10, rel=1e-9)
    assert out["residual"] < 0.005


def test_vf_gives_the_length_and_no_length_gives_null(cable_files, capsys):
    assert _run(["cable", "--open", cable_files["open"], "--short", cable_files["short"], "--vf", "0.6667",
                 "--band", "100MHz:1GHz", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["length_m"] == pytest.approx(10.0, rel=1e-3) and out["vf"] == 0.6667
    assert _run(["cable", "--open", cable_files["open"], "--short", cable_files["short"], "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["length_m"] is None and out["vf"] is None and out["loss_db_per_100m"] is None


def test_summary_and_the_options_that_remove_the_cable(cable_files, capsys):
    assert _run(["cable", "--open", cable_files["open"], "--short", cable_files["short"], "--length", "10m"]) == 0
    text = capsys.readouterr().out
    assert "75.0" in text and "velocity factor  0.666" in text and "loss per 100 m" in text
    last = text.strip().splitlines()[-1]
    options = shlex.split(last.split("FILE", 1)[1])[:-2]
    # The cable found, removed in front of skrf's load, gives the load back (Γ = 0.25j).
    for at in ("20MHz", "500MHz", "2GHz"):
        assert _run(["read", cable_files["load"], *options, "--at", at, "--json"]) == 0
        point = json.loads(capsys.readouterr().out)["points"][0]
        gamma = point["gamma_mag"] * np.exp(1j * np.radians(point["gamma_deg"]))
        assert abs(gamma - 0.25j) < 0.005


def test_help_carries_the_cautions(capsys):
    assert _run(["cable", "--help"]) == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "discharge it" in out and "transmitter may feed" in out


@pytest.mark.parametrize("extra, words", [
    (["--length", "10m", "--vf", "0.66"], "not allowed with"),
    (["--length", "0m"], "above zero"),
    (["--band", "3GHz:4GHz"], "at least 5"),
    (["--port", "2"], "port 2"),
])
def test_bad_requests_exit_with_status_2(cable_files, capsys, extra, words):
    assert _run(["cable", "--open", cable_files["open"], "--short", cable_files["short"], *extra]) == 2
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1


def test_sweeps_on_different_frequencies_and_missing_files(cable_files, tmp_path, capsys):
    net = skrf.Network(cable_files["short"])[::2]
    net.write_touchstone("half", dir=str(tmp_path), skrf_comment=False)
    assert _run(["cable", "--open", cable_files["open"], "--short", str(tmp_path / "half.s1p")]) == 2
    assert "same frequencies" in capsys.readouterr().err
    assert _run(["cable", "--open", str(tmp_path / "none.s1p"), "--short", cable_files["short"]]) == 2
    assert "no such file" in capsys.readouterr().err
