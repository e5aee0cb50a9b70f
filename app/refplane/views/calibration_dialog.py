"""A guided calibration: choose the measured standards, their definitions, see the error terms,
then correct device sweeps into new traces.

The dialog only gathers inputs and shows results; every calculation is done by
:mod:`refplane.analysis.calibration.solve` (solve, checks, correction), :mod:`~refplane.analysis.calibration.standards`
(definitions and their file) and :mod:`~refplane.analysis.calibration.calfile` (saved error terms).
Problems are shown without closing the dialog: a line in the dialog and a non-blocking message.
"""

from __future__ import annotations

import copy
import dataclasses
import html
import math
import os
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QRect, Qt
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDialog, QFileDialog, QGridLayout, QGroupBox,
                               QHBoxLayout, QHeaderView, QLabel, QLineEdit, QListWidget,
                               QListWidgetItem, QMessageBox, QPushButton, QSizePolicy, QSplitter,
                               QTableWidget, QTableWidgetItem, QVBoxLayout, QWidget)

from refplane.views.plot_area import discard
from refplane.views.binding import bind
from refplane.views.folders import in_last_folder, last_folder, remember_folder
from refplane.analysis.errors import AnalysisError
from refplane.session.model import PALETTE, Session
from refplane.views.theme import LIGHT, Theme

#: The measurements the dialog asks for: role, label, whether it is needed.
ROLES = (
    ("short", "Measured short", True),
    ("open", "Measured open", True),
    ("load", "Measured load", True),
    ("through", "Through (2-port, optional)", False),
    ("isolation", "Isolation (2-port, optional)", False),
)
_ROLE_TIPS = {
    "through": "The two ports connected together, for two-port error terms.",
    "isolation": "Both ports terminated, to measure the leakage between them.",
}

#: Plain labels for the keys of the standards file; the unit shown is the unit of a bare number.
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

#: SI unit of each key, and the factor from the file's number to SI (offset loss is kept in GΩ/s).
KEY_UNITS = {
    "offset_delay_s": ("s", 1.0), "offset_loss_gohm_per_s": ("Ω/s", 1e9), "offset_z0_ohm": ("Ω", 1.0),
    "c0_f": ("F", 1.0), "c1_f_per_hz": ("F/Hz", 1.0), "c2_f_per_hz2": ("F/Hz²", 1.0),
    "c3_f_per_hz3": ("F/Hz³", 1.0), "l0_h": ("H", 1.0), "l1_h_per_hz": ("H/Hz", 1.0),
    "l2_h_per_hz2": ("H/Hz²", 1.0), "l3_h_per_hz3": ("H/Hz³", 1.0), "r_ohm": ("Ω", 1.0),
    "series_l_h": ("H", 1.0),
}

_CAUTION = ("Connecting standards: discharge long cables before connecting them to the analyzer, and "
            "never connect a line that a transmitter may still feed.")

_EMPTY_DEFINITIONS = {"format": "refplane-standards", "version": 1, "name": "ideal standards"}

#: The dialog's first size (pixels) on a screen with room for it; smaller screens get less.
DEFAULT_SIZE = (1100, 720)
#: Room left around the dialog on a screen for its frame and title bar (as the main window's).
FRAME_MARGINS = (24, 48)


def format_definition_value(key: str, value: float) -> str:
    """A standards-file value as text with its unit: 3e-11 → "30 ps", 9e-15 → "9 fF"."""
    from refplane.analysis.units import format_si

    unit, scale = KEY_UNITS.get(key, ("", 1.0))
    if scale != 1.0:  # kept in the file's own unit (GΩ/s), which is the unit shown
        return f"{value:.6g} G{unit}"
    number, _, rest = format_si(float(value), unit, 6).partition(" ")
    try:
        mantissa = abs(float(number))
    except ValueError:
        mantissa = 0.0
    if mantissa != 0.0 and not 1.0 <= mantissa < 1000.0:
        # Beyond the prefixes (a C2 of 1e-36 F/Hz²): plain powers of ten read better.
        return f"{value:.6g} {unit}"
    if "." in number and "e" not in number:
        number = number.rstrip("0").rstrip(".")
    return f"{number} {rest}".strip()


