"""Feedback the window gives: disabled controls look disabled, readable selections, a hover line
that never moves the layout, an empty window that says what to do, remembered folders, faded
and fitted curves that stay visible."""

from __future__ import annotations

import os

import pytest
from PySide6.QtGui import QPalette
from PySide6.QtWidgets import QApplication

from refplane.session.model import LOW_CONTRAST_ON_LIGHT, PALETTE
from refplane.views import theme as theme_module
from refplane.views.main_window import MainWindow
from refplane.views.theme import DARK, LIGHT, blend, contrast_ratio, relative_luminance

from model_sweeps import resistor_with_leads

THEMES = [LIGHT, DARK]


@pytest.fixture
def window(qtbot):
    w = MainWindow()
    w.show_error = lambda title, message: None
    qtbot.addWidget(w)
    w.resize(1200, 760)
    w.show()
    qtbot.waitExposed(w)
    yield w
    w.loader.cancel()
    w.loader.wait()


# ---------------------------------------------------------------- contrast arithmetic
def test_contrast_ratio_follows_the_wcag_definition():
    # WCAG 2.x, definitions of "relative luminance" and "contrast ratio" (W3C Recommendation):
    # black on white is 21:1, a colour on itself 1:1; #767676 on white is the lightest grey
    # passing AA for body text (4.54:1, widely quoted; from memory) and #777777 just fails it.
    assert contrast_ratio("#000000", "#ffffff") == pytest.approx(21.0)
    assert contrast_ratio("#3b6fd8", "#3b6fd8") == pytest.approx(1.0)
    assert relative_luminance("#ffffff") == pytest.approx(1.0)
    assert contrast_ratio("#767676", "#ffffff") == pytest.approx(4.54, abs=0.01)
    assert contrast_ratio("#777777", "#ffffff") < 4.5


@pytest.mark.parametrize("theme", THEMES, ids=lambda t: t.name)
def test_selected_rows_meet_wcag_aa(qtbot, theme):
    # WCAG 2.1 success criterion 1.4.3 (AA): text contrast at least 4.5:1. The selected row's
    # text (HighlightedText) on its background (Highlight), as the palette sets them.
    app = QApplication.instance()
    theme_module.apply(app, theme)
    pal = app.palette()
    fg, bg = pal.color(QPalette.HighlightedText).name(), pal.color(QPalette.Highlight).name()
    assert contrast_ratio(fg, bg) >= 4.5
    assert contrast_ratio(pal.color(QPalette.Text).name(), pal.color(QPalette.Base).name()) >= 4.5
    theme_module.apply(app, LIGHT)


@pytest.mark.parametrize("theme", THEMES, ids=lambda t: t.name)
def test_disabled_controls_look_disabled(qtbot, theme):
    app = QApplication.instance()
    theme_module.apply(app, theme)
    pal = app.palette()
    for role in (QPalette.ButtonText, QPalette.Text, QPalette.WindowText):
        live, dead = pal.color(QPalette.Active, role), pal.color(QPalette.Disabled, role)
        assert live != dead
        # Greyed: much closer to the background than live text is.
        bg = pal.color(QPalette.Active, QPalette.Window).name()
        assert contrast_ratio(dead.name(), bg) < contrast_ratio(live.name(), bg) / 2
    assert pal.color(QPalette.Disabled, QPalette.Button) != pal.color(QPalette.Active, QPalette.Button)
    theme_module.apply(app, LIGHT)


def test_a_disabled_button_is_drawn_differently(window):
    button = window.marker_table.copy_button
    assert not button.isEnabled()  # no markers yet
    dead = button.grab().toImage()
    button.setEnabled(True)
    live = button.grab().toImage()
    assert dead != live


# ---------------------------------------------------------------------- hover line
def test_the_hover_line_keeps_its_place_whatever_it_says(window, qtbot):
    window.state.add_sweep(resistor_with_leads())
    qtbot.wait(20)
    hover = window.chart.hover
    places = []
    for text in (" ", "z = 1.5 + j0.2", "z = 1.234567 − j12.345678 · Z = 61.7 − j617.3 Ω · Γ = 0.98∠−12.3° · "
                 "nearest: a very long trace name indeed at 123.456789 MHz " * 2):
        hover.setText(text)
        QApplication.processEvents()
        places.append((hover.geometry(), window.chart.geometry(), window.plots.geometry(), window.size()))
    assert places[0] == places[1] == places[2]


# --------------------------------------------------------------------- empty window
def test_an_empty_window_says_how_to_open_a_sweep(window, qtbot):
    note = window.chart.empty_note
    assert note.isVisible() and "File ▸ Open sweeps" in note.text() and "drop" in note.text()
    tid = window.state.add_sweep(resistor_with_leads())
    assert not note.isVisible()
    window.state.remove_trace(tid)
    assert note.isVisible()
    # The words name the menu entry as it is.
    assert window.open_action.text().replace("&", "") in note.text()


