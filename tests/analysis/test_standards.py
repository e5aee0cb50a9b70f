"""Standard definitions: responses against textbook identities and scikit-rf, and the JSON file."""

import json

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError, SweepFileError
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.calibration.standards import (
    Standard, StandardSet, load_standards, reflection, save_standards, standards_from_json, through_s,
)

F = np.linspace(10e6, 20e9, 401)
W = 2 * np.pi * F


def _skrf_offset(std: Standard, z_term, z0=50.0):
    """Reference: scikit-rf builds the offset line (DefinedGammaZ0 with our Zc and γl) and
    terminates it with the element's impedance; returns Γ at the input referred to z0."""
    import skrf as rf

    fr = rf.Frequency.from_f(F, unit="Hz")
    z_off = std.offset_z0_ohm or z0
    loss, tau = std.offset_loss_ohm_per_s, std.offset_delay_s
    root = np.sqrt(F / 1e9)
    zc = z_off + (1 - 1j) * loss / (2 * W) * root
    al = loss * tau / (2 * z_off) * root
    gl = al + 1j * (W * tau + al)
    media = rf.media.DefinedGammaZ0(fr, z0_port=z0, z0=zc, gamma=gl)
    with np.errstate(divide="ignore", invalid="ignore"):
        g_term = np.where(np.isinf(z_term), 1.0 + 0j, (z_term - z0) / (z_term + z0))
    term = rf.Network(frequency=fr, s=g_term.reshape(-1, 1, 1), z0=z0)
    return (media.line(1.0, "m") ** term).s[:, 0, 0], media.line(1.0, "m").s


def test_ideal_standards_are_textbook_values():
    # Textbook (Pozar ch. 2): a short is Γ = −1, an open +1, a matched load 0; an ideal through S21 = 1.
    assert np.allclose(reflection(Standard("short"), F), -1, atol=0)
    assert np.allclose(reflection(Standard("open"), F), 1, atol=0)
    assert np.allclose(reflection(Standard("load"), F), 0, atol=0)
    s = through_s(Standard("through"), F)
    assert np.allclose(s[:, 1, 0], 1) and np.allclose(s[:, 0, 0], 0)


def test_open_capacitance_and_short_inductance_match_the_impedance_identity():
    # Γ = (Z − Z0)/(Z + Z0) with Z = 1/(jωC) and Z = jωL (textbook identities, Pozar ch. 2).
    c = 50e-15 + 1e-26 * F
    g_open = reflection(Standard("open", c0_f=50e-15, c1_f_per_hz=1e-26), F)
    assert np.max(np.abs(g_open - z_to_gamma(1 / (1j * W * c), 50.0))) < 1e-13
    lh = 20e-12 - 1e-22 * F + 3e-33 * F**2
    g_short = reflection(Standard("short", l0_h=20e-12, l1_h_per_hz=-1e-22, l2_h_per_hz2=3e-33), F)
    assert np.max(np.abs(g_short - z_to_gamma(1j * W * lh, 50.0))) < 1e-13


def test_lossless_offset_delay_rotates_by_twice_the_delay():
    # Textbook: a matched lossless line of one-way delay τ multiplies Γ by e^(−j2ωτ).
    g = reflection(Standard("short", offset_delay_s=30e-12), F)
    assert np.max(np.abs(g - (-np.exp(-2j * W * 30e-12)))) < 1e-13


@pytest.mark.parametrize("std, z_term", [
    (Standard("open", offset_delay_s=28e-12, offset_loss_ohm_per_s=2.2e9, c0_f=50e-15,
              c1_f_per_hz=-300e-27, c2_f_per_hz2=20e-36, c3_f_per_hz3=-0.2e-45),
     lambda: 1 / (1j * W * (50e-15 - 300e-27 * F + 20e-36 * F**2 - 0.2e-45 * F**3))),
    (Standard("short", offset_delay_s=30e-12, offset_loss_ohm_per_s=2.0e9, l0_h=2.1e-12,
              l1_h_per_hz=-1.4e-22, l2_h_per_hz2=2e-33, l3_h_per_hz3=-1e-44),
     lambda: 1j * W * (2.1e-12 - 1.4e-22 * F + 2e-33 * F**2 - 1e-44 * F**3)),
    (Standard("load", r_ohm=51.0, series_l_h=0.3e-9, offset_delay_s=5e-12, offset_z0_ohm=48.0),
     lambda: 51.0 + 1j * W * 0.3e-9),
    (Standard("open", offset_delay_s=40e-12, offset_z0_ohm=52.0, offset_loss_ohm_per_s=1e9),
     lambda: np.full(F.shape, np.inf + 0j)),
])
def test_offset_model_matches_scikit_rf_cascade(std, z_term):
    # Reference: scikit-rf (media.DefinedGammaZ0 line with the same Zc and γl, cascaded with
    # the termination) — checks the termination, the offset and the renormalisation to 50 Ω.
    ref, _ = _skrf_offset(std, z_term())
    assert np.max(np.abs(reflection(std, F) - ref)) < 1e-12


def test_through_line_matches_scikit_rf_line():
    # Reference: scikit-rf line of the same Zc and γl renormalised to 50 Ω ports.
    std = Standard("through", offset_delay_s=60e-12, offset_loss_ohm_per_s=3e9, offset_z0_ohm=53.0)
    _, line = _skrf_offset(std, np.zeros(F.shape, complex))
    assert np.max(np.abs(through_s(std, F) - line)) < 1e-12


