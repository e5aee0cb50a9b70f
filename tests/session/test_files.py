"""Session files: save, reopen, resolve the same; changed, moved, missing and damaged files said plainly."""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.errors import AnalysisError
from refplane.session import files as session_files
from refplane.session.files import VERSION, open_session, read_session, save_session
from refplane.session.model import Session

from model_sweeps import resistor_with_leads, series_rc, two_port_attenuator, write_sweep


def _work(folder):
    """Three sweeps, offsets on one, markers, plots chosen, a model curve: a piece of work."""
    paths = [write_sweep(resistor_with_leads(), folder / "r75.s1p"),
             write_sweep(series_rc(), folder / "rc.s1p"),
             write_sweep(two_port_attenuator(), folder / "pad.s2p")]
    from refplane.analysis.files.loading import read_sweep

    s = Session()
    ids = [s.add_sweep(read_sweep(p)) for p in paths]
    s.set_port(ids[2], 2)
    s.set_offsets(ids[0], [LineOffset(delay_s=120e-12, loss_db=0.1, loss_ref_hz=1e9)])
    s.set_velocity_factor(ids[0], 1, 0.66)
    s.set_name(ids[1], "bead, as found")
    s.set_visible(ids[1], False)
    a = s.add_marker(ids[0], 470e6)
    s.add_marker(ids[1], 100e6)
    b = s.add_marker(ids[0], 200e6)
    s.set_display(upper_plot="vswr", lower_plot="z_mag", log_frequency=True, admittance_grid=True,
                  vswr_circle=2.0, chart_view=(-0.5, 0.5, -0.4, 0.4), delta_markers=(b, a))
    s.set_band((100e6, 800e6))
    s.set_overlay(ids[0], "fitted model", resistor_with_leads(r_ohm=74.0))
    s.set_fit(band_text="100 MHz : 800 MHz", model="series-rl", overlay_trace=ids[0])
    s.set_calibration(standards={"short": str(folder / "short.s1p")}, devices=[str(folder / "dut.s1p")])
    s.set_current_trace(ids[0])
    return s, paths


def test_round_trip_gives_the_same_scene(tmp_path):
    s, _ = _work(tmp_path)
    path = save_session(s, tmp_path / "bench.refplane")
    again, notes = open_session(path)
    assert notes == []
    assert again.scene().same_as(s.scene())
    assert again.fit == s.fit.__class__(**{**s.fit.__dict__, "overlay_trace": again.trace_ids()[0]})
    assert again.calibration.standards["short"] == str(tmp_path / "short.s1p")
    assert again.trace(again.trace_ids()[0]).velocity_factor(1) == 0.66


def test_sha256_is_the_file_digest(tmp_path):
    # FIPS 180-4 digest as Python's hashlib computes it: the session records exactly that.
    s, paths = _work(tmp_path)
    doc = json.loads(save_session(s, tmp_path / "a.refplane").read_text())
    assert doc["traces"][0]["sha256"] == hashlib.sha256(Path(paths[0]).read_bytes()).hexdigest()
    assert doc["traces"][0]["file"] == "r75.s1p"  # relative to the session file
    assert doc["version"] == VERSION and doc["format"] == "refplane-session"


def test_a_folder_moved_whole_still_opens(tmp_path):
    work = tmp_path / "work"
    work.mkdir()
    s, _ = _work(work)
    save_session(s, work / "bench.refplane")
    shutil.move(str(work), str(tmp_path / "elsewhere"))
    again, notes = open_session(tmp_path / "elsewhere" / "bench.refplane")
    assert notes == [] and len(again.traces()) == 3
    assert again.trace(again.trace_ids()[0]).source.startswith(str(tmp_path / "elsewhere"))


def test_a_session_moved_alone_finds_its_files_by_absolute_path(tmp_path):
    s, _ = _work(tmp_path)
    (tmp_path / "sessions").mkdir()
    save_session(s, tmp_path / "bench.refplane")
    shutil.move(str(tmp_path / "bench.refplane"), str(tmp_path / "sessions" / "deep.refplane"))
    # The relative paths now point into sessions/, where nothing is: the absolute ones still hold.
    again, notes = open_session(tmp_path / "sessions" / "deep.refplane")
    assert notes == [] and len(again.traces()) == 3


def test_a_changed_file_is_opened_as_it_is_now_with_a_note(tmp_path):
    s, paths = _work(tmp_path)
    save_session(s, tmp_path / "bench.refplane")
    Path(paths[0]).unlink()
    write_sweep(resistor_with_leads(r_ohm=80.0), paths[0])
    again, notes = open_session(tmp_path / "bench.refplane")
    assert notes == ["r75.s1p changed since the session was saved; opened the current file"]
    # The new data (80 Ω, not 75 Ω, under the same offsets), not the old.
    assert again.scene().markers[0].readout.r_ohm != pytest.approx(s.scene().markers[0].readout.r_ohm, rel=1e-3)


def test_a_missing_file_is_named_and_can_be_skipped(tmp_path):
    s, paths = _work(tmp_path)
    save_session(s, tmp_path / "bench.refplane")
    (tmp_path / "rc.s1p").unlink()
    with pytest.raises(AnalysisError, match=r"rc\.s1p is missing .*locate it or skip it"):
        open_session(tmp_path / "bench.refplane")
    again, notes = open_session(tmp_path / "bench.refplane", skip_missing=True)
    assert [t.name for t in again.traces()] == ["r75", "pad"]
    assert len(again.markers()) == 2  # the skipped trace's marker goes with it
    assert any("rc.s1p is missing" in n for n in notes)


