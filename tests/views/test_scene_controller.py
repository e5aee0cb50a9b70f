"""The scene controller: one resolve per session change, one ``set_scene`` per view, views that
draw the Scene they are given without reading the session, and a marker drag step that moves
markers only.

Values drawn are checked against closed forms: Γ = (Z − Z0)/(Z + Z0), return loss
= −20·log10|Γ| and VSWR = (1 + |Γ|)/(1 − |Γ|) (the definitions; e.g. Pozar, *Microwave
Engineering*, 4th ed., §2.3, from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.session.model import Session

from model_sweeps import resistor_with_leads

pytestmark = pytest.mark.needs_qt


def _resistor(r_ohm: float, name: str, n: int = 51) -> Sweep:
    f = np.linspace(10e6, 100e6, n)
    return Sweep(freq_hz=f, s=np.full(n, z_to_gamma(r_ohm + 0j, 50.0)).reshape(-1, 1, 1), z0_ohm=50.0,
                 name=name)


class NoModel:
    """Stands in for the session where a view may only send edits: reading anything fails."""

    def __getattr__(self, name):
        raise AssertionError(f"the view read the session ({name}) while drawing")


class Handing:
    """A controller double that hands one fixed Scene to whatever attaches."""

    def __init__(self, scene):
        self.scene_ = scene

    def attach(self, view, *, push=True):
        view.set_scene(self.scene_)
        return view

    def scene(self):
        return self.scene_


@pytest.fixture
def work():
    """A session of two resistors (100 Ω with an offset, so its raw trace is drawn faded,
    and 25 Ω with a model curve over it) and a marker on each."""
    s = Session()
    a = s.add_sweep(_resistor(100.0, "hundred"))
    b = s.add_sweep(_resistor(25.0, "twenty-five"))
    s.set_offsets(a, (LineOffset(delay_s=50e-12),))
    s.set_overlay(b, "fitted model", _resistor(25.0, "model"))
    ma = s.add_marker(a, 40e6)
    mb = s.add_marker(b, 60e6)
    return s, a, b, ma, mb


def test_chart_draws_the_scene_it_is_given_without_reading_the_session(qtbot, work):
    from refplane.views.smith_chart import MarkerItem, SmithChart, TraceItem

    s, a, b, ma, mb = work
    scene = s.scene()
    chart = SmithChart(NoModel(), scene=scene)
    qtbot.addWidget(chart)
    chart.resize(500, 500)
    chart.show()
    items = chart.view.addedItems
    # Two traces, the faded raw trace of the offset one, the model curve over the other.
    assert sum(isinstance(i, TraceItem) for i in items) == 4
    assert chart.trace_count() == 2 and set(chart._raw) == {a} and set(chart._overlays) == {(b, "fitted model")}
    assert sum(isinstance(i, MarkerItem) for i in items) == 2
    # The 25 Ω trace sits at Γ = (25 − 50)/(25 + 50) = −1/3 (definition of Γ).
    x, y = chart.trace_item(b).curve.getData()
    assert np.allclose(x, -1 / 3) and np.allclose(y, 0.0, atol=1e-12)
    # Its marker is drawn where the Scene says it reads.
    pos = chart.marker_item(mb).pos()
    assert (pos.x(), pos.y()) == pytest.approx((-1 / 3, 0.0), abs=1e-9)
    # Hover text comes from the same Scene (trace names, reference impedance).
    assert "twenty-five" in chart.hover_text(complex(-1 / 3, 0.0))


def test_plots_panel_and_picture_draw_the_scene_without_reading_the_session(qtbot, work):
    from refplane.views.panels.limits_panel import LimitsPanel
    from refplane.views.plots import CompanionPlots
    from refplane.views.render import ChartPicture

    s, a, b, ma, mb = work
    s.set_display(upper_plot="vswr")
    s.set_tool("limits", expressions=("vswr <= 2.5 over 20MHz:80MHz",))
    s.set_current_trace(a)
    scene = s.scene()
    plots = CompanionPlots(NoModel(), controller=Handing(scene))
    qtbot.addWidget(plots)
    plots.resize(600, 500)
    plots.show()
    # One item per curve of the Scene: the offset trace and its faded raw trace, the other
    # trace, and its model curve drawn twice (colour, then dashes over it).
    expected = sum(2 if c.style == "dotted" else 1 for c in scene.plots[0].curves)
    assert len(plots.upper.curve_items()) == expected == 5
    ys = sorted(float(np.nanmax(i.getData()[1])) for i in plots.upper.curve_items())
    # VSWR of 100 Ω on 50 Ω is 2, of 25 Ω on 50 Ω also 2 (VSWR = (1+|Γ|)/(1−|Γ|), |Γ| = 1/3);
    # the offset adds a 50 ps line, which leaves |Γ| of a lossless line unchanged.
    assert ys == pytest.approx([2.0] * 5, rel=1e-6)
    assert set(plots.upper._lines) == {ma, mb}
    assert plots.upper.marker_line(ma).value() == pytest.approx(40e6)
    # The limit: VSWR 2 ≤ 2.5 passes (drawn and listed from the same Scene).
    panel = LimitsPanel(NoModel(), controller=Handing(scene))
    qtbot.addWidget(panel)
    assert len(panel.lines()) == 1 and panel.lines()[0].startswith("✓")
    assert panel.expressions() == ("vswr <= 2.5 over 20MHz:80MHz",)
    picture = ChartPicture(NoModel(), scene=scene)
    qtbot.addWidget(picture)
    assert picture.legend_lines() == list(scene.legend)
    assert picture.chart.trace_count() == 2


class Spy:
    """Any object with ``set_scene`` can be attached; this one counts what it is given."""

    def __init__(self):
        self.scenes = []

    def set_scene(self, scene):
        self.scenes.append(scene)


@pytest.fixture
def counted(monkeypatch):
    """Counts calls of ``resolve`` (``Session.scene`` imports it on every resolve)."""
    from refplane.session import resolve as resolve_module

    calls = [0]
    real = resolve_module.resolve

    def counting(session, previous=None):
        calls[0] += 1
        return real(session, previous)

    monkeypatch.setattr(resolve_module, "resolve", counting)
    return calls


def _count_set_scene(view, counts, key):
    real = view.set_scene

    def counting(scene):
        counts[key] = counts.get(key, 0) + 1
        real(scene)

    view.set_scene = counting


def test_one_change_is_one_resolve_and_one_set_scene_per_view(qtbot, counted):
    from refplane.views.panels.limits_panel import LimitsPanel
    from refplane.views.plots import CompanionPlots
    from refplane.views.scene_controller import SceneController
    from refplane.views.smith_chart import SmithChart

    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    s.add_marker(tid, 300e6)
    controller = SceneController(s)
    chart = SmithChart(s, controller=controller)
    plots = CompanionPlots(s, controller=controller)
    panel = LimitsPanel(s, controller=controller)
    spy = controller.attach(Spy())
    for w in (chart, plots, panel):
        qtbot.addWidget(w)
    views = controller.views()
    assert views[0] is chart and spy in views and panel in views and plots.upper in views
    counts: dict[int, int] = {}
    for i, view in enumerate(views):
        if view is not spy:
            _count_set_scene(view, counts, i)
    before_spy, before = len(spy.scenes), counted[0]
    s.set_name(tid, "renamed")  # one change: one event
    assert counted[0] - before == 1
    assert len(spy.scenes) - before_spy == 1 and spy.scenes[-1].traces[0].name == "renamed"
    assert counts == {i: 1 for i, v in enumerate(views) if v is not spy}
    # A change another view shares: the same Scene object reaches every view.
    s.set_display(upper_plot="vswr")
    assert counted[0] - before == 2
    assert spy.scenes[-1] is chart.scene_drawn and plots.upper.quantity == "vswr"


def test_changes_held_together_are_one_push(qtbot, counted):
    from refplane.views.scene_controller import SceneController

    s = Session()
    controller = SceneController(s)
    spy = controller.attach(Spy())
    pushes, before = controller.pushes, counted[0]
    with controller.held():
        a = s.add_sweep(_resistor(100.0, "a"))
        s.add_marker(a, 50e6)
        s.set_band((20e6, 80e6))
        s.set_display(vswr_circle=2.0)
        assert len(spy.scenes) == 1  # only the Scene given on attaching
    assert controller.pushes - pushes == 1 and counted[0] - before == 1
    last = spy.scenes[-1]
    assert len(last.traces) == 1 and len(last.markers) == 1 and last.band == (20e6, 80e6)


def test_a_view_writing_back_makes_one_more_push_not_a_nested_one(qtbot):
    from refplane.views.scene_controller import SceneController

    s = Session()
    tid = s.add_sweep(_resistor(100.0, "a"))
    controller = SceneController(s)

    class Renamer(Spy):
        def set_scene(self, scene):
            super().set_scene(scene)
            if scene.traces and scene.traces[0].name == "a":
                s.set_name(tid, "b")  # an edit sent back while the push is running

    first, second = controller.attach(Renamer(), push=False), controller.attach(Spy(), push=False)
    s.set_colour(tid, "#000000")
    # Both views see the colour change, then (once, after it) the rename.
    assert [t.traces[0].name for t in first.scenes] == ["a", "b"]
    assert [t.traces[0].name for t in second.scenes] == ["a", "b"]
    assert second.scenes[0].traces[0].colour == "#000000"


def test_attach_wants_set_scene_and_drops_destroyed_views(qtbot):
    from refplane.views.scene_controller import SceneController
    from refplane.views.smith_chart import SmithChart

    s = Session()
    controller = SceneController(s)
    with pytest.raises(TypeError):
        controller.attach(object())
    chart = SmithChart(s, controller=controller)
    assert controller.views() == [chart]
    chart.deleteLater()
    qtbot.waitUntil(lambda: controller.views() == [], timeout=2000)
    s.add_sweep(_resistor(50.0, "matched"))  # pushes to nobody, without error
    assert controller.scene().traces[0].name == "matched"


def test_a_marker_drag_step_resolves_once_and_touches_no_curve(qtbot, counted, monkeypatch):
    import pyqtgraph as pg

    from refplane.analysis.readings.impedance import vswr
    from refplane.session import resolve as resolve_module
    from refplane.views.main_window import MainWindow
    from refplane.views.smith_chart import TraceItem

    window = MainWindow()
    window.show_error = lambda title, message: None
    qtbot.addWidget(window)
    window.show()
    qtbot.waitExposed(window)
    sweep = resistor_with_leads()
    tid = window.state.add_sweep(sweep)
    mid = window.state.add_marker(tid, 300e6)
    window.plots.flush()
    qtbot.wait(10)
    curve_calls = []
    for cls in (pg.PlotCurveItem, pg.PlotDataItem):
        real = cls.setData

        def spy(self, *args, _real=real, **kw):
            curve_calls.append(self)
            return _real(self, *args, **kw)

        monkeypatch.setattr(cls, "setData", spy)
    trace_sets = []
    real_set_data = TraceItem.set_data
    monkeypatch.setattr(TraceItem, "set_data", lambda self, x, y: (trace_sets.append(self),
                                                                   real_set_data(self, x, y)))
    g = sweep.reflection(1)
    k = int(np.searchsorted(sweep.freq_hz, 500e6))
    before, readouts = counted[0], resolve_module.READOUT_COUNT[0]
    window.chart.drag_marker_to(mid, complex(g[k]), finished=False)  # one live drag step
    assert counted[0] - before == 1
    assert resolve_module.READOUT_COUNT[0] - readouts == 1  # the moved marker, read once
    assert trace_sets == [] and curve_calls == []  # no trace curve or plot curve given data
    f = float(sweep.freq_hz[k])
    m = window.state.scene().marker(mid)
    assert m.freq_hz == pytest.approx(f)
    # Drawn in the same turn: the chart's marker at its Γ, each plot's line at its frequency.
    pos = window.chart.marker_item(mid).pos()
    assert (pos.x(), pos.y()) == pytest.approx((g[k].real, g[k].imag), abs=1e-9)
    for plot in window.plots.plots():
        assert plot.marker_line(mid).value() == pytest.approx(f)
        assert not plot._redraw_timer.isActive()  # no curve redraw waiting either
    # The reading is the closed form: Z = 75 + jωL (9 nH) → VSWR from Γ (definition).
    z = 75 + 2j * math.pi * f * 9e-9
    assert float(m.readout.vswr) == pytest.approx(float(vswr(z_to_gamma(z, 50.0))), rel=1e-9)


def test_a_zoom_that_comes_with_a_new_quantity_is_kept(qtbot):
    from refplane.views.plots import CompanionPlots

    s = Session()
    s.add_sweep(_resistor(100.0, "a"))
    plots = CompanionPlots(s)
    qtbot.addWidget(plots)
    plots.resize(600, 500)
    plots.show()
    # As a session file restores both at once: the quantity and the zoom kept for it.
    s.set_display(upper_plot="vswr", upper_view=(20e6, 60e6, 1.5, 2.5))
    assert s.display.upper_view == (20e6, 60e6, 1.5, 2.5)
    (x0, x1), (y0, y1) = plots.upper.viewbox.viewRange()
    assert (x0, x1, y0, y1) == pytest.approx((20e6, 60e6, 1.5, 2.5))
    # Choosing another quantity by itself fits the new one (the zoom is forgotten).
    s.set_display(upper_plot="z_mag")
    assert s.display.upper_view is None
