"""Equivalent-circuit fits: recovery of known circuits, standard errors, model choice, throughs."""

from __future__ import annotations

import importlib.util
import math
import re
from pathlib import Path

import numpy as np
import pytest

from refplane.analysis.circuits.models import MODELS
from refplane.analysis.errors import AnalysisError
from refplane.analysis.circuits.fitting import (
    fit_impedance, fit_reflection, fit_sweep, format_percent, format_with_error, parameter_table, ranking_rows)
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.analysis.readings.two_port_impedance import (
    series_through_z, shunt_through_z, through_impedance, through_s21)

# Generating circuits and bands: values a practitioner meets (parts of tens of ohms,
# nanohenries, picofarads), each band wide enough to show every element.
CASES = {
    "series-rl": ({"r_ohm": 75.0, "l_h": 9e-9}, (1e6, 1e9)),
    "series-rc": ({"r_ohm": 2.0, "c_f": 100e-12}, (1e6, 1e9)),
    "series-rlc": ({"r_ohm": 20.0, "l_h": 100e-9, "c_f": 10e-12}, (10e6, 1e9)),
    "parallel-rc": ({"r_ohm": 1000.0, "c_f": 2e-12}, (1e6, 1e9)),
    "parallel-rl": ({"r_ohm": 500.0, "l_h": 100e-9}, (1e6, 1e9)),
    "parallel-rlc": ({"r_ohm": 2000.0, "l_h": 100e-9, "c_f": 10e-12}, (10e6, 1e9)),
    "resistor-leads": ({"r_ohm": 75.0, "l_h": 9e-9, "c_f": 0.3e-12}, (1e6, 3e9)),
    "capacitor": ({"esr_ohm": 0.1, "esl_h": 1e-9, "c_f": 10e-12}, (10e6, 3e9)),
    "inductor": ({"r_ohm": 0.5, "l_h": 100e-9, "c_f": 0.3e-12}, (1e6, 1e9)),
}
NOISE = 1e-3  # complex Γ noise, RMS magnitude: a fair low-cost analyzer after calibration


def _data(model_id, noise=0.0, seed=7, n=201):
    params, (low, high) = CASES[model_id]
    f = np.geomspace(low, high, n)
    g = z_to_gamma(MODELS[model_id].impedance(f, params), 50.0)
    if noise:
        rng = np.random.default_rng(seed)
        g = g + noise * (rng.standard_normal(n) + 1j * rng.standard_normal(n)) / math.sqrt(2)
    return f, g, params


@pytest.mark.parametrize("model_id", list(CASES))
def test_clean_data_is_recovered_exactly(model_id):
    f, g, params = _data(model_id)
    result = fit_reflection(f, g, 50.0, model=model_id)
    assert result.model_id == model_id
    for key, value in params.items():
        assert result.params[key] == pytest.approx(value, rel=1e-6), key
    assert result.residual_rms < 1e-8
    assert result.n_points == f.size
    assert result.band_hz == (f[0], f[-1])


# Stated tolerance: every parameter within 4 standard errors of the truth, and each
# standard error a small fraction of its value (the ESR of a 0.1 Ω part is only loosely
# seen through 50 Ω, so it is allowed 10 %).
@pytest.mark.parametrize("model_id", list(CASES))
def test_noisy_data_is_recovered_within_its_standard_errors(model_id):
    f, g, params = _data(model_id, NOISE)
    result = fit_reflection(f, g, 50.0, model=model_id)
    for key, value in params.items():
        err = result.stderr[key]
        assert abs(result.params[key] - value) < 4 * err, (key, result.params[key], err)
        assert err / value < (0.10 if key == "esr_ohm" else 0.02), key
    # The residual is the Γ noise put in, less the few degrees of freedom the fit takes.
    assert result.residual_rms == pytest.approx(NOISE, rel=0.15)


def test_standard_errors_match_the_scatter_of_repeated_fits():
    # Monte Carlo: the spread of fitted values over independent noise draws should equal
    # the reported standard error (first-order least-squares theory, cov = s²(JᵀJ)⁻¹).
    values, errors = [], []
    for seed in range(40):
        f, g, _ = _data("series-rl", NOISE, seed=100 + seed, n=101)
        r = fit_reflection(f, g, 50.0, model="series-rl")
        values.append(r.params["l_h"])
        errors.append(r.stderr["l_h"])
    ratio = np.std(values, ddof=1) / np.mean(errors)
    assert 0.7 < ratio < 1.4


