"""Grid geometry against the textbook circle equations of the Smith chart.

Constant-resistance circles: centre (r/(1+r), 0), radius 1/(1+r); constant-reactance circles:
centre (1, 1/x), radius 1/|x| (e.g. Pozar, Microwave Engineering, ch. 2 — from memory).
"""

import numpy as np
import pytest

from refplane.views import smith_grid


def _z(x, y):
    # The textbook inverse map z = (1 + Γ)/(1 − Γ).
    g = x + 1j * y
    with np.errstate(divide="ignore", invalid="ignore"):  # Γ = 1 is z = ∞
        return (1 + g) / (1 - g)


@pytest.mark.parametrize("r", [0.0, 0.2, 0.5, 1.0, 2.0, 5.0])
def test_resistance_circle_matches_textbook_centre_and_radius(r):
    arc = smith_grid.resistance_circle(r)
    assert (arc.cx, arc.cy, arc.radius) == pytest.approx((r / (1 + r), 0.0, 1 / (1 + r)), abs=1e-15)
    assert arc.span_rad == pytest.approx(2 * np.pi)
    x, y = arc.points()
    inside = np.abs(x - 1) > 1e-6  # Γ = 1 itself maps to z = ∞
    np.testing.assert_allclose(_z(x, y)[inside].real, r, atol=1e-9)
    assert np.all(np.hypot(x, y) <= 1 + 1e-12)


@pytest.mark.parametrize("xv", [0.2, -0.2, 0.5, -1.0, 2.0, -5.0])
def test_reactance_arc_matches_textbook_centre_and_radius(xv):
    arc = smith_grid.reactance_arc(xv)
    assert (arc.cx, arc.cy, arc.radius) == pytest.approx((1.0, 1 / xv, 1 / abs(xv)), abs=1e-15)
    x, y = arc.points()
    # Within the chart: from the rim (r = 0) to the open-circuit point Γ = 1, at constant x.
    assert np.all(np.hypot(x, y) <= 1 + 1e-9)
    assert np.hypot(x[0], y[0]) == pytest.approx(1.0, abs=1e-12)
    assert (x[-1], y[-1]) == pytest.approx((1.0, 0.0), abs=1e-9)
    z = _z(x[:-1], y[:-1])
    np.testing.assert_allclose(z.imag, xv, rtol=1e-9)
    assert np.all(np.diff(z.real) > 0)  # r grows steadily along the line: it takes the inside way


def test_minor_lines_stop_at_their_extent():
    x, y = smith_grid.reactance_arc(0.3, r_limit=3.0).points()
    z = _z(x, y)
    assert z.real.min() == pytest.approx(0.0, abs=1e-9)
    assert z.real.max() == pytest.approx(3.0, rel=1e-9)
    np.testing.assert_allclose(z.imag, 0.3, atol=1e-9)
    x, y = smith_grid.resistance_circle(0.4, x_limit=3.0).points()
    z = _z(x, y)
    np.testing.assert_allclose(z.real, 0.4, atol=1e-9)
    assert (z.imag[0], z.imag[-1]) == pytest.approx((3.0, -3.0), rel=1e-9)
    assert np.all(np.diff(z.imag) < 0)  # through x = 0 (the left side), not round by Γ = 1


def test_bad_grid_values_are_refused():
    with pytest.raises(ValueError):
        smith_grid.resistance_circle(-0.5)
    with pytest.raises(ValueError):
        smith_grid.reactance_arc(0.0)


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
    assert len(adm.major) == len(imp.major) and len(adm.minor) == len(imp.minor)
    for a, b in zip(imp.major + imp.minor, adm.major + adm.minor):
        ax, ay = a.points(50)
        bx, by = b.points(50)
        np.testing.assert_allclose(bx, -ax, atol=1e-12)
        np.testing.assert_allclose(by, -ay, atol=1e-12)
    # Turned, the r = 1 circle becomes the g = 1 circle through Γ = 0 and the short, Γ = −1.
    g1 = adm.major[6]
    assert (g1.cx, g1.cy, g1.radius) == pytest.approx((-0.5, 0.0, 0.5))


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
