"""The marker readouts as a Qt table model, fed by the resolved scene.

Rows, in order: one per marker (placing order), the difference row when two or more markers
exist, then one row per model overlay at each marker (the fitted model's reading at the same
frequency). Columns: the trace, then every readout cell as :mod:`refplane.session.present`
writes it. :meth:`MarkerRows.set_scene` compares the new scene with the rows shown and tells
the views only what changed: a marker dragged along its trace changes its own row (and the
difference and model rows that read it), never the others, and never resets the model.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QObject, Qt
from PySide6.QtGui import QFont

#: The role that gives the marker id of a marker row or of a model row (None on the difference row).
MARKER_ID_ROLE = int(Qt.UserRole)
#: The role that gives a row's kind: "marker", "difference" or "model".
ROW_KIND_ROLE = int(Qt.UserRole) + 1

# Roles as plain ints: Qt asks data() for seven roles of every cell on each repaint, and
# comparing ints is several times quicker than looking up and comparing Qt's enums.
_DISPLAY, _ALIGNMENT = int(Qt.DisplayRole), int(Qt.TextAlignmentRole)
_LEFT = int(Qt.AlignLeft | Qt.AlignVCenter)
_RIGHT = int(Qt.AlignRight | Qt.AlignVCenter)
_FLAGS = Qt.ItemIsEnabled | Qt.ItemIsSelectable


@dataclass(frozen=True)
class Row:
    """One row as shown: what it is, its header and its cells in column order."""

    key: tuple
    """("marker", id), ("difference",) or ("model", marker id, overlay name): unique per row."""
    header: str
    """The row's header ("1", "2 · best match", "Δ", "1 model")."""
    texts: tuple[str, ...]
    """Cell text per column."""
    source: tuple = ()
    """What the texts were made from (compared by identity to skip remaking them)."""

    @property
    def kind(self) -> str:
        return self.key[0]

    @property
    def marker_id(self) -> int | None:
        return self.key[1] if self.key[0] in ("marker", "model") else None


def _rows_of(scene, columns: list[str], previous: dict[tuple, Row]) -> list[Row]:
    """The rows a scene shows (reusing a previous row whose inputs are the same objects)."""
    markers = scene.markers
    labels = {t.id: t.label for t in scene.traces}
    rows: list[Row] = []
    for m in markers:
        key = ("marker", m.id)
        header = f"{m.number} · {m.follows_text}" if m.follows_text else str(m.number)
        label = labels.get(m.trace_id, "")
        old = previous.get(key)
        if old is not None and old.source and old.source[0] is m and old.source[1:] == (label, header):
            rows.append(old)
            continue
        values = {"Trace": label, **m.cells}
        rows.append(Row(key, header, tuple(values.get(c, "") for c in columns), (m, label, header)))
    if len(markers) >= 2:
        delta = scene.delta
        # The difference is made afresh with every scene: it is the same when both of its
        # markers' views are the same objects.
        by_id = {m.id: m for m in markers}
        source = (by_id.get(delta.a), by_id.get(delta.b), delta.label) if delta is not None else (None,)
        old = previous.get(("difference",))
        if old is not None and len(old.source) == len(source) \
                and all(x is y for x, y in zip(old.source[:2], source[:2])) and old.source[2:] == source[2:]:
            rows.append(old)
        else:
            values = {**delta.cells, "Trace": delta.label} if delta is not None else {}
            rows.append(Row(("difference",), "Δ" if delta is not None else "Difference",
                            tuple(values.get(c, "") for c in columns), source))
    overlays = {t.id: t.overlays for t in scene.traces}
    for m in markers:
        for ov in overlays.get(m.trace_id, ()):
            key = ("model", m.id, ov.name)
            header = f"{m.number} model"
            old = previous.get(key)
            if old is not None and old.source and old.source[0] is m and old.source[1] == header:
                rows.append(old)
                continue
            values = {"Trace": ov.name, **m.model_cells.get(ov.name, {})}
            rows.append(Row(key, header, tuple(values.get(c, "—" if c != "Trace" else "") for c in columns),
                            (m, header)))
    return rows


