"""The main window, offscreen: open files, markers, table cells, drag, keys, errors, export."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QImage

from refplane.analysis.files.loading import read_sweep
from refplane.analysis.readings import read_points
from refplane.session.present import readout_cells
from refplane.views.main_window import MainWindow

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator, write_sweep


@pytest.fixture
def window(qtbot):
    w = MainWindow()
    errors = []
    w.show_error = lambda title, message: errors.append((title, message))  # no modal dialogs in tests
    w.errors = errors
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.loader.cancel()
    w.loader.wait()


@pytest.fixture
def files(tmp_path):
    return {
        "r75": write_sweep(resistor_with_leads(), tmp_path / "r75.s1p"),
        "rc": write_sweep(series_rc(), tmp_path / "rc.s1p"),
        "pad": write_sweep(two_port_attenuator(), tmp_path / "pad.s2p"),
    }


def _open(qtbot, window, paths):
    before = len(window.state.traces())
    window.open_files(paths)
    qtbot.waitUntil(lambda: len(window.state.traces()) == before + len(paths) and not window.loader.busy,
                    timeout=10000)


def test_open_files_and_count_traces(qtbot, window, files):
    _open(qtbot, window, [files["r75"], files["rc"], files["pad"]])
    assert len(window.state.traces()) == 3
    assert window.chart.trace_count() == 3
    assert window.trace_list.rows.rowCount() == 3
    # Every drawn trace is the file's reflection, point for point.
    # Files load in parallel, so they may arrive in any order.
    tid = next(t.id for t in window.state.traces() if t.name == "r75")
    x, y = window.chart.trace_item(tid).curve.getData()
    np.testing.assert_allclose(x + 1j * y, read_sweep(files["r75"]).reflection(1), atol=0)
    assert "more — Refplane" in window.windowTitle()


def test_two_port_file_port_choice_switches_trace(qtbot, window, files):
    _open(qtbot, window, [files["pad"]])
    tid = window.state.trace_ids()[0]
    tl = window.trace_list
    # The port is chosen in a combo box that the cell opens when clicked.
    index = tl.rows.index(0, tl.COL_PORT)
    tl.table.edit(index)
    combo = tl.table.indexWidget(index)
    assert [combo.itemText(i) for i in range(combo.count())] == ["S11", "S22"]
    combo.setCurrentIndex(1)
    combo.activated.emit(1)
    assert window.state.trace(tid).port == 2
    x, y = window.chart.trace_item(tid).curve.getData()
    np.testing.assert_allclose(x + 1j * y, read_sweep(files["pad"]).reflection(2))
    window.plots.upper.set_quantity("s21_db")
    (curve,) = window.plots.upper.curve_items()
    # |S21| = −6 dB by construction of the model sweep.
    np.testing.assert_allclose(curve.getData()[1], -6.0, atol=1e-9)


def test_typed_marker_cells_equal_the_analysis_layer(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    table = window.marker_table
    table.entry.setText("470 MHz")
    qtbot.keyClick(table.entry, Qt.Key_Return)
    (marker,) = window.state.markers()
    assert marker.freq_hz == 470e6
    expected = readout_cells(read_points(read_sweep(files["r75"]), [470e6]).readout.at(0))
    assert table.cells(marker.id) == expected  # every cell, same text as `refplane read`
    # Closed form (common practice): Z = 75 + jω·9 nH at 470 MHz → X = 26.58 Ω, L = 9.000 nH.
    assert expected["X"] == "26.58 Ω" and expected["Series L/C"] == "L 9.000 nH"


def test_bad_frequency_text_is_explained_not_raised(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    window.marker_table.entry.setText("fast")
    assert window.marker_table.add_from_entry() is None
    assert "not a frequency" in window.marker_table.message.text()
    window.marker_table.entry.setText("5 GHz")
    assert window.marker_table.add_from_entry() is None
    assert "outside the sweep" in window.marker_table.message.text()
    assert window.state.markers() == []


def test_click_near_trace_places_marker_and_drag_moves_it(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    sweep = window.state.displayed(tid)
    g = sweep.reflection(1)
    k = 100
    mid = window.chart.add_marker_near(complex(g[k]))
    assert mid is not None
    assert window.state.marker(mid).freq_hz == pytest.approx(sweep.freq_hz[k])
    moving = []
    window.state.markerMoving.connect(moving.append)
    finished = []
    window.state.markerMoved.connect(finished.append)
    # A drag in three steps along the trace, as the marker item reports it.
    for j, done in ((120, False), (140, False), (150, True)):
        window.chart.drag_marker_to(mid, complex(g[j]), finished=done)
    assert window.state.marker(mid).freq_hz == pytest.approx(sweep.freq_hz[150])
    assert len(moving) == 3 and finished == [mid]
    # The table follows live.
    assert window.marker_table.cells(mid)["Frequency"] == readout_cells(
        read_points(sweep, [sweep.freq_hz[150]]).readout.at(0))["Frequency"]
    # The marker item sits on the trace at the new point.
    pos = window.chart.marker_item(mid).pos()
    assert (pos.x(), pos.y()) == pytest.approx((g[150].real, g[150].imag))


def test_mouse_drag_of_marker_item(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    sweep = window.state.displayed(tid)
    g = sweep.reflection(1)
    mid = window.state.add_marker(tid, float(sweep.freq_hz[50]))
    view = window.chart.plot
    vb = window.chart.view

    def to_widget(z):
        scene = vb.mapViewToScene(QPointF(z.real, z.imag))
        return view.mapFromScene(scene)

    start, end = to_widget(g[50]), to_widget(g[180])
    qtbot.mousePress(view.viewport(), Qt.LeftButton, pos=start)
    for t in np.linspace(0, 1, 8)[1:]:
        p = start + (end - start) * float(t)
        from PySide6.QtGui import QMouseEvent
        from PySide6.QtCore import QEvent
        ev = QMouseEvent(QEvent.MouseMove, QPointF(p), QPointF(view.viewport().mapToGlobal(p)),
                         Qt.LeftButton, Qt.LeftButton, Qt.NoModifier)
        from PySide6.QtWidgets import QApplication
        QApplication.sendEvent(view.viewport(), ev)
    qtbot.mouseRelease(view.viewport(), Qt.LeftButton, pos=end)
    # Pixel rounding: within a couple of swept points of the target.
    assert window.state.marker(mid).freq_hz == pytest.approx(sweep.freq_hz[180], abs=3 * 5e6)


def test_arrow_keys_step_one_point(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    f = window.state.displayed(tid).freq_hz
    mid = window.state.add_marker(tid, float(f[10]))
    window.chart.setFocus()
    qtbot.keyClick(window.chart, Qt.Key_Right)
    assert window.state.marker(mid).freq_hz == f[11]
    qtbot.keyClick(window.chart, Qt.Key_Left)
    qtbot.keyClick(window.chart, Qt.Key_Left)
    assert window.state.marker(mid).freq_hz == f[9]
    qtbot.keyClick(window.chart, Qt.Key_Right, Qt.ShiftModifier)
    assert window.state.marker(mid).freq_hz == f[19]
    qtbot.keyClick(window.plots.upper, Qt.Key_Right)
    assert window.state.marker(mid).freq_hz == f[20]


def test_delta_readout_and_tsv_copy(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    a = window.state.add_marker(tid, 200e6)
    b = window.state.add_marker(tid, 400e6)
    delta = window.marker_table.delta_row()
    ra, rb = window.state.marker_readout(a), window.state.marker_readout(b)
    assert delta["Frequency"] == "+200 MHz"
    # ΔX of a series inductor: ω2·L − ω1·L = 2π·200 MHz·9 nH ≈ 11.31 Ω (closed form).
    assert delta["X"] == f"+{rb.x_ohm - ra.x_ohm:.2f} Ω"
    assert rb.x_ohm - ra.x_ohm == pytest.approx(2 * np.pi * 200e6 * 9e-9, rel=1e-3)
    # The copy is for a spreadsheet: the csv module reads it, every quantity column parses as a
    # plain number (ASCII minus, no grouping) in the unit its header names.
    import csv
    import io

    tsv = list(csv.reader(io.StringIO(window.marker_table.as_tsv()), delimiter="\t"))
    header = tsv[0]
    assert header[:3] == ["Marker", "Trace", "Frequency (Hz)"] and "Return loss (dB)" in header
    assert [row[0] for row in tsv[1:]] == ["1", "2", "Difference"]
    col_r, col_x = header.index("R (ohm)"), header.index("X (ohm)")
    assert [float(tsv[1][col_r]), float(tsv[2][col_r])] == pytest.approx([ra.r_ohm, rb.r_ohm], rel=1e-12)
    assert float(tsv[3][col_x]) == pytest.approx(rb.x_ohm - ra.x_ohm, rel=1e-12)
    assert float(tsv[1][header.index("Frequency (Hz)")]) + float(tsv[2][header.index("Frequency (Hz)")]) == 600e6
    assert tsv[3][header.index("Trace")] == "marker 2 − marker 1"
    window.marker_table.copy_to_clipboard()
    from PySide6.QtGui import QGuiApplication
    assert QGuiApplication.clipboard().text() == window.marker_table.as_tsv()


def test_bad_file_gives_a_dialog_and_the_window_keeps_working(qtbot, window, tmp_path, files):
    bad = tmp_path / "broken.s1p"
    bad.write_text("# Hz S RI R 50\n1e6 0.1 0.2\n2e6 0.3\n")
    window.open_files([str(bad)])
    qtbot.waitUntil(lambda: bool(window.errors) and not window.loader.busy, timeout=10000)
    (title, message), = window.errors
    assert "broken.s1p" in message and "line 3" in message
    assert window.state.traces() == []
    _open(qtbot, window, [files["r75"]])  # still works
    assert len(window.state.traces()) == 1


def test_error_dialog_is_non_modal(qtbot, window):
    MainWindow.show_error(window, "Problem", "file.s1p, line 3: reason")
    box = window._last_error_box
    assert box.isVisible() and box.text() == "file.s1p, line 3: reason"
    assert not box.isModal() or box.windowModality() != Qt.ApplicationModal
    box.close()


def test_trace_list_hide_rename_recolour_close(qtbot, window, files):
    _open(qtbot, window, [files["r75"], files["rc"]])
    tl = window.trace_list
    a, b = window.state.trace_ids()
    name = tl.rows.index(0, tl.COL_NAME)
    assert tl.rows.setData(name, Qt.Unchecked, Qt.CheckStateRole)
    assert not window.state.trace(a).visible and not window.chart.trace_item(a).isVisible()
    assert tl.rows.setData(name, "resistor", Qt.EditRole)
    assert window.state.trace(a).name == "resistor"

    def click(row, col):
        rect = tl.table.visualRect(tl.rows.index(row, col))
        qtbot.mouseClick(tl.table.viewport(), Qt.LeftButton, pos=rect.center())

    tl.ask_colour = lambda current: "#112233"
    click(1, tl.COL_COLOUR)
    assert window.state.trace(b).colour == "#112233"
    click(1, tl.COL_CLOSE)
    qtbot.waitUntil(lambda: window.state.trace_ids() == [a])
    assert window.chart.trace_count() == 1


def test_offsets_show_raw_faded_and_corrected(qtbot, window, files):
    from refplane.analysis.lines.deembed import LineOffset, remove_offsets

    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    off = (LineOffset(delay_s=50e-12),)
    window.state.set_offsets(tid, off)
    x, y = window.chart.trace_item(tid).curve.getData()
    np.testing.assert_allclose(x + 1j * y, remove_offsets(read_sweep(files["r75"]), off).reflection(1))
    raw = window.chart._raw[tid]
    assert raw.curve.opts["pen"].color().alphaF() == pytest.approx(window.theme.faded_alpha, abs=0.01)  # faded
    rx, ry = raw.curve.getData()
    np.testing.assert_allclose(rx + 1j * ry, read_sweep(files["r75"]).reflection(1))


def test_hover_reads_impedance_under_cursor(qtbot, window, files):
    from refplane.analysis.readings.impedance import z_to_gamma

    _open(qtbot, window, [files["r75"]])
    # Γ of 100 + j50 Ω on 50 Ω: the hover line must read it back (bilinear map, textbook).
    g = complex(z_to_gamma(100 + 50j, 50.0))
    text = window.chart.hover_text(g)
    assert "z = 2.000 + j1.000" in text and "Z = 100.00 + j50.00 Ω" in text
    sweep = window.state.displayed(window.state.trace_ids()[0])
    on_trace = window.chart.hover_text(complex(sweep.reflection(1)[100]))
    assert "on r75" in on_trace
    assert window.chart.hover_text(1.5 + 0j).startswith("Outside")


def test_band_drag_on_plot_sets_state_band(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    plot = window.plots.upper
    plot.viewbox.sigBand.emit(200e6, 300e6, False)
    assert window.state.band == (200e6, 300e6)
    plot.viewbox.sigBand.emit(200e6, 500e6, True)
    assert window.state.band == (200e6, 500e6)
    assert plot.region.isVisible() and plot.region.getRegion() == pytest.approx((200e6, 500e6))
    assert window.plots.lower.region.getRegion() == pytest.approx((200e6, 500e6))
    window.plots.clear_band.click()
    assert window.state.band is None and not plot.region.isVisible()


def test_plot_marker_line_drag_moves_marker(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    tid = window.state.trace_ids()[0]
    mid = window.state.add_marker(tid, 300e6)
    line = window.plots.upper.marker_line(mid)
    assert line.value() == pytest.approx(300e6)
    line.setValue(420e6)
    assert window.state.marker(mid).freq_hz == pytest.approx(420e6)
    window.plots.set_log_x(True)
    assert window.plots.upper.marker_line(mid).value() == pytest.approx(np.log10(420e6))


def test_companion_plot_values_equal_analysis(qtbot, window, files):
    from refplane.analysis.readings.impedance import return_loss_db

    _open(qtbot, window, [files["r75"]])
    sweep = read_sweep(files["r75"])
    window.plots.upper.flush()  # plots redraw on the next turn of the event loop
    (curve,) = window.plots.upper.curve_items()
    np.testing.assert_allclose(curve.getData()[1], return_loss_db(sweep.reflection(1)))


@pytest.mark.parametrize("ext", ["png", "svg"])
def test_export_chart_has_requested_size(qtbot, window, files, tmp_path, ext):
    _open(qtbot, window, [files["r75"]])
    window.state.add_marker(window.state.trace_ids()[0], 470e6)
    out = tmp_path / f"chart.{ext}"
    window.export("chart", str(out), size=(640, 480))
    assert out.stat().st_size > 1000
    if ext == "png":
        image = QImage(str(out))
        assert (image.width(), image.height()) == (640, 480)
        # Not blank: more than one colour in the picture.
        colours = {image.pixel(x, y) for x in range(0, 640, 16) for y in range(0, 480, 16)}
        assert len(colours) > 3
    else:
        text = out.read_text()
        assert 'width="640' in text or "640" in text.split("viewBox")[1][:40]
    with pytest.raises(Exception):
        window.export("chart", str(out), size=(640, 480))  # never overwrites without being asked


def test_export_plots_through_menu_path(qtbot, window, files, tmp_path):
    _open(qtbot, window, [files["r75"]])
    out = tmp_path / "plots.png"
    window.ask_save_path = lambda title, suggested: str(out)
    window.ask_export("plots")
    assert out.exists() and QImage(str(out)).width() == window.plots.width()
    assert window.errors == []


def test_recent_files_remembered(qtbot, window, files):
    _open(qtbot, window, [files["rc"]])
    assert window.recent_files()[0].endswith("rc.s1p")


def test_window_composes_plane_fit_and_calibration(qtbot, window):
    from refplane.views.panels.fit_panel import FitPanel
    from refplane.views.panels.offsets_panel import OffsetsPanel

    assert isinstance(window.panel("Reference plane"), OffsetsPanel)
    # The fit tab is built the first time it is shown.
    window.docks["Fit"].raise_()
    qtbot.waitUntil(lambda: isinstance(window.panel("Fit"), FitPanel), timeout=2000)
    assert window.panel("Fit").state is window.state
    assert window.fit_panel() is window.panel("Fit")
    texts = [a.text() for a in window.tools_menu.actions()]
    assert "Calibrate from standards…" in texts
    assert window.tools_menu.menuAction().isVisible()


def test_tools_menu_and_side_panel_hooks(qtbot, window):
    from PySide6.QtWidgets import QLabel

    hits = []
    action = window.add_tool_action("Do a thing", lambda: hits.append(1))
    assert window.tools_menu.menuAction().isVisible()
    action.trigger()
    assert hits == [1]
    dock = window.add_side_panel("Extra", QLabel("hello"))
    assert window.dockWidgetArea(dock) == Qt.LeftDockWidgetArea
    right = window.add_side_panel("Right", QLabel("there"), area=Qt.RightDockWidgetArea)
    assert window.dockWidgetArea(right) == Qt.RightDockWidgetArea
    assert dock.toggleViewAction() in window._panels_menu.actions()


def test_safety_notes_cover_the_cautions():
    from refplane.views.help_text import SAFETY_HTML

    for words in ("transmitter", "Discharge", "maximum input level", "DC block", "RF exposure",
                  "local codes"):
        assert words in SAFETY_HTML


def test_grid_labels_keep_their_size_and_follow_their_lines_on_zoom(qtbot, window):
    chart = window.chart
    labels = chart.grid.labels
    chart.reset_view()
    before = labels.label_rects()
    texts = [lab.text for lab in labels._labels]
    # Where the r = 1 circle crosses the real axis (Γ = 0, the chart's centre), its label sits
    # just above the axis and right of the crossing, as the grid geometry asks (anchor (1, 1)).
    one = before[texts.index("1")]
    assert one.right() == pytest.approx(0.0, abs=0.5) and one.bottom() == pytest.approx(0.0, abs=0.5)
    px_before = chart.view.viewPixelSize()[0]
    chart.view.scaleBy((0.5, 0.5), center=QPointF(0.0, 0.0))  # zoom in about twice
    qtbot.wait(20)
    zoom = px_before / chart.view.viewPixelSize()[0]
    assert zoom == pytest.approx(2.0, rel=0.05)
    after = labels.label_rects()
    for lab, a, b in zip(labels._labels, before, after):
        assert (b.width(), b.height()) == (a.width(), a.height())  # texts stay the same pixel size
        # The point each text is pinned to (its anchor) moves away from the centre with the zoom.
        pin_a = (a.x() + lab.anchor[0] * a.width(), a.y() + lab.anchor[1] * a.height())
        pin_b = (b.x() + lab.anchor[0] * b.width(), b.y() + lab.anchor[1] * b.height())
        assert pin_b[0] == pytest.approx(zoom * pin_a[0], abs=0.5)
        assert pin_b[1] == pytest.approx(zoom * pin_a[1], abs=0.5)


def test_grid_labels_are_painted_where_they_are_placed(qtbot, window):
    chart = window.chart
    chart.reset_view()
    qtbot.wait(20)
    image = chart.plot.grab().toImage()
    item = chart.grid.labels
    origin = chart.plot.mapFromScene(item.mapToScene(QPointF(0.0, 0.0)))
    background = image.pixelColor(2, 2)
    rect = item.label_rects()[[lab.text for lab in item._labels].index("+j1")]
    inked = 0
    for x in range(int(rect.left()), int(rect.right())):
        for y in range(int(rect.top()), int(rect.bottom())):
            if image.pixelColor(int(origin.x()) + x, int(origin.y()) + y) != background:
                inked += 1
    assert inked > 10  # the text "+j1" is drawn inside its box


def test_plot_grid_lines_sit_on_the_axis_ticks_in_linear_and_log_mode(qtbot, window, files):
    _open(qtbot, window, [files["r75"]])
    for p in window.plots.plots():
        p.flush()
    qtbot.wait(20)
    plot = window.plots.upper
    (x0, x1), (y0, y1) = plot.viewbox.viewRange()
    major_x, minor_x, major_y, _ = plot.grid.tick_positions()
    labelled = [v for v in plot.plot.getAxis("bottom").tickValues(x0, x1, plot.viewbox.width())[0][1]
                if x0 <= v <= x1]
    assert major_x == labelled and len(major_x) >= 3 and major_y  # one line per labelled tick
    # Minor lines fall between the major ones, never on them (common practice for plot grids).
    assert minor_x and not any(np.isclose(m, major_x, rtol=0, atol=1e-9 * (x1 - x0)).any() for m in minor_x)
    # Log frequency: the lines follow the decades (view x is log10 of frequency in log mode).
    window.plots.log_box.setChecked(True)
    qtbot.wait(20)
    (x0, x1), _ = plot.viewbox.viewRange()
    major_x, _, _, _ = plot.grid.tick_positions()
    assert major_x and all(x0 <= v <= x1 for v in major_x)
    assert all(abs(v - round(v)) < 1e-9 for v in major_x)  # whole decades: 1 MHz, 10 MHz, …


@pytest.mark.parametrize("screen, expect_w, expect_h", [
    ((0, 0, 1280, 1024), 1256, 900),   # narrower than the default: shrinks to fit, keeps height
    ((0, 0, 1366, 728), 1342, 680),    # a common laptop screen, less the task bar
    ((0, 0, 2560, 1400), 1440, 900),   # a large monitor: the default size stays
])
def test_window_fits_on_the_screen(qtbot, screen, expect_w, expect_h):
    from PySide6.QtCore import QRect

    w = MainWindow()
    qtbot.addWidget(w)
    area = QRect(*screen)
    w.fit_to(area)
    assert (w.width(), w.height()) == (expect_w, expect_h)
    assert area.contains(QRect(w.x(), w.y(), w.width(), w.height()))
