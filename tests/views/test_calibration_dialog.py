"""The calibration dialog, offscreen: files in, error terms shown, devices corrected into traces.

Raw files are made by passing known devices through a known error box (the published
three-term model Γm = e00 + e10e01·Γ/(1 − e11·Γ)); the corrected traces must give them back.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from PySide6.QtCore import Qt

from refplane.analysis.files import touchstone
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.calibration.standards import Standard, reflection
from refplane.analysis.sweep import Sweep
from refplane.views.calibration_dialog import CalibrationDialog
from refplane.session.model import Session

N = 81
F = np.linspace(1e6, 2e9, N)
W = 2 * np.pi * F
BOX = (0.04 * np.exp(1j * W * 0.2e-9), 0.08 * np.exp(-1j * W * 0.3e-9), 0.9 * np.exp(-2j * W * 0.6e-9))
DUT = z_to_gamma(75 + 1j * W * 9e-9, 50.0)  # a leaded 75 Ω resistor (closed-form model)


def raw(gamma):
    e00, e11, e10e01 = BOX
    return e00 + e10e01 * gamma / (1 - e11 * gamma)


def write1(path, gamma, freq=F):
    touchstone.write(Sweep(np.array(freq, float), np.array(gamma, complex), 50.0, name=path.stem), path)
    return str(path)


@pytest.fixture
def files(tmp_path):
    return {
        "short": write1(tmp_path / "short.s1p", raw(np.full(N, -1 + 0j))),
        "open": write1(tmp_path / "open.s1p", raw(np.full(N, 1 + 0j))),
        "load": write1(tmp_path / "load.s1p", raw(np.zeros(N, complex))),
        "dut": write1(tmp_path / "r75_raw.s1p", raw(DUT)),
    }


@pytest.fixture
def dialog(qtbot):
    state = Session()
    d = CalibrationDialog(state)
    errors = []
    d.show_error = lambda title, message: errors.append((title, message))  # no message boxes in tests
    d.errors = errors
    qtbot.addWidget(d)
    d.show()
    qtbot.waitExposed(d)
    return d


def choose_standards(dialog, files):
    for role in ("short", "open", "load"):
        assert dialog.set_standard_file(role, files[role])


def test_solve_shows_terms_verdict_and_corrects_a_file_into_a_new_trace(dialog, files, qtbot):
    assert not dialog.solve_button.isEnabled()
    choose_standards(dialog, files)
    assert dialog.solve_button.isEnabled() and not dialog.correct_button.isEnabled()
    qtbot.mouseClick(dialog.solve_button, Qt.LeftButton)
    cal = dialog.calibration
    assert cal is not None and dialog.errors == []
    assert set(dialog.plotted_curves()) == {"Directivity", "Source match", "Reflection tracking"}
    assert "Quality: good" in dialog.verdict.text()
    dialog.add_device_files([files["dut"]])
    assert dialog.correct_button.isEnabled()
    qtbot.mouseClick(dialog.correct_button, Qt.LeftButton)
    ids = dialog.state.trace_ids()
    assert len(ids) == 1
    trace = dialog.state.trace(ids[0])
    assert trace.name == "r75_raw (calibrated)"
    # Error-box round trip: the corrected trace is the device itself.
    assert np.max(np.abs(trace.raw.s[:, 0, 0] - DUT)) < 1e-12


def test_open_trace_as_device(dialog, files):
    from refplane.analysis.files.loading import read_sweep

    tid = dialog.state.add_sweep(read_sweep(files["dut"]), name="bench sweep")
    choose_standards(dialog, files)
    dialog.solve()
    dialog.set_device_checked("Open trace: bench sweep")
    ids = dialog.correct_devices()
    assert len(ids) == 1 and ids[0] != tid
    assert np.max(np.abs(dialog.state.trace(ids[0]).raw.s[:, 0, 0] - DUT)) < 1e-12
    # The list follows the state: the new trace is offered too.
    labels = [dialog.device_list.item(i).text() for i in range(dialog.device_list.count())]
    assert "Open trace: bench sweep (calibrated)" in labels


def test_bad_file_is_reported_and_the_dialog_keeps_working(dialog, files, tmp_path):
    bad = tmp_path / "broken.s1p"
    bad.write_text("# GHz S RI R 50\n1.0 0.5\n")
    choose_standards(dialog, files)
    assert not dialog.set_standard_file("open", str(bad))
    assert dialog.errors and str(bad) in dialog.errors[-1][1]
    assert dialog.path_edits["open"].text() == files["open"]  # the earlier choice is kept
    assert dialog.solve() is not None


def test_swapped_standards_show_a_poor_verdict(dialog, files):
    dialog.set_standard_file("short", files["open"])
    dialog.set_standard_file("open", files["short"])
    dialog.set_standard_file("load", files["load"])
    dialog.solve()
    assert "Quality: poor" in dialog.verdict.text()
    warnings = [dialog.warning_list.item(i).text() for i in range(dialog.warning_list.count())]
    assert any("swapped" in w for w in warnings)


def test_mismatched_frequencies_need_the_interpolate_box(dialog, files, tmp_path):
    f2 = np.linspace(F[0], F[-1], 2 * N - 1)
    e00 = np.interp(f2, F, BOX[0].real) + 1j * np.interp(f2, F, BOX[0].imag)
    choose_standards(dialog, files)
    dialog.set_standard_file("load", write1(tmp_path / "fine_load.s1p", e00, f2))
    assert dialog.solve() is None and "allow interpolation" in dialog.errors[-1][1]
    dialog.interpolate_box.setChecked(True)
    assert dialog.solve() is not None
    assert any("interpolated" in dialog.warning_list.item(i).text() for i in range(dialog.warning_list.count()))


def test_edit_save_and_load_definitions(dialog, files, tmp_path):
    # Raw data made with a 30 ps offset short: ideal definitions give a wrong answer, the edited
    # definition the right one (error-box round trip).
    offset_short = Standard("short", offset_delay_s=30e-12)
    short_file = write1(tmp_path / "oshort.s1p", raw(reflection(offset_short, F)))
    choose_standards(dialog, files)
    dialog.set_standard_file("short", short_file)
    dialog.add_device_files([files["dut"]])
    dialog.solve()
    wrong = dialog.state.trace(dialog.correct_devices()[0]).raw.s[:, 0, 0]
    assert np.max(np.abs(wrong - DUT)) > 0.05

    dialog.kind_combo.setCurrentIndex(dialog.kind_combo.findData("short"))
    # Typing into the table is the same path as set_definition_value.
    row = [dialog.definition_table.item(r, 1).data(0x0100) for r in range(dialog.definition_table.rowCount())]
    dialog.definition_table.item(row.index("offset_delay_s"), 1).setText("30e-12")
    assert dialog._definitions["short"]["offset_delay_s"] == 30e-12
    dialog.solve()
    dialog.set_device_checked("File: ")  # unticked once corrected; ticked again on purpose
    right = dialog.state.trace(dialog.correct_devices()[0]).raw.s[:, 0, 0]
    assert np.max(np.abs(right - DUT)) < 1e-12

    # Bad values are refused and reported.
    assert not dialog.set_definition_value("short", "offset_loss_gohm_per_s", "-3")
    assert "negative" in dialog.errors[-1][1]
    assert not dialog.set_definition_value("short", "l0_h", "lots")

    path = tmp_path / "kit.json"
    assert dialog.save_definitions(str(path))
    assert json.loads(path.read_text())["short"]["offset_delay_s"] == 30e-12
    assert not dialog.save_definitions(str(path))  # never replaced without asking
    dialog.use_ideal_definitions()
    assert dialog.load_definitions(str(path))
    assert dialog._definitions["short"]["offset_delay_s"] == 30e-12
    (tmp_path / "bad.json").write_text('{"format": "refplane-standards", "version": 1, "open": {"c0": 1}}')
    assert not dialog.load_definitions(str(tmp_path / "bad.json"))
    assert "unknown key 'c0'" in dialog.errors[-1][1]


def test_save_and_reuse_error_terms(dialog, files, tmp_path, qtbot):
    choose_standards(dialog, files)
    dialog.solve()
    path = tmp_path / "cal.json"
    assert dialog.save_terms(str(path))
    assert not dialog.save_terms(str(path))  # never replaced without asking
    other = CalibrationDialog(Session())
    qtbot.addWidget(other)
    other.show_error = lambda t, m: None
    assert other.load_terms(str(path))
    assert other.correct_button.isEnabled()
    other.add_device_files([files["dut"]])
    ids = other.correct_devices()
    assert np.max(np.abs(other.state.trace(ids[0]).raw.s[:, 0, 0] - DUT)) < 1e-12


def test_correct_without_terms_or_devices_is_reported(dialog, files):
    assert dialog.correct_devices() == []
    assert "error terms first" in dialog.errors[-1][1]
    choose_standards(dialog, files)
    dialog.solve()
    assert dialog.correct_devices() == []
    assert "tick at least one" in dialog.errors[-1][1]


def test_additional_standards_in_a_loaded_file_are_set_aside(dialog, files, tmp_path):
    kit = tmp_path / "kit.json"
    kit.write_text(json.dumps({"format": "refplane-standards", "version": 1,
                               "additional": {"oshort": {"kind": "short", "offset_delay_s": 4e-11}}}))
    assert dialog.load_definitions(str(kit))
    choose_standards(dialog, files)
    assert dialog.solve() is not None
    items = [dialog.warning_list.item(i).text() for i in range(dialog.warning_list.count())]
    assert any("not used here: oshort" in w for w in items)



# ---------------------------------------------------------------------------------------------
# On laptop screens: sizes, what is in view, units, which terms are used, ticks.
# ---------------------------------------------------------------------------------------------

from PySide6.QtCore import QPoint, QRect  # noqa: E402
from PySide6.QtWidgets import (QAbstractButton, QComboBox, QGroupBox, QLineEdit,  # noqa: E402
                               QListWidget, QTableWidget)

from refplane.views.calibration_dialog import FRAME_MARGINS  # noqa: E402

# Screens common beside a bench analyzer (common practice): 1280×800 and 1366×768 laptops and an
# older 1024×768 display, each less a 40 px task bar, as a desktop's free area.
SCREENS = {"1280x800": QRect(0, 0, 1280, 760), "1366x768": QRect(0, 0, 1366, 728),
           "1024x768": QRect(0, 0, 1024, 728)}
LONG = "a_folder_with_a_long_descriptive_name_from_a_bench_session_" * 3


def rect_in(widget, top) -> QRect:
    return QRect(widget.mapTo(top, QPoint(0, 0)), widget.size())


def shown_whole(widget, top) -> bool:
    """The widget's whole rectangle lies inside each of its parents up to ``top`` (nothing clipped)."""
    mine = rect_in(widget, top)
    parent = widget.parentWidget()
    while parent is not None:
        if not rect_in(parent, top).contains(mine):
            return False
        if parent is top:
            return True
        parent = parent.parentWidget()
    return False


