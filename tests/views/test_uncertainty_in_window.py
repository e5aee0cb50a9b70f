"""The ± of every marker reading and the 95 % region of Γ on the chart, from the session's
uncertainty settings (the engine itself is checked against JCGM 101 Monte Carlo and EURAMET
cg-12's worst-case bound in tests/analysis/test_uncertainty.py)."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.session.model import Session
from refplane.session.present import readout_cells
from refplane.session.uncertainty_view import marker_u
from refplane.views.panels.marker_table import MarkerTable
from refplane.views.smith_chart import SmithChart

from model_sweeps import resistor_with_leads


def test_cells_carry_the_engines_plus_minus_and_the_chart_draws_the_region(qtbot):
    s = Session()
    table, chart = MarkerTable(s), SmithChart(s)
    qtbot.addWidget(table)
    qtbot.addWidget(chart)
    tid = s.add_sweep(resistor_with_leads())
    mid = s.add_marker(tid, 470e6)
    assert "±" not in table.cells(mid)["R"] and chart.region_item(mid) is None
    s.set_tool("uncertainty", enabled=True, directivity_db=40.0, source_match_db=35.0, tracking_db=0.1)
    u = marker_u(s.tool("uncertainty"), s.trace(tid), 470e6)
    expected = readout_cells(s.scene().marker(mid).readout, u)
    assert table.cells(mid) == expected and "±" in expected["R"]
    region = s.scene().marker(mid).region
    x, y = chart.region_item(mid).getData()
    assert chart.region_item(mid).isVisible() and len(x) == len(region) + 1
    # The outline is the 95 % ellipse of Γ's covariance: (x − Γ)ᵀ C⁻¹ (x − Γ) = χ²₂(0.95)
    # = −2·ln(0.05) ≈ 5.991 (chi-square with two degrees of freedom; GUM-S2, JCGM 102).
    from refplane.session.uncertainty_view import trace_uncertainty

    result = trace_uncertainty(s.tool("uncertainty"), s.trace(tid), [470e6])
    cov = np.asarray(result.cov_gamma[0], float)
    g = s.scene().marker(mid).gamma
    d = np.stack([x - g.real, y - g.imag])
    q = np.einsum("in,ij,jn->n", d, np.linalg.inv(cov), d)
    assert q == pytest.approx(-2 * np.log(0.05), rel=1e-6)
    s.move_marker(mid, 300e6)
    assert "±" in table.cells(mid)["R"]
    s.set_tool("uncertainty", enabled=False)
    assert "±" not in table.cells(mid)["R"] and not chart.region_item(mid).isVisible()
