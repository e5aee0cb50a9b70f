"""Drawing a chart picture: the chart, its markers and a readout legend, from a session's Scene.

Used by ``refplane render`` (with or without ``--session``) and by the window's
File ▸ Save chart picture: the picture is the window's own :class:`SmithChart` drawing one
frozen Scene, with a legend whose lines are that Scene's legend
(:mod:`refplane.session.present` rules, the same text path as the marker table). No hover line,
buttons or choosers are drawn. Like every view, the picture draws only the Scene it is given.
"""

from __future__ import annotations

import html
import os
from typing import Sequence

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QLabel, QVBoxLayout, QWidget

from refplane.analysis.sweep import Sweep
from refplane.views.smith_chart import SmithChart
from refplane.session.model import Session
from refplane.views.theme import LIGHT, Theme


class ChartPicture(QWidget):
    """A chart with a legend underneath: one line per trace, one per marker.

    With ``scene`` it draws that Scene and nothing else (a picture of one moment); without
    it, it follows the session through ``controller`` (or one of its own).
    """

    def __init__(self, state: Session, theme: Theme = LIGHT, title: str | None = None, *,
                 scene=None, controller=None):
        super().__init__()
        self.state = state
        self._scene = None
        self.setAutoFillBackground(True)
        self.setStyleSheet(f"background: {theme.chart_bg}; color: {theme.text};")
        if scene is None:
            from refplane.views.scene_controller import controller_for

            self.controller = controller_for(state, self, controller)
            self.chart = SmithChart(state, theme=theme, controller=self.controller)
        else:
            self.controller = None
            self.chart = SmithChart(state, theme=theme, scene=scene)
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
        if scene is None:
            self.controller.attach(self)
        else:
            self.set_scene(scene)

    def set_scene(self, scene) -> None:
        """Write the legend of ``scene`` (the chart above takes the same Scene itself)."""
        old, self._scene = self._scene, scene
        if old is None or (old.traces, old.markers, old.memory, old.chart_z0_ohm, old.found) != (
                scene.traces, scene.markers, scene.memory, scene.chart_z0_ohm, scene.found):
            self.legend.setText(self.legend_html())

    def legend_lines(self) -> list[str]:
        """The legend as plain text lines (trace lines, then "n  summary" marker lines)."""
        return list(self._scene.legend)

    def legend_html(self) -> str:
        """The legend as rich text: a coloured square per trace, a coloured number per marker, notes."""
        scene = self._scene
        rows = []
        for t in scene.traces:
            rows.append(f"<span style='color:{t.colour}'>■</span>&nbsp;{html.escape(t.label)}")
        for m in scene.markers:
            rows.append(f"<span style='color:{m.colour}'><b>{m.number}</b></span>&nbsp;&nbsp;"
                        f"{html.escape(m.summary)}")
        from refplane.session.present import picture_notes

        notes = picture_notes(scene.memory.name if scene.memory is not None else None,
                              scene.chart_z0_ohm, scene.found)
        rows += [html.escape(line) for line in notes]
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


def ensure_app():
    """The running QApplication, or a new one for drawing without a window."""
    app = QApplication.instance()
    if app is None:
        quiet_platform_messages()
        app = QApplication(["refplane-render"])
    import pyqtgraph as pg

    pg.setConfigOptions(antialias=True)
    return app


def draw_session(session: Session, path: str | os.PathLike, *, size: tuple[int, int] = (900, 1000),
                 overwrite: bool = False, theme: Theme | None = None, scene=None):
    """Draw a session's scene (traces, offsets, markers, grid options, zoom) and save a PNG or SVG.

    The window's File ▸ Save chart picture and ``refplane render --session`` both come here,
    so a saved session renders exactly as the window showed it. ``scene`` is the Scene to
    draw (the window passes the one its views show); by default the session's own.
    """
    from refplane.views import export
    from refplane.views.theme import THEMES

    export.check_target(path, overwrite=overwrite)
    app = ensure_app()
    scene = scene if scene is not None else session.scene()
    theme = theme or THEMES.get(scene.display.theme, LIGHT)
    picture = ChartPicture(session, theme, scene=scene)
    try:
        picture.chart.show_current_marker(False)  # no "current marker" halo in a picture
        picture.setAttribute(Qt.WA_DontShowOnScreen, True)
        picture.resize(*size)
        picture.show()
        app.processEvents()
        picture.chart.apply_session_view()
        app.processEvents()
        return export.save_widget(picture, path, overwrite=overwrite, background=theme.chart_bg)
    finally:
        picture.close()
        picture.deleteLater()
        app.processEvents()


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
    session = Session()
    session.set_display(theme="dark" if theme.name.lower().startswith("dark") else "light",
                        vswr_circle=vswr, admittance_grid=admittance)
    for sweep in sweeps:
        tid = session.add_sweep(sweep, port=port)
        for f in at_hz:
            session.add_marker(tid, f)
    return draw_session(session, path, size=size, overwrite=overwrite, theme=theme)
