"""Colours of the window in a light and a dark theme, and applying them to the application."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Theme:
    """The colours one theme uses (``#rrggbb``)."""

    name: str
    """Shown in the View menu."""
    window: str
    """Panel and window background."""
    base: str
    """Background of lists, tables and entry fields."""
    text: str
    """Ordinary text."""
    muted: str
    """Secondary text (hover line, units, hints)."""
    chart_bg: str
    """Chart and plot background."""
    rim: str
    """The chart's unit circle."""
    grid_major: str
    """Labelled grid lines."""
    grid_minor: str
    """In-between grid lines."""
    admittance: str
    """The admittance grid, when shown."""
    label: str
    """Grid value labels."""
    accent: str
    """Selection, the current marker, the selected band."""
    vswr: str
    """The constant-VSWR circle."""


LIGHT = Theme(
    name="Light", window="#f4f5f7", base="#ffffff", text="#1d2330", muted="#5d6675",
    chart_bg="#ffffff", rim="#4a5263", grid_major="#b9c0cc", grid_minor="#e3e6eb",
    admittance="#e9c7b3", label="#6a7384", accent="#3b6fd8", vswr="#8a5cc9",
)

DARK = Theme(
    name="Dark", window="#1f232a", base="#171a20", text="#e4e7ec", muted="#9aa3b2",
    chart_bg="#15181d", rim="#aab2c0", grid_major="#4a5160", grid_minor="#2c313a",
    admittance="#5e4536", label="#8f98a8", accent="#6f9bff", vswr="#b48cf0",
)

THEMES = {"light": LIGHT, "dark": DARK}


def stylesheet(theme: Theme) -> str:
    """A small Qt style sheet: calm flat panels, readable tables, no decoration for its own sake."""
    t = theme
    return f"""
    QMainWindow, QDockWidget, QWidget#panel {{ background: {t.window}; color: {t.text}; }}
    QDockWidget::title {{ padding: 6px 8px; background: {t.window}; color: {t.muted};
                          font-weight: 600; }}
    QTableWidget, QListWidget, QTreeWidget, QLineEdit, QComboBox, QDoubleSpinBox, QSpinBox {{
        background: {t.base}; color: {t.text}; border: 1px solid {t.grid_major}; border-radius: 4px; }}
    QHeaderView::section {{ background: {t.window}; color: {t.muted}; border: none;
                            border-bottom: 1px solid {t.grid_major}; padding: 3px 6px; }}
    QTableWidget {{ gridline-color: {t.grid_minor}; }}
    QPushButton, QToolButton {{ padding: 3px 10px; border: 1px solid {t.grid_major}; border-radius: 4px;
                                background: {t.base}; color: {t.text}; }}
    QPushButton:hover, QToolButton:hover {{ border-color: {t.accent}; }}
    QLabel#hover {{ color: {t.muted}; padding: 2px 6px; }}
    QLabel#hint {{ color: {t.muted}; }}
    QStatusBar {{ color: {t.muted}; }}
    """


def apply(app, theme: Theme) -> None:
    """Apply a theme to a whole QApplication: palette and style sheet."""
    apply_palette(app, theme)
    app.setStyleSheet(stylesheet(theme))


def apply_palette(app, theme: Theme) -> None:
    """Set the application's palette (native parts, dialogs) from a theme."""
    from PySide6.QtGui import QColor, QPalette

    pal = QPalette()
    pal.setColor(QPalette.Window, QColor(theme.window))
    pal.setColor(QPalette.WindowText, QColor(theme.text))
    pal.setColor(QPalette.Base, QColor(theme.base))
    pal.setColor(QPalette.AlternateBase, QColor(theme.window))
    pal.setColor(QPalette.Text, QColor(theme.text))
    pal.setColor(QPalette.Button, QColor(theme.base))
    pal.setColor(QPalette.ButtonText, QColor(theme.text))
    pal.setColor(QPalette.Highlight, QColor(theme.accent))
    pal.setColor(QPalette.HighlightedText, QColor("#ffffff"))
    pal.setColor(QPalette.ToolTipBase, QColor(theme.base))
    pal.setColor(QPalette.ToolTipText, QColor(theme.text))
    pal.setColor(QPalette.PlaceholderText, QColor(theme.muted))
    app.setPalette(pal)
