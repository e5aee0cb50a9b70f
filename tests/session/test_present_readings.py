"""The one path from a sweep to the numbers people read: read_points, readout_cells, summary_line.

Check values come from the textbook identities (Pozar, *Microwave Engineering*, ch. 2 — from memory:
Z = Z0(1+Γ)/(1−Γ), VSWR = (1+|Γ|)/(1−|Γ|), RL = −20·log10|Γ|, series L = X/(2πf), series C = −1/(2πf·X))
and the leaded-resistor reading of references.md (common practice); every displayed cell must agree
with impedance.readout at the same point.
"""

from __future__ import annotations

import math
from dataclasses import asdict

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import readout, z_to_gamma
from refplane.analysis.readings import read_points
from refplane.session.present import readout_cells, series_part, summary_line
from refplane.analysis.sweep import Sweep


def _number(cell: str) -> float:
    """Read a displayed cell back as a number (spaces group thousands, '−' is the minus sign)."""
    text = cell.replace("−", "-").replace("Ω", "").replace("dB", "").replace("°", "").strip()
    return float(text.replace(" ", ""))


@pytest.fixture
def resistor_sweep():
    # Common practice: a leaded 75 Ω resistor with about 9 nH of leads (X = 2πf·9 nH).
    f = np.linspace(1e6, 1e9, 1000)
    z = 75 + 1j * 2 * np.pi * f * 9e-9
    return Sweep(f, z_to_gamma(z, 50.0), 50.0, name="resistor")


def test_read_points_matches_readout(resistor_sweep):
    at = [100e6, 470e6, 733.3e6]
    pts = read_points(resistor_sweep, at)
    assert pts.port == 1 and pts.z0_ohm == 50.0
    np.testing.assert_array_equal(pts.freq_hz, at)
    direct = readout(np.asarray(at), pts.gamma, 50.0)
    np.testing.assert_equal(asdict(pts.readout), asdict(direct))
    # Pozar: R stays 75 Ω, series L = X/(2πf) = 9 nH (linear interpolation of Γ: close, not exact,
    # between swept points; 1 MHz spacing keeps it within 1e-5).
    np.testing.assert_allclose(pts.readout.r_ohm, 75.0, rtol=1e-5)
    np.testing.assert_allclose(pts.readout.series_l_h, 9e-9, rtol=1e-5)


def test_read_points_single_frequency_is_still_an_array(resistor_sweep):
    pts = read_points(resistor_sweep, 470e6)
    assert pts.gamma.shape == (1,)
    assert pts.readout.at(0).freq_hz == 470e6


def test_read_points_refuses_bad_port_and_frequency(resistor_sweep):
    with pytest.raises(AnalysisError, match="port 2 does not exist"):
        read_points(resistor_sweep, [470e6], port=2)
    with pytest.raises(AnalysisError, match="outside the sweep"):
        read_points(resistor_sweep, [2e9])


def test_cells_agree_with_readout(resistor_sweep):
    r = read_points(resistor_sweep, [470e6]).readout.at(0)
    cells = readout_cells(r)
    assert list(cells) == ["Frequency", "R", "X", "Series L/C", "|Z|", "|Γ|", "∠Γ", "VSWR", "Return loss",
                           "Q", "Parallel R", "Parallel X"]
    assert cells["Frequency"] == "470 MHz"
    assert _number(cells["R"]) == pytest.approx(r.r_ohm, abs=0.005)
    assert _number(cells["X"]) == pytest.approx(r.x_ohm, abs=0.005)
    assert _number(cells["|Z|"]) == pytest.approx(r.z_mag_ohm, abs=0.005)
    assert _number(cells["|Γ|"]) == pytest.approx(r.gamma_mag, abs=0.00005)
    assert _number(cells["∠Γ"]) == pytest.approx(r.gamma_deg, abs=0.05)
    assert _number(cells["VSWR"]) == pytest.approx(r.vswr, abs=0.0005)
    assert _number(cells["Return loss"]) == pytest.approx(r.return_loss_db, abs=0.005)
    assert _number(cells["Q"]) == pytest.approx(r.q, abs=0.0005)
    assert _number(cells["Parallel R"]) == pytest.approx(r.parallel_r_ohm, abs=0.005)
    assert cells["Series L/C"] == "L 9.000 nH"
    # Pozar: the numbers themselves — 75 + j26.58 Ω at 470 MHz (common practice: "about 75 + j27 Ω").
    assert cells["R"] == "75.00 Ω"
    assert cells["X"] == "26.58 Ω"


def test_capacitive_cells_and_minus_sign():
    # Textbook: 10 pF at 100 MHz is X = −159.15 Ω; shown with a true minus sign.
    f = np.array([50e6, 100e6, 150e6])
    z = 2 + 1 / (1j * 2 * np.pi * f * 10e-12)
    sw = Sweep(f, z_to_gamma(z, 50.0), 50.0)
    r = read_points(sw, [100e6]).readout.at(0)
    cells = readout_cells(r)
    assert cells["X"] == "−159.15 Ω"
    assert cells["Series L/C"] == "C 10.00 pF"
    assert series_part(r) == ("C", "10.00 pF")
    # Pozar: VSWR of that load, computed independently, as the summary shows it (2 decimals).
    g = (z[1] - 50) / (z[1] + 50)
    expected_vswr = (1 + abs(g)) / (1 - abs(g))
    assert summary_line(r) == f"100 MHz: 2.00 Ω − j159.15 Ω (C 10.00 pF), VSWR {expected_vswr:.2f}"


def test_summary_line_of_resistor(resistor_sweep):
    r = read_points(resistor_sweep, [470e6]).readout.at(0)
    line = summary_line(r)
    assert line.startswith("470 MHz: 75.00 Ω + j26.58 Ω (L 9.000 nH), VSWR ")
    assert line.endswith(f"{r.vswr:.2f}")


def test_open_short_and_match_cells():
    # Pozar limits: open → Z = ∞, VSWR ∞, RL 0 dB; short → R = 0; match → RL ∞.
    f = np.array([1e6, 2e6])
    for gamma, expect in ((1.0, "open"), (-1.0, "short"), (0.0, "match")):
        sw = Sweep(f, np.full(2, gamma, complex), 50.0)
        r = read_points(sw, [1.5e6]).readout.at(0)
        cells = readout_cells(r)
        line = summary_line(r)
        if expect == "open":
            assert cells["R"] == "∞ Ω" and cells["VSWR"] == "∞" and cells["Return loss"] == "0.00 dB"
            assert cells["X"] == "—" and cells["Series L/C"] == "—"
            assert line == "1.5 MHz: open (Z = ∞), VSWR ∞"
        elif expect == "short":
            assert cells["R"] == "0.00 Ω" and cells["VSWR"] == "∞" and cells["Return loss"] == "0.00 dB"
            assert line == "1.5 MHz: 0.00 Ω + j0.00 Ω, VSWR ∞"
        else:
            assert cells["Return loss"] == "∞ dB" and cells["VSWR"] == "1.000"
            assert cells["R"] == "50.00 Ω"


def test_thousands_are_grouped():
    # A 2 kΩ load: the table groups thousands with a space so columns stay readable.
    f = np.array([1e6, 2e6])
    sw = Sweep(f, np.full(2, complex(z_to_gamma(2000 + 0j, 50.0))), 50.0)
    r = read_points(sw, [1e6]).readout.at(0)
    assert readout_cells(r)["R"] == "2 000.00 Ω"
    assert not math.isnan(_number(readout_cells(r)["R"]))
