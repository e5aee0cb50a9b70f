"""The list of open traces: show/hide, rename, recolour, choose the port, close.

A table view over :class:`~refplane.views.panels.trace_rows.TraceRows`; the rows follow the
session and edits go back through it. The port of a multi-port sweep is chosen in a combo box
that exists only while the choice is being made (a delegate), not one widget per row.
"""

from __future__ import annotations

from PySide6.QtCore import QModelIndex, Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (QAbstractItemView, QApplication, QColorDialog, QComboBox, QHeaderView,
                               QMenu, QStyle, QStyledItemDelegate, QStyleOptionComboBox, QTableView,
                               QVBoxLayout, QWidget)

from refplane.session.model import Session
from refplane.views.scene_controller import controller_for
from refplane.views.panels.trace_rows import N_PORTS_ROLE, TraceRows, port_text



class PortDelegate(QStyledItemDelegate):
    """The port cell: drawn as a combo box where there is a choice, edited with a real one."""

    def paint(self, painter, option, index: QModelIndex) -> None:
        if not index.flags() & Qt.ItemIsEditable:
            super().paint(painter, option, index)
            return
        # Draw the selection background as any cell, then a combo box's frame and text on it.
        super().paint(painter, option, QModelIndex())
        box = QStyleOptionComboBox()
        box.rect = option.rect.adjusted(1, 1, -1, -1)
        box.state = option.state | QStyle.State_Enabled
        box.currentText = str(index.data(Qt.DisplayRole) or "")
        box.palette = option.palette
        style = option.widget.style() if option.widget is not None else QApplication.style()
        style.drawComplexControl(QStyle.CC_ComboBox, box, painter, option.widget)
        style.drawControl(QStyle.CE_ComboBoxLabel, box, painter, option.widget)

    def sizeHint(self, option, index: QModelIndex):
        size = super().sizeHint(option, index)
        if not index.flags() & Qt.ItemIsEditable:
            return size
        # Wide enough for a combo box showing the widest choice, arrow and frame included.
        box = QStyleOptionComboBox()
        box.rect = option.rect
        widest = port_text(int(index.data(N_PORTS_ROLE) or 1))
        text = option.fontMetrics.size(Qt.TextSingleLine, widest)
        style = option.widget.style() if option.widget is not None else QApplication.style()
        return style.sizeFromContents(QStyle.CT_ComboBox, box, text, option.widget).expandedTo(size)

    def createEditor(self, parent: QWidget, option, index: QModelIndex) -> QWidget:
        combo = QComboBox(parent)
        for p in range(1, int(index.data(N_PORTS_ROLE) or 1) + 1):
            combo.addItem(port_text(p), p)
        # A choice takes effect at once, as the always-shown combo box of old did.
        combo.activated.connect(lambda _i, c=combo: self._commit(c))
        return combo

    def _commit(self, combo: QComboBox) -> None:
        self.commitData.emit(combo)
        self.closeEditor.emit(combo, QStyledItemDelegate.NoHint)

    def setEditorData(self, editor: QComboBox, index: QModelIndex) -> None:
        editor.setCurrentIndex(max(0, editor.findData(index.data(Qt.EditRole))))

    def setModelData(self, editor: QComboBox, model, index: QModelIndex) -> None:
        if editor.currentData() is not None:
            model.setData(index, editor.currentData(), Qt.EditRole)

    def updateEditorGeometry(self, editor: QWidget, option, index: QModelIndex) -> None:
        editor.setGeometry(option.rect)


