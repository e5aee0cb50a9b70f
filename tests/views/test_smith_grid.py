"""Grid geometry against the textbook circle equations of the Smith chart.

Constant-resistance circles: centre (r/(1+r), 0), radius 1/(1+r); constant-reactance circles:
centre (1, 1/x), radius 1/|x| (e.g. Pozar, Microwave Engineering, ch. 2 — from memory).
"""

import numpy as np
import pytest

from refplane.views import smith_grid


@pytest.mark.parametrize("r", [0.0, 0.2, 0.5, 1.0, 2.0, 5.0])
def test_resistance_circle_matches_textbook_centre_and_radius(r):
    x, y = smith_grid.resistance_circle(r)
    centre, radius = r / (1 + r), 1 / (1 + r)
    np.testing.assert_allclose(np.hypot(x - centre, y), radius, atol=1e-9)
    assert np.all(np.hypot(x, y) <= 1 + 1e-12)


@pytest.mark.parametrize("xv", [0.2, -0.2, 0.5, -1.0, 2.0, -5.0])
def test_reactance_arc_matches_textbook_centre_and_radius(xv):
    x, y = smith_grid.reactance_arc(xv)
    np.testing.assert_allclose(np.hypot(x - 1, y - 1 / xv), 1 / abs(xv), atol=1e-9)
    # Clipped to the chart: from the rim (r = 0) to the open-circuit point Γ = 1.
    assert np.all(np.hypot(x, y) <= 1 + 1e-9)
    assert np.hypot(x[0], y[0]) == pytest.approx(1.0, abs=1e-12)
    assert (x[-1], y[-1]) == pytest.approx((1.0, 0.0), abs=1e-9)


def test_minor_lines_stop_at_their_extent():
    x, y = smith_grid.reactance_arc(0.3, r_limit=3.0)
    z = (1 + (x + 1j * y)) / (1 - (x + 1j * y))
    assert z.real.max() == pytest.approx(3.0, rel=1e-9)
    np.testing.assert_allclose(z.imag, 0.3, atol=1e-9)


def test_impedance_grid_labels_sit_on_their_lines():
    grid = smith_grid.impedance_grid()
    texts = {lab.text for lab in grid.labels}
    assert {"0.2", "0.5", "1", "2", "5", "+j1", "−j1", "+j0.5", "−j5"} <= texts
    one = next(lab for lab in grid.labels if lab.text == "1")
    assert (one.x, one.y) == (0.0, 0.0)  # r = 1 passes through the centre (50 Ω on a 50 Ω chart)
    plus_j1 = next(lab for lab in grid.labels if lab.text == "+j1")
    # z = j1 maps to Γ = j (top of the chart), the label just outside it.
    assert (plus_j1.x, plus_j1.y) == pytest.approx((0.0, 1.02), abs=1e-12)


def test_admittance_grid_is_the_impedance_grid_turned_half_a_turn():
    imp, adm = smith_grid.impedance_grid(), smith_grid.admittance_grid()
    np.testing.assert_array_equal(adm.major[0], -imp.major[0])
    np.testing.assert_array_equal(adm.major[1], -imp.major[1])


def test_vswr_circle_radius():
    # VSWR 2 ↔ |Γ| = 1/3 (references.md table).
    x, y = smith_grid.vswr_circle(2.0)
    np.testing.assert_allclose(np.hypot(x, y), 1 / 3, rtol=1e-12)
    with pytest.raises(ValueError):
        smith_grid.vswr_circle(0.5)


def test_nearest_on_polyline_and_frequency_between_points():
    x = np.array([0.0, 1.0, 1.0])
    y = np.array([0.0, 0.0, 1.0])
    i, t, d = smith_grid.nearest_on_polyline(0.25, 0.1, x, y)
    assert (i, t, d) == (0, pytest.approx(0.25), pytest.approx(0.1))
    f, d = smith_grid.frequency_near(1.05, 0.5, x, y, np.array([1e6, 2e6, 3e6]))
    assert f == pytest.approx(2.5e6) and d == pytest.approx(0.05)
