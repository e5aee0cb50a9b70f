"""A guided calibration: choose the measured standards, their definitions, see the error terms,
then correct device sweeps into new traces.

The dialog only gathers inputs and shows results; every calculation is done by
:mod:`refplane.analysis.calibration` (solve, checks, correction), :mod:`~refplane.analysis.standards`
(definitions and their file) and :mod:`~refplane.analysis.calfile` (saved error terms).
Problems are shown without closing the dialog: a line in the dialog and a non-blocking message.
"""

from __future__ import annotations

import copy
import dataclasses
import os
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDialog, QFileDialog, QGridLayout, QGroupBox,
                               QHBoxLayout, QHeaderView, QLabel, QLineEdit, QListWidget,
                               QListWidgetItem, QMessageBox, QPushButton, QSplitter, QTableWidget,
                               QTableWidgetItem, QVBoxLayout, QWidget)

from refplane.views.binding import bind
from refplane.analysis.errors import AnalysisError
from refplane.session.model import PALETTE, Session
from refplane.views.theme import LIGHT, Theme

#: The measurements the dialog asks for: role, label, whether it is needed.
ROLES = (
    ("short", "Measured short", True),
    ("open", "Measured open", True),
    ("load", "Measured load", True),
    ("through", "Measured through (optional, 2-port)", False),
    ("isolation", "Ports terminated, for leakage (optional, 2-port)", False),
)

#: Plain labels for the keys of the standards file.
KEY_LABELS = {
    "offset_delay_s": "Offset delay, one way (s)",
    "offset_loss_gohm_per_s": "Offset loss (GΩ/s)",
    "offset_z0_ohm": "Offset impedance (Ω; empty = reference)",
    "c0_f": "Capacitance C0 (F)",
    "c1_f_per_hz": "Capacitance C1 (F/Hz)",
    "c2_f_per_hz2": "Capacitance C2 (F/Hz²)",
    "c3_f_per_hz3": "Capacitance C3 (F/Hz³)",
    "l0_h": "Inductance L0 (H)",
    "l1_h_per_hz": "Inductance L1 (H/Hz)",
    "l2_h_per_hz2": "Inductance L2 (H/Hz²)",
    "l3_h_per_hz3": "Inductance L3 (H/Hz³)",
    "r_ohm": "Resistance (Ω; empty = reference)",
    "series_l_h": "Series inductance (H)",
}

_CAUTION = ("Connecting standards: discharge long cables before connecting them to the analyzer, and "
            "never connect a line that a transmitter may still feed.")

_EMPTY_DEFINITIONS = {"format": "refplane-standards", "version": 1, "name": "ideal standards"}


