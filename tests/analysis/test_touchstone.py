"""Touchstone reading and writing, checked against scikit-rf (reader, writer and conversions)
and against the data files scikit-rf ships in ``skrf.data``."""

from __future__ import annotations

import pathlib
import warnings

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.errors import SweepFileError
from refplane.analysis.sweep import Sweep

skrf = pytest.importorskip("skrf")

SKRF_DIR = pathlib.Path(skrf.__file__).parent
SKRF_FILES = sorted({p for p in SKRF_DIR.rglob("*") if p.is_file() and (
    (p.suffix.lower().startswith(".s") and p.suffix.lower().endswith("p") and p.suffix[2:-1].isdigit())
    or p.suffix.lower() == ".ts")})


def _skrf_network(path):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(path))


def test_skrf_ships_touchstone_files():
    # Source: scikit-rf's package data (skrf/data) holds 1-, 2- and 3-port Touchstone files.
    assert len(SKRF_FILES) >= 10
    assert {p.suffix.lower() for p in SKRF_FILES} >= {".s1p", ".s2p", ".s3p"}


@pytest.mark.parametrize("path", SKRF_FILES, ids=lambda p: p.name)
def test_every_skrf_data_file_reads_like_skrf(path):
    # Source: scikit-rf's own Touchstone reader (skrf.Network) on the files it ships.
    try:
        ref = _skrf_network(path)
    except Exception as exc:  # pragma: no cover - depends on the installed scikit-rf
        pytest.skip(f"scikit-rf itself cannot read {path.name}: {exc}")
    sweep = touchstone.read(path)
    assert sweep.n_ports == ref.nports
    np.testing.assert_allclose(sweep.freq_hz, ref.f, rtol=1e-12, atol=0)
    np.testing.assert_allclose(sweep.s, ref.s, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(sweep.z0_ohm, ref.z0[0], rtol=1e-12)
    assert sweep.source == str(path) and sweep.name == path.stem


@pytest.mark.parametrize("path", SKRF_FILES, ids=lambda p: p.name)
def test_careful_pass_agrees_with_bulk_pass(path):
    # The line-by-line pass (used to locate errors) must read a good file bit for bit alike.
    sweep = touchstone.read(path)
    ports = int(path.suffix[2:-1]) if path.suffix.lower() != ".ts" else None
    head, freq, s = touchstone._careful(str(path), ports)
    assert np.array_equal(freq, sweep.freq_hz)
    assert np.array_equal(s, sweep.s)
    assert tuple(head.comments) == sweep.comments


def test_comments_are_kept_in_order_including_line_ends():
    # Source: scikit-rf's data file delay_short.s1p, whose data lines are followed by
    # "! Port Impedance ..." comment lines; the first comment is its creation note.
    sweep = touchstone.read(SKRF_DIR / "data" / "delay_short.s1p")
    assert sweep.comments[0] == "Created with mwavepy."
    assert any(c.startswith("Port Impedance") for c in sweep.comments)


def _random_sweep(ports, points=17, seed=0, z0=50.0):
    rng = np.random.default_rng(seed)
    f = np.sort(rng.uniform(1e6, 6e9, points))
    s = (rng.normal(size=(points, ports, ports)) + 1j * rng.normal(size=(points, ports, ports))) * 0.4
    return Sweep(freq_hz=f, s=s, z0_ohm=z0, name="x")


@pytest.mark.parametrize("ports", [1, 2, 3, 5])
@pytest.mark.parametrize("version", ["1.1", "2.0"])
def test_round_trip_ri_is_exact(tmp_path, ports, version):
    # Source: IEEE 754 / Python's float repr: 17 significant digits identify a double uniquely.
    sweep = _random_sweep(ports, seed=ports)
    path = touchstone.write(sweep, tmp_path / f"rt.s{ports}p", version=version, freq_unit="Hz",
                            comments=["written by the test", "second line"])
    back = touchstone.read(path)
    assert np.array_equal(back.freq_hz, sweep.freq_hz)
    assert np.array_equal(back.s, sweep.s)
    assert back.comments[:2] == ("written by the test", "second line")


@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
@pytest.mark.parametrize("unit", ["Hz", "kHz", "MHz", "GHz"])
def test_round_trip_every_format_and_unit(tmp_path, fmt, unit):
    # Source: Touchstone specification (option line units and formats); MA/DB go through
    # trigonometry and logarithms, so they agree to a few ulp.
    sweep = _random_sweep(2, seed=7)
    back = touchstone.read(touchstone.write(sweep, tmp_path / "a.s2p", fmt=fmt, freq_unit=unit))
    np.testing.assert_allclose(back.freq_hz, sweep.freq_hz, rtol=4e-16, atol=0)
    np.testing.assert_allclose(back.s, sweep.s, rtol=1e-14, atol=1e-15)


def test_frequencies_in_ghz_round_trip_to_the_last_bit_or_one_ulp(tmp_path):
    # Source: IEEE 754 — value·1e9 is one rounding, so a GHz value read back can miss the
    # original frequency by at most one unit in the last place; the writer picks the value
    # that hits it exactly wherever one exists.
    sweep = Sweep(freq_hz=np.linspace(1e6, 6e9, 2001), s=np.full(2001, 0.1 + 0.2j), z0_ohm=50)
    back = touchstone.read(touchstone.write(sweep, tmp_path / "g.s1p", freq_unit="GHz"))
    assert np.mean(back.freq_hz == sweep.freq_hz) > 0.9
    assert np.all(np.abs(back.freq_hz - sweep.freq_hz) <= np.spacing(sweep.freq_hz))


@pytest.mark.parametrize("version", ["1.1", "2.0"])
@pytest.mark.parametrize("fmt", ["RI", "MA", "DB"])
@pytest.mark.parametrize("ports", [1, 2, 3, 4])
def test_skrf_reads_what_refplane_writes(tmp_path, version, fmt, ports):
    # Source: scikit-rf's Touchstone reader as an independent check of the writer.
    sweep = _random_sweep(ports, seed=11 + ports)
    path = touchstone.write(sweep, tmp_path / f"w.s{ports}p", fmt=fmt, version=version)
    ref = _skrf_network(path)
    np.testing.assert_allclose(ref.f, sweep.freq_hz, rtol=1e-14)
    np.testing.assert_allclose(ref.s, sweep.s, rtol=1e-12, atol=1e-13)
    np.testing.assert_allclose(ref.z0[0], sweep.z0_ohm)


def test_version_2_reference_per_port_round_trips_and_skrf_agrees(tmp_path):
    # Source: Touchstone 2.0 [Reference] keyword; scikit-rf reads per-port references.
    sweep = _random_sweep(3, seed=5).replace(z0_ohm=np.array([50.0, 75.0, 25.0]))
    path = touchstone.write(sweep, tmp_path / "z.ts", version="2.0")
    back = touchstone.read(path)
    assert np.array_equal(back.s, sweep.s)
    np.testing.assert_array_equal(back.z0_ohm, sweep.z0_ohm)
    ref = _skrf_network(touchstone.write(sweep, tmp_path / "z.s3p", version="2.0"))
    np.testing.assert_allclose(ref.z0[0], [50, 75, 25])
    np.testing.assert_allclose(ref.s, sweep.s, rtol=1e-12, atol=1e-13)


def test_skrf_written_file_reads_back(tmp_path):
    # Source: scikit-rf's Touchstone writer (Network.write_touchstone).
    ref = _skrf_network(SKRF_DIR / "data" / "tee.s3p")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref.write_touchstone(str(tmp_path / "tee_copy"), form="db")
    sweep = touchstone.read(tmp_path / "tee_copy.s3p")
    np.testing.assert_allclose(sweep.s, ref.s, rtol=1e-9, atol=1e-9)


def test_version_2_y_and_z_are_in_siemens_and_ohms(tmp_path):
    # Source: Touchstone 2.0 specification (Y and Z are not normalised in version 2.0);
    # the conversion itself is scikit-rf's s2z/s2y at unequal reference impedances.
    import skrf.network as N

    sweep = _random_sweep(2, points=5, seed=3)
    z0 = np.array([50.0, 75.0])
    s = sweep.s
    for kind, convert in (("Z", N.s2z), ("Y", N.s2y), ("H", N.s2h), ("G", N.s2g)):
        m = convert(s, z0)
        lines = ["[Version] 2.0", f"# Hz {kind} RI", "[Number of Ports] 2",
                 "[Two-Port Data Order] 12_21", "[Number of Frequencies] 5", "[Reference] 50",
                 "75", "[Network Data]"]
        for k in range(5):
            vals = [m[k, 0, 0], m[k, 0, 1], m[k, 1, 0], m[k, 1, 1]]
            lines.append(f"{sweep.freq_hz[k]:.17g} " + " ".join(f"{v.real:.17g} {v.imag:.17g}" for v in vals))
        lines.append("[End]")
        path = tmp_path / f"{kind}.ts"
        path.write_text("\n".join(lines) + "\n")
        back = touchstone.read(path)
        np.testing.assert_allclose(back.s, s, rtol=1e-12, atol=1e-12, err_msg=kind)
        np.testing.assert_array_equal(back.z0_ohm, z0)


def test_version_1_z_is_normalised_to_r(tmp_path):
    # Source: Touchstone 1.1 specification (Y and Z data are normalised to R); scikit-rf
    # reads the same file.
    import skrf.network as N

    sweep = _random_sweep(1, points=4, seed=9)
    z = N.s2z(sweep.s, 75.0)[:, 0, 0] / 75.0
    text = "# MHz Z RI R 75\n" + "".join(
        f"{f / 1e6:.17g} {v.real:.17g} {v.imag:.17g}\n" for f, v in zip(sweep.freq_hz, z))
    path = tmp_path / "z.s1p"
    path.write_text(text)
    back = touchstone.read(path)
    np.testing.assert_allclose(back.s, sweep.s, rtol=1e-12, atol=1e-13)
    ref = _skrf_network(path)
    np.testing.assert_allclose(back.s, ref.s, rtol=1e-12, atol=1e-13)


def test_lower_and_upper_matrix_formats(tmp_path):
    # Source: Touchstone 2.0 [Matrix Format] Lower/Upper (a symmetric network's triangle).
    rng = np.random.default_rng(2)
    a = rng.normal(size=(3, 3, 3)) + 1j * rng.normal(size=(3, 3, 3))
    s = (a + a.transpose(0, 2, 1)) * 0.2
    f = [1e9, 2e9, 3e9]
    for fmt, pick in (("Lower", lambda i, j: j <= i), ("Upper", lambda i, j: j >= i)):
        lines = ["[Version] 2.0", "# GHz S RI R 50", "[Number of Ports] 3",
                 "[Number of Frequencies] 3", f"[Matrix Format] {fmt}", "[Network Data]"]
        for k in range(3):
            lines.append(f"{f[k] / 1e9:.17g}")
            for i in range(3):
                lines.append(" ".join(f"{s[k, i, j].real:.17g} {s[k, i, j].imag:.17g}"
                                      for j in range(3) if pick(i, j)))
        lines.append("[End]")
        path = tmp_path / f"{fmt}.s3p"
        path.write_text("\n".join(lines) + "\n")
        np.testing.assert_array_equal(touchstone.read(path).s, s)


def test_version_2_noise_data_is_skipped(tmp_path):
    # Source: Touchstone 2.0 [Noise Data] section (five numbers per noise frequency).
    path = tmp_path / "n.s2p"
    path.write_text("[Version] 2.0\n# GHz S MA R 50\n[Number of Ports] 2\n"
                    "[Two-Port Data Order] 21_12\n[Number of Frequencies] 2\n"
                    "[Number of Noise Frequencies] 2\n[Network Data]\n"
                    "1 0.5 10 0.9 -20 0.01 30 0.4 40\n2 0.5 11 0.9 -21 0.01 31 0.4 41\n"
                    "[Noise Data]\n1 0.6 0.5 130 0.4\n2 0.7 0.5 140 0.4\n[End]\n")
    sweep = touchstone.read(path)
    assert sweep.n_points == 2
    # 21_12 order: the second pair is S21.
    np.testing.assert_allclose(sweep.s[0, 1, 0], 0.9 * np.exp(-1j * np.radians(20)))


def test_version_1_noise_block_is_skipped(tmp_path):
    # Source: Touchstone 1.1: a two-port file may end with noise parameters, recognised by a
    # first frequency not above the last network frequency and five numbers per row.
    path = tmp_path / "n.s2p"
    path.write_text("# GHz S MA R 50\n1 0.5 10 0.9 -20 0.01 30 0.4 40\n"
                    "2 0.5 11 0.9 -21 0.01 31 0.4 41\n1 0.6 0.5 130 0.4\n2 0.7 0.5 140 0.4\n")
    sweep = touchstone.read(path)
    assert sweep.n_points == 2
    np.testing.assert_allclose(sweep.s[1, 0, 1], 0.01 * np.exp(1j * np.radians(31)))


def test_only_the_first_option_line_counts(tmp_path):
    # Source: Touchstone specification — only the first option line counts; one written
    # after the data has begun is refused at its own line (issue 13).
    path = tmp_path / "o.s1p"
    path.write_text("# MHz S RI R 50\n# GHz S MA R 75\n100 0.1 0.2\n200 0.3 0.4\n")
    sweep = touchstone.read(path)
    np.testing.assert_array_equal(sweep.freq_hz, [100e6, 200e6])
    np.testing.assert_array_equal(sweep.s[:, 0, 0], [0.1 + 0.2j, 0.3 + 0.4j])
    assert sweep.z0_ohm[0] == 50
    path.write_text("# MHz S RI R 50\n100 0.1 0.2\n# GHz S MA R 75\n200 0.3 0.4\n")
    with pytest.raises(SweepFileError, match=r"line 3: an option line \(#\) after the data"):
        touchstone.read(path)


def test_defaults_without_option_tokens(tmp_path):
    # Source: Touchstone 1.1 defaults: GHz, S, MA, R 50.
    path = tmp_path / "d.s1p"
    path.write_text("#\n1 0.5 90\n")
    sweep = touchstone.read(path)
    assert sweep.freq_hz[0] == 1e9 and sweep.z0_ohm[0] == 50
    np.testing.assert_allclose(sweep.s[0, 0, 0], 0.5j, atol=1e-16)


def test_writer_refuses_to_overwrite_and_names_mismatch(tmp_path):
    # Rules: never overwrite a user's file without being asked.
    sweep = _random_sweep(2)
    path = touchstone.write(sweep, tmp_path / "a.s2p")
    before = path.read_bytes()
    with pytest.raises(SweepFileError, match="exists"):
        touchstone.write(_random_sweep(2, seed=4), path)
    assert path.read_bytes() == before
    touchstone.write(_random_sweep(2, seed=4), path, overwrite=True)
    assert path.read_bytes() != before
    with pytest.raises(SweepFileError, match=r"\.s2p"):
        touchstone.write(sweep, tmp_path / "a.s1p")
    with pytest.raises(SweepFileError, match="version 2.0"):
        touchstone.write(sweep.replace(z0_ohm=np.array([50.0, 75.0])), tmp_path / "b.s2p")
    with pytest.raises(SweepFileError, match="format"):
        touchstone.write(sweep, tmp_path / "c.s2p", fmt="XY")


def test_large_ports_wrap_four_pairs_per_line(tmp_path):
    # Source: Touchstone 1.1 — at most four pairs per line; each matrix row starts a line.
    sweep = _random_sweep(6, points=3)
    path = touchstone.write(sweep, tmp_path / "six.s6p")
    data = [ln for ln in path.read_text().splitlines() if ln and ln[0] not in "!#"]
    assert max(len(ln.split()) for ln in data) <= 9
    assert len(data) == 3 * 6 * 2
    assert np.array_equal(touchstone.read(path).s, sweep.s)
    np.testing.assert_allclose(_skrf_network(path).s, sweep.s, rtol=1e-12)


# --------------------------------------------------------------------------------------
# The fixed-layout fast path must give exactly what a correctly rounded parser gives.
# Reference: Python's float() (correctly rounded decimal-to-binary conversion, IEEE 754).
# --------------------------------------------------------------------------------------

def _fixed_block(values: np.ndarray, fmt: str, per_line: int) -> bytes:
    rows = values.reshape(-1, per_line)
    return ("".join(" ".join(fmt % v for v in row) + "\n" for row in rows.tolist())).encode()


@pytest.mark.parametrize("fmt", ["%+.16e", "%+.9E", "%.6e", "%+.15f", "%+.17e", "%+.18e"])
def test_fixed_layout_conversion_is_bit_exact(fmt):
    rng = np.random.default_rng(abs(hash(fmt)) % 2**32)
    n = 60_000
    mags = 10.0 ** rng.uniform(-9, 9, n) if "f" not in fmt else rng.uniform(0, 9.9, n)
    values = mags * rng.choice([-1.0, 1.0], n)
    if fmt.startswith("%."):
        values = np.abs(values)
    block = _fixed_block(values, fmt, 6)
    parsed = touchstone._fixed_width(block)
    if np.finfo(np.longdouble).nmant != 63:
        assert parsed is None  # no 80-bit floats: the reader uses numpy's parser instead
        return
    assert parsed is not None, "this block has one layout and should take the fast path"
    expected = np.array([float(tok) for tok in block.split()])
    assert np.array_equal(parsed.view(np.uint64), expected.view(np.uint64))


def test_fixed_layout_handles_signed_zero_and_halfway_cases():
    # About one number in 2048 lands exactly half-way after the 64-bit step and is redone
    # with float(); 200 000 numbers exercise that path many times over.
    rng = np.random.default_rng(77)
    values = rng.uniform(-1, 1, 200_000)
    values[::1000] = -0.0
    values[1::1000] = 0.0
    block = _fixed_block(values, "%+.16e", 8)
    parsed = touchstone._fixed_width(block)
    if parsed is None:
        pytest.skip("no 80-bit extended floats on this platform")
    expected = np.array([float(tok) for tok in block.split()])
    assert np.array_equal(parsed.view(np.uint64), expected.view(np.uint64))


@pytest.mark.parametrize("block", [
    b"1.0e+00 2.0e+00\n1.0e+00 2.0e+0x\n",      # a letter
    b"1.0e+00 2.0e+00\n1.0e+00\x012.0e+00\n",  # a control character as separator
    b"1.0e+00 2.0e+00\n1.0e+00 2.0e+000\n",    # a line of another length
    b"1.0e+00 2.0e+00\n1.0e+00  2.0e+00\n",    # a wider gap
    b"1.0e+00 2.0e+00\n1.0e+00 2.0.e+00\n"[:-1],  # not whole lines
    b"1.0e+00 2.0e+00\n1.0e+00 -.0e+001\n",
    b"12345678901234567890.0 1\n12345678901234567890.0 1\n",  # more than 19 digits
    b"1.0e+00 2.0e+00\n1.0e+00 2.0E+00\n",     # exponent letter differs
    b"1.0 2.0\n1.0 -2.\n",                      # sign where the first line has a digit
])
def test_fixed_layout_declines_what_it_cannot_read(block):
    assert touchstone._fixed_width(block) is None


def test_bad_digit_in_a_fixed_layout_file_reports_its_line(tmp_path):
    sweep = _random_sweep(2, points=50_000, seed=8)
    path = touchstone.write(sweep, tmp_path / "big.s2p", comments=["one"])
    lines = path.read_text().splitlines(keepends=True)
    # line 2 is the option line; point k sits on line k + 3
    bad = lines[40_002]
    lines[40_002] = bad[:30] + "x" + bad[31:]
    (tmp_path / "bad.s2p").write_text("".join(lines))
    with pytest.raises(SweepFileError) as info:
        touchstone.read(tmp_path / "bad.s2p")
    assert info.value.line == 40_003 and "is not a number" in info.value.reason


def test_fixed_layout_file_with_comments_and_crlf(tmp_path):
    sweep = _random_sweep(1, points=5_000, seed=12)
    path = touchstone.write(sweep, tmp_path / "a.s1p")
    lines = path.read_text().splitlines()
    lines.insert(1000, "! a note in the middle")
    lines[2000] += " ! and one at a line end"
    (tmp_path / "b.s1p").write_bytes(("\r\n".join(lines) + "\r\n").encode())
    back = touchstone.read(tmp_path / "b.s1p")
    assert np.array_equal(back.s, sweep.s)
    assert back.comments == ("a note in the middle", "and one at a line end")
