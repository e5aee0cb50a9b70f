"""Reading a 200 001-point two-port Touchstone file (RI, ~36 MB), as ratios measured in one run.

Run on demand: ``pytest tests/benchmarks/test_read_speed.py -s`` (needs pandas, the ``bench``
extra). The file is written by Refplane's own writer into a temporary folder.

Targets
-------
1. ``touchstone.read`` at least 8× faster than ``skrf.Network(file)``.
2. ``touchstone.read`` within 1.5× of a raw pass of pandas' C tokenizer over the same text.
   The reference is ``pandas.read_csv(path, sep=r"\\s+", comment="!", header=None,
   skiprows=<lines before the data>, engine="c")``: pandas' C engine splitting the
   whitespace-separated numbers into a float table and nothing more (no option line, no
   reshaping into S, no checks). It is pandas' fastest text path for this layout and uses
   its own (not correctly rounded in every case) float parser; the result's dtype and shape
   are the same as the raw numbers Refplane parses.
3. Peak memory while reading (``tracemalloc``: allocations made after tracing starts,
   i.e. above the interpreter's baseline, numpy arrays included) under 3× the size of the
   final arrays (frequencies + S).
4. The whole process ``refplane read FILE --at 1GHz`` well under half the time of a process
   that only does ``import skrf; skrf.Network(FILE)`` (here: at most 0.5×).

Each comparison runs the two sides alternately and takes the shortest time of each, so both
see the same machine load; the shortest run is the usual estimate of a piece of code's own
cost (as the ``timeit`` documentation advises).
"""

from __future__ import annotations

import os
import pathlib
import subprocess
import sys
import tempfile
import time
import tracemalloc
import warnings

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from timing import paired

pytestmark = pytest.mark.benchmark

N_POINTS = 200_001
REPEATS = 3


@pytest.fixture(scope="module")
def big_file():
    # A folder of our own: pytest's numbered temporary folders can be pruned by other pytest
    # sessions running at the same time.
    with tempfile.TemporaryDirectory(prefix="refplane-read-speed-") as folder:
        yield _write_big(pathlib.Path(folder))


def _write_big(folder):
    rng = np.random.default_rng(2024)
    f = np.linspace(1e6, 6e9, N_POINTS)
    s = (rng.uniform(-1, 1, (N_POINTS, 2, 2)) + 1j * rng.uniform(-1, 1, (N_POINTS, 2, 2))) * 0.7
    sweep = Sweep(freq_hz=f, s=s, z0_ohm=50.0, name="bench")
    path = touchstone.write(sweep, folder / "big.s2p", fmt="RI",
                            freq_unit="GHz", comments=["invented benchmark data"])
    size_mb = path.stat().st_size / 1e6
    print(f"\nbenchmark file: {path} ({size_mb:.1f} MB, {N_POINTS} points, 2-port RI)")
    return path


def _paired(reference, candidate, repeats: int = REPEATS) -> tuple[float, float]:
    return paired(reference, candidate, repeats)


def _skrf_read(path):
    import skrf

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return skrf.Network(str(path))


def _header_lines(path) -> int:
    with open(path, "rb") as handle:
        for number, line in enumerate(handle):
            if line[:1] not in (b"!", b"#"):
                return number
    return 0


def test_read_is_8x_faster_than_skrf(big_file):
    ref = _skrf_read(big_file)
    sweep = touchstone.read(big_file)
    # Same numbers as scikit-rf's reader (a correctness guard for the benchmark itself).
    np.testing.assert_allclose(sweep.s, ref.s, rtol=1e-12, atol=1e-15)
    skrf_s, ours_s = _paired(lambda: _skrf_read(big_file), lambda: touchstone.read(big_file))
    ratio = skrf_s / ours_s
    print(f"skrf.Network {skrf_s:.3f} s, touchstone.read {ours_s:.3f} s: {ratio:.1f}x faster "
          "(target >= 8x)")
    assert ratio >= 8


def test_read_within_1_5x_of_pandas_c_tokenizer(big_file):
    pd = pytest.importorskip("pandas")
    skip = _header_lines(big_file)

    def raw_pass():
        return pd.read_csv(big_file, sep=r"\s+", comment="!", header=None, skiprows=skip,
                           engine="c").to_numpy()

    table = raw_pass()
    assert table.shape == (N_POINTS, 9)
    pandas_s, ours_s = _paired(raw_pass, lambda: touchstone.read(big_file))
    ratio = ours_s / pandas_s
    print(f"pandas C tokenizer {pandas_s:.3f} s, touchstone.read {ours_s:.3f} s: "
          f"{ratio:.2f}x the raw pass (target <= 1.5x)")
    # For context: numpy's own C text parsers on the same numbers.
    with open(big_file, "rb") as handle:
        for _ in range(skip):
            handle.readline()
        body = handle.read()
    start = time.perf_counter()
    np.fromstring(body, sep=" ")
    numpy_s = time.perf_counter() - start
    print(f"  (np.fromstring over the whole body alone: {numpy_s:.3f} s)")
    assert ratio <= 1.5


