"""Write the regression corpus of malformed, unusual and hostile input files (issue 13).

Run ``python tests/make_hardening_corpus.py`` to regenerate ``tests/corpus/hardening/``; a
test checks that the committed files match what this script makes. Every file is small and
reproduces one fault that was once read wrongly, crashed, hung or gave a poor message;
``manifest.json`` gives what Refplane must do with it: read it (with the values to expect),
read it with a warning, or refuse it with one line naming the file, the line (where there
is one) and a reason containing the given words. Files too large to keep in the repository
(a two-million-character token, a line of many megabytes) are made by :func:`large_cases`
at test time. The random parts use a fixed seed. All data is invented.
"""

from __future__ import annotations

import json
import pathlib
import random

HERE = pathlib.Path(__file__).resolve().parent
CORPUS = HERE / "corpus" / "hardening"
SEED = 13

V2_1PORT = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n"
            "[Number of Frequencies] 2\n")
V2_2PORT = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n"
            "[Two-Port Data Order] 12_21\n[Number of Frequencies] 1\n")
ROW9 = "1 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8\n"


def _error(line, contains):
    return {"expect": "error", "line": line, "contains": contains}


def _ok(**values):
    return {"expect": "ok", **values}


def _warn(contains, **values):
    return {"expect": "warning", "contains": contains, **values}


