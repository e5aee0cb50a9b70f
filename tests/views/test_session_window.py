"""The window as a thin front end on the session: both ways in sync, sessions saved and reopened,
the window's chart picture equal to ``refplane render --session``."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtGui import QImage

from refplane.analysis.lines.deembed import LineOffset
from refplane.views import loader as loader_module
from refplane.views.main_window import MainWindow

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator, write_sweep


def _window(qtbot, **kw):
    w = MainWindow(**kw)
    w.errors = []
    w.show_error = lambda title, message: w.errors.append((title, message))
    qtbot.addWidget(w)
    w.show()
    qtbot.waitExposed(w)
    return w


@pytest.fixture
def files(tmp_path):
    return [write_sweep(resistor_with_leads(), tmp_path / "r75.s1p"),
            write_sweep(series_rc(), tmp_path / "rc.s1p"),
            write_sweep(two_port_attenuator(), tmp_path / "pad.s2p")]


def _wait_loaded(qtbot, w, n):
    qtbot.waitUntil(lambda: len(w.state.traces()) == n and not w.loader.busy and w._session_load is None,
                    timeout=20000)


def test_widgets_follow_the_session_and_write_back(qtbot, files):
    w = _window(qtbot)
    w.open_files(files[:1])
    _wait_loaded(qtbot, w, 1)
    w.state.set_display(upper_plot="vswr", log_frequency=True, admittance_grid=True)
    assert w.plots.upper.chooser.currentData() == "vswr"
    assert w.plots.log_box.isChecked() and w.log_action.isChecked()
    assert w.admittance_action.isChecked() and w.chart.grid._admittance is not None
    w.plots.lower.chooser.setCurrentIndex(w.plots.lower.chooser.findData("phase"))
    assert w.state.display.lower_plot == "phase"
    w.plots.log_box.setChecked(False)
    assert not w.state.display.log_frequency and not w.log_action.isChecked()
    w.vswr_circle_value = None
    w.chart.set_vswr_circle(1.5)
    assert w.state.display.vswr_circle == 1.5 and w.chart.vswr_circle.isVisible()


def test_traces_keep_the_order_files_were_named_in(qtbot, tmp_path, monkeypatch, files):
    # The first file is read in a child process (slow), the others in a thread (quick): they
    # finish out of order, yet the list keeps the order they were named in.
    big = write_sweep(resistor_with_leads(n=4001, name="big"), tmp_path / "big.s1p")
    import os

    monkeypatch.setattr(loader_module, "PROCESS_THRESHOLD_BYTES", os.path.getsize(files[0]) * 4)
    w = _window(qtbot)
    w.open_files([big, files[0], files[1]])
    _wait_loaded(qtbot, w, 3)
    assert [t.name for t in w.state.traces()] == ["big", "r75", "rc"]
    rows = w.trace_list.rows
    assert [rows.index(r, rows.COL_NAME).data() for r in range(3)] == ["big", "r75", "rc"]


def test_save_quit_reopen_finds_everything_as_it_was(qtbot, tmp_path, files):
    w = _window(qtbot)
    w.open_files(files)
    _wait_loaded(qtbot, w, 3)
    ids = w.state.trace_ids()
    w.state.set_offsets(ids[0], [LineOffset(delay_s=150e-12)])
    w.state.set_velocity_factor(ids[0], 1, 0.66)
    w.state.add_marker(ids[0], 470e6)
    w.state.add_marker(ids[1], 100e6)
    w.plots.upper.chooser.setCurrentIndex(w.plots.upper.chooser.findData("vswr"))
    w.plots.log_box.setChecked(True)
    w.state.set_current_trace(ids[0])
    panel = w.fit_panel()
    with qtbot.waitSignal(panel.fitFinished, timeout=20000):
        panel.fit()
    before = w.state.scene()
    path = w.save_session(str(tmp_path / "bench.refplane"))
    assert path and not w.errors
    w.close()

    again = _window(qtbot, files=[path])  # as `refplane bench.refplane` opens it
    _wait_loaded(qtbot, again, 3)
    assert not again.errors
    assert again.state.scene().same_as(before)
    assert again.plots.upper.chooser.currentData() == "vswr" and again.plots.log_box.isChecked()
    t0 = again.state.trace(again.state.trace_ids()[0])
    assert "fitted model" in t0.overlays and again.state.fit.overlay_trace == t0.id
    assert t0.velocity_factor(1) == 0.66
    assert again.session_path == path
    # The fit panel shows the fit again (same settings, same sweep: the same result).
    panel_again = again.fit_panel()
    qtbot.waitUntil(lambda: panel_again.result is not None, timeout=20000)
    assert panel_again.result.model_id == panel.result.model_id
    assert panel_again.result.params == pytest.approx(panel.result.params, rel=1e-9)


def test_a_missing_file_is_offered_to_locate_or_skip(qtbot, tmp_path, files):
    w = _window(qtbot)
    w.open_files(files[:2])
    _wait_loaded(qtbot, w, 2)
    path = w.save_session(str(tmp_path / "bench.refplane"))
    (tmp_path / "rc.s1p").unlink()
    again = _window(qtbot)
    asked = []
    again.ask_locate = lambda missing: asked.append(missing.recorded) or None  # skip it
    again.open_session(path)
    _wait_loaded(qtbot, again, 1)
    assert asked == ["rc.s1p"]
    assert [t.name for t in again.state.traces()] == ["r75"]
    assert any("rc.s1p is missing" in message for _title, message in again.errors)


def test_a_damaged_session_is_one_dialog_and_the_window_keeps_working(qtbot, tmp_path, files):
    bad = tmp_path / "bad.refplane"
    bad.write_text('{"format": "refplane-session", "version": 1, "traces": [')
    w = _window(qtbot)
    w.open_session(str(bad))
    (title, message), = w.errors
    assert "bad.refplane" in message and "\n" not in message
    w.open_files(files[:1])
    _wait_loaded(qtbot, w, 1)


def _pixels(path) -> np.ndarray:
    image = QImage(str(path)).convertToFormat(QImage.Format_RGB32)
    ptr = image.constBits()
    return np.frombuffer(ptr, np.uint8, image.sizeInBytes()).reshape(image.height(), image.width(), 4)[..., :3].copy()


def test_render_session_draws_the_windows_own_picture(qtbot, tmp_path, files):
    from refplane.cli import main

    w = _window(qtbot)
    w.open_files(files[:2])
    _wait_loaded(qtbot, w, 2)
    ids = w.state.trace_ids()
    w.state.set_offsets(ids[0], [LineOffset(delay_s=80e-12)])
    w.state.add_marker(ids[0], 470e6)
    w.state.add_marker(ids[1], 200e6)
    w.state.set_display(vswr_circle=2.0)
    session = w.save_session(str(tmp_path / "bench.refplane"))
    w.export("chart", str(tmp_path / "window.png"), size=(600, 760))
    assert main(["render", "--session", session, "-o", str(tmp_path / "cli.png"), "--size", "600x760"]) == 0
    a, b = _pixels(tmp_path / "window.png"), _pixels(tmp_path / "cli.png")
    assert a.shape == b.shape == (760, 600, 3)
    differ = np.abs(a.astype(int) - b.astype(int)).max(axis=2) > 40
    assert differ.mean() < 0.002  # the same picture, allowing antialiasing differences
    # and it is a picture of something: trace colour present
    assert (np.abs(a.astype(int) - np.array([0xB2, 0x72, 0x00])).sum(axis=2) < 60).any() or \
           (np.abs(a.astype(int) - np.array([0x00, 0x72, 0xB2])).sum(axis=2) < 60).any()


def test_an_added_ending_asks_once_before_replacing_another_file(qtbot, tmp_path, files):
    w = _window(qtbot)
    w.open_files(files[:1])
    _wait_loaded(qtbot, w, 1)
    (tmp_path / "bench.refplane").write_text("someone else's file")
    asked = []
    w.confirm_replace = lambda path: asked.append(path) or False
    assert w.with_ending(str(tmp_path / "bench"), ".refplane", (".refplane",)) is None
    assert asked == [str(tmp_path / "bench.refplane")]
    assert (tmp_path / "bench.refplane").read_text() == "someone else's file"
    assert w.with_ending(str(tmp_path / "fresh"), ".refplane", (".refplane",)) == str(tmp_path / "fresh.refplane")
    assert w.with_ending(str(tmp_path / "named.refplane"), ".refplane", (".refplane",)) == str(tmp_path / "named.refplane")
    assert len(asked) == 1  # a name the dialog already asked about is not asked again


def test_a_click_on_a_control_that_cannot_act_says_why(qtbot):
    from PySide6.QtCore import Qt
    from PySide6.QtTest import QTest

    w = _window(qtbot)
    button = w.marker_table.remove_button
    assert not button.isEnabled() and button.toolTip()
    QTest.mouseClick(button, Qt.LeftButton)
    assert w.statusBar().currentMessage() == button.toolTip().strip()
