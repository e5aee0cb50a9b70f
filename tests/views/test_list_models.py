"""The trace list and the marker table as Qt item models: rows keyed by id, following the session,
edits written back through it, and only what changed announced to the views.

Qt's own model checker (QAbstractItemModelTester, fatal mode) watches both models while traces
and markers come and go; it checks every row, column, index, parent and signal the Qt item-model
contract requires.
"""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QModelIndex, Qt
from PySide6.QtTest import QAbstractItemModelTester

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session
from refplane.views.panels.marker_rows import MARKER_ID_ROLE, MarkerRows
from refplane.views.panels.marker_table import MarkerTable
from refplane.views.panels.trace_list import TraceList
from refplane.views.panels.trace_rows import TRACE_ID_ROLE, TraceRows


def _constant_load(z_ohm: complex, name: str, n: int = 21) -> Sweep:
    """A one-port whose impedance is ``z_ohm`` at every frequency, against 50 Ω."""
    f = np.linspace(100e6, 1e9, n)
    g = np.full(n, z_to_gamma(complex(z_ohm), 50.0))
    return Sweep(freq_hz=f, s=g.reshape(-1, 1, 1), z0_ohm=50.0, name=name)


def _gamma_load(gamma: complex, name: str, n: int = 21) -> Sweep:
    f = np.linspace(100e6, 1e9, n)
    return Sweep(freq_hz=f, s=np.full(n, complex(gamma)).reshape(-1, 1, 1), z0_ohm=50.0, name=name)


class Recorder:
    """Every change signal of a model, as (name, arguments)."""

    def __init__(self, model):
        self.events: list[tuple] = []
        model.dataChanged.connect(lambda a, b, roles=(): self.events.append(
            ("data", a.row(), b.row(), a.column(), b.column())))
        model.headerDataChanged.connect(lambda o, a, b: self.events.append(("header", o, a, b)))
        for name in ("rowsInserted", "rowsRemoved"):
            getattr(model, name).connect(lambda _p, a, b, name=name: self.events.append((name, a, b)))
        model.modelReset.connect(lambda: self.events.append(("reset",)))
        model.layoutChanged.connect(lambda *_: self.events.append(("layout",)))

    def kinds(self) -> set[str]:
        return {e[0] for e in self.events}

    def clear(self) -> None:
        self.events.clear()


def _names(rows: TraceRows) -> list[str]:
    return [rows.index(r, rows.COL_NAME).data() for r in range(rows.rowCount())]


# ------------------------------------------------------------------ the trace rows
def _watched(qtbot, widget_class):
    """A session, a list widget on it, and Qt's model checker watching its rows (returned so
    the test holds it: a checker that Python collects checks nothing)."""
    state = Session()
    widget = widget_class(state)
    qtbot.addWidget(widget)
    tester = QAbstractItemModelTester(widget.rows, QAbstractItemModelTester.FailureReportingMode.Fatal)
    return state, widget, tester


@pytest.fixture
def traces(qtbot):
    return _watched(qtbot, TraceList)


def test_trace_rows_follow_the_session_one_row_at_a_time(traces):
    state, widget, _tester = traces
    rows = widget.rows
    seen = Recorder(rows)
    a = state.add_sweep(resistor_with_leads(), name="leaded")
    b = state.add_sweep(series_rc(), name="rc")
    assert rows.rowCount() == 2 and _names(rows) == ["leaded", "rc"]
    assert [rows.index(r, rows.COL_CLOSE).data(TRACE_ID_ROLE) for r in range(2)] == [a, b]
    assert [e for e in seen.events if e[0] == "rowsInserted"] == [("rowsInserted", 0, 0), ("rowsInserted", 1, 1)]
    assert "reset" not in seen.kinds()

    # A rename changes the one row, and nothing else.
    seen.clear()
    state.set_name(a, "75 Ω with leads")
    assert _names(rows) == ["75 Ω with leads", "rc"]
    assert seen.events == [("data", 0, 0, 0, rows.columnCount() - 1)]

    # A recolour: the swatch in the colour column is the new colour.
    seen.clear()
    state.set_colour(b, "#123456")
    icon = rows.index(1, rows.COL_COLOUR).data(Qt.DecorationRole)
    image = icon.pixmap(14, 14).toImage()
    assert image.pixelColor(7, 7).name() == "#123456"
    assert {e[1] for e in seen.events} == {1}

    # Closing removes exactly its row.
    seen.clear()
    state.remove_trace(a)
    assert _names(rows) == ["rc"] and rows.row_of(b) == 0
    assert ("rowsRemoved", 0, 0) in seen.events and "reset" not in seen.kinds()
    # Undo puts it back in its place, above the other (the list keeps the file order).
    state.undo()
    assert _names(rows) == ["75 Ω with leads", "rc"] and rows.row_of(a) == 0