def cases() -> list[tuple[str, bytes, dict]]:
    """(file name, content, expectation) of every corpus file."""
    rng = random.Random(SEED)
    out: list[tuple[str, bytes, dict]] = []

    def add(name, text, expect):
        out.append((name, text.encode("utf-8") if isinstance(text, str) else text, expect))

    # 1. Read wrong or crashed. Touchstone 2.0 specification: [Matrix Format] Lower/Upper list
    # one triangle row by row; [Two-Port Data Order] applies to Full matrices only.
    lower = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 21_12\n"
             "[Number of Frequencies] 1\n[Matrix Format] Lower\n[Network Data]\n"
             "1 0.1 0.2 0.3 0.4 0.5 0.6\n[End]\n")
    add("lower_21_12_ri.ts", lower,
        _ok(s=[[[0.1, 0.2], [0.3, 0.4]], [[0.3, 0.4], [0.5, 0.6]]]))
    add("upper_21_12_ma.s2p", lower.replace("RI", "MA").replace("Lower", "Upper")
        .replace("1 0.1 0.2 0.3 0.4 0.5 0.6", "1 0.5 0 0.25 90 0.1 180"),
        _ok(s=[[[0.5, 0.0], [0.0, 0.25]], [[0.0, 0.25], [-0.1, 0.0]]]))
    add("lower_21_12_db.ts", lower.replace("RI", "DB")
        .replace("1 0.1 0.2 0.3 0.4 0.5 0.6", "1 -20 0 -40 90 0 180"),
        _ok(s=[[[0.1, 0.0], [0.0, 0.01]], [[0.0, 0.01], [-1.0, 0.0]]]))
    # A number moved from one line to the next: the total count still fits two points.
    add("shifted_row.s2p", "# GHz S RI R 50\n1 0.1 0.2 0.3 0.4 0.5 0.6 0.7\n"
        "2 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8 0.9\n", _error(2, "needs 9 numbers, found 8"))
    add("shifted_row.s1p", "# GHz S RI R 50\n1 0.1\n0.2 2 0.3 0.4\n",
        _error(2, "needs 3 numbers, found 2"))
    add("two_points_one_line.s1p", "# GHz S RI R 50\n1 0.1 0.2 2 0.3 0.4\n",
        _error(2, "needs 3 numbers, found 6"))
    add("option_after_data.s1p", "# GHz S RI R 50\n1 0.1 0.2\n# MHz S MA R 75\n2 0.1 0.2\n",
        _error(3, "option line"))
    add("option_after_data_late.s1p", "# GHz S RI R 50\n" + "".join(
        f"{k} 0.1 0.2\n" for k in range(1, 40)) + "# GHz S RI R 50\n40 0.1 0.2\n",
        _error(41, "option line"))
    add("end_before_network_data.ts", V2_1PORT + "[End]\n[Network Data]\n1 0 0\n2 0 0\n",
        _error(5, "[End] comes before [Network Data]"))
    add("keyword_twice.ts", V2_1PORT + "[Number of Frequencies] 3\n[Network Data]\n"
        "1 0 0\n2 0 0\n[End]\n", _error(5, "given twice"))
    add("keywords_no_data.ts", V2_1PORT, _error(4, "no [Network Data]"))
    add("network_data_empty.ts", V2_1PORT + "[Network Data]\n[End]\n",
        _error(6, "followed by no numbers"))
    add("huge_count.ts", V2_1PORT.replace("[Number of Frequencies] 2",
                                          "[Number of Frequencies] " + "9" * 5000),
        _error(4, "far too large"))
    add("zero_padded_count.ts", V2_1PORT.replace("[Number of Frequencies] 2",
                                                  "[Number of Frequencies] " + "0" * 4400 + "2")
        + "[Network Data]\n1 0 0\n2 0 0\n[End]\n", _ok(n_points=2))
    add("huge_db.s1p", "# GHz S DB R 50\n1 99999 0\n", _error(2, "overflow"))
    add("huge_db_late.s2p", "# GHz S DB R 50\n" + "".join(
        f"{k} -1 0 -2 0 -3 0 -4 0\n" for k in range(1, 6)) + "6 -1 0 -2 0 99999 0 -4 0\n",
        _error(7, "overflow"))
    add("huge_frequency.s1p", "# GHz S RI R 50\n1 0 0\n1e308 0 0\n", _error(3, "too large"))
    noise_head = ("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n"
                  "[Two-Port Data Order] 12_21\n[Number of Frequencies] 1\n"
                  "[Number of Noise Frequencies] 2\n[Network Data]\n" + ROW9 + "[Noise Data]\n")
    add("noise_ok.ts", noise_head + "1 0.5 0.3 45 0.2\n2 0.6 0.35 50 0.25\n[End]\n",
        _ok(n_points=1))
    add("noise_garbage.ts", noise_head + "1 0.5 0.3 45 0.2\n2 garbage 0.35 50 0.25\n[End]\n",
        _error(11, "'garbage' is not a number"))
    add("noise_short_row.ts", noise_head + "1 0.5 0.3 45\n2 0.6 0.35 50 0.25\n[End]\n",
        _error(10, "needs 5 numbers"))
    add("noise_count.ts", noise_head + "1 0.5 0.3 45 0.2\n[End]\n",
        _error(9, "[Number of Noise Frequencies] says 2"))
    add("noise_not_increasing.ts", noise_head + "2 0.5 0.3 45 0.2\n1 0.6 0.35 50 0.25\n[End]\n",
        _error(11, "increase"))
    add("noise_v1_garbage.s2p", "# GHz S RI R 50\n" + ROW9 + ROW9.replace("1 ", "2 ", 1) +
        "1 0.5 0.3 45 0.2\n2 0.6 x 50 0.25\n", _error(5, "'x' is not a number"))

    # 2. Refused wrongly before: byte-order mark, 8-bit comments, no [End], CR line ends.
    add("bom.s1p", b"\xef\xbb\xbf# GHz S RI R 50\n1 0.1 0.2\n", _ok(n_points=1))
    add("latin1_comment.s1p", b"! measured at 25 \xb0C\n# GHz S RI R 50\n1 0.1 0.2\n",
        _ok(n_points=1, comment="measured at 25 °C"))
    add("cp1252_comment.s1p", b"! \x93lab\x94 \x80 note\n# GHz S RI R 50\n1 0.1 0.2 ! \xb5H\n",
        _ok(n_points=1, comment="“lab” € note"))
    add("no_end.ts", V2_1PORT + "[Network Data]\n1 0.1 0.2\n2 0.3 0.4\n",
        _warn("without [End]", n_points=2))
    add("cr_only.s1p", b"! old text\r# GHz S RI R 50\r1 0.1 0.2\r2 0.3 0.4\r", _ok(n_points=2))
    add("crlf.s2p", ("# GHz S RI R 50\n" + ROW9 + ROW9.replace("1 ", "2 ", 1))
        .replace("\n", "\r\n"), _ok(n_points=2))

    # 5. Messages: one line, escaped, shortened.
    add("control_in_keyword.ts", "[Version] 2.0\n# GHz S RI R 50\n[Number\x1bof Ports] 1\n",
        _error(3, "unknown keyword"))
    add("newline_in_token.s1p", "# GHz S RI R 50\n1 0.1 0\x0b.2\n", _error(2, "control character"))
    junk = "".join(rng.choice("abcdef!#[]{}") for _ in range(300))
    add("long_junk.s1p", "# GHz S RI R 50\n1 0.1 0.2\n" + junk.replace("!", "x") + "\n",
        _error(3, ""))
    add("nul_bytes.s2p", b"# GHz S RI R 50\n" + ROW9.encode() + b"2 0.1\x00\x00 0.2\n",
        _error(3, "NUL"))

    # 8. Port impedances in comments (not Touchstone): a warning naming the line.
    add("port_impedance.s1p", "# GHz S RI R 50\n1 0.1 0.2\n! Port Impedance 75 0\n2 0.1 0.2\n"
        "! Port Impedance 75 0\n", _warn("line 3: the file gives port impedances", n_points=2))

    # CSV: an overflowing value is named with its file and line.
    add("overflow_db.csv", "freq_hz,s11_db,s11_deg\n1e9,-3,0\n2e9,99999,0\n",
        _error(3, "overflow"))
    add("overflow_freq.csv", "Frequency (GHz),re,im\n1,0.1,0.2\n1e308,0.1,0.2\n",
        _error(3, "too large"))
    add("latin1_header.csv", b"! 25 \xb0C\nFrequency (MHz),re,im\n100,0.1,0.2\n",
        _ok(n_points=1))

    # 4. Calibration (--cal) and standards (--standards) JSON.
    std = {"format": "refplane-standards", "version": 1, "reference_z0_ohm": 50.0}
    cal = {"format": "refplane-calibration", "version": 1, "reference_z0_ohm": 50.0,
           "freq_hz": [1e8, 2e8],
           "terms": {k: {"re": [0.0, 0.0], "im": [0.0, 0.0]} for k in
                     ("directivity", "source_match")} |
           {"reflection_tracking": {"re": [1.0, 1.0], "im": [0.0, 0.0]}},
           "residual": [0.0, 0.0]}

    def js(obj):
        return json.dumps(obj, indent=1) + "\n"

    add("deep.standards.json", "[" * 5000 + "]" * 5000, _error(None, "nested too deeply"))
    add("huge_int.standards.json", js(std).replace("50.0", "1" + "0" * 5000),
        _error(None, "reference_z0_ohm: must be a finite number"))
    add("text_for_number.cal.json", js(cal | {"reference_z0_ohm": "50"}),
        _error(None, "reference_z0_ohm: must be a finite number, not text '50'"))
    add("bool_for_number.standards.json", js(std | {"open": {"c0_f": True}}),
        _error(None, "open.c0_f: must be a finite number, not true"))
    add("object_for_number.standards.json", js(std | {"load": {"r_ohm": {"a": 1}}}),
        _error(None, "load.r_ohm: must be a finite number, not an object"))
    add("nan_residual.cal.json", js(cal | {"residual": [0.0, 1.0]}).replace("1.0\n ]", "NaN\n ]"),
        _error(None, "residual[1]: must be a finite number"))
    add("null_residual.cal.json", js(cal | {"residual": [None, 0.0]}),
        _error(None, "residual[0]: must be a finite number, not null"))
    add("null_term.cal.json", js(cal).replace('"re": [\n    1.0', '"re": [\n    null', 1),
        _error(None, "terms.reflection_tracking.re[0]: must be a finite number, not null"))
    add("string_in_list.cal.json", js(cal | {"freq_hz": [1e8, "2e8"]}),
        _error(None, "freq_hz[1]: must be a finite number"))
    add("negative_u.standards.json",
        js(std | {"short": {"offset_delay_s": 1e-12, "offset_delay_s_u": -1}}),
        _error(None, "short.offset_delay_s_u: must not be negative"))
    add("with_u.standards.json",
        js(std | {"short": {"offset_delay_s": 30e-12, "offset_delay_s_u": 0.5e-12,
                            "offset_loss_gohm_per_s": 2.0, "offset_loss_gohm_per_s_u": 0.1},
                  "checks": {"offset open": {"kind": "open", "c0_f": 5e-14, "c0_f_u": 1e-15}}}),
        _ok(uncertainties={"short": {"offset_delay_s": 0.5e-12,
                                     "offset_loss_ohm_per_s": 0.1e9}}))
    add("unknown_key_escaped.standards.json", js(std | {"open": {"c0\nf": 1}}),
        _error(None, "unknown key 'c0\\nf'"))
    return out