def test_variable_width_file_figures(big_file, tmp_path_factory):
    """The same numbers written '%.17g' (variable width, as many other programs write):
    these take numpy's general C parser rather than the fixed-layout path. Reported for
    context; asserted only to beat scikit-rf."""
    pd = pytest.importorskip("pandas")
    sweep = touchstone.read(big_file)
    path = pathlib.Path(big_file).with_name("variable.s2p")
    table = np.column_stack([sweep.freq_hz / 1e9] + [
        part for i, j in ((0, 0), (1, 0), (0, 1), (1, 1))
        for part in (sweep.s[:, i, j].real, sweep.s[:, i, j].imag)])
    path.write_text("# GHz S RI R 50\n" + "".join(
        " ".join(["%.17g"] * 9) % tuple(row) + "\n" for row in table.tolist()))
    back = touchstone.read(path)
    assert np.array_equal(back.s, sweep.s)

    def raw_pass():
        return pd.read_csv(path, sep=r"\s+", comment="!", header=None, skiprows=1,
                           engine="c").to_numpy()

    pandas_s, ours_s = _paired(raw_pass, lambda: touchstone.read(path))
    skrf_s, ours2_s = _paired(lambda: _skrf_read(path), lambda: touchstone.read(path))
    print(f"variable-width '%.17g' file ({path.stat().st_size / 1e6:.1f} MB): "
          f"touchstone.read {min(ours_s, ours2_s):.3f} s = {ours_s / pandas_s:.2f}x pandas' raw pass, "
          f"{skrf_s / ours2_s:.1f}x faster than skrf.Network")
    assert skrf_s / ours2_s > 1


def test_peak_memory_under_3x_final_arrays(big_file):
    touchstone.read(big_file)  # warm caches and imports outside the traced run
    tracemalloc.start()
    try:
        sweep = touchstone.read(big_file)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    final = sweep.freq_hz.nbytes + sweep.s.nbytes
    ratio = peak / final
    print(f"peak traced memory {peak / 1e6:.1f} MB for {final / 1e6:.1f} MB of final arrays: "
          f"{ratio:.2f}x (target < 3x)")
    assert ratio < 3


def _process_s(args) -> float:
    # An installed program starts from compiled bytecode, as scikit-rf in site-packages does;
    # let the first run write it (the shortest of the runs is kept), or Refplane alone would
    # be recompiled on every start where PYTHONDONTWRITEBYTECODE is set.
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    start = time.perf_counter()
    done = subprocess.run(args, capture_output=True, text=True, timeout=600, env=env)
    elapsed = time.perf_counter() - start
    assert done.returncode == 0, done.stderr
    return elapsed


def test_cli_process_well_under_half_a_skrf_process(big_file):
    ours = [sys.executable, "-m", "refplane", "read", str(big_file), "--at", "1GHz"]
    theirs = [sys.executable, "-W", "ignore", "-c",
              f"import skrf; skrf.Network({str(big_file)!r})"]
    skrf_s, ours_s = _paired(lambda: _process_s(theirs), lambda: _process_s(ours))
    ratio = ours_s / skrf_s
    print(f"process 'import skrf; skrf.Network(FILE)' {skrf_s:.3f} s, "
          f"'refplane read FILE --at 1GHz' {ours_s:.3f} s: {ratio:.2f}x (target <= 0.5x)")
    assert ratio <= 0.5


# --------------------------------------------------------------------------------------
# Every writer's layout (issue 13): the same 200 001-point two-port as written by
# Refplane's writer (fixed-width E), by scikit-rf's own writer (shortest round-trip
# numbers of varying width, RI, MA and DB), with tabs, and with mixed spacing.
#
# Targets per layout: touchstone.read at least 8x faster than skrf.Network(file), and the
# whole process `refplane read FILE --at 1GHz --json` at most 0.35 of a process that only
# does `import skrf; skrf.Network(FILE)`.
# --------------------------------------------------------------------------------------

LAYOUTS = ("fixed-width E", "skrf RI", "skrf MA", "skrf DB", "tabs", "mixed spacing")