@pytest.mark.parametrize("noise", [0.0, NOISE])
@pytest.mark.parametrize("model_id", list(CASES))
def test_automatic_choice_finds_the_generating_circuit(model_id, noise):
    f, g, _ = _data(model_id, noise)
    result = fit_reflection(f, g, 50.0, model="auto")
    assert result.automatic
    assert MODELS[result.model_id].circuit == MODELS[model_id].circuit
    assert result.ranking[0].delta_aicc == 0.0
    assert {r.model_id for r in result.ranking} >= {result.model_id}
    assert len(result.ranking) == 7


@pytest.mark.parametrize("model_id", ["resistor-leads", "capacitor", "inductor", "series-rl", "parallel-rc"])
def test_automatic_choice_names_the_part(model_id):
    f, g, _ = _data(model_id, NOISE)
    assert fit_reflection(f, g, 50.0).model_id == model_id


def test_simplest_adequate_model_is_kept():
    # Series R-L data: R-L-C and the bridged resistor can match it (C → ∞ or C → 0) with one
    # parameter more, and must lose to the two-parameter circuit.
    f, g, _ = _data("series-rl", NOISE)
    result = fit_reflection(f, g, 50.0)
    assert result.model_id == "series-rl"
    assert result.model.n_params == 2


def test_leaded_resistor_reads_about_77_plus_j27_and_the_fit_finds_its_leads():
    # Common practice: a leaded 75 Ω resistor measured near 470 MHz reads roughly 77 Ω with
    # X ≈ +27 Ω (about 9 nH of lead inductance). A resistor-leads circuit with R = 75 Ω,
    # L = 9.5 nH and 0.12 pF across gives about that reading.
    params = {"r_ohm": 75.0, "l_h": 9.5e-9, "c_f": 0.12e-12}
    z470 = complex(MODELS["resistor-leads"].impedance(470e6, params))
    assert z470.real == pytest.approx(77.0, abs=2.0)
    assert z470.imag == pytest.approx(27.0, abs=2.0)
    f = np.linspace(10e6, 1.5e9, 301)
    rng = np.random.default_rng(470)
    g = z_to_gamma(MODELS["resistor-leads"].impedance(f, params), 50.0)
    g = g + NOISE * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    result = fit_reflection(f, g, 50.0, model="auto")
    assert result.model_id == "resistor-leads"
    assert result.params["l_h"] == pytest.approx(9.5e-9, rel=0.02)
    assert result.params["r_ohm"] == pytest.approx(75.0, rel=0.01)
    # A simple series R-L reading of the same data sees the leads as about 9–10 nH.
    series = fit_reflection(f, g, 50.0, model="series-rl", band_hz=(400e6, 540e6))
    assert 8e-9 < series.params["l_h"] < 11e-9


def test_derived_figures():
    f, g, params = _data("capacitor", NOISE)
    r = fit_reflection(f, g, 50.0, model="capacitor")
    # Self-resonance f0 = 1/(2π√(ESL·C)) (textbook), and its propagated error is consistent.
    f0 = 1 / (2 * math.pi * math.sqrt(params["esl_h"] * params["c_f"]))
    assert r.derived["srf_hz"] == pytest.approx(f0, rel=1e-3)
    assert abs(r.derived["srf_hz"] - f0) < 5 * r.derived["srf_hz_stderr"]
    # Q = |X|/R at the band's geometric centre, from the fitted model.
    centre = math.sqrt(f[0] * f[-1])
    z = complex(r.impedance(centre))
    assert r.derived["q_at_hz"] == pytest.approx(centre)
    assert r.derived["q"] == pytest.approx(abs(z.imag) / z.real)
    assert r.q_at(centre) == pytest.approx(r.derived["q"])
    assert "srf_hz" not in fit_reflection(*_data("series-rl")[:2], 50.0, model="series-rl").derived


def test_overlay_sweep_sentence_and_json():
    f, g, _ = _data("series-rl", NOISE)
    r = fit_reflection(f, g, 50.0, model="series-rl")
    overlay = r.to_sweep(np.concatenate([[0.0], f]))
    assert overlay.n_ports == 1 and overlay.n_points == f.size   # 0 Hz left out
    np.testing.assert_allclose(overlay.reflection(1), z_to_gamma(r.impedance(f), 50.0))
    text = r.sentence()
    assert re.fullmatch(r"7[45]\.\d+ Ω ± 0\.\d+ Ω in series with [89]\.\d+ nH ± 0\.\d+ nH "
                        r"\(residual 0\.\d+ %\)", text), text
    js = r.json()
    for key in ("model", "params", "stderr", "residual_rms", "ranking", "sentence", "derived", "band_hz"):
        assert key in js
    assert set(js["params"]) == {"r_ohm", "l_h"}
    assert [row[0] for row in parameter_table(r)] == ["r_ohm", "l_h"]
    assert ranking_rows(r)[0][0] == "series-rl"