def test_trace_rows_keep_the_order_files_were_named_in(traces):
    state, widget, _tester = traces
    # Loads finish in any order; each trace carries its place in the list (``order``).
    third = state.add_sweep(series_rc(name="third"), order=3)
    first = state.add_sweep(resistor_with_leads(name="first"), order=1)
    second = state.add_sweep(two_port_attenuator(name="second"), order=2)
    assert _names(widget.rows) == ["first", "second", "third"]
    assert widget.rows.ids() == [first, second, third] == state.trace_ids()


def test_offsets_are_shown_in_their_own_column_not_in_the_name(traces):
    from refplane.analysis.lines.deembed import LineOffset

    state, widget, _tester = traces
    rows = widget.rows
    tid = state.add_sweep(resistor_with_leads(), name="leaded")
    assert rows.index(0, rows.COL_OFFSETS).data() == ""
    state.set_offsets(tid, [LineOffset(delay_s=100e-12)])
    assert rows.index(0, rows.COL_NAME).data() == "leaded"
    assert rows.index(0, rows.COL_NAME).data(Qt.EditRole) == "leaded"
    assert rows.index(0, rows.COL_OFFSETS).data() == "offsets"
    assert "offsets" in rows.index(0, rows.COL_OFFSETS).data(Qt.ToolTipRole)
    state.set_offsets(tid, [])
    assert rows.index(0, rows.COL_OFFSETS).data() == ""


def test_edits_in_the_list_go_through_the_session(traces):
    state, widget, _tester = traces
    rows = widget.rows
    one = state.add_sweep(resistor_with_leads(), name="one")
    pad = state.add_sweep(two_port_attenuator(), name="pad")
    name = rows.index(0, rows.COL_NAME)
    assert rows.setData(name, Qt.Unchecked, Qt.CheckStateRole) and not state.trace(one).visible
    assert name.data(Qt.CheckStateRole) == Qt.Unchecked
    assert rows.setData(name, Qt.Checked.value, Qt.CheckStateRole) and state.trace(one).visible
    assert rows.setData(name, "  renamed  ", Qt.EditRole) and state.trace(one).name == "renamed"
    assert not rows.setData(name, "   ", Qt.EditRole) and state.trace(one).name == "renamed"
    assert rows.setData(rows.index(1, rows.COL_COLOUR), "#abcdef") and state.trace(pad).colour == "#abcdef"
    assert not rows.setData(rows.index(1, rows.COL_COLOUR), "not a colour")
    # The port: S22 of the two-port; a port the sweep lacks is refused and nothing changes.
    port = rows.index(1, rows.COL_PORT)
    assert port.flags() & Qt.ItemIsEditable and not rows.index(0, rows.COL_PORT).flags() & Qt.ItemIsEditable
    assert rows.setData(port, 2) and state.trace(pad).port == 2 and port.data() == "S22"
    assert not rows.setData(port, 3) and state.trace(pad).port == 2
    # Only the name column is typed into; the others are read-only.
    assert not rows.setData(rows.index(1, rows.COL_CLOSE), "x")


def test_port_combo_box_is_made_only_while_choosing(traces, qtbot):
    state, widget, _tester = traces
    pad = state.add_sweep(two_port_attenuator(), name="pad")
    widget.show()
    qtbot.waitExposed(widget)
    index = widget.rows.index(0, widget.COL_PORT)
    assert widget.table.indexWidget(index) is None  # no widget per row
    widget.table.edit(index)
    combo = widget.table.indexWidget(index)
    assert combo.currentText() == "S11" and combo.count() == 2
    combo.setCurrentIndex(1)
    combo.activated.emit(1)
    assert state.trace(pad).port == 2
    qtbot.waitUntil(lambda: widget.table.indexWidget(index) is None, timeout=2000)


