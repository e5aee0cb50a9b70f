"""Limits typed in the window: tested on the current trace with analysis.limits, drawn on the plot
that shows their quantity, and saved with the session."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.limits import evaluate_limit, parse_limit
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session
from refplane.session.tool_settings import LimitsSettings


def series_rlc(r=30.0, l_h=200e-9, f0=100e6):
    # Series R-L-C: Z = R + j(ωL − 1/(ωC)), resonant at f0 = 1/(2π√(LC)) (circuit theory).
    # At resonance Z = R = 30 Ω, so VSWR = Z0/R = 50/30 = 5/3 (definition of VSWR for R < Z0).
    c_f = 1.0 / ((2 * np.pi * f0) ** 2 * l_h)
    f = np.linspace(50e6, 150e6, 201)  # 0.5 MHz steps: 100 MHz is a swept point
    w = 2 * np.pi * f
    return Sweep(f, z_to_gamma(r + 1j * (w * l_h - 1.0 / (w * c_f)), 50.0), 50.0, name="rlc")


MUST_PASS = "vswr <= 2 over 99.5MHz:100.5MHz"
MUST_FAIL = "vswr >= 1.7 over 99.5MHz:100.5MHz"  # the VSWR dips to 5/3 at 100 MHz


def _session(*expressions):
    s = Session()
    tid = s.add_sweep(series_rlc())
    s.set_current_trace(tid)
    s.set_tool("limits", expressions=expressions)
    return s, tid


def test_decisions_are_analysis_limits_results():
    s, tid = _session(MUST_PASS, MUST_FAIL)
    sweep = s.viewed(tid)
    ok, bad = s.scene().limits
    assert ok.decision == "pass" and bad.decision == "fail"
    for check in (ok, bad):
        ref = evaluate_limit(parse_limit(check.text), sweep)
        assert check.result.decision == ref.decision
        assert check.result.worst_freq_hz == ref.worst_freq_hz
        assert check.result.margin == pytest.approx(ref.margin)
        assert check.trace_id == tid and check.plot == "vswr"
    # The failing limit's worst point is the resonance, VSWR 5/3 (definition: Z0/R).
    assert bad.result.worst_freq_hz == pytest.approx(100e6)
    assert bad.result.worst_value == pytest.approx(5 / 3, rel=1e-9)
    assert bad.result.margin == pytest.approx(5 / 3 - 1.7, rel=1e-9)
    assert "FAIL" in bad.sentence() and "pass" in ok.sentence()


def test_malformed_and_out_of_band_limits_say_why_in_one_line():
    s, _ = _session("vswr < = 2", "r_ohm >= 10 over 1GHz:2GHz", "x_ohm <= 5 over 99MHz:101MHz")
    bad, outside, fine = s.scene().limits
    assert bad.limit is None and "operator" in bad.error and "\n" not in bad.sentence()
    assert outside.result is None and "outside the sweep" in outside.error
    assert fine.plot == "r_x" and fine.decision in ("pass", "fail")


def test_no_current_trace_parses_only():
    s = Session()
    s.set_tool("limits", expressions=(MUST_PASS,))
    (check,) = s.scene().limits
    assert check.limit is not None and check.result is None and check.decision is None


def test_with_uncertainty_the_guard_band_applies():
    # JCGM 106 guard band w = U: a margin smaller than U makes the decision indeterminate.
    s, tid = _session("vswr <= 1.68 over 99.5MHz:100.5MHz")
    s.set_tool("uncertainty", enabled=True, method="linear", noise="none")
    (check,) = s.scene().limits
    assert check.result.u is not None
    u_worst = check.result.u_at_worst
    assert abs(check.result.margin) < u_worst
    assert check.decision == "indeterminate"
    # The U used is the band's: the engine's expanded U at the swept worst point.
    from refplane.session.uncertainty_view import reading_uncertainty

    u = reading_uncertainty(s.tool("uncertainty"), s.viewed(tid), [check.result.worst_freq_hz])
    assert u_worst == pytest.approx(float(u.vswr[0]), rel=1e-6)


def test_limits_are_saved_with_the_session(tmp_path):
    from model_sweeps import write_sweep
    from refplane.analysis.files.loading import read_sweep
    from refplane.session.files import open_session, save_session

    s = Session()
    tid = s.add_sweep(read_sweep(write_sweep(series_rlc(), tmp_path / "rlc.s1p")))
    s.set_current_trace(tid)
    s.set_tool("limits", expressions=(MUST_PASS, MUST_FAIL))
    again, notes = open_session(save_session(s, tmp_path / "bench.refplane"))
    assert notes == []
    assert again.tool("limits") == LimitsSettings(expressions=(MUST_PASS, MUST_FAIL))
    assert [c.decision for c in again.scene().limits] == ["pass", "fail"]
