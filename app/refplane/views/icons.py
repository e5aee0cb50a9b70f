"""The application icon: our own mark, kept as SVG text (also in resources/) and painted in code."""

from __future__ import annotations

#: Our own mark: a circle crossed by a curve and a dot, in the accent colour (also in resources/).
APP_ICON_SVG = """<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 64 64">
<rect x="2" y="2" width="60" height="60" rx="14" fill="#1f2a44"/>
<circle cx="32" cy="32" r="21" fill="none" stroke="#e4e9f5" stroke-width="3"/>
<circle cx="39" cy="32" r="14" fill="none" stroke="#7d8db0" stroke-width="2"/>
<path d="M11 32 H53" stroke="#7d8db0" stroke-width="2"/>
<path d="M22 46 C 30 30, 40 24, 47 19" fill="none" stroke="#56B4E9" stroke-width="3.5" stroke-linecap="round"/>
<circle cx="47" cy="19" r="4" fill="#E69F00"/>
</svg>"""


def paint_icon(size: int = 64):
    """The same mark as :data:`APP_ICON_SVG`, painted with QPainter into a ``size`` pixel image.

    Painting it directly saves loading Qt's SVG image plug-in at start-up.
    """
    from PySide6.QtCore import QPointF, QRectF, Qt
    from PySide6.QtGui import QColor, QImage, QPainter, QPainterPath, QPen

    image = QImage(size, size, QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    try:
        p.setRenderHint(QPainter.Antialiasing, True)
        p.scale(size / 64.0, size / 64.0)  # drawn in the SVG's 64-unit view box
        p.setPen(Qt.NoPen)
        p.setBrush(QColor("#1f2a44"))
        p.drawRoundedRect(QRectF(2, 2, 60, 60), 14, 14)
        p.setBrush(Qt.NoBrush)
        p.setPen(QPen(QColor("#e4e9f5"), 3))
        p.drawEllipse(QPointF(32, 32), 21, 21)
        p.setPen(QPen(QColor("#7d8db0"), 2))
        p.drawEllipse(QPointF(39, 32), 14, 14)
        p.drawLine(QPointF(11, 32), QPointF(53, 32))
        curve = QPainterPath(QPointF(22, 46))
        curve.cubicTo(QPointF(30, 30), QPointF(40, 24), QPointF(47, 19))
        p.setPen(QPen(QColor("#56B4E9"), 3.5, Qt.SolidLine, Qt.RoundCap))
        p.drawPath(curve)
        p.setPen(Qt.NoPen)
        p.setBrush(QColor("#E69F00"))
        p.drawEllipse(QPointF(47, 19), 4, 4)
    finally:
        p.end()
    return image


def app_icon():
    """The icon as a QIcon (painted at a few sizes so it stays sharp in title bars and docks)."""
    from PySide6.QtGui import QIcon, QPixmap

    icon = QIcon()
    for size in (32, 64, 128):
        icon.addPixmap(QPixmap.fromImage(paint_icon(size)))
    return icon
