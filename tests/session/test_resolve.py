"""resolve(session) -> Scene: what is drawn and read, computed once per change, reused when unchanged."""

from __future__ import annotations

import numpy as np
import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.readings import read_points
from refplane.session import resolve as resolve_module
from refplane.session.model import Session
from refplane.session.present import readout_cells

from model_sweeps import resistor_with_leads, two_port_attenuator


def test_marker_readings_agree_with_scikit_rf():
    # scikit-rf as the reference library: Network.z at a swept point.
    skrf = pytest.importorskip("skrf")
    sweep = resistor_with_leads()
    s = Session()
    tid = s.add_sweep(sweep)
    f = float(sweep.freq_hz[94])
    mid = s.add_marker(tid, f)
    net = skrf.Network(frequency=skrf.Frequency.from_f(sweep.freq_hz, unit="hz"), s=sweep.s, z0=50)
    z = net.z[94, 0, 0]
    r = s.scene().marker(mid).readout
    assert (r.r_ohm, r.x_ohm) == pytest.approx((z.real, z.imag), rel=1e-12)


def test_scene_carries_the_same_cells_as_refplane_read():
    s = Session()
    sweep = resistor_with_leads()
    tid = s.add_sweep(sweep)
    mid = s.add_marker(tid, 470e6)
    scene = s.scene()
    assert dict(scene.marker(mid).cells) == readout_cells(read_points(sweep, [470e6]).readout.at(0))
    assert scene.trace(tid).label == "r75 · S11"
    assert scene.legend == ("r75 · S11", f"1  {scene.marker(mid).summary}")
    np.testing.assert_array_equal(scene.trace(tid).gamma, sweep.reflection(1))


def test_a_drag_step_computes_one_readout():
    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    other = s.add_sweep(resistor_with_leads(r_ohm=50.0, name="r50"))
    mids = [s.add_marker(tid, 300e6), s.add_marker(other, 400e6), s.add_marker(tid, 500e6)]
    s.scene()
    before = resolve_module.READOUT_COUNT[0]
    for step in range(10):
        s.move_marker(mids[0], 300e6 + step * 1e6, finished=False)
        for _view in range(4):  # chart, plots, table and legend all ask
            s.scene().marker(mids[0]).cells
    assert resolve_module.READOUT_COUNT[0] - before == 9  # the first step does not move it


def test_unchanged_parts_are_reused():
    s = Session()
    tid = s.add_sweep(resistor_with_leads())
    s.add_marker(tid, 470e6)
    first = s.scene()
    s.set_name(tid, "renamed")
    second = s.scene()
    assert second.trace(tid).gamma is first.trace(tid).gamma  # a rename costs no arrays
    assert second.trace(tid).label == "renamed · S11"
    assert second.markers[0].readout is first.markers[0].readout


def test_offsets_change_the_displayed_trace_and_keep_the_raw_one_faded():
    s = Session()
    sweep = resistor_with_leads()
    tid = s.add_sweep(sweep)
    s.set_offsets(tid, [LineOffset(delay_s=100e-12)])
    t = s.scene().trace(tid)
    np.testing.assert_array_equal(t.raw_gamma, sweep.reflection(1))
    assert not np.allclose(t.gamma, sweep.reflection(1))
    faded = [c for c in s.scene().plots[0].curves if c.alpha < 1]
    assert len(faded) == 1


def test_plot_notes_follow_the_quantity():
    s = Session()
    s.add_sweep(resistor_with_leads())
    s.set_display(upper_plot="s21_db", lower_plot="r_x")
    upper, lower = s.scene().plots
    assert upper.note == "needs a two-port sweep" and upper.curves == ()
    assert lower.note == "R solid, X dashed" and [c.style for c in lower.curves] == ["solid", "dashed"]
    s.add_sweep(two_port_attenuator())
    assert len(s.scene().plots[0].curves) == 1
