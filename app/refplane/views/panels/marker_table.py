"""Marker readouts: one column per marker, a difference column, typed frequencies, copy as text.

Every cell is exactly :func:`refplane.analysis.readings.readout_cells` of the marker's
reading (through :meth:`ViewState.marker_cells`), so the table shows what ``refplane read``
prints at the same frequency.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QPushButton, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.views.state import ViewState


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
        self.message.setWordWrap(True)
        self.table = QTableWidget(0, 0)
        self.table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        self.table.setSelectionMode(QAbstractItemView.ContiguousSelection)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        self.table.horizontalHeader().setStretchLastSection(True)
        self.table.verticalHeader().setDefaultSectionSize(22)
        self.delta_a = QComboBox()
        self.delta_b = QComboBox()
        self.copy_button = QPushButton("Copy table")
        self.copy_button.setToolTip("Copy every cell as tab-separated text, for a spreadsheet")
        self.remove_button = QPushButton("Remove marker")
        self.clear_button = QPushButton("Remove all")

        entry_row = QHBoxLayout()
        entry_row.addWidget(self.entry, 1)
        entry_row.addWidget(self.add_button)
        delta_row = QHBoxLayout()
        delta_row.addWidget(QLabel("Difference"))
        delta_row.addWidget(self.delta_b)
        delta_row.addWidget(QLabel("−"))
        delta_row.addWidget(self.delta_a)
        delta_row.addStretch(1)
        delta_row.addWidget(self.remove_button)
        delta_row.addWidget(self.clear_button)
        delta_row.addWidget(self.copy_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addLayout(entry_row)
        layout.addWidget(self.message)
        layout.addWidget(self.table, 1)
        layout.addLayout(delta_row)

        self._ids: list[int] = []
        self._rows: list[str] = []
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
        state.markerMoving.connect(self.refresh_marker)
        state.markerMoved.connect(self.refresh_marker)
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
            self.message.setText("Open a sweep first.")
            return None
        try:
            mid = self.state.add_marker(tid, parse_frequency(text))
        except AnalysisError as exc:
            self.message.setText(str(exc))
            return None
        self.message.setText("")
        self.entry.clear()
        return mid

    def column_of(self, marker_id: int) -> int:
        """Table column of a marker."""
        return self._ids.index(marker_id)

    def cells(self, marker_id: int) -> dict[str, str]:
        """What the table shows for a marker, row label → text (without the trace row)."""
        col = self.column_of(marker_id)
        return {label: self.table.item(row, col).text()
                for row, label in enumerate(self._rows) if label != "Trace"}

    def delta_column(self) -> dict[str, str]:
        """What the difference column shows, row label → text (empty when not shown)."""
        col = len(self._ids)
        if self.table.columnCount() <= col:
            return {}
        return {label: self.table.item(row, col).text() for row, label in enumerate(self._rows)
                if self.table.item(row, col) is not None and self.table.item(row, col).text()}

    def as_tsv(self) -> str:
        """The whole table as tab-separated text, headers first."""
        headers = [""] + [self.table.horizontalHeaderItem(c).text() for c in range(self.table.columnCount())]
        lines = ["\t".join(headers)]
        for row, label in enumerate(self._rows):
            cells = [label] + [(self.table.item(row, c).text() if self.table.item(row, c) else "")
                               for c in range(self.table.columnCount())]
            lines.append("\t".join(cells))
        return "\n".join(lines) + "\n"

    def copy_to_clipboard(self) -> None:
        QGuiApplication.clipboard().setText(self.as_tsv())
        self.message.setText("Table copied as tab-separated text.")

    # ----------------------------------------------------------------- slots
    def rebuild(self) -> None:
        markers = self.state.markers()
        self._ids = [m.id for m in markers]
        self._rows = ["Trace"] + (list(self.state.marker_cells(markers[0].id)) if markers else [])
        show_delta = len(markers) >= 2
        self.table.setRowCount(len(self._rows) if markers else 0)
        self.table.setColumnCount(len(markers) + (1 if show_delta else 0))
        self.table.setVerticalHeaderLabels(self._rows)
        headers = [f"Marker {i}" for i in range(1, len(markers) + 1)] + (["Difference"] if show_delta else [])
        self.table.setHorizontalHeaderLabels(headers)
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

    def refresh_marker(self, marker_id: int) -> None:
        if marker_id not in self._ids:
            return
        col = self._ids.index(marker_id)
        m = self.state.marker(marker_id)
        t = self.state.trace(m.trace_id)
        values = {"Trace": f"{t.name} · S{t.port}{t.port}", **self.state.marker_cells(marker_id)}
        for row, label in enumerate(self._rows):
            self._set(row, col, values.get(label, ""))
        self._fill_delta()

    def _set(self, row: int, col: int, text: str) -> None:
        item = self.table.item(row, col)
        if item is None:
            item = QTableWidgetItem(text)
            item.setTextAlignment(Qt.AlignRight | Qt.AlignVCenter)
            self.table.setItem(row, col, item)
        elif item.text() != text:
            item.setText(text)

    def _fill_delta(self) -> None:
        from refplane.views.marker_delta import delta_cells

        col = len(self._ids)
        if self.table.columnCount() <= col:
            return
        a, b = self.delta_a.currentData(), self.delta_b.currentData()
        if a is None or b is None or a not in self._ids or b not in self._ids:
            return
        cells = delta_cells(self.state.marker_readout(a), self.state.marker_readout(b))
        na, nb = self._ids.index(a) + 1, self._ids.index(b) + 1
        self.table.horizontalHeaderItem(col).setText(f"Difference {nb} − {na}")
        for row, label in enumerate(self._rows):
            self._set(row, col, cells.get(label, ""))

    def _remove_current(self) -> None:
        if self.state.current_marker != -1:
            self.state.remove_marker(self.state.current_marker)

    def _on_current_cell(self, row: int, col: int, *_):
        if 0 <= col < len(self._ids) and self.state.current_marker != self._ids[col]:
            self.state.set_current_marker(self._ids[col])

    def _select_current(self, marker_id: int) -> None:
        for c in range(len(self._ids)):
            header = self.table.horizontalHeaderItem(c)
            if header is not None:
                font = header.font()
                font.setBold(self._ids[c] == marker_id)
                header.setFont(font)
