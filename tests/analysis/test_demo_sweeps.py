"""The demo sweeps in sample_sweeps/: reproducible, readable, and physically what they claim.

The data are invented (made by sample_sweeps/make_demo_sweeps.py from closed-form models). The checks
here hold them against outside references:
- "Pozar": D. M. Pozar, *Microwave Engineering* (from memory) — Γ = (Z−Z0)/(Z+Z0) (ch. 2), a series
  L-C resonates at 1/(2π√(LC)), the maximally flat band-pass response |S21|² = 1/(1 + Ω⁶) for three
  poles with Ω = (f/f0 − f0/f)/Δ (ch. 8);
- "references.md": the check values in /work/shared/references.md (common practice: the leaded 75 Ω
  resistor near 470 MHz, the 20 cm open coax a quarter wave near 247 MHz, the speed of light);
- "scikit-rf": skrf.Network reads every file to the same numbers, and skrf.calibration.OnePort solves
  the raw calibration sweeps to the same device.
"""

from __future__ import annotations

import functools
import importlib.util
import json
import math
import pathlib
import sys

import numpy as np
import pytest

from refplane.analysis.files.loading import read_sweep

ROOT = pathlib.Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_sweeps"
C_M_PER_S = 299_792_458.0  # exact, SI definition (references.md)


