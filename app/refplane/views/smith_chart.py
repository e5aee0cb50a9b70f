"""The Smith chart widget: our own grid, traces, markers and a constant-VSWR circle, in pyqtgraph.

One graphics item per visual element, each fed precomputed arrays:

- :class:`GridItem` — unit circle, impedance grid (and optionally the admittance grid), labels;
  geometry from :mod:`refplane.views.smith_grid`.
- :class:`TraceItem` — one trace's Γ curve with a start symbol (open circle) and an end
  symbol (filled square), so the direction of increasing frequency is visible.
- :class:`MarkerItem` — one marker, drawn at a fixed pixel size and draggable; it reports
  drags, the chart turns them into frequencies and tells the state.
- :class:`VswrCircleItem` — the constant-VSWR circle.

:class:`SmithChart` draws the frozen :class:`~refplane.session.scene.Scene` handed to its
``set_scene`` (by a :class:`~refplane.views.scene_controller.SceneController`), redrawing only
the parts that differ from the Scene drawn before; it never reads the session to draw. User
edits (marker drags and clicks, zoom, menu actions) go to session methods. The only maths
here is the cursor's Γ through ``impedance.gamma_to_z`` for the hover line.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, QRectF, Qt, Signal
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QPainter, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsItem, QLabel, QSizePolicy, QVBoxLayout, QWidget

from refplane.views import smith_grid
from refplane.views.line_drawing import apply_line_mode
from refplane.views.plot_area import discard
from refplane.session.model import Session
from refplane.views.theme import LIGHT, Theme, quiet_label

#: How close (in pixels) the cursor must be to a trace to read its frequency or place a marker.
PICK_PX = 9.0
#: The view shown at start and by "Reset view": the unit circle plus room for the labels.
HOME = 1.16


def _arcs_path(arcs) -> QPainterPath:
    """One path holding every arc (true arcs: Qt draws each as a few curve pieces)."""
    path = QPainterPath()
    for arc in arcs:
        rect = QRectF(arc.cx - arc.radius, arc.cy - arc.radius, 2 * arc.radius, 2 * arc.radius)
        # Qt measures angles in degrees, anticlockwise for a y-down page; the chart's y runs
        # up (the view flips it), so a chart angle θ is Qt's −θ.
        start, span = -math.degrees(arc.start_rad), -math.degrees(arc.span_rad)
        path.arcMoveTo(rect, start)
        path.arcTo(rect, start, span)
    return path


def _line_path(ends) -> QPainterPath:
    (x0, y0), (x1, y1) = ends
    path = QPainterPath(QPointF(x0, y0))
    path.lineTo(QPointF(x1, y1))
    return path


def model_dash_pen(outline: str, width: float) -> QPen:
    """The dashes drawn over a fitted model curve: short dashes in a colour that contrasts
    with every trace colour, so the model shows even where it lies exactly on its trace."""
    pen = QPen(QColor(outline), width)
    pen.setCosmetic(True)
    pen.setDashPattern([3.0, 3.0])
    pen.setCapStyle(Qt.FlatCap)
    return pen


def _pen(colour: str, width: float = 1.0, style=Qt.SolidLine, alpha: float = 1.0) -> QPen:
    c = QColor(colour)
    c.setAlphaF(alpha)
    pen = QPen(c, width)
    pen.setCosmetic(True)  # constant width in pixels: crisp at any zoom and on high-DPI screens
    pen.setStyle(style)
    pen.setCapStyle(Qt.RoundCap)
    pen.setJoinStyle(Qt.RoundJoin)
    return pen


class GridItem(pg.GraphicsObject):
    """The chart's grid: unit circle, constant-r circles, constant-x arcs, value labels."""

    def __init__(self, theme: Theme = LIGHT):
        super().__init__()
        self._theme = theme
        self._impedance = smith_grid.impedance_grid()
        self._admittance: smith_grid.GridLines | None = None
        self._paths: list[tuple[QPainterPath, QPen]] = []
        # The grid changes only with zoom or theme: keep its pixels (at device resolution, so
        # still crisp on high-DPI screens) instead of redrawing thousands of segments each time
        # a marker moves over it.
        self.setCacheMode(QGraphicsItem.DeviceCoordinateCache)
        self.labels = GridLabelsItem(self._impedance.labels, theme.label)
        self.labels.setParentItem(self)
        self._rebuild()

    def set_theme(self, theme: Theme) -> None:
        """Recolour the grid."""
        self._theme = theme
        self._rebuild()

    def set_admittance(self, grid: smith_grid.GridLines | None) -> None:
        """Show an admittance grid (precomputed) behind the impedance grid, or hide it with None."""
        self._admittance = grid
        self._rebuild()

    def _rebuild(self) -> None:
        t = self._theme
        paths = []
        if self._admittance is not None:
            paths.append((_arcs_path(self._admittance.minor), _pen(t.admittance, 0.8, alpha=0.6)))
            paths.append((_arcs_path(self._admittance.major), _pen(t.admittance, 1.0)))
        g = self._impedance
        paths.append((_arcs_path(g.minor), _pen(t.grid_minor, 0.8)))
        paths.append((_arcs_path(g.major), _pen(t.grid_major, 1.0)))
        paths.append((_line_path(g.axis), _pen(t.grid_major, 1.0)))
        paths.append((_arcs_path([smith_grid.unit_circle()]), _pen(t.rim, 1.6)))
        self._paths = paths
        self.labels.set_colour(t.label)
        self.prepareGeometryChange()
        self.update()

    def boundingRect(self) -> QRectF:
        return QRectF(-1.02, -1.02, 2.04, 2.04)

    def paint(self, painter: QPainter, *args) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        for path, pen in self._paths:
            painter.setPen(pen)
            painter.drawPath(path)