class CalibrationDialog(QDialog):
    """Calibrate from measured standards and open corrected devices as new traces."""

    def __init__(self, state: Session, parent: QWidget | None = None, theme: Theme = LIGHT):
        super().__init__(parent)
        self.setWindowTitle("Calibrate from measured standards")
        self.state = state
        self.theme = theme
        self.calibration = None
        self._sweeps: dict[str, object] = {}
        self._definitions: dict = copy.deepcopy(_EMPTY_DEFINITIONS)
        self._definitions_file: str | None = None
        self._device_files: list[str] = []
        self._filling = False

        layout = QVBoxLayout(self)
        split = QSplitter(Qt.Horizontal)
        layout.addWidget(split, 1)
        left = QWidget()
        left_layout = QVBoxLayout(left)
        left_layout.setContentsMargins(0, 0, 0, 0)
        left_layout.addWidget(self._build_files())
        left_layout.addWidget(self._build_definitions(), 1)
        left_layout.addWidget(self._build_devices())
        split.addWidget(left)
        split.addWidget(self._build_results())
        split.setStretchFactor(1, 1)

        self.problem = QLabel("")
        self.problem.setWordWrap(True)
        self.problem.setStyleSheet("color: #B00020;")
        layout.addWidget(self.problem)
        caution = QLabel(_CAUTION)
        caution.setWordWrap(True)
        layout.addWidget(caution)
        bottom = QHBoxLayout()
        bottom.addStretch(1)
        close = QPushButton("Close")
        close.clicked.connect(self.close)
        bottom.addWidget(close)
        layout.addLayout(bottom)

        bind(self, state.tracesChanged, self._fill_devices)
        bind(self, state.traceChanged, lambda _id: self._fill_devices())
        self._fill_definition_table()
        self._fill_devices()
        self._update_buttons()
        self.resize(1100, 720)

    # ------------------------------------------------------------------ building
    def _build_files(self) -> QGroupBox:
        box = QGroupBox("1. Measured standards")
        grid = QGridLayout(box)
        self.path_edits: dict[str, QLineEdit] = {}
        for row, (role, label, _needed) in enumerate(ROLES):
            grid.addWidget(QLabel(label), row, 0)
            edit = QLineEdit()
            edit.setReadOnly(True)
            edit.setPlaceholderText("no file chosen")
            edit.setMinimumWidth(180)
            self.path_edits[role] = edit
            grid.addWidget(edit, row, 1)
            choose = QPushButton("Choose…")
            choose.clicked.connect(lambda _c=False, r=role: self._ask_standard_file(r))
            grid.addWidget(choose, row, 2)
            clear = QPushButton("Clear")
            clear.clicked.connect(lambda _c=False, r=role: self.clear_standard(r))
            grid.addWidget(clear, row, 3)
        grid.setColumnStretch(1, 1)
        self.interpolate_box = QCheckBox("Allow sweeps on different frequencies (interpolate, less accurate)")
        grid.addWidget(self.interpolate_box, len(ROLES), 0, 1, 4)
        return box

    def _build_definitions(self) -> QGroupBox:
        box = QGroupBox("2. What the standards are")
        v = QVBoxLayout(box)
        top = QHBoxLayout()
        self.definitions_name = QLabel("")
        top.addWidget(self.definitions_name, 1)
        for text, slot in (("Load…", self._ask_load_definitions), ("Save…", self._ask_save_definitions),
                           ("Ideal", self.use_ideal_definitions)):
            b = QPushButton(text)
            b.clicked.connect(slot)
            top.addWidget(b)
        v.addLayout(top)
        pick = QHBoxLayout()
        pick.addWidget(QLabel("Standard:"))
        self.kind_combo = QComboBox()
        for kind in ("short", "open", "load", "through"):
            self.kind_combo.addItem(kind.capitalize(), kind)
        self.kind_combo.currentIndexChanged.connect(lambda _i: self._fill_definition_table())
        pick.addWidget(self.kind_combo, 1)
        v.addLayout(pick)
        self.definition_table = QTableWidget(0, 2)
        self.definition_table.setHorizontalHeaderLabels(["Quantity", "Value"])
        self.definition_table.verticalHeader().setVisible(False)
        self.definition_table.horizontalHeader().setSectionResizeMode(0, QHeaderView.Stretch)
        self.definition_table.itemChanged.connect(self._on_definition_edited)
        self.definition_table.setMinimumHeight(200)
        v.addWidget(self.definition_table, 1)
        return box

    def _build_devices(self) -> QGroupBox:
        box = QGroupBox("4. Devices to correct")
        v = QVBoxLayout(box)
        note = QLabel("Ticked sweeps are corrected as measured (before any reference-plane offsets) "
                      "and open as new traces.")
        note.setWordWrap(True)
        v.addWidget(note)
        self.device_list = QListWidget()
        self.device_list.setMaximumHeight(140)
        v.addWidget(self.device_list)
        row = QHBoxLayout()
        add = QPushButton("Add files…")
        add.clicked.connect(self._ask_device_files)
        row.addWidget(add)
        self.correct_button = QPushButton("Correct and open")
        self.correct_button.clicked.connect(self.correct_devices)
        row.addWidget(self.correct_button)
        v.addLayout(row)
        return box

    def _build_results(self) -> QGroupBox:
        box = QGroupBox("3. Error terms and how good they look")
        v = QVBoxLayout(box)
        row = QHBoxLayout()
        self.solve_button = QPushButton("Work out error terms")
        self.solve_button.clicked.connect(self.solve)
        row.addWidget(self.solve_button)
        self.save_terms_button = QPushButton("Save error terms…")
        self.save_terms_button.clicked.connect(self._ask_save_terms)
        row.addWidget(self.save_terms_button)
        load_terms = QPushButton("Use saved error terms…")
        load_terms.clicked.connect(self._ask_load_terms)
        row.addWidget(load_terms)
        row.addStretch(1)
        v.addLayout(row)
        self.plot = pg.PlotWidget(background=self.theme.chart_bg)
        for side in ("left", "bottom"):
            self.plot.getAxis(side).setTextPen(self.theme.text)
            self.plot.getAxis(side).setPen(self.theme.muted)
        self.plot.setLabel("bottom", "Frequency", units="Hz")
        self.plot.setLabel("left", "Magnitude", units="dB")
        self.plot.showGrid(x=True, y=True, alpha=0.3)
        self.legend = self.plot.addLegend(offset=(10, 10), labelTextColor=self.theme.text,
                                          brush=pg.mkBrush(self.theme.chart_bg))
        v.addWidget(self.plot, 1)
        self.verdict = QLabel("Choose the three measured standards, then work out the error terms.")
        self.verdict.setWordWrap(True)
        v.addWidget(self.verdict)
        self.warning_list = QListWidget()
        self.warning_list.setWordWrap(True)
        self.warning_list.setMaximumHeight(140)
        v.addWidget(self.warning_list)
        return box

    # ------------------------------------------------------------------ messages
    def show_error(self, title: str, message: str) -> None:
        """Report a problem without blocking (tests replace this method)."""
        self.problem.setText(message)
        box = QMessageBox(QMessageBox.Warning, title, message, QMessageBox.Ok, self)
        box.setAttribute(Qt.WA_DeleteOnClose, True)
        box.setWindowModality(Qt.NonModal)
        box.open()

    def _ok(self) -> None:
        self.problem.setText("")

    # ------------------------------------------------------------------ standards' files
    def _ask_standard_file(self, role: str) -> None:
        from refplane.analysis.loading import SWEEP_PATTERNS

        path, _ = QFileDialog.getOpenFileName(self, dict((r, l) for r, l, _ in ROLES)[role], "",
                                              f"Sweeps ({' '.join(SWEEP_PATTERNS)});;All files (*)")
        if path:
            self.set_standard_file(role, path)

    def set_standard_file(self, role: str, path: str) -> bool:
        """Read the sweep of one standard; on a problem, report it and keep what was there."""
        from refplane.analysis.loading import read_sweep

        try:
            sweep = read_sweep(path)
        except AnalysisError as exc:
            self.show_error("Cannot use this file", str(exc))
            return False
        except OSError as exc:
            self.show_error("Cannot use this file", f"{path}: {exc.strerror or exc}")
            return False
        self._sweeps[role] = sweep
        self.path_edits[role].setText(os.fspath(path))
        self.path_edits[role].setToolTip(os.fspath(path))
        self.path_edits[role].setCursorPosition(len(os.fspath(path)))  # the file name shows
        self._ok()
        self._update_buttons()
        return True

    def clear_standard(self, role: str) -> None:
        """Forget the file chosen for one standard."""
        self._sweeps.pop(role, None)
        self.path_edits[role].clear()
        self._update_buttons()

    def _update_buttons(self) -> None:
        have = all(r in self._sweeps for r, _, needed in ROLES if needed)
        self.solve_button.setEnabled(have)
        self.save_terms_button.setEnabled(self.calibration is not None)
        self.correct_button.setEnabled(self.calibration is not None)

    # ------------------------------------------------------------------ definitions
    def standards(self):
        """The current definitions as a StandardSet (raises AnalysisError when invalid)."""
        from refplane.analysis.standards import standards_from_json

        return standards_from_json(self._definitions, file=self._definitions_file)

    def _ask_load_definitions(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Load standard definitions", "",
                                              "Standard definitions (*.json);;All files (*)")
        if path:
            self.load_definitions(path)

    def load_definitions(self, path: str) -> bool:
        """Load a standards file; on a problem, report it and keep the current definitions."""
        import json

        from refplane.analysis.standards import load_standards

        try:
            load_standards(path)  # validates everything, data files included
            obj = json.loads(Path(path).read_text(encoding="utf-8"))
        except (AnalysisError, OSError, ValueError) as exc:
            self.show_error("Cannot use these definitions", str(exc))
            return False
        self._definitions = obj
        self._definitions_file = os.fspath(path)
        self._ok()
        self._fill_definition_table()
        return True

    def _ask_save_definitions(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Save standard definitions", "standards.json",
                                              "Standard definitions (*.json)")
        if path:  # the file dialog has already asked before replacing a file
            self.save_definitions(path, overwrite=True)

    def save_definitions(self, path: str, *, overwrite: bool = False) -> bool:
        """Write the current definitions to a standards file."""
        from refplane.analysis.standards import save_standards

        try:
            save_standards(self.standards(), path, overwrite=overwrite)
        except (AnalysisError, OSError) as exc:
            self.show_error("Cannot save the definitions", str(exc))
            return False
        self._ok()
        return True

    def use_ideal_definitions(self) -> None:
        """Go back to ideal standards."""
        self._definitions = copy.deepcopy(_EMPTY_DEFINITIONS)
        self._definitions_file = None
        self._fill_definition_table()

    def set_definition_value(self, kind: str, key: str, text: str) -> bool:
        """Set one value of a standard's definition from text (empty = default); invalid values
        are reported and not kept."""
        entry = dict(self._definitions.get(kind, {}))
        if "file" in entry:
            self.show_error("Defined by a file", f"the {kind} is defined by the data file {entry['file']}; "
                                                 "load other definitions to change it")
            return False
        text = text.strip()
        if text:
            try:
                entry[key] = float(text)
            except ValueError:
                self.show_error("Not a number", f"{KEY_LABELS.get(key, key)}: {text!r} is not a number")
                self._fill_definition_table()
                return False
        else:
            entry.pop(key, None)
        trial = copy.deepcopy(self._definitions)
        trial[kind] = entry
        from refplane.analysis.standards import standards_from_json

        try:
            standards_from_json(trial, file=self._definitions_file)
        except AnalysisError as exc:
            self.show_error("Not a valid definition", str(exc))
            self._fill_definition_table()
            return False
        trial["name"] = "edited standards"
        self._definitions = trial
        self._ok()
        self._fill_definition_table()
        return True

    def _fill_definition_table(self) -> None:
        from refplane.analysis.standards import definition_keys

        kind = self.kind_combo.currentData()
        entry = self._definitions.get(kind, {})
        self._filling = True
        try:
            table = self.definition_table
            if "file" in entry:
                table.setRowCount(1)
                label = QTableWidgetItem("Known response from file")
                label.setFlags(Qt.ItemIsEnabled)
                value = QTableWidgetItem(str(entry["file"]))
                value.setFlags(Qt.ItemIsEnabled)
                table.setItem(0, 0, label)
                table.setItem(0, 1, value)
            else:
                keys = definition_keys(kind)
                table.setRowCount(len(keys))
                for row, key in enumerate(keys):
                    label = QTableWidgetItem(KEY_LABELS.get(key, key))
                    label.setFlags(Qt.ItemIsEnabled)
                    label.setData(Qt.UserRole, key)
                    value = entry.get(key)
                    item = QTableWidgetItem("" if value is None else f"{value:.6g}")
                    item.setData(Qt.UserRole, key)
                    table.setItem(row, 0, label)
                    table.setItem(row, 1, item)
        finally:
            self._filling = False
        name = self._definitions.get("name", "standards")
        where = f" ({self._definitions_file})" if self._definitions_file else ""
        self.definitions_name.setText(f"Definitions: {name}{where}")

    def _on_definition_edited(self, item: QTableWidgetItem) -> None:
        if self._filling or item.column() != 1 or item.data(Qt.UserRole) is None:
            return
        self.set_definition_value(self.kind_combo.currentData(), item.data(Qt.UserRole), item.text())

    # ------------------------------------------------------------------ solving
    def solve(self):
        """Work out the error terms from the chosen files and definitions; show them."""
        from refplane.analysis.calibration import calibrate

        missing = [label for r, label, needed in ROLES if needed and r not in self._sweeps]
        if missing:
            self.show_error("Standards missing", "choose: " + ", ".join(missing))
            return None
        try:
            standards = self.standards()
            extra = [n for n, _ in standards.additional + standards.checks]
            # The dialog measures short, open and load only; further standards are a command-line matter.
            standards = dataclasses.replace(standards, additional=(), checks=())
            cal = calibrate({r: self._sweeps[r] for r in ("short", "open", "load")}, standards,
                            through=self._sweeps.get("through"), isolation=self._sweeps.get("isolation"),
                            interpolate=self.interpolate_box.isChecked())
        except AnalysisError as exc:
            self.show_error("Cannot work out the error terms", str(exc))
            return None
        self._show_calibration(cal)
        if extra:
            self.warning_list.addItem(f"not used here: {', '.join(extra)} (additional and check standards "
                                      "are measured with 'refplane correct --extra/--check')")
        return cal

    def _show_calibration(self, cal) -> None:
        from refplane.analysis.calibration import terms_db

        self.calibration = cal
        self._ok()
        self.plot.clear()
        self.legend.clear()
        for i, (name, values) in enumerate(terms_db(cal).items()):
            pen = pg.mkPen(PALETTE[i % len(PALETTE)], width=2)
            self.plot.plot(np.asarray(cal.freq_hz), np.where(np.isfinite(values), values, np.nan),
                           pen=pen, name=name.capitalize(), connect="finite")
        self.plot.enableAutoRange()
        self.verdict.setText(f"Quality: {cal.quality}. {cal.verdict}")
        self.warning_list.clear()
        for w in cal.warnings:
            self.warning_list.addItem(w)
        for chk in cal.checks:
            self.warning_list.addItem(chk.summary())
        self._update_buttons()

    def plotted_curves(self) -> list[str]:
        """Names of the error-term curves shown (for tests and screen readers)."""
        return [item.name() for item in self.plot.getPlotItem().listDataItems()]

    # ------------------------------------------------------------------ saved error terms
    def _ask_save_terms(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Save error terms", "calibration.json",
                                              "Calibration (*.json)")
        if path:  # the file dialog has already asked before replacing a file
            self.save_terms(path, overwrite=True)

    def save_terms(self, path: str, *, overwrite: bool = False) -> bool:
        """Save the current error terms to a calibration file."""
        from refplane.analysis.calfile import save_calibration

        if self.calibration is None:
            self.show_error("Nothing to save", "work out the error terms first")
            return False
        try:
            save_calibration(self.calibration, path, overwrite=overwrite)
        except (AnalysisError, OSError) as exc:
            self.show_error("Cannot save the error terms", str(exc))
            return False
        self._ok()
        return True

    def _ask_load_terms(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Use saved error terms", "",
                                              "Calibration (*.json);;All files (*)")
        if path:
            self.load_terms(path)

    def load_terms(self, path: str) -> bool:
        """Use error terms saved earlier instead of measured standards."""
        from refplane.analysis.calfile import load_calibration

        try:
            cal = load_calibration(path)
        except (AnalysisError, OSError) as exc:
            self.show_error("Cannot use these error terms", str(exc))
            return False
        self._show_calibration(cal)
        return True

    # ------------------------------------------------------------------ devices
    def _ask_device_files(self) -> None:
        from refplane.analysis.loading import SWEEP_PATTERNS

        paths, _ = QFileDialog.getOpenFileNames(self, "Device sweeps to correct", "",
                                                f"Sweeps ({' '.join(SWEEP_PATTERNS)});;All files (*)")
        if paths:
            self.add_device_files(paths)

    def add_device_files(self, paths) -> None:
        """Offer sweep files as devices to correct (ticked)."""
        for p in paths:
            p = os.fspath(p)
            if p not in self._device_files:
                self._device_files.append(p)
        self._fill_devices()

    def _fill_devices(self) -> None:
        ticked = {self.device_list.item(i).data(Qt.UserRole) for i in range(self.device_list.count())
                  if self.device_list.item(i).checkState() == Qt.Checked}
        known = {self.device_list.item(i).data(Qt.UserRole) for i in range(self.device_list.count())}
        self.device_list.clear()
        entries = [(("trace", t.id), f"Open trace: {t.name}") for t in self.state.traces()]
        entries += [(("file", p), f"File: {p}") for p in self._device_files]
        for key, label in entries:
            item = QListWidgetItem(label)
            item.setFlags(Qt.ItemIsEnabled | Qt.ItemIsUserCheckable)
            # New files start ticked; open traces start unticked (they may be unrelated sweeps).
            on = key in ticked or (key not in known and key[0] == "file")
            item.setCheckState(Qt.Checked if on else Qt.Unchecked)
            item.setData(Qt.UserRole, key)
            self.device_list.addItem(item)

    def set_device_checked(self, label_start: str, checked: bool = True) -> None:
        """Tick or untick the device whose label starts with ``label_start``."""
        for i in range(self.device_list.count()):
            item = self.device_list.item(i)
            if item.text().startswith(label_start):
                item.setCheckState(Qt.Checked if checked else Qt.Unchecked)
                return
        raise KeyError(label_start)

    def correct_devices(self) -> list[int]:
        """Correct every ticked device and open each as a new trace; returns the new trace ids."""
        from refplane.analysis.calibration import correct
        from refplane.analysis.loading import read_sweep

        if self.calibration is None:
            self.show_error("No error terms", "work out or load the error terms first")
            return []
        new_ids, problems, notes = [], [], []
        # Collected first: each new trace refills the list.
        keys = [self.device_list.item(i).data(Qt.UserRole) for i in range(self.device_list.count())
                if self.device_list.item(i).checkState() == Qt.Checked]
        for kind, ref in keys:
            try:
                sweep = self.state.trace(ref).raw if kind == "trace" else read_sweep(ref)
                result = correct(self.calibration, sweep, interpolate=self.interpolate_box.isChecked())
            except (AnalysisError, OSError, KeyError) as exc:
                problems.append(str(exc))
                continue
            base = self.state.trace(ref).name if kind == "trace" else Path(ref).stem
            new_ids.append(self.state.add_sweep(result.sweep, name=f"{base} (calibrated)"))
            notes.extend(result.warnings)
        for n in dict.fromkeys(notes):
            self.warning_list.addItem(n)
        if problems:
            self.show_error("Some devices were not corrected", "\n".join(problems))
        elif not new_ids:
            self.show_error("Nothing ticked", "tick at least one device to correct")
        else:
            self._ok()
        return new_ids
