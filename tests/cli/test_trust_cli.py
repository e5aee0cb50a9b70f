"""Uncertainty and the calibration doctor on the command line: read --residual/--cal/--noise,
correct --json/--recheck/--write-u, fit's combined uncertainty. Raw files are made by passing
known devices through a known error box (the published three-term model,
Γm = e00 + e10e01·Γ/(1 − e11·Γ) — error-model literature, from memory)."""

import json
import math

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.calibration.standards import reflection, standards_from_json
from refplane.analysis.sweep import Sweep
from refplane.analysis.uncertainty.propagate import U_KEYS
from refplane.cli import main as _main


def main(argv):
    try:
        return _main(argv)
    except SystemExit as exc:
        return exc.code


N = 101
F = np.linspace(1e6, 1e9, N)
W = 2 * np.pi * F
BOX = (0.05 * np.exp(1j * W * 0.2e-9), 0.1 * np.exp(-1j * W * 0.3e-9), 0.9 * np.exp(-2j * W * 0.8e-9))
KIT = {"format": "refplane-standards", "version": 1, "name": "test kit (invented)",
       "short": {"offset_delay_s": 20e-12, "offset_delay_s_u": 1e-12},
       "open": {"c0_f": 30e-15, "c0_f_u": 3e-15, "offset_delay_s": 20e-12, "offset_delay_s_u": 1e-12},
       "load": {"r_ohm": 50.0, "r_ohm_u": 0.3}}
DUT = complex(z_to_gamma(75 + 27j, 50.0))


def raw(gamma, scale=1.0, seed=0):
    e00, e11, t = BOX
    rng = np.random.default_rng(seed)
    return e00 + scale * t * gamma / (1 - e11 * gamma) + 3e-4 * (rng.standard_normal(N) + 1j * rng.standard_normal(N))


def write(path, gamma):
    touchstone.write(Sweep(F, np.asarray(gamma, complex), 50.0, name=path.stem), path)
    return str(path)


@pytest.fixture
def bench(tmp_path):
    std = standards_from_json(KIT)
    kit = tmp_path / "kit.json"
    kit.write_text(json.dumps(KIT))
    files = {n: write(tmp_path / f"{n}.s1p", raw(reflection(std.reflect(n), F), seed=i))
             for i, n in enumerate(("short", "open", "load"))}
    files["kit"] = str(kit)
    files["dut"] = write(tmp_path / "dut_raw.s1p", raw(np.full(N, DUT), seed=7))
    files["plain"] = write(tmp_path / "dut.s1p", np.full(N, DUT))
    return tmp_path, files