# ---------------------------------------------------------------------- folders
def test_file_dialogs_remember_the_last_folder_per_purpose(window, tmp_path, monkeypatch):
    from PySide6.QtWidgets import QFileDialog

    from refplane.views.folders import last_folder, remember_folder

    sweeps, pictures, sessions = (tmp_path / n for n in ("sweeps", "pictures", "sessions"))
    for d in (sweeps, pictures, sessions):
        d.mkdir()
    remember_folder("sweeps", str(sweeps / "a.s1p"))
    # A purpose not used yet starts where the sweeps are.
    assert last_folder("pictures") == str(sweeps)
    asked = []
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        lambda *a, **k: (asked.append(a[2]) or str(pictures / "chart.png"), ""))
    assert window.ask_save_path("Save chart picture", "refplane-chart.png") == str(pictures / "chart.png")
    assert os.path.dirname(asked[-1]) == str(sweeps)
    assert last_folder("pictures") == str(pictures)
    assert last_folder("sweeps") == str(sweeps)  # the other purposes keep theirs
    remember_folder("sessions", str(sessions / "work.refplane"))
    assert window.ask_save_path("Save chart picture", "refplane-chart.png")
    assert os.path.dirname(asked[-1]) == str(pictures)
    assert last_folder("sessions") == str(sessions)


# ------------------------------------------------------------- faded and model curves
@pytest.mark.parametrize("theme", THEMES, ids=lambda t: t.name)
def test_the_faded_uncorrected_trace_stays_visible(theme):
    # The faded trace is context, drawn lighter than the corrected one but never lost: each
    # palette colour at the theme's opacity keeps at least 1.5:1 against the chart (WCAG 2.x
    # contrast ratio; the floor is our choice for a secondary curve, below the 3:1 that WCAG
    # 2.1 SC 1.4.11 asks of essential graphics, which the full-strength trace carries).
    # At the former fixed opacity of 0.3 several colours fell to about 1.3:1 on both grounds.
    colours = [c for c in PALETTE if not (theme is LIGHT and c in LOW_CONTRAST_ON_LIGHT)]
    for c in colours:
        faded = blend(c, theme.chart_bg, theme.faded_alpha)
        assert contrast_ratio(faded, theme.chart_bg) >= 1.5, c
        assert contrast_ratio(faded, c) >= 1.1, c  # and still lighter than the trace itself


def test_the_chart_and_plots_draw_the_faded_trace_at_the_theme_opacity(window, qtbot):
    from refplane.analysis.lines.deembed import LineOffset

    tid = window.state.add_sweep(resistor_with_leads())
    window.state.set_offsets(tid, (LineOffset(delay_s=20e-12),))
    window.plots.flush()
    raw = window.chart._raw[tid]
    assert raw.curve.opts["pen"].color().alphaF() == pytest.approx(window.theme.faded_alpha, abs=0.01)
    alphas = sorted({round(i.opts["pen"].color().alphaF(), 2) for i in window.plots.upper.curve_items()})
    assert alphas == [round(window.theme.faded_alpha, 2), 1.0]


@pytest.mark.parametrize("theme", THEMES, ids=lambda t: t.name)
def test_the_model_curve_dashes_contrast_with_every_trace_colour(theme):
    # WCAG 2.1 SC 1.4.11 (non-text contrast): graphics needed to understand the content at
    # least 3:1 against adjacent colours; here the dashes against the trace they lie on.
    for c in PALETTE:
        assert contrast_ratio(theme.model_outline, c) >= 3.0, c


def test_the_fitted_curve_is_drawn_over_its_trace_with_contrasting_dashes(window, qtbot):
    from refplane.analysis.sweep import Sweep

    tid = window.state.add_sweep(resistor_with_leads())
    same = window.state.trace(tid).displayed
    model = Sweep(freq_hz=same.freq_hz, s=same.s[:, :1, :1], z0_ohm=same.z0_ohm[:1], name="model")
    window.state.set_overlay(tid, "fitted model", model)
    window.plots.flush()
    item = window.chart._overlays[(tid, "fitted model")]
    assert item.zValue() > window.chart.trace_item(tid).zValue()
    pen = item.dashes.opts["pen"]
    assert pen.color().name() == window.theme.model_outline and pen.dashPattern()
    dashed = [i for i in window.plots.upper.curve_items()
              if i.opts["pen"].color().name() == window.theme.model_outline]
    assert len(dashed) == 1 and dashed[0].opts["pen"].dashPattern()


def test_controls_that_cannot_act_say_why(window):
    table = window.marker_table
    assert not table.remove_button.isEnabled() and "No marker yet" in table.remove_button.toolTip()
    assert "Needs two markers" in table.delta_a.toolTip()
    assert not window.plots.clear_band.isEnabled() and "No band chosen" in window.plots.clear_band.toolTip()
    assert "Open a sweep first" in window.panel("Reference plane").toolTip()
    tid = window.state.add_sweep(resistor_with_leads())
    window.state.add_marker(tid, 100e6)
    assert table.remove_button.isEnabled() and "No marker" not in table.remove_button.toolTip()
    assert window.panel("Reference plane").toolTip() == ""
    # Pressed with nothing to act on, Add marker and Find say what is missing.
    window.state.remove_trace(tid)
    table.entry.setText("470 MHz")
    table.add_from_entry()
    assert "Open a sweep first" in table.message.text()
