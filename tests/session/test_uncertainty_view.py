"""The ± of a marker from the session's "uncertainty" settings: the same numbers as the engine and
``refplane read --json``, the residual terms as data sheets state them, bounds from EURAMET cg-12."""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pytest

from refplane.analysis.calibration.calfile import save_calibration
from refplane.analysis.calibration.solve import calibrate
from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.calibration.standards import reflection, standards_from_json
from refplane.analysis.sweep import Sweep
from refplane.analysis.uncertainty.calprop import calibration_uncertainty as propagate_calibration
from refplane.analysis.uncertainty.reading import UncertaintyOptions, uncertain_points
from refplane.analysis.uncertainty.residual import parse_residual
from refplane.session import tools, uncertainty_view as uv
from refplane.session.model import Session
from refplane.session.tool_settings import UncertaintySettings

ON = UncertaintySettings(enabled=True)


def load_sweep(z=77.6 + 26.4j, n=201):
    f = np.linspace(100e6, 1e9, n)
    return Sweep(f, np.full(n, z_to_gamma(z, 50.0)), 50.0, name="load")


def test_off_by_default_gives_nothing():
    assert uv.reading_uncertainty(UncertaintySettings(), load_sweep(), 470e6) is None
    assert Session().tool("uncertainty") == UncertaintySettings()


def test_residual_terms_as_data_sheets_state_them():
    # The example, as EURAMET cg-12 writes the terms: 40 dB directivity → |D| = 0.01,
    # 35 dB source match → |M| = 10^(−35/20), ±0.1 dB tracking → |T| = 10^(0.1/20) − 1.
    r = uv.residual_terms(ON)
    assert r.directivity == pytest.approx(0.01)
    assert r.source_match == pytest.approx(10 ** (-35 / 20))
    assert r.tracking == pytest.approx(10 ** (0.1 / 20) - 1)
    assert r == parse_residual("40dB,35dB,0.1dB")
    assert uv.residual_terms(dataclasses.replace(ON, use_residual=False)) is None


def test_same_numbers_as_the_engine_and_the_command_line(tmp_path, capsys):
    from model_sweeps import write_sweep
    from refplane.cli import main

    sweep = load_sweep()
    settings = dataclasses.replace(ON, noise="none")
    u = uv.reading_uncertainty(settings, sweep, [470e6])
    direct = uncertain_points(sweep, [470e6], options=UncertaintyOptions(
        residual=parse_residual("40dB,35dB,0.1dB"), noise="none"))
    assert u.json_point(0) == direct.json_point(0)
    path = write_sweep(sweep, tmp_path / "load.s1p")
    assert main(["read", str(path), "--at", "470MHz", "--residual", "40dB,35dB,0.1dB", "--noise", "none",
                 "--json"]) == 0
    point = json.loads(capsys.readouterr().out)["points"][0]
    for key, value in u.json_point(0).items():
        if value is not None:
            assert point["u"][key] == pytest.approx(value, rel=1e-6), key


def test_never_above_the_worst_case_bound():
    # EURAMET cg-12: the magnitude error never exceeds D + T|Γ| + M|Γ|² (linear, no other source).
    s = dataclasses.replace(ON, noise="none", interpolation=False, method="linear")
    for z in (20.0, 50.0 + 30j, 150.0 - 80j, 400.0):
        sweep = load_sweep(z)
        g = abs(z_to_gamma(z, 50.0))
        u = uv.reading_uncertainty(s, sweep, 470e6)
        assert u.gamma_mag[0] <= uv.residual_terms(s).worst_case(g) + 1e-12


