"""Every malformed sweep file gives one SweepFileError naming the file, the exact line and a
plain reason. The rules checked are the Touchstone 1.1 / 2.0 specification's (option line,
keywords, numbers per point, strictly increasing frequencies) and CSV's header-row form."""

from __future__ import annotations

import pytest

from refplane.analysis.files import csvfile
from refplane.analysis.files import touchstone
from refplane.analysis.errors import SweepFileError
from refplane.analysis.files.loading import read_sweep

GOOD_2PORT = "1 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8\n"

V2_HEAD = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 2\n")

# (name, file name, content (str or bytes), expected line or None, reason fragment)
CASES = [
    ("empty", "e.s1p", "", None, "empty"),
    ("only comments", "c.s1p", "! nothing here\n# GHz S RI\n", 2, "no frequency points"),
    ("binary nul", "b.s2p", b"# GHz S RI R 50\n1 0.1\x00\x00 0.2\n", 2, "binary"),
    # Non-UTF-8 bytes are read as Windows-1252 text (comments may hold them); outside a
    # comment they are no number. (Issue 13: comments are text, numbers are ASCII.)
    ("undecodable", "u.s1p", b"# GHz S RI R 50\n1 0.1 0.2\n\xff\xfe\x80 1 2\n", 3, "is not a number"),
    ("unknown option token", "o.s1p", "! c\n# GHz S RI R 50 XYZ\n1 0.1 0.2\n", 2, "unknown option 'XYZ'"),
    ("repeated option token", "r.s1p", "# GHz MHz S RI\n1 0.1 0.2\n", 1, "frequency unit twice"),
    ("contradictory format", "f.s1p", "# GHz S RI MA\n1 0.1 0.2\n", 1, "data format twice"),
    ("R without value", "rv.s1p", "# GHz S RI R\n1 0.1 0.2\n", 1, "ends after R"),
    ("R not a number", "rn.s1p", "# GHz S RI R fifty\n1 0.1 0.2\n", 1, "not a number"),
    ("hybrid on one-port", "h.s1p", "\n# GHz H RI R 50\n1 0.1 0.2\n", 2, "two-ports only"),
    ("non-numeric value", "n.s2p", "# GHz S RI R 50\n" + GOOD_2PORT + "2 0.1 0.2 abc 0.4 0.5 0.6 0.7 0.8\n",
     3, "'abc' is not a number"),
    ("short row", "s.s2p", "# GHz S RI R 50\n" + GOOD_2PORT + "! note\n2 0.1 0.2 0.3 0.4 0.5 0.6\n"
     + "3 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8\n", 4, "a 2-port row needs 9 numbers, found 7"),
    ("long row", "l.s2p", "# GHz S RI R 50\n" + GOOD_2PORT + "2 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8 0.9 1.0\n",
     3, "needs 9 numbers, found 11"),
    ("wrapped point short", "w.s3p", "# GHz S RI R 50\n1 " + "0 0 " * 3 + "\n" + " 0 0" * 3 + "\n"
     + " 0 0" * 2 + "\n", 2, "a 3-port point needs 19 numbers, found 17"),
    ("non-increasing frequency", "i.s1p", "# MHz S RI R 50\n100 0.1 0.2\n200 0.1 0.2\n! x\n150 0.1 0.2\n",
     5, "does not increase"),
    ("repeated frequency", "q.s1p", "# MHz S RI R 50\n100 0.1 0.2\n100 0.1 0.2\n", 3, "does not increase"),
    ("nan value", "nan.s1p", "# MHz S RI R 50\n100 0.1 0.2\n200 nan 0.2\n", 3, "not a finite number"),
    ("inf value", "inf.s1p", "# MHz S RI R 50\n100 0.1 0.2\n200 0.1 inf\n", 3, "not a finite number"),
    ("overflow value", "big.s1p", "# MHz S RI R 50\n100 0.1 0.2\n200 0.1 1e999\n", 3, "finite"),
    ("numbers run together", "t.s1p", "# MHz S RI R 50\n100 0.1-0.2\n", 2, "is not a number"),
    ("1-port rows in a .s2p", "p.s2p", "# GHz S RI R 50\n1 0.1 0.2\n2 0.1 0.2\n3 0.1 0.2\n", 2,
     "the rows look like those of a 1-port file"),
    ("2-port rows in a .s1p", "p.s1p", "# GHz S RI R 50\n" + GOOD_2PORT, 2,
     "the rows look like those of a 2-port file"),
    ("no port count", "x.ts", "# GHz S RI R 50\n1 0.1 0.2\n", 2, "cannot tell the number of ports"),
    ("2.0 keyword in a 1.x file", "k.s1p", "# GHz S RI R 50\n[Number of Ports] 1\n1 0.1 0.2\n", 2,
     "belongs to Touchstone 2.0"),
    ("missing [Network Data]", "m.ts", V2_HEAD + "1 0.1 0.2\n2 0.1 0.2\n[End]\n", 5, "[Network Data]"),
    ("no [Network Data] at all", "m2.ts", V2_HEAD + "[End]\n", 5, "[End] comes before [Network Data]"),
    ("wrong [Number of Frequencies]", "nf.ts", V2_HEAD + "[Network Data]\n1 0.1 0.2\n[End]\n", 4,
     "[Number of Frequencies] says 2"),
    ("[Reference] count mismatch", "ref.ts",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n"
     "[Number of Frequencies] 1\n[Reference] 50\n[Network Data]\n" + GOOD_2PORT + "[End]\n", 6,
     "[Reference] gives 1 value(s) for a 2-port file"),
    ("too many [Reference] values", "ref2.ts",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 1\n"
     "[Reference] 50\n75\n[Network Data]\n1 0.1 0.2\n[End]\n", 6, "more than 1 values"),
    ("unknown keyword", "uk.ts", V2_HEAD + "[Colour] blue\n[Network Data]\n1 0.1 0.2\n2 0.1 0.2\n[End]\n",
     5, "unknown keyword [Colour]"),
    ("mixed-mode refused", "mm.ts",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 4\n[Number of Frequencies] 1\n"
     "[Mixed-Mode Order] D2,3 D1,4 C2,3 C1,4\n[Network Data]\n[End]\n", 5, "not supported"),
    ("two-port order missing", "tp.ts",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Number of Frequencies] 1\n"
     "[Network Data]\n" + GOOD_2PORT + "[End]\n", 5, "[Two-Port Data Order]"),
    ("bad two-port order", "tp2.ts",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 11_22\n", 4,
     "must be 12_21 or 21_12"),
    ("ports contradict extension", "pe.s2p",
     "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 3\n", 3, "the file name (.s2p) says 2"),
    ("text after [End]", "ae.ts", V2_HEAD + "[Network Data]\n1 0.1 0.2\n2 0.1 0.2\n[End]\n3 0 0\n", 9,
     "after [End]"),
    ("unsupported version", "v.ts", "[Version] 3.0\n", 1, "not supported"),
]


