"""Marker searches in the session: placed where closed forms put them, and followed as data change."""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session import searches
from refplane.session.model import Session

L_H, C_F = 100e-9, 10e-12
F0 = 1.0 / (2.0 * math.pi * math.sqrt(L_H * C_F))  # ≈ 159.155 MHz


def _sweep(z, f, name):
    return Sweep(freq_hz=f, s=z_to_gamma(z, 50.0).reshape(-1, 1, 1), z0_ohm=50.0, name=name)


def series_rlc(r_ohm=50.0, n=4001, span=(100e6, 220e6)):
    f = np.linspace(*span, n)
    w = 2 * np.pi * f
    return _sweep(r_ohm + 1j * w * L_H + 1.0 / (1j * w * C_F), f, "series RLC")


def parallel_rlc(r_ohm=500.0, n=4001, span=(100e6, 220e6)):
    f = np.linspace(*span, n)
    w = 2 * np.pi * f
    return _sweep(1.0 / (1.0 / r_ohm + 1.0 / (1j * w * L_H) + 1j * w * C_F), f, "parallel RLC")


def test_series_resonance_sits_at_one_over_two_pi_root_lc():
    # Series RLC resonance f0 = 1/(2π√(LC)) (any circuits textbook, e.g. Pozar, Microwave
    # Engineering, 4th ed., sec. 6.1). With R = Z0 it is also the perfect match (VSWR 1).
    s = Session()
    tid = s.add_sweep(series_rlc())
    (mid,) = s.find_markers(tid, "resonances")
    assert s.marker(mid).follows == "series-resonance:1"
    assert s.marker(mid).freq_hz == pytest.approx(F0, rel=1e-5)
    (best,) = s.find_markers(tid, "best-match")
    assert s.marker(best).freq_hz == pytest.approx(F0, rel=1e-4)
    assert s.scene().marker(best).readout.vswr == pytest.approx(1.0, abs=1e-3)
    assert s.scene().marker(mid).follows_text == "series resonance"


def test_parallel_resonance_and_largest_impedance():
    # Parallel RLC: X crosses zero falling at f0 = 1/(2π√(LC)), where |Z| = R is largest.
    s = Session()
    tid = s.add_sweep(parallel_rlc())
    (mid,) = s.find_markers(tid, "resonances")
    assert s.marker(mid).follows == "parallel-resonance:1"
    assert s.marker(mid).freq_hz == pytest.approx(F0, rel=1e-5)
    (peak,) = s.find_markers(tid, "max-z")
    assert s.marker(peak).freq_hz == pytest.approx(F0, rel=1e-4)
    assert s.scene().marker(peak).readout.z_mag_ohm == pytest.approx(500.0, rel=1e-4)


@pytest.mark.parametrize("vswr_limit", [1.5, 2.0, 3.0])
def test_vswr_band_of_a_series_rlc_matches_its_q(vswr_limit):
    # Matched series RLC (R = Z0): the fractional bandwidth where VSWR ≤ s is
    # FBW = (s − 1)/(Q·√s) for high Q, Q = ω0·L/R (Yaghjian and Best, "Impedance, bandwidth,
    # and Q of antennas", IEEE Trans. Antennas Propag. 53(4), 2005, eq. for FBW_V). For the
    # series RLC the edges' difference is exactly that, relative to the geometric centre.
    r = 5.0  # Q = ω0 L / R = 20
    f = np.linspace(140e6, 180e6, 8001)
    w = 2 * np.pi * f
    sweep = Sweep(freq_hz=f, s=z_to_gamma(r + 1j * w * L_H + 1 / (1j * w * C_F), r).reshape(-1, 1, 1),
                  z0_ohm=r, name="matched RLC")
    q = 2 * math.pi * F0 * L_H / r
    s = Session()
    tid = s.add_sweep(sweep)
    low, high = s.find_markers(tid, "band", vswr_limit=vswr_limit)
    f1, f2 = s.marker(low).freq_hz, s.marker(high).freq_hz
    expected = (vswr_limit - 1) / (q * math.sqrt(vswr_limit))
    assert (f2 - f1) / math.sqrt(f1 * f2) == pytest.approx(expected, rel=1e-4)
    assert (f2 - f1) / F0 == pytest.approx(expected, rel=2e-3)  # centred on f0, high-Q form
    # Readings at the edges are the limit itself (markers read between points as searches do).
    for mid in (low, high):
        assert s.scene().marker(mid).readout.vswr == pytest.approx(vswr_limit, rel=1e-4)
    (sentence,) = s.scene().found
    assert f"VSWR ≤ {vswr_limit:g}" in sentence and "width" in sentence and "centre" in sentence


