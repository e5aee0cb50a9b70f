"""Marker readouts: one row per marker, a difference row, typed frequencies, copy as text.

Every cell is exactly :func:`refplane.analysis.readings.readout_cells` of the marker's
reading (through :meth:`ViewState.marker_cells`), so the table shows what ``refplane read``
prints at the same frequency. When the marker's trace carries a fitted model (an overlay),
a row below the markers shows the model's reading at the same frequency, for comparison.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QPushButton, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.views.state import ViewState
from refplane.views.theme import quiet_label


class MarkerTable(QWidget):
    """The marker readout table with an entry line for placing markers by frequency."""

    def __init__(self, state: ViewState, parent: QWidget | None = None):
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

        self.entry.setMinimumWidth(170)
        self.entry.setMaximumWidth(260)
        row = QHBoxLayout()
        row.addWidget(self.entry, 1)
        row.addWidget(self.add_button)
        row.addSpacing(18)
        row.addWidget(QLabel("Difference: marker"))
        row.addWidget(self.delta_b)
        row.addWidget(QLabel("− marker"))
        row.addWidget(self.delta_a)
        row.addStretch(1)
        row.addWidget(self.remove_button)
        row.addWidget(self.clear_button)
        row.addWidget(self.copy_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addLayout(row)
        layout.addWidget(self.message)
        layout.addWidget(self.table, 1)
        self.message.hide()

        self._ids: list[int] = []
        self._cols: list[str] = []
        self._model_rows: list[tuple[int, str]] = []  # (marker id, overlay name), after the markers
        self.entry.returnPressed.connect(self.add_from_entry)
        self.add_button.clicked.connect(self.add_from_entry)
        self.copy_button.clicked.connect(self.copy_to_clipboard)
        self.remove_button.clicked.connect(self._remove_current)
        self.clear_button.clicked.connect(state.clear_markers)
        self.delta_a.currentIndexChanged.connect(lambda _i: self._fill_delta())
        self.delta_b.currentIndexChanged.connect(lambda _i: self._fill_delta())
        self.table.currentCellChanged.connect(self._on_current_cell)
        state.markersChanged.connect(self.rebuild)
        state.tracesChanged.connect(self.rebuild)
        state.traceChanged.connect(lambda _id: self.rebuild())
        state.offsetsChanged.connect(lambda _id: self.rebuild())
        state.overlaysChanged.connect(lambda _id: self.rebuild())
        state.markerMoving.connect(self.refresh_marker)
        state.markerMoved.connect(lambda _id: self.table.resizeColumnsToContents())
        state.currentMarkerChanged.connect(self._select_current)
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

    def as_tsv(self) -> str:
        """The whole table as tab-separated text: a header line, then a line per row."""
        lines = ["\t".join([""] + self._cols)]
        for row in range(self.table.rowCount()):
            head = self.table.verticalHeaderItem(row).text()
            cells = [(self.table.item(row, c).text() if self.table.item(row, c) else "")
                     for c in range(self.table.columnCount())]
            lines.append("\t".join([head] + cells))
        return "\n".join(lines) + "\n"

    def copy_to_clipboard(self) -> None:
        QGuiApplication.clipboard().setText(self.as_tsv())
        self._say("Table copied as tab-separated text.")

    def _say(self, text: str) -> None:
        self.message.setText(text)
        self.message.setVisible(bool(text))

    # ----------------------------------------------------------------- slots
    def rebuild(self) -> None:
        markers = self.state.markers()
        self._ids = [m.id for m in markers]
        self._cols = ["Trace"] + (list(self.state.marker_cells(markers[0].id)) if markers else [])
        show_delta = len(markers) >= 2
        self._model_rows = [(m.id, name) for m in markers
                            for name in self.state.trace(m.trace_id).overlays]
        self.table.setColumnCount(len(self._cols) if markers else 0)
        self.table.setRowCount(len(markers) + (1 if show_delta else 0) + len(self._model_rows))
        self.table.setHorizontalHeaderLabels(self._cols)
        numbers = {m.id: str(i) for i, m in enumerate(markers, start=1)}
        rows = ([numbers[m.id] for m in markers] + (["Difference"] if show_delta else [])
                + [f"{numbers[mid]} model" for mid, _name in self._model_rows])
        self.table.setVerticalHeaderLabels(rows)
        for m in markers:
            self.refresh_marker(m.id)
        for combo, default in ((self.delta_a, -2), (self.delta_b, -1)):
            combo.blockSignals(True)
            previous = combo.currentData()
            combo.clear()
            for i, m in enumerate(markers, start=1):
                combo.addItem(str(i), m.id)
            index = combo.findData(previous)
            combo.setCurrentIndex(index if index >= 0 else (len(markers) + default if len(markers) >= 2 else -1))
            combo.setEnabled(show_delta)
            combo.blockSignals(False)
        for button in (self.remove_button, self.clear_button, self.copy_button):
            button.setEnabled(bool(markers))
        self._fill_delta()
        self._select_current(self.state.current_marker)
        self.table.resizeColumnsToContents()

    def refresh_marker(self, marker_id: int) -> None:
        if marker_id not in self._ids:
            return
        row = self._ids.index(marker_id)
        m = self.state.marker(marker_id)
        t = self.state.trace(m.trace_id)
        values = {"Trace": f"{t.name} · S{t.port}{t.port}", **self.state.marker_cells(marker_id)}
        for col, label in enumerate(self._cols):
            self._set(row, col, values.get(label, ""), left=(label == "Trace"))
        if any(mid == marker_id for mid, _name in self._model_rows):
            models = self.state.marker_model_cells(marker_id)
            first = self._first_model_row()
            for i, (mid, name) in enumerate(self._model_rows):
                if mid != marker_id:
                    continue
                cells = {"Trace": name, **models.get(name, {})}
                for col, label in enumerate(self._cols):
                    self._set(first + i, col, cells.get(label, "—" if label != "Trace" else ""),
                              left=(label == "Trace"))
        self._fill_delta()

    def _set(self, row: int, col: int, text: str, left: bool = False) -> None:
        item = self.table.item(row, col)
        if item is None:
            item = QTableWidgetItem(text)
            item.setTextAlignment((Qt.AlignLeft if left else Qt.AlignRight) | Qt.AlignVCenter)
            self.table.setItem(row, col, item)
        elif item.text() != text:
            item.setText(text)

    def _fill_delta(self) -> None:
        from refplane.views.marker_delta import delta_cells

        row = len(self._ids)
        if self.table.rowCount() <= row:
            return
        a, b = self.delta_a.currentData(), self.delta_b.currentData()
        if a is None or b is None or a not in self._ids or b not in self._ids:
            return
        cells = delta_cells(self.state.marker_readout(a), self.state.marker_readout(b))
        na, nb = self._ids.index(a) + 1, self._ids.index(b) + 1
        cells["Trace"] = f"marker {nb} − marker {na}"
        self.table.verticalHeaderItem(row).setText("Δ")
        for col, label in enumerate(self._cols):
            self._set(row, col, cells.get(label, ""), left=(label == "Trace"))

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