def test_lossy_offset_at_zero_hertz_is_refused():
    with pytest.raises(AnalysisError, match="0 Hz"):
        reflection(Standard("short", offset_delay_s=1e-11, offset_loss_ohm_per_s=1e9), np.array([0.0, 1e9]))


def test_bad_definitions_are_refused():
    with pytest.raises(AnalysisError, match="offset loss"):
        Standard("short", offset_loss_ohm_per_s=-1.0)
    with pytest.raises(AnalysisError, match="kind"):
        Standard("reflect")
    with pytest.raises(AnalysisError, match="finite"):
        Standard("open", c0_f=float("nan"))


def test_json_round_trip_keeps_every_response(tmp_path):
    std = StandardSet(
        short=Standard("short", offset_delay_s=30e-12, offset_loss_ohm_per_s=2.0e9, l0_h=1e-12),
        open=Standard("open", c0_f=50e-15, c1_f_per_hz=-300e-27, c3_f_per_hz3=-1e-46),
        load=Standard("load", r_ohm=50.5, series_l_h=1e-11),
        through=Standard("through", offset_delay_s=1e-11),
        additional=(("offset short", Standard("short", offset_delay_s=60e-12)),),
        checks=(("offset open", Standard("open", offset_delay_s=95e-12)),),
        name="test kit")
    path = save_standards(std, tmp_path / "kit.json")
    obj = json.loads(path.read_text())
    assert obj["format"] == "refplane-standards" and obj["version"] == 1
    # Offset loss is written in GΩ/s, the literature's unit.
    assert obj["short"]["offset_loss_gohm_per_s"] == pytest.approx(2.0)
    back = load_standards(path)
    for name in ("short", "open", "load", "offset short", "offset open"):
        assert np.array_equal(reflection(back.reflect(name), F), reflection(std.reflect(name), F))
    assert np.array_equal(through_s(back.through, F), through_s(std.through, F))
    with pytest.raises(SweepFileError, match="refusing to overwrite"):
        save_standards(std, path)
    save_standards(std, path, overwrite=True)


def _write(tmp_path, obj, name="kit.json"):
    p = tmp_path / name
    p.write_text(obj if isinstance(obj, str) else json.dumps(obj))
    return p


@pytest.mark.parametrize("obj, message", [
    ({"format": "other", "version": 1}, "not a standards file"),
    ({"format": "refplane-standards", "version": 7}, "version 7"),
    ({"format": "refplane-standards", "version": 1, "open": {"c0": 1e-15}}, "unknown key 'c0'"),
    ({"format": "refplane-standards", "version": 1, "open": {"c0_f": "big"}}, "finite number"),
    ({"format": "refplane-standards", "version": 1, "short": {"offset_loss_gohm_per_s": -1}}, "negative"),
    ({"format": "refplane-standards", "version": 1, "load": {"kind": "open"}}, "must be 'load'"),
    ({"format": "refplane-standards", "version": 1, "checks": {"x": {"c0_f": 1e-15}}}, "kind"),
    ({"format": "refplane-standards", "version": 1, "additional": {"t": {"kind": "through"}}}, "only reflect"),
    ({"format": "refplane-standards", "version": 1, "shrot": {}}, "unknown key"),
    ({"format": "refplane-standards", "version": 1, "open": {"file": "nowhere.s1p"}}, "no such file"),
])
def test_bad_standards_files_name_the_file_and_the_reason(tmp_path, obj, message):
    p = _write(tmp_path, obj)
    with pytest.raises(SweepFileError, match=message) as info:
        load_standards(p)
    assert str(p) in str(info.value) or "nowhere.s1p" in str(info.value)


def test_broken_json_reports_its_line(tmp_path):
    p = _write(tmp_path, '{"format": "refplane-standards",\n "version": 1,\n "open": {,}\n}')
    with pytest.raises(SweepFileError) as info:
        load_standards(p)
    assert info.value.line == 3 and str(p) in str(info.value)


def test_missing_sections_are_ideal():
    std = standards_from_json({"format": "refplane-standards", "version": 1})
    assert all(getattr(std, k).is_ideal for k in ("short", "open", "load", "through"))


def test_data_file_definition(tmp_path):
    pytest.importorskip("refplane.analysis.files.touchstone")
    import skrf as rf

    # A known open response written by scikit-rf, read back as a data-file definition.
    g = reflection(Standard("open", c0_f=40e-15, offset_delay_s=20e-12), F)
    rf.Network(frequency=rf.Frequency.from_f(F, unit="Hz"), s=g, z0=50).write_touchstone(
        str(tmp_path / "known_open"))
    p = _write(tmp_path, {"format": "refplane-standards", "version": 1, "open": {"file": "known_open.s1p"}})
    std = load_standards(p)
    assert std.open.data is not None
    assert np.max(np.abs(reflection(std.open, F) - g)) < 1e-9
    other = F[::2][:-1] + 1e6
    with pytest.raises(AnalysisError, match="allow interpolation"):
        reflection(std.open, other)
    assert np.max(np.abs(reflection(std.open, other, interpolate=True)
                         - reflection(Standard("open", c0_f=40e-15, offset_delay_s=20e-12), other))) < 1e-3
