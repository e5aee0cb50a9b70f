"""Rectilinear plots over frequency that share the chart's markers and set the selected band.

:class:`FrequencyPlot` shows one quantity (return loss, VSWR, R and X, |Z|, phase; |S21| and
its phase for two-port sweeps) for every visible trace, with a vertical line per marker
(drag it to move the marker) and the selected band as a shaded region. Shift-drag across
the plot, or turn on "Pick band" and drag, to choose a band; click to place a marker on the
current trace. :class:`CompanionPlots` stacks two of them with a shared frequency axis.
"""

from __future__ import annotations

import math
import time

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QRectF, Qt, QTimer, Signal
from PySide6.QtGui import QColor, QPainter, QPainterPath
from PySide6.QtWidgets import (QCheckBox, QComboBox, QGraphicsItem, QHBoxLayout, QLabel,
                               QPushButton, QSizePolicy, QToolButton, QVBoxLayout, QWidget)

from refplane.session import plot_series
from refplane.views.line_drawing import line_mode
from refplane.views.plot_area import PlotArea, PlotView
from refplane.session.model import Session
from refplane.views.theme import LIGHT, Theme, quiet_label


#: Edges of a shaded area are drawn with no line; their path (which pyqtgraph leaves empty for
#: ``pen=None``) is what the fill follows.
_NO_PEN = pg.mkPen(None)


class BandViewBox(pg.ViewBox):
    """A view box where a Shift-drag (or any left drag in band mode) sweeps out a band.

    Emits ``sigBand(x1, x2, finished)`` in view coordinates; ordinary drags pan and zoom.
    """

    sigBand = Signal(float, float, bool)

    def __init__(self, *args, **kw):
        super().__init__(*args, **kw)
        self.band_mode = False
        self._band_start: float | None = None

    def mouseDragEvent(self, ev, axis=None) -> None:
        wants_band = ev.button() == Qt.LeftButton and (
            self.band_mode or bool(ev.modifiers() & Qt.ShiftModifier))
        if not wants_band and self._band_start is None:
            super().mouseDragEvent(ev, axis)
            return
        ev.accept()
        x = self.mapSceneToView(ev.scenePos()).x()
        if ev.isStart() or self._band_start is None:
            self._band_start = self.mapSceneToView(ev.buttonDownScenePos()).x()
        self.sigBand.emit(self._band_start, x, bool(ev.isFinish()))
        if ev.isFinish():
            self._band_start = None


class PlotGrid(pg.GraphicsObject):
    """Grid lines across a plot at its axes' ticks (major and minor), behind the curves.

    Drawn as two paths rebuilt when the view range or size changes. (The axes can draw a grid
    themselves, but repainting it costs over ten times as much, at start-up and on every
    zoom step.)
    """

    def __init__(self, plot_item: PlotArea, theme: Theme = LIGHT):
        super().__init__()
        self._plot = plot_item
        self._rect = QRectF()
        self._major = QPainterPath()
        self._minor = QPainterPath()
        self.setZValue(-10)
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.set_theme(theme)
        # Not part of the data: autorange must not grow to fit the grid, which fills the view.
        plot_item.addItem(self, ignoreBounds=True)
        view = plot_item.getViewBox()
        view.sigRangeChanged.connect(self.rebuild)
        view.sigResized.connect(self.rebuild)
        self.rebuild()

    def set_theme(self, theme: Theme) -> None:
        """Recolour the grid lines."""
        major = QColor(theme.grid_major)
        major.setAlphaF(0.6)  # quieter than the Smith chart's lines: here the curves matter
        self._major_pen = pg.mkPen(major, width=1, cosmetic=True)
        self._minor_pen = pg.mkPen(theme.grid_minor, width=1, cosmetic=True)
        self.update()

    def tick_positions(self) -> tuple[list[float], list[float], list[float], list[float]]:
        """Major x, minor x, major y and minor y positions of the lines, in view coordinates."""
        view = self._plot.getViewBox()
        (x0, x1), (y0, y1) = view.viewRange()
        xs = self._levels(self._plot.getAxis("bottom"), x0, x1, view.width())
        ys = self._levels(self._plot.getAxis("left"), y0, y1, view.height())
        return xs[0], xs[1], ys[0], ys[1]

    @staticmethod
    def _levels(axis: pg.AxisItem, lo: float, hi: float, size: float) -> tuple[list[float], list[float]]:
        if not (size > 0 and math.isfinite(lo) and math.isfinite(hi) and hi > lo):
            return [], []
        levels = axis.tickValues(lo, hi, size)
        major = [v for v in levels[0][1] if lo <= v <= hi] if levels else []
        minor = [v for _, values in levels[1:2] for v in values if lo <= v <= hi]
        return major, minor

    def rebuild(self, *_args) -> None:
        """Put the lines at the current ticks (called on every range or size change)."""
        (x0, x1), (y0, y1) = self._plot.getViewBox().viewRange()
        major_x, minor_x, major_y, minor_y = self.tick_positions()
        paths = []
        for xs, ys in ((major_x, major_y), (minor_x, minor_y)):
            path = QPainterPath()
            for x in xs:
                path.moveTo(x, y0)
                path.lineTo(x, y1)
            for y in ys:
                path.moveTo(x0, y)
                path.lineTo(x1, y)
            paths.append(path)
        self.prepareGeometryChange()
        self._major, self._minor = paths
        self._rect = QRectF(x0, y0, x1 - x0, y1 - y0)
        self.update()

    def boundingRect(self) -> QRectF:
        return self._rect

    def paint(self, painter, *args) -> None:
        painter.setRenderHint(QPainter.Antialiasing, False)  # 1-pixel lines stay sharp
        painter.setPen(self._minor_pen)
        painter.drawPath(self._minor)
        painter.setPen(self._major_pen)
        painter.drawPath(self._major)