def large_cases(folder: pathlib.Path) -> list[tuple[pathlib.Path, dict]]:
    """Files too large for the repository, written into ``folder`` (a temporary folder)."""
    folder = pathlib.Path(folder)
    made = []
    path = folder / "huge_token.s1p"
    path.write_bytes(b"# GHz S RI R 50\n1 0.1 0.2\n" + b"7" * 2_000_000 + b" 0.1 0.2\n")
    made.append((path, _error(3, "'777777777777…' (2,000,000 characters) is too long to be a number")))
    path = folder / "long_line.s1p"
    with open(path, "wb") as handle:
        handle.write(b"# GHz S RI R 50\n")
        handle.write(b" " * (40 << 20))
        handle.write(b"\n1 0 0\n")
    made.append((path, _error(2, "longer than 8 MiB")))
    return made


def name_cases(folder: pathlib.Path) -> list[tuple[pathlib.Path, dict]]:
    """Files whose names are the fault (made at test time: some file systems limit names)."""
    folder = pathlib.Path(folder)
    path = folder / ("a.s" + "0" * 200 + "2p")
    path.write_text("# GHz S RI R 50\n" + ROW9)
    made = [(path, _ok(n_points=1))]
    path = folder / ("b.s" + "9" * 200 + "p")
    path.write_text("# GHz S RI R 50\n1 0 0\n")
    made.append((path, _error(None, "more ports than Refplane reads")))
    return made


def main() -> None:
    CORPUS.mkdir(parents=True, exist_ok=True)
    manifest = {}
    for name, content, expect in cases():
        (CORPUS / name).write_bytes(content)
        manifest[name] = expect
    (CORPUS / "manifest.json").write_text(json.dumps(manifest, indent=1, ensure_ascii=False)
                                          + "\n", encoding="utf-8")
    print(f"wrote {len(manifest)} files to {CORPUS}")


if __name__ == "__main__":
    main()
