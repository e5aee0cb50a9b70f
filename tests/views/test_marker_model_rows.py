"""The marker table shows a fitted model's reading beside the measurement."""

import numpy as np
import pytest
from model_sweeps import resistor_with_leads

from refplane.analysis.readings import read_points
from refplane.session.present import readout_cells
from refplane.views.panels.marker_table import MarkerTable
from refplane.session.model import Session


@pytest.fixture
def table(qtbot):
    state = Session()
    widget = MarkerTable(state)
    qtbot.addWidget(widget)
    return state, widget


def test_model_row_equals_the_analysis_reading_of_the_overlay(table):
    state, widget = table
    # Measurement: 75 Ω with 9 nH of leads (common practice); model: the same part with 10 nH.
    measured = resistor_with_leads(l_h=9e-9)
    model = resistor_with_leads(l_h=10e-9, name="fitted")
    tid = state.add_sweep(measured)
    mid = state.add_marker(tid, 470e6)
    assert widget.rows.rowCount() == 1
    state.set_overlay(tid, "fit", model)
    assert widget.rows.rowCount() == 2
    expected = readout_cells(read_points(model, [470e6]).readout.at(0))
    assert widget.model_cells(mid, "fit") == expected
    # The measured row is untouched and still the measurement's own reading.
    assert widget.cells(mid) == readout_cells(read_points(measured, [470e6]).readout.at(0))
    # X = ωL (textbook): 2π·470 MHz·10 nH = 29.53 Ω for the model row.
    assert widget.model_cells(mid, "fit")["X"] == f"{2 * np.pi * 470e6 * 10e-9:.2f} Ω"


def test_model_row_follows_a_moved_marker_and_goes_with_the_overlay(table):
    state, widget = table
    tid = state.add_sweep(resistor_with_leads())
    mid = state.add_marker(tid, 470e6)
    model = resistor_with_leads(l_h=10e-9)
    state.set_overlay(tid, "fit", model)
    state.move_marker(mid, 200e6)
    assert widget.model_cells(mid, "fit")["Frequency"] == "200 MHz"
    assert widget.model_cells(mid, "fit") == readout_cells(read_points(model, [200e6]).readout.at(0))
    assert "1 model" in widget.as_tsv()
    state.set_overlay(tid, "fit", None)
    assert widget.rows.rowCount() == 1
