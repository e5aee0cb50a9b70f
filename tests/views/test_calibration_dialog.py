"""The calibration dialog, offscreen: files in, error terms shown, devices corrected into traces.

Raw files are made by passing known devices through a known error box (the published
three-term model Γm = e00 + e10e01·Γ/(1 − e11·Γ)); the corrected traces must give them back.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from PySide6.QtCore import Qt

from refplane.analysis import touchstone
from refplane.analysis.impedance import z_to_gamma
from refplane.analysis.standards import Standard, reflection
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
    from refplane.analysis.loading import read_sweep

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

