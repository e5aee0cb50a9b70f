"""Reports of a session (window File ▸ Report…, refplane report --session): the same numbers
as refplane read, the file's SHA-256, one section per trace."""

from __future__ import annotations

import hashlib
from html.parser import HTMLParser
from pathlib import Path

import pytest

from refplane.analysis.lines.deembed import LineOffset
from refplane.analysis.files.loading import read_sweep
from refplane.analysis.readings import read_points
from refplane.cli import main
from refplane.session.files import save_session
from refplane.session.model import Session
from refplane.session.present import readout_cells

from model_sweeps import resistor_with_leads, series_rc, write_sweep


class _Text(HTMLParser):
    def __init__(self):
        super().__init__()
        self.text = []

    def handle_data(self, data):
        self.text.append(data)


def test_report_of_a_saved_session(tmp_path):
    a = write_sweep(resistor_with_leads(), tmp_path / "r75.s1p")
    b = write_sweep(series_rc(), tmp_path / "rc.s1p")
    s = Session()
    ta, tb = s.add_sweep(read_sweep(a)), s.add_sweep(read_sweep(b))
    s.set_offsets(ta, [LineOffset(delay_s=50e-12)])
    s.add_marker(ta, 470e6)
    s.add_marker(tb, 100e6)
    session = save_session(s, tmp_path / "bench.refplane")
    out = tmp_path / "report.html"
    assert main(["report", "--session", str(session), "-o", str(out)]) == 0
    html = out.read_text()
    parser = _Text()
    parser.feed(html)
    text = " ".join(parser.text)
    assert html.count("<svg") >= 2
    # The sha256 printed is the file's (FIPS 180-4, as hashlib computes it).
    assert hashlib.sha256(Path(a).read_bytes()).hexdigest() in text
    # The marker reads what refplane read gives for the corrected sweep.
    cells = readout_cells(read_points(s.displayed(ta), [470e6]).readout.at(0))
    assert cells["R"] in text and cells["X"] in text
    assert main(["report", "--session", str(session), "-o", str(tmp_path / "r.pdf")]) == 0
    assert (tmp_path / "r.pdf").read_bytes()[:4] == b"%PDF"


def test_session_and_files_together_are_refused(tmp_path, capsys):
    a = write_sweep(resistor_with_leads(), tmp_path / "r75.s1p")
    assert main(["report", a, "--session", "x.refplane", "-o", str(tmp_path / "r.html")]) == 2
    assert "leave out PATH" in capsys.readouterr().err


def test_report_carries_the_plus_minus_of_the_session(tmp_path):
    from refplane.report.build import build_html
    from refplane.report.from_session import session_sections
    from refplane.session.uncertainty_view import marker_u

    a = write_sweep(resistor_with_leads(), tmp_path / "r75.s1p")
    s = Session()
    tid = s.add_sweep(read_sweep(a))
    s.add_marker(tid, 470e6)
    s.set_tool("uncertainty", enabled=True, directivity_db=40.0, source_match_db=35.0, tracking_db=0.1)
    html = build_html(session_sections(s))
    expected = readout_cells(read_points(s.displayed(tid), [470e6]).readout.at(0),
                             marker_u(s.tool("uncertainty"), s.trace(tid), 470e6))
    assert "±" in expected["R"] and expected["R"] in html and "k = 2" in html