class GridLabelsItem(pg.GraphicsObject):
    """All the grid's value labels in one item, written at a fixed size in pixels at any zoom.

    One item painting every label costs a fraction of one text item per label, which is what
    makes the chart quick to build at start-up.
    """

    def __init__(self, labels: tuple[smith_grid.GridLabel, ...], colour: str):
        super().__init__()
        self._labels = labels
        self._colour = QColor(colour)
        self._font = QFont()
        self._font.setPointSizeF(8.0)
        metrics = QFontMetricsF(self._font)
        self._ascent = metrics.ascent()
        # Each text keeps a margin of this many pixels around it, clear of the line it labels.
        self._margin = 4.0
        self._sizes = [(metrics.horizontalAdvance(lab.text) + 2 * self._margin,
                        metrics.height() + 2 * self._margin) for lab in labels]
        # Texts stand out of the points they label by up to this many pixels, in any direction.
        self._reach_px = max((max(w, h) for w, h in self._sizes), default=0.0) + 2.0
        self._bounds = self._data_bounds(0.0)
        self._px_per_unit = (1.0, -1.0)
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.setCacheMode(QGraphicsItem.DeviceCoordinateCache)

    def set_colour(self, colour: str) -> None:
        """Rewrite the labels in another colour."""
        self._colour = QColor(colour)
        self.update()

    def label_rects(self) -> list[QRectF]:
        """Where each label's text lies, in pixels from the chart's origin (Γ = 0), y downwards."""
        sx, sy = self._px_per_unit
        return [QRectF(lab.x * sx - lab.anchor[0] * w, lab.y * sy - lab.anchor[1] * h, w, h)
                for lab, (w, h) in zip(self._labels, self._sizes)]

    def _data_bounds(self, units_per_px: float) -> QRectF:
        xs = [lab.x for lab in self._labels] or [0.0]
        ys = [lab.y for lab in self._labels] or [0.0]
        pad = self._reach_px * units_per_px
        return QRectF(min(xs) - pad, min(ys) - pad, max(xs) - min(xs) + 2 * pad, max(ys) - min(ys) + 2 * pad)

    def set_pixel_size(self, x_units: float, y_units: float, *, y_down: bool = False) -> None:
        """Tell the item the size of one view pixel in chart units, and which way y runs.

        The chart calls this whenever its view range changes: the texts keep their size in
        pixels, so where they reach in chart units changes with the zoom.
        """
        if x_units <= 0 or y_units <= 0:
            return
        self._px_per_unit = (1.0 / x_units, (1.0 if y_down else -1.0) / y_units)
        bounds = self._data_bounds(max(x_units, y_units))
        if bounds != self._bounds:
            self.prepareGeometryChange()
            self._bounds = bounds
        self.update()

    def boundingRect(self) -> QRectF:
        return self._bounds

    def paint(self, painter: QPainter, *args) -> None:
        sx, sy = self._px_per_unit
        painter.setRenderHint(QPainter.TextAntialiasing, True)
        # From here one unit is one pixel of the view, y downwards, whatever the zoom; an outer
        # scale (a 2× picture export) still applies, so texts grow with it like everything else.
        painter.scale(1.0 / sx, 1.0 / sy)
        painter.setFont(self._font)
        painter.setPen(self._colour)
        for rect, lab in zip(self.label_rects(), self._labels):
            painter.drawText(QPointF(rect.x() + self._margin, rect.y() + self._margin + self._ascent), lab.text)