@pytest.mark.parametrize("edit, words", [
    (lambda d: d.update(version=VERSION + 1), "newer Refplane"),
    (lambda d: d.update(format="something-else"), "not a Refplane session"),
    (lambda d: d["traces"][0].update(port="one"), "traces[0].port"),
    (lambda d: d["traces"][0].update(port=True), "traces[0].port"),
    (lambda d: d["markers"][0].update(trace=7), "markers[0].trace"),
    (lambda d: d["display"].update(upper_plot="nonsense"), "unknown plot quantity"),
    (lambda d: d["display"].update(surprise=1), "display.surprise"),
    (lambda d: d["traces"][0].update(sha256="zz"), "traces[0].sha256"),
    (lambda d: d["traces"][0]["overlays"][0].update(re=[1.0]), "overlays[0]"),
    (lambda d: d.update(band_hz=[1e6]), "band_hz"),
])
def test_hand_edited_sessions_are_refused_naming_the_key(tmp_path, edit, words):
    s, _ = _work(tmp_path)
    path = save_session(s, tmp_path / "bench.refplane")
    doc = json.loads(path.read_text())
    edit(doc)
    path.write_text(json.dumps(doc))
    with pytest.raises(AnalysisError) as info:
        open_session(path)
    message = str(info.value)
    assert words in message and "bench.refplane" in message and "\n" not in message


def test_truncated_or_strange_files_are_one_line(tmp_path):
    s, _ = _work(tmp_path)
    path = save_session(s, tmp_path / "bench.refplane")
    text = path.read_text()
    cases = {"cut.refplane": text[: len(text) // 2], "nan.refplane": text.replace('"freq_hz": 470000000.0', '"freq_hz": NaN'),
             "deep.refplane": "[" * 100000, "binary.refplane": None}
    for name, content in cases.items():
        target = tmp_path / name
        if content is None:
            target.write_bytes(b"\xff\xfe\x00garbage")
        else:
            target.write_text(content)
        with pytest.raises(AnalysisError) as info:
            read_session(target)
        assert name in str(info.value) and "\n" not in str(info.value)


def test_future_versions_are_refused_and_older_ones_migrated(tmp_path, monkeypatch):
    s, _ = _work(tmp_path)
    path = save_session(s, tmp_path / "bench.refplane")
    doc = json.loads(path.read_text())
    # A pretend older layout that named the band differently, with its migration registered.
    monkeypatch.setattr(session_files, "VERSION", VERSION + 1)
    monkeypatch.setitem(session_files.MIGRATIONS, VERSION, lambda d: {**d, "band_hz": d.pop("band")})
    doc["band"] = doc.pop("band_hz")
    path.write_text(json.dumps(doc))
    again, _ = open_session(path)
    assert again.band == s.band


def test_saving_never_overwrites_unasked_and_leaves_no_temporary_file(tmp_path):
    s, _ = _work(tmp_path)
    path = save_session(s, tmp_path / "bench.refplane")
    with pytest.raises(AnalysisError):
        save_session(s, path)
    save_session(s, path, overwrite=True)
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith("bench")) == ["bench.refplane"]


def test_a_trace_from_no_file_is_refused_with_advice(tmp_path):
    s = Session()
    s.add_sweep(resistor_with_leads())  # made in memory: no file to point to
    with pytest.raises(AnalysisError, match="save it as a sweep first"):
        save_session(s, tmp_path / "x.refplane")


def test_tool_settings_come_back_with_the_session(tmp_path):
    from dataclasses import dataclass

    from refplane.session import tools

    @tools.register("test-tool")
    @dataclass(frozen=True)
    class Probe:
        power_w: float = 100.0
        series: str = "E12"
        limits: tuple = ()

    try:
        s, _ = _work(tmp_path)
        s.set_tool("test-tool", power_w=25.0, limits=("vswr <= 2 over 1MHz:2MHz",))
        again, _ = open_session(save_session(s, tmp_path / "t.refplane"))
        assert again.tool("test-tool") == Probe(power_w=25.0, series="E12", limits=("vswr <= 2 over 1MHz:2MHz",))
        doc = json.loads((tmp_path / "t.refplane").read_text())
        doc["tools"]["test-tool"]["power_w"] = "lots"
        (tmp_path / "t.refplane").write_text(json.dumps(doc))
        with pytest.raises(AnalysisError, match="tools.test-tool"):
            open_session(tmp_path / "t.refplane")
    finally:
        tools.REGISTRY.pop("test-tool", None)


def test_a_causal_line_comes_back_with_its_switches(tmp_path):
    s, _ = _work(tmp_path)
    tid = s.trace_ids()[0]
    line = LineOffset(delay_s=1e-9, loss_db=0.3, loss_ref_hz=1e9, dielectric_loss_db=0.1,
                      skin_phase=True, z0_follows_skin=True)
    s.set_offsets(tid, [line])
    again, _ = open_session(save_session(s, tmp_path / "causal.refplane"))
    assert again.trace(again.trace_ids()[0]).offsets == (line,)
