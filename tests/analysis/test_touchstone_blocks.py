"""The bulk pass over many blocks, parsed on worker threads.

Files are made to span dozens of blocks by shrinking the block size, so the threaded path,
the growing output arrays and the block boundaries are all exercised on small files.

Outside references: scikit-rf's own Touchstone writer and reader (``Network.write_touchstone``
and ``Network(file)``) give the files and the values expected; the Touchstone 1.1
specification gives the layout (one point per line for one- and two-ports, frequencies
strictly increasing). The expected line numbers are counted in the test, by hand.
"""

from __future__ import annotations

import random
import threading
import time
import warnings

import numpy as np
import pytest

from refplane.analysis.errors import SweepFileError
from refplane.analysis.files import touchstone
from refplane.analysis.files.touchstone import blocks as blocks_module
from refplane.analysis.files.touchstone import fast as fast_module
from refplane.analysis.files.touchstone import source as source_module
from refplane.analysis.files.touchstone.blocks import Blocks

skrf = pytest.importorskip("skrf")


@pytest.fixture
def small_blocks(monkeypatch):
    """Blocks of about 4 kB: a file of a few hundred lines spans dozens of them."""
    monkeypatch.setattr(source_module, "CHUNK", 4096)


def _skrf_file(folder, ports: int, form: str, points: int = 1500, seed: int = 3):
    rng = np.random.default_rng(seed)
    f = np.linspace(1e6, 3e9, points)
    s = (rng.uniform(-1, 1, (points, ports, ports))
         + 1j * rng.uniform(-1, 1, (points, ports, ports))) * 0.6
    # Some very small values: scikit-rf writes them with an exponent (1.2e-05).
    s[::7, 0, 0] *= 1e-6
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s, z0=50)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        net.write_touchstone(str(folder / f"net_{ports}_{form}"), form=form)
    path = folder / f"net_{ports}_{form}.s{ports}p"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return path, skrf.Network(str(path))


@pytest.mark.parametrize("ports,form", [(1, "ri"), (2, "ri"), (2, "ma"), (2, "db"), (3, "ri"),
                                        (4, "ma")])
def test_many_blocks_read_as_scikit_rf_reads_them(tmp_path, small_blocks, ports, form):
    path, reference = _skrf_file(tmp_path, ports, form)
    assert path.stat().st_size > 20 * source_module.CHUNK  # really many blocks
    sweep = touchstone.read(path)
    # Source: scikit-rf's reader of its own file.
    np.testing.assert_allclose(sweep.freq_hz, reference.f, rtol=1e-15)
    np.testing.assert_allclose(sweep.s, reference.s, rtol=1e-12, atol=1e-15)


def test_many_blocks_give_the_same_arrays_as_one(tmp_path, monkeypatch):
    path, _ = _skrf_file(tmp_path, 2, "ri", points=3000)
    whole = touchstone.read(path)  # one block
    monkeypatch.setattr(source_module, "CHUNK", 2048)
    split = touchstone.read(path)
    assert np.array_equal(whole.freq_hz, split.freq_hz)
    assert np.array_equal(whole.s, split.s)
    assert split.s.flags.c_contiguous and split.freq_hz.size == 3000


def test_the_bulk_pass_really_uses_worker_threads(tmp_path, small_blocks, monkeypatch):
    path, _ = _skrf_file(tmp_path, 2, "ri")
    seen = set()
    original = fast_module._parse

    def spy(body):
        seen.add(threading.get_ident())
        return original(body)

    monkeypatch.setattr(fast_module, "_parse", spy)
    monkeypatch.setattr(blocks_module.Blocks.__init__, "__defaults__", (2,))
    touchstone.read(path)
    assert threading.get_ident() not in seen and len(seen) >= 1


def _lines_of(path) -> list[bytes]:
    return path.read_bytes().split(b"\n")


def test_an_odd_line_in_a_late_block_is_named_at_its_line(tmp_path, small_blocks):
    path, _ = _skrf_file(tmp_path, 2, "ri")
    lines = _lines_of(path)
    bad = len(lines) - 40  # well past the first few dozen blocks
    lines[bad] = lines[bad] + b" 0.5"  # ten numbers on a two-port line
    path.write_bytes(b"\n".join(lines))
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert f"line {bad + 1}" in str(info.value)
    assert str(info.value).count("\n") == 0


