"""Right-click menus on traces, markers, the chart and the plots; Edit ▸ Undo for closed traces
and removed markers."""

from __future__ import annotations

import pytest


from model_sweeps import resistor_with_leads, series_rc




def _texts(menu):
    return [a.text() for a in menu.actions() if a.text()]


def _trigger(menu, start):
    next(a for a in menu.actions() if a.text().startswith(start)).trigger()


def test_trace_list_menu_hides_stores_and_closes_and_undo_brings_it_back(window, qtbot):
    tid = window.state.add_sweep(resistor_with_leads(), name="leaded")
    window.state.add_marker(tid, 200e6)
    menu = window.trace_list.context_menu(0)
    assert {"Make current", "Hide", "Rename…", "Store as memory", "Find"} <= set(_texts(menu))
    _trigger(menu, "Hide")
    assert not window.state.trace(tid).visible
    _trigger(window.trace_list.context_menu(0), "Store as memory")
    assert window.state.memory is not None
    _trigger(window.trace_list.context_menu(0), "Close")
    qtbot.waitUntil(lambda: not window.state.traces(), timeout=2000)  # queued, as the ✕ button
    assert window.undo_action.isEnabled() and window.undo_action.text() == "Undo close leaded"
    window.undo_action.trigger()
    assert [t.name for t in window.state.traces()] == ["leaded"] and len(window.state.markers()) == 1
    assert window.trace_list.rows.rowCount() == 1 and window.chart.trace_count() == 1
    assert not window.undo_action.isEnabled()
    assert "No trace here" in _texts(window.trace_list.context_menu(-1))[0]


def test_marker_menus_remove_and_undo_restores_the_number(window):
    tid = window.state.add_sweep(resistor_with_leads())
    ids = [window.state.add_marker(tid, f) for f in (100e6, 200e6, 300e6)]
    menu = window.marker_table.context_menu(1)
    assert _texts(menu)[0] == "Remove marker 2 (Ctrl+Z brings it back)"
    assert "Difference from this marker to" in _texts(menu)
    _trigger(menu, "Remove marker 2")
    assert [m.id for m in window.state.markers()] == [ids[0], ids[2]]
    window.undo()
    assert [m.id for m in window.state.markers()] == ids
    assert window.marker_table.header(1) == "2"
    # On the chart: right-click on a marker offers to remove it.
    chart_menu = window.chart.context_menu(window.state.scene().marker(ids[0]).gamma, ids[0])
    _trigger(chart_menu, "Remove marker 1")
    assert len(window.state.markers()) == 2
    window.undo()
    assert len(window.state.markers()) == 3


def test_following_markers_can_stop_following_from_the_menu(window):
    tid = window.state.add_sweep(series_rc())
    (mid,) = window.state.find_markers(tid, "best-match")
    menu = window.marker_table.context_menu(0)
    _trigger(menu, "Stop following the best match")
    assert window.state.marker(mid).follows is None
    assert window.marker_table.header(0) == "1"


def test_chart_and_plot_menus_offer_the_common_actions(window):
    tid = window.state.add_sweep(resistor_with_leads())
    g = complex(window.state.scene().trace(tid).gamma[50])
    menu = window.chart.context_menu(g)
    assert {"Add marker here", "Store current trace as memory", "Admittance grid", "Reset chart view"} <= set(_texts(menu))
    _trigger(menu, "Add marker here")
    assert len(window.state.markers()) == 1
    _trigger(window.chart.context_menu(g), "Admittance grid")
    assert window.state.display.admittance_grid
    plot_menu = window.plots.upper.context_menu(500e6)
    assert {"Add marker here on the current trace", "Autoscale (fit the visible traces)", "Log scale"} \
        <= set(_texts(plot_menu))
    _trigger(plot_menu, "Add marker here")
    assert window.state.markers()[-1].freq_hz == 500e6


def test_find_from_a_trace_row_searches_that_trace(window):
    a = window.state.add_sweep(series_rc(), name="a")
    b = window.state.add_sweep(resistor_with_leads(), name="b")
    assert window.state.current_trace == b
    menu = window.trace_list.context_menu(0)
    assert window.state.current_trace == b  # opening the menu changes nothing
    find = next(a_.menu() for a_ in menu.actions() if a_.text() == "Find")
    _trigger(find, "Best match")
    (m,) = window.state.markers()
    assert m.trace_id == a and window.state.current_trace == a
