"""Small pieces the tool panels share: compact tables, wrapped notes, a scroll column, lazy docks.

The side column is about 340 px wide; these keep panels inside it: tables sized to their
rows (no scroll bar inside a scroll area), labels that wrap, forms whose fields grow.
"""

from __future__ import annotations

from typing import Callable

from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import (QAbstractItemView, QFormLayout, QFrame, QGroupBox, QHeaderView, QLabel,
                               QScrollArea, QSizePolicy, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from refplane.views.theme import quiet_label


def note(text: str = "", *, quiet: bool = True, selectable: bool = True) -> QLabel:
    """A wrapped label (muted for hints), its text selectable for copying."""
    label = QLabel(text)
    label.setWordWrap(True)
    label.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Minimum)  # wraps instead of widening
    label.setAlignment(Qt.AlignLeft | Qt.AlignTop)
    if quiet:
        label.setObjectName("hint")
        quiet_label(label)
    if selectable:
        label.setTextInteractionFlags(Qt.TextSelectableByMouse)
    return label


def next_turn(owner, slot) -> QTimer:
    """A single-shot timer running ``slot`` on the next turn of the event loop: several changes
    that arrive together make one refresh."""
    timer = QTimer(owner)
    timer.setSingleShot(True)
    timer.setInterval(0)
    timer.timeout.connect(slot)
    return timer


def column_widget() -> tuple[QWidget, QVBoxLayout]:
    """A content widget and its vertical layout, spaced as every tool panel is."""
    content = QWidget()
    column = QVBoxLayout(content)
    column.setContentsMargins(4, 4, 4, 4)
    column.setSpacing(6)
    return content, column


def put(widget, setter, value) -> None:
    """Show a session value in a widget with its signals held, so nothing echoes back."""
    widget.blockSignals(True)
    try:
        setter(value)
    finally:
        widget.blockSignals(False)


def wait_for(panel, msecs: int = 30000) -> bool:
    """Run a tool panel's pending refresh (its ``_timer``), wait for its workers and deliver the
    result (tests and closing)."""
    from PySide6.QtCore import QCoreApplication

    if panel._timer.isActive():
        panel.refresh()
    done = panel.workers.wait(msecs)
    QCoreApplication.sendPostedEvents()
    return done


def caution(text: str) -> QLabel:
    """A wrapped caution, marked so it is not mistaken for a hint."""
    label = note(f"⚠ {text}", quiet=False)
    label.setObjectName("caution")
    label.setFrameShape(QFrame.StyledPanel)
    label.setContentsMargins(4, 3, 4, 3)
    return label


def form() -> QFormLayout:
    """A compact form whose fields take the width left by their labels, labels wrapping if long."""
    layout = QFormLayout()
    layout.setFieldGrowthPolicy(QFormLayout.AllNonFixedFieldsGrow)
    layout.setRowWrapPolicy(QFormLayout.WrapLongRows)
    layout.setContentsMargins(0, 0, 0, 0)
    layout.setHorizontalSpacing(6)
    layout.setVerticalSpacing(3)
    return layout


def section(title: str) -> tuple[QGroupBox, QVBoxLayout]:
    """A titled group and its vertical layout."""
    box = QGroupBox(title)
    layout = QVBoxLayout(box)
    layout.setContentsMargins(5, 5, 5, 5)
    layout.setSpacing(4)
    return box, layout


def table(headers: list[str]) -> QTableWidget:
    """A read-only table whose height follows its rows (see :func:`fill`)."""
    t = QTableWidget(0, len(headers))
    t.setHorizontalHeaderLabels(headers)
    t.setEditTriggers(QAbstractItemView.NoEditTriggers)
    t.setSelectionMode(QAbstractItemView.ExtendedSelection)
    t.verticalHeader().setVisible(False)
    t.setWordWrap(False)
    header = t.horizontalHeader()
    header.setSectionResizeMode(QHeaderView.ResizeToContents)
    header.setStretchLastSection(True)
    header.setMinimumSectionSize(20)
    t.setVerticalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
    # Cells carry tooltips and two-line text where space is short; the column never scrolls sideways.
    t.setHorizontalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
    t.setTextElideMode(Qt.ElideRight)
    t.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
    fill(t, [])
    return t


def fill(t: QTableWidget, rows) -> None:
    """Put rows of text in a table and fit its height to them."""
    t.setRowCount(len(rows))
    for r, row in enumerate(rows):
        for c, text in enumerate(row):
            item = QTableWidgetItem(str(text))
            item.setToolTip(str(text))
            t.setItem(r, c, item)
    t.resizeRowsToContents()
    height = t.horizontalHeader().height() + 2 * t.frameWidth()
    height += sum(t.rowHeight(r) for r in range(t.rowCount())) or 4
    bar = t.horizontalScrollBar()
    height += bar.sizeHint().height() if t.horizontalScrollBarPolicy() != Qt.ScrollBarAlwaysOff else 0
    t.setFixedHeight(height)


def rows_of(t: QTableWidget) -> list[list[str]]:
    """What a table shows, row by row."""
    return [[t.item(r, c).text() if t.item(r, c) else "" for c in range(t.columnCount())]
            for r in range(t.rowCount())]


def scroll_column(content: QWidget) -> QScrollArea:
    """``content`` in a vertical scroll area that never scrolls sideways (it fits the column)."""
    area = QScrollArea()
    area.setWidgetResizable(True)
    area.setFrameShape(QFrame.NoFrame)
    area.setHorizontalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
    area.setWidget(content)
    return area


def install_lazily(window, title: str, build: Callable[[], QWidget], *, beside: str | None = "Reference plane",
                   area=Qt.LeftDockWidgetArea):
    """Add a dock to ``window`` whose panel is built the first time the dock is shown.

    Start-up pays only for an empty placeholder. The dock is tabbed with ``beside`` when that
    dock exists. Returns the dock; ``dock.panel()`` builds and returns the panel.
    """
    dock = window.add_side_panel(title, QWidget(), area=area)

    def ensure(visible: bool = True):
        holder = dock.widget()
        if visible and getattr(holder, "_tool_placeholder", True) and not hasattr(dock, "_tool_panel"):
            panel = build()
            dock._tool_panel = panel
            dock.setWidget(panel)
            holder.deleteLater()
        return getattr(dock, "_tool_panel", None)

    dock.visibilityChanged.connect(ensure)
    dock.panel = lambda: ensure(True)
    other = window.docks.get(beside) if beside else None
    if other is not None and window.dockWidgetArea(other) == area:
        window.tabifyDockWidget(other, dock)
        other.raise_()
        # Five tabs in a 340 px column: scroll the tabs rather than cut every title to "Ca…".
        QTimer.singleShot(0, lambda: _whole_tab_titles(window))
    return dock


def _whole_tab_titles(window) -> None:
    from PySide6.QtWidgets import QTabBar

    for bar in window.findChildren(QTabBar):
        bar.setElideMode(Qt.ElideNone)
        bar.setUsesScrollButtons(True)