class TraceItem(pg.ItemGroup):
    """One curve on the chart with start and end symbols; fed Γ's real and imaginary parts."""

    def __init__(self, colour: str, *, width: float = 2.0, dashed: bool = False,
                 alpha: float = 1.0, ends: bool = True):
        super().__init__()
        self.curve = pg.PlotCurveItem(antialias=True, skipFiniteCheck=True)
        self.curve.setParentItem(self)
        self.start = pg.ScatterPlotItem(symbol="o", size=9, pxMode=True)
        self.end = pg.ScatterPlotItem(symbol="s", size=8, pxMode=True)
        for item in (self.start, self.end):
            item.setParentItem(self)
            item.setVisible(ends)
        self._ends = ends
        self.dashes: pg.PlotCurveItem | None = None
        self.set_style(colour, width=width, dashed=dashed, alpha=alpha)

    def set_style(self, colour: str, *, width: float = 2.0, dashed: bool = False, alpha: float = 1.0,
                  outline: str | None = None) -> None:
        """Colour, width (px), dash and opacity of the curve and its end symbols.

        With ``outline`` the curve is drawn in two colours: solid in ``colour`` with dashes of
        ``outline`` over it, so it stays visible where it lies on a curve of its own colour.
        """
        pen = _pen(colour, width, Qt.DashLine if dashed else Qt.SolidLine, alpha)
        apply_line_mode(self.curve, pen)
        if outline is not None:
            if self.dashes is None:
                self.dashes = pg.PlotCurveItem(antialias=True, skipFiniteCheck=True)
                self.dashes.setParentItem(self)
            apply_line_mode(self.dashes, model_dash_pen(outline, width))
            self._draw()
        elif self.dashes is not None:
            self.dashes.setParentItem(None)
            discard(self.dashes)
            self.dashes = None
        c = QColor(colour)
        c.setAlphaF(alpha)
        self.start.setPen(pg.mkPen(c, width=1.6))
        self.start.setBrush(pg.mkBrush(255, 255, 255, int(255 * alpha)))
        self.end.setPen(pg.mkPen(c, width=1))
        self.end.setBrush(pg.mkBrush(c))

    def set_data(self, x: np.ndarray, y: np.ndarray) -> None:
        """New points (Γ real, Γ imaginary); the first and last get the start/end symbols."""
        self._x = np.asarray(x, float)
        self._y = np.asarray(y, float)
        self._draw()
        if self._ends and len(x):
            self.start.setData([x[0]], [y[0]])
            self.end.setData([x[-1]], [y[-1]])

    def set_pixel_size(self, units_per_pixel: float) -> None:
        """Tell the item how large a pixel is (chart units), so it can thin what it draws."""
        if units_per_pixel != self._pixel:
            self._pixel = units_per_pixel
            if self._x.size > self.THIN_ABOVE:
                self._draw()

    #: Curves with more points than this are thinned to half-pixel steps for drawing.
    THIN_ABOVE = 4000
    _pixel = 0.0
    _x = _y = np.empty(0)

    def _draw(self) -> None:
        x, y = self._x, self._y
        if x.size > self.THIN_ABOVE and self._pixel > 0:
            x, y = smith_grid.thin_polyline(x, y, 0.5 * self._pixel)
        self.curve.setData(x, y)
        if self.dashes is not None:
            self.dashes.setData(x, y)


class MarkerItem(pg.GraphicsObject):
    """A marker: a ring with its number beside it, fixed in pixels, draggable.

    Emits ``sigDragged(marker_id, scene_pos, finished)`` during a drag and ``sigClicked(marker_id)``.
    """

    sigDragged = Signal(int, QPointF, bool)
    sigClicked = Signal(int)

    def __init__(self, marker_id: int, number: int, colour: str, theme: Theme = LIGHT):
        super().__init__()
        self.marker_id = marker_id
        self._number = str(number)
        self._colour = QColor(colour)
        self._theme = theme
        self._current = False
        self.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self.setZValue(20)
        self.setCursor(Qt.SizeAllCursor)
        self.setAcceptHoverEvents(True)

    def set_current(self, current: bool) -> None:
        """Draw the marker the arrow keys move with an accent halo."""
        self._current = current
        self.update()

    def set_colour(self, colour: str) -> None:
        self._colour = QColor(colour)
        self.update()

    def boundingRect(self) -> QRectF:
        return QRectF(-12, -26, 40, 38)

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addEllipse(QPointF(0, 0), 9, 9)
        return path

    def paint(self, painter: QPainter, *args) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        if self._current:
            halo = QColor(self._theme.accent)
            halo.setAlphaF(0.35)
            painter.setPen(Qt.NoPen)
            painter.setBrush(halo)
            painter.drawEllipse(QPointF(0, 0), 10, 10)
        painter.setBrush(QColor(self._theme.chart_bg))
        painter.setPen(QPen(self._colour, 2.2))
        painter.drawEllipse(QPointF(0, 0), 5.5, 5.5)
        painter.setPen(QPen(self._colour, 1.4))
        painter.drawLine(QPointF(-2, 0), QPointF(2, 0))
        painter.drawLine(QPointF(0, -2), QPointF(0, 2))
        font = QFont()
        font.setPointSizeF(9.0)
        font.setBold(True)
        painter.setFont(font)
        painter.setPen(QColor(self._theme.text))
        painter.drawText(QRectF(6, -24, 22, 16), Qt.AlignLeft | Qt.AlignBottom, self._number)

    def mouseDragEvent(self, ev) -> None:
        if ev.button() != Qt.LeftButton:
            ev.ignore()
            return
        ev.accept()
        if ev.isStart():
            self.sigClicked.emit(self.marker_id)
        self.sigDragged.emit(self.marker_id, ev.scenePos(), bool(ev.isFinish()))

    def mouseClickEvent(self, ev) -> None:
        if ev.button() == Qt.LeftButton:
            ev.accept()
            self.sigClicked.emit(self.marker_id)