class MarkerRows(QAbstractTableModel):
    """Marker readouts, the difference row and model rows, as a read-only table model."""

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self._columns: list[str] = []
        self._rows: list[Row] = []
        self._current = -1
        self._bold = QFont()
        self._bold.setBold(True)
        #: True while rows are being inserted, removed or reset (views ignore selection news then).
        self.changing = False

    # ------------------------------------------------------------ lookups
    def columns(self) -> list[str]:
        """Column labels in order ("Trace", "Frequency", "R", …)."""
        return list(self._columns)

    def row(self, row: int) -> Row:
        """A row as shown (IndexError outside the rows)."""
        return self._rows[row]

    def row_of(self, key: tuple) -> int:
        """The row of a key (ValueError when not shown)."""
        for i, r in enumerate(self._rows):
            if r.key == key:
                return i
        raise ValueError(f"no row {key!r}")

    def marker_ids(self) -> list[int]:
        """Ids of the marker rows, in row order."""
        return [r.key[1] for r in self._rows if r.kind == "marker"]

    def cells(self, row: int) -> dict[str, str]:
        """A row's cells, column label → text."""
        return dict(zip(self._columns, self._rows[row].texts))

    # ------------------------------------------------------ the Qt model
    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: B008 (Qt's default)
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: B008
        return 0 if parent.isValid() else len(self._columns)

    def flags(self, index: QModelIndex):
        return _FLAGS if index.isValid() else Qt.NoItemFlags

    def data(self, index: QModelIndex, role: int = _DISPLAY):
        if role == _DISPLAY:
            row, col = index.row(), index.column()
            if 0 <= row < len(self._rows) and 0 <= col < len(self._columns):
                return self._rows[row].texts[col]
            return None
        if role == _ALIGNMENT:
            return _LEFT if index.column() == 0 else _RIGHT  # the trace column reads left to right
        if role == MARKER_ID_ROLE or role == ROW_KIND_ROLE:
            row = index.row()
            if not (index.isValid() and 0 <= row < len(self._rows)):
                return None
            r = self._rows[row]
            return r.marker_id if role == MARKER_ID_ROLE else r.kind
        return None

    def headerData(self, section: int, orientation, role=Qt.DisplayRole):
        if orientation == Qt.Horizontal:
            if role == Qt.DisplayRole and 0 <= section < len(self._columns):
                return self._columns[section]
            return None
        if not 0 <= section < len(self._rows):
            return None
        r = self._rows[section]
        if role == Qt.DisplayRole:
            return r.header
        if role == Qt.FontRole and r.kind == "marker" and r.key[1] == self._current:
            return self._bold  # the marker that keys and Remove act on
        if role == Qt.ToolTipRole and r.kind == "difference":
            return "The difference: the second marker chosen below minus the first"
        return None

    # ------------------------------------------------------------ update
    def set_scene(self, scene) -> bool:
        """Show ``scene``; tell the views only what changed. Returns True when rows or columns
        came or went (the shape changed), False when at most some cells changed."""
        markers = scene.markers
        columns = (["Trace"] + list(markers[0].cells)) if markers else []
        previous = {r.key: r for r in self._rows} if columns == self._columns else {}
        new = _rows_of(scene, columns, previous)
        shape_changed = False
        if columns != self._columns or not self._fits_without_reset(new):
            self.changing = True
            try:
                self.beginResetModel()
                self._columns, self._rows = columns, new
                self._current = scene.current_marker
                self.endResetModel()
            finally:
                self.changing = False
            return True
        old_keys = [r.key for r in self._rows]
        if old_keys != [r.key for r in new]:
            shape_changed = True
            self._move_rows(new)
        self._update_cells(new)
        self._set_current(scene.current_marker)
        return shape_changed

    def _fits_without_reset(self, new: list[Row]) -> bool:
        """True when the rows that stay keep their order (so inserts and removals say it all)."""
        new_keys = [r.key for r in new]
        old_keys = [r.key for r in self._rows]
        new_set, old_set = set(new_keys), set(old_keys)
        return [k for k in old_keys if k in new_set] == [k for k in new_keys if k in old_set]

    def _move_rows(self, new: list[Row]) -> None:
        new_keys = {r.key for r in new}
        self.changing = True
        try:
            row = len(self._rows) - 1
            while row >= 0:
                # Runs of rows that went, removed from the bottom up as one step each.
                if self._rows[row].key not in new_keys:
                    last = row
                    while row - 1 >= 0 and self._rows[row - 1].key not in new_keys:
                        row -= 1
                    self.beginRemoveRows(QModelIndex(), row, last)
                    del self._rows[row:last + 1]
                    self.endRemoveRows()
                row -= 1
            row = 0
            while row < len(new):
                if row >= len(self._rows) or self._rows[row].key != new[row].key:
                    # A run of new rows, inserted as one step.
                    have = {r.key for r in self._rows}
                    end = row
                    while end + 1 < len(new) and new[end + 1].key not in have:
                        end += 1
                    self.beginInsertRows(QModelIndex(), row, end)
                    self._rows[row:row] = new[row:end + 1]
                    self.endInsertRows()
                    row = end + 1
                else:
                    row += 1
        finally:
            self.changing = False

    def _update_cells(self, new: list[Row]) -> None:
        headers = []
        for i, (old, row) in enumerate(zip(self._rows, new)):
            if old is row:
                continue
            self._rows[i] = row
            changed = [c for c, (a, b) in enumerate(zip(old.texts, row.texts)) if a != b]
            if changed:
                self.dataChanged.emit(self.index(i, changed[0]), self.index(i, changed[-1]),
                                      [Qt.DisplayRole])
            if old.header != row.header:
                headers.append(i)
        if headers:
            self.headerDataChanged.emit(Qt.Vertical, headers[0], headers[-1])

    def _set_current(self, marker_id: int) -> None:
        if marker_id == self._current:
            return
        rows = [i for i, r in enumerate(self._rows)
                if r.kind == "marker" and r.key[1] in (marker_id, self._current)]
        self._current = marker_id
        if rows:
            self.headerDataChanged.emit(Qt.Vertical, rows[0], rows[-1])