def parse_definition_value(key: str, text: str) -> float:
    """Text typed for a standards-file key → the number kept in the file.

    A value may carry its unit with a metric prefix ("31 ps", "9 fF", "0.2 nH", "50 ohm"), as
    everywhere in Refplane (:func:`refplane.analysis.units.parse_quantity`); a bare number is in
    the unit shown beside the key (seconds, farads, …; GΩ/s for the offset loss).
    """
    from refplane.analysis.units import parse_quantity

    unit, scale = KEY_UNITS.get(key, ("", 1.0))
    what = KEY_LABELS.get(key, key).split(" (")[0].lower()
    try:
        value = float(text)
    except ValueError:
        value = parse_quantity(text, unit, what) / scale
    if not math.isfinite(value):
        raise AnalysisError(f"{text!r} is not a finite {what}")
    return value


class ElidedLabel(QLabel):
    """One line of text that never widens its window: too long, it is shortened in the middle
    ("…") and the whole text is in the tooltip. For paths and file names."""

    def __init__(self, text: str = "", parent: QWidget | None = None):
        super().__init__(parent)
        self._full = ""
        # Ignored: the text's length plays no part in the layout's width.
        self.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Preferred)
        self.setMinimumWidth(60)
        self.set_full_text(text)

    def full_text(self) -> str:
        """The text before shortening."""
        return self._full

    def set_full_text(self, text: str) -> None:
        """Show ``text``, shortened to the label's width when it does not fit."""
        self._full = text
        self.setToolTip(text)
        self._elide()

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt's name)
        super().resizeEvent(event)
        self._elide()

    def _elide(self) -> None:
        self.setText(self.fontMetrics().elidedText(self._full, Qt.ElideMiddle, max(self.width(), 1)))


