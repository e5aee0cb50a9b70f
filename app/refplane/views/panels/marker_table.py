"""Marker readouts: one row per marker, a difference row, typed frequencies, copy as text.

Every cell comes from the session's resolved scene (:mod:`refplane.session.present` rules),
so the table shows what ``refplane read`` prints at the same frequency. When the marker's trace carries a fitted model (an overlay),
a row below the markers shows the model's reading at the same frequency, for comparison.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, QTimer
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QPushButton, QTableView, QVBoxLayout, QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.session.model import Session
from refplane.views.scene_controller import controller_for
from refplane.views.panels.marker_rows import MarkerRows
from refplane.views.theme import quiet_label


class MarkerTable(QWidget):
    """The marker readout table with an entry line for placing markers by frequency."""

    def __init__(self, state: Session, parent: QWidget | None = None, *, controller=None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.entry = QLineEdit()
        self.entry.setPlaceholderText("Frequency, e.g. 470 MHz")
        self.entry.setClearButtonEnabled(True)
        self.add_button = QPushButton("Add marker")
        self.message = QLabel("")
        self.message.setObjectName("hint")
        quiet_label(self.message)
        self.message.setWordWrap(True)
        # What band searches found (edges, width, centre); follows the markers as they move.
        self.found = QLabel("")
        self.found.setObjectName("found")
        self.found.setWordWrap(True)
        self.found.setTextInteractionFlags(Qt.TextSelectableByMouse)
        self.rows = MarkerRows(self)
        self.table = QTableView()
        self.table.setModel(self.rows)
        self.table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.table.setSelectionMode(QAbstractItemView.ContiguousSelection)
        self.table.setWordWrap(False)
        # Column widths follow the contents when rows come or go, and otherwise once the table
        # has been still for a quarter of a second (not on every step of a drag: measuring every
        # cell at each step is what makes a table feel slow).
        self._widths_timer = QTimer(self)
        self._widths_timer.setSingleShot(True)
        self._widths_timer.setInterval(250)
        self._widths_timer.timeout.connect(self._fit_columns)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.Interactive)
        self.table.horizontalHeader().setStretchLastSection(False)
        self.table.verticalHeader().setDefaultSectionSize(22)
        self.table.setAlternatingRowColors(True)
        self.delta_a = QComboBox()
        self.delta_b = QComboBox()
        self.copy_button = QPushButton("Copy table")
        self.copy_button.setToolTip("Copy every cell as tab-separated text, for a spreadsheet")
        self.remove_button = QPushButton("Remove marker")
        self.clear_button = QPushButton("Remove all")

        self.entry.setMinimumWidth(150)
        self.entry.setMaximumWidth(260)
        # Two short rows rather than one long one: a single row of every control made the
        # window at least 1,250 px wide, wider than a 1280×800 laptop leaves for it.
        row = QHBoxLayout()
        row.addWidget(self.entry, 1)
        row.addWidget(self.add_button)
        self.find_button = QPushButton("Find")
        self.find_button.setToolTip("Place markers where the current trace has its best match, "
                                    "its resonances, its largest |Z| or the edges of a VSWR band")
        from PySide6.QtWidgets import QMenu

        # Filled when first opened: start-up does not pay for a menu nobody has opened yet.
        self.find_menu = QMenu(self.find_button)
        self.find_menu.aboutToShow.connect(self._fill_find_menu)
        self.find_button.setMenu(self.find_menu)
        row.addWidget(self.find_button)
        row.addStretch(1)
        row.addWidget(self.remove_button)
        row.addWidget(self.clear_button)
        row2 = QHBoxLayout()
        row2.addWidget(QLabel("Difference: marker"))
        row2.addWidget(self.delta_b)
        row2.addWidget(QLabel("− marker"))
        row2.addWidget(self.delta_a)
        row2.addStretch(1)
        row2.addWidget(self.copy_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addLayout(row)
        layout.addLayout(row2)
        layout.addWidget(self.message)
        layout.addWidget(self.found)
        layout.addWidget(self.table, 1)
        self.message.hide()
        self.found.hide()

        self._scene = None
        self._combos: tuple | None = None
        self._had_markers: bool | None = None
        self.entry.returnPressed.connect(self.add_from_entry)
        self.add_button.clicked.connect(self.add_from_entry)
        self.copy_button.clicked.connect(self.copy_to_clipboard)
        self.remove_button.clicked.connect(self._remove_current)
        self.clear_button.clicked.connect(state.clear_markers)
        self.delta_a.currentIndexChanged.connect(lambda _i: self._on_delta_chosen())
        self.delta_b.currentIndexChanged.connect(lambda _i: self._on_delta_chosen())
        self.table.selectionModel().currentRowChanged.connect(self._on_current_row)
        self.table.setContextMenuPolicy(Qt.CustomContextMenu)
        self.table.customContextMenuRequested.connect(
            lambda pos: self.context_menu(self.table.rowAt(pos.y())).exec(self.table.viewport().mapToGlobal(pos)))
        # The window's scene controller hands the table every Scene; made on its own (a
        # test, a small tool), the table has a controller of its own.
        self.controller = controller_for(state, self, controller)
        self.controller.attach(self)

    # ---------------------------------------------------------------- public
    def add_from_entry(self) -> int | None:
        """Place a marker on the current trace at the typed frequency; problems show below the entry."""
        from refplane.analysis.units import parse_frequency

        text = self.entry.text().strip()
        if not text:
            return None
        tid = self.state.current_trace
        if tid == -1:
            self._say("Open a sweep first.")
            return None
        try:
            mid = self.state.add_marker(tid, parse_frequency(text))
        except AnalysisError as exc:
            self._say(str(exc))
            return None
        self._say("")
        self.entry.clear()
        return mid

    def row_of(self, marker_id: int) -> int:
        """Table row of a marker."""
        return self.rows.row_of(("marker", marker_id))

    def header(self, row: int) -> str:
        """The header of a row as shown ("1", "2 · best match", "Δ", "1 model")."""
        return self.rows.headerData(row, Qt.Vertical)

    def cells(self, marker_id: int) -> dict[str, str]:
        """What the table shows for a marker, column label → text (without the trace column)."""
        cells = self.rows.cells(self.row_of(marker_id))
        cells.pop("Trace", None)
        return cells

    def model_cells(self, marker_id: int, overlay: str) -> dict[str, str]:
        """What the model row of ``overlay`` at a marker shows, column label → text."""
        cells = self.rows.cells(self.rows.row_of(("model", marker_id, overlay)))
        cells.pop("Trace", None)
        return cells

    def delta_row(self) -> dict[str, str]:
        """What the difference row shows, column label → text (empty when not shown)."""
        try:
            cells = self.rows.cells(self.rows.row_of(("difference",)))
        except ValueError:
            return {}
        return {label: text for label, text in cells.items() if text}

    def as_tsv(self, delimiter: str = "\t") -> str:
        """The table as tab-separated numbers a spreadsheet computes with: units in the header
        row, one quantity per column, plain ASCII minus, no thousands separators
        (``delimiter=","`` gives the same as CSV)."""
        from refplane.session.present import difference_values, sheet_rows, sheet_text

        scene = self.controller.scene()
        rows = [(str(m.number), scene.trace(m.trace_id).label, m.readout) for m in scene.markers]
        if scene.delta is not None:
            a, b = scene.marker(scene.delta.a), scene.marker(scene.delta.b)
            rows.append(("Difference", scene.delta.label, difference_values(a.readout, b.readout)))
        rows += [(f"{m.number} model", name, r) for m in scene.markers for name, r in m.model_readouts.items()]
        return sheet_text(sheet_rows(rows), delimiter=delimiter)

    def copy_to_clipboard(self) -> None:
        QGuiApplication.clipboard().setText(self.as_tsv())
        self._say("Table copied: numbers in the units named in its first row.")

    def _say(self, text: str, passing: bool = False) -> None:
        """Show a line above the table; ``passing`` news goes after a few seconds (it would
        otherwise keep a row of the table out of sight on a small screen)."""
        self.message.setText(text)
        self.message.setVisible(bool(text))
        timer = getattr(self, "_message_timer", None)
        if timer is None:
            from PySide6.QtCore import QTimer

            # Owned by the panel: it goes when the panel goes.
            timer = self._message_timer = QTimer(self)
            timer.setSingleShot(True)
            timer.timeout.connect(lambda: self._say(""))
        if passing and text:
            timer.start(6000)
        else:
            timer.stop()

    # ------------------------------------------------------------- the scene
    def set_scene(self, scene) -> None:
        """Show a resolved scene: the readouts, the difference row, the model rows, the
        difference choosers, what the buttons can do and what searches found.

        Only what changed is redrawn; a drag step changes the dragged marker's cells alone.
        Column widths follow the contents at once when rows or columns come or go, else once
        the table has been still for a moment (not on every step of a drag: measuring every
        cell at each step is what makes a table feel slow)."""
        if scene is self._scene:
            return
        self._scene = scene
        if self.rows.set_scene(scene):
            self._fit_columns()
        else:
            self._widths_timer.start()
        markers = scene.markers
        delta = scene.delta
        combos = (tuple((m.id, m.number) for m in markers), (delta.a, delta.b) if delta else None)
        if combos != self._combos:
            self._combos = combos
            self._fill_combos(markers, delta)
        if bool(markers) != self._had_markers:
            self._had_markers = bool(markers)
            self._explain_buttons(bool(markers))
        lines = list(scene.found)
        if scene.chart_z0_ohm is not None:
            lines.insert(0, f"Readings against {scene.chart_z0_ohm:g} Ω, the chart's reference "
                            "(View ▸ Chart reference impedance…).")
        found = "\n".join(lines)
        if found != self.found.text():
            self.found.setText(found)
        self.found.setVisible(bool(found))

    def _fit_columns(self) -> None:
        self._widths_timer.stop()
        self.table.resizeColumnsToContents()

    def _fill_combos(self, markers, delta) -> None:
        show_delta = len(markers) >= 2
        for combo, chosen in ((self.delta_a, delta.a if delta else None), (self.delta_b, delta.b if delta else None)):
            combo.blockSignals(True)
            combo.clear()
            for m in markers:
                combo.addItem(str(m.number), m.id)
            combo.setCurrentIndex(combo.findData(chosen) if chosen is not None else -1)
            combo.setEnabled(show_delta)
            combo.setToolTip("The difference row shows marker b − marker a" if show_delta
                             else "Needs two markers")
            combo.blockSignals(False)

    def _explain_buttons(self, any_marker: bool) -> None:
        # A control that cannot act says why in its tooltip (shown on a disabled control too).
        why = "" if any_marker else "No marker yet: click near a trace, type a frequency, or use Find. "
        for button, does in ((self.remove_button, "Remove the current marker (Ctrl+Z brings it back)"),
                             (self.clear_button, "Remove every marker (Ctrl+Z brings them back)"),
                             (self.copy_button, "Copy every cell as numbers for a spreadsheet")):
            button.setEnabled(any_marker)
            button.setToolTip(why + ("" if any_marker else "(") + does + ("" if any_marker else ")"))

    def _fill_find_menu(self) -> None:
        if not self.find_menu.actions():
            from refplane.views.find_menu import fill_find_menu

            fill_find_menu(self.find_menu, self.state, self, self._say, controller=self.controller)

    def _on_delta_chosen(self) -> None:
        a, b = self.delta_a.currentData(), self.delta_b.currentData()
        if a is not None and b is not None:
            self.state.set_display(delta_markers=(a, b))

    def context_menu(self, row: int):
        """The right-click menu of a row of the table (any row, or −1 for none)."""
        from PySide6.QtWidgets import QMenu

        menu = QMenu(self)
        scene = self.controller.scene()
        kind = self.rows.row(row).kind if 0 <= row < self.rows.rowCount() else None
        if kind == "marker":
            mid = self.rows.row(row).marker_id
            m = scene.marker(mid)
            menu.addAction(f"Remove marker {m.number} (Ctrl+Z brings it back)", lambda: self.state.remove_marker(mid))
            if m.follows:
                menu.addAction(f"Stop following the {m.follows_text}", lambda: self.state.unfollow_marker(mid))
            others = [x for x in scene.markers if x.id != mid]
            if others:
                diff = menu.addMenu("Difference from this marker to")
                for other in others:
                    diff.addAction(f"marker {other.number}",
                                   lambda a=mid, b=other.id: self.state.set_display(delta_markers=(a, b)))
            menu.addSeparator()
        menu.addAction("Copy table", self.copy_to_clipboard).setEnabled(bool(scene.markers))
        menu.addAction("Remove all markers", self.state.clear_markers).setEnabled(bool(scene.markers))
        return menu

    def _remove_current(self) -> None:
        if self.state.current_marker != -1:
            self.state.remove_marker(self.state.current_marker)

    def _on_current_row(self, current, _previous) -> None:
        if self.rows.changing or not current.isValid():
            return
        r = self.rows.row(current.row())
        if r.kind == "marker" and self.state.current_marker != r.marker_id:
            self.state.set_current_marker(r.marker_id)
