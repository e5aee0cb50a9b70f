"""The shared offset options (--delay, --length/--vf, --loss, --line-z0, --offset-port) on ``refplane read``."""

from __future__ import annotations

import argparse
import json

import numpy as np
import pytest

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S, LineOffset, add_offsets
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep
from refplane.cli import main
from refplane.cli.offsets import add_offset_options, offset_from_args, offsets_from_args

skrf = pytest.importorskip("skrf")

F_QUARTER = SPEED_OF_LIGHT_M_S * 0.66 / (4 * 0.2)   # 20 cm, vf 0.66: about 247 MHz (common practice)


def _write(sweep: Sweep, folder, stem: str) -> str:
    """Write a sweep as Touchstone with scikit-rf (the reference writer)."""
    net = skrf.Network(frequency=skrf.Frequency.from_f(sweep.freq_hz, unit="hz"), s=sweep.s, z0=50, name=stem)
    net.write_touchstone(stem, dir=str(folder), form="ri", skrf_comment=False)
    return str(folder / f"{stem}.s{sweep.n_ports}p")


@pytest.fixture
def open_through_cable(tmp_path):
    # An open at the end of 20 cm of coax (vf 0.66), 0.1 dB at 1 GHz, swept to 500 MHz.
    freq = np.unique(np.concatenate([np.linspace(100e3, 500e6, 401), [F_QUARTER]]))
    bare = Sweep(freq, np.ones(freq.size, complex), 50.0)
    seen = add_offsets(bare, [LineOffset.from_length(0.2, 0.66, loss_db=0.1)])
    return _write(seen, tmp_path, "open_cable")


def _run(argv) -> int:
    """The exit status of ``refplane ARGV``; argparse's usage errors end in SystemExit(2)."""
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser()
    p.add_argument("--port", type=int, default=1)
    add_offset_options(p)
    return p


