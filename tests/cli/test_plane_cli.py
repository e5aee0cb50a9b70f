"""``refplane plane``: JSON and summary output, status 2 on bad requests."""

from __future__ import annotations

import json

import numpy as np
import pytest

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S
from refplane.cli import main

skrf = pytest.importorskip("skrf")


def _cable_file(folder, standard: str, length_m=0.2, vf=0.66, loss_db=0.4, n=401) -> str:
    # Reference data: scikit-rf DefinedGammaZ0 line (γ from the √f loss law, 50 Ω) ended in
    # skrf's ideal open or short, written by skrf as Touchstone.
    f = np.linspace(1e6, 2e9, n)
    freq = skrf.Frequency.from_f(f, unit="hz")
    alpha = loss_db / 8.685889638 * np.sqrt(f / 1e9) / length_m
    beta = 2 * np.pi * f / (vf * SPEED_OF_LIGHT_M_S)
    media = skrf.media.DefinedGammaZ0(freq, z0_port=50, z0=50, gamma=alpha + 1j * beta)
    end = media.open() if standard == "open" else media.short()
    net = media.line(length_m, unit="m") ** end
    net.write_touchstone(f"cable_{standard}", dir=str(folder), form="ma", skrf_comment=False)
    return str(folder / f"cable_{standard}.s1p")


def _run(argv) -> int:
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


@pytest.mark.parametrize("standard", ["open", "short"])
def test_json_reports_one_way_delay_loss_and_length(tmp_path, capsys, standard):
    path = _cable_file(tmp_path, standard)
    assert _run(["plane", path, "--standard", standard, "--vf", "0.66", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("delay_s", "loss_db", "loss_ref_hz", "length_m", "residual"):
        assert key in out
    # One-way delay = length / (vf · c) (SI definition of c); skrf's line was given 20 cm.
    assert out["delay_s"] == pytest.approx(0.2 / (0.66 * SPEED_OF_LIGHT_M_S), rel=1e-6)
    assert out["length_m"] == pytest.approx(0.2, rel=1e-6)
    assert out["loss_db"] == pytest.approx(0.4, rel=1e-4)
    assert out["loss_ref_hz"] == 1e9
    assert out["residual"] < 1e-4
    assert out["verdict"].startswith("good fit")


def test_length_is_null_without_vf_and_band_limits_points(tmp_path, capsys):
    path = _cable_file(tmp_path, "short")
    assert _run(["plane", path, "--standard", "SHORT", "--band", "100MHz:1GHz", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["length_m"] is None
    assert out["n_points"] < 401


def test_summary_in_words(tmp_path, capsys):
    path = _cable_file(tmp_path, "open")
    assert _run(["plane", path, "--standard", "open", "--vf", "0.66"]) == 0
    out = capsys.readouterr().out
    assert "one-way delay  1.0108 ns" in out          # 0.2 m / (0.66 c) = 1.0108 ns
    assert "20.00 cm at velocity factor 0.66" in out
    assert "0.400 dB at 1 GHz" in out
    assert "good fit" in out
    assert "refplane read FILE --length=20.000cm --vf 0.66" in out


def test_wrong_standard_verdict(tmp_path, capsys):
    path = _cable_file(tmp_path, "open")
    assert _run(["plane", path, "--standard", "short"]) == 0
    assert "reads like an open rather than a short" in capsys.readouterr().out


def test_help_carries_the_static_caution(capsys):
    assert _run(["plane", "--help"]) == 0
    assert "static charge" in capsys.readouterr().out


@pytest.mark.parametrize("argv, words", [
    (["--standard", "load"], "invalid choice"),
    ([], "--standard"),
    (["--standard", "open", "--band", "1GHz:100MHz"], "upper frequency"),
    (["--standard", "open", "--band", "5GHz:6GHz"], "at least 3"),
    (["--standard", "open", "--vf", "0"], "velocity factor"),
    (["--standard", "open", "--port", "2"], "port 2 does not exist"),
    (["--standard", "open", "--loss-ref", "1 parsec"], "frequency unit"),
])
def test_bad_requests_exit_with_status_2(tmp_path, capsys, argv, words):
    path = _cable_file(tmp_path, "open", n=50)
    assert _run(["plane", path, *argv]) == 2
    err = capsys.readouterr().err
    assert words in err and len(err.strip().splitlines()) == 1


def test_missing_file_is_status_2(tmp_path, capsys):
    assert _run(["plane", str(tmp_path / "none.s1p"), "--standard", "open"]) == 2
    assert "no such file" in capsys.readouterr().err
