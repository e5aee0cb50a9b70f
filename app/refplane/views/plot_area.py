"""A plot made of only what the frequency plots use: a view box, a left axis and a bottom axis.

pyqtgraph's PlotItem also builds a whole options form, two context menus, a title and an
auto-range button for every plot; the window hides all of them, and building them cost most
of the time a plot takes to make. :class:`PlotView` offers the handful of PlotWidget calls
the window makes (``addItem``, ``removeItem``, ``getAxis``, ``setLabel``, ``setLogMode``,
``setXLink``, ``enableAutoRange``) over a lighter :class:`PlotArea`.
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QObject
from PySide6.QtWidgets import QGraphicsGridLayout, QGraphicsItem, QSizePolicy


def discard(item: QGraphicsItem) -> None:
    """Let Qt delete an item just taken out of a view, at its next safe point.

    An item out of its scene belongs to Python again; pyqtgraph's items sit in reference
    cycles, so Python's cycle collector would destroy them at whatever moment it runs, even
    inside a Qt call that holds the lock their destructor needs (a hang or a crash). A
    QObject item is therefore handed to Qt's deferred delete instead; the caller must keep no
    use for it.
    """
    if isinstance(item, QObject):
        item.deleteLater()


def log_tick_text(value: float, unit: str) -> str:
    """A tick of a logarithmic axis with its own metric prefix: 1e6 Hz → "1 MHz", 2e8 → "200 MHz"."""
    from refplane.analysis.units import format_si

    # Six significant digits first: 10**6.30103 is 2000000.0000000005, which is "2 MHz".
    number, _, rest = format_si(float(f"{value:.6g}"), unit, 6).partition(" ")
    if "." in number and "e" not in number:
        number = number.rstrip("0").rstrip(".")
    return f"{number} {rest}".strip()


class LogUnitAxis(pg.AxisItem):
    """An axis that, on a logarithmic scale, names each tick in its own unit ("1 MHz", "10 MHz",
    "1 GHz") instead of in one prefix chosen for the whole axis ("0.001 GHz"); its title then
    carries no unit. On a linear scale it is pyqtgraph's own axis."""

    def logTickStrings(self, values, scale, spacing):  # noqa: N802 (pyqtgraph's name)
        if not self.labelUnits:
            return super().logTickStrings(values, scale, spacing)
        return [log_tick_text(10.0 ** float(v), self.labelUnits) for v in values]

    def labelString(self) -> str:  # noqa: N802 (pyqtgraph's name)
        if not (self.logMode and self.labelUnits):
            return super().labelString()
        style = ";".join(f"{k}: {v}" for k, v in self.labelStyle.items())
        return f"<span style='{style}'>{self.labelText}</span>"

    def setLogMode(self, *args, **kwargs) -> None:  # noqa: N802 (pyqtgraph's name)
        super().setLogMode(*args, **kwargs)
        self._updateLabel()  # the title gains or drops its unit