class TraceList(QWidget):
    """One row per open trace: a check box to show it, its name (double-click to rename),
    whether offsets are removed, the port whose reflection is drawn, its colour (click to
    change) and a ✕ to close it."""

    closeRequested = Signal(int)

    COL_NAME, COL_OFFSETS, COL_PORT, COL_COLOUR, COL_CLOSE = (
        TraceRows.COL_NAME, TraceRows.COL_OFFSETS, TraceRows.COL_PORT, TraceRows.COL_COLOUR,
        TraceRows.COL_CLOSE)

    def __init__(self, state: Session, parent: QWidget | None = None, *, controller=None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.rows = TraceRows(state, self)
        self.table = QTableView()
        self.table.setModel(self.rows)
        self.table.verticalHeader().setVisible(False)
        self.table.setSelectionBehavior(QAbstractItemView.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.DoubleClicked | QAbstractItemView.EditKeyPressed)
        self.table.setShowGrid(False)
        self.table.setWordWrap(False)
        self.port_delegate = PortDelegate(self.table)
        self.table.setItemDelegateForColumn(self.COL_PORT, self.port_delegate)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(self.COL_NAME, QHeaderView.Stretch)
        for col in (self.COL_OFFSETS, self.COL_PORT, self.COL_COLOUR, self.COL_CLOSE):
            header.setSectionResizeMode(col, QHeaderView.ResizeToContents)
        header.setMinimumSectionSize(24)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addWidget(self.table)

        self.table.setContextMenuPolicy(Qt.CustomContextMenu)
        self.table.customContextMenuRequested.connect(
            lambda pos: self._exec_menu(self.context_menu(self.table.rowAt(pos.y())), pos))
        self.table.clicked.connect(self._on_clicked)
        self.table.selectionModel().currentRowChanged.connect(self._on_current_row)
        # A reset forgets the selection: show the current trace again.
        self.rows.modelReset.connect(lambda: self._select_current(self._current))
        self.rows.rowsInserted.connect(lambda *_: self._select_current(self._current))
        # Queued: a click on ✕ must not remove its own row while the click is being handled.
        self.closeRequested.connect(state.remove_trace, Qt.QueuedConnection)
        self._updating = False
        self._current = -1
        self._scene = None
        # The window's scene controller hands the list every Scene; made on its own (a
        # test, a small tool), the list has a controller of its own.
        self.controller = controller_for(state, self, controller)
        self.controller.attach(self)

    def set_scene(self, scene) -> None:
        """Show a resolved Scene's traces and select its current trace."""
        if scene is self._scene:
            return
        self._scene = scene
        self.rows.set_scene(scene)
        if scene.current_trace != self._current:
            self._current = scene.current_trace
            self._select_current(self._current)

    def row_of(self, trace_id: int) -> int:
        """The row showing a trace."""
        return self.rows.row_of(trace_id)

    def ask_colour(self, current: str) -> str | None:
        """Ask for a colour (a method so tests can replace the dialog)."""
        colour = QColorDialog.getColor(QColor(current), self, "Trace colour")
        return colour.name() if colour.isValid() else None

    def context_menu(self, row: int) -> QMenu:
        """The right-click menu of a row (or of the empty list when ``row`` is −1)."""
        menu = QMenu(self)
        if not 0 <= row < self.rows.rowCount():
            menu.addAction("No trace here: File ▸ Open sweeps… opens one").setEnabled(False)
            return menu
        tid = self.rows.trace_id(row)
        t = self.rows.trace_view(row)
        menu.addAction("Make current", lambda: self.state.set_current_trace(tid))
        menu.addAction("Hide" if t.visible else "Show", lambda: self.state.set_visible(tid, not t.visible))
        menu.addAction("Rename…", lambda: self._rename(tid))
        menu.addAction("Change colour…", lambda: self._recolour(tid))
        menu.addSeparator()
        menu.addAction("Store as memory", lambda: self.state.store_memory(tid))
        find = menu.addMenu("Find")
        from refplane.views.find_menu import fill_find_menu

        def say(text, passing=False):
            window = self.window()
            if hasattr(window, "_say_found"):
                window._say_found(text, passing)
        fill_find_menu(find, self.state, self, say, trace_id=tid,
                       controller=getattr(self.window(), "scene_controller", None))
        menu.addSeparator()
        menu.addAction("Close (Ctrl+Z brings it back)", lambda: self.closeRequested.emit(tid))
        return menu

    # ----------------------------------------------------------------- slots
    def _exec_menu(self, menu: QMenu, pos) -> None:
        menu.exec(self.table.viewport().mapToGlobal(pos))

    def _rename(self, trace_id: int) -> None:
        if trace_id in self.rows.ids():
            self.table.edit(self.rows.index(self.rows.row_of(trace_id), self.COL_NAME))

    def _recolour(self, trace_id: int) -> None:
        colour = self.ask_colour(self.rows.trace_view(self.rows.row_of(trace_id)).colour)
        if colour:
            self.state.set_colour(trace_id, colour)

    def _on_clicked(self, index: QModelIndex) -> None:
        """A click on the colour swatch, the ✕ or a port with a choice acts as a button would."""
        if not index.isValid():
            return
        tid = self.rows.trace_id(index.row())
        col = index.column()
        if col == self.COL_COLOUR:
            self._recolour(tid)
        elif col == self.COL_CLOSE:
            self.closeRequested.emit(tid)
        elif col == self.COL_PORT and index.flags() & Qt.ItemIsEditable:
            self.table.edit(index)
            editor = self.table.indexWidget(index)
            if isinstance(editor, QComboBox):
                editor.showPopup()

    def _on_current_row(self, current: QModelIndex, _previous: QModelIndex) -> None:
        if self._updating or self.rows.changing or not current.isValid():
            return
        tid = self.rows.trace_id(current.row())
        if tid != self._current:
            self.state.set_current_trace(tid)

    def _select_current(self, trace_id: int) -> None:
        if trace_id not in self.rows.ids():
            return
        was = self._updating
        self._updating = True
        try:
            self.table.selectRow(self.rows.row_of(trace_id))
        finally:
            self._updating = was