def test_the_trace_path_carries_the_offsets_and_their_uncertainty():
    state = Session()
    raw = load_sweep()
    tid = state.add_sweep(raw)
    state.set_offsets(tid, [LineOffset.from_length(0.2, 0.66)])
    trace = state.trace(tid)
    s = dataclasses.replace(ON, noise="none")
    u0 = uv.trace_uncertainty(s, trace, [469e6])
    # The reading's Γ is the displayed one (offset removed), at a swept point.
    from refplane.analysis.readings.markers import gamma_at

    assert abs(u0.gamma[0] - gamma_at(trace.displayed, 469e6, 1)) < 1e-9
    # A ±5 ps delay moves the phase (GUM sensitivity: 2·2π·f·u(τ) rad on a round trip); |Γ| hardly.
    u1 = uv.trace_uncertainty(dataclasses.replace(s, offset_delay_u_s=5e-12), trace, [469e6])
    assert u1.gamma_deg[0] > u0.gamma_deg[0]
    extra = math.degrees(2 * 2 * math.pi * 469e6 * 5e-12) * 2       # k = 2
    assert u1.gamma_deg[0] == pytest.approx(math.hypot(u0.gamma_deg[0], extra), rel=0.1)
    cells = uv.marker_u(s, trace, 470e6)
    assert set(cells) >= {"r_ohm", "x_ohm", "vswr", "return_loss_db"}


def test_trace_noise_level_and_auto():
    sweep = load_sweep()
    base = dataclasses.replace(ON, use_residual=False, interpolation=False)
    # A noise σ per axis: the |Γ| error is normal with σ, and its 95 % half-width is 1.96σ
    # (GUM, annex G; "k = 2" rounds 1.96 up).
    u = uv.reading_uncertainty(dataclasses.replace(base, noise="level", noise_level=0.002), sweep, 470e6)
    assert u.gamma_mag[0] == pytest.approx(1.96 * 0.002, rel=0.01)
    # A flat sweep has no scatter: the automatic estimate finds none.
    u = uv.reading_uncertainty(dataclasses.replace(base, noise="auto"), sweep, 470e6)
    assert u.gamma_mag[0] == pytest.approx(0.0, abs=1e-9)
    with pytest.raises(AnalysisError, match="noise"):
        uv.reading_uncertainty(dataclasses.replace(base, noise="loud"), sweep, 470e6)


KIT = {
    "format": "refplane-standards", "version": 1, "name": "test kit (invented)",
    "short": {"l0_h": 5e-12, "l0_h_u": 3e-12, "offset_delay_s": 30e-12, "offset_delay_s_u": 1.5e-12},
    "open": {"c0_f": 50e-15, "c0_f_u": 8e-15, "offset_delay_s": 30e-12, "offset_delay_s_u": 1.5e-12},
    "load": {"r_ohm": 50.0, "r_ohm_u": 0.6},
}


def test_a_saved_calibration_supplies_its_propagated_uncertainty(tmp_path):
    f = np.linspace(100e6, 1e9, 11)
    std = standards_from_json(KIT)
    measured = {n: Sweep(f, reflection(std.reflect(n), f), 50.0, name=n) for n in ("short", "open", "load")}
    cu = propagate_calibration(measured, std, noise=0.002)
    cal = dataclasses.replace(calibrate(measured, std), uncertainty=cu)
    path = tmp_path / "port1.json"
    save_calibration(cal, path)
    s = dataclasses.replace(ON, use_residual=False, noise="none", calibration_file=str(path))
    sweep = load_sweep(n=11)
    u = uv.reading_uncertainty(s, sweep, 470e6)
    direct = uncertain_points(sweep, [470e6], options=UncertaintyOptions(calibration=cu, noise="none"))
    assert u.json_point(0) == direct.json_point(0) and u.gamma_mag[0] > 0
    assert "port1.json" in uv.sources_sentence(s)
    with pytest.raises(AnalysisError):
        uv.reading_uncertainty(dataclasses.replace(s, calibration_file=str(tmp_path / "missing.json")),
                               sweep, 470e6)


def test_settings_round_trip_through_a_session_file_record():
    s = dataclasses.replace(ON, calibration_file="cal/port1.json", noise="level", noise_level=0.003,
                            method="monte-carlo")
    assert tools.from_json("uncertainty", tools.to_json(s)) == s