def test_markers_follow_their_search_when_offsets_change():
    # A line offset turns the trace; the zero of X of the de-embedded data moves, and a
    # following marker moves with it (as a freshly run search would put it). (The best match
    # would not move: a lossless line leaves |Γ| as it is.)
    s = Session()
    tid = s.add_sweep(series_rlc(r_ohm=30.0))  # not matched: Γ = −0.25 at f0, which a line turns
    (mid,) = s.find_markers(tid, "resonances")
    s.set_offsets(tid, (LineOffset(delay_s=-150e-12),))
    moved = s.marker(mid).freq_hz
    assert moved != pytest.approx(F0, rel=1e-4)
    assert moved == pytest.approx(searches.run(s.displayed(tid), 1, "series-resonance:1"), rel=1e-12)
    # Moved by hand, it stops following.
    s.move_marker(mid, 150e6)
    assert s.marker(mid).follows is None
    s.set_offsets(tid, ())
    assert s.marker(mid).freq_hz == 150e6


def test_a_second_search_moves_rather_than_duplicates_and_nothing_found_adds_nothing():
    s = Session()
    tid = s.add_sweep(series_rlc())
    first = s.find_markers(tid, "best-match")
    assert s.find_markers(tid, "best-match") == first
    assert len(s.markers()) == 1
    assert s.find_markers(tid, "band", vswr_limit=1.0001) == [] or len(s.markers()) == 3
    # A load that never gets to VSWR 1.2 has no such band.
    t2 = s.add_sweep(series_rlc(r_ohm=200.0))
    assert s.find_markers(t2, "band", vswr_limit=1.2) == []


def test_search_specs_are_checked():
    from refplane.analysis.errors import AnalysisError

    for bad in ("nearest", "band-low:1", "band-low:x", "series-resonance:0", "best-match:2"):
        with pytest.raises(AnalysisError):
            searches.parse(bad)
    assert searches.describe("band-high:2") == "VSWR 2 band, high edge"


def test_following_markers_survive_a_session_file(tmp_path):
    from refplane.analysis.files.loading import read_sweep
    from refplane.session.files import open_session, save_session

    from model_sweeps import write_sweep

    path = write_sweep(series_rlc(r_ohm=30.0, n=801), tmp_path / "rlc.s1p")
    s = Session()
    tid = s.add_sweep(read_sweep(path))
    s.find_markers(tid, "band", vswr_limit=3.0)
    saved = save_session(s, tmp_path / "work.refplane")
    again, notes = open_session(saved)
    assert notes == []
    assert [m.follows for m in again.markers()] == ["band-low:3", "band-high:3"]
    assert again.scene().found == s.scene().found


def test_a_hand_edited_search_in_a_session_file_is_refused_clearly(tmp_path):
    import json

    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.files.loading import read_sweep
    from refplane.session.files import open_session, save_session

    from model_sweeps import write_sweep

    path = write_sweep(series_rlc(n=201), tmp_path / "rlc.s1p")
    s = Session()
    tid = s.add_sweep(read_sweep(path))
    s.find_markers(tid, "best-match")
    saved = save_session(s, tmp_path / "work.refplane")
    doc = json.loads(saved.read_text())
    doc["markers"][0]["follows"] = "nearest"
    saved.write_text(json.dumps(doc))
    with pytest.raises(AnalysisError, match=r"markers\[0\]\.follows"):
        open_session(saved)
