"""Background reading: thread for small files, a child process for large ones, cancel."""

from __future__ import annotations

import numpy as np

from refplane.analysis.files.loading import read_sweep
from refplane.views import loader as loader_module
from refplane.views.loader import SweepLoader

from model_sweeps import resistor_with_leads, write_sweep


def test_small_file_in_a_thread(qtbot, tmp_path):
    path = write_sweep(resistor_with_leads(), tmp_path / "a.s1p")
    ld = SweepLoader()
    with qtbot.waitSignal(ld.loaded, timeout=10000) as blocker:
        ld.load(path)
    request, sweep = blocker.args
    assert request.path == path and request.reload_of is None
    np.testing.assert_array_equal(sweep.s, read_sweep(path).s)
    qtbot.waitUntil(lambda: not ld.busy)


def test_large_file_in_a_child_process(qtbot, tmp_path, monkeypatch):
    monkeypatch.setattr(loader_module, "PROCESS_THRESHOLD_BYTES", 0)
    path = write_sweep(resistor_with_leads(n=2001), tmp_path / "big.s1p")
    ld = SweepLoader()
    with qtbot.waitSignal(ld.loaded, timeout=60000) as blocker:
        ld.load(path)
    np.testing.assert_array_equal(blocker.args[1].s, read_sweep(path).s)
    qtbot.waitUntil(lambda: not ld.busy)


def test_error_in_child_process_is_one_line(qtbot, tmp_path, monkeypatch):
    monkeypatch.setattr(loader_module, "PROCESS_THRESHOLD_BYTES", 0)
    bad = tmp_path / "bad.s1p"
    bad.write_text("# Hz S RI R 50\n1e6 0.1 0.2\nfoo bar baz\n")
    ld = SweepLoader()
    with qtbot.waitSignal(ld.failed, timeout=60000) as blocker:
        ld.load(str(bad))
    message = blocker.args[1]
    assert "bad.s1p" in message and "line 3" in message and "\n" not in message
    qtbot.waitUntil(lambda: not ld.busy)


def test_cancel_discards_the_result(qtbot, tmp_path, monkeypatch):
    monkeypatch.setattr(loader_module, "PROCESS_THRESHOLD_BYTES", 0)
    path = write_sweep(resistor_with_leads(n=2001), tmp_path / "big.s1p")
    ld = SweepLoader()
    got = []
    ld.loaded.connect(lambda *a: got.append(a))
    ld.load(path)
    ld.cancel()
    qtbot.waitUntil(lambda: not ld.busy, timeout=30000)
    assert got == []