def test_value_with_error_formatting():
    assert format_with_error(9.1034e-9, 2.1e-10, "H") == "9.10 nH ± 0.21 nH"
    assert format_with_error(75.2, 0.05, "Ω") == "75.200 Ω ± 0.050 Ω"
    assert format_with_error(75.0, 0.0, "Ω") == "75.0000 Ω ± 0 Ω"
    assert format_percent(0.0042) == "0.42 %"


def test_band_selects_points_and_refuses_an_empty_band():
    f, g, _ = _data("series-rl", NOISE)
    r = fit_reflection(f, g, 50.0, model="series-rl", band_hz=(10e6, 100e6))
    assert 10e6 <= r.band_hz[0] and r.band_hz[1] <= 100e6
    assert r.n_points == np.count_nonzero((f >= 10e6) & (f <= 100e6))
    with pytest.raises(AnalysisError, match="holds no swept point"):
        fit_reflection(f, g, 50.0, band_hz=(2e9, 3e9))


def test_too_few_points_and_unknown_model_are_refused():
    f, g, _ = _data("series-rlc")
    with pytest.raises(AnalysisError, match="too few points for model series-rlc"):
        fit_reflection(f[:3], g[:3], 50.0, model="series-rlc")
    with pytest.raises(AnalysisError, match="unknown model"):
        fit_reflection(f, g, 50.0, model="rlc")
    with pytest.raises(AnalysisError, match="too few points"):
        fit_reflection(f[:2], g[:2], 50.0)


def test_automatic_choice_skips_circuits_it_cannot_determine():
    # Three points: two-parameter circuits only.
    f, g, _ = _data("series-rl")
    r = fit_reflection(f[::80], g[::80], 50.0)
    assert all(e.n_params == 2 for e in r.ranking)


# ---------------------------------------------------------------------------------------
# Through mountings, with scikit-rf building the two-ports.

skrf = pytest.importorskip("skrf")


def _part_networks(f):
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0=50)
    p = CASES["capacitor"][0]
    series = media.resistor(p["esr_ohm"]) ** media.inductor(p["esl_h"]) ** media.capacitor(p["c_f"])
    # skrf's Media.shunt joins a 1-port to the middle of a tee: the part from the line to ground.
    shunt = media.shunt(series ** media.short())
    return series, shunt, MODELS["capacitor"].impedance(f, p)


def _sweep(net, name):
    return Sweep(net.f, net.s.copy(), net.z0[0].copy(), name=name)


def test_series_and_shunt_through_formulas_match_scikit_rf():
    f = np.geomspace(10e6, 3e9, 61)
    series, shunt, z = _part_networks(f)
    # Reference: scikit-rf 2-ports of a series element and a shunt element (media lumped
    # elements); Z = 2·Z0·(1 − S21)/S21 and Z = Z0·S21/(2·(1 − S21)) must give the part back.
    np.testing.assert_allclose(series_through_z(series.s[:, 1, 0], 50.0), z, rtol=1e-9)
    np.testing.assert_allclose(shunt_through_z(shunt.s[:, 1, 0], 50.0), z, rtol=1e-9)
    np.testing.assert_allclose(through_s21(z, "series"), series.s[:, 1, 0], rtol=1e-12)
    np.testing.assert_allclose(through_s21(z, "shunt"), shunt.s[:, 1, 0], rtol=1e-12)
    _, z_back, z0 = through_impedance(_sweep(shunt, "shunt"), "shunt", drive_port=2)
    assert z0 == 50.0
    np.testing.assert_allclose(z_back, z, rtol=1e-9)


@pytest.mark.parametrize("kind", ["series", "shunt"])
def test_fit_from_a_through_recovers_the_part_and_reports_s21_residual(kind):
    f = np.geomspace(10e6, 3e9, 201)
    series, shunt, _ = _part_networks(f)
    net = series if kind == "series" else shunt
    s = net.s.copy()
    rng = np.random.default_rng(21)
    s[:, 1, 0] += NOISE * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    result = fit_sweep(Sweep(net.f, s, net.z0[0].copy()), model="auto", through=kind)
    assert result.model_id == "capacitor"
    assert result.measurement == f"{kind}-through"
    p = CASES["capacitor"][0]
    assert result.params["c_f"] == pytest.approx(p["c_f"], rel=0.01)
    assert result.params["esl_h"] == pytest.approx(p["esl_h"], rel=0.02)
    # The residual is that of S21, the measured quantity.
    assert result.residual_rms == pytest.approx(NOISE, rel=0.15)
    if kind == "shunt":
        # A shunt mounting sees the 0.1 Ω ESR clearly, unlike a 50 Ω reflection.
        assert result.params["esr_ohm"] == pytest.approx(p["esr_ohm"], rel=0.05)