def test_selection_and_current_trace_follow_each_other(traces, qtbot):
    state, widget, _tester = traces
    a = state.add_sweep(resistor_with_leads(), name="a")
    b = state.add_sweep(series_rc(), name="b")
    assert state.current_trace == b and widget.table.currentIndex().row() == 1
    widget.table.selectRow(0)
    assert state.current_trace == a
    state.set_current_trace(b)
    assert [i.row() for i in widget.table.selectionModel().selectedRows()] == [1]
    # Closing the current trace makes the first one current, as the session decides.
    state.remove_trace(b)
    assert state.current_trace == a and widget.table.currentIndex().row() == 0


def test_close_and_colour_cells_act_as_buttons(traces, qtbot):
    state, widget, _tester = traces
    a = state.add_sweep(resistor_with_leads(), name="a")
    b = state.add_sweep(series_rc(), name="b")
    widget.show()
    qtbot.waitExposed(widget)
    widget.ask_colour = lambda current: "#0a0b0c"

    def click(row, col):
        rect = widget.table.visualRect(widget.rows.index(row, col))
        assert widget.table.viewport().rect().contains(rect.center())
        qtbot.mouseClick(widget.table.viewport(), Qt.LeftButton, pos=rect.center())

    click(0, widget.COL_COLOUR)
    assert state.trace(a).colour == "#0a0b0c"
    with qtbot.waitSignal(state.tracesChanged, timeout=2000):
        click(0, widget.COL_CLOSE)
    assert state.trace_ids() == [b] and widget.rows.rowCount() == 1


# ------------------------------------------------------------------ the marker rows
@pytest.fixture
def markers(qtbot):
    return _watched(qtbot, MarkerTable)


def test_cells_against_the_textbook_identities(markers):
    state, widget, _tester = markers
    # VSWR = (1 + |Γ|)/(1 − |Γ|) and return loss = −20·log10|Γ| dB (textbook identities; see
    # references.md): a 50 Ω load on 50 Ω reads VSWR 1.000 (common practice); 75 Ω gives
    # |Γ| = 0.2, VSWR 1.5, return loss 13.98 dB (exact table in references.md); |Γ| = 0.1 gives
    # 20.00 dB of return loss (common practice).
    matched = state.add_sweep(_constant_load(50.0, "50 Ω load"))
    m1 = state.add_marker(matched, 500e6)
    assert widget.cells(m1)["VSWR"] == "1.000"
    r75 = state.add_sweep(_constant_load(75.0, "75 Ω load"))
    m2 = state.add_marker(r75, 500e6)
    assert widget.cells(m2)["VSWR"] == "1.500" and widget.cells(m2)["|Γ|"] == "0.2000"
    assert widget.cells(m2)["Return loss"] == "13.98 dB"
    tenth = state.add_sweep(_gamma_load(0.1, "|Γ| = 0.1"))
    m3 = state.add_marker(tenth, 500e6)
    assert widget.cells(m3)["Return loss"] == "20.00 dB"
    # An active reading (|Γ| > 1) has no VSWR: the cell says so rather than a negative number.
    active = state.add_sweep(_gamma_load(1.2, "active"))
    m4 = state.add_marker(active, 500e6)
    assert widget.cells(m4)["VSWR"] == "n/a (|Γ| > 1)"
    # The trace column names the trace and the reflection drawn.
    assert widget.rows.cells(widget.row_of(m2))["Trace"] == "75 Ω load · S11"
    # The difference row: marker 4 − marker 3 by default (the two placed last).
    assert widget.header(4) == "Δ" and widget.delta_row()["Trace"] == "marker 4 − marker 3"