def test_frequencies_falling_at_a_block_boundary_are_refused(tmp_path, monkeypatch):
    # Two blocks of whole lines; the second starts below where the first ended.
    head = b"# Hz S RI R 50\n"
    first = b"".join(b"%d 0.1 0.2\n" % (1000 + k) for k in range(300))
    second = b"".join(b"%d 0.1 0.2\n" % (1100 + k) for k in range(300))
    path = tmp_path / "fall.s1p"
    path.write_bytes(head + first + second)
    monkeypatch.setattr(source_module, "CHUNK", len(first) - 5)
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    # Line 302 (header + 300 lines + 1) holds 1100 Hz, not above 1299 Hz: Touchstone asks
    # for strictly increasing frequencies.
    assert "line 302" in str(info.value)


def test_a_nul_byte_far_into_the_file_is_named_at_its_line(tmp_path, small_blocks):
    path, _ = _skrf_file(tmp_path, 1, "ri")
    lines = _lines_of(path)
    bad = len(lines) - 30
    lines[bad] = lines[bad][:5] + b"\x00" + lines[bad][5:]
    path.write_bytes(b"\n".join(lines))
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert f"line {bad + 1}" in str(info.value) and "NUL" in str(info.value)


def test_blocks_hand_back_results_in_order_whatever_order_they_finish():
    rng = random.Random(11)

    def slow_square(body: bytes):
        time.sleep(rng.random() * 0.003)
        return int(body) ** 2

    with Blocks(slow_square, workers=2) as blocks:
        got = []
        for k in range(60):
            blocks.add(b"%d" % k)
            got.extend(blocks.ready())
        got.extend(blocks.results())
    assert got == [k * k for k in range(60)]


def test_a_workers_exception_is_raised_on_the_calling_thread():
    def parse(body: bytes):
        if body == b"3":
            raise ValueError("bad block")
        return body

    with pytest.raises(ValueError, match="bad block"):
        with Blocks(parse, workers=2) as blocks:
            for k in range(6):
                blocks.add(b"%d" % k)
            list(blocks.results())
    # The threads are gone once the block is left.
    assert not [t for t in threading.enumerate() if t.name == "refplane-read"]


def test_one_block_is_parsed_on_the_calling_thread():
    where = []
    with Blocks(lambda body: where.append(threading.get_ident()) or body, workers=2) as blocks:
        blocks.add(b"only")
        assert list(blocks.results()) == [b"only"]
    assert where == [threading.get_ident()]


def test_points_grow_past_a_short_estimate():
    # The estimate from a first block of long comment-free lines can fall short of a file
    # whose later lines are shorter; the arrays then grow in place.
    points = fast_module.Points(1)
    points.reserve(b"1 2 3\n" * 4, file_size=24)  # room for about four points
    for k in range(10):
        f = np.arange(5.0) + 5 * k
        points.add(f, np.full((5, 1, 1), k, dtype=complex))
    freq, s = points.finish()
    assert np.array_equal(freq, np.arange(50.0))
    assert np.array_equal(s[:, 0, 0].real, np.repeat(np.arange(10.0), 5))


def _two_port_with_noise_block(path, points: int, noise_rows: int = 3):
    """A 1.x two-port file whose network data end with a noise block (five numbers a row,
    its frequencies starting again below the last network frequency: Touchstone 1.1)."""
    rng = np.random.default_rng(12)
    f = np.linspace(1e8, 3e9, points)
    numbers = rng.uniform(-0.9, 0.9, (points, 8))
    lines = ["! invented test data", "# Hz S RI R 50"]
    lines += [" ".join("%.17g" % v for v in (fk, *row)) for fk, row in zip(f, numbers)]
    lines += ["! noise parameters"]
    lines += [f"{1e8 * (k + 1):.17g} 1.5 0.3 45 0.2" for k in range(noise_rows)]
    path.write_text("\n".join(lines) + "\n")
    return f, numbers


