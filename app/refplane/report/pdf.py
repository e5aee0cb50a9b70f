"""The report as PDF, drawn by Qt's own PDF writer (QPdfWriter + QPainter): one A4 page per sweep.

The pictures are the same SVG as in the HTML report, drawn with QSvgRenderer; the text is
laid out by QTextDocument from a small HTML subset. Needs no display: without a running Qt
application one is started on the offscreen platform.
"""

from __future__ import annotations

import datetime as _dt
import os
from html import escape
from pathlib import Path
from typing import Sequence

from refplane.report.build import (
    CAUTIONS, SweepReport, chart_svg, facts, limit_rows, marker_rows, plot_svgs, program_line, rules_used,
)

_DPI = 96          # one layout pixel is 1/96 in, as on a screen: the SVG sizes keep their look
_MARGIN = 36       # about 9.5 mm


def _application():
    from PySide6.QtGui import QGuiApplication

    app = QGuiApplication.instance()
    if app is None:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        os.environ.setdefault("QT_LOGGING_RULES", "qt.qpa.*=false")
        app = QGuiApplication(["refplane-report"])
    return app


def _doc(html: str, width: float, point_size: float = 8.0):
    from PySide6.QtGui import QFont, QTextDocument

    doc = QTextDocument()
    font = QFont("sans-serif")
    font.setPointSizeF(point_size)
    doc.setDefaultFont(font)
    doc.setDocumentMargin(0)
    doc.setDefaultStyleSheet("th { background: #eef1f4; } td, th { padding: 2px 4px; } "
                             "h2 { font-size: 13pt; } .pass { color: #1e7b3c; } .fail { color: #b8281c; } "
                             ".indeterminate, .not-tested { color: #9a6408; }")
    doc.setHtml(html)
    doc.setTextWidth(width)
    return doc


def _draw_doc(painter, doc, x: float, y: float, max_height: float) -> float:
    """Draw a text document at (x, y), shrunk to fit ``max_height``; returns the height used."""
    height = doc.size().height()
    scale = min(1.0, max_height / height) if height > 0 else 1.0
    painter.save()
    painter.translate(x, y)
    painter.scale(scale, scale)
    if scale < 1.0:
        doc.setTextWidth(doc.textWidth() / scale)
    doc.drawContents(painter)
    painter.restore()
    return doc.size().height() * scale


def _draw_svg(painter, svg: str, x: float, y: float, w: float, h: float) -> None:
    from PySide6.QtCore import QByteArray, QRectF
    from PySide6.QtSvg import QSvgRenderer

    renderer = QSvgRenderer(QByteArray(svg.encode("utf-8")))
    renderer.render(painter, QRectF(x, y, w, h))


def _html_table(headers, rows) -> str:
    head = "".join(f"<th>{escape(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f'<td align="right">{escape(c)}</td>' for c in r) + "</tr>" for r in rows)
    return f'<table border="1" cellspacing="0" cellpadding="2"><tr>{head}</tr>{body}</table>'


def _head_html(section: SweepReport, index: int, title: str) -> str:
    name = os.path.basename(section.file) if section.file else section.sweep.name
    verdict = section.decision
    mark = f' — <span class="{verdict.replace(" ", "-")}">{escape(verdict.upper())}</span>' if verdict else ""
    rows = "".join(f"<tr><td><b>{escape(k)}</b></td><td>{escape(v)}</td></tr>" for k, v in facts(section))
    warn = "".join(f"<p>Warning: {escape(w)}</p>" for w in section.warnings)
    return (f'<p style="color:#555c66">{escape(title)}</p><h2>{index}. {escape(name)}{mark}</h2>'
            f'<table cellspacing="0" cellpadding="1">{rows}</table>{warn}')


def _body_html(section: SweepReport, made: str, rules: Sequence[str]) -> str:
    parts = []
    headers, rows = marker_rows(section)
    if rows:
        parts.append("<h3>Markers</h3>" + _html_table(headers, rows)
                     + "<p>Uncertainties: not evaluated for these readings.</p>")
    if section.fit_sentence:
        parts.append(f"<h3>Equivalent circuit</h3><p>{escape(section.fit_sentence)}</p>")
    if section.limits:
        items = "".join(f'<tr><td class="{line.decision.replace(" ", "-")}">{mark} {escape(word)}</td>'
                        f"<td>{escape(text)}</td></tr>"
                        for (mark, word, text), line in zip(limit_rows(section), section.limits))
        parts.append(f'<h3>Limits</h3><table cellspacing="0" cellpadding="2">{items}</table>')
        parts.append("<p>" + "<br>".join(f"Decision rule: {escape(r)}" for r in rules) + "</p>")
    parts.append("<h3>Cautions</h3><ul>" + "".join(f"<li>{escape(c)}</li>" for c in CAUTIONS) + "</ul>")
    parts.append(f'<p style="color:#555c66">{escape(made)}.</p>')
    return "".join(parts)


def paint_page(painter, section: SweepReport, index: int, page_w: float, page_h: float, *,
               title: str, made: str) -> None:
    """Draw one sweep's page with ``painter`` on a page of ``page_w`` × ``page_h`` layout pixels."""
    width = page_w - 2 * _MARGIN
    y = _MARGIN
    head = _doc(_head_html(section, index, title), width)
    y += _draw_doc(painter, head, _MARGIN, y, page_h * 0.25) + 8
    chart = min(width * 0.48, 340)
    _draw_svg(painter, chart_svg(section), _MARGIN, y, chart, chart)
    plots = plot_svgs(section)[:3]
    if plots:
        each = chart / len(plots)
        pw = width - chart - 10
        for k, svg in enumerate(plots):
            ph = min(each - 4, pw * 240 / 440)
            _draw_svg(painter, svg, _MARGIN + chart + 10, y + k * each, pw, ph)
    y += chart + 10
    body = _doc(_body_html(section, made, rules_used([section])), width, 7.5)
    _draw_doc(painter, body, _MARGIN, y, page_h - _MARGIN - y)


def write_pdf(sections: Sequence[SweepReport], path: str | os.PathLike, *, overwrite: bool = False,
              title: str = "Refplane measurement report", batch=None,
              when: _dt.datetime | None = None) -> Path:
    """Write the report as a PDF with one A4 page per sweep, atomically.

    A batch summary (from ``refplane check --report``) is printed in the HTML report only;
    the PDF holds the sweeps' pages.

    Raises
    ------
    AnalysisError
        When the file exists (without ``overwrite``), there is no sweep, or it cannot be written.
    """
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.files.fileio import write_atomic

    if not sections:
        raise AnalysisError("a report needs at least one sweep")
    made = program_line(when)

    def write(tmp: str) -> bool:
        _application()
        from PySide6.QtCore import QMarginsF
        from PySide6.QtGui import QPageLayout, QPageSize, QPainter, QPdfWriter

        writer = QPdfWriter(tmp)
        writer.setResolution(_DPI)
        writer.setPageLayout(QPageLayout(QPageSize(QPageSize.A4), QPageLayout.Portrait,
                                         QMarginsF(0, 0, 0, 0), QPageLayout.Point))
        writer.setTitle(title)
        writer.setCreator(made)
        painter = QPainter()
        if not painter.begin(writer):
            return False
        try:
            page_w, page_h = writer.width(), writer.height()
            for index, section in enumerate(sections, start=1):
                if index > 1:
                    writer.newPage()
                paint_page(painter, section, index, page_w, page_h, title=title, made=made)
        finally:
            painter.end()
        return True

    return write_atomic(path, write, overwrite=overwrite, suffix=".pdf")