class PlotArea(pg.GraphicsWidget):
    """A view box with a left and a bottom axis laid out around it."""

    def __init__(self, view_box: pg.ViewBox | None = None):
        super().__init__()
        self.setSizePolicy(QSizePolicy.Expanding, QSizePolicy.Expanding)
        self.vb = view_box if view_box is not None else pg.ViewBox(enableMenu=False)
        layout = QGraphicsGridLayout()
        layout.setContentsMargins(1, 1, 1, 1)
        layout.setHorizontalSpacing(0)
        layout.setVerticalSpacing(0)
        self.setLayout(layout)
        self._axes = {"left": LogUnitAxis("left", parent=self), "bottom": LogUnitAxis("bottom", parent=self)}
        for axis in self._axes.values():
            axis.linkToView(self.vb)
            # Above the curves' view box like pyqtgraph's own plots, but behind any child
            # items with negative z (a grid, a band).
            axis.setZValue(0.5)
            axis.setFlag(QGraphicsItem.ItemNegativeZStacksBehindParent)
        layout.addItem(self._axes["left"], 0, 0)
        layout.addItem(self.vb, 0, 1)
        layout.addItem(self._axes["bottom"], 1, 1)
        layout.setColumnStretchFactor(1, 100)
        layout.setRowStretchFactor(0, 100)
        self.items: list[QGraphicsItem] = []
        self.log_x = False
        self.log_y = False

    def getViewBox(self) -> pg.ViewBox:
        """The view box (pyqtgraph's spelling, as on PlotItem)."""
        return self.vb

    def getAxis(self, name: str) -> pg.AxisItem:
        """The ``"left"`` or ``"bottom"`` axis."""
        return self._axes[name]

    def addItem(self, item: QGraphicsItem, ignoreBounds: bool = False) -> None:
        """Put ``item`` in the view; ``ignoreBounds`` keeps it out of the auto-range."""
        if item in self.items:
            return
        self.items.append(item)
        self.vb.addItem(item, ignoreBounds=ignoreBounds)
        if isinstance(item, pg.PlotDataItem):
            item.setLogMode(self.log_x, self.log_y)

    def removeItem(self, item: QGraphicsItem) -> None:
        """Take ``item`` out of the view."""
        if item in self.items:
            self.items.remove(item)
            self.vb.removeItem(item)
            discard(item)

    def setLabel(self, axis: str, text: str | None = None, units: str | None = None) -> None:
        """Title (and SI unit) of an axis."""
        self._axes[axis].setLabel(text, units=units)

    def setLogMode(self, x: bool | None = None, y: bool | None = None) -> None:
        """Logarithmic frequency axis (``x``) and value axis (``y``) on or off; ``None`` keeps one."""
        if x is not None:
            self.log_x = bool(x)
        if y is not None:
            self.log_y = bool(y)
        for item in self.items:
            if isinstance(item, pg.PlotDataItem):
                item.setLogMode(self.log_x, self.log_y)
        for axis in self._axes.values():
            axis.setLogMode(self.log_x, self.log_y)
        self.vb.enableAutoRange()

    def enableAutoRange(self) -> None:
        """Fit the view to the curves again, and keep fitting as they change."""
        self.vb.enableAutoRange()

    def setXLink(self, other: PlotArea | PlotView) -> None:
        """Share the frequency range with another plot."""
        self.vb.setXLink(other.getViewBox())


class PlotView(pg.GraphicsView):
    """A graphics view showing one :class:`PlotArea` (in place of pyqtgraph's PlotWidget)."""

    def __init__(self, view_box: pg.ViewBox | None = None, background: str = "w"):
        super().__init__(background=background)
        self.setSizePolicy(QSizePolicy.Expanding, QSizePolicy.Expanding)
        self.enableMouse(False)  # the view box pans and zooms, not the view
        self.area = PlotArea(view_box)
        self.setCentralItem(self.area)

    def getPlotItem(self) -> PlotArea:
        """The plot inside (pyqtgraph's spelling)."""
        return self.area

    def getViewBox(self) -> pg.ViewBox:
        """The view box."""
        return self.area.vb

    def getAxis(self, name: str) -> pg.AxisItem:
        """The ``"left"`` or ``"bottom"`` axis."""
        return self.area.getAxis(name)

    def addItem(self, item: QGraphicsItem, ignoreBounds: bool = False) -> None:
        """Put ``item`` in the view (see :meth:`PlotArea.addItem`)."""
        self.area.addItem(item, ignoreBounds=ignoreBounds)

    def removeItem(self, item: QGraphicsItem) -> None:
        """Take ``item`` out of the view."""
        self.area.removeItem(item)

    def setLabel(self, axis: str, text: str | None = None, units: str | None = None) -> None:
        """Title (and SI unit) of an axis."""
        self.area.setLabel(axis, text, units=units)

    def setLogMode(self, x: bool | None = None, y: bool | None = None) -> None:
        """Logarithmic frequency axis on or off."""
        self.area.setLogMode(x, y)

    def enableAutoRange(self) -> None:
        """Fit the view to the curves again."""
        self.area.enableAutoRange()

    def setXLink(self, other: PlotArea | PlotView) -> None:
        """Share the frequency range with another plot."""
        self.area.setXLink(other)
