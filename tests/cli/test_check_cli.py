"""``refplane check`` over a folder of synthetic sweeps made to fail at known frequencies.

Expected readings come from the textbook identities (Pozar, Microwave Engineering, ch. 2):
VSWR = (1 + |Γ|)/(1 − |Γ|), return loss = −20·log10|Γ|.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
import pathlib
import subprocess
import sys

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.cli import main

LIMIT = "vswr <= 1.5 over 800MHz:960MHz"
F = np.linspace(700e6, 1000e6, 31)          # 10 MHz steps


def _vswr(rho):
    return (1 + rho) / (1 - rho)


def _write(path, rho_by_freq=None, base=0.1, n_ports=1):
    g = np.full(F.size, base, dtype=complex)
    for f_hz, rho in (rho_by_freq or {}).items():
        g[int(np.argmin(abs(F - f_hz)))] = rho
    if n_ports == 1:
        s = g.reshape(-1, 1, 1)
    else:
        s = np.zeros((F.size, 2, 2), complex)
        s[:, 0, 0] = s[:, 1, 1] = g
        s[:, 1, 0] = s[:, 0, 1] = 0.9
    touchstone.write(Sweep(F, s, 50.0, name=path.stem), path, overwrite=True,
                     comments=("invented sweep for a test",))


@pytest.fixture()
def lot(tmp_path):
    """A folder of eight sweeps: five good, two failing at known frequencies, one unreadable."""
    folder = tmp_path / "lot"
    (folder / "sub").mkdir(parents=True)
    for i in range(4):
        _write(folder / f"good{i}.s1p", base=0.05 + 0.02 * i)
    _write(folder / "sub" / "good_deep.s2p", base=0.08, n_ports=2)
    _write(folder / "fail_900.s1p", {900e6: 0.25})          # VSWR 1.6667 at 900 MHz
    _write(folder / "sub" / "fail_edge.s1p", {960e6: 0.3})   # VSWR 1.8571 at the band edge
    (folder / "sub" / "broken.s1p").write_text("# MHz S RI R 50\n100 0.1\n", encoding="utf-8")
    (folder / "notes.txt").write_text("not a sweep, not picked up\n", encoding="utf-8")
    # A CSV sweep too: Refplane's CSV reader, real and imaginary columns.
    rows = "\n".join(f"{f / 1e6:.6f},0.12,0" for f in F)
    (folder / "sub" / "csv_good.csv").write_text("# invented\nFrequency (MHz),re,im\n" + rows + "\n",
                                                 encoding="utf-8")
    return folder


def _json(capsys, *argv):
    status = main(["check", *map(str, argv), "--json"])
    return status, json.loads(capsys.readouterr().out)


def test_folder_gives_the_expected_pass_fail_worst_frequencies_and_margins(lot, capsys):
    status, out = _json(capsys, lot, "--limit", LIMIT)
    by_name = {os.path.basename(f["file"]): f for f in out["files"]}
    assert set(by_name) == {"good0.s1p", "good1.s1p", "good2.s1p", "good3.s1p", "good_deep.s2p",
                            "fail_900.s1p", "fail_edge.s1p", "broken.s1p", "csv_good.csv"}
    for name in ("good0.s1p", "good1.s1p", "good2.s1p", "good3.s1p", "good_deep.s2p", "csv_good.csv"):
        assert by_name[name]["pass"] is True and by_name[name]["decision"] == "pass"
    f900 = by_name["fail_900.s1p"]["limits"][0]
    assert by_name["fail_900.s1p"]["pass"] is False
    assert f900["limit"] == LIMIT and f900["pass"] is False
    assert f900["worst_freq_hz"] == pytest.approx(900e6)
    assert f900["worst_value"] == pytest.approx(_vswr(0.25), rel=1e-9)
    assert f900["margin"] == pytest.approx(1.5 - _vswr(0.25), rel=1e-9)
    edge = by_name["fail_edge.s1p"]["limits"][0]
    assert edge["worst_freq_hz"] == pytest.approx(960e6)
    assert edge["margin"] == pytest.approx(1.5 - _vswr(0.3), rel=1e-9)
    # A passing file's margin is against its flat |Γ| (good3: 0.11 → VSWR 1.2472).
    assert by_name["good3.s1p"]["limits"][0]["margin"] == pytest.approx(1.5 - _vswr(0.11), rel=1e-9)
    broken = by_name["broken.s1p"]
    assert broken["decision"] == "unreadable" and broken["limits"] == []
    assert "line 2" in broken["reason"] and "\n" not in broken["reason"]
    assert out["summary"] == {"files": 9, "passed": 6, "failed": 2, "indeterminate": 0, "unreadable": 1}
    assert status == 2                        # an unreadable file is bad input
    stats = out["statistics"][0]
    assert stats["count"] == 8 and stats["worst"] == pytest.approx(_vswr(0.3), rel=1e-9)
    assert stats["worst_file"].endswith("fail_edge.s1p")


def test_exit_status_zero_when_all_pass_one_when_any_fails(lot, capsys):
    (lot / "sub" / "broken.s1p").unlink()
    assert main(["check", str(lot), "--limit", LIMIT]) == 1
    assert main(["check", str(lot / "good0.s1p"), str(lot / "good1.s1p"), "--limit", LIMIT]) == 0
    out = capsys.readouterr().out
    assert "2 files: 2 passed, 0 failed, 0 indeterminate, 0 unreadable" in out


def test_uncertainty_makes_a_near_reading_indeterminate(lot, capsys):
    # good3 reads VSWR 1.2472 everywhere: 0.253 inside a 1.5 limit. With U = 0.3 (k = 2) that
    # is inside the guard band (JCGM 106:2012, w = U): indeterminate, status 1.
    status, out = _json(capsys, lot / "good3.s1p", "--limit", LIMIT, "--uncertainty", "vswr=0.3")
    assert status == 1
    res = out["files"][0]
    assert res["decision"] == "indeterminate" and res["pass"] is None
    assert res["limits"][0]["u_expanded_at_worst"] == pytest.approx(0.3)
    assert "JCGM 106" in res["limits"][0]["rule"]
    status, out = _json(capsys, lot / "good3.s1p", "--limit", LIMIT, "--uncertainty", "vswr=0.1")
    assert status == 0 and out["summary"]["passed"] == 1


def test_parallel_processes_agree_with_one_process(lot, capsys):
    _, one = _json(capsys, lot, "--limit", LIMIT, "--limit", "return_loss_db >= 10 over 0.75GHz:0.99GHz",
                   "--jobs", "1")
    _, two = _json(capsys, lot, "--limit", LIMIT, "--limit", "return_loss_db >= 10 over 0.75GHz:0.99GHz",
                   "--jobs", "2")
    assert one == two


def test_limit_file_and_two_port_transmission(lot, tmp_path, capsys):
    limits = tmp_path / "parts.limits"
    limits.write_text("# invented limits\nvswr <= 1.5 over 800MHz:960MHz\n"
                      "s21_db >= -1 over 800MHz:960MHz\n", encoding="utf-8")
    status, out = _json(capsys, lot / "sub" / "good_deep.s2p", "--limits", limits)
    assert status == 0
    s21 = out["files"][0]["limits"][1]
    # |S21| = 0.9 → 20·log10(0.9) = −0.9151 dB.
    assert s21["worst_value"] == pytest.approx(20 * math.log10(0.9), rel=1e-9)
    status, out = _json(capsys, lot / "good0.s1p", "--limits", limits)
    assert status == 2 and "two ports" in out["files"][0]["reason"]


@pytest.mark.parametrize("argv, words", [
    (["--limit", "vswx <= 1.5 over 1MHz:2MHz"], "not a quantity"),
    (["--limit", "vswr <= 1.5 over 2MHz:1MHz"], "reversed"),
    (["--limit", "vswr <= 1.5 over 1:2"], "has no unit"),
    ([], "at least one --limit"),
    (["--limit", LIMIT, "--uncertainty", "vswr"], "QUANTITY=U"),
])
def test_bad_input_is_one_line_and_status_2(lot, capsys, argv, words):
    with pytest.raises(SystemExit) as exc:
        raise SystemExit(main(["check", str(lot), *argv]))   # argparse errors exit by themselves
    assert exc.value.code == 2
    err = capsys.readouterr().err
    assert words in err and err.count("\n") == 1


def test_missing_path_is_bad_input(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nowhere"), "--limit", LIMIT]) == 2
    assert "no such file or folder" in capsys.readouterr().err


def test_csv_export_is_numbers_a_spreadsheet_reads(lot, tmp_path, capsys):
    out_csv = tmp_path / "results.csv"
    main(["check", str(lot), "--limit", LIMIT, "--csv", str(out_csv)])
    text = out_csv.read_text(encoding="utf-8")
    rows = list(csv.DictReader(io.StringIO(text)))
    # ASCII minus in every number (the reason column is prose, in the reader's own words).
    numbers = [v for r in rows for k, v in r.items() if k not in ("reason", "file", "limit") and v]
    assert all(v.isascii() and "−" not in v for v in numbers)
    assert "worst frequency (Hz)" in rows[0] and "unit" in rows[0]
    fail = next(r for r in rows if r["file"].endswith("fail_900.s1p"))
    assert float(fail["worst frequency (Hz)"]) == pytest.approx(900e6)
    assert float(fail["margin"]) == pytest.approx(1.5 - _vswr(0.25), rel=1e-12)
    assert fail["margin"].startswith("-")
    broken = next(r for r in rows if r["file"].endswith("broken.s1p"))
    assert broken["file decision"] == "unreadable" and broken["reason"]
    # Refuses to overwrite without --force.
    assert main(["check", str(lot), "--limit", LIMIT, "--csv", str(out_csv)]) == 2
    assert "exists already" in capsys.readouterr().err


def test_no_progress_bar_when_piped_and_no_qt_in_the_batch(lot):
    # As a process with stderr captured (not a terminal): no progress bar; the stdout list.
    proc = subprocess.run([sys.executable, "-m", "refplane", "check", str(lot), "--limit", LIMIT,
                           "--jobs", "2"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 2
    assert "checking [" not in proc.stderr and "\r" not in proc.stdout + proc.stderr
    assert "9 files: 6 passed, 2 failed, 0 indeterminate, 1 unreadable" in proc.stdout
    code = ("import sys, refplane.cli.check, refplane.batch\n"
            "print(','.join(m for m in sys.modules if m.split('.')[0] in ('PySide6', 'pyqtgraph', 'shiboken6')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_progress_bar_on_a_terminal(lot, capsys, monkeypatch):
    class Tty(io.StringIO):
        def isatty(self):
            return True

    fake = Tty()
    monkeypatch.setattr(sys, "stderr", fake)
    main(["check", str(lot), "--limit", LIMIT, "--jobs", "1"])
    assert "checking [" in fake.getvalue() and "9/9 files" in fake.getvalue()


def test_calibration_is_applied_before_the_limits(tmp_path, capsys):
    # One-port three-term error model (references: Γm = e00 + e10e01·Γ/(1 − e11·Γ), from
    # memory): the raw device reads |Γm| = 0.1 + 0.9·0.1/(1 − 0.005) = 0.1905 (VSWR 1.47), the
    # corrected one |Γ| = 0.1 (VSWR 1.222).
    from refplane.analysis.calibration.calfile import save_calibration
    from refplane.analysis.calibration.solve import calibrate

    e00, e11, e10e01 = 0.1, 0.05, 0.9

    def raw(gamma):
        g = np.full(F.size, gamma, dtype=complex)
        return Sweep(F, (e00 + e10e01 * g / (1 - e11 * g)).reshape(-1, 1, 1), 50.0)

    cal = calibrate({"short": raw(-1), "open": raw(1), "load": raw(0)})
    save_calibration(cal, tmp_path / "cal.json")
    touchstone.write(raw(0.1), tmp_path / "dut.s1p", comments=("invented raw sweep for a test",))
    limit = "vswr <= 1.25 over 800MHz:960MHz"
    status, out = _json(capsys, tmp_path / "dut.s1p", "--limit", limit)
    assert status == 1 and out["files"][0]["limits"][0]["worst_value"] == pytest.approx(
        _vswr(0.1 + 0.9 * 0.1 / (1 - 0.005)), rel=1e-9)
    status, out = _json(capsys, tmp_path / "dut.s1p", "--limit", limit, "--cal", tmp_path / "cal.json")
    assert status == 0 and out["files"][0]["limits"][0]["worst_value"] == pytest.approx(_vswr(0.1), rel=1e-9)
    # The report says what was applied.
    report = tmp_path / "dut.html"
    assert main(["report", str(tmp_path / "dut.s1p"), "--cal", str(tmp_path / "cal.json"), "--delay", "10ps",
                 "--limit", limit, "-o", str(report)]) == 0
    text = report.read_text(encoding="utf-8")
    assert "calibration applied" in text and "line removed" in text


def test_residual_terms_make_near_results_indeterminate(tmp_path, capsys):
    # Guard bands of JCGM 106 (acceptance zone shrunk by the expanded uncertainty U): a reading
    # closer to its limit than U is indeterminate; U comes from the uncertainty engine (itself
    # checked against JCGM 101 Monte Carlo and EURAMET cg-12's worst-case bound).
    import json

    import numpy as np

    from refplane.analysis.readings.impedance import z_to_gamma as _z2g
    from refplane.analysis.sweep import Sweep as _Sweep
    from refplane.analysis.uncertainty.reading import UncertaintyOptions, uncertain_points
    from refplane.analysis.uncertainty.residual import parse_residual

    f = np.linspace(100e6, 200e6, 51)
    near = _Sweep(f, np.full(f.size, _z2g(72.0, 50.0)), 50.0, name="near")   # VSWR 1.44
    far = _Sweep(f, np.full(f.size, _z2g(55.0, 50.0)), 50.0, name="far")     # VSWR 1.10
    folder = tmp_path / "lot"
    folder.mkdir()
    touchstone.write(near, folder / "near.s1p")
    touchstone.write(far, folder / "far.s1p")
    limit = "vswr <= 1.5 over 120MHz:180MHz"
    assert main(["check", str(folder), "--limit", limit, "--json"]) == 0
    capsys.readouterr()
    assert main(["check", str(folder), "--limit", limit, "--residual", "30dB,30dB,0.2dB", "--json"]) == 1
    out = json.loads(capsys.readouterr().out)
    decisions = {pathlib.Path(r["file"]).name: r["limits"][0]["decision"] for r in out["files"]}
    assert decisions == {"near.s1p": "indeterminate", "far.s1p": "pass"}
    u = uncertain_points(near, f, options=UncertaintyOptions(residual=parse_residual("30dB,30dB,0.2dB"),
                                                              method="linear")).vswr
    assert np.max(u) > 1.5 - 1.44  # the engine's U is wider than the margin, hence indeterminate