@pytest.mark.parametrize("name,filename,content,line,fragment", CASES, ids=[c[0] for c in CASES])
def test_malformed_touchstone(tmp_path, name, filename, content, line, fragment):
    path = tmp_path / filename
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content)
    with pytest.raises(SweepFileError) as info:
        read_sweep(path)
    err = info.value
    assert err.line == line, str(err)
    assert fragment in err.reason, str(err)
    assert err.file == str(path)
    # The one-line message names file, line and reason.
    text = str(err)
    assert "\n" not in text and text.startswith(str(path))
    if line is not None:
        assert f"line {line}: " in text


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(SweepFileError, match="no such file"):
        touchstone.read(tmp_path / "absent.s1p")
    with pytest.raises(SweepFileError, match="folder"):
        touchstone.read(tmp_path)


def test_large_file_with_one_bad_value_reports_its_line(tmp_path):
    # The bulk pass meets the bad token deep in a many-megabyte body; the careful pass must
    # still find the exact line.
    rows = [f"{k + 1} 0.1 0.2\n" for k in range(120_000)]
    rows[98_765] = "98766 0.1 0,2\n"
    path = tmp_path / "big.s1p"
    path.write_text("# Hz S RI R 50\n" + "".join(rows))
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert info.value.line == 98_767 and "'0,2' is not a number" in info.value.reason


CSV_CASES = [
    ("empty", "", None, "empty"),
    ("no header", "# only a comment\n", None, "no header"),
    ("no frequency column", "a,re,im\n1,2,3\n", 1, "'a' is neither"),
    ("no frequency column at all", "re,im\n1,2\n", 1, "no frequency column"),
    ("missing imaginary", "freq_hz,re\n1,2\n", 1, "needs a real and an imaginary column"),
    ("non-numeric", "# z0 = 50\nfreq_hz,re,im\n1,0.1,0.2\n2,x,0.2\n", 4, "'x' in column 're' is not a number"),
    ("wrong count", "freq_hz;re;im\n1;0.1;0.2\n2;0.1\n", 3, "has 2 values"),
    ("non-increasing", "Frequency (MHz),S11 re,S11 im\n1,0,0\n3,0,0\n2,0,0\n", 4, "does not increase"),
    ("nan", "freq_hz,re,im\n1,nan,0\n", 2, "not a number"),
    ("binary", b"freq_hz,re,im\n1,0\x00,0\n", 2, "binary"),
    ("incomplete two-port", "freq_hz,S11 re,S11 im,S21 re,S21 im\n1,0,0,0,0\n", 1, "S11 alone"),
]


@pytest.mark.parametrize("name,content,line,fragment", CSV_CASES, ids=[c[0] for c in CSV_CASES])
def test_malformed_csv(tmp_path, name, content, line, fragment):
    path = tmp_path / "sweep.csv"
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content)
    with pytest.raises(SweepFileError) as info:
        csvfile.read(path)
    assert info.value.line == line, str(info.value)
    assert fragment in info.value.reason, str(info.value)
    assert info.value.file == str(path)


def test_z_data_without_s_parameters_is_a_file_error(tmp_path):
    # Z = −R (normalised z = −1) has no scattering matrix: (z + 1) is singular
    # (Pozar ch. 4, from memory: S = (z − 1)(z + 1)⁻¹).
    path = tmp_path / "z.s1p"
    path.write_text("# MHz Z RI R 50\n100 0.5 0.1\n200 -1 0\n")
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert info.value.file == str(path)
    assert "frequency point 2" in info.value.reason and "singular" in info.value.reason