def controls(dialog):
    kinds = (QAbstractButton, QLineEdit, QComboBox, QTableWidget, QListWidget)
    return [w for kind in kinds for w in dialog.findChildren(kind) if w.isVisibleTo(dialog)]


def deep_file(tmp_path, name, text_or_gamma):
    folder = tmp_path / LONG
    folder.mkdir(exist_ok=True)
    if isinstance(text_or_gamma, str):
        (folder / name).write_text(text_or_gamma)
        return str(folder / name)
    return write1(folder / name, text_or_gamma)


@pytest.fixture
def laptop_dialog(qtbot, request):
    area = SCREENS[request.param]
    d = CalibrationDialog(Session())
    d.errors = []
    d.show_error = lambda title, message: d.errors.append((title, message))
    qtbot.addWidget(d)
    d.fit_to(area)
    d.show()
    qtbot.waitExposed(d)
    d.area = area
    return d


@pytest.mark.parametrize("laptop_dialog", list(SCREENS), indirect=True)
def test_everything_is_in_view_on_laptop_screens_and_long_paths_widen_nothing(laptop_dialog, files,
                                                                                tmp_path, qtbot):
    d, area = laptop_dialog, laptop_dialog.area
    room_w, room_h = area.width() - FRAME_MARGINS[0], area.height() - FRAME_MARGINS[1]
    assert d.minimumSizeHint().width() <= room_w and d.minimumSizeHint().height() <= room_h
    assert d.width() <= room_w and d.height() <= room_h
    size, least = d.size(), d.minimumSizeHint()

    # Long paths everywhere a path is shown: standards, definitions, devices, saved terms.
    for role in ("short", "open", "load"):
        d.set_standard_file(role, deep_file(tmp_path, f"{role}.s1p", raw(
            {"short": np.full(N, -1 + 0j), "open": np.full(N, 1 + 0j), "load": np.zeros(N, complex)}[role])))
    kit = deep_file(tmp_path, "kit.json", json.dumps({"format": "refplane-standards", "version": 1,
                                                     "name": "the kit in the drawer"}))
    assert d.load_definitions(kit)
    assert d.solve() is not None
    d.add_device_files([deep_file(tmp_path, "r75_raw.s1p", raw(DUT))])
    terms = tmp_path / LONG / "cal.json"
    assert d.save_terms(str(terms)) and d.load_terms(str(terms))
    qtbot.wait(10)
    assert d.errors == []
    assert d.size() == size and d.minimumSizeHint().width() == least.width()
    assert kit in d.definitions_name.full_text() and str(terms) in d.terms_in_use.full_text()

    for w in controls(d):
        assert shown_whole(w, d), f"{type(w).__name__} {getattr(w, 'text', lambda: '')()!r} is cut off"
        if isinstance(w, QAbstractButton):
            assert w.width() >= w.minimumSizeHint().width(), f"{w.text()!r} is squeezed"
    assert shown_whole(d.plot, d)
    assert d.plot.width() >= 300 and d.plot.height() >= 140  # a plot one can still read