@functools.lru_cache(maxsize=None)
def _generator():
    # sample_sweeps/ is a folder of files, not a package: load the script by its path. Its
    # dataclasses need the module registered while it runs.
    name = "refplane_demo_generator"
    spec = importlib.util.spec_from_file_location(name, DEMO / "make_demo_sweeps.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    return module


def _committed():
    return sorted(p.relative_to(DEMO).as_posix() for p in DEMO.rglob("*")
                  if p.is_file() and p.suffix in (".s1p", ".s2p", ".json"))


def _sweep_files():
    return [name for name in _committed() if not name.endswith(".json")]


# ---------------------------------------------------------------- reproducible


@pytest.fixture(scope="module")
def regenerated(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    written = _generator().write_all(out)
    return out, written


def test_generator_reproduces_committed_files_byte_for_byte(regenerated):
    out, written = regenerated
    names = sorted(pathlib.Path(p).relative_to(out).as_posix() for p in written)
    assert names == _committed(), "the committed demo files and the generator's list differ"
    for name in names:
        assert (out / name).read_bytes() == (DEMO / name).read_bytes(), (
            f"{name} differs from a fresh run; if the models or the Touchstone writer changed on purpose, "
            "regenerate with: python sample_sweeps/make_demo_sweeps.py --overwrite")


def test_generator_twice_is_identical_and_refuses_to_overwrite(tmp_path):
    gen = _generator()
    first = {p.name: p.read_bytes() for p in map(pathlib.Path, gen.write_all(tmp_path / "a"))}
    second = {p.name: p.read_bytes() for p in map(pathlib.Path, gen.write_all(tmp_path / "b"))}
    assert first == second
    # Like every Refplane writer, it never overwrites a file without being asked.
    from refplane.analysis.errors import SweepFileError

    with pytest.raises(SweepFileError, match="refusing to overwrite"):
        gen.write_all(tmp_path / "a")
    assert gen.main(["--out", str(tmp_path / "a")]) == 2
    assert gen.main(["--out", str(tmp_path / "a"), "--overwrite"]) == 0


def test_the_main_demo_is_there():
    # The window opens this one by default.
    assert (DEMO / "leaded_resistor_75ohm.s1p").is_file()


# ---------------------------------------------------------------- readable, small, labelled


@pytest.mark.parametrize("name", _sweep_files())
def test_file_parses_is_small_and_says_it_is_invented(name):
    sweep = read_sweep(DEMO / name)
    assert 2 <= sweep.n_points <= 2001
    np.testing.assert_array_equal(sweep.z0_ohm, 50.0)
    header = " ".join(sweep.comments)
    assert "SYNTHETIC DEMO DATA" in header and "invented" in header and "not a measurement" in header
    assert sweep.n_ports == (2 if name.endswith(".s2p") else 1)


@pytest.mark.parametrize("name", _sweep_files())
def test_skrf_reads_the_same_numbers(name):
    # scikit-rf as an independent Touchstone reader.
    import skrf

    sweep = read_sweep(DEMO / name)
    net = skrf.Network(str(DEMO / name))
    np.testing.assert_allclose(net.f, sweep.freq_hz, rtol=1e-15)
    np.testing.assert_allclose(net.s, sweep.s, rtol=0, atol=1e-15)


def test_passive_parts_stay_on_the_chart():
    # Pozar: a passive one-port has |Γ| ≤ 1; the demo's noise is kept from pushing parts outside.
    for name in _sweep_files():
        if name.startswith("calibration/"):
            continue
        s = read_sweep(DEMO / name).s
        diag = np.abs(np.diagonal(s, axis1=1, axis2=2))
        assert diag.max() < 1.0, name


def test_noise_is_about_minus_60_db():
    # The resistor's reflection minus its model (Pozar Γ of the documented circuit) is the added noise.
    gen = _generator()
    sweep = read_sweep(DEMO / "leaded_resistor_75ohm.s1p")
    residual = sweep.reflection(1) - gen._gamma(gen.leaded_resistor_z(sweep.freq_hz))
    rms_db = 20 * math.log10(math.sqrt(np.mean(np.abs(residual) ** 2)))
    assert -62 < rms_db < -58


def test_standards_file_is_valid_json_and_says_it_is_invented():
    obj = json.loads((DEMO / "calibration" / "bench_standards.json").read_text(encoding="utf-8"))
    assert obj["format"] == "refplane-standards" and obj["version"] == 1
    assert "invented" in obj["note"].lower()
    # The small non-idealities the brief asks for (open ≈ 50 fF, short ≈ 20 pH, offsets ≈ 30 ps).
    assert obj["open"]["c0_f"] == pytest.approx(50e-15)
    assert obj["short"]["l0_h"] == pytest.approx(20e-12)
    assert 25e-12 < obj["open"]["offset_delay_s"] < 35e-12
    assert 25e-12 < obj["short"]["offset_delay_s"] < 35e-12


# ---------------------------------------------------------------- what the files claim (outside references)


def test_resistor_reads_77_ohm_and_9_nh_at_470_mhz():
    # references.md (common practice): a leaded 75 Ω resistor near 470 MHz reads roughly 77 Ω in
    # series with about 9 nH (X ≈ +27 Ω).
    from refplane.analysis.readings import read_points

    r = read_points(read_sweep(DEMO / "leaded_resistor_75ohm.s1p"), [470e6]).readout.at(0)
    assert r.r_ohm == pytest.approx(77.0, abs=1.5)
    assert r.x_ohm == pytest.approx(27.0, abs=1.5)
    assert r.series_l_h == pytest.approx(9e-9, rel=0.05)
    # ...and at low frequency it is simply 75 Ω (Pozar: Γ = 25/125 = 0.2).
    low = read_points(read_sweep(DEMO / "leaded_resistor_75ohm.s1p"), [10e6]).readout.at(0)
    assert low.r_ohm == pytest.approx(75.0, abs=0.5)


def test_quarter_wave_of_20_cm_coax_near_247_mhz():
    # references.md (common practice): 20 cm of vf 0.66 coax is a quarter wave near c·0.66/(4·0.2) = 247 MHz,
    # where an open at its end reads as a short; below about 1 MHz it hardly moves the reading.
    from refplane.analysis.readings.markers import gamma_at, zero_reactance_frequencies

    sweep = read_sweep(DEMO / "coax_20cm_open_end.s1p")
    quarter = C_M_PER_S * 0.66 / (4 * 0.2)
    found = zero_reactance_frequencies(sweep)
    assert found[0] == pytest.approx(quarter, rel=2e-3)
    g = complex(gamma_at(sweep, found[0]))
    # reads as a short (left-hand edge of the chart), less twice the one-way loss of 0.13 dB·√(f/1 GHz)
    assert g.real < -0.98
    assert abs(complex(gamma_at(sweep, 500e3)) - 1) < 0.01  # an open, near enough


def test_self_resonances_of_the_parts():
    # Pozar: series ESL-C resonates at 1/(2π√(LC)); the inductor with winding capacitance at 1/(2π√(LC)).
    from refplane.analysis.readings.markers import zero_reactance_frequencies

    cap = zero_reactance_frequencies(read_sweep(DEMO / "chip_capacitor_100pf.s1p"), band_hz=(100e6, 1e9))
    assert cap == pytest.approx([1 / (2 * math.pi * math.sqrt(0.8e-9 * 100e-12))], rel=5e-3)
    ind = zero_reactance_frequencies(read_sweep(DEMO / "inductor_470nh.s1p"), band_hz=(100e6, 1e9))
    assert ind == pytest.approx([1 / (2 * math.pi * math.sqrt(470e-9 * 0.6e-12))], rel=5e-3)


def test_antenna_seen_through_its_cable_and_without_it():
    # references.md: one-way delay of a line = length/(vf·c); 1.5 m at vf 0.66 is 7.581 ns.
    from refplane.analysis.lines.deembed import LineOffset, remove_offsets
    from refplane.analysis.readings.markers import zero_reactance_frequencies

    delay = 1.5 / (0.66 * C_M_PER_S)
    assert delay == pytest.approx(7.581e-9, rel=1e-4)
    at_radio = read_sweep(DEMO / "antenna_2m_via_1m5_coax.s1p")
    # Through the cable the reactance crosses zero several times (the line turns the trace)...
    assert zero_reactance_frequencies(at_radio).size >= 3
    # ...with the documented cable removed, once: the antenna's own series resonance near 142.5 MHz.
    feed = remove_offsets(at_radio, [LineOffset.from_length(1.5, 0.66, loss_db=1.0, loss_ref_hz=1e9)])
    assert zero_reactance_frequencies(feed) == pytest.approx([142.5e6], rel=2e-3)


def test_open_cable_gives_the_plane():
    # references.md: an open at the far end shows about twice the one-way loss as return loss;
    # the plane estimate of the open-ended 1.5 m cable finds 7.581 ns and 1.0 dB at 1 GHz.
    plane = pytest.importorskip("refplane.analysis.lines.plane")
    from refplane.analysis.readings.impedance import return_loss_db
    from refplane.analysis.readings.markers import gamma_at

    sweep = read_sweep(DEMO / "coax_1m5_open_end.s1p")
    rl = float(return_loss_db(gamma_at(sweep, 144e6)))
    assert rl == pytest.approx(2 * 1.0 * math.sqrt(0.144), abs=0.05)  # √f conductor loss (references.md)
    est = plane.estimate_plane(sweep, velocity_factor=0.66)
    assert est.delay_s == pytest.approx(1.5 / (0.66 * C_M_PER_S), rel=1e-4)
    assert est.length_m == pytest.approx(1.5, rel=1e-3)
    assert est.loss_db == pytest.approx(1.0, abs=0.03)


def test_bandpass_filter_follows_the_butterworth_response():
    # Pozar ch. 8: a 3-pole maximally flat band-pass has |S21|² = 1/(1 + Ω⁶), Ω = (f/f0 − f0/f)/Δ;
    # the demo's inductor losses add under about 1.5 dB.
    sweep = read_sweep(DEMO / "bandpass_filter_2m.s2p")
    f0, frac = 146e6, 30e6 / 146e6
    for f in (90e6, 100e6, 200e6, 250e6):
        k = int(np.argmin(np.abs(sweep.freq_hz - f)))
        omega = (sweep.freq_hz[k] / f0 - f0 / sweep.freq_hz[k]) / frac
        ideal_db = -10 * math.log10(1 + omega**6)
        got_db = 20 * math.log10(abs(sweep.s[k, 1, 0]))
        assert ideal_db - 1.5 < got_db < ideal_db + 0.1, f
    # A passive reciprocal network: S12 = S21 (Pozar ch. 4) to within the −70 dB noise.
    assert np.max(np.abs(sweep.s[:, 0, 1] - sweep.s[:, 1, 0])) < 5e-3


def test_raw_calibration_sweeps_solve_with_skrf_to_the_resistor():
    # scikit-rf: skrf.calibration.OnePort, fed the raw short/open/load and the standards as defined in
    # bench_standards.json, recovers the leaded resistor (Pozar Γ of the documented model) within noise.
    import skrf

    gen = _generator()
    folder = DEMO / "calibration"
    raw = {k: skrf.Network(str(folder / f"raw_{k}.s1p")) for k in ("short", "open", "load")}
    freq = raw["short"].frequency
    defs = json.loads((folder / "bench_standards.json").read_text(encoding="utf-8"))
    w = 2 * np.pi * freq.f
    # Offset-standard model with a lossless offset (calibration literature, from memory).
    jwcz = 1j * w * defs["open"]["c0_f"] * 50.0
    ideal_open = (1 - jwcz) / (1 + jwcz) * np.exp(-2j * w * defs["open"]["offset_delay_s"])
    zl = 1j * w * defs["short"]["l0_h"]
    ideal_short = (zl - 50) / (zl + 50) * np.exp(-2j * w * defs["short"]["offset_delay_s"])
    ideal_load = np.zeros_like(ideal_open)
    ideals = [skrf.Network(frequency=freq, s=g.reshape(-1, 1, 1), z0=50) for g in
              (ideal_short, ideal_open, ideal_load)]
    cal = skrf.calibration.OnePort(ideals=ideals, measured=[raw["short"], raw["open"], raw["load"]])
    dut = cal.apply_cal(skrf.Network(str(folder / "raw_leaded_resistor_75ohm.s1p")))
    truth = gen._gamma(gen.leaded_resistor_z(freq.f))
    assert np.max(np.abs(dut.s[:, 0, 0] - truth)) < 0.01
    # The definitions in the file are the ones the generator used.
    for kind, g in (("short", ideal_short), ("open", ideal_open)):
        np.testing.assert_allclose(gen.standard_gamma(kind, freq.f), g, rtol=0, atol=1e-14)


def test_raw_calibration_sweeps_solve_with_refplane():
    # The same with Refplane's own solver and standards reader, plus the through and isolation:
    # the corrected filter's S21 matches its model (Pozar ABCD→S) up to the port-2 match left uncorrected.
    standards = pytest.importorskip("refplane.analysis.calibration.standards")
    calibration = pytest.importorskip("refplane.analysis.calibration.solve")
    gen = _generator()
    folder = DEMO / "calibration"
    std = standards.load_standards(folder / "bench_standards.json")
    measured = {k: read_sweep(folder / f"raw_{k}.s1p") for k in ("short", "open", "load")}
    cal = calibration.calibrate(measured, std, through=read_sweep(folder / "raw_through.s2p"),
                                isolation=read_sweep(folder / "raw_isolation.s2p"))
    assert cal.quality == "good"
    f = cal.freq_hz
    fixed = calibration.correct(cal, read_sweep(folder / "raw_leaded_resistor_75ohm.s1p")).sweep
    assert np.max(np.abs(fixed.reflection(1) - gen._gamma(gen.leaded_resistor_z(f)))) < 0.01
    # Leakage of a low-cost analyzer, −40 to −50 dB (references.md, common practice), is what isolation finds.
    leak_db = 20 * np.log10(np.abs(cal.transmission.isolation))
    assert -52 < leak_db.min() and leak_db.max() < -38
    filt = calibration.correct(cal, read_sweep(folder / "raw_bandpass_filter_2m.s2p")).sweep
    s21 = gen.bandpass_filter_s(f)[:, 1, 0]
    assert np.max(np.abs(filt.s[:, 1, 0] - s21)) < 0.05