def test_a_drag_step_changes_only_the_dragged_markers_row(markers):
    state, widget, _tester = markers
    tid = state.add_sweep(resistor_with_leads())
    ids = [state.add_marker(tid, f) for f in (100e6, 300e6, 500e6, 700e6)]
    rows = widget.rows
    before = [rows.row(r) for r in range(rows.rowCount())]
    assert [r.header for r in before] == ["1", "2", "3", "4", "Δ"]  # Δ = marker 4 − marker 3
    seen = Recorder(rows)
    state.move_marker(ids[0], 150e6, finished=False)  # marker 1 is not in the difference
    assert seen.events and all(e[0] == "data" and e[1] == e[2] == 0 for e in seen.events)
    after = [rows.row(r) for r in range(rows.rowCount())]
    assert after[0] is not before[0] and all(a is b for a, b in zip(after[1:], before[1:]))
    assert widget.cells(ids[0])["Frequency"] == "150 MHz"
    # The trace column did not change, so it is not announced.
    assert all(e[3] >= 1 for e in seen.events)
    # Dragging marker 4 changes its row and the difference row that reads it, nothing more.
    seen.clear()
    state.move_marker(ids[3], 650e6, finished=False)
    assert {e[1] for e in seen.events} == {3, 4} and seen.kinds() == {"data"}
    assert widget.delta_row()["Frequency"] == "+150 MHz"


def test_column_widths_wait_for_the_drag_to_end(markers, qtbot):
    state, widget, _tester = markers
    widget.resize(1100, 300)
    widget.show()
    qtbot.waitExposed(widget)
    tid = state.add_sweep(resistor_with_leads(f1=1e6, f2=1e9))
    mid = state.add_marker(tid, 1e6)
    col = widget.rows.columns().index("Frequency")
    narrow = widget.table.columnWidth(col)
    # A longer frequency text needs a wider column, but not while the drag goes on.
    state.move_marker(mid, 123.456789e6, finished=False)
    assert widget.table.columnWidth(col) == narrow
    state.move_marker(mid, 987.654321e6, finished=True)
    qtbot.waitUntil(lambda: widget.table.columnWidth(col) > narrow, timeout=3000)


def test_current_marker_header_is_bold_and_choosing_a_row_makes_it_current(markers):
    state, widget, _tester = markers
    tid = state.add_sweep(resistor_with_leads())
    a = state.add_marker(tid, 100e6)
    b = state.add_marker(tid, 200e6)
    rows = widget.rows
    assert state.current_marker == b
    assert rows.headerData(1, Qt.Vertical, Qt.FontRole).bold()
    assert rows.headerData(0, Qt.Vertical, Qt.FontRole) is None
    widget.table.setCurrentIndex(rows.index(0, 2))
    assert state.current_marker == a and rows.headerData(0, Qt.Vertical, Qt.FontRole).bold()
    # The difference row is not a marker: choosing it leaves the current marker alone.
    widget.table.setCurrentIndex(rows.index(2, 2))
    assert state.current_marker == a
    assert rows.index(0, 0).data(MARKER_ID_ROLE) == a and rows.index(2, 0).data(MARKER_ID_ROLE) is None


def test_set_scene_alone_drives_the_model(qtbot):
    # The model takes scenes and nothing else: two sessions' scenes can be shown in turn.
    one, two = Session(), Session()
    t1 = one.add_sweep(resistor_with_leads())
    one.add_marker(t1, 100e6)
    t2 = two.add_sweep(series_rc())
    for f in (50e6, 100e6, 200e6):
        two.add_marker(t2, f)
    model = MarkerRows()
    # Held in a name: a tester that Python collects checks nothing.
    tester = QAbstractItemModelTester(model, QAbstractItemModelTester.FailureReportingMode.Fatal)
    model.set_scene(one.scene())
    assert model.rowCount() == 1
    model.set_scene(two.scene())
    assert [model.headerData(r, Qt.Vertical) for r in range(model.rowCount())] == ["1", "2", "3", "Δ"]
    model.set_scene(one.scene())
    assert model.rowCount() == 1 and model.columnCount() == len(model.columns())
    assert tester.model() is model


