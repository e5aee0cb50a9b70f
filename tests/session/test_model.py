"""The session model without Qt: events, colours, order, display options, velocity factors."""

from __future__ import annotations

import pytest

from refplane.analysis.errors import AnalysisError
from refplane.session.model import LOW_CONTRAST_ON_LIGHT, PALETTE, Session

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator


def test_the_model_imports_no_qt():
    import subprocess
    import sys

    code = ("import sys, refplane.session.model, refplane.session.resolve, refplane.session.present, "
            "refplane.session.jobs, refplane.session.files, refplane.session.child_reader\n"
            "print(','.join(m for m in sys.modules if m.split('.')[0] in ('PySide6', 'pyqtgraph', 'shiboken6')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_closing_every_trace_starts_the_palette_again():
    s = Session()
    first = [s.trace(s.add_sweep(resistor_with_leads())).colour for _ in range(3)]
    s.clear()
    again = [s.trace(s.add_sweep(resistor_with_leads())).colour for _ in range(3)]
    assert first == again == list(PALETTE[:3])


def test_a_freed_colour_is_taken_again_before_new_ones():
    s = Session()
    a, b, c = (s.add_sweep(resistor_with_leads()) for _ in range(3))
    freed = s.trace(b).colour
    s.remove_trace(b)
    assert s.trace(s.add_sweep(series_rc())).colour == freed


def test_yellow_is_never_the_first_choice_on_white():
    # Yellow (#F0E442) on white has the least contrast of the palette (Okabe & Ito's yellow is
    # meant for dark grounds or fills): the light theme takes it only when all else is in use.
    s = Session()
    colours = [s.trace(s.add_sweep(resistor_with_leads())).colour for _ in range(len(PALETTE))]
    assert colours[0] not in LOW_CONTRAST_ON_LIGHT
    assert colours[-1] in LOW_CONTRAST_ON_LIGHT
    assert sorted(colours) == sorted(PALETTE)


def test_traces_keep_the_order_they_were_asked_for_whatever_order_they_arrive_in():
    s = Session()
    third = s.add_sweep(resistor_with_leads(name="c"), order=3)
    first = s.add_sweep(resistor_with_leads(name="a"), order=1)
    second = s.add_sweep(resistor_with_leads(name="b"), order=2)
    assert s.trace_ids() == [first, second, third]
    assert [t.name for t in s.scene().traces] == ["a", "b", "c"]


def test_display_options_are_validated_and_announced_by_name():
    s = Session()
    seen = []
    s.displayChanged.connect(seen.append)
    s.set_display(log_frequency=True, upper_plot="vswr")
    assert s.display.log_frequency and s.display.upper_plot == "vswr"
    assert sorted(seen) == ["log_frequency", "upper_plot"]
    s.set_display(log_frequency=True)  # no change, no event
    assert len(seen) == 2
    for bad in ({"upper_plot": "nonsense"}, {"theme": "purple"}, {"vswr_circle": 0.5},
                {"chart_view": (1, 0, 0, 1)}, {"no_such_option": 1}):
        with pytest.raises(AnalysisError):
            s.set_display(**bad)


def test_velocity_factor_is_kept_per_trace_and_port():
    s = Session()
    tid = s.add_sweep(two_port_attenuator())
    events = []
    s.velocityFactorsChanged.connect(events.append)
    s.set_velocity_factor(tid, 2, 0.66)
    assert s.trace(tid).velocity_factor(2) == 0.66 and s.trace(tid).velocity_factor(1) is None
    assert events == [tid]
    with pytest.raises(AnalysisError):
        s.set_velocity_factor(tid, 1, 1.7)  # faster than light in vacuum (common practice: vf ≤ 1)
    with pytest.raises(AnalysisError):
        s.set_velocity_factor(tid, 3, 0.66)


def test_fit_overlay_owner_goes_with_its_trace():
    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    s.set_fit(overlay_trace=tid, model="series-rl")
    s.remove_trace(tid)
    assert s.fit.overlay_trace is None and s.fit.model == "series-rl"
    with pytest.raises(AnalysisError):
        s.set_fit(measurement="sideways")


def test_difference_pair_is_forgotten_with_its_marker():
    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    a, b, c = (s.add_marker(tid, f) for f in (100e6, 200e6, 300e6))
    s.set_display(delta_markers=(a, c))
    assert (s.scene().delta.a, s.scene().delta.b) == (a, c)
    s.remove_marker(c)
    assert s.display.delta_markers is None
    assert (s.scene().delta.a, s.scene().delta.b) == (a, b)  # back to the last two