@pytest.mark.parametrize("laptop_dialog", ["1024x768"], indirect=True)
def test_every_row_of_every_standard_shows_at_the_default_size(laptop_dialog):
    from refplane.analysis.calibration.standards import definition_keys

    d, table = laptop_dialog, laptop_dialog.definition_table
    for i in range(d.kind_combo.count()):
        d.kind_combo.setCurrentIndex(i)
        assert table.rowCount() == len(definition_keys(d.kind_combo.itemData(i)))
        assert table.verticalScrollBar().maximum() == 0
        for row in range(table.rowCount()):
            for col in (0, 1):
                cell = table.visualRect(table.model().index(row, col))
                assert table.viewport().rect().contains(cell), (d.kind_combo.itemText(i), row)
        # The quantity's name is not cut short either.
        assert table.columnWidth(0) >= max(table.fontMetrics().horizontalAdvance(table.item(r, 0).text())
                                           for r in range(table.rowCount()))


def test_sections_are_numbered_in_reading_order(dialog):
    # Two columns, read down the left, then down the right.
    boxes = [b for b in dialog.findChildren(QGroupBox) if b.isVisibleTo(dialog)]
    placed = sorted(boxes, key=lambda b: (rect_in(b, dialog).x() > dialog.width() // 3, rect_in(b, dialog).y()))
    assert [b.title().split(".")[0] for b in placed] == ["1", "2", "3", "4"]


def test_the_legend_sits_off_the_curves(dialog, files):
    choose_standards(dialog, files)
    dialog.solve()
    assert dialog.plot.getPlotItem().legend is None  # nothing drawn over the plot
    for name in dialog.plotted_curves():
        assert name in dialog.legend.text()
    assert not rect_in(dialog.legend, dialog).intersects(rect_in(dialog.plot, dialog))


def test_definition_values_take_units(dialog, files, tmp_path):
    short_row = {dialog.definition_table.item(r, 1).data(0x0100): r
                 for r in range(dialog.definition_table.rowCount())}
    dialog.definition_table.item(short_row["offset_delay_s"], 1).setText("31 ps")
    # SI prefix pico = 1e-12 (BIPM, The International System of Units, 9th ed., table 7).
    assert dialog._definitions["short"]["offset_delay_s"] == pytest.approx(31e-12, rel=1e-15)
    assert dialog.definition_table.item(short_row["offset_delay_s"], 1).text() == "31 ps"
    assert dialog.set_definition_value("open", "c0_f", "9 fF")  # femto = 1e-15 (same table)
    assert dialog._definitions["open"]["c0_f"] == pytest.approx(9e-15, rel=1e-15)
    assert dialog.set_definition_value("load", "series_l_h", "0.2 nH")
    assert dialog._definitions["load"]["series_l_h"] == pytest.approx(2e-10, rel=1e-15)
    assert dialog.set_definition_value("load", "r_ohm", "50.2 ohm")
    assert dialog._definitions["load"]["r_ohm"] == pytest.approx(50.2)
    # The offset loss is kept in GΩ/s: a bare number is in GΩ/s, a unit is converted.
    assert dialog.set_definition_value("short", "offset_loss_gohm_per_s", "1.5 GΩ/s")
    assert dialog._definitions["short"]["offset_loss_gohm_per_s"] == pytest.approx(1.5)
    assert dialog.set_definition_value("short", "offset_loss_gohm_per_s", "2")
    assert dialog._definitions["short"]["offset_loss_gohm_per_s"] == pytest.approx(2.0)
    # A unit of another quantity is refused, and the value kept.
    assert not dialog.set_definition_value("open", "c0_f", "9 fH")
    assert "unit" in dialog.errors[-1][1] and dialog._definitions["open"]["c0_f"] == pytest.approx(9e-15)

    # The unit-bearing value means what it says: a 30 ps offset short typed as "30 ps" corrects
    # through the published three-term model back to the device.
    d2_short = write1(tmp_path / "oshort.s1p", raw(reflection(Standard("short", offset_delay_s=30e-12), F)))
    choose_standards(dialog, files)
    dialog.set_standard_file("short", d2_short)
    dialog.use_ideal_definitions()
    assert dialog.set_definition_value("short", "offset_delay_s", "30 ps")
    dialog.solve()
    dialog.add_device_files([files["dut"]])
    ids = dialog.correct_devices()
    assert np.max(np.abs(dialog.state.trace(ids[0]).raw.s[:, 0, 0] - DUT)) < 1e-12


def test_the_dialog_says_which_error_terms_are_in_use(dialog, files, tmp_path):
    assert "none yet" in dialog.terms_in_use.full_text()
    choose_standards(dialog, files)
    dialog.solve()
    text = dialog.terms_in_use.full_text()
    assert "measured here" in text and "short.s1p" in text and "load.s1p" in text and "81 points" in text
    dialog.set_standard_file("open", files["open"])  # a standard chosen again after solving
    assert "changed since" in dialog.terms_in_use.full_text()
    path = tmp_path / "cal.json"
    dialog.save_terms(str(path))
    dialog.load_terms(str(path))
    assert f"saved in {path}" in dialog.terms_in_use.full_text()
    assert "changed since" not in dialog.terms_in_use.full_text()
    assert dialog.terms_in_use.toolTip() == dialog.terms_in_use.full_text()


def test_corrected_devices_are_unticked_so_a_second_click_adds_nothing(dialog, files, qtbot):
    choose_standards(dialog, files)
    dialog.solve()
    dialog.add_device_files([files["dut"]])
    qtbot.mouseClick(dialog.correct_button, Qt.LeftButton)
    assert len(dialog.state.trace_ids()) == 1
    ticks = [dialog.device_list.item(i).checkState() for i in range(dialog.device_list.count())]
    assert ticks and all(t == Qt.Unchecked for t in ticks)  # the file and its new trace
    qtbot.mouseClick(dialog.correct_button, Qt.LeftButton)
    assert len(dialog.state.trace_ids()) == 1
    assert "tick at least one" in dialog.errors[-1][1]


_ON_A_SIZED_SCREEN = r"""
import json, sys
from PySide6.QtWidgets import QAbstractButton, QApplication
app = QApplication([])
from refplane.views.calibration_dialog import CalibrationDialog
from refplane.session.model import Session
d = CalibrationDialog(Session())
d.show(); app.processEvents()
screen = d.screen().availableGeometry()
frame = d.frameGeometry()
buttons = [b for b in d.findChildren(QAbstractButton) if b.isVisible()]
print(json.dumps({"screen": [screen.width(), screen.height()], "inside": screen.contains(frame),
                  "buttons_inside": all(d.rect().contains(b.geometry().translated(b.parentWidget().mapTo(d, b.pos()) - b.pos()))
                                        for b in buttons)}))
"""


@pytest.mark.parametrize("size", [(1024, 768), (1280, 800)])
def test_on_a_screen_of_that_size_the_dialog_opens_inside_it(tmp_path, size):
    # Qt's offscreen platform takes a screen layout from a JSON file (Qt 6 "configfile" option).
    import os
    import subprocess
    import sys

    config = tmp_path / "screen.json"
    config.write_text(json.dumps({"screens": [{"name": "laptop", "x": 0, "y": 0, "width": size[0],
                                               "height": size[1], "logicalDpi": 96, "logicalBaseDpi": 96,
                                               "dpr": 1}]}))
    env = dict(os.environ, QT_QPA_PLATFORM=f"offscreen:configfile={config}")
    out = subprocess.run([sys.executable, "-c", _ON_A_SIZED_SCREEN], env=env, capture_output=True,
                         text=True, timeout=600)
    assert out.returncode == 0, out.stderr
    report = json.loads(out.stdout.strip().splitlines()[-1])
    assert report["screen"] == list(size)
    assert report["inside"] and report["buttons_inside"]


def test_inputs_live_in_the_session_and_come_back_with_it(qtbot, files):
    # The dialog's inputs are session fields: a second dialog (or a reopened session) has them.
    from refplane.session.model import Session

    paths = {role: files[role] for role in ("short", "open", "load")}
    state = Session()
    first = CalibrationDialog(state)
    qtbot.addWidget(first)
    for role, path in paths.items():
        assert first.set_standard_file(role, path)
    first.add_device_files([files["dut"]])
    assert dict(state.calibration.standards) == paths
    assert state.calibration.devices == (files["dut"],)
    first.close()
    second = CalibrationDialog(state)
    qtbot.addWidget(second)
    assert {r: second.path_edits[r].full_text() if hasattr(second.path_edits[r], "full_text")
            else second.path_edits[r].text() for r in paths} == paths
    assert second.solve_button.isEnabled()
    second.clear_standard("open")
    assert "open" not in state.calibration.standards


def test_the_calibration_doctor_speaks_in_the_dialog(dialog, files):
    # Synthetic raw data through a known error box (three-term model, references.md); with the
    # open and short swapped the doctor names it and says to redo it; a clean set gives no finding.
    choose_standards(dialog, files)
    dialog.solve()
    assert dialog.last_diagnosis is not None and dialog.last_diagnosis.findings == ()
    assert "Calibration check: good" in dialog.verdict.text()
    dialog.set_standard_file("short", files["open"])
    dialog.set_standard_file("open", files["short"])
    dialog.solve()
    kinds = {f.kind for f in dialog.last_diagnosis.findings}
    assert "swapped" in kinds and dialog.last_diagnosis.verdict == "redo it"
    lines = [dialog.warning_list.item(i).text() for i in range(dialog.warning_list.count())]
    assert any(line.startswith("Check (redo)") and "swapped" in line for line in lines)
