"""Curves drawn as separate segments look like the same curve drawn as one path."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
import pytest
from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter, QPen
from PySide6.QtWidgets import QGraphicsScene

from refplane.views.line_drawing import (SEGMENT_WIDTH_FACTOR, apply_line_mode, can_draw_as_segments,
                                         line_mode)


def _pen(width=2.0, style=Qt.SolidLine, alpha=1.0) -> QPen:
    colour = QColor("#0072B2")
    colour.setAlphaF(alpha)
    pen = QPen(colour, width, style)
    pen.setCosmetic(True)
    return pen


@pytest.mark.parametrize("pen, expected", [
    (_pen(), True),
    (_pen(width=1.0), False),                    # one pixel has its own quick route
    (_pen(style=Qt.DashLine), False),            # a dash must run along the whole curve
    (_pen(alpha=0.3), False),                    # overlapping ends would show darker
])
def test_which_pens_are_drawn_as_segments(pen, expected):
    assert can_draw_as_segments(pen) is expected
    used, mode = line_mode(pen)
    assert mode == ("on" if expected else "off")
    assert used.color() == pen.color()
    if expected:
        assert used.capStyle() == Qt.SquareCap
        assert used.widthF() == pytest.approx(pen.widthF() * SEGMENT_WIDTH_FACTOR)
    else:
        assert used.widthF() == pen.widthF()


def _ink(curve_mode: str, qapp, n: int = 1000) -> np.ndarray:
    # A wavy curve of n points, rendered alone into a picture; returns how much ink (0..1) each
    # pixel took.
    x = np.linspace(0.0, 1.0, n)
    y = 0.5 + 0.3 * np.sin(9 * x) + 0.05 * np.sin(70 * x)
    curve = pg.PlotCurveItem(x * 380 + 10, y * 180 + 10, antialias=True)
    if curve_mode == "segments":
        apply_line_mode(curve, _pen())
    else:
        curve.setSegmentedLineMode("off")
        curve.setPen(_pen())
    scene = QGraphicsScene()
    scene.addItem(curve)
    image = QImage(400, 200, QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.white)
    painter = QPainter(image)
    scene.render(painter, QRectF(0, 0, 400, 200), QRectF(0, 0, 400, 200))
    painter.end()
    gray = image.convertToFormat(QImage.Format_Grayscale8)
    data = np.frombuffer(gray.constBits(), np.uint8).reshape(gray.height(), gray.bytesPerLine())
    return 1.0 - data[:, : gray.width()] / 255.0


@pytest.mark.parametrize("n", [200, 1000])  # about 0.5 and 2.6 points per pixel
def test_segments_put_ink_where_the_path_does(qapp, n):
    path, seg = _ink("path", qapp, n), _ink("segments", qapp, n)
    path_ink, seg_ink = path > 0.4, seg > 0.4
    assert path_ink.sum() > 700  # the curve really was drawn
    # Every strongly inked pixel of one drawing lies within a pixel of ink in the other.
    def near(mask):
        grown = mask.copy()
        for dy in (-1, 0, 1):
            for dx in (-1, 0, 1):
                grown |= np.roll(np.roll(mask, dy, 0), dx, 1)
        return grown
    assert not (seg_ink & ~near(path_ink)).any()
    assert not (path_ink & ~near(seg_ink)).any()
    # And the line is about as heavy: the same ink within an eighth.
    assert seg.sum() == pytest.approx(path.sum(), rel=0.125)


def test_window_traces_use_the_quick_route_only_when_it_looks_the_same(qtbot, qapp, tmp_path):
    from refplane.views.main_window import MainWindow

    from model_sweeps import resistor_with_leads, write_sweep

    path = write_sweep(resistor_with_leads(), tmp_path / "r75.s1p")
    window = MainWindow(files=[str(path)], theme="light")
    qtbot.addWidget(window)
    qtbot.waitUntil(lambda: bool(window.state.traces()) and not window.loader.busy, timeout=10000)
    tid = window.state.traces()[0].id
    assert window.chart.trace_item(tid).curve.opts["segmentedLineMode"] == "on"
    window.plots.flush()
    for item in window.plots.upper.curve_items() + window.plots.lower.curve_items():
        pen = item.curve.opts["pen"]
        expected = "on" if can_draw_as_segments(pen) else "off"
        assert item.curve.opts["segmentedLineMode"] == expected
    # The reactance curve is dashed, so at least one plot curve keeps the path.
    modes = {item.curve.opts["segmentedLineMode"] for item in window.plots.lower.curve_items()}
    assert modes == {"on", "off"}