class VswrCircleItem(pg.PlotCurveItem):
    """The circle of one VSWR value, dashed; fed precomputed points."""

    def __init__(self, theme: Theme = LIGHT):
        super().__init__(antialias=True)
        self.set_theme(theme)
        self.setZValue(5)

    def set_theme(self, theme: Theme) -> None:
        self.setPen(_pen(theme.vswr, 1.4, Qt.DashLine))

    def set_circle(self, x: np.ndarray | None, y: np.ndarray | None) -> None:
        """Show the circle through these points, or hide it with None."""
        if x is None:
            self.setVisible(False)
            return
        self.setData(x, y)
        self.setVisible(True)


class ElidedLabel(QLabel):
    """A label of fixed lines that ends a line wider than itself with "…" rather than cutting
    a word in half (its text stays whole)."""

    def paintEvent(self, ev) -> None:  # noqa: N802 (Qt's name)
        from PySide6.QtCore import QRect
        from PySide6.QtGui import QPainter

        rect = self.contentsRect()
        metrics = self.fontMetrics()
        painter = QPainter(self)
        painter.setPen(self.palette().color(self.foregroundRole()))
        y = rect.top()
        for line in self.text().split("\n"):
            text = metrics.elidedText(line, Qt.ElideRight, rect.width())
            painter.drawText(QRect(rect.left(), y, rect.width(), metrics.height()),
                             int(Qt.AlignLeft | Qt.AlignVCenter), text)
            y += metrics.height()
        painter.end()


class ChartView(pg.GraphicsView):
    """A graphics view holding one view box and nothing else (the chart has no axes or menu).

    Lighter to build than a full plot widget with its axes, title and option menus, which the
    chart would only hide.
    """

    def __init__(self, background="default"):
        super().__init__(background=background)
        self.view = pg.ViewBox(enableMenu=False)
        layout = pg.GraphicsLayout()
        layout.setContentsMargins(1, 1, 1, 1)  # the same 1-pixel border a plot item keeps
        layout.addItem(self.view)
        self.setCentralItem(layout)

    def addItem(self, item: QGraphicsItem) -> None:
        """Put an item on the chart (in data coordinates)."""
        self.view.addItem(item)

    def removeItem(self, item: QGraphicsItem) -> None:
        """Take an item off the chart for good (Qt deletes it at its next safe point)."""
        self.view.removeItem(item)
        discard(item)


