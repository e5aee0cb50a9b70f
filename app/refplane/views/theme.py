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
    selection: str = "#3b6fd8"
    """Background of selected rows and text (white text on it meets WCAG AA, 4.5:1)."""
    disabled_text: str = "#9aa1ad"
    """Text of controls that cannot act now."""
    disabled_button: str = "#e7e9ed"
    """Face of buttons that cannot act now (flatter than a live button)."""
    faded_alpha: float = 0.5
    """Opacity of the faded uncorrected trace (the measured sweep under a corrected one)."""
    model_outline: str = "#1d2330"
    """Dash colour of a fitted model curve, drawn over the trace's colour so it shows on top of it."""


LIGHT = Theme(
    name="Light", window="#f4f5f7", base="#ffffff", text="#1d2330", muted="#5d6675",
    chart_bg="#ffffff", rim="#4a5263", grid_major="#b9c0cc", grid_minor="#e3e6eb",
    admittance="#e9c7b3", label="#6a7384", accent="#3b6fd8", vswr="#8a5cc9",
    selection="#3b6fd8", disabled_text="#9aa1ad", disabled_button="#e7e9ed", faded_alpha=0.55,
    model_outline="#1d2330",
)

DARK = Theme(
    name="Dark", window="#1f232a", base="#171a20", text="#e4e7ec", muted="#9aa3b2",
    chart_bg="#15181d", rim="#aab2c0", grid_major="#4a5160", grid_minor="#2c313a",
    admittance="#5e4536", label="#8f98a8", accent="#6f9bff", vswr="#b48cf0",
    # The accent is too light for white text on a selected row (2.8:1); a deeper blue is used.
    selection="#2f5fbf", disabled_text="#5f6774", disabled_button="#262a31", faded_alpha=0.55,
    # Dashes of the chart's own dark: every palette colour stands out from it by 3.4:1 or more.
    model_outline="#15181d",
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
    pal.setColor(QPalette.Highlight, QColor(theme.selection))
    pal.setColor(QPalette.HighlightedText, QColor("#ffffff"))
    pal.setColor(QPalette.ToolTipBase, QColor(theme.base))
    pal.setColor(QPalette.ToolTipText, QColor(theme.text))
    pal.setColor(QPalette.PlaceholderText, QColor(theme.muted))
    # Controls that cannot act must look it: greyed text and a flat face (without this group
    # the Fusion style draws a disabled button almost exactly like a live one in either theme).
    disabled = QColor(theme.disabled_text)
    for role in (QPalette.WindowText, QPalette.Text, QPalette.ButtonText, QPalette.PlaceholderText):
        pal.setColor(QPalette.Disabled, role, disabled)
    pal.setColor(QPalette.Disabled, QPalette.Button, QColor(theme.disabled_button))
    pal.setColor(QPalette.Disabled, QPalette.Base, QColor(theme.window))
    pal.setColor(QPalette.Disabled, QPalette.Highlight, QColor(theme.disabled_button))
    pal.setColor(QPalette.Disabled, QPalette.HighlightedText, disabled)
    app.setPalette(pal)


def relative_luminance(colour: str) -> float:
    """WCAG 2.x relative luminance of ``#rrggbb`` (sRGB, linearised per channel)."""
    def channel(c: int) -> float:
        v = c / 255.0
        return v / 12.92 if v <= 0.04045 else ((v + 0.055) / 1.055) ** 2.4

    r, g, b = (int(colour[i:i + 2], 16) for i in (1, 3, 5))
    return 0.2126 * channel(r) + 0.7152 * channel(g) + 0.0722 * channel(b)


def contrast_ratio(a: str, b: str) -> float:
    """WCAG 2.x contrast ratio (L_lighter + 0.05) / (L_darker + 0.05) of two ``#rrggbb`` colours."""
    la, lb = sorted((relative_luminance(a), relative_luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


def blend(colour: str, background: str, alpha: float) -> str:
    """``colour`` painted at opacity ``alpha`` over ``background``, as ``#rrggbb``."""
    fg = [int(colour[i:i + 2], 16) for i in (1, 3, 5)]
    bg = [int(background[i:i + 2], 16) for i in (1, 3, 5)]
    return "#" + "".join(f"{round(alpha * f + (1 - alpha) * b):02x}" for f, b in zip(fg, bg))