def test_open_at_end_of_quarter_wave_cable_reads_short_then_open_once_removed(open_through_cable, capsys):
    # Common practice (references.md): an open at the end of 20 cm of vf-0.66 coax reads as a
    # short near 247 MHz; removing the 20 cm moves the plane to the open, which reads as an open.
    at = f"{F_QUARTER:.6f}Hz"
    assert main(["read", open_through_cable, "--at", at, "--json"]) == 0
    plain = json.loads(capsys.readouterr().out)["points"][0]
    assert plain["gamma_mag"] == pytest.approx(1.0, abs=0.02)   # 0.1 dB round trip at 247 MHz
    assert abs(abs(plain["gamma_deg"]) - 180.0) < 1.0            # a short
    assert main(["read", open_through_cable, "--at", at, "--length", "20cm", "--vf", "0.66",
                 "--loss", "0.1dB@1GHz", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    point = out["points"][0]
    assert point["gamma_mag"] == pytest.approx(1.0, abs=1e-9)
    assert point["gamma_deg"] == pytest.approx(0.0, abs=1e-6)    # an open
    assert out["lines_removed"][0]["port"] == 1
    assert out["lines_removed"][0]["delay_s"] == pytest.approx(0.2 / (0.66 * SPEED_OF_LIGHT_M_S))


def test_delay_option_equals_length_option(open_through_cable, capsys):
    delay = 0.2 / (0.66 * SPEED_OF_LIGHT_M_S)
    assert main(["read", open_through_cable, "--at", "100MHz", "--delay", f"{delay * 1e12:.9f}ps", "--json"]) == 0
    by_delay = json.loads(capsys.readouterr().out)["points"][0]
    assert main(["read", open_through_cable, "--at", "100MHz", "--length", "0.2m", "--vf", "0.66", "--json"]) == 0
    by_length = json.loads(capsys.readouterr().out)["points"][0]
    assert by_delay["gamma_deg"] == pytest.approx(by_length["gamma_deg"], abs=1e-6)


def test_table_output_says_what_was_removed(open_through_cable, capsys):
    assert main(["read", open_through_cable, "--at", "100MHz", "--delay", "1.01ns"]) == 0
    out = capsys.readouterr().out
    assert "port 1: line removed: delay 1.010 ns" in out


@pytest.mark.parametrize("argv, words", [
    (["--delay", "1ns", "--length", "20cm", "--vf", "0.66"], "not allowed with argument"),
    (["--vf", "0.66"], "--vf applies to --length"),
    (["--length", "20cm"], "--length needs --vf"),
    (["--delay", "1nm"], "unknown time unit"),
    (["--length", "20 parsecs", "--vf", "0.6"], "unknown length unit"),
    (["--loss=-0.4dB@1GHz"], "must not be negative"),
    (["--loss", "0.4W@1GHz"], "loss must be in dB"),
    (["--delay", "1ns", "--vf", "1.5"], "velocity factor"),
    (["--delay", "1ns", "--line-z0", "-50"], "above zero"),
    (["--line-z0", "75"], "give its --delay"),
    (["--delay", "1ns", "--offset-port", "3"], "port 3 does not exist"),
    (["--delay", "1ns", "--offset-port", "x"], "not a port number"),
    (["--offset-port", "1"], "--offset-port needs a line"),
])
def test_contradictory_or_malformed_options_exit_with_status_2(open_through_cable, capsys, argv, words):
    assert _run(["read", open_through_cable, "--at", "100MHz", *argv]) == 2
    err = capsys.readouterr().err
    assert words in err
    assert len(err.strip().splitlines()) == 1


def test_offsets_go_to_the_read_port_by_default_or_to_all():
    two_port = Sweep(np.array([1e9]), np.zeros((1, 2, 2), complex), 50.0)
    args = _parser().parse_args(["--port", "2", "--delay", "1ns"])
    assert offsets_from_args(args, two_port) == (None, LineOffset(1e-9))
    args = _parser().parse_args(["--delay", "1ns", "--offset-port", "all", "--line-z0", "75ohm"])
    assert offsets_from_args(args, two_port) == (LineOffset(1e-9, line_z0_ohm=75.0),) * 2
    args = _parser().parse_args(["--port", "2", "--delay", "1ns", "--offset-port", "1"])
    assert offsets_from_args(args, two_port) == (LineOffset(1e-9), None)
    assert offsets_from_args(_parser().parse_args([]), two_port) is None


def test_option_values_become_one_line_offset():
    args = _parser().parse_args(["--length", "8in", "--vf", "0.7", "--loss", "0.25dB@500MHz"])
    offset = offset_from_args(args)
    # 8 in = 0.2032 m exactly (international inch, 25.4 mm).
    assert offset.delay_s == pytest.approx(0.2032 / (0.7 * SPEED_OF_LIGHT_M_S), rel=1e-15)
    assert (offset.loss_db, offset.loss_ref_hz) == (0.25, 500e6)
    args = _parser().parse_args(["--loss", "0.3dB"])
    assert offset_from_args(args) == LineOffset(loss_db=0.3, loss_ref_hz=1e9)
    with pytest.raises(AnalysisError):
        offset_from_args(_parser().parse_args(["--vf", "0.5"]))


@pytest.mark.needs_qt
def test_render_takes_the_same_options(open_through_cable, tmp_path, capsys):
    out = tmp_path / "chart.png"
    assert _run(["render", open_through_cable, "--at", "100MHz", "-o", str(out),
                 "--length", "20cm", "--vf", "0.66"]) == 0
    assert out.stat().st_size > 0
    assert _run(["render", open_through_cable, "-o", str(tmp_path / "b.png"), "--vf", "0.66"]) == 2
    assert "--vf applies to --length" in capsys.readouterr().err
    assert not (tmp_path / "b.png").exists()


def test_the_causal_phase_is_the_default_and_can_be_left_out(tmp_path, capsys):
    # The √f loss carries its equal phase by default (causal skin effect, Pozar §1.7);
    # --no-skin-phase gives the loss-only form: checked against remove_offsets directly.
    import json

    import numpy as np

    from refplane.analysis.files import touchstone
    from refplane.analysis.lines.deembed import LineOffset, remove_offsets
    from refplane.analysis.readings import read_points
    from refplane.analysis.sweep import Sweep
    from refplane.cli import main

    f = np.linspace(10e6, 1e9, 101)
    sweep = Sweep(f, np.full(f.size, 0.3 + 0.1j), 50.0, name="dut")
    path = touchstone.write(sweep, tmp_path / "dut.s1p")
    readings = {}
    for flag, phase in (([], True), (["--no-skin-phase"], False), (["--skin-phase"], True)):
        assert main(["read", str(path), "--at", "700MHz", "--delay", "1ns", "--loss", "1dB@1GHz",
                     "--json", *flag]) == 0
        point = json.loads(capsys.readouterr().out)["points"][0]
        expected = read_points(remove_offsets(sweep, [LineOffset(1e-9, 1.0, 1e9, skin_phase=phase)]),
                               [700e6]).readout.at(0)
        assert point["x_ohm"] == pytest.approx(expected.x_ohm, rel=1e-9)
        readings[tuple(flag)] = point["x_ohm"]
    assert readings[()] == readings[("--skin-phase",)] != readings[("--no-skin-phase",)]
