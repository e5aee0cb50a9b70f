"""``refplane correct``: status codes, outputs, never overwriting, saving and reusing error terms.

The raw files are made by passing known devices through a known error box (the published
three-term model, Γm = e00 + e10e01·Γ/(1 − e11·Γ)); correction must give the devices back.
"""

import json

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.calibration.standards import Standard, reflection
from refplane.analysis.sweep import Sweep
from refplane.cli import main as _main


def main(argv):
    """Run the command line; argparse's usage errors leave through SystemExit."""
    try:
        return _main(argv)
    except SystemExit as exc:
        return exc.code

N = 101
F = np.linspace(1e6, 3e9, N)
W = 2 * np.pi * F
BOX = (0.05 * np.exp(1j * W * 0.2e-9), 0.1 * np.exp(-1j * W * 0.3e-9), 0.9 * np.exp(-2j * W * 0.8e-9))


def raw(gamma):
    e00, e11, e10e01 = BOX
    return e00 + e10e01 * gamma / (1 - e11 * gamma)


def write1(path, gamma, freq=F):
    touchstone.write(Sweep(np.array(freq, float), np.array(gamma, complex), 50.0, name=path.stem), path)
    return path


DEVICES = {"ant_a": 0.3 + 0.2j, "ant_b": -0.1 + 0.5j, "ant_c": 0.02 - 0.3j}


@pytest.fixture
def bench(tmp_path):
    """Measured standards and device sweeps on disk."""
    d = tmp_path
    files = {
        "short": write1(d / "short.s1p", raw(np.full(N, -1 + 0j))),
        "open": write1(d / "open.s1p", raw(np.full(N, 1 + 0j))),
        "load": write1(d / "load.s1p", raw(np.zeros(N, complex))),
    }
    devs = d / "devices"
    devs.mkdir()
    for name, g in DEVICES.items():
        files[name] = write1(devs / f"{name}.s1p", raw(np.full(N, g)))
    return files


def std_args(files):
    return ["--short", str(files["short"]), "--open", str(files["open"]), "--load", str(files["load"])]


def test_one_device_to_a_file(bench, tmp_path, capsys):
    out = tmp_path / "fixed.s1p"
    assert main(["correct", *std_args(bench), str(bench["ant_a"]), "-o", str(out)]) == 0
    result = touchstone.read(out)
    # Error-box round trip: the device comes back (to the 17 digits the writer keeps).
    assert np.max(np.abs(result.s[:, 0, 0] - DEVICES["ant_a"])) < 1e-12
    text = out.read_text()
    assert "corrected offline by Refplane" in text and "ideal short" in text
    err = capsys.readouterr().err
    assert "calibration quality: good" in err


def test_save_cal_then_apply_to_a_folder_of_devices(bench, tmp_path, capsys):
    cal = tmp_path / "port1.json"
    assert main(["correct", *std_args(bench), "--save-cal", str(cal)]) == 0
    assert json.loads(cal.read_text())["format"] == "refplane-calibration"
    devices = sorted((tmp_path / "devices").glob("*.s1p"))
    out = tmp_path / "corrected"
    assert main(["correct", "--cal", str(cal), *map(str, devices), "-o", str(out)]) == 0
    for dev in devices:
        fixed = touchstone.read(out / f"{dev.stem}_corrected.s1p")
        assert np.max(np.abs(fixed.s[:, 0, 0] - DEVICES[dev.stem])) < 1e-12
    # Saving again over the existing calibration needs --force.
    assert main(["correct", *std_args(bench), "--save-cal", str(cal)]) == 2
    assert "exists already" in capsys.readouterr().err
    assert main(["correct", *std_args(bench), "--save-cal", str(cal), "--force"]) == 0


def test_never_overwrites_an_input_even_with_force(bench, capsys):
    before = bench["ant_a"].read_bytes()
    code = main(["correct", *std_args(bench), str(bench["ant_a"]), "-o", str(bench["ant_a"]), "--force"])
    assert code == 2 and "one of the inputs" in capsys.readouterr().err
    assert bench["ant_a"].read_bytes() == before
    code = main(["correct", *std_args(bench), "--save-cal", str(bench["load"]), "--force"])
    assert code == 2 and bench["load"].exists()