class SmithChart(QWidget):
    """The chart widget: draws the Scene it is given, sends the user's edits to the session.

    Mouse: wheel zooms, drag pans, click near a trace places a marker, drag a marker along
    its trace. Keys: Left/Right step the current marker one swept point, Home resets the view.

    What it draws comes only through :meth:`set_scene` (from a
    :class:`~refplane.views.scene_controller.SceneController`, or a fixed ``scene`` for a
    picture); it never reads the session to draw. ``state`` is where edits go (marker drags
    and clicks, zoom, the context menu's actions).
    """

    hoverTextChanged = Signal(str)

    def __init__(self, state: Session, parent: QWidget | None = None, theme: Theme = LIGHT, *,
                 controller=None, scene=None):
        super().__init__(parent)
        self.state = state
        self.theme = theme
        self.plot = ChartView(background=theme.chart_bg)
        self.view: pg.ViewBox = self.plot.view
        self.view.setAspectLocked(True, 1.0)
        self.view.setLimits(xMin=-3, xMax=3, yMin=-3, yMax=3, minXRange=0.01, minYRange=0.01)
        self.grid = GridItem(theme)
        self.plot.addItem(self.grid)
        self.vswr_circle = VswrCircleItem(theme)
        self.vswr_circle.setVisible(False)
        self.plot.addItem(self.vswr_circle)
        self.hover = ElidedLabel(" ")
        self.hover.setObjectName("hover")
        quiet_label(self.hover)
        self.hover.setTextInteractionFlags(Qt.TextSelectableByMouse)
        # A fixed place: two lines high (the reading, then the nearest trace point), as wide as
        # the chart whatever it says. (Sized by its text, the line pushed the splitter sideways
        # as the cursor moved.)
        self.hover.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        self.hover.setFixedHeight(2 * self.hover.fontMetrics().height() + 6)
        self.hover.setWordWrap(False)
        self.hover.setContentsMargins(6, 0, 6, 0)
        from refplane.views.help_text import EMPTY_WINDOW_TEXT

        # Said on the chart while nothing is open: how to open something.
        self.empty_note = QLabel(EMPTY_WINDOW_TEXT, self.plot)
        self.empty_note.setObjectName("emptyNote")
        self.empty_note.setAlignment(Qt.AlignCenter)
        self.empty_note.setWordWrap(True)
        self.empty_note.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(0)
        layout.addWidget(self.plot, 1)
        layout.addWidget(self.hover)
        self.setFocusPolicy(Qt.StrongFocus)
        self.plot.setFocusPolicy(Qt.StrongFocus)

        self._traces: dict[int, TraceItem] = {}
        self._raw: dict[int, TraceItem] = {}
        self._overlays: dict[tuple[int, str], TraceItem] = {}
        self._markers: dict[int, MarkerItem] = {}
        self._regions: dict[int, pg.PlotCurveItem] = {}  # uncertainty regions around markers
        self._data: dict[int, tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] = {}
        self._memory: TraceItem | None = None
        self._vswr: float | None = None
        # What was last drawn, to redraw only what the next Scene changes (resolve keeps
        # unchanged parts as the same objects).
        self._scene = None
        self._drawn_traces: dict[int, object] = {}
        self._drawn_markers: dict[int, object] = {}
        self._shown_view: object = _NOT_SHOWN  # the chart view last shown (or set by hand)
        self.view.sigRangeChanged.connect(self._on_range_changed)
        self.view.sigRangeChangedManually.connect(self._on_zoomed_by_hand)
        gscene = self.plot.scene()
        gscene.sigMouseMoved.connect(self._on_mouse_moved)
        gscene.sigMouseClicked.connect(self._on_mouse_clicked)
        self._style_empty_note()
        if scene is not None:
            self.controller = None  # a still: draws this Scene only (a picture)
            self.set_scene(scene)
        else:
            from refplane.views.scene_controller import controller_for

            self.controller = controller_for(state, self, controller)
            self.controller.attach(self)

    # ---------------------------------------------------------------- scene
    def set_scene(self, scene) -> None:
        """Draw ``scene``: only the parts that are not the ones drawn last (compared by identity)."""
        old = self._scene
        self._scene = scene
        self._apply_display(old.display if old is not None else None, scene.display)
        traces_changed = old is None or old.traces != scene.traces
        if traces_changed:
            self._draw_traces(scene.traces)
        if old is None or old.memory is not scene.memory:
            self._draw_memory(scene.memory)
        if traces_changed or old.markers != scene.markers or old.current_marker != scene.current_marker:
            self._draw_markers(scene)

    @property
    def scene_drawn(self):
        """The Scene drawn last (None before the first)."""
        return self._scene

    # ---------------------------------------------------------------- public
    def reset_view(self) -> None:
        """Show the whole chart (and forget the zoom in the session)."""
        self.state.set_display(chart_view=None)
        self._show_range(None)

    def apply_session_view(self) -> None:
        """Show the Scene's zoom (or the whole chart)."""
        self._show_range(self._scene.display.chart_view if self._scene is not None else None)

    def show_current_marker(self, shown: bool) -> None:
        """Draw (or, for pictures, leave out) the halo of the marker the keys move."""
        self._halo = bool(shown)
        self._show_current(self._scene.current_marker if self._scene is not None else -1)

    _halo = True

    def set_admittance_grid(self, shown: bool) -> None:
        """Show or hide the admittance grid (a session display option)."""
        self.state.set_display(admittance_grid=bool(shown))

    def set_vswr_circle(self, vswr: float | None) -> None:
        """Show the constant-VSWR circle of ``vswr`` (> 1), or hide it with None (a session option)."""
        self.state.set_display(vswr_circle=vswr)

    def _apply_display(self, old, d) -> None:
        if old is d:
            return
        if old is None or old.admittance_grid != d.admittance_grid:
            self.grid.set_admittance(smith_grid.admittance_grid() if d.admittance_grid else None)
        if old is None or old.vswr_circle != d.vswr_circle:
            self._vswr = d.vswr_circle
            if d.vswr_circle is None:
                self.vswr_circle.set_circle(None, None)
            else:
                self.vswr_circle.set_circle(*smith_grid.vswr_circle(d.vswr_circle))
        # A zoom made by hand is already on screen; only a zoom from elsewhere (a session
        # opened, Reset view) moves the view.
        if (old is None or old.chart_view != d.chart_view) and d.chart_view != self._shown_view:
            self._show_range(d.chart_view)

    def _show_range(self, view: tuple[float, float, float, float] | None) -> None:
        self._shown_view = view
        x0, x1, y0, y1 = view if view is not None else (-HOME, HOME, -HOME, HOME)
        self.view.setRange(xRange=(x0, x1), yRange=(y0, y1), padding=0)

    def _on_zoomed_by_hand(self, *_args) -> None:
        (x0, x1), (y0, y1) = self.view.viewRange()
        self._shown_view = (float(x0), float(x1), float(y0), float(y1))
        self.state.set_display(chart_view=self._shown_view)

    @property
    def vswr(self) -> float | None:
        """The VSWR whose circle is shown, or None."""
        return self._vswr

    def set_theme(self, theme: Theme) -> None:
        """Recolour everything."""
        self.theme = theme
        self.plot.setBackground(theme.chart_bg)
        self.grid.set_theme(theme)
        self.vswr_circle.set_theme(theme)
        self._style_empty_note()
        for m in self._markers.values():
            m._theme = theme
            m.update()
        if self._scene is not None:
            # Faded, model and memory curves take the theme's colours.
            self._drawn_traces.clear()
            self._draw_traces(self._scene.traces)
            self._draw_memory(self._scene.memory)

    def trace_item(self, trace_id: int) -> TraceItem:
        """The item drawing a trace (for tests and export)."""
        return self._traces[trace_id]

    def marker_item(self, marker_id: int) -> MarkerItem:
        """The item drawing a marker (for tests)."""
        return self._markers[marker_id]

    def trace_count(self) -> int:
        """Number of traces drawn (visible or not)."""
        return len(self._traces)

    def drag_marker_to(self, marker_id: int, gamma: complex, finished: bool = True) -> None:
        """Move a marker as a drag to chart position ``gamma`` would (used by the item and tests)."""
        m = self._scene.marker(marker_id)
        f = self._frequency_near(m.trace_id, gamma.real, gamma.imag)[0]
        self.state.move_marker(marker_id, f, finished=finished)

    # ------------------------------------------------------------------ keys
    def keyPressEvent(self, ev) -> None:
        mid = self._scene.current_marker if self._scene is not None else -1
        if ev.key() in (Qt.Key_Right, Qt.Key_Up, Qt.Key_Left, Qt.Key_Down) and mid != -1:
            step = 1 if ev.key() in (Qt.Key_Right, Qt.Key_Up) else -1
            if ev.modifiers() & Qt.ShiftModifier:
                step *= 10
            self.state.step_marker(mid, step)
            ev.accept()
        elif ev.key() == Qt.Key_Home:
            self.reset_view()
            ev.accept()
        elif ev.key() == Qt.Key_Delete and mid != -1:
            self.state.remove_marker(mid)
            ev.accept()
        else:
            super().keyPressEvent(ev)

    # ----------------------------------------------------------------- drawing
    def _trace_items(self):
        yield from self._traces.values()
        yield from self._raw.values()
        yield from self._overlays.values()
        if self._memory is not None:
            yield self._memory

    def _on_range_changed(self, *_args) -> None:
        ux, uy = self.view.viewPixelSize()
        self.grid.labels.set_pixel_size(ux, uy, y_down=self.view.yInverted())
        px = min(ux, uy)
        for item in self._trace_items():
            item.set_pixel_size(px)

    def _add_trace_item(self, item: TraceItem) -> TraceItem:
        px = self.view.viewPixelSize()
        item.set_pixel_size(min(px) if px[0] and px[1] else 0.0)
        self.plot.addItem(item)
        return item

    def _style_empty_note(self) -> None:
        # On a plate of the chart's own colour, framed, so the grid does not run through the
        # words. (The palette, not a style sheet: a style sheet sends the widget through Qt's
        # slower styling path, which start-up pays for.)
        from PySide6.QtGui import QColor, QPalette

        note = self.empty_note
        pal = note.palette()
        pal.setColor(QPalette.Window, QColor(self.theme.chart_bg))
        pal.setColor(QPalette.WindowText, QColor(self.theme.text))
        note.setPalette(pal)
        note.setAutoFillBackground(True)
        note.setFrameShape(QLabel.Box)
        note.setMargin(10)

    def resizeEvent(self, ev) -> None:  # noqa: N802 (Qt's name)
        super().resizeEvent(ev)
        self._place_empty_note()

    def _place_empty_note(self) -> None:
        w = min(self.plot.width() - 40, 360)
        self.empty_note.setFixedWidth(max(w, 120))
        self.empty_note.adjustSize()
        self.empty_note.move((self.plot.width() - self.empty_note.width()) // 2,
                             (self.plot.height() - self.empty_note.height()) // 2)

    def _draw_traces(self, traces) -> None:
        """Add, update and remove trace items so they show ``traces`` (TraceViews)."""
        self.empty_note.setVisible(not traces)
        ids = {t.id for t in traces}
        for tid in list(self._traces):
            if tid not in ids:
                for store in (self._traces, self._raw):
                    item = store.pop(tid, None)
                    if item is not None:
                        self.plot.removeItem(item)
                self._data.pop(tid, None)
                self._drawn_traces.pop(tid, None)
                for key in [k for k in self._overlays if k[0] == tid]:
                    self.plot.removeItem(self._overlays.pop(key))
        for t in traces:
            if self._drawn_traces.get(t.id) is not t:
                self._draw_trace(t)
                self._drawn_traces[t.id] = t

    def _draw_trace(self, t) -> None:
        item = self._traces.get(t.id)
        if item is None:
            item = self._traces[t.id] = TraceItem(t.colour)
            item.setZValue(10)
            self._add_trace_item(item)
        g = t.gamma
        item.set_style(t.colour)
        if self._data.get(t.id, (None, None, None, None))[3] is not g:
            item.set_data(g.real, g.imag)
            self._data[t.id] = (t.freq_hz, g.real, g.imag, g)
        item.setVisible(t.visible)
        raw = self._raw.get(t.id)
        if t.raw_gamma is not None:
            if raw is None:
                raw = self._raw[t.id] = TraceItem(t.colour, width=1.4, alpha=self.theme.faded_alpha, ends=False)
                raw.setZValue(8)
                self._add_trace_item(raw)
            raw.set_style(t.colour, width=1.4, alpha=self.theme.faded_alpha)
            _show_gamma(raw, t.raw_gamma, t.visible)
        elif raw is not None:
            self.plot.removeItem(self._raw.pop(t.id))
        names = {ov.name for ov in t.overlays}
        for key in [k for k in self._overlays if k[0] == t.id and k[1] not in names]:
            self.plot.removeItem(self._overlays.pop(key))
        for ov in t.overlays:
            key = (t.id, ov.name)
            item = self._overlays.get(key)
            if item is None:
                item = self._overlays[key] = TraceItem(t.colour, width=1.8, ends=False)
                item.setZValue(11)  # over its trace, which it may hide exactly
                self._add_trace_item(item)
            item.set_style(t.colour, width=1.8, outline=self.theme.model_outline)
            _show_gamma(item, ov.gamma, t.visible)

    def _draw_memory(self, memory) -> None:
        """Draw the stored trace (trace memory) as a thin dashed curve in the theme's muted colour."""
        if memory is None:
            if self._memory is not None:
                self.plot.removeItem(self._memory)
                self._memory = None
            return
        if self._memory is None:
            self._memory = TraceItem(self.theme.muted, width=1.3, dashed=True, ends=False)
            self._memory.setZValue(7)
            self._add_trace_item(self._memory)
        self._memory.set_style(self.theme.muted, width=1.3, dashed=True)
        self._memory.set_data(memory.gamma.real, memory.gamma.imag)

    def _draw_markers(self, scene) -> None:
        existing = {m.id for m in scene.markers}
        for mid in list(self._markers):
            if mid not in existing:
                self.plot.removeItem(self._markers.pop(mid))
                self._drawn_markers.pop(mid, None)
        for mid in list(self._regions):
            if mid not in existing:
                self.plot.removeItem(self._regions.pop(mid))
        for m in scene.markers:
            item = self._markers.get(m.id)
            if item is None:
                item = self._markers[m.id] = MarkerItem(m.id, m.number, m.colour, self.theme)
                item.sigDragged.connect(self._on_marker_dragged)
                item.sigClicked.connect(self._on_marker_clicked)
                self.plot.addItem(item)
            if self._drawn_markers.get(m.id) is not m:
                item._number = str(m.number)
                item.set_colour(m.colour)
                item.setVisible(m.visible)
                item.setPos(m.gamma.real, m.gamma.imag)
                if m.region is not None or m.id in self._regions:
                    self._show_region(m)
                self._drawn_markers[m.id] = m
        self._show_current(scene.current_marker)

    def _show_current(self, marker_id: int) -> None:
        for mid, item in self._markers.items():
            wanted = self._halo and mid == marker_id
            if item._current != wanted:
                item.set_current(wanted)

    def _show_region(self, m) -> None:
        """The 95 % region of Γ around a marker (uncertainty on), outlined in its trace's colour."""
        item = self._regions.get(m.id)
        if m.region is None:
            if item is not None:
                item.setVisible(False)
            return
        if item is None:
            item = self._regions[m.id] = pg.PlotCurveItem(antialias=True)
            item.setZValue(19)
            self.plot.addItem(item)
        x = np.append(m.region[:, 0], m.region[0, 0])
        y = np.append(m.region[:, 1], m.region[0, 1])
        item.setData(x, y)
        item.setPen(_pen(m.colour, 1.4))
        item.setVisible(m.visible)

    def region_item(self, marker_id: int):
        """The item outlining a marker's uncertainty region (for tests), or None."""
        return self._regions.get(marker_id)

    # ----------------------------------------------------------------- input
    def _on_marker_clicked(self, marker_id: int) -> None:
        self.state.set_current_marker(marker_id)

    def _on_marker_dragged(self, marker_id: int, scene_pos: QPointF, finished: bool) -> None:
        p = self.view.mapSceneToView(scene_pos)
        self.drag_marker_to(marker_id, complex(p.x(), p.y()), finished)

    def _pixels_per_unit(self) -> tuple[float, float]:
        px, py = self.view.viewPixelSize()
        return 1.0 / px if px else 1.0, 1.0 / py if py else 1.0

    def _frequency_near(self, trace_id: int, x: float, y: float) -> tuple[float, float]:
        freq, gx, gy, _g = self._data[trace_id]
        sx, sy = self._pixels_per_unit()
        return smith_grid.frequency_near(x, y, gx, gy, freq, sx, sy)

    def _nearest_trace(self, x: float, y: float) -> tuple[int, float, float] | None:
        best = None
        for tid, item in self._traces.items():
            if not item.isVisible():
                continue
            f, dist = self._frequency_near(tid, x, y)
            if best is None or dist < best[2]:
                best = (tid, f, dist)
        return best

    def _on_mouse_moved(self, scene_pos: QPointF) -> None:
        if not self.view.sceneBoundingRect().contains(scene_pos):
            return
        p = self.view.mapSceneToView(scene_pos)
        self.hover.setText(self.hover_text(complex(p.x(), p.y())))
        self.hoverTextChanged.emit(self.hover.text())

    def hover_text(self, gamma: complex) -> str:
        """The hover line for a chart position: z, Z in ohms, and the nearest trace's frequency."""
        from refplane.analysis.readings.impedance import gamma_to_z
        from refplane.session.present import hover_text

        scene = self._scene
        near = self._nearest_trace(gamma.real, gamma.imag) if abs(gamma) <= 1.0 else None
        tid = near[0] if near else (scene.current_trace if scene is not None else -1)
        z0 = 50.0
        if tid in self._traces:
            z0 = scene.trace(tid).z0_ohm
        z = complex(gamma_to_z(gamma, z0)) if abs(gamma) <= 1.0 else complex("nan")
        named = (scene.trace(near[0]).name, near[1]) if near and near[2] <= PICK_PX else None
        return hover_text(gamma, z, z0, named)

    def _on_mouse_clicked(self, ev) -> None:
        if ev.button() == Qt.RightButton:
            p = self.view.mapSceneToView(ev.scenePos())
            on = [i for i in self.plot.scene().items(ev.scenePos()) if isinstance(i, MarkerItem)]
            menu = self.context_menu(complex(p.x(), p.y()), on[0].marker_id if on else None)
            ev.accept()
            menu.exec(ev.screenPos().toPoint())
            return
        if ev.button() != Qt.LeftButton or ev.double():
            return
        scene_pos = ev.scenePos()
        if any(isinstance(i, MarkerItem) for i in self.plot.scene().items(scene_pos)):
            return
        p = self.view.mapSceneToView(scene_pos)
        self.setFocus()
        self.add_marker_near(complex(p.x(), p.y()))

    def context_menu(self, gamma: complex, marker_id: int | None = None):
        """The right-click menu at chart position ``gamma`` (on a marker when ``marker_id`` is given)."""
        from PySide6.QtWidgets import QMenu

        scene = self._scene
        menu = QMenu(self)
        if marker_id is not None and marker_id in self._markers:
            m = scene.marker(marker_id)
            menu.addAction(f"Remove marker {m.number} (Ctrl+Z brings it back)",
                           lambda: self.state.remove_marker(marker_id))
            if m.follows:
                menu.addAction(f"Stop following the {m.follows_text}",
                               lambda: self.state.unfollow_marker(marker_id))
            menu.addSeparator()
        near = self._nearest_trace(gamma.real, gamma.imag) if abs(gamma) <= 1.0 else None
        add = menu.addAction("Add marker here", lambda: self.add_marker_near(gamma))
        add.setEnabled(near is not None and near[2] <= PICK_PX)
        current = scene.current_trace if scene is not None else -1
        if current != -1:
            menu.addAction("Store current trace as memory", lambda: self.state.store_memory(current))
        menu.addSeparator()
        shown = scene is not None and scene.display.admittance_grid
        grid = menu.addAction("Admittance grid", lambda: self.set_admittance_grid(not shown))
        grid.setCheckable(True)
        grid.setChecked(shown)
        menu.addAction("Reset chart view", self.reset_view)
        return menu

    def add_marker_near(self, gamma: complex) -> int | None:
        """Place a marker on the visible trace nearest to chart position ``gamma``, if within reach."""
        near = self._nearest_trace(gamma.real, gamma.imag)
        if near is None or near[2] > PICK_PX:
            return None
        self.state.set_current_trace(near[0])
        return self.state.add_marker(near[0], near[1])


#: The chart view before anything was shown (no zoom is equal to it).
_NOT_SHOWN = object()


def _show_gamma(item, gamma, visible: bool) -> None:
    """Give a curve item new Γ data only when the Scene's array is a new one (identity: the
    resolve hands back unchanged arrays as the same objects), and show or hide it."""
    if getattr(item, "_gamma", None) is not gamma:
        item.set_data(gamma.real, gamma.imag)
        item._gamma = gamma
    item.setVisible(visible)
