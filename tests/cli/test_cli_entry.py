"""The command line's front door: a mistyped command is named, not opened as a file; a sweep or
session name opens the window; a value typed with its unit after a space still reads.

Sources: the frequency forms ("470 MHz", "470M") are common practice on analyzers and in the trade;
the read-outs compared are Refplane's own in both spellings, checked elsewhere against scikit-rf.
"""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pytest

import refplane.cli as cli
from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import join_split_values, main


@pytest.fixture
def opened(monkeypatch):
    """Record what would open in the window instead of opening it."""
    calls = []
    monkeypatch.setattr(cli, "_open_window", lambda files: calls.append(list(files)) or 0)
    return calls


@pytest.fixture
def resistor(tmp_path):
    # A 75 Ω resistor with 9 nH leads, Γ = (Z − Z0)/(Z + Z0) (Pozar, ch. 2).
    f = np.linspace(1e8, 1e9, 91)
    z = 75 + 1j * 2 * np.pi * f * 9e-9
    return str(touchstone.write(Sweep(f, (z - 50) / (z + 50), 50.0, name="r75"), tmp_path / "r75.s1p"))


@pytest.mark.parametrize("typed, meant", [("raed", "read"), ("fti", "fit"), ("rendr", "render"),
                                          ("plnae", "plane"), ("corect", "correct"), ("READ", "read")])
def test_a_mistyped_command_is_named_with_the_likely_one(opened, capsys, typed, meant):
    assert main([typed, "x.s1p"]) == 2
    err = capsys.readouterr().err
    assert f"unknown command '{typed}'; did you mean '{meant}'?" in err
    assert opened == []  # the window is not opened on a typo


def test_a_word_like_no_command_and_no_file_is_explained(opened, capsys):
    assert main(["xyzzy"]) == 2
    err = capsys.readouterr().err
    assert "neither a command nor a file" in err and "read" in err
    assert opened == []


@pytest.mark.parametrize("name", ["bench_sweep.s1p", "amp.S2P", "cable.ts", "scan.csv", "antenna.s4p",
                                  "tuning.refplane", "sub/dir/raed"])
def test_sweep_and_session_names_open_the_window_even_before_they_exist(opened, name):
    assert main([name, "second.s1p"]) == 0
    assert opened == [[name, "second.s1p"]]


def test_an_existing_file_of_any_name_opens_the_window(opened, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "raed").write_text("a file that happens to look like a typo\n")
    assert main(["raed"]) == 0 and opened == [["raed"]]


def test_no_arguments_open_the_window(opened):
    assert main([]) == 0 and opened == [[]]


@pytest.mark.parametrize("argv, joined", [
    (["read", "x.s1p", "--at", "470", "MHz"], ["read", "x.s1p", "--at", "470 MHz"]),
    (["read", "x.s1p", "--at=470", "MHz"], ["read", "x.s1p", "--at=470 MHz"]),
    (["read", "--at", "1.2", "GHz", "x.s1p"], ["read", "--at", "1.2 GHz", "x.s1p"]),
    (["read", "x.s1p", "--delay", "31", "ps"], ["read", "x.s1p", "--delay", "31 ps"]),
    (["read", "x.s1p", "--length", "20", "cm"], ["read", "x.s1p", "--length", "20 cm"]),
    (["read", "x.s1p", "--loss", "0.4", "dB@1GHz"], ["read", "x.s1p", "--loss", "0.4 dB@1GHz"]),
    # Left alone: a unit already attached, a number that is no option's value, a file name.
    (["read", "x.s1p", "--at", "470MHz"], ["read", "x.s1p", "--at", "470MHz"]),
    (["read", "x.s1p", "--port", "2", "m.s1p"], ["read", "x.s1p", "--port", "2", "m.s1p"]),
    (["fit", "x.s1p", "3", "MHz"], ["fit", "x.s1p", "3", "MHz"]),
])
def test_split_values_are_joined(argv, joined):
    assert join_split_values(argv) == joined


def test_unquoted_frequency_reads_as_the_quoted_one(resistor, capsys):
    assert main(["read", resistor, "--at", "470 MHz", "--json"]) == 0
    quoted = json.loads(capsys.readouterr().out)
    assert main(["read", resistor, "--at", "470", "MHz", "--json"]) == 0
    unquoted = json.loads(capsys.readouterr().out)
    assert unquoted == quoted
    assert main(["read", resistor, "--at=470", "MHz", "--json"]) == 0
    assert json.loads(capsys.readouterr().out) == quoted


def test_a_typo_as_a_process_exits_2_without_a_window(tmp_path):
    env_free = {"PATH": "/usr/bin:/bin", "PYTHONPATH": ":".join(sys.path)}
    out = subprocess.run([sys.executable, "-m", "refplane", "raed", "x.s1p"], capture_output=True,
                         text=True, timeout=60, env=env_free, cwd=tmp_path)
    assert out.returncode == 2
    assert "did you mean 'read'?" in out.stderr and "Traceback" not in out.stderr
