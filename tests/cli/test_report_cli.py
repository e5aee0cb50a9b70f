"""``refplane report``: a self-contained HTML file with the same numbers as ``refplane read``, and a
PDF with a page per sweep.

The sweeps are a load of known impedance (Z = 75 Ω + j·2πf·9 nH, a leaded resistor as the
references describe it) and a file scikit-rf ships (a real measurement).
"""

from __future__ import annotations

import hashlib
import html
import re
from html.parser import HTMLParser

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import main

skrf = pytest.importorskip("skrf")

VOID = {"meta", "br", "img", "input", "hr", "link", "circle", "line", "rect", "polyline", "path"}


class _Checker(HTMLParser):
    """Collects tags and checks that every opened element is closed in order."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.tags: list[str] = []
        self.attrs: list[tuple[str, str | None]] = []
        self.text: list[str] = []
        self.errors: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.extend(attrs)
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.extend(attrs)

    def handle_endtag(self, tag):
        if tag in VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1] if self.stack else 'nothing'}")
        else:
            self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


@pytest.fixture()
def resistor(tmp_path):
    f = np.linspace(100e6, 1e9, 91)
    z = 75 + 2j * np.pi * f * 9e-9
    path = tmp_path / "resistor_75.s1p"
    touchstone.write(Sweep(f, ((z - 50) / (z + 50)).reshape(-1, 1, 1), 50.0), path,
                     comments=("invented: 75 ohm with 9 nH of leads, for a test",))
    return path


def _read_table(capsys, path, ats):
    capsys.readouterr()  # drop what was printed before
    argv = ["read", str(path)]
    for a in ats:
        argv += ["--at", a]
    assert main(argv) == 0
    lines = capsys.readouterr().out.splitlines()
    # Line 0 names the file; then the header, the rule and one row per frequency.
    rows = [re.split(r"\s{2,}", line.strip()) for line in lines[3:]]
    assert len(rows) == len(ats) and all(len(r) == 12 for r in rows)
    return rows


def test_html_report_parses_holds_svg_and_the_numbers_of_refplane_read(resistor, tmp_path, capsys):
    out = tmp_path / "report.html"
    ats = ["470MHz", "0.9GHz"]
    status = main(["report", str(resistor), "--at", ats[0], "--at", ats[1], "--fit", "series-rl",
                   "--limit", "r_ohm >= 74 over 200MHz:800MHz", "--limit", "vswr <= 1.5 over 100MHz:1GHz",
                   "-o", str(out)])
    assert status == 0
    text = out.read_text(encoding="utf-8")
    parser = _Checker()
    parser.feed(text)
    parser.close()
    assert not parser.errors and not parser.stack
    assert text.startswith("<!DOCTYPE html>") and "<svg" in text and "polyline" in text
    # Self-contained: nothing fetched from elsewhere (the SVG namespace is a name, not a link).
    for name, value in parser.attrs:
        assert name not in ("src", "href"), (name, value)
    assert "<link" not in text and "url(" not in text and "<script" not in text
    body = html.unescape(" ".join(parser.text))
    # The same cells as `refplane read`'s table, frequency by frequency.
    for row in _read_table(capsys, resistor, ats):
        for cell in row:
            assert cell in body, cell
    # SHA-256 of the file (hashlib as the reference), points and band, reference impedance.
    assert hashlib.sha256(resistor.read_bytes()).hexdigest() in body
    assert "91 points, 100 MHz to 1 GHz" in body and "50 Ω" in body
    # The fit sentence names the part (75 Ω in series with 9 nH, a leaded resistor).
    assert re.search(r"75\.0+ Ω.*9\.0+ nH", body)
    # Limit results with their marks, decision rule, cautions, version and date.
    assert "PASS" in body and "FAIL" in body        # R ≥ 74 passes; VSWR 1.5 fails high up
    assert "JCGM 106" in body and "transmitter" in body
    from refplane import __version__

    assert f"Refplane {__version__}" in body and re.search(r"\d{4}-\d\d-\d\d \d\d:\d\d UTC", body)


@pytest.mark.needs_qt
def test_pdf_report_starts_with_pdf_and_has_a_page_per_sweep(resistor, tmp_path):
    other = tmp_path / "second.s1p"
    f = np.linspace(100e6, 1e9, 31)
    touchstone.write(Sweep(f, np.full((31, 1, 1), 0.2 + 0.1j), 50.0), other, comments=("invented",))
    third = tmp_path / "third.s1p"
    touchstone.write(Sweep(f, np.full((31, 1, 1), -0.3j), 50.0), third, comments=("invented",))
    out = tmp_path / "report.pdf"
    status = main(["report", str(resistor), str(other), str(third), "--at", "500MHz",
                   "--limit", "vswr <= 2 over 200MHz:900MHz", "-o", str(out)])
    assert status == 0
    data = out.read_bytes()
    assert data.startswith(b"%PDF")
    # PDF 1.4 (ISO 32000-1, 7.7.3.3): each page is an object of /Type /Page; the tree is /Pages.
    assert len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data)) == 3


def test_report_refuses_to_overwrite_and_bad_names(resistor, tmp_path, capsys):
    out = tmp_path / "r.html"
    out.write_text("keep me", encoding="utf-8")
    assert main(["report", str(resistor), "-o", str(out)]) == 2
    assert out.read_text(encoding="utf-8") == "keep me"
    assert "--force" in capsys.readouterr().err
    assert main(["report", str(resistor), "-o", str(tmp_path / "r.docx")]) == 2
    assert ".html or .pdf" in capsys.readouterr().err
    assert main(["report", str(resistor), "--at", "5GHz", "-o", str(tmp_path / "x.html")]) == 2
    assert "does not extrapolate" in capsys.readouterr().err


def test_check_report_has_the_batch_summary(resistor, tmp_path, capsys):
    out = tmp_path / "lot.html"
    status = main(["check", str(resistor), "--limit", "r_ohm >= 76 over 200MHz:800MHz", "--report", str(out)])
    assert status == 1
    text = html.unescape(out.read_text(encoding="utf-8"))
    assert "1 files: 0 passed, 1 failed" in text and "<svg" in text


def test_marker_table_csv_holds_the_numbers_of_refplane_read_json(resistor, tmp_path, capsys):
    import csv
    import io
    import json

    out_csv = tmp_path / "markers.csv"
    assert main(["report", str(resistor), "--at", "470MHz", "--at", "250MHz", "-o", str(tmp_path / "r.html"),
                 "--csv", str(out_csv)]) == 0
    capsys.readouterr()
    assert main(["read", str(resistor), "--at", "470MHz", "--at", "250MHz", "--json"]) == 0
    points = json.loads(capsys.readouterr().out)["points"]
    text = out_csv.read_text(encoding="utf-8")
    assert text.isascii()                                  # ASCII minus, plain units ("ohm")
    rows = list(csv.DictReader(io.StringIO(text)))
    assert len(rows) == 2 and "R (ohm)" in rows[0] and "frequency (Hz)" in rows[0]
    for row, point in zip(rows, points):
        assert float(row["frequency (Hz)"]) == point["freq_hz"]
        assert float(row["R (ohm)"]) == point["r_ohm"]       # full precision, read back exactly
        assert float(row["series L (H)"]) == point["series_l_h"]
        assert row["series C (F)"] == "" and point["series_c_f"] is None


def test_source_date_epoch_fixes_the_printed_date(resistor, tmp_path, monkeypatch):
    # Reproducible builds convention (reproducible-builds.org, SOURCE_DATE_EPOCH: seconds since
    # 1970-01-01 00:00 UTC): 86400 is 1970-01-02 00:00 UTC.
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "86400")
    out = tmp_path / "r.html"
    assert main(["report", str(resistor), "-o", str(out)]) == 0
    assert "on 1970-01-02 00:00 UTC" in out.read_text(encoding="utf-8")