def test_the_model_checker_passes_while_traces_and_markers_come_and_go(qtbot):
    from refplane.analysis.lines.deembed import LineOffset

    state = Session()
    traces, table = TraceList(state), MarkerTable(state)
    qtbot.addWidget(traces)
    qtbot.addWidget(table)
    fatal = QAbstractItemModelTester.FailureReportingMode.Fatal
    # Held in names: a tester that Python collects checks nothing.
    testers = [QAbstractItemModelTester(traces.rows, fatal), QAbstractItemModelTester(table.rows, fatal)]
    a = state.add_sweep(resistor_with_leads(), name="a")
    pad = state.add_sweep(two_port_attenuator(), name="pad", order=0.5)
    c = state.add_sweep(series_rc(), name="c")
    ms = [state.add_marker(a, 300e6), state.add_marker(pad, 200e6), state.add_marker(c, 100e6)]
    state.set_overlay(a, "fit", resistor_with_leads(l_h=10e-9))
    state.set_port(pad, 2)
    state.set_offsets(a, [LineOffset(delay_s=50e-12)])
    state.find_markers(c, "best-match")
    state.set_display(delta_markers=(ms[2], ms[0]))
    state.set_tool("uncertainty", enabled=True, directivity_db=40.0, source_match_db=35.0, tracking_db=0.1)
    for f in np.linspace(300e6, 600e6, 5):
        state.move_marker(ms[0], f, finished=False)
    state.move_marker(ms[0], 600e6)
    state.remove_marker(ms[1])
    state.remove_trace(pad)
    state.undo()
    state.remove_trace(a)
    state.clear_markers()
    state.undo()
    state.clear()
    assert traces.rows.rowCount() == 0 and table.rows.rowCount() == 0 and table.rows.columnCount() == 0
    assert table.rows.rowCount(table.rows.index(0, 0)) == 0 and not traces.rows.index(0, 0).isValid()
    assert traces.rows.rowCount(QModelIndex()) == 0
    assert [t.model() for t in testers] == [traces.rows, table.rows]


def test_a_drag_step_changes_the_markers_model_row_and_not_the_others(markers):
    state, widget, _tester = markers
    tid = state.add_sweep(resistor_with_leads())
    other = state.add_sweep(series_rc())
    a = state.add_marker(tid, 200e6)
    b = state.add_marker(other, 100e6)
    c = state.add_marker(other, 200e6)
    state.set_overlay(tid, "fit", resistor_with_leads(l_h=10e-9))
    rows = widget.rows
    assert [rows.headerData(r, Qt.Vertical) for r in range(rows.rowCount())] == ["1", "2", "3", "Δ", "1 model"]
    seen = Recorder(rows)
    state.move_marker(a, 250e6, finished=False)
    assert {e[1] for e in seen.events} == {0, 4} and seen.kinds() == {"data"}
    # The model row reads the model at the marker's new frequency: X = ωL with L = 10 nH
    # (textbook reactance of an inductor): 2π·250 MHz·10 nH = 15.71 Ω.
    assert widget.model_cells(a, "fit")["X"] == f"{2 * np.pi * 250e6 * 10e-9:.2f} Ω" == "15.71 Ω"
    assert widget.cells(b)["Frequency"] == "100 MHz" and widget.cells(c)["Frequency"] == "200 MHz"


def test_difference_choosers_pick_the_pair_and_the_row_follows(markers):
    state, widget, _tester = markers
    tid = state.add_sweep(resistor_with_leads())
    ids = [state.add_marker(tid, f) for f in (100e6, 300e6, 600e6)]
    assert widget.delta_row()["Trace"] == "marker 3 − marker 2"
    widget.delta_a.setCurrentIndex(widget.delta_a.findData(ids[0]))
    assert state.display.delta_markers == (ids[0], ids[2])
    assert widget.delta_row()["Trace"] == "marker 3 − marker 1"
    assert widget.delta_row()["Frequency"] == "+500 MHz"
    # Chosen elsewhere (the row's right-click menu), the combo boxes follow.
    state.set_display(delta_markers=(ids[1], ids[0]))
    assert (widget.delta_a.currentData(), widget.delta_b.currentData()) == (ids[1], ids[0])
    assert widget.delta_row()["Frequency"] == "−200 MHz"
    state.remove_marker(ids[1])
    state.remove_marker(ids[0])
    assert widget.delta_row() == {} and not widget.delta_a.isEnabled()
    assert "Needs two markers" in widget.delta_b.toolTip()


