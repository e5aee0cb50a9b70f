"""The line model's command-line terms: --dielectric-loss, --skin-phase, --z0-follows-skin, and
``refplane plane`` handing every term of the line it found to ``refplane read``."""

from __future__ import annotations

import argparse
import json
import shlex

import numpy as np
import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.cli import main
from refplane.cli.offsets import add_offset_options, offset_from_args

skrf = pytest.importorskip("skrf")


def _run(argv) -> int:
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser()
    add_offset_options(p)
    return p


def test_dielectric_loss_is_restated_at_the_conductor_loss_frequency():
    # Dielectric loss grows as f (textbook): 0.1 dB at 500 MHz is 0.2 dB at 1 GHz.
    args = _parser().parse_args(["--delay", "1ns", "--loss", "0.4dB@1GHz", "--dielectric-loss", "0.1dB@500MHz",
                                 "--skin-phase"])
    assert offset_from_args(args) == LineOffset(1e-9, 0.4, 1e9, 0.2, skin_phase=True)
    args = _parser().parse_args(["--delay", "1ns", "--dielectric-loss", "0.3dB@2GHz", "--z0-follows-skin",
                                 "--line-z0", "75"])
    assert offset_from_args(args) == LineOffset(1e-9, 0.0, 2e9, 0.3, 75.0, True, True)


@pytest.mark.parametrize("argv, words", [
    (["--skin-phase"], "--skin-phase"),
    (["--delay", "1ns", "--dielectric-loss=-1dB@1GHz"], "must not be negative"),
    (["--delay=-1ns", "--loss", "1dB", "--z0-follows-skin"], "zero or more"),
])
def test_bad_line_terms_exit_with_status_2(tmp_path, capsys, argv, words):
    f = np.linspace(1e6, 1e9, 11)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=np.ones(11, complex), z0=50)
    net.write_touchstone("x", dir=str(tmp_path), skrf_comment=False)
    assert _run(["read", str(tmp_path / "x.s1p"), "--at", "100MHz", *argv]) == 2
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1


def test_plane_hands_every_term_to_read_and_removes_coax(tmp_path, capsys):
    # scikit-rf Coaxial, 3 m of copper / solid PE (as in test_line_model.py), ended in an open
    # and in a load Γ = 0.3 + 0.2j, written by skrf. The options `refplane plane` prints,
    # given to `refplane read` on the load's file, must give back the load within 0.005.
    f = np.linspace(10e6, 3e9, 1001)
    freq = skrf.Frequency.from_f(f, unit="hz")
    coax = skrf.media.Coaxial.from_Z0_Dout(freq, z0_port=50, z0=50, epsilon_r=2.25, Dout=2.95e-3,
                                           tan_delta=1e-3, sigma=5.8e7)
    cable = coax.line(3.0, unit="m")
    (cable ** coax.open()).write_touchstone("open", dir=str(tmp_path), skrf_comment=False)
    (cable ** coax.load(0.3 + 0.2j)).write_touchstone("load", dir=str(tmp_path), skrf_comment=False)
    assert _run(["plane", str(tmp_path / "open.s1p"), "--standard", "open", "--vf", "0.6667"]) == 0
    last = capsys.readouterr().out.strip().splitlines()[-1]
    assert last.startswith("To remove this line: refplane read FILE ")
    options = shlex.split(last.split("FILE", 1)[1])[:-2]          # drop "--at F"
    assert "--dielectric-loss" in options and "--z0-follows-skin" in options
    for at in ("10MHz", "100MHz", "1GHz", "2.5GHz", "3GHz"):
        assert _run(["read", str(tmp_path / "load.s1p"), *options, "--at", at, "--json"]) == 0
        point = json.loads(capsys.readouterr().out)["points"][0]
        gamma = point["gamma_mag"] * np.exp(1j * np.radians(point["gamma_deg"]))
        assert abs(gamma - (0.3 + 0.2j)) <= 0.005
    assert _run(["plane", str(tmp_path / "open.s1p"), "--standard", "open", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("dielectric_loss_db", "skin_phase", "z0_follows_skin", "model"):
        assert key in out
    assert out["model"] == "full line" and out["dielectric_loss_db"] > 0


def test_read_json_reports_every_term_of_the_removed_line(tmp_path, capsys):
    f = np.linspace(1e6, 1e9, 11)
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=np.ones(11, complex), z0=50)
    net.write_touchstone("y", dir=str(tmp_path), skrf_comment=False)
    assert _run(["read", str(tmp_path / "y.s1p"), "--at", "100MHz", "--delay", "1ns", "--loss", "0.3dB@1GHz",
                 "--dielectric-loss", "0.1dB@1GHz", "--z0-follows-skin", "--json"]) == 0
    removed = json.loads(capsys.readouterr().out)["lines_removed"][0]
    assert removed["dielectric_loss_db"] == 0.1 and removed["skin_phase"] is True
    assert removed["z0_follows_skin"] is True and removed["line_z0_ohm"] is None
