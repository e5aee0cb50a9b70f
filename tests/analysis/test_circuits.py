"""Forward models of the equivalent circuits, checked against scikit-rf's lumped elements."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.circuits.models import CIRCUITS, MODEL_CHOICES, MODELS, get_model, reading_for, rename, unit_of
from refplane.analysis.errors import AnalysisError

skrf = pytest.importorskip("skrf")

FREQ_HZ = np.geomspace(1e6, 3e9, 41)

VALUES = {"r_ohm": 75.0, "l_h": 9e-9, "c_f": 0.3e-12, "esr_ohm": 0.12, "esl_h": 0.9e-9}


def _skrf_z(model_id: str, p: dict) -> np.ndarray:
    """Impedance seen at the port of the same circuit built from scikit-rf's lumped elements.

    Series elements are cascaded and ended in skrf's ideal short; shunt elements are cascaded
    and ended in skrf's ideal open; the port impedance is skrf's ``Network.z``.
    """
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(FREQ_HZ, unit="hz"), z0=50)
    if model_id == "series-rl":
        net = media.resistor(p["r_ohm"]) ** media.inductor(p["l_h"]) ** media.short()
    elif model_id == "series-rc":
        net = media.resistor(p["r_ohm"]) ** media.capacitor(p["c_f"]) ** media.short()
    elif model_id == "series-rlc":
        net = media.resistor(p["r_ohm"]) ** media.inductor(p["l_h"]) ** media.capacitor(p["c_f"]) ** media.short()
    elif model_id == "capacitor":
        net = (media.resistor(p["esr_ohm"]) ** media.inductor(p["esl_h"]) ** media.capacitor(p["c_f"])
               ** media.short())
    elif model_id == "parallel-rc":
        net = media.shunt_resistor(p["r_ohm"]) ** media.shunt_capacitor(p["c_f"]) ** media.open()
    elif model_id == "parallel-rl":
        net = media.shunt_resistor(p["r_ohm"]) ** media.shunt_inductor(p["l_h"]) ** media.open()
    elif model_id == "parallel-rlc":
        net = (media.shunt_resistor(p["r_ohm"]) ** media.shunt_inductor(p["l_h"])
               ** media.shunt_capacitor(p["c_f"]) ** media.open())
    elif model_id in ("resistor-leads", "inductor"):
        # C across the port, then R and L in series to a short: (R + jωL) ∥ C.
        net = media.shunt_capacitor(p["c_f"]) ** media.resistor(p["r_ohm"]) ** media.inductor(p["l_h"]) ** media.short()
    else:  # pragma: no cover - every model is listed above
        raise AssertionError(model_id)
    return net.z[:, 0, 0]


@pytest.mark.parametrize("model_id", list(MODELS))
def test_impedance_matches_scikit_rf_lumped_elements(model_id):
    model = MODELS[model_id]
    params = {k: VALUES[k] for k in model.param_names}
    ours = model.impedance(FREQ_HZ, params)
    # Reference: scikit-rf 2.x media lumped elements (see _skrf_z).
    ref = _skrf_z(model_id, params)
    np.testing.assert_allclose(ours, ref, rtol=1e-9)


def test_series_rl_closed_form_leaded_resistor():
    # Z = R + jωL; 75 Ω with 9 nH at 470 MHz: X = 2π·470e6·9e-9 = 26.578 Ω (textbook identity).
    z = complex(MODELS["series-rl"].impedance(470e6, {"r_ohm": 75.0, "l_h": 9e-9}))
    assert z.real == pytest.approx(75.0)
    assert z.imag == pytest.approx(2 * math.pi * 470e6 * 9e-9, rel=1e-12)


@pytest.mark.parametrize("model_id", list(MODELS))
def test_closed_form_estimate_is_exact_on_clean_data(model_id):
    # The linear estimates solve the model equations exactly, so clean data returns the
    # generating values (to rounding).
    model = MODELS[model_id]
    params = {k: VALUES[k] for k in model.param_names}
    est = model.estimate(FREQ_HZ, model.impedance(FREQ_HZ, params))
    for key, value in params.items():
        assert est[key] == pytest.approx(value, rel=1e-6), key


@pytest.mark.parametrize("model_id", list(MODELS))
def test_estimate_is_positive_on_data_of_another_circuit(model_id):
    # A capacitor's data given to every model: the start must still be a valid one.
    data = MODELS["capacitor"].impedance(FREQ_HZ, {"esr_ohm": 0.1, "esl_h": 1e-9, "c_f": 10e-12})
    est = MODELS[model_id].estimate(FREQ_HZ, data)
    assert all(math.isfinite(v) and v > 0 for v in est.values())


def test_self_resonance_of_series_lc_is_textbook_value():
    # f0 = 1/(2π√(LC)) (textbook): 1 nH with 10 pF resonates at 1.5915 GHz.
    f0 = MODELS["capacitor"].self_resonance_hz({"esr_ohm": 0.1, "esl_h": 1e-9, "c_f": 10e-12})
    assert f0 == pytest.approx(1 / (2 * math.pi * math.sqrt(1e-9 * 10e-12)))


def test_self_resonance_of_bridged_inductor_has_zero_reactance():
    p = {"r_ohm": 5.0, "l_h": 100e-9, "c_f": 0.3e-12}
    f0 = MODELS["inductor"].self_resonance_hz(p)
    # At the self-resonance the impedance is real (definition), and it lies just below
    # 1/(2π√(LC)) because of the series resistance.
    z = complex(MODELS["inductor"].impedance(f0, p))
    assert abs(z.imag) < 1e-6 * abs(z)
    assert f0 < 1 / (2 * math.pi * math.sqrt(p["l_h"] * p["c_f"]))


def test_no_self_resonance_for_a_heavily_damped_bridge():
    # ω² = 1/(LC) − (R/L)² ≤ 0: no frequency makes the reactance zero.
    assert math.isnan(MODELS["resistor-leads"].self_resonance_hz({"r_ohm": 1e6, "l_h": 1e-9, "c_f": 1e-12}))
    assert math.isnan(MODELS["series-rl"].self_resonance_hz({"r_ohm": 1.0, "l_h": 1e-9}))


def test_aliases_share_one_circuit_and_carry_values_across():
    assert MODELS["capacitor"].circuit == "series-rlc"
    assert MODELS["inductor"].circuit == "resistor-leads"
    assert set(CIRCUITS) == {"series-rl", "series-rc", "series-rlc", "parallel-rc", "parallel-rl",
                             "parallel-rlc", "resistor-leads"}
    p = {"r_ohm": 0.1, "l_h": 1e-9, "c_f": 1e-11}
    q = rename(p, MODELS["series-rlc"], MODELS["capacitor"])
    assert q == {"esr_ohm": 0.1, "esl_h": 1e-9, "c_f": 1e-11}
    np.testing.assert_array_equal(MODELS["series-rlc"].impedance(FREQ_HZ, p),
                                  MODELS["capacitor"].impedance(FREQ_HZ, q))
    with pytest.raises(AnalysisError):
        rename(p, MODELS["series-rlc"], MODELS["inductor"])


def test_reading_names_the_part_by_its_dominant_element():
    centre = 100e6
    assert reading_for("series-rlc", {"r_ohm": 0.1, "l_h": 1e-9, "c_f": 10e-12}, centre) == "capacitor"
    assert reading_for("series-rlc", {"r_ohm": 1e4, "l_h": 1e-9, "c_f": 10e-12}, centre) == "series-rlc"
    assert reading_for("resistor-leads", {"r_ohm": 75, "l_h": 9e-9, "c_f": 0.3e-12}, centre) == "resistor-leads"
    assert reading_for("resistor-leads", {"r_ohm": 0.5, "l_h": 100e-9, "c_f": 0.3e-12}, centre) == "inductor"
    assert reading_for("parallel-rc", {"r_ohm": 1.0, "c_f": 1e-12}, centre) == "parallel-rc"


def test_keys_carry_units_and_ids_are_listed():
    assert MODEL_CHOICES[0] == "auto"
    for model in MODELS.values():
        assert {unit_of(k) for k in model.param_names} <= {"Ω", "H", "F"}
    assert MODELS["capacitor"].param_names == ("esr_ohm", "esl_h", "c_f")
    for mid in ("series-rlc", "parallel-rlc", "resistor-leads", "inductor"):
        assert set(MODELS[mid].param_names) == {"r_ohm", "l_h", "c_f"}


def test_bad_input_is_refused_plainly():
    with pytest.raises(AnalysisError, match="unknown model 'rlc'"):
        get_model("rlc")
    model = MODELS["series-rl"]
    with pytest.raises(AnalysisError, match="missing l_h"):
        model.impedance(1e6, {"r_ohm": 1.0})
    with pytest.raises(AnalysisError, match="positive"):
        model.impedance(1e6, {"r_ohm": -1.0, "l_h": 1e-9})
    with pytest.raises(AnalysisError, match="above 0 Hz"):
        model.impedance([0.0, 1e6], {"r_ohm": 1.0, "l_h": 1e-9})
    with pytest.raises(AnalysisError, match="fewer than two"):
        model.estimate(np.array([1e6]), np.array([1 + 1j]))
