"""The open traces as a Qt table model: one row per trace, keyed by the trace's id.

The rows are fed by the resolved Scene (:meth:`TraceRows.set_scene`): a trace opened or closed
inserts or removes its one row, an edit (name, colour, visibility, port, offsets) changes only
that row. The model never reads the session to show anything; edits made in the list go back
through the session's methods and return as the next Scene.
"""

from __future__ import annotations

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QObject, Qt
from PySide6.QtGui import QColor, QIcon, QPixmap

from refplane.analysis.errors import AnalysisError
from refplane.session.model import Session

#: The role that gives a row's trace id, in every column.
TRACE_ID_ROLE = int(Qt.UserRole)
#: The role that gives the number of ports of a row's sweep (for the port chooser).
N_PORTS_ROLE = int(Qt.UserRole) + 1

# Roles as plain ints (Qt hands data() an int; comparing with Qt's enums is much slower).
_DISPLAY, _EDIT, _DECORATION, _TOOLTIP = (int(Qt.DisplayRole), int(Qt.EditRole), int(Qt.DecorationRole),
                                          int(Qt.ToolTipRole))
_CHECK, _ALIGNMENT, _ACCESSIBLE = int(Qt.CheckStateRole), int(Qt.TextAlignmentRole), int(Qt.AccessibleTextRole)

_swatches: dict[tuple[str, int], QIcon] = {}


def swatch(colour: str, size: int = 14) -> QIcon:
    """A small square of colour, for lists and buttons (made once per colour)."""
    key = (colour, size)
    icon = _swatches.get(key)
    if icon is None:
        pix = QPixmap(size, size)
        pix.fill(QColor(colour))
        icon = _swatches[key] = QIcon(pix)
    return icon


def port_text(port: int) -> str:
    """The reflection a port gives, as the trade writes it (S11, S22, …)."""
    return f"S{port}{port}"