class CalibrationDialog(QDialog):
    """Calibrate from measured standards and open corrected devices as new traces.

    The sections are numbered in reading order: 1 and 2 (files, definitions) on the left,
    3 and 4 (error terms, devices) on the right.
    """

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
        self._terms_source = ""      # where the error terms in use came from, in words
        self._terms_outdated = False  # standards or definitions changed after they were worked out

        layout = QVBoxLayout(self)
        split = QSplitter(Qt.Horizontal)
        split.setChildrenCollapsible(False)
        layout.addWidget(split, 1)
        left = QWidget()
        left_layout = QVBoxLayout(left)
        left_layout.setContentsMargins(0, 0, 0, 0)
        left_layout.addWidget(self._build_files())
        left_layout.addWidget(self._build_definitions(), 1)
        split.addWidget(left)
        right = QWidget()
        right_layout = QVBoxLayout(right)
        right_layout.setContentsMargins(0, 0, 0, 0)
        right_layout.addWidget(self._build_results(), 1)
        right_layout.addWidget(self._build_devices())
        split.addWidget(right)
        split.setStretchFactor(0, 0)
        split.setStretchFactor(1, 1)

        self.problem = QLabel("")
        self.problem.setWordWrap(True)
        self.problem.setStyleSheet("color: #B00020;")
        self.problem.hide()  # takes no room until there is something to say
        layout.addWidget(self.problem)
        bottom = QHBoxLayout()
        caution = QLabel(_CAUTION)
        caution.setWordWrap(True)
        bottom.addWidget(caution, 1)
        self.close_button = QPushButton("Close")
        self.close_button.clicked.connect(self.close)
        bottom.addWidget(self.close_button, 0, Qt.AlignBottom)
        layout.addLayout(bottom)

        bind(self, state.tracesChanged, self._fill_devices)
        bind(self, state.traceChanged, lambda _id: self._fill_devices())
        self._fill_definition_table()
        self._restore_from_session()
        self._fill_devices()
        self._show_terms_in_use()
        self._update_buttons()
        self.resize(*DEFAULT_SIZE)
        screen = self.screen() if parent is None else parent.screen()
        if screen is not None:
            self.fit_to(screen.availableGeometry())

    # ------------------------------------------------------------------ the session's inputs
    def _restore_from_session(self) -> None:
        """Take up the inputs the session remembers (a reopened session, or this dialog opened again).

        Files that cannot be read now are reported once and left out; the session keeps them.
        """
        cal = self.state.calibration
        problems = []
        self._restoring = True
        try:
            for role, path in cal.standards.items():
                if role in self.path_edits and not self.set_standard_file(role, path, quiet=True):
                    problems.append(f"{role}: {path}")
            if cal.definitions_file and not self.load_definitions(cal.definitions_file, quiet=True):
                problems.append(f"definitions: {cal.definitions_file}")
            if cal.saved_terms_file and not self.load_terms(cal.saved_terms_file, quiet=True):
                problems.append(f"error terms: {cal.saved_terms_file}")
            self._device_files = [p for p in cal.devices]
        finally:
            self._restoring = False
        if problems:
            self.show_error("Some remembered inputs could not be read",
                            "These files from the session could not be read now: " + "; ".join(problems))

    _restoring = False

    def _remember(self, **changes) -> None:
        """Write an input back to the session (so a saved session keeps it)."""
        if not self._restoring:
            self.state.set_calibration(**changes)

    def fit_to(self, available: QRect) -> None:
        """Shrink the dialog to fit ``available`` (a screen's free area), frame included.

        The default size suits a desktop monitor; on a laptop screen (1366×768, 1280×800,
        1024×768) the dialog takes what there is, and every part of it stays usable there.
        """
        w = min(DEFAULT_SIZE[0], max(self.minimumSizeHint().width(), available.width() - FRAME_MARGINS[0]))
        h = min(DEFAULT_SIZE[1], max(self.minimumSizeHint().height(), available.height() - FRAME_MARGINS[1]))
        self.resize(w, h)

    # ------------------------------------------------------------------ building
    def _build_files(self) -> QGroupBox:
        box = QGroupBox("1. Measured standards")
        grid = QGridLayout(box)
        self.path_edits: dict[str, QLineEdit] = {}
        for row, (role, label, _needed) in enumerate(ROLES):
            name = QLabel(label)
            name.setToolTip(_ROLE_TIPS.get(role, ""))
            grid.addWidget(name, row, 0)
            edit = QLineEdit()
            edit.setReadOnly(True)
            edit.setPlaceholderText("no file chosen")
            edit.setMinimumWidth(120)  # a line edit never grows with its text; the path scrolls
            self.path_edits[role] = edit
            grid.addWidget(edit, row, 1)
            choose = QPushButton("Choose…")
            choose.clicked.connect(lambda _c=False, r=role: self._ask_standard_file(r))
            grid.addWidget(choose, row, 2)
            clear = QPushButton("Clear")
            clear.clicked.connect(lambda _c=False, r=role: self.clear_standard(r))
            grid.addWidget(clear, row, 3)
        grid.setColumnStretch(1, 1)
        self.interpolate_box = QCheckBox("Allow sweeps on different frequencies (interpolated)")
        self.interpolate_box.setToolTip("Standards or devices swept on other frequencies are interpolated "
                                        "onto the error terms' frequencies; less accurate.")
        grid.addWidget(self.interpolate_box, len(ROLES), 0, 1, 4)
        return box

    def _build_definitions(self) -> QGroupBox:
        from refplane.analysis.calibration.standards import KINDS, definition_keys

        box = QGroupBox("2. What the standards are")
        v = QVBoxLayout(box)
        top = QHBoxLayout()
        self.definitions_name = ElidedLabel("")
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
        table = self.definition_table = QTableWidget(0, 2)
        table.setHorizontalHeaderLabels(["Quantity", "Value"])
        table.verticalHeader().setVisible(False)
        table.horizontalHeader().setSectionResizeMode(0, QHeaderView.ResizeToContents)
        table.horizontalHeader().setSectionResizeMode(1, QHeaderView.Stretch)
        table.setWordWrap(False)
        row_h = table.fontMetrics().height() + 8
        table.verticalHeader().setSectionResizeMode(QHeaderView.Fixed)
        table.verticalHeader().setDefaultSectionSize(row_h)
        # Tall enough for the longest definition (a short or an open: 4 + 3 offset rows) without
        # scrolling; the height is fixed so the rows are always all in view.
        most_rows = max(len(definition_keys(k)) for k in KINDS)
        height = table.horizontalHeader().sizeHint().height() + most_rows * row_h + 2 * table.frameWidth() + 2
        table.setMinimumHeight(height)
        table.setMaximumHeight(height)
        table.setVerticalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
        table.itemChanged.connect(self._on_definition_edited)
        v.addWidget(table)
        hint = QLabel("Type values with their unit (31 ps, 9 fF, 0.2 nH, 50 ohm); a bare number is in the "
                      "unit shown. Empty means none.")
        hint.setWordWrap(True)
        hint.setForegroundRole(QPalette.PlaceholderText)
        v.addWidget(hint)
        v.addStretch(1)
        return box

    def _build_devices(self) -> QGroupBox:
        box = QGroupBox("4. Devices to correct")
        v = QVBoxLayout(box)
        note = QLabel("Ticked sweeps are corrected as measured (before any reference-plane offsets), "
                      "open as new traces and are then unticked.")
        note.setWordWrap(True)
        v.addWidget(note)
        self.device_list = QListWidget()
        self.device_list.setTextElideMode(Qt.ElideMiddle)  # long paths shorten, never widen
        self.device_list.setHorizontalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
        # A fixed height of about four entries: the error-term plot above takes what room is left.
        self.device_list.setFixedHeight(4 * (self.device_list.fontMetrics().height() + 4) + 8)
        v.addWidget(self.device_list)
        row = QHBoxLayout()
        add = QPushButton("Add files…")
        add.clicked.connect(self._ask_device_files)
        row.addWidget(add)
        self.correct_button = QPushButton("Correct and open")
        self.correct_button.clicked.connect(self.correct_devices)
        row.addWidget(self.correct_button)
        row.addStretch(1)
        v.addLayout(row)
        return box

    def _build_results(self) -> QGroupBox:
        box = QGroupBox("3. Error terms and how good they look")
        v = QVBoxLayout(box)
        row = QHBoxLayout()
        self.solve_button = QPushButton("Work out error terms")
        self.solve_button.clicked.connect(self.solve)
        row.addWidget(self.solve_button)
        self.save_terms_button = QPushButton("Save…")
        self.save_terms_button.setToolTip("Save the error terms to a file, to correct later sweeps")
        self.save_terms_button.clicked.connect(self._ask_save_terms)
        row.addWidget(self.save_terms_button)
        self.load_terms_button = QPushButton("Use saved…")
        self.load_terms_button.setToolTip("Use error terms saved earlier instead of measured standards")
        self.load_terms_button.clicked.connect(self._ask_load_terms)
        row.addWidget(self.load_terms_button)
        row.addStretch(1)
        v.addLayout(row)
        self.terms_in_use = ElidedLabel("")
        v.addWidget(self.terms_in_use)
        self.plot = pg.PlotWidget(background=self.theme.chart_bg)
        for side in ("left", "bottom"):
            self.plot.getAxis(side).setTextPen(self.theme.text)
            self.plot.getAxis(side).setPen(self.theme.muted)
        self.plot.setLabel("bottom", "Frequency", units="Hz")
        self.plot.setLabel("left", "Magnitude", units="dB")
        self.plot.showGrid(x=True, y=True, alpha=0.3)
        self.plot.setMinimumHeight(140)
        v.addWidget(self.plot, 1)
        # The key to the curves sits below the plot, never over them.
        self.legend = QLabel("")
        self.legend.setTextFormat(Qt.RichText)
        self.legend.setWordWrap(True)
        v.addWidget(self.legend)
        self.verdict = QLabel("Choose the three measured standards, then work out the error terms.")
        self.verdict.setWordWrap(True)
        v.addWidget(self.verdict)
        self.warning_list = QListWidget()
        self.warning_list.setWordWrap(True)
        self.warning_list.setFixedHeight(4 * (self.warning_list.fontMetrics().height() + 4) + 8)
        v.addWidget(self.warning_list)
        return box

    # ------------------------------------------------------------------ messages
    def show_error(self, title: str, message: str) -> None:
        """Report a problem without blocking (tests replace this method)."""
        self.problem.setText(message)
        self.problem.show()
        box = QMessageBox(QMessageBox.Warning, title, message, QMessageBox.Ok, self)
        box.setAttribute(Qt.WA_DeleteOnClose, True)
        box.setWindowModality(Qt.NonModal)
        box.open()

    def _ok(self) -> None:
        self.problem.setText("")
        self.problem.hide()

    # ------------------------------------------------------------------ standards' files
    def _ask_standard_file(self, role: str) -> None:
        from refplane.analysis.files.loading import SWEEP_PATTERNS

        path, _ = QFileDialog.getOpenFileName(self, dict((r, l) for r, l, _ in ROLES)[role], last_folder("sweeps"),
                                              f"Sweeps ({' '.join(SWEEP_PATTERNS)});;All files (*)")
        if path:
            remember_folder("sweeps", path)
            self.set_standard_file(role, path)

    def set_standard_file(self, role: str, path: str, *, quiet: bool = False) -> bool:
        """Read the sweep of one standard; on a problem, report it and keep what was there."""
        from refplane.analysis.files.loading import read_sweep

        try:
            sweep = read_sweep(path)
        except AnalysisError as exc:
            if not quiet:
                self.show_error("Cannot use this file", str(exc))
            return False
        except OSError as exc:
            if not quiet:
                self.show_error("Cannot use this file", f"{path}: {exc.strerror or exc}")
            return False
        self._sweeps[role] = sweep
        self._remember(standards={**self.state.calibration.standards, role: os.fspath(path)})
        self.path_edits[role].setText(os.fspath(path))
        self.path_edits[role].setToolTip(os.fspath(path))
        self.path_edits[role].setCursorPosition(len(os.fspath(path)))  # the file name shows
        self._ok()
        self._standards_changed()
        return True

    def clear_standard(self, role: str) -> None:
        """Forget the file chosen for one standard."""
        had = self._sweeps.pop(role, None) is not None
        self._remember(standards={r: p for r, p in self.state.calibration.standards.items() if r != role})
        self.path_edits[role].clear()
        self.path_edits[role].setToolTip("")
        if had:
            self._standards_changed()

    def _standards_changed(self) -> None:
        """A standard's file or definition changed: terms worked out from the old ones are outdated."""
        if self.calibration is not None and self._terms_source.startswith("worked out"):
            self._terms_outdated = True
            self._show_terms_in_use()
        self._update_buttons()

    def _update_buttons(self) -> None:
        have = all(r in self._sweeps for r, _, needed in ROLES if needed)
        self.solve_button.setEnabled(have)
        self.save_terms_button.setEnabled(self.calibration is not None)
        self.correct_button.setEnabled(self.calibration is not None)

    # ------------------------------------------------------------------ definitions
    def standards(self):
        """The current definitions as a StandardSet (raises AnalysisError when invalid)."""
        from refplane.analysis.calibration.standards import standards_from_json

        return standards_from_json(self._definitions, file=self._definitions_file)

    def _ask_load_definitions(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Load standard definitions", last_folder("calibration"),
                                              "Standard definitions (*.json);;All files (*)")
        if path:
            remember_folder("calibration", path)
            self.load_definitions(path)

    def load_definitions(self, path: str, *, quiet: bool = False) -> bool:
        """Load a standards file; on a problem, report it and keep the current definitions."""
        import json

        from refplane.analysis.calibration.standards import load_standards

        try:
            load_standards(path)  # validates everything, data files included
            obj = json.loads(Path(path).read_text(encoding="utf-8"))
        except (AnalysisError, OSError, ValueError) as exc:
            if not quiet:
                self.show_error("Cannot use these definitions", str(exc))
            return False
        self._definitions = obj
        self._definitions_file = os.fspath(path)
        self._remember(definitions_file=os.fspath(path))
        self._ok()
        self._fill_definition_table()
        self._standards_changed()
        return True

    def _ask_save_definitions(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Save standard definitions", in_last_folder("calibration", "standards.json"),
                                              "Standard definitions (*.json)")
        if path:  # the file dialog has already asked before replacing a file
            remember_folder("calibration", path)
            self.save_definitions(path, overwrite=True)

    def save_definitions(self, path: str, *, overwrite: bool = False) -> bool:
        """Write the current definitions to a standards file."""
        from refplane.analysis.calibration.standards import save_standards

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
        self._remember(definitions_file=None)
        self._fill_definition_table()
        self._standards_changed()

    def set_definition_value(self, kind: str, key: str, text: str) -> bool:
        """Set one value of a standard's definition from text ("31 ps", "9 fF", a bare number in
        the unit shown; empty = default); invalid values are reported and not kept."""
        entry = dict(self._definitions.get(kind, {}))
        if "file" in entry:
            self.show_error("Defined by a file", f"the {kind} is defined by the data file {entry['file']}; "
                                                 "load other definitions to change it")
            return False
        text = text.strip()
        if text:
            try:
                entry[key] = parse_definition_value(key, text)
            except AnalysisError as exc:
                self.show_error("Not a value", f"{KEY_LABELS.get(key, key)}: {exc}")
                self._fill_definition_table()
                return False
        else:
            entry.pop(key, None)
        trial = copy.deepcopy(self._definitions)
        trial[kind] = entry
        from refplane.analysis.calibration.standards import standards_from_json

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
        self._standards_changed()
        return True

    def _fill_definition_table(self) -> None:
        from refplane.analysis.calibration.standards import definition_keys

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
                    item = QTableWidgetItem("" if value is None else format_definition_value(key, value))
                    item.setData(Qt.UserRole, key)
                    table.setItem(row, 0, label)
                    table.setItem(row, 1, item)
        finally:
            self._filling = False
        name = self._definitions.get("name", "standards")
        where = f" ({self._definitions_file})" if self._definitions_file else ""
        self.definitions_name.set_full_text(f"Definitions: {name}{where}")

    def _on_definition_edited(self, item: QTableWidgetItem) -> None:
        if self._filling or item.column() != 1 or item.data(Qt.UserRole) is None:
            return
        self.set_definition_value(self.kind_combo.currentData(), item.data(Qt.UserRole), item.text())

    # ------------------------------------------------------------------ solving
    def solve(self):
        """Work out the error terms from the chosen files and definitions; show them."""
        from refplane.analysis.calibration.solve import calibrate

        missing = [label for r, label, needed in ROLES if needed and r not in self._sweeps]
        if missing:
            self.show_error("Standards missing", "choose: " + ", ".join(missing))
            return None
        from refplane.session import jobs

        extra = []

        def work():
            standards = self.standards()
            extra.extend(n for n, _ in standards.additional + standards.checks)
            # The dialog measures short, open and load only; further standards are a command-line matter.
            standards = dataclasses.replace(standards, additional=(), checks=())
            return calibrate({r: self._sweeps[r] for r in ("short", "open", "load")}, standards,
                             through=self._sweeps.get("through"), isolation=self._sweeps.get("isolation"),
                             interpolate=self.interpolate_box.isChecked())

        result = jobs.calibrate(work)
        if not result.ok:
            self.show_error("Cannot work out the error terms", result.message)
            return None
        cal = result.value
        self._remember(saved_terms_file=None)  # the terms in use now are the ones worked out here
        used = ", ".join(Path(self.path_edits[r].text()).name for r, _, _ in ROLES if r in self._sweeps)
        self._terms_source = f"worked out from the standards measured here ({used})"
        self._show_calibration(cal)
        self.show_diagnosis(cal, measured={r: self._sweeps[r] for r in ("short", "open", "load")})
        if extra:
            self.warning_list.addItem(f"not used here: {', '.join(extra)} (additional and check standards "
                                      "are measured with 'refplane correct --extra/--check')")
        return cal

    def show_diagnosis(self, cal, *, measured=None, devices=()) -> object | None:
        """Ask the calibration doctor about these error terms (and corrected devices); show its
        verdict and each finding as a plain sentence with its band. Returns the diagnosis."""
        from refplane.analysis.uncertainty.doctor import diagnose
        from refplane.session import jobs

        def work():
            standards = dataclasses.replace(self.standards(), additional=(), checks=())
            return diagnose(cal, measured=measured, standards=standards, devices=list(devices))

        result = jobs.guarded(work, what="check the calibration")
        if not result.ok:
            self.warning_list.addItem(f"The calibration could not be checked: {result.message}")
            return None
        diagnosis = result.value
        self.last_diagnosis = diagnosis
        self.verdict.setText(f"{self.verdict.text()} Calibration check: {diagnosis.verdict}.")
        for finding in diagnosis.findings:
            self.warning_list.addItem(f"Check ({finding.severity}): {finding.sentence}")
        return diagnosis

    last_diagnosis = None

    def _show_calibration(self, cal) -> None:
        from refplane.analysis.calibration.solve import terms_db

        self.calibration = cal
        self._terms_outdated = False
        self._ok()
        for item in list(self.plot.listDataItems()):
            self.plot.removeItem(item)
            discard(item)  # Qt deletes it at a safe point, not Python's collector mid-call
        keys = []
        for i, (name, values) in enumerate(terms_db(cal).items()):
            colour = PALETTE[i % len(PALETTE)]
            self.plot.plot(np.asarray(cal.freq_hz), np.where(np.isfinite(values), values, np.nan),
                           pen=pg.mkPen(colour, width=2), name=name.capitalize(), connect="finite")
            keys.append(f'<span style="color:{colour}">&#9473;&#9473;</span>&nbsp;{html.escape(name.capitalize())}')
        self.legend.setText("&nbsp;&nbsp; ".join(keys))
        self.plot.enableAutoRange()
        self._show_terms_in_use()
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
        path, _ = QFileDialog.getSaveFileName(self, "Save error terms", in_last_folder("calibration", "calibration.json"),
                                              "Calibration (*.json)")
        if path:  # the file dialog has already asked before replacing a file
            remember_folder("calibration", path)
            self.save_terms(path, overwrite=True)

    def save_terms(self, path: str, *, overwrite: bool = False) -> bool:
        """Save the current error terms to a calibration file."""
        from refplane.analysis.calibration.calfile import save_calibration

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
        path, _ = QFileDialog.getOpenFileName(self, "Use saved error terms", last_folder("calibration"),
                                              "Calibration (*.json);;All files (*)")
        if path:
            remember_folder("calibration", path)
            self.load_terms(path)

    def load_terms(self, path: str, *, quiet: bool = False) -> bool:
        """Use error terms saved earlier instead of measured standards."""
        from refplane.analysis.calibration.calfile import load_calibration

        try:
            cal = load_calibration(path)
        except (AnalysisError, OSError) as exc:
            if not quiet:
                self.show_error("Cannot use these error terms", str(exc))
            return False
        self._terms_source = f"saved in {os.fspath(path)}"
        self._remember(saved_terms_file=os.fspath(path))
        self._show_calibration(cal)
        return True

    def _show_terms_in_use(self) -> None:
        """Say which error terms a correction would use: none, the ones worked out here, or a file."""
        from refplane.analysis.units import format_frequency

        cal = self.calibration
        if cal is None:
            text = "Error terms in use: none yet (work them out, or use saved ones)"
        else:
            f = np.asarray(cal.freq_hz)
            span = f"{format_frequency(f[0])} to {format_frequency(f[-1])}, {len(f)} points"
            text = f"Error terms in use: {self._terms_source}; {span}"
            if self._terms_outdated:  # said first, so shortening a long line never hides it
                text = ("Outdated, the standards have changed since (work them out again). "
                        + text.replace("Error terms in use", "In use"))
        self.terms_in_use.set_full_text(text)

    # ------------------------------------------------------------------ devices
    def _ask_device_files(self) -> None:
        from refplane.analysis.files.loading import SWEEP_PATTERNS

        paths, _ = QFileDialog.getOpenFileNames(self, "Device sweeps to correct", last_folder("sweeps"),
                                                f"Sweeps ({' '.join(SWEEP_PATTERNS)});;All files (*)")
        if paths:
            remember_folder("sweeps", paths[0])
            self.add_device_files(paths)

    def add_device_files(self, paths) -> None:
        """Offer sweep files as devices to correct (ticked)."""
        for p in paths:
            p = os.fspath(p)
            if p not in self._device_files:
                self._device_files.append(p)
        self._remember(devices=list(self._device_files))
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
            item.setToolTip(label)
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
        from refplane.analysis.calibration.solve import correct
        from refplane.analysis.files.loading import read_sweep

        if self.calibration is None:
            self.show_error("No error terms", "work out or load the error terms first")
            return []
        new_ids, problems, notes, done = [], [], [], []
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
            done.append((kind, ref))
            notes.extend(result.warnings)
        # Corrected devices are unticked, so a second click does not open the same traces again.
        for i in range(self.device_list.count()):
            if self.device_list.item(i).data(Qt.UserRole) in done:
                self.device_list.item(i).setCheckState(Qt.Unchecked)
        for n in dict.fromkeys(notes):
            self.warning_list.addItem(n)
        if new_ids:
            # A passive device reading |Γ| > 1 after correction says something about the calibration.
            self.show_diagnosis(self.calibration, devices=[(self.state.trace(t).name, self.state.trace(t).raw)
                                                           for t in new_ids])
        if problems:
            self.show_error("Some devices were not corrected", "\n".join(problems))
        elif not new_ids:
            self.show_error("Nothing ticked", "tick at least one device to correct")
        else:
            self._ok()
        return new_ids
