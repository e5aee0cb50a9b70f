"""How curves are stroked: as one path, or as separate straight segments.

Qt strokes a wide (over 1 px) antialiased path through its general outline stroker, which
costs about as much as everything else in a plot's paint together. The same curve drawn as
separate straight segments goes through a much quicker route (about a fifth of the time for
a 1000-point sweep at 2 px). Where two segments meet, their soft edges overlap, which is
invisible for an opaque solid line with square caps but shows for translucent or dashed
lines, so those keep the path.

Segments with square caps overlap a little at every joint, and their soft edges add up there:
at two or three segments per pixel (what the chart's thinning and the plots' downsampling
leave) the line carries about a quarter more ink than the path. Segment pens are therefore
drawn :data:`SEGMENT_WIDTH_FACTOR` narrower, which brings the weight back to within about a
tenth of the path's.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QPen

#: Width of a segment pen relative to the path pen it stands for (see the module notes).
SEGMENT_WIDTH_FACTOR = 0.85


def can_draw_as_segments(pen: QPen) -> bool:
    """True when a curve stroked with ``pen`` looks the same drawn as separate segments.

    That is a solid, opaque, plain-colour pen wider than one pixel (a one-pixel pen has its
    own quick route already, and a pattern or dash must run along the whole curve).
    """
    return (pen.widthF() > 1.0 and pen.style() == Qt.SolidLine and pen.isSolid()
            and pen.color().alphaF() == 1.0)


def line_mode(pen: QPen) -> tuple[QPen, str]:
    """The pen to stroke a curve with and pyqtgraph's segmented-line mode for it ("on"/"off").

    Drawn as segments, the pen gets square caps, so the segments meet without notches (round
    caps would cost as much as the path they replace), and is made a little narrower so the
    line keeps its weight.
    """
    if can_draw_as_segments(pen):
        pen = QPen(pen)
        pen.setCapStyle(Qt.SquareCap)
        pen.setWidthF(pen.widthF() * SEGMENT_WIDTH_FACTOR)
        return pen, "on"
    return pen, "off"


def apply_line_mode(curve, pen: QPen) -> QPen:
    """Give ``curve`` (a pyqtgraph PlotCurveItem) ``pen``, drawn as segments when that is safe.

    Returns the pen actually used (see :func:`line_mode`).
    """
    pen, mode = line_mode(pen)
    curve.setSegmentedLineMode(mode)
    curve.setPen(pen)
    return pen