class FrequencyPlot(QWidget):
    """One rectilinear plot of a chosen quantity for every visible trace."""

    #: Emitted after every redraw.
    redrawn = Signal()

    def __init__(self, state: Session, quantity: str = "return_loss", parent: QWidget | None = None,
                 theme: Theme = LIGHT, slot: str = "upper", *, controller=None):
        super().__init__(parent)
        self.state = state
        """Where the user's edits go (markers placed and dragged, band, zoom, quantity); never read to draw."""
        self.slot = slot
        """Which of the session's two plots this is: "upper" or "lower"."""
        self.theme = theme
        self.log_x = False
        self.last_redraw_s = 0.0
        """How long the latest redraw took, in seconds."""
        self._labelled: str | None = None
        self._scene = None  # the Scene drawn last (everything drawn comes from it)
        self._drawn_markers: dict[int, object] = {}
        self.chooser = QComboBox()
        for q in plot_series.QUANTITIES:
            self.chooser.addItem(q.title, q.key)
        self.viewbox = BandViewBox(enableMenu=False)
        self.plot = PlotView(self.viewbox, background=theme.chart_bg)
        self.plot.setLabel("bottom", "Frequency", units="Hz")
        self.plot.getAxis("left").setWidth(56)
        for name in ("left", "bottom"):
            # Keep the axes' pixels until the range or size changes: a marker line moving
            # over the plot then repaints only itself.
            self.plot.getAxis(name).setCacheMode(QGraphicsItem.DeviceCoordinateCache)
        self.grid = PlotGrid(self.plot.getPlotItem(), theme)
        self.note = QLabel("")
        self.note.setObjectName("hint")
        quiet_label(self.note)
        # The note may be long ("relative to …"): it is cut rather than widening the window.
        self.note.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Preferred)
        self.note.setAlignment(Qt.AlignLeft | Qt.AlignVCenter)  # cut at its end, never its start
        self.log_y_box = QCheckBox("Log")
        self.log_y_box.setToolTip("Logarithmic value axis (VSWR, |Z| and ratios, which span decades)")
        self.zoom_button = QToolButton()
        self.zoom_button.setText("Autoscale")
        self.zoom_button.setToolTip("Reset this plot's zoom: fit the visible traces (double-click does the same)")
        top = QHBoxLayout()
        top.setContentsMargins(4, 2, 4, 0)
        top.addWidget(self.chooser)
        top.addWidget(self.log_y_box)
        top.addWidget(self.zoom_button)
        top.addWidget(self.note, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(2)
        layout.addLayout(top)
        layout.addWidget(self.plot, 1)
        self.setFocusPolicy(Qt.StrongFocus)

        self._curves: list[pg.PlotDataItem] = []
        self._used = 0
        self._bands: list[tuple] = []  # (lower edge, upper edge, fill) per uncertainty band
        self._limit_items: list = []  # limit lines, their shading and labels
        self._lines: dict[int, pg.InfiniteLine] = {}
        self._region: pg.LinearRegionItem | None = None  # made when a band is first chosen

        # New curves are drawn on the next turn of the event loop, once however many Scenes
        # arrived: a new 100 000-point trace then costs the UI thread several short steps
        # (chart, each plot, painting) instead of one long one. Marker lines and the band
        # follow each Scene at once (a drag step shows in the same turn).
        self._redraw_timer = QTimer(self)
        self._redraw_timer.setSingleShot(True)
        self._redraw_timer.setInterval(0)
        self._redraw_timer.timeout.connect(self.redraw)
        self.chooser.currentIndexChanged.connect(self._on_chooser)
        self.log_y_box.toggled.connect(self.set_log_y)
        self.zoom_button.clicked.connect(self.reset_zoom)
        self.viewbox.sigRangeChangedManually.connect(self._on_zoomed_by_hand)
        self._applying_view = False
        self.viewbox.sigBand.connect(self._on_band_dragged)
        self.plot.scene().sigMouseClicked.connect(self._on_clicked)
        self.log_y = False
        from refplane.views.scene_controller import controller_for

        self.controller = controller_for(state, self, controller)
        self.controller.attach(self)

    # ---------------------------------------------------------------- scene
    @property
    def _index(self) -> int:
        return 0 if self.slot == "upper" else 1

    def set_scene(self, scene) -> None:
        """Show ``scene``: display options, marker lines and band at once; new curves on the next turn.

        Parts are compared with the Scene drawn last by identity (resolve keeps unchanged parts
        as the same objects), so a marker drag step moves one line and touches no curve.
        """
        old = self._scene
        self._scene = scene
        if old is None:
            self._first_scene(scene)
            return
        redrawn = False
        if old.display is not scene.display:
            redrawn = self._apply_display(old.display, scene.display)
        if not redrawn and (old.plots[self._index] is not scene.plots[self._index]
                            or old.limits is not scene.limits):
            self.schedule_redraw()
        if old.markers != scene.markers:
            self._sync_lines()
        if old.band != scene.band:
            self._on_band_changed()

    def _first_scene(self, scene) -> None:
        self._sync_chooser()
        self.log_x = scene.display.log_frequency
        self.log_y = self._wants_log_y()
        if self.log_x or self.log_y:
            self.plot.setLogMode(x=self.log_x, y=self.log_y)
        self._sync_log_box()
        self.redraw()
        if self._session_view() is not None:
            self._apply_view()

    def _apply_display(self, old, new) -> bool:
        """Follow changed display options; True when the curves were redrawn on the way."""
        redrawn = False
        view_changed = getattr(old, f"{self.slot}_view") != getattr(new, f"{self.slot}_view")
        if getattr(old, f"{self.slot}_plot") != getattr(new, f"{self.slot}_plot"):
            # A zoom that arrives with the new quantity (a session opened) is kept.
            self._on_quantity_changed(keep_view=view_changed)
            redrawn = True
        if old.log_y != new.log_y:
            redrawn = self._apply_log_y() or redrawn
        if view_changed and not self._applying_view:
            self._apply_view()
        if old.log_frequency != new.log_frequency:
            redrawn = self._set_log_x(new.log_frequency) or redrawn
        return redrawn

    def _sync_chooser(self) -> None:
        key = self._session_quantity()
        if self.chooser.currentData() != key:
            self.chooser.blockSignals(True)
            self.chooser.setCurrentIndex(self.chooser.findData(key))
            self.chooser.blockSignals(False)

    # ---------------------------------------------------------------- public
    @property
    def quantity(self) -> str:
        """Key of the quantity shown (see :data:`refplane.session.plot_series.QUANTITIES`)."""
        return self._session_quantity()

    def set_quantity(self, key: str) -> None:
        """Show another quantity (a session display option)."""
        self.state.set_display(**{f"{self.slot}_plot": key})

    def _session_quantity(self) -> str:
        return getattr(self._scene.display, f"{self.slot}_plot")

    # ------------------------------------------------------------- y axis
    def _wants_log_y(self) -> bool:
        return self._session_quantity() in self._scene.display.log_y

    def set_log_y(self, on: bool) -> None:
        """Draw this plot's quantity on a logarithmic value axis (a session option, per quantity)."""
        from refplane.session.model import LOG_Y_QUANTITIES

        key = self._session_quantity()
        if key not in LOG_Y_QUANTITIES:
            return
        chosen = set(self._scene.display.log_y)
        chosen = chosen | {key} if on else chosen - {key}
        self.state.set_display(log_y=tuple(chosen))

    def _sync_log_box(self) -> None:
        from refplane.session.model import LOG_Y_QUANTITIES

        allowed = self._session_quantity() in LOG_Y_QUANTITIES
        self.log_y_box.blockSignals(True)
        self.log_y_box.setChecked(self._wants_log_y())
        self.log_y_box.setEnabled(allowed)
        self.log_y_box.setToolTip("Logarithmic value axis" if allowed else
                                  "Only VSWR, |Z| and the ratio to the memory span decades; "
                                  "their plots can use a log scale")
        self.log_y_box.blockSignals(False)

    def _apply_log_y(self) -> bool:
        wanted = self._wants_log_y()
        self._sync_log_box()
        if wanted == self.log_y:
            return False
        self.log_y = wanted
        self.plot.setLogMode(x=self.log_x, y=self.log_y)
        self.redraw()
        if self._session_view() is None:
            self.viewbox.autoRange(padding=None)
            self.plot.enableAutoRange()
        return True

    # --------------------------------------------------------------- zoom
    def _session_view(self):
        return getattr(self._scene.display, f"{self.slot}_view")

    def reset_zoom(self) -> None:
        """Fit the plot to its visible traces again, and keep fitting (forgets the zoom)."""
        self.state.set_display(**{f"{self.slot}_view": None})
        self.viewbox.autoRange(padding=None)
        self.plot.enableAutoRange()

    def _on_zoomed_by_hand(self, *_args) -> None:
        (x0, x1), (y0, y1) = self.viewbox.viewRange()
        f0, f1 = self._freq(x0), self._freq(x1)
        if self.log_y:
            y0, y1 = 10.0 ** y0, 10.0 ** y1
        self._applying_view = True
        try:
            self.state.set_display(**{f"{self.slot}_view": (f0, f1, y0, y1)})
        except Exception:  # noqa: BLE001 - a degenerate range (a zoom to nothing) is not kept
            pass
        finally:
            self._applying_view = False

    def _apply_view(self) -> None:
        view = self._session_view()
        if view is None:
            self.viewbox.autoRange(padding=None)
            self.plot.enableAutoRange()
            return
        f0, f1, y0, y1 = view
        if self.log_y:
            y0, y1 = math.log10(max(y0, 1e-300)), math.log10(max(y1, 1e-300))
        self.viewbox.setRange(xRange=(self._x(max(f0, 1e-300) if self.log_x else f0), self._x(f1)),
                              yRange=(y0, y1), padding=0)

    def _on_chooser(self, _index: int) -> None:
        key = self.chooser.currentData()
        if key is not None:
            self.set_quantity(key)

    def _on_quantity_changed(self, *, keep_view: bool = False) -> None:
        self._sync_chooser()
        self._sync_log_box()
        if self._wants_log_y() != self.log_y:
            self._apply_log_y()
        else:
            self.redraw()
        if keep_view:
            return
        # A new quantity has its own scale: fit it.
        if self._session_view() is not None:
            self.state.set_display(**{f"{self.slot}_view": None})
        else:
            self.viewbox.autoRange(padding=None)
            self.plot.enableAutoRange()

    def set_log_x(self, log_x: bool) -> None:
        """Logarithmic or linear frequency axis (a session display option, shared by both plots)."""
        self.state.set_display(log_frequency=bool(log_x))

    def _set_log_x(self, log_x: bool) -> bool:
        if bool(log_x) == self.log_x:
            return False
        self.log_x = bool(log_x)
        self.plot.setLogMode(x=self.log_x, y=self.log_y)
        self.redraw()
        # Fit the view to the curves now: until then it still holds the old range (hertz read
        # as log10 hertz, say), which the axis cannot label.
        self.viewbox.autoRange(padding=None)
        self.plot.enableAutoRange()
        return True

    def set_theme(self, theme: Theme) -> None:
        self.theme = theme
        self.plot.setBackground(theme.chart_bg)
        self.grid.set_theme(theme)
        self._set_region_theme()
        self.redraw()

    def curve_items(self) -> list[pg.PlotDataItem]:
        """The curves drawn (for tests and export)."""
        return list(self._curves)

    def marker_line(self, marker_id: int) -> pg.InfiniteLine:
        """The vertical line of a marker (for tests)."""
        return self._lines[marker_id]

    def schedule_redraw(self) -> None:
        """Redraw on the next turn of the event loop (several changes make one redraw)."""
        self._redraw_timer.start()

    def flush(self) -> None:
        """Redraw now if a redraw is pending (tests, export)."""
        if self._redraw_timer.isActive():
            self._redraw_timer.stop()
            self.redraw()

    # --------------------------------------------------------------- helpers
    def _x(self, freq_hz: float) -> float:
        # In log mode pyqtgraph's view coordinates are log10 of the data.
        return math.log10(freq_hz) if self.log_x else freq_hz

    def _freq(self, x: float) -> float:
        return 10.0 ** x if self.log_x else x

    @property
    def region(self) -> pg.LinearRegionItem:
        """The shaded band (built on first use: most sessions never choose a band)."""
        if self._region is None:
            region = pg.LinearRegionItem(movable=True)
            region.setZValue(-5)
            region.setVisible(False)
            self.plot.addItem(region, ignoreBounds=True)
            region.sigRegionChanged.connect(lambda: self._on_region_moved(False))
            region.sigRegionChangeFinished.connect(lambda: self._on_region_moved(True))
            self._region = region
            self._set_region_theme()
        return self._region

    def _set_region_theme(self) -> None:
        if self._region is None:
            return
        c = QColor(self.theme.accent)
        c.setAlphaF(0.14)
        self.region.setBrush(c)
        edge = QColor(self.theme.accent)
        for line in self.region.lines:
            line.setPen(pg.mkPen(edge, width=1.5))

    # ----------------------------------------------------------------- slots
    def redraw(self, *_args) -> None:
        """Draw every visible trace's curves for the chosen quantity (now)."""
        started = time.perf_counter()
        self._redraw_timer.stop()
        self._used = 0  # curves are reused by index; those left over are removed at the end
        view = self._scene.plots[self._index]
        q = plot_series.BY_KEY[view.quantity]
        unit = q.unit
        axis = self.plot.getAxis("left")
        if self._labelled != q.key:  # relabelling lays the axis text out anew: only on a change
            axis.enableAutoSIPrefix(unit == "Ω")
            self.plot.setLabel("left", q.axis, units=unit or None)
            self._labelled = q.key
        styles = {"solid": Qt.SolidLine, "dashed": Qt.DashLine, "dotted": Qt.DotLine}
        for curve in view.curves:
            x, y = plot_series.finite_for_plot(curve.freq_hz, curve.y, self.log_x)
            if self.log_y:
                y = np.where(y > 0, y, np.nan)  # a log axis has no place for zero or below
            colour = QColor(curve.colour)
            if curve.style == "dotted":
                # A fitted model: its trace's colour with dashes of a contrasting colour over
                # it, so it shows even where it lies exactly on the trace.
                from refplane.views.smith_chart import model_dash_pen

                self._add_curve(x, y, pg.mkPen(colour, width=curve.width + 0.4))
                self._add_curve(x, y, model_dash_pen(self.theme.model_outline, curve.width + 0.4))
                continue
            # The faded (uncorrected) trace takes the theme's opacity, chosen to stay visible
            # on that theme's background.
            colour.setAlphaF(curve.alpha if curve.alpha >= 1.0 else self.theme.faded_alpha)
            self._add_curve(x, y, pg.mkPen(colour, width=curve.width, style=styles[curve.style]))
        for item in self._curves[self._used:]:
            self.plot.removeItem(item)
        del self._curves[self._used:]
        self._draw_bands(view.bands)
        self._draw_limits(self._scene.limits, view.quantity)
        self.note.setText(view.note)
        self.note.setToolTip(view.note)  # the whole note, when the plot is too narrow for it
        self._drawn_markers.clear()  # the frequency axis may have changed: place every line again
        self._sync_lines()
        self._on_band_changed()
        self.last_redraw_s = time.perf_counter() - started
        self.redrawn.emit()

    def _add_curve(self, x: np.ndarray, y: np.ndarray, pen) -> pg.PlotDataItem:
        """Draw one curve, reusing the item at the next index when there is one.

        Updating an item's data (and its pen only when the pen changed) costs far less than
        removing every item and adding new ones on each redraw, which re-lays the view box's
        bounds and the scene's index for every item.
        """
        pen, mode = line_mode(pen)
        index = self._used
        self._used += 1
        if index < len(self._curves):
            item = self._curves[index]
            if item.curve.opts.get("segmentedLineMode") != mode:
                item.curve.setSegmentedLineMode(mode)
            if item.opts["pen"] != pen:
                item.setPen(pen)
            item.setData(x, y)
            return item
        item = pg.PlotDataItem(x, y, pen=pen, connect="finite", antialias=True)
        item.curve.setSegmentedLineMode(mode)
        self.plot.addItem(item)
        # Long sweeps: draw only what is in view, thinned to about two points per pixel
        # column keeping each column's extremes, so nothing visible is lost. (Set after
        # adding: the item needs its view box to clip.)
        item.opts["autoDownsampleFactor"] = 1.5  # "peak" keeps 2 values per step: ~3 per pixel
        item.setDownsampling(auto=True, method="peak")
        item.setClipToView(True)
        self._curves.append(item)
        return item

    #: Opacity of an uncertainty band's fill (the trace's colour; light enough for both themes).
    BAND_ALPHA = 0.22

    def _draw_bands(self, bands) -> None:
        """Shade value ± U around the curves (the session's bands), reusing items by index."""
        for i, band in enumerate(bands):
            x, lo = plot_series.finite_for_plot(band.freq_hz, band.lower, self.log_x)
            _, hi = plot_series.finite_for_plot(band.freq_hz, band.upper, self.log_x)
            if self.log_y:
                lo = np.where(lo > 0, lo, np.nan)
                hi = np.where(hi > 0, hi, np.nan)
            colour = QColor(band.colour)
            colour.setAlphaF(self.BAND_ALPHA)
            if i < len(self._bands):
                low, high, fill = self._bands[i]
                low.setData(x, lo)
                high.setData(x, hi)
            else:
                low = pg.PlotDataItem(x, lo, pen=_NO_PEN, connect="finite")
                high = pg.PlotDataItem(x, hi, pen=_NO_PEN, connect="finite")
                for edge in (low, high):
                    self.plot.addItem(edge)
                    edge.setDownsampling(auto=True, method="peak")
                    edge.setClipToView(True)
                fill = pg.FillBetweenItem(low, high)
                fill.setZValue(-1)  # behind the curves, in front of the grid
                # Its edges carry the bounds; the fill's own rectangle starts at the origin
                # until its path is made, which would stretch the auto-range to zero.
                self.plot.addItem(fill, ignoreBounds=True)
                self._bands.append((low, high, fill))
            fill.setBrush(pg.mkBrush(colour))
        for items in self._bands[len(bands):]:
            for item in items:
                self.plot.removeItem(item)
        del self._bands[len(bands):]

    #: Colour of a limit line and its shading per decision; mid tones that read on the light
    #: and the dark theme alike. Indeterminate is drawn in the failing family (not a pass) but
    #: dashed; a limit not yet decided (no current trace) is grey and dashed.
    LIMIT_COLOURS = {"pass": "#2f9e55", "fail": "#d8413a", "indeterminate": "#e07a1f", None: "#8a919c"}
    LIMIT_WORDS = {"pass": "pass", "fail": "FAIL", "indeterminate": "indeterminate", None: ""}
    LIMIT_ALPHA = 0.30

    def _draw_limits(self, checks, quantity: str) -> None:
        """Each limit on this plot's quantity: a line over its band, the readings' side shaded.

        The shading fills between the limit and the current trace's readings in the band
        (the points ``analysis.limits`` tested), in the decision's colour, so the margin shows
        where it is smallest. A few items per limit: made anew on each redraw.
        """
        for item in self._limit_items:
            self.plot.removeItem(item)
        self._limit_items = []
        placed = 0
        for check in checks:
            if check.limit is None or check.plot != quantity:
                continue
            lim = check.limit
            colour = QColor(self.LIMIT_COLOURS.get(check.decision, self.LIMIT_COLOURS[None]))
            style = Qt.SolidLine if check.decision in ("pass", "fail") else Qt.DashLine
            f = np.asarray(lim.band_hz, dtype=float)
            x, y = plot_series.finite_for_plot(f, np.full(2, lim.value), self.log_x)
            if self.log_y and lim.value <= 0:
                continue  # a log axis has no place for it
            line = pg.PlotDataItem(x, y, pen=pg.mkPen(colour, width=2.2, style=style))
            line.setZValue(2)  # over the curves: the limit is what is being judged
            line.limit_text = check.text
            self.plot.addItem(line)
            self._limit_items.append(line)
            result = check.result
            if result is not None:
                fx, edge = plot_series.finite_for_plot(result.freq_hz, np.full(result.freq_hz.size, lim.value),
                                                       self.log_x)
                _, values = plot_series.finite_for_plot(result.freq_hz, result.values, self.log_x)
                if self.log_y:
                    values = np.where(values > 0, values, np.nan)
                low = pg.PlotDataItem(fx, edge, pen=_NO_PEN)
                high = pg.PlotDataItem(fx, values, pen=_NO_PEN, connect="finite")
                shade = QColor(colour)
                shade.setAlphaF(self.LIMIT_ALPHA)
                fill = pg.FillBetweenItem(low, high, brush=pg.mkBrush(shade))
                fill.setZValue(-1)
                fill.decision = result.decision
                for item in (low, high, fill):
                    # The readings are the curve's, already counted in the view's range; the
                    # fill's rectangle would reach to the origin (see _draw_bands).
                    self.plot.addItem(item, ignoreBounds=item is not low)
                self._limit_items += [low, high, fill]
            word = self.LIMIT_WORDS.get(check.decision, "")
            # Labels alternate between the band's start and its end, so limits over the same
            # band at close values do not print over each other.
            at_end = placed % 2 == 1
            placed += 1
            text = pg.TextItem(f"{'≤' if lim.op == '<=' else '≥'} {lim.value:g}  {word}".strip(),
                               color=colour, anchor=(1, 1) if at_end else (0, 1))
            # A text item sits in view coordinates: log10 of the data on a log axis.
            text.setPos(self._x(float(x[-1] if at_end else x[0])),
                        math.log10(lim.value) if self.log_y else lim.value)
            self.plot.addItem(text, ignoreBounds=True)
            self._limit_items.append(text)

    def limit_items(self) -> list:
        """Every item drawing the limits (lines, shading, labels), for tests."""
        return list(self._limit_items)

    def band_items(self) -> list[tuple[pg.PlotDataItem, pg.PlotDataItem, pg.FillBetweenItem]]:
        """The uncertainty bands drawn: (lower edge, upper edge, fill) each (for tests and export)."""
        return list(self._bands)

    def _sync_lines(self) -> None:
        """Marker lines for the Scene's markers: added, removed, and updated where the marker changed."""
        markers = self._scene.markers
        ids = {m.id for m in markers}
        for mid in list(self._lines):
            if mid not in ids:
                self.plot.removeItem(self._lines.pop(mid))
                self._drawn_markers.pop(mid, None)
        for m in markers:
            if self._drawn_markers.get(m.id) is m:
                continue
            self._drawn_markers[m.id] = m
            number = m.number
            t = m
            line = self._lines.get(m.id)
            if line is None:
                line = pg.InfiniteLine(angle=90, movable=True,
                                       label=str(number), labelOpts={"position": 0.94, "color": t.colour})
                line.sigPositionChanged.connect(lambda ln, mid=m.id: self._on_line_dragged(mid, ln, False))
                line.sigPositionChangeFinished.connect(lambda ln, mid=m.id: self._on_line_dragged(mid, ln, True))
                self.plot.addItem(line)
                self._lines[m.id] = line
            line.label.setFormat(str(number))
            line.setPen(pg.mkPen(t.colour, width=1.4, style=Qt.DashLine))
            line.setHoverPen(pg.mkPen(self.theme.accent, width=2.5))
            line.setVisible(t.visible)
            self._place_line(line, m.freq_hz)

    def _place_line(self, line: pg.InfiniteLine, freq_hz: float) -> None:
        if self.log_x and freq_hz <= 0:
            return
        line.blockSignals(True)
        line.setValue(self._x(freq_hz))
        line.blockSignals(False)

    def _on_line_dragged(self, marker_id: int, line: pg.InfiniteLine, finished: bool) -> None:
        self.state.set_current_marker(marker_id)
        self.state.move_marker(marker_id, self._freq(line.value()), finished=finished)

    def _on_band_dragged(self, x1: float, x2: float, finished: bool) -> None:
        f1, f2 = sorted((self._freq(x1), self._freq(x2)))
        if f2 > f1:
            self.state.set_band((f1, f2), finished=finished)

    def _on_region_moved(self, finished: bool) -> None:
        if self._syncing_region:
            return
        x1, x2 = self.region.getRegion()
        f1, f2 = sorted((self._freq(x1), self._freq(x2)))
        if f2 > f1:
            self.state.set_band((f1, f2), finished=finished)

    _syncing_region = False

    def _on_band_changed(self) -> None:
        band = self._scene.band
        self._syncing_region = True
        try:
            if band is None or (self.log_x and band[0] <= 0):
                if self._region is not None:
                    self._region.setVisible(False)
            else:
                self.region.setRegion((self._x(band[0]), self._x(band[1])))
                self.region.setVisible(True)
        finally:
            self._syncing_region = False

    def context_menu(self, freq_hz: float | None = None):
        """The right-click menu of the plot (at ``freq_hz`` when the click was inside it)."""
        from PySide6.QtWidgets import QMenu

        from refplane.session.model import LOG_Y_QUANTITIES

        menu = QMenu(self)
        tid = self._scene.current_trace
        add = menu.addAction("Add marker here on the current trace",
                             lambda: self._add_marker_at(freq_hz))
        add.setEnabled(tid != -1 and freq_hz is not None)
        menu.addAction("Autoscale (fit the visible traces)", self.reset_zoom)
        log = menu.addAction("Log scale", lambda: self.set_log_y(not self._wants_log_y()))
        log.setCheckable(True)
        log.setChecked(self._wants_log_y())
        log.setEnabled(self._session_quantity() in LOG_Y_QUANTITIES)
        if self._scene.band is not None:
            menu.addAction("Clear band", lambda: self.state.set_band(None))
        return menu

    def _add_marker_at(self, freq_hz: float | None) -> None:
        from refplane.analysis.errors import AnalysisError

        tid = self._scene.current_trace
        if tid == -1 or freq_hz is None:
            return
        try:
            self.state.add_marker(tid, freq_hz)
        except AnalysisError:
            pass  # outside the current trace's sweep: nothing to place

    def _on_clicked(self, ev) -> None:
        if ev.button() == Qt.LeftButton and ev.double():
            self.reset_zoom()
            return
        if ev.button() == Qt.RightButton:
            inside = self.viewbox.sceneBoundingRect().contains(ev.scenePos())
            freq = self._freq(self.viewbox.mapSceneToView(ev.scenePos()).x()) if inside else None
            ev.accept()
            self.context_menu(freq).exec(ev.screenPos().toPoint())
            return
        if ev.button() != Qt.LeftButton or ev.double() or ev.modifiers() & Qt.ShiftModifier:
            return
        if not self.viewbox.sceneBoundingRect().contains(ev.scenePos()):
            return
        if any(isinstance(i, pg.InfiniteLine) for i in self.plot.scene().items(ev.scenePos())):
            return
        tid = self._scene.current_trace
        if tid == -1:
            return
        f = self._freq(self.viewbox.mapSceneToView(ev.scenePos()).x())
        freq = self._scene.trace(tid).freq_hz
        if freq[0] <= f <= freq[-1]:
            self.setFocus()
            self.state.add_marker(tid, f)

    def keyPressEvent(self, ev) -> None:
        mid = self._scene.current_marker
        if ev.key() in (Qt.Key_Left, Qt.Key_Right) and mid != -1:
            step = 1 if ev.key() == Qt.Key_Right else -1
            if ev.modifiers() & Qt.ShiftModifier:
                step *= 10
            self.state.step_marker(mid, step)
            ev.accept()
        else:
            super().keyPressEvent(ev)


class CompanionPlots(QWidget):
    """Two frequency plots, stacked, sharing the frequency axis, a log/linear switch and band tools."""

    def __init__(self, state: Session, parent: QWidget | None = None, theme: Theme = LIGHT, *,
                 controller=None):
        super().__init__(parent)
        self.state = state
        from refplane.views.scene_controller import controller_for

        # One controller for both plots and the bar (the window passes its own).
        self.controller = controller_for(state, self, controller)
        self._scene = None
        self.upper = FrequencyPlot(state, theme=theme, slot="upper", controller=self.controller)
        self.lower = FrequencyPlot(state, theme=theme, slot="lower", controller=self.controller)
        # After a slow redraw of the upper plot (long sweeps), the lower plot's pending redraw
        # waits a little, so the event loop (and the user) gets a turn and the upper plot is
        # painted in between; otherwise the two redraws and all the painting would run back
        # to back. Quick redraws (small sweeps, start-up) are not held back.
        self.upper.redrawn.connect(self._stagger_lower)
        self.lower.plot.setXLink(self.upper.plot)
        self.log_box = QCheckBox("Log frequency")
        self.band_button = QPushButton("Pick band")
        self.band_button.setCheckable(True)
        self.band_button.setToolTip("Drag across a plot to choose a band (or hold Shift while dragging)")
        self.clear_band = QPushButton("Clear band")
        self.band_label = QLabel("")
        self.band_label.setObjectName("hint")
        quiet_label(self.band_label)
        bar = QHBoxLayout()
        bar.setContentsMargins(4, 0, 4, 0)
        bar.addWidget(self.log_box)
        bar.addSpacing(12)
        bar.addWidget(self.band_button)
        bar.addWidget(self.clear_band)
        bar.addWidget(self.band_label, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(4)
        layout.addLayout(bar)
        layout.addWidget(self.upper, 1)
        layout.addWidget(self.lower, 1)
        self.log_box.toggled.connect(self.set_log_x)
        self.band_button.toggled.connect(self._set_band_mode)
        self.clear_band.clicked.connect(lambda: state.set_band(None))
        self.controller.attach(self)

    def set_scene(self, scene) -> None:
        """Follow ``scene`` in the bar: the log-frequency box and the band's text."""
        old, self._scene = self._scene, scene
        if self.log_box.isChecked() != scene.display.log_frequency:
            self.log_box.blockSignals(True)
            self.log_box.setChecked(scene.display.log_frequency)
            self.log_box.blockSignals(False)
        if old is None or old.band != scene.band:
            self._show_band()

    #: An upper-plot redraw slower than this holds the lower plot's back by :attr:`STAGGER_MS`.
    SLOW_REDRAW_S = 0.010
    STAGGER_MS = 25

    def _stagger_lower(self) -> None:
        timer = self.lower._redraw_timer
        if timer.isActive() and self.upper.last_redraw_s > self.SLOW_REDRAW_S:
            timer.start(self.STAGGER_MS)
        else:
            timer.setInterval(0)

    def plots(self) -> list[FrequencyPlot]:
        return [self.upper, self.lower]

    def flush(self) -> None:
        """Draw now whatever either plot has pending."""
        for p in self.plots():
            p.flush()

    def set_log_x(self, log_x: bool) -> None:
        """Log or linear frequency on both plots (a session display option)."""
        self.state.set_display(log_frequency=bool(log_x))

    def set_theme(self, theme: Theme) -> None:
        for p in self.plots():
            p.set_theme(theme)

    def _set_band_mode(self, on: bool) -> None:
        for p in self.plots():
            p.viewbox.band_mode = on

    def _show_band(self) -> None:
        from refplane.analysis.units import format_frequency

        band = self._scene.band
        self.clear_band.setEnabled(band is not None)
        self.clear_band.setToolTip("Forget the selected band" if band is not None else
                                   "No band chosen: Shift-drag across a plot, or Pick band then drag")
        self.band_label.setText(
            "" if band is None else f"Band {format_frequency(band[0], 5)} – {format_frequency(band[1], 5)}")