def test_existing_output_needs_force(bench, tmp_path, capsys):
    out = tmp_path / "fixed.s1p"
    out.write_text("keep me")
    assert main(["correct", *std_args(bench), str(bench["ant_a"]), "-o", str(out)]) == 2
    assert "--force" in capsys.readouterr().err and out.read_text() == "keep me"
    assert main(["correct", *std_args(bench), str(bench["ant_a"]), "-o", str(out), "--force"]) == 0
    assert out.read_text() != "keep me"


@pytest.mark.parametrize("extra, message", [
    (["--save-cal", "a.json", "--cal", "b.json"], "not allowed with"),
    (["--cal", "x.json", "--short", "s.s1p"], "leave out --short"),
])
def test_contradictory_options(bench, tmp_path, capsys, extra, message):
    assert main(["correct", *extra, str(bench["ant_a"]), "-o", str(tmp_path / "o.s1p")]) == 2
    assert message in capsys.readouterr().err


def test_missing_pieces(bench, tmp_path, capsys):
    assert main(["correct", "--short", str(bench["short"]), str(bench["ant_a"]), "-o", str(tmp_path / "o.s1p")]) == 2
    assert "--open, --load" in capsys.readouterr().err
    assert main(["correct", *std_args(bench), str(bench["ant_a"])]) == 2
    assert "-o OUT" in capsys.readouterr().err
    assert main(["correct", *std_args(bench)]) == 2


def test_bad_input_file_is_one_line_and_status_2(bench, tmp_path, capsys):
    bad = tmp_path / "bad.s1p"
    bad.write_text("# GHz S RI R 50\n1.0 0.1\n")
    code = main(["correct", *std_args(bench), str(bad), "-o", str(tmp_path / "o.s1p")])
    err = capsys.readouterr().err.strip()
    assert code == 2 and str(bad) in err and len(err.splitlines()) == 1
    assert not (tmp_path / "o.s1p").exists()


def test_mismatched_frequencies_refused_then_interpolated(bench, tmp_path, capsys):
    f2 = np.linspace(F[0], F[-1], 2 * N - 1)
    box2 = [np.interp(f2, F, t.real) + 1j * np.interp(f2, F, t.imag) for t in BOX]
    fine_load = write1(tmp_path / "load_fine.s1p", box2[0], f2)
    args = ["--short", str(bench["short"]), "--open", str(bench["open"]), "--load", str(fine_load),
            str(bench["ant_a"]), "-o", str(tmp_path / "o.s1p")]
    assert main(["correct", *args]) == 2
    err = capsys.readouterr().err
    assert "allow interpolation" in err and "load_fine.s1p" in err
    assert main(["correct", *args, "--interpolate"]) == 0
    assert "interpolated" in capsys.readouterr().err


def test_swapped_standards_warn_on_stderr(bench, tmp_path, capsys):
    args = ["--short", str(bench["open"]), "--open", str(bench["short"]), "--load", str(bench["load"])]
    assert main(["correct", *args, str(bench["ant_a"]), "-o", str(tmp_path / "o.s1p")]) == 0
    err = capsys.readouterr().err
    assert "calibration quality: poor" in err and "swapped" in err