def test_every_trace_list_cell_is_in_sight_on_a_1280x800_laptop(qtbot):
    from PySide6.QtCore import QRect

    from refplane.views.main_window import MainWindow

    w = MainWindow()
    w.show_error = lambda title, message: None
    qtbot.addWidget(w)
    tid = w.state.add_sweep(two_port_attenuator(), name="a sweep with a rather long name, as files are named")
    from refplane.analysis.lines.deembed import LineOffset

    w.state.set_offsets(tid, [LineOffset(delay_s=50e-12), LineOffset()])
    # 1280×800 less a 40 px task bar (common practice, as tests/views/test_screens.py).
    w.fit_to(QRect(0, 0, 1280, 760))
    w.show()
    qtbot.waitExposed(w)
    tl = w.trace_list
    view = tl.table.viewport().rect()
    for col in (tl.COL_OFFSETS, tl.COL_PORT, tl.COL_COLOUR, tl.COL_CLOSE):
        rect = tl.table.visualRect(tl.rows.index(0, col))
        assert view.contains(rect), (col, rect, view)
    # The port cell is wide enough for its combo box's text and arrow.
    index = tl.rows.index(0, tl.COL_PORT)
    assert tl.table.visualRect(index).width() >= tl.port_delegate.sizeHint(_option(tl.table), index).width()
    w.loader.cancel()
    w.loader.wait()


def _option(view):
    from PySide6.QtWidgets import QStyleOptionViewItem

    option = QStyleOptionViewItem()
    option.initFrom(view)
    option.widget = view
    return option


class _NoReads:
    """A session stand-in that fails on any read: a view fed by Scenes must never need one."""

    EDITS = ("set_", "remove_trace", "store_memory")

    def __getattr__(self, name):
        if name.startswith(self.EDITS):
            return lambda *args, **kwargs: None  # edits may be wired up; they are not reads
        raise AssertionError(f"the trace list read the session ({name}) to draw")


def test_the_trace_list_draws_from_scenes_alone(qtbot):
    # Two sessions' Scenes shown in turn through set_scene, with a session that cannot be read:
    # rows, names, ports and the offsets column come from the Scene only.
    from refplane.analysis.lines.deembed import LineOffset

    one, two = Session(), Session()
    one.add_sweep(resistor_with_leads(), name="r75")
    b = two.add_sweep(series_rc(), name="rc")
    two.add_sweep(two_port_attenuator(), name="pad", port=2)
    two.set_offsets(b, [LineOffset(delay_s=50e-12)])

    class _Controller:  # attaches nothing: the test pushes the Scenes itself
        def attach(self, view):
            return view

    view = TraceList(_NoReads(), controller=_Controller())
    qtbot.addWidget(view)
    fatal = QAbstractItemModelTester.FailureReportingMode.Fatal
    tester = QAbstractItemModelTester(view.rows, fatal)  # held: a collected tester checks nothing
    view.set_scene(one.scene())
    assert _names(view.rows) == ["r75"]
    view.set_scene(two.scene())
    assert _names(view.rows) == ["rc", "pad"]
    rows = view.rows
    assert rows.data(rows.index(0, rows.COL_OFFSETS)) == "offsets"
    assert rows.data(rows.index(1, rows.COL_OFFSETS)) == ""
    # The pad is drawn at port 2: its reflection is S22 (Touchstone's naming, common practice).
    assert rows.data(rows.index(1, rows.COL_PORT)) == "S22"
    assert tester.model() is rows


def test_a_marker_drag_announces_no_trace_row(traces):
    state, view, _tester = traces
    t = state.add_sweep(resistor_with_leads(), name="r")
    m = state.add_marker(t, 100e6)
    seen = []
    view.rows.dataChanged.connect(lambda *args: seen.append(args))
    for f in (110e6, 120e6, 130e6):
        state.move_marker(m, f, finished=False)
    assert seen == []
