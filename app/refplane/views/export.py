"""Saving widgets as PNG or SVG pictures, written atomically (never half a file)."""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import QPoint, QRectF, QSize
from PySide6.QtGui import QColor, QImage, QPainter
from PySide6.QtWidgets import QWidget

from refplane.analysis.errors import AnalysisError
from refplane.analysis.files.fileio import write_atomic

FORMATS = {".png": "PNG picture", ".svg": "SVG drawing"}


def check_target(path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Check an output path: known extension, existing folder, no silent overwrite."""
    target = Path(path)
    ext = target.suffix.lower()
    if ext not in FORMATS:
        raise AnalysisError(f"unknown picture type {ext or '(none)'!r}; use .png or .svg", file=target)
    if target.exists() and not overwrite:
        raise AnalysisError("the file exists already; refusing to overwrite it (use --force)", file=target)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise AnalysisError(f"the folder {folder} does not exist", file=target)
    return target


def _atomic(target: Path, write) -> Path:
    # The temporary file keeps the picture's extension: Qt picks the format by it.
    return write_atomic(target, write, overwrite=True, suffix=target.suffix)


def save_widget(widget: QWidget, path: str | os.PathLike, *, overwrite: bool = False,
                background: str = "#ffffff", scale: float = 1.0) -> Path:
    """Save ``widget`` as it is laid out now to ``path`` (.png or .svg).

    PNG is drawn at ``scale`` × the widget's size in pixels (2 for a high-DPI picture); SVG is
    a vector drawing of the same size.
    """
    target = check_target(path, overwrite=overwrite)
    size = widget.size()
    if target.suffix.lower() == ".png":
        def write(tmp: str) -> bool:
            image = QImage(QSize(round(size.width() * scale), round(size.height() * scale)),
                           QImage.Format_ARGB32_Premultiplied)
            image.fill(QColor(background))
            painter = QPainter(image)
            try:
                painter.setRenderHint(QPainter.Antialiasing, True)
                painter.setRenderHint(QPainter.TextAntialiasing, True)
                painter.scale(scale, scale)
                widget.render(painter, QPoint())
            finally:
                painter.end()
            return image.save(tmp, "PNG")
    else:
        def write(tmp: str) -> bool:
            from PySide6.QtSvg import QSvgGenerator

            gen = QSvgGenerator()
            gen.setFileName(tmp)
            gen.setSize(size)
            gen.setViewBox(QRectF(0, 0, size.width(), size.height()))
            gen.setTitle("Refplane picture")
            painter = QPainter(gen)
            try:
                painter.fillRect(QRectF(0, 0, size.width(), size.height()), QColor(background))
                widget.render(painter, QPoint())
            finally:
                painter.end()
            return os.path.getsize(tmp) > 0
    return _atomic(target, write)
