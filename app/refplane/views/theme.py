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


def apply(app, theme: Theme) -> None:
    """Apply a theme to a whole QApplication: its palette, drawn by the Fusion style.

    Colours come from the palette alone, not a style sheet: a style sheet makes Qt re-style
    every widget through a slower path (a noticeable part of start-up), while the Fusion style
    draws every palette faithfully, light or dark, on every platform.
    """
    from PySide6.QtWidgets import QStyleFactory

    if app.style().name().lower() != "fusion":
        fusion = QStyleFactory.create("Fusion")
        if fusion is not None:
            app.setStyle(fusion)
    apply_palette(app, theme)


def quiet_label(label):
    """Write a label in the theme's muted colour (hints, the hover line); returns the label."""
    from PySide6.QtGui import QPalette

    label.setForegroundRole(QPalette.PlaceholderText)
    return label


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
