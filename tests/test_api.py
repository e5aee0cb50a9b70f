"""The public Python API: what it lists, that it is light to import, and that its results agree
with scikit-rf (the reference library) and with ``refplane read --json``."""

from __future__ import annotations

import json
import pathlib
import subprocess
import sys
import warnings

import numpy as np
import pytest

import refplane
from refplane import api
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")
DATA = pathlib.Path(skrf.__file__).parent / "data"


def test_all_lists_only_what_exists_and_the_package_offers_it():
    for name in api.__all__:
        assert hasattr(api, name), name
        if name != "report":
            assert getattr(refplane, name) is getattr(api, name)
    assert refplane.write_report is api.report
    with pytest.raises(AttributeError):
        refplane.no_such_function  # noqa: B018


def test_import_refplane_loads_neither_numpy_nor_qt():
    code = "import sys, refplane; print(sorted(m for m in ('numpy', 'PySide6', 'skrf') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def _skrf_network(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(path))


@pytest.mark.parametrize("name", ["ring slot.s2p", "ntwk1.s2p", "line.s2p", "tee.s3p"])
def test_to_network_matches_skrf_reading_the_same_file(name):
    path = DATA / name
    if not path.exists():
        pytest.skip(f"{name} is not shipped with this scikit-rf")
    ours = refplane.read(path).to_network()
    ref = _skrf_network(path)
    # scikit-rf's own Touchstone reader is the reference.
    np.testing.assert_allclose(ours.f, ref.f, rtol=1e-12)
    np.testing.assert_allclose(ours.s, ref.s, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(ours.z0, ref.z0, rtol=1e-12)
    # And quantities skrf derives from it: magnitude and phase of every parameter.
    np.testing.assert_allclose(ours.s_mag, ref.s_mag, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(ours.s_deg, ref.s_deg, rtol=1e-12, atol=1e-9)


def test_round_trip_sweep_network_sweep_and_network_sweep_network():
    ref = _skrf_network(DATA / "ring slot.s2p")
    sweep = Sweep.from_network(ref)
    assert np.array_equal(sweep.s, ref.s) and np.array_equal(sweep.freq_hz, ref.f)
    again = sweep.to_network()
    assert np.array_equal(again.s, ref.s) and np.array_equal(again.f, ref.f)
    np.testing.assert_array_equal(again.z0, ref.z0)
    back = api.from_network(api.to_network(sweep))
    assert np.array_equal(back.s, sweep.s) and np.array_equal(back.z0_ohm, sweep.z0_ohm)
    assert back.name == sweep.name


def test_from_network_refuses_a_reference_that_changes_with_frequency():
    freq = skrf.Frequency(1, 2, 3, unit="GHz")
    net = skrf.Network(frequency=freq, s=np.zeros((3, 1, 1)), z0=np.array([[50.0], [50.0], [75.0]]))
    with pytest.raises(AnalysisError, match="changes with frequency"):
        Sweep.from_network(net)


def test_readings_are_the_points_of_refplane_read_json(tmp_path, capsys):
    path = DATA / "ring slot.s2p"
    main(["read", str(path), "--at", "80GHz", "--at", "100GHz", "--port", "2", "--json"])
    cli = json.loads(capsys.readouterr().out)["points"]
    assert refplane.readings(path, at=["80GHz", 100e9], port=2) == cli


def test_remove_offsets_recovers_a_load_behind_a_skrf_line():
    # Reference: scikit-rf's DefinedGammaZ0 line (lossless, 50 Ω) cascaded in front of a load.
    freq = skrf.Frequency(10, 1000, 51, unit="MHz")
    c = 299792458.0  # m/s, exact (SI definition)
    media = skrf.media.DefinedGammaZ0(freq, z0=50.0, gamma=2j * np.pi * freq.f / c)
    delay = 1.25e-9
    line = media.line(delay * c, unit="m")  # a lossless line in vacuum: delay = length / c
    load = media.load(0.3 + 0.2j)
    measured = Sweep.from_network(line ** load)
    at_load = refplane.remove_offsets(measured, delay="1.25ns")
    np.testing.assert_allclose(at_load.s[:, 0, 0], load.s[:, 0, 0], atol=1e-9)
    again = refplane.add_offsets(at_load, delay=delay)
    np.testing.assert_allclose(again.s, measured.s, atol=1e-9)
    with pytest.raises(AnalysisError, match="velocity factor"):
        refplane.remove_offsets(measured, length="20cm")


def test_check_and_check_files_agree(tmp_path):
    f = np.linspace(100e6, 200e6, 11)
    for i, rho in enumerate((0.1, 0.3)):
        refplane.write(Sweep(f, np.full(11, rho), 50.0, comments=("invented for a test",)), tmp_path / f"d{i}.s1p")
    lim = "vswr <= 1.5 over 120MHz:180MHz"
    # VSWR of |Γ| 0.1 is 1.2222, of 0.3 is 1.8571 (Pozar, ch. 2).
    single = [api.check(refplane.read(tmp_path / f"d{i}.s1p"), lim)[0].decision for i in range(2)]
    batch = refplane.check_files(tmp_path, lim, jobs=2)
    assert single == ["pass", "fail"] == [fc.decision for fc in batch.files]
    assert batch.summary["failed"] == 1 and batch.exit_status == 1
    assert batch.files[1].results[0].worst_value == pytest.approx(1.3 / 0.7)


def test_report_through_the_api_writes_html_and_refuses_to_overwrite(tmp_path):
    f = np.linspace(100e6, 200e6, 11)
    sweep = Sweep(f, np.full(11, 0.2), 50.0, name="flat")
    out = tmp_path / "r.html"
    assert refplane.write_report(sweep, out, at=["150MHz"], limits=["vswr <= 1.5 over 120MHz:180MHz"]) == str(out)
    text = out.read_text(encoding="utf-8")
    assert "<svg" in text and "1.500" in text          # |Γ| 0.2 is VSWR 1.5 (references, exact table)
    with pytest.raises(AnalysisError, match="refusing to overwrite"):
        refplane.write_report(sweep, out)
