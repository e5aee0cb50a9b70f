"""Drawing a chart picture without a window: the chart, its markers and a readout legend.

Used by ``refplane render``. The picture is the window's own :class:`SmithChart` on a
:class:`ViewState` of its own, with a legend whose lines come from
:func:`refplane.analysis.readings.summary_line`, the same text path as the marker table.
"""

from __future__ import annotations

import html
import os
from typing import Sequence

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QLabel, QVBoxLayout, QWidget

from refplane.analysis.sweep import Sweep
from refplane.views.smith_chart import SmithChart
from refplane.views.state import ViewState
from refplane.views.theme import LIGHT, Theme


class ChartPicture(QWidget):
    """A chart with a legend underneath: one line per trace, one per marker."""

    def __init__(self, state: ViewState, theme: Theme = LIGHT, title: str | None = None):
        super().__init__()
        self.state = state
        self.setAutoFillBackground(True)
        self.setStyleSheet(f"background: {theme.chart_bg}; color: {theme.text};")
        self.chart = SmithChart(state, theme=theme)
        self.chart.hover.hide()
        self.legend = QLabel()
        self.legend.setTextFormat(Qt.RichText)
        self.legend.setWordWrap(True)
        self.legend.setStyleSheet(f"padding: 6px 14px 10px 14px; color: {theme.text}; font-size: 10pt;")
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(0)
        if title:
            head = QLabel(html.escape(title))
            head.setStyleSheet(f"padding: 8px 14px 0 14px; color: {theme.muted}; font-size: 10pt;")
            layout.addWidget(head)
        layout.addWidget(self.chart, 1)
        layout.addWidget(self.legend)
        self.legend.setText(self.legend_html())

    def legend_lines(self) -> list[str]:
        """The legend as plain text lines (trace lines, then "n  summary" marker lines)."""
        from refplane.analysis.readings import summary_line

        lines = []
        for t in self.state.traces():
            lines.append(f"{t.name} · S{t.port}{t.port}")
        for number, m in enumerate(self.state.markers(), start=1):
            lines.append(f"{number}  {summary_line(self.state.marker_readout(m.id))}")
        return lines

    def legend_html(self) -> str:
        from refplane.analysis.readings import summary_line

        rows = []
        for t in self.state.traces():
            rows.append(f"<span style='color:{t.colour}'>■</span>&nbsp;{html.escape(t.name)}"
                        f" · S{t.port}{t.port}")
        for number, m in enumerate(self.state.markers(), start=1):
            colour = self.state.trace(m.trace_id).colour
            rows.append(f"<span style='color:{colour}'><b>{number}</b></span>&nbsp;&nbsp;"
                        f"{html.escape(summary_line(self.state.marker_readout(m.id)))}")
        return "<br>".join(rows)


#: Qt notices kept off the terminal: harmless offscreen ones, and the image library's own
#: wording of a failed save (the save step says why in its own short words).
_QUIET = ("propagateSizeHints", "libpng", "QImageWriter")


def quiet_platform_messages() -> None:
    """Keep Qt's harmless offscreen-platform notices off the terminal; pass everything else on."""
    from PySide6.QtCore import QtMsgType, qInstallMessageHandler

    def handler(kind, context, message):
        if any(q in message for q in _QUIET):
            return
        import sys

        if kind != QtMsgType.QtDebugMsg:
            print(message, file=sys.stderr)

    qInstallMessageHandler(handler)


def render_picture(sweeps: Sequence[Sweep], path: str | os.PathLike, *, at_hz: Sequence[float] = (),
                   port: int = 1, size: tuple[int, int] = (900, 1000), overwrite: bool = False,
                   theme: Theme = LIGHT, vswr: float | None = None, admittance: bool = False):
    """Draw ``sweeps`` with markers at ``at_hz`` on every trace and save a PNG or SVG.

    Raises
    ------
    AnalysisError
        For a port a sweep does not have, a marker frequency outside a sweep, or an output
        that exists (without ``overwrite``) or cannot be written.
    """
    from refplane.views import export

    export.check_target(path, overwrite=overwrite)
    app = QApplication.instance()
    if app is None:
        quiet_platform_messages()
        app = QApplication(["refplane-render"])
    import pyqtgraph as pg

    pg.setConfigOptions(antialias=True)
    state = ViewState()
    for sweep in sweeps:
        tid = state.add_sweep(sweep, port=port)
        for f in at_hz:
            state.add_marker(tid, f)
    state.set_current_marker(-1)  # no "current marker" halo in a picture
    picture = ChartPicture(state, theme)
    try:
        picture.chart.set_vswr_circle(vswr)
        picture.chart.set_admittance_grid(admittance)
        picture.setAttribute(Qt.WA_DontShowOnScreen, True)
        picture.resize(*size)
        picture.show()
        app.processEvents()
        picture.chart.reset_view()
        app.processEvents()
        return export.save_widget(picture, path, overwrite=overwrite, background=theme.chart_bg)
    finally:
        picture.close()
        picture.deleteLater()
