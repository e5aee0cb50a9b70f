"""The chart draws each grid arc where the textbook map puts its line (Qt's angle convention checked)."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.views import smith_grid
from refplane.views.smith_chart import _arcs_path


def _path_points(arc, n=200):
    path = _arcs_path([arc])
    pts = [path.pointAtPercent(t) for t in np.linspace(0.0, 1.0, n)]
    return np.array([p.x() for p in pts]), np.array([p.y() for p in pts])


def _z(x, y):
    # Textbook inverse map z = (1 + Γ)/(1 − Γ) (Pozar, Microwave Engineering, ch. 2 — from memory).
    g = x + 1j * y
    with np.errstate(divide="ignore", invalid="ignore"):
        return (1 + g) / (1 - g)


@pytest.mark.parametrize("r, x_limit", [(0.5, None), (2.0, None), (0.3, 3.0), (1.5, 3.0)])
def test_drawn_resistance_line_keeps_its_resistance(qapp, r, x_limit):
    x, y = _path_points(smith_grid.resistance_circle(r, x_limit))
    # On the textbook circle: centre (r/(1+r), 0), radius 1/(1+r). Qt draws arcs as cubic
    # pieces, a few parts in ten thousand off the true circle (well under a pixel).
    np.testing.assert_allclose(np.hypot(x - r / (1 + r), y), 1 / (1 + r), atol=5e-4)
    z = _z(x, y)
    if x_limit is not None:
        assert np.abs(z.imag).max() == pytest.approx(x_limit, rel=1e-2)
        assert x.min() == pytest.approx((r - 1) / (r + 1), abs=1e-3)  # it passes through Γ(r)


@pytest.mark.parametrize("xv, r_limit", [(1.0, None), (-0.5, None), (0.3, 3.0), (-4.0, 3.0)])
def test_drawn_reactance_line_keeps_its_reactance(qapp, xv, r_limit):
    x, y = _path_points(smith_grid.reactance_arc(xv, r_limit))
    # On the textbook circle: centre (1, 1/x), radius 1/|x|.
    np.testing.assert_allclose(np.hypot(x - 1, y - 1 / xv), 1 / abs(xv), atol=5e-4 / abs(xv))
    z = _z(x, y)
    assert z[0].real == pytest.approx(0.0, abs=1e-3) and z[0].imag == pytest.approx(xv, rel=1e-3)  # starts on the rim
    assert np.all(np.hypot(x, y) <= 1 + 1e-3)  # the inside way, not round the outside
    if r_limit is not None:
        assert z.real.max() == pytest.approx(r_limit, rel=1e-2)
