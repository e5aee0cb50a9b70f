"""The application icon, drawn from SVG text kept here so it ships inside the package."""

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


def app_icon():
    """The icon as a QIcon."""
    from PySide6.QtCore import QByteArray
    from PySide6.QtGui import QIcon, QPixmap

    pix = QPixmap()
    pix.loadFromData(QByteArray(APP_ICON_SVG.encode()), "SVG")
    return QIcon(pix)
