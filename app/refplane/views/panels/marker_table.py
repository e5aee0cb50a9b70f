"""Marker readouts: one row per marker, a difference row, typed frequencies, copy as text.

Every cell comes from the session's resolved scene (:mod:`refplane.session.present` rules),
so the table shows what ``refplane read`` prints at the same frequency. When the marker's trace carries a fitted model (an overlay),
a row below the markers shows the model's reading at the same frequency, for comparison.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QPushButton, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from refplane.views.binding import bind
from refplane.analysis.errors import AnalysisError
from refplane.session.model import Session
from refplane.views.theme import quiet_label


class MarkerTable(QWidget):
    """The marker readout table with an entry line for placing markers by frequency."""

    def __init__(self, state: Session, parent: QWidget | None = None):
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
        self.table = QTableWidget(0, 0)
        self.table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.table.setSelectionMode(QAbstractItemView.ContiguousSelection)
        # Column widths follow the contents after each change that ends (not on every step of
        # a drag: measuring every cell at each step is what makes a table feel slow).
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

        self._ids: list[int] = []
        self._cols: list[str] = []
        self._model_rows: list[tuple[int, str]] = []  # (marker id, overlay name), after the markers
        self.entry.returnPressed.connect(self.add_from_entry)
        self.add_button.clicked.connect(self.add_from_entry)
        self.copy_button.clicked.connect(self.copy_to_clipboard)
        self.remove_button.clicked.connect(self._remove_current)
        self.clear_button.clicked.connect(state.clear_markers)
        self.delta_a.currentIndexChanged.connect(lambda _i: self._on_delta_chosen())
        self.delta_b.currentIndexChanged.connect(lambda _i: self._on_delta_chosen())
        bind(self, state.displayChanged, self._on_display_changed)
        self.table.currentCellChanged.connect(self._on_current_cell)
        self.table.setContextMenuPolicy(Qt.CustomContextMenu)
        self.table.customContextMenuRequested.connect(
            lambda pos: self.context_menu(self.table.rowAt(pos.y())).exec(self.table.viewport().mapToGlobal(pos)))
        # The ± of every reading follows the uncertainty settings.
        bind(self, state.toolChanged, lambda name: name == "uncertainty" and self.rebuild())
        bind(self, state.markersChanged, self.rebuild)
        bind(self, state.tracesChanged, self.rebuild)
        bind(self, state.traceChanged, lambda _id: self.rebuild())
        bind(self, state.offsetsChanged, lambda _id: self.rebuild())
        bind(self, state.overlaysChanged, lambda _id: self.rebuild())
        bind(self, state.markerMoving, self.refresh_marker)
        bind(self, state.markerMoved, self._on_marker_moved)
        bind(self, state.currentMarkerChanged, self._select_current)
        self.rebuild()

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
        return self._ids.index(marker_id)

    def cells(self, marker_id: int) -> dict[str, str]:
        """What the table shows for a marker, column label → text (without the trace column)."""
        row = self.row_of(marker_id)
        return {label: self.table.item(row, col).text()
                for col, label in enumerate(self._cols) if label != "Trace"}

    def model_cells(self, marker_id: int, overlay: str) -> dict[str, str]:
        """What the model row of ``overlay`` at a marker shows, column label → text."""
        row = self._first_model_row() + self._model_rows.index((marker_id, overlay))
        return {label: self.table.item(row, col).text()
                for col, label in enumerate(self._cols) if label != "Trace"}

    def _first_model_row(self) -> int:
        return len(self._ids) + (1 if len(self._ids) >= 2 else 0)

    def delta_row(self) -> dict[str, str]:
        """What the difference row shows, column label → text (empty when not shown)."""
        row = len(self._ids)
        if self.table.rowCount() <= row:
            return {}
        return {label: self.table.item(row, col).text() for col, label in enumerate(self._cols)
                if self.table.item(row, col) is not None and self.table.item(row, col).text()}

    def as_tsv(self, delimiter: str = "\t") -> str:
        """The table as tab-separated numbers a spreadsheet computes with: units in the header
        row, one quantity per column, plain ASCII minus, no thousands separators
        (``delimiter=","`` gives the same as CSV)."""
        from refplane.session.present import difference_values, sheet_rows, sheet_text

        scene = self.state.scene()
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

    # ----------------------------------------------------------------- slots
    def rebuild(self) -> None:
        scene = self.state.scene()
        markers = scene.markers
        self._ids = [m.id for m in markers]
        self._cols = ["Trace"] + (list(markers[0].cells) if markers else [])
        show_delta = len(markers) >= 2
        self._model_rows = [(m.id, ov.name) for m in markers
                            for ov in scene.trace(m.trace_id).overlays]
        self.table.setColumnCount(len(self._cols) if markers else 0)
        self.table.setRowCount(len(markers) + (1 if show_delta else 0) + len(self._model_rows))
        self.table.setHorizontalHeaderLabels(self._cols)
        numbers = {m.id: str(m.number) for m in markers}
        headers = {m.id: f"{m.number} · {m.follows_text}" if m.follows_text else str(m.number) for m in markers}
        rows = ([headers[m.id] for m in markers] + (["Difference"] if show_delta else [])
                + [f"{numbers[mid]} model" for mid, _name in self._model_rows])
        self.table.setVerticalHeaderLabels(rows)
        for m in markers:
            self.refresh_marker(m.id)
        delta = scene.delta
        for combo, chosen in ((self.delta_a, delta.a if delta else None), (self.delta_b, delta.b if delta else None)):
            combo.blockSignals(True)
            combo.clear()
            for m in markers:
                combo.addItem(str(m.number), m.id)
            combo.setCurrentIndex(combo.findData(chosen) if chosen is not None else -1)
            combo.setEnabled(show_delta)
            combo.blockSignals(False)
        # A control that cannot act says why in its tooltip (shown on a disabled control too).
        why = "" if markers else "No marker yet: click near a trace, type a frequency, or use Find. "
        for button, does in ((self.remove_button, "Remove the current marker (Ctrl+Z brings it back)"),
                             (self.clear_button, "Remove every marker (Ctrl+Z brings them back)"),
                             (self.copy_button, "Copy every cell as numbers for a spreadsheet")):
            button.setEnabled(bool(markers))
            button.setToolTip(why + ("" if markers else "(") + does + ("" if markers else ")"))
        for combo in (self.delta_a, self.delta_b):
            combo.setToolTip("The difference row shows marker b − marker a" if show_delta
                             else "Needs two markers")
        self._fill_delta()
        self._select_current(self.state.current_marker)
        self.table.resizeColumnsToContents()
        lines = list(scene.found)
        if scene.chart_z0_ohm is not None:
            lines.insert(0, f"Readings against {scene.chart_z0_ohm:g} Ω, the chart's reference "
                            "(View ▸ Chart reference impedance…).")
        self.found.setText("\n".join(lines))
        self.found.setVisible(bool(lines))

    def refresh_marker(self, marker_id: int) -> None:
        if marker_id not in self._ids:
            return
        row = self._ids.index(marker_id)
        scene = self.state.scene()
        m = scene.marker(marker_id)
        values = {"Trace": scene.trace(m.trace_id).label, **m.cells}
        for col, label in enumerate(self._cols):
            self._set(row, col, values.get(label, ""), left=(label == "Trace"))
        if any(mid == marker_id for mid, _name in self._model_rows):
            models = m.model_cells
            first = self._first_model_row()
            for i, (mid, name) in enumerate(self._model_rows):
                if mid != marker_id:
                    continue
                cells = {"Trace": name, **models.get(name, {})}
                for col, label in enumerate(self._cols):
                    self._set(first + i, col, cells.get(label, "—" if label != "Trace" else ""),
                              left=(label == "Trace"))
        self._fill_delta()

    def _fill_find_menu(self) -> None:
        if not self.find_menu.actions():
            from refplane.views.find_menu import fill_find_menu

            fill_find_menu(self.find_menu, self.state, self, self._say)

    def _on_display_changed(self, name: str) -> None:
        if name == "delta_markers":
            self._fill_delta()
        elif name == "chart_z0_ohm":
            self.rebuild()  # every reading is now against the chart's reference

    def _on_marker_moved(self, _marker_id: int) -> None:
        self.table.resizeColumnsToContents()
        scene = self.state.scene()
        lines = list(scene.found)
        if scene.chart_z0_ohm is not None:
            lines.insert(0, f"Readings against {scene.chart_z0_ohm:g} Ω, the chart's reference "
                            "(View ▸ Chart reference impedance…).")
        found = "\n".join(lines)
        if found != self.found.text():
            self.found.setText(found)
            self.found.setVisible(bool(found))

    def _set(self, row: int, col: int, text: str, left: bool = False) -> None:
        item = self.table.item(row, col)
        if item is None:
            item = QTableWidgetItem(text)
            item.setTextAlignment((Qt.AlignLeft if left else Qt.AlignRight) | Qt.AlignVCenter)
            self.table.setItem(row, col, item)
        elif item.text() != text:
            item.setText(text)

    def _on_delta_chosen(self) -> None:
        a, b = self.delta_a.currentData(), self.delta_b.currentData()
        if a is not None and b is not None:
            self.state.set_display(delta_markers=(a, b))

    def _fill_delta(self) -> None:
        row = len(self._ids)
        if self.table.rowCount() <= row:
            return
        delta = self.state.scene().delta
        if delta is None or delta.a not in self._ids or delta.b not in self._ids:
            return
        for combo, chosen in ((self.delta_a, delta.a), (self.delta_b, delta.b)):
            if combo.currentData() != chosen:
                combo.blockSignals(True)
                combo.setCurrentIndex(combo.findData(chosen))
                combo.blockSignals(False)
        cells = {**delta.cells, "Trace": delta.label}
        self.table.verticalHeaderItem(row).setText("Δ")
        for col, label in enumerate(self._cols):
            self._set(row, col, cells.get(label, ""), left=(label == "Trace"))

    def context_menu(self, row: int):
        """The right-click menu of a row of the table (any row, or −1 for none)."""
        from PySide6.QtWidgets import QMenu

        menu = QMenu(self)
        if 0 <= row < len(self._ids):
            mid = self._ids[row]
            m = self.state.scene().marker(mid)
            menu.addAction(f"Remove marker {m.number} (Ctrl+Z brings it back)", lambda: self.state.remove_marker(mid))
            if m.follows:
                menu.addAction(f"Stop following the {m.follows_text}", lambda: self.state.unfollow_marker(mid))
            others = [x for x in self.state.scene().markers if x.id != mid]
            if others:
                diff = menu.addMenu("Difference from this marker to")
                for other in others:
                    diff.addAction(f"marker {other.number}",
                                   lambda a=mid, b=other.id: self.state.set_display(delta_markers=(a, b)))
            menu.addSeparator()
        menu.addAction("Copy table", self.copy_to_clipboard).setEnabled(bool(self._ids))
        menu.addAction("Remove all markers", self.state.clear_markers).setEnabled(bool(self._ids))
        return menu

    def _remove_current(self) -> None:
        if self.state.current_marker != -1:
            self.state.remove_marker(self.state.current_marker)

    def _on_current_cell(self, row: int, col: int, *_):
        if 0 <= row < len(self._ids) and self.state.current_marker != self._ids[row]:
            self.state.set_current_marker(self._ids[row])

    def _select_current(self, marker_id: int) -> None:
        for r in range(len(self._ids)):
            header = self.table.verticalHeaderItem(r)
            if header is not None:
                font = header.font()
                font.setBold(self._ids[r] == marker_id)
                header.setFont(font)
