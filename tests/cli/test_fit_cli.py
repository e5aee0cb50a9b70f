"""``refplane fit``: JSON keys, the human output, and status 2 on bad requests."""

from __future__ import annotations

import importlib.util
import json
import math

import numpy as np
import pytest

from refplane.analysis.sweep import Sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")


@pytest.fixture
def sweep_reader(monkeypatch):
    """Until Refplane's own Touchstone reader lands, read the files with scikit-rf instead."""
    if importlib.util.find_spec("refplane.analysis.files.touchstone") is None:
        import refplane.analysis.files.loading as loading

        def read_with_skrf(path):
            import os

            if not os.path.exists(path):
                from refplane.analysis.errors import SweepFileError

                raise SweepFileError("no such file", file=path)
            net = skrf.Network(str(path))
            return Sweep(net.f, net.s, net.z0[0], name=net.name, source=str(path))

        monkeypatch.setattr(loading, "read_sweep", read_with_skrf)


def _media(f):
    return skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(f, unit="hz"), z0=50)


def _leaded_resistor_file(folder) -> str:
    # Reference data: scikit-rf lumped elements, 0.15 pF across a 75 Ω resistor in series
    # with 9.5 nH, ended in skrf's short; written by skrf as Touchstone.
    f = np.linspace(10e6, 1.5e9, 151)
    m = _media(f)
    net = m.shunt_capacitor(0.15e-12) ** m.resistor(75.0) ** m.inductor(9.5e-9) ** m.short()
    net.write_touchstone("leaded", dir=str(folder), form="ri", skrf_comment=False)
    return str(folder / "leaded.s1p")


def _chip_capacitor_two_port(folder) -> str:
    # A 10 pF part with 0.1 Ω and 1 nH in series between two ports (skrf lumped elements).
    f = np.geomspace(10e6, 3e9, 151)
    m = _media(f)
    net = m.resistor(0.1) ** m.inductor(1e-9) ** m.capacitor(10e-12)
    net.write_touchstone("chip", dir=str(folder), form="ri", skrf_comment=False)
    return str(folder / "chip.s2p")


def _run(argv) -> int:
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


def test_json_has_the_agreed_keys_and_names_the_leads(tmp_path, sweep_reader, capsys):
    path = _leaded_resistor_file(tmp_path)
    assert _run(["fit", path, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("model", "params", "stderr", "residual_rms", "ranking", "sentence", "derived", "band_hz"):
        assert key in out
    assert out["model"] == "resistor-leads"
    assert set(out["params"]) == set(out["stderr"]) == {"r_ohm", "l_h", "c_f"}
    # skrf's element values come back (clean data).
    assert out["params"]["l_h"] == pytest.approx(9.5e-9, rel=1e-6)
    assert out["params"]["r_ohm"] == pytest.approx(75.0, rel=1e-6)
    assert out["ranking"][0]["model"] == "resistor-leads"
    assert {"model", "aicc", "delta_aicc", "residual_rms", "n_params"} <= set(out["ranking"][0])
    assert out["band_hz"] == [pytest.approx(10e6), pytest.approx(1.5e9)]


def test_plain_output_is_a_sentence_and_tables(tmp_path, sweep_reader, capsys):
    path = _leaded_resistor_file(tmp_path)
    assert _run(["fit", path, "--model", "series-rl", "--band", "400MHz:540MHz"]) == 0
    out = capsys.readouterr().out
    lines = out.splitlines()
    assert "reflection of port 1" in lines[0]
    assert " in series with " in lines[1] and "nH ±" in lines[1] and "residual" in lines[1]
    assert "r_ohm" in out and "l_h" in out and "Q at" in out


def test_through_fit_of_a_two_port(tmp_path, sweep_reader, capsys):
    path = _chip_capacitor_two_port(tmp_path)
    assert _run(["fit", path, "--through", "series", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["model"] == "capacitor"
    assert out["measurement"] == "series-through"
    # f0 = 1/(2π√(LC)) for 1 nH and 10 pF (textbook).
    assert out["derived"]["srf_hz"] == pytest.approx(1 / (2 * math.pi * math.sqrt(1e-9 * 10e-12)), rel=1e-6)


@pytest.mark.parametrize("argv, expected", [
    (["--model", "rlc"], "invalid choice"),
    (["--band", "3GHz:4GHz"], "holds no swept point"),
    (["--band", "10MHz:11MHz", "--model", "series-rlc"], "too few points for model series-rlc"),
    (["--band", "1GHz:100MHz"], "upper frequency"),
    (["--port", "2"], "port 2 does not exist"),
    (["--through", "series"], "needs a 2-port sweep"),
])
def test_bad_requests_exit_2_with_one_clear_line(tmp_path, sweep_reader, capsys, argv, expected):
    path = _leaded_resistor_file(tmp_path)
    assert _run(["fit", path, *argv]) == 2
    err = capsys.readouterr().err.strip()
    assert expected in err
    assert len(err.splitlines()) == 1


def test_two_port_without_a_port_or_a_through_is_ambiguous(tmp_path, sweep_reader, capsys):
    path = _chip_capacitor_two_port(tmp_path)
    assert _run(["fit", path]) == 2
    err = capsys.readouterr().err
    assert "chip.s2p" in err and "--port" in err and "--through" in err
    assert _run(["fit", path, "--port", "1", "--json"]) == 0


def test_missing_file_exits_2(tmp_path, sweep_reader, capsys):
    assert _run(["fit", str(tmp_path / "nothing.s1p")]) == 2
    assert "nothing.s1p" in capsys.readouterr().err


def test_help_text_lists_exactly_the_models_the_analysis_layer_has():
    # The command line keeps the model list as text so `refplane --help` stays light; it must
    # never drift from the analysis layer's library.
    from refplane.analysis.circuits.models import MODELS
    from refplane.cli import fit as fit_cli

    assert set(fit_cli._MODEL_IDS) == set(MODELS) | {"auto"}
    for model in MODELS.values():
        line = next(l for l in fit_cli._EPILOG.splitlines() if l.split()[:1] == [model.id])
        assert ", ".join(model.param_names) in line, model.id