@pytest.fixture(scope="module")
def layout_files():
    import skrf

    with tempfile.TemporaryDirectory(prefix="refplane-layouts-") as folder:
        folder = pathlib.Path(folder)
        rng = np.random.default_rng(2024)
        f = np.linspace(1e6, 6e9, N_POINTS)
        s = (rng.uniform(-1, 1, (N_POINTS, 2, 2)) + 1j * rng.uniform(-1, 1, (N_POINTS, 2, 2))) * 0.7
        files = {"fixed-width E": touchstone.write(Sweep(freq_hz=f, s=s, z0_ohm=50.0), folder / "fixed.s2p",
                                                   comments=["invented benchmark data"])}
        net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="hz"), s=s, z0=50)
        for form in ("ri", "ma", "db"):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                net.write_touchstone(str(folder / f"skrf_{form}"), form=form)
            files[f"skrf {form.upper()}"] = folder / f"skrf_{form}.s2p"
        text = files["skrf RI"].read_text()
        head, _, body = text.partition("\n1000000.0")
        body = "1000000.0" + body
        (folder / "tabs.s2p").write_text(head + "\n" + body.replace(" ", "\t"))
        files["tabs"] = folder / "tabs.s2p"
        pad = np.random.default_rng(7)
        mixed = []
        for line in body.splitlines():
            words = line.split()
            gaps = pad.integers(1, 4, len(words))
            mixed.append("".join(" " * g + w for g, w in zip(gaps, words)))
        (folder / "mixed.s2p").write_text(head + "\n" + "\n".join(mixed) + "\n")
        files["mixed spacing"] = folder / "mixed.s2p"
        yield files


@pytest.mark.parametrize("layout", LAYOUTS)
def test_every_layout_is_read_8x_faster_than_skrf(layout_files, layout):
    path = layout_files[layout]
    ref = _skrf_read(path)
    sweep = touchstone.read(path)
    np.testing.assert_allclose(sweep.s, ref.s, rtol=1e-12, atol=1e-15)
    skrf_s, ours_s = _paired(lambda: _skrf_read(path), lambda: touchstone.read(path))
    ratio = skrf_s / ours_s
    print(f"\n{layout:14s} ({path.stat().st_size / 1e6:.1f} MB): skrf.Network {skrf_s:.3f} s, "
          f"touchstone.read {ours_s:.3f} s: {ratio:.1f}x faster (target >= 8x)")
    assert ratio >= 8


@pytest.mark.parametrize("layout", LAYOUTS)
def test_every_layout_read_process_within_0_35_of_a_skrf_process(layout_files, layout):
    path = layout_files[layout]
    ours = [sys.executable, "-m", "refplane", "read", str(path), "--at", "1GHz", "--json"]
    theirs = [sys.executable, "-W", "ignore", "-c", f"import skrf; skrf.Network({str(path)!r})"]
    skrf_s, ours_s = _paired(lambda: _process_s(theirs), lambda: _process_s(ours))
    ratio = ours_s / skrf_s
    print(f"\n{layout:14s}: process skrf {skrf_s:.3f} s, 'refplane read --json' {ours_s:.3f} s: "
          f"{ratio:.2f} (target <= 0.35)")
    assert ratio <= 0.35


# --------------------------------------------------------------------------------------
# The careful pass (taken when one line of a big file is unusual) on 2 000 001 points: within
# 3x the time and the memory of the fast pass on the same file without that line.
# --------------------------------------------------------------------------------------

BIG_POINTS = 2_000_001


def test_careful_pass_within_3x_of_the_fast_pass():
    with tempfile.TemporaryDirectory(prefix="refplane-careful-") as folder:
        folder = pathlib.Path(folder)
        rng = np.random.default_rng(5)
        f = np.linspace(1e6, 6e9, BIG_POINTS)
        s = (rng.uniform(-1, 1, (BIG_POINTS, 2, 2)) + 1j * rng.uniform(-1, 1, (BIG_POINTS, 2, 2))) * 0.7
        plain = touchstone.write(Sweep(freq_hz=f, s=s, z0_ohm=50.0), folder / "plain.s2p")
        del s
        # The same file with a legal irregularity the bulk pass leaves to the careful pass:
        # a 1.x noise block at the end (five numbers per row, frequency restarting).
        odd = folder / "odd.s2p"
        with open(plain, "rb") as src, open(odd, "wb") as dst:
            while True:
                chunk = src.read(1 << 24)
                if not chunk:
                    break
                dst.write(chunk)
            dst.write(b"! noise parameters\n1.0e-3 1.5 0.3 45 0.2\n")

        def timed_peak(path):
            touchstone.read(path)  # warm
            tracemalloc.start()
            start = time.perf_counter()
            try:
                touchstone.read(path)
                elapsed = time.perf_counter() - start
                _, peak = tracemalloc.get_traced_memory()
            finally:
                tracemalloc.stop()
            return elapsed, peak

        fast_s, fast_peak = timed_peak(plain)
        careful_s, careful_peak = timed_peak(odd)
        print(f"\n2,000,001 points: fast pass {fast_s:.2f} s / {fast_peak / 1e6:.0f} MB, careful pass "
              f"{careful_s:.2f} s / {careful_peak / 1e6:.0f} MB: {careful_s / fast_s:.1f}x time, "
              f"{careful_peak / fast_peak:.1f}x memory (targets <= 3x)")
        assert careful_s <= 3 * fast_s
        assert careful_peak <= 3 * fast_peak