def test_standards_file_extra_and_check_standards(bench, tmp_path, capsys):
    # An offset short as a fourth standard (least squares) and an offset open as a check.
    offset_short = Standard("short", offset_delay_s=40e-12)
    offset_open = Standard("open", offset_delay_s=70e-12)
    p1 = write1(tmp_path / "oshort.s1p", raw(reflection(offset_short, F)))
    p2 = write1(tmp_path / "oopen.s1p", raw(reflection(offset_open, F)))
    kit = tmp_path / "kit.json"
    kit.write_text(json.dumps({"format": "refplane-standards", "version": 1,
                               "additional": {"oshort": {"kind": "short", "offset_delay_s": 40e-12}},
                               "checks": {"oopen": {"kind": "open", "offset_delay_s": 70e-12}}}))
    out = tmp_path / "o.s1p"
    code = main(["correct", *std_args(bench), "--standards", str(kit), "--extra", f"oshort={p1}",
                 "--check", f"oopen={p2}", str(bench["ant_b"]), "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 0, err
    assert "check standard 'oopen'" in err
    assert np.max(np.abs(touchstone.read(out).s[:, 0, 0] - DEVICES["ant_b"])) < 1e-12
    # The additional standard is defined but not measured: refused.
    code = main(["correct", *std_args(bench), "--standards", str(kit), str(bench["ant_b"]),
                 "-o", str(tmp_path / "o2.s1p")])
    assert code == 2 and "oshort" in capsys.readouterr().err


def test_two_port_with_through_and_isolation(tmp_path, capsys):
    e00, e11, e10e01 = BOX
    e10e32 = 0.8 * np.exp(-2j * W * 1e-9)
    e30 = 10 ** (-45 / 20) * np.exp(1j * W * 1e-10)

    def fwd(s11, s21):
        s = np.zeros((N, 2, 2), complex)
        d = 1 - e11 * s11
        s[:, 0, 0] = s[:, 1, 1] = e00 + e10e01 * s11 / d
        s[:, 1, 0] = s[:, 0, 1] = e30 + e10e32 * s21 / d
        return s

    def w2(name, s):
        p = tmp_path / f"{name}.s2p"
        touchstone.write(Sweep(F.copy(), s, 50.0, name=name), p)
        return p

    one, zero = np.ones(N, complex), np.zeros(N, complex)
    files = {n: w2(n, fwd(g * one, zero)) for n, g in (("short", -1), ("open", 1), ("load", 0))}
    thru = w2("thru", fwd(zero, one))
    iso = np.zeros((N, 2, 2), complex)
    iso[:, 1, 0] = iso[:, 0, 1] = e30
    iso_p = w2("iso", iso)
    s21 = 10 ** (-60 / 20) * np.exp(-1j * W * 0.5e-9)
    dut = w2("atten", fwd(0.1 * one, s21))
    out = tmp_path / "atten_fixed.s2p"
    code = main(["correct", "--short", str(files["short"]), "--open", str(files["open"]),
                 "--load", str(files["load"]), "--through", str(thru), "--isolation", str(iso_p),
                 str(dut), "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 0, err
    fixed = touchstone.read(out)
    assert np.max(np.abs(fixed.s[:, 1, 0] / s21 - 1)) < 1e-9
    assert "S12 and S22 are as measured" in err
    assert "port 2 load match NOT corrected" in out.read_text()


def test_several_devices_with_the_same_name_are_refused(bench, tmp_path, capsys):
    other = tmp_path / "elsewhere"
    other.mkdir()
    twin = write1(other / "ant_a.s1p", raw(np.full(N, 0.1 + 0j)))
    code = main(["correct", *std_args(bench), str(bench["ant_a"]), str(twin), "-o", str(tmp_path / "out")])
    assert code == 2 and "both be written" in capsys.readouterr().err
    assert not (tmp_path / "out").exists()


def test_wrong_output_extension_and_bad_device_leave_nothing_behind(bench, tmp_path, capsys):
    code = main(["correct", *std_args(bench), str(bench["ant_a"]), "-o", str(tmp_path / "o.s2p")])
    assert code == 2 and "name the output .s1p" in capsys.readouterr().err
    # A device on other frequencies: refused before the calibration file or any output is written.
    odd = write1(tmp_path / "odd.s1p", raw(np.full(N, 0.1 + 0j))[: N - 1], F[: N - 1])
    cal = tmp_path / "cal.json"
    code = main(["correct", *std_args(bench), "--save-cal", str(cal), str(bench["ant_a"]), str(odd),
                 "-o", str(tmp_path / "out")])
    assert code == 2 and "allow interpolation" in capsys.readouterr().err
    assert not cal.exists() and not (tmp_path / "out").exists()