@pytest.mark.parametrize("chunk", [4096, 1 << 17])
def test_the_careful_pass_reads_ahead_and_gives_back_the_block_after_the_odd_line(tmp_path, monkeypatch, chunk):
    # The noise block sends the file to the careful pass, which reads the next block while it
    # works on the current one (on a thread from 64 kB up) and must hand the read-ahead bytes
    # back when it turns to reading line by line: no line lost, none read twice.
    path = tmp_path / "amp.s2p"
    f, numbers = _two_port_with_noise_block(path, points=12000)
    monkeypatch.setattr(source_module, "CHUNK", chunk)
    sweep = touchstone.read(path)
    assert sweep.n_points == 12000
    np.testing.assert_array_equal(sweep.freq_hz, f)
    # Touchstone 1.1 two-port order: S11, S21, S12, S22, each as real and imaginary part.
    np.testing.assert_array_equal(sweep.s[:, 0, 0], numbers[:, 0] + 1j * numbers[:, 1])
    np.testing.assert_array_equal(sweep.s[:, 1, 0], numbers[:, 2] + 1j * numbers[:, 3])
    np.testing.assert_array_equal(sweep.s[:, 0, 1], numbers[:, 4] + 1j * numbers[:, 5])
    np.testing.assert_array_equal(sweep.s[:, 1, 1], numbers[:, 6] + 1j * numbers[:, 7])


def test_a_fault_after_a_noise_block_is_named_at_its_line_with_read_ahead(tmp_path, monkeypatch):
    path = tmp_path / "amp.s2p"
    _two_port_with_noise_block(path, points=3000, noise_rows=400)
    lines = path.read_text().splitlines()
    bad = len(lines) - 10  # inside the noise block
    lines[bad] = lines[bad] + " 7"  # six numbers in a noise row
    path.write_text("\n".join(lines) + "\n")
    monkeypatch.setattr(source_module, "CHUNK", 4096)
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert f"line {bad + 1}" in str(info.value)


def test_an_overflowing_point_late_in_a_careful_read_is_named_at_its_line(tmp_path, monkeypatch):
    # The noise block sends the file to the careful pass, which converts the blocks it read in
    # bulk one by one at the end: a dB value far too high in a late block must still be named
    # at its own line (10**(99999/20) overflows a double).
    path = tmp_path / "amp.s2p"
    _two_port_with_noise_block(path, points=3000)
    lines = path.read_text().splitlines()
    lines[1] = "# Hz S DB R 50"
    bad = 2500  # index into lines: line 2501 of the file
    words = lines[bad].split()
    words[1] = "99999"
    lines[bad] = " ".join(words)
    path.write_text("\n".join(lines) + "\n")
    monkeypatch.setattr(source_module, "CHUNK", 4096)
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert f"line {bad + 1}" in str(info.value) and "too large" in str(info.value)


def test_a_singular_point_late_in_a_careful_read_is_counted_over_the_whole_file(tmp_path,
                                                                             monkeypatch):
    # Z-parameters that no S-parameters can give: with Z = -R0 times the identity, Z + R0·I
    # is singular and S = (Z - R0·I)(Z + R0·I)^-1 has no value (Pozar, Microwave
    # Engineering, section 4.3, from memory). The message counts points over the whole
    # file, though the careful pass converts its blocks one by one.
    path = tmp_path / "amp.s2p"
    _two_port_with_noise_block(path, points=3000)
    lines = path.read_text().splitlines()
    lines[1] = "# Hz Z RI R 50"
    k = 2400  # the point's index among the frequency points (0-based)
    at = 2 + k
    words = lines[at].split()
    # Touchstone 1.1 two-port order Z11 Z21 Z12 Z22, normalised to R: Z = -I.
    words[1:] = ["-1", "0", "0", "0", "0", "0", "-1", "0"]
    lines[at] = " ".join(words)
    path.write_text("\n".join(lines) + "\n")
    monkeypatch.setattr(source_module, "CHUNK", 4096)
    with pytest.raises(SweepFileError) as info:
        touchstone.read(path)
    assert f"frequency point {k + 1} " in str(info.value)