class TraceRows(QAbstractTableModel):
    """The session's open traces as rows: name (checkable: shown), offsets, port, colour, close.

    ``data(index, TRACE_ID_ROLE)`` gives the row's trace id in every column.
    """

    COL_NAME, COL_OFFSETS, COL_PORT, COL_COLOUR, COL_CLOSE = range(5)
    HEADERS = ("Trace", "", "Port", "", "")

    def __init__(self, state: Session, parent: QObject | None = None):
        super().__init__(parent)
        self.state = state  # only written to, through its methods, for edits made in the list
        self._ids: list[int] = []
        self._views: dict[int, object] = {}  # trace id -> the Scene's TraceView shown
        self._traces: tuple = ()
        #: True while rows are being inserted, removed or reset (views ignore selection news then).
        self.changing = False

    # ------------------------------------------------------------ lookups
    def trace_id(self, row: int) -> int:
        """The trace id of a row (IndexError outside the rows)."""
        if not 0 <= row < len(self._ids):
            raise IndexError(f"no trace row {row}")
        return self._ids[row]

    def row_of(self, trace_id: int) -> int:
        """The row showing a trace (ValueError for a trace not listed)."""
        return self._ids.index(trace_id)

    def ids(self) -> list[int]:
        """Trace ids in row order."""
        return list(self._ids)

    # ------------------------------------------------------ the Qt model
    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: B008 (Qt's default)
        return 0 if parent.isValid() else len(self._ids)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self.HEADERS)

    def headerData(self, section: int, orientation, role=Qt.DisplayRole):
        if orientation == Qt.Horizontal and 0 <= section < len(self.HEADERS):
            if role == Qt.DisplayRole:
                return self.HEADERS[section]
            if role == Qt.ToolTipRole:
                return ("Tick to show; double-click to rename", "Reference-plane offsets removed",
                        "The port whose reflection is drawn", "Colour (click to change)",
                        "Close (Ctrl+Z brings it back)")[section]
        return None

    def flags(self, index: QModelIndex):
        if not index.isValid():
            return Qt.NoItemFlags
        flags = Qt.ItemIsEnabled | Qt.ItemIsSelectable
        col = index.column()
        if col == self.COL_NAME:
            flags |= Qt.ItemIsEditable | Qt.ItemIsUserCheckable
        elif col == self.COL_PORT:
            t = self._trace(index.row())
            if t is not None and t.n_ports > 1:
                flags |= Qt.ItemIsEditable
        return flags

    def data(self, index: QModelIndex, role: int = _DISPLAY):
        if not index.isValid():
            return None
        t = self._trace(index.row())
        if t is None:
            return None  # closed a moment ago; its row goes with the session's next event
        if role == TRACE_ID_ROLE:
            return t.id
        if role == N_PORTS_ROLE:
            return t.n_ports
        col = index.column()
        if col == self.COL_NAME:
            if role in (_DISPLAY, _EDIT):
                return t.name
            if role == _CHECK:
                return Qt.Checked if t.visible else Qt.Unchecked
            if role == _TOOLTIP:
                return t.source or t.name
        elif col == self.COL_OFFSETS:
            if role == _DISPLAY:
                return "offsets" if t.raw_gamma is not None else ""
            if role == _TOOLTIP and t.raw_gamma is not None:
                return ("Reference-plane offsets are removed from this trace; its measurement "
                        "as read is drawn faded (Reference plane panel)")
        elif col == self.COL_PORT:
            if role == _DISPLAY:
                return port_text(t.port)
            if role == _EDIT:
                return t.port
            if role == _TOOLTIP and t.n_ports > 1:
                return "Click to choose the port whose reflection is drawn"
        elif col == self.COL_COLOUR:
            if role == _DECORATION:
                return swatch(t.colour)
            if role in (_EDIT, _ACCESSIBLE):
                return t.colour
            if role == _TOOLTIP:
                return f"Colour {t.colour}: click to change"
        elif col == self.COL_CLOSE:
            if role == _DISPLAY:
                return "✕"
            if role == _TOOLTIP:
                return "Close this trace (Ctrl+Z brings it back)"
            if role == _ALIGNMENT:
                return int(Qt.AlignCenter)
        return None

    def setData(self, index: QModelIndex, value, role=Qt.EditRole) -> bool:
        """Write an edit back through the session; the session's event then updates the row."""
        if not index.isValid():
            return False
        t = self._trace(index.row())
        if t is None:
            return False
        col = index.column()
        try:
            if col == self.COL_NAME and role == Qt.CheckStateRole:
                self.state.set_visible(t.id, Qt.CheckState(value) == Qt.Checked)
            elif col == self.COL_NAME and role == Qt.EditRole:
                text = str(value).strip()
                if not text:
                    return False  # an emptied name keeps the old one
                self.state.set_name(t.id, text)
            elif col == self.COL_PORT and role == Qt.EditRole:
                self.state.set_port(t.id, int(value))
            elif col == self.COL_COLOUR and role == Qt.EditRole:
                colour = QColor(str(value))
                if not colour.isValid():
                    return False
                self.state.set_colour(t.id, colour.name())
            else:
                return False
        except (AnalysisError, ValueError, TypeError):
            return False
        return True

    # ------------------------------------------------------------ the Scene
    def set_scene(self, scene) -> None:
        """Show the traces of a resolved Scene: rows come and go with traces, and only rows
        whose trace changed what the list shows are announced (a marker drag changes none)."""
        if scene.traces is self._traces:
            return
        self._traces = scene.traces
        views = {t.id: t for t in scene.traces}
        self._set_ids([t.id for t in scene.traces], views)
        for row, tid in enumerate(self._ids):
            old, new = self._views.get(tid), views[tid]
            self._views[tid] = new
            if old is not None and old is not new and _shown(old) != _shown(new):
                self.dataChanged.emit(self.index(row, 0), self.index(row, self.columnCount() - 1))
        for gone in set(self._views) - set(views):
            del self._views[gone]

    def trace_view(self, row: int):
        """The Scene's view of a row's trace (None outside the rows)."""
        return self._trace(row)

    def _trace(self, row: int):
        if not 0 <= row < len(self._ids):
            return None
        return self._views.get(self._ids[row])

    def _set_ids(self, new: list[int], views: dict) -> None:
        old = list(self._ids)
        if new == old:
            return
        new_set, old_set = set(new), set(old)
        if [i for i in old if i in new_set] != [i for i in new if i in old_set]:
            # The order of rows that stay changed: nothing smaller than a reset says that.
            self.changing = True
            self.beginResetModel()
            self._ids = new
            self._views.update(views)
            self.endResetModel()
            self.changing = False
            return
        self.changing = True
        try:
            # Rows that went, from the bottom up so the rows above keep their numbers.
            gone = old_set - new_set
            for row in range(len(old) - 1, -1, -1):
                if self._ids[row] in gone:
                    self.beginRemoveRows(QModelIndex(), row, row)
                    del self._ids[row]
                    self.endRemoveRows()
            # Rows that came, each at its place in the Scene's order.
            for row, tid in enumerate(new):
                if row >= len(self._ids) or self._ids[row] != tid:
                    self.beginInsertRows(QModelIndex(), row, row)
                    self._ids.insert(row, tid)
                    self._views[tid] = views[tid]
                    self.endInsertRows()
        finally:
            self.changing = False


def _shown(t) -> tuple:
    """What the list shows of a trace: a change elsewhere (Γ arrays, overlays) is no news here."""
    return (t.name, t.colour, t.visible, t.port, t.n_ports, t.raw_gamma is not None, t.source)