def test_sweep_port_rules():
    f = np.geomspace(10e6, 3e9, 41)
    series, _, _ = _part_networks(f)
    two = _sweep(series, "two")
    with pytest.raises(AnalysisError, match="2-port sweep: choose"):
        fit_sweep(two)
    assert fit_sweep(two, port=1).measurement == "reflection"
    with pytest.raises(AnalysisError, match="port 3 does not exist"):
        fit_sweep(two, port=3)
    f1, g1, _ = _data("series-rl")
    one = Sweep(f1, g1.copy(), np.array([50.0 + 0j]), source="part.s1p")
    with pytest.raises(AnalysisError, match="part.s1p: a series-through fit needs a 2-port"):
        fit_sweep(one, through="series")
    with pytest.raises(AnalysisError, match="unknown through"):
        fit_sweep(two, through="bridge")
    assert fit_sweep(one).model_id == "series-rl"


def test_fit_impedance_directly():
    f, _, params = _data("parallel-rc")
    z = MODELS["parallel-rc"].impedance(f, params)
    r = fit_impedance(f, z, model="parallel-rc")
    assert r.params["c_f"] == pytest.approx(params["c_f"], rel=1e-6)
    with pytest.raises(AnalysisError):
        fit_impedance(f, z[:-1])


def test_an_exact_open_or_short_point_does_not_upset_the_fit():
    # Γ = +1 (Z infinite) and Γ = −1 (Z = 0) are ordinary points of the Γ-domain residual.
    f, g, params = _data("series-rc", NOISE)
    g = g.copy()
    g[0] = 1.0
    g[-1] = -1.0
    r = fit_reflection(f, g, 50.0, model="series-rc")
    assert all(math.isfinite(v) for v in r.params.values())
    assert r.params["c_f"] == pytest.approx(params["c_f"], rel=0.05)


DEMO = Path(__file__).resolve().parents[2] / "sample_sweeps"


@pytest.mark.parametrize("name, expected", [
    ("leaded_resistor_75ohm.s1p", "resistor-leads"),
    ("chip_capacitor_100pf.s1p", "capacitor"),
    ("inductor_470nh.s1p", "inductor"),
])
def test_demo_sweeps_are_named_correctly(name, expected):
    # Smoke check only: the demo sweeps are invented data (see sample_sweeps/README.md), so
    # they are no reference; this checks the automatic choice names each demo part.
    path = DEMO / name
    if not path.exists() or importlib.util.find_spec("refplane.analysis.files.touchstone") is None:
        pytest.skip("demo sweeps or the Touchstone reader not present")
    from refplane.analysis.files.loading import read_sweep

    assert fit_sweep(read_sweep(path)).model_id == expected


def test_a_complex_reference_is_refused():
    f, g, _ = _data("series-rl")
    with pytest.raises(AnalysisError, match="real, positive reference"):
        fit_reflection(f, g, 50.0 + 5j)


def test_a_long_sweep_is_ranked_on_a_thinned_grid_and_fitted_on_every_point():
    f, g, params = _data("inductor", NOISE, n=3001)
    r = fit_reflection(f, g, 50.0)
    assert r.model_id == "inductor"
    assert r.ranked_points == 1000 and r.n_points == 3001
    for key, value in params.items():
        assert abs(r.params[key] - value) < 4 * r.stderr[key], key
    # Every point used: the errors are about √3 smaller than on the 1000-point grid.
    thin = fit_reflection(f[::3], g[::3], 50.0, model="inductor")
    assert r.stderr["l_h"] == pytest.approx(thin.stderr["l_h"] / math.sqrt(3), rel=0.2)


def test_an_element_the_data_does_not_show_is_reported_as_not_determined():
    # Series R-L data fitted with a shunt C: the fit drives C to the bottom of its range and
    # cannot give it an error; R and L keep theirs (computed without C).
    f, g, params = _data("series-rl")
    r = fit_reflection(f, g, 50.0, model="resistor-leads")
    assert math.isinf(r.stderr["c_f"])
    assert math.isfinite(r.stderr["l_h"]) and r.params["l_h"] == pytest.approx(params["l_h"], rel=1e-6)
    assert "≈ 0 F (not determined by the data)" in r.sentence()
    assert "self-resonant" not in r.sentence()
    assert r.table_rows()[2] == ("c_f", "≈ 0 F", "not determined")
