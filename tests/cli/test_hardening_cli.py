"""Issue 13 through the command line: every corpus file refused in one line with status 2 (no
traceback), warnings as one line, |Γ| > 1 readings, option values named, outputs checked before
the work, and no temporary file left behind by SIGTERM during ``correct`` or ``render``."""

from __future__ import annotations

import json
import os
import pathlib
import subprocess
import sys
import textwrap

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import main as _main

ROOT = pathlib.Path(__file__).resolve().parents[2]
CORPUS = ROOT / "tests" / "corpus" / "hardening"
MANIFEST = json.loads((CORPUS / "manifest.json").read_text(encoding="utf-8"))
CAL = ROOT / "sample_sweeps" / "calibration"
DUT = CAL / "raw_leaded_resistor_75ohm.s1p"
STANDARDS = ["--short", str(CAL / "raw_short.s1p"), "--open", str(CAL / "raw_open.s1p"),
             "--load", str(CAL / "raw_load.s1p")]


def main(argv):
    try:
        return _main(argv)
    except SystemExit as exc:
        return exc.code


def _argv_for(name: str, tmp_path) -> list[str]:
    path = str(CORPUS / name)
    out = str(tmp_path / "out.s1p")
    if name.endswith(".cal.json"):
        return ["correct", "--cal", path, str(DUT), "-o", out]
    if name.endswith(".standards.json"):
        return ["correct", *STANDARDS, "--standards", path, str(DUT), "-o", out]
    return ["read", path, "--at", "1GHz"]


ERRORS = sorted(n for n, e in MANIFEST.items() if e["expect"] == "error")


@pytest.mark.parametrize("name", ERRORS)
def test_every_refused_corpus_file_is_one_line_and_status_2(name, tmp_path, capsys):
    assert main(_argv_for(name, tmp_path)) == 2
    captured = capsys.readouterr()
    err = captured.err
    assert captured.out == ""
    assert err.count("\n") == 1 and err.startswith("refplane "), err
    assert "Traceback" not in err
    assert MANIFEST[name]["contains"] in err
    assert not (tmp_path / "out.s1p").exists()


def test_missing_end_is_read_with_a_one_line_warning(capsys):
    import warnings

    from refplane.analysis.files.touchstone import TouchstoneWarning

    with warnings.catch_warnings():
        warnings.simplefilter("always", TouchstoneWarning)  # as outside pytest's -W error
        assert main(["read", str(CORPUS / "no_end.ts"), "--at", "1.5GHz", "--json"]) == 0
    captured = capsys.readouterr()
    assert captured.err.count("\n") == 1
    assert captured.err.startswith("refplane read: warning: ") and "without [End]" in captured.err
    json.loads(captured.out)


def test_active_load_reads_na_and_null(tmp_path, capsys):
    # Pozar ch. 2: VSWR and mismatch loss are defined for |Γ| ≤ 1 only; return loss
    # −20·log10(1.25) = −1.94 dB stays (negative). Issue 13: "n/a (|Γ| > 1)" and null.
    path = touchstone.write(Sweep(np.array([0.5e9, 1.5e9]), np.array([1.25, 1.25 + 0j]), 50.0),
                            tmp_path / "active.s1p")
    assert main(["read", str(path), "--at", "1GHz"]) == 0
    table = capsys.readouterr().out
    assert "n/a (|Γ| > 1)" in table and "−1.94 dB" in table
    assert main(["read", str(path), "--at", "1GHz", "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    assert point["vswr"] is None
    assert point["return_loss_db"] == pytest.approx(-20 * np.log10(1.25), rel=1e-12)


@pytest.mark.parametrize("option, words", [
    (["--delay", "1e300"], "--delay: a line delay of 1e+300 s is far too long"),
    (["--loss", "1e308dB@1GHz"], "--loss: 1e+308 dB at 1e+09 Hz is more than 300 dB"),
    (["--length", "1e300m", "--vf", "0.66"], "--length:"),
])
def test_absurd_line_options_blame_the_option(option, words, capsys):
    assert main(["read", str(DUT), "--at", "100MHz", *option]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and words in err and "S-parameters" not in err


def test_correct_checks_outputs_before_the_work(tmp_path, capsys):
    # No verdict line may come before the error: the output folder is checked first.
    out = tmp_path / "absent" / "deeper" / "x.s1p"
    assert main(["correct", *STANDARDS, str(DUT), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "does not exist" in err and "quality" not in err
    cal_out = tmp_path / "absent" / "terms.json"
    assert main(["correct", *STANDARDS, "--save-cal", str(cal_out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "does not exist" in err and "quality" not in err


def test_named_pipe_as_a_process_does_not_hang(tmp_path):
    if not hasattr(os, "mkfifo"):
        pytest.skip("no named pipes here")
    fifo = tmp_path / "pipe.s1p"
    os.mkfifo(fifo)
    done = subprocess.run([sys.executable, "-m", "refplane", "read", str(fifo), "--at", "1GHz"],
                          capture_output=True, text=True, timeout=60,
                          env={**os.environ, "PYTHONPATH": str(ROOT / "app")})
    assert done.returncode == 2 and "named pipe" in done.stderr
    assert done.stderr.count("\n") == 1


# A child process that sends itself SIGTERM in the middle of the atomic write (right after the
# temporary file is made); the command line turns SIGTERM into an interruption, the write
# removes its temporary file, and the old output stays as it was.
_CHILD = textwrap.dedent("""
    import os, signal, sys
    from refplane.analysis.files import fileio
    real_chmod = os.chmod
    def chmod_then_term(path, mode):
        real_chmod(path, mode)
        os.kill(os.getpid(), signal.SIGTERM)
    fileio.os.chmod = chmod_then_term
    from refplane.cli import main
    sys.exit(main(sys.argv[1:]))
""")


@pytest.mark.parametrize("command", ["correct", "render"])
def test_sigterm_during_the_write_leaves_no_temporary_file(command, tmp_path):
    folder = tmp_path / "out"
    folder.mkdir()
    if command == "correct":
        target = folder / "fixed.s1p"
        args = ["correct", *STANDARDS, str(DUT), "-o", str(target), "--force"]
    else:
        pytest.importorskip("PySide6")
        target = folder / "chart.png"
        args = ["render", str(DUT), "--at", "470MHz", "-o", str(target), "--force"]
    target.write_bytes(b"old content")
    env = {**os.environ, "PYTHONPATH": str(ROOT / "app"), "QT_QPA_PLATFORM": "offscreen"}
    done = subprocess.run([sys.executable, "-c", _CHILD, *args], capture_output=True, text=True,
                          timeout=300, env=env)
    assert done.returncode == 130, done.stderr
    assert "Traceback" not in done.stderr
    assert sorted(p.name for p in folder.iterdir()) == [target.name]
    assert target.read_bytes() == b"old content"
