"""The list of open traces: show/hide, rename, recolour, choose the port, close."""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QColor, QIcon, QPixmap
from PySide6.QtWidgets import (QAbstractItemView, QColorDialog, QComboBox, QHeaderView,
                               QMenu, QTableWidget, QTableWidgetItem, QToolButton, QVBoxLayout, QWidget)

from refplane.views.binding import bind
from refplane.session.model import Session


def swatch(colour: str, size: int = 14) -> QIcon:
    """A small square of colour, for lists and buttons."""
    pix = QPixmap(size, size)
    pix.fill(QColor(colour))
    return QIcon(pix)


class TraceList(QWidget):
    """One row per open trace: a check box to show it, its name (double-click to rename),
    the port whose reflection is drawn, its colour, and a button to close it."""

    closeRequested = Signal(int)

    COL_NAME, COL_PORT, COL_COLOUR, COL_CLOSE = range(4)

    def __init__(self, state: Session, parent: QWidget | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.table = QTableWidget(0, 4)
        self.table.setHorizontalHeaderLabels(["Trace", "Port", "", ""])
        self.table.verticalHeader().setVisible(False)
        self.table.setSelectionBehavior(QAbstractItemView.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.DoubleClicked | QAbstractItemView.EditKeyPressed)
        self.table.setShowGrid(False)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(self.COL_NAME, QHeaderView.Stretch)
        for col in (self.COL_PORT, self.COL_COLOUR, self.COL_CLOSE):
            header.setSectionResizeMode(col, QHeaderView.ResizeToContents)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addWidget(self.table)
        self._ids: list[int] = []
        self._widgets: dict[int, tuple] = {}
        self._updating = False

        self.table.setContextMenuPolicy(Qt.CustomContextMenu)
        self.table.customContextMenuRequested.connect(
            lambda pos: self._exec_menu(self.context_menu(self.table.rowAt(pos.y())), pos))
        self.table.itemChanged.connect(self._on_item_changed)
        self.table.currentCellChanged.connect(self._on_current_cell)
        # Queued: the close button must not be deleted while its own click is being handled.
        self.closeRequested.connect(state.remove_trace, Qt.QueuedConnection)
        bind(self, state.tracesChanged, self.rebuild)
        bind(self, state.traceChanged, lambda _id: self.rebuild())
        bind(self, state.offsetsChanged, lambda _id: self.rebuild())
        bind(self, state.currentTraceChanged, self._select_current)
        self.rebuild()

    def row_of(self, trace_id: int) -> int:
        """The row showing a trace."""
        return self._ids.index(trace_id)

    def ask_colour(self, current: str) -> str | None:
        """Ask for a colour (a method so tests can replace the dialog)."""
        colour = QColorDialog.getColor(QColor(current), self, "Trace colour")
        return colour.name() if colour.isValid() else None

    def rebuild(self) -> None:
        self._updating = True
        try:
            traces = self.state.traces()
            ids = [t.id for t in traces]
            if ids != self._ids:
                # Rows changed: start the table afresh (closing a trace is rare and cheap).
                self.table.setRowCount(0)
                self._widgets.clear()
            self._ids = ids
            self.table.setRowCount(len(traces))
            for row, t in enumerate(traces):
                # Items are updated in place: this may run inside the item's own change signal.
                item = self.table.item(row, self.COL_NAME)
                if item is None:
                    item = QTableWidgetItem()
                    item.setFlags(Qt.ItemIsEnabled | Qt.ItemIsSelectable | Qt.ItemIsEditable
                                  | Qt.ItemIsUserCheckable)
                    self.table.setItem(row, self.COL_NAME, item)
                item.setText(t.name + ("  (offsets)" if t.corrected else ""))
                item.setCheckState(Qt.Checked if t.visible else Qt.Unchecked)
                item.setIcon(swatch(t.colour))
                item.setToolTip(t.source or t.name)
                self._row_widgets(row, t)
            self._select_current(self.state.current_trace)
        finally:
            self._updating = False

    def _row_widgets(self, row: int, t) -> None:
        # Cell widgets are made once per trace and then only updated: replacing a widget
        # inside its own signal (a port chosen, say) would delete it while it is in use.
        widgets = self._widgets.get(t.id)
        if widgets is None or widgets[0] != row:
            port = None
            if t.raw.n_ports > 1:
                port = QComboBox()
                for p in range(1, t.raw.n_ports + 1):
                    port.addItem(f"S{p}{p}", p)
                port.currentIndexChanged.connect(
                    lambda i, tid=t.id, c=port: self.state.set_port(tid, c.itemData(i)))
                self.table.setCellWidget(row, self.COL_PORT, port)
            else:
                self.table.removeCellWidget(row, self.COL_PORT)
                item = QTableWidgetItem("S11")
                item.setFlags(Qt.ItemIsEnabled | Qt.ItemIsSelectable)
                self.table.setItem(row, self.COL_PORT, item)
            colour = QToolButton()
            colour.setToolTip("Change colour")
            colour.clicked.connect(lambda _=False, tid=t.id: self._recolour(tid))
            self.table.setCellWidget(row, self.COL_COLOUR, colour)
            close = QToolButton()
            close.setText("✕")
            close.setToolTip("Close this trace")
            close.clicked.connect(lambda _=False, tid=t.id: self.closeRequested.emit(tid))
            self.table.setCellWidget(row, self.COL_CLOSE, close)
            widgets = self._widgets[t.id] = (row, port, colour, close)
        _, port, colour, _ = widgets
        if port is not None and port.currentIndex() != t.port - 1:
            port.blockSignals(True)
            port.setCurrentIndex(t.port - 1)
            port.blockSignals(False)
        colour.setIcon(swatch(t.colour))

    def context_menu(self, row: int) -> QMenu:
        """The right-click menu of a row (or of the empty list when ``row`` is −1)."""
        menu = QMenu(self)
        if not 0 <= row < len(self._ids):
            menu.addAction("No trace here: File ▸ Open sweeps… opens one").setEnabled(False)
            return menu
        tid = self._ids[row]
        t = self.state.trace(tid)
        menu.addAction("Make current", lambda: self.state.set_current_trace(tid))
        menu.addAction("Hide" if t.visible else "Show", lambda: self.state.set_visible(tid, not t.visible))
        menu.addAction("Rename…", lambda: self.table.editItem(self.table.item(row, self.COL_NAME)))
        menu.addAction("Change colour…", lambda: self._recolour(tid))
        menu.addSeparator()
        menu.addAction("Store as memory", lambda: self.state.store_memory(tid))
        find = menu.addMenu("Find")
        from refplane.views.find_menu import fill_find_menu

        def say(text, passing=False):
            window = self.window()
            if hasattr(window, "_say_found"):
                window._say_found(text, passing)
        fill_find_menu(find, self.state, self, say, trace_id=tid)
        menu.addSeparator()
        menu.addAction("Close (Ctrl+Z brings it back)", lambda: self.closeRequested.emit(tid))
        return menu

    def _exec_menu(self, menu: QMenu, pos) -> None:
        menu.exec(self.table.viewport().mapToGlobal(pos))

    def _recolour(self, trace_id: int) -> None:
        colour = self.ask_colour(self.state.trace(trace_id).colour)
        if colour:
            self.state.set_colour(trace_id, colour)

    def _on_item_changed(self, item: QTableWidgetItem) -> None:
        if self._updating or item.column() != self.COL_NAME:
            return
        tid = self._ids[item.row()]
        visible = item.checkState() == Qt.Checked
        text = item.text().replace("  (offsets)", "").strip()
        if visible != self.state.trace(tid).visible:
            self.state.set_visible(tid, visible)
        elif text and text != self.state.trace(tid).name:
            self.state.set_name(tid, text)

    def _on_current_cell(self, row: int, *_):
        if not self._updating and 0 <= row < len(self._ids):
            self.state.set_current_trace(self._ids[row])

    def _select_current(self, trace_id: int) -> None:
        if trace_id in self._ids:
            was = self._updating
            self._updating = True
            self.table.selectRow(self._ids.index(trace_id))
            self._updating = was