def run_json(capsys, argv):
    assert main(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_read_residual_json_has_u_for_every_key_within_the_worst_case(bench, capsys):
    _, files = bench
    out = run_json(capsys, ["read", files["plain"], "--at", "100MHz", "--residual", "40dB,35dB,0.1dB",
                            "--noise", "none", "--json"])
    point = out["points"][0]
    assert set(point["u"]) == set(U_KEYS)
    assert point["coverage_factor"] == 2 and point["u_method"] in ("linear", "monte-carlo")
    # EURAMET cg-12 worst case D + T|Γ| + M|Γ|², with the dB definitions.
    g = abs(DUT)
    bound = 10 ** (-40 / 20) + (10 ** (0.1 / 20) - 1) * g + 10 ** (-35 / 20) * g**2
    assert 0.5 * bound < point["u"]["gamma_mag"] <= bound
    assert point["u"]["series_c_f"] is None


def test_read_table_shows_plus_minus(bench, capsys):
    _, files = bench
    assert main(["read", files["plain"], "--at", "100MHz", "--residual", "40dB,35dB,0.1dB"]) == 0
    text = capsys.readouterr().out
    assert "±" in text and "k = 2" in text


def test_read_without_uncertainty_options_is_unchanged(bench, capsys):
    _, files = bench
    out = run_json(capsys, ["read", files["plain"], "--at", "100MHz", "--json"])
    assert "u" not in out["points"][0]


@pytest.mark.parametrize("bad", [["--residual", "40dB"], ["--noise", "loud"], ["--delay-u", "5ps"]])
def test_bad_uncertainty_options_exit_2(bench, bad):
    _, files = bench
    assert main(["read", files["plain"], "--at", "100MHz", *bad]) == 2


def test_cal_applies_the_saved_calibration_with_its_uncertainty(bench, capsys):
    tmp, files = bench
    cal = tmp / "cal.json"
    assert main(["correct", "--short", files["short"], "--open", files["open"], "--load", files["load"],
                 "--standards", files["kit"], "--save-cal", str(cal)]) == 0
    capsys.readouterr()
    assert "uncertainty" in json.loads(cal.read_text())
    out = run_json(capsys, ["read", files["dut"], "--cal", str(cal), "--at", "500MHz", "--json"])
    point = out["points"][0]
    # Correction must give the device back (three-term model round trip), within the stated U.
    assert abs(point["r_ohm"] - 75) <= point["u"]["r_ohm"]
    assert abs(point["x_ohm"] - 27) <= point["u"]["x_ohm"]
    assert 0 < point["u"]["r_ohm"] < 5
    assert "calibration" in out["uncertainty"]["sources"]


def test_correct_json_names_swapped_standards(bench, capsys):
    _, files = bench
    out = run_json(capsys, ["correct", "--short", files["open"], "--open", files["short"], "--load", files["load"],
                            "--standards", files["kit"], "--json", "--diagnose"])
    assert out["doctor"]["verdict"] == "redo it"
    sentence = out["doctor"]["findings"][0]["sentence"]
    assert "swapped" in sentence and "short" in sentence and "open" in sentence


def test_correct_clean_gives_good_and_writes_uncertainty_csv(bench, capsys):
    tmp, files = bench
    out_file = tmp / "fixed.s1p"
    out = run_json(capsys, ["correct", "--short", files["short"], "--open", files["open"], "--load", files["load"],
                            "--standards", files["kit"], files["dut"], "-o", str(out_file), "--write-u", "csv",
                            "--json"])
    assert out["doctor"]["verdict"] == "good" and out["doctor"]["findings"] == []
    u_file = tmp / "fixed_u.csv"
    assert str(u_file) in out["written"]
    lines = [ln for ln in u_file.read_text().splitlines() if not ln.startswith("#")]
    header = lines[0].split(",")
    assert header[0] == "freq_hz" and "r_ohm_U" in header and len(lines) == N + 1
    row = dict(zip(header, lines[51].split(",")))
    assert abs(float(row["r_ohm"]) - 75) <= float(row["r_ohm_U"])
    # Never overwrite without --force (project rule).
    assert main(["correct", "--short", files["short"], "--open", files["open"], "--load", files["load"],
                 files["dut"], "-o", str(tmp / "other.s1p"), "--write-u", "csv"]) == 0
    assert main(["correct", "--short", files["short"], "--open", files["open"], "--load", files["load"],
                 files["dut"], "-o", str(out_file), "--write-u", "csv"]) == 2


def test_recheck_reports_drift(bench, capsys):
    tmp, files = bench
    cal = tmp / "cal.json"
    assert main(["correct", "--short", files["short"], "--open", files["open"], "--load", files["load"],
                 "--standards", files["kit"], "--save-cal", str(cal)]) == 0
    std = standards_from_json(KIT)
    moved = write(tmp / "open_later.s1p", raw(reflection(std.open, F), scale=10 ** (0.4 / 20), seed=11))
    same = write(tmp / "load_later.s1p", raw(reflection(std.load, F), seed=12))
    capsys.readouterr()
    out = run_json(capsys, ["correct", "--cal", str(cal), "--standards", files["kit"], "--recheck", f"open={moved}",
                            "--recheck", f"load={same}", "--json"])
    kinds = [(f["kind"], f["values"].get("standard")) for f in out["doctor"]["findings"]]
    assert ("drift", "open") in kinds and ("drift", "load") not in kinds
    assert main(["correct", "--recheck", f"open={moved}"]) == 2  # needs --cal


def test_fit_json_gains_combined_uncertainty(bench, capsys):
    _, files = bench
    out = run_json(capsys, ["fit", files["plain"], "--model", "series-rl", "--residual", "40dB,35dB,0.1dB",
                            "--u-draws", "20", "--json"])
    comb = out["combined"]
    assert comb["systematic_draws"] >= 10 and comb["coverage_factor"] == 2
    assert comb["U"]["r_ohm"] >= 2 * comb["u_statistical"]["r_ohm"]
    assert math.isfinite(comb["U"]["l_h"])


def test_repeated_sweeps_give_the_noise(bench, capsys):
    # Two sweeps of one device whose points scatter by σ per axis: the standard deviation of the
    # pair estimates σ (sample statistics), so |Γ|'s U grows with the scatter.
    tmp, files = bench
    rng = np.random.default_rng(3)
    noisy = [write(tmp / f"rep{i}.s1p", DUT + 0.01 * (rng.standard_normal(N) + 1j * rng.standard_normal(N)))
             for i in range(3)]
    quiet = run_json(capsys, ["read", files["plain"], "--at", "100MHz", "--repeat", files["plain"], "--json"])
    loud = run_json(capsys, ["read", noisy[0], "--at", "100MHz", "--repeat", noisy[1], "--repeat", noisy[2],
                             "--json"])
    assert quiet["points"][0]["u"]["gamma_mag"] == pytest.approx(0.0, abs=1e-12)
    assert 0.005 < loud["points"][0]["u"]["gamma_mag"] < 0.08
