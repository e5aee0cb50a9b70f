"""``refplane check`` over many sweep files, as a whole process, against references in the same run.

Run on demand: ``pytest tests/benchmarks/test_check_speed.py -s -p no:randomly``.

The files are written by Refplane's own writer into a temporary folder (invented sweeps).

Targets
-------
1. 2,000 small files (201-point one-ports, every tenth made to fail), two limits: the whole
   process ``refplane check FOLDER --limit ... --limit ... --json`` (default choice of
   processes) finishes in under 60 s on a 2-core machine (the issue's target), and takes at
   most twice the time scikit-rf needs only to *read* the same files in one process
   (``skrf.Network(path)`` in a loop) — the reference a scripting user would otherwise write.
   (This ratio target was set after a first run measured 1.5×, on a machine shared with other
   jobs; inside one process the checks alone took less time than scikit-rf's reading.)
2. 120 large files (20,001-point two-ports): worker processes (``--jobs`` = cores) must not
   cost more than a quarter over one process (``--jobs 1``); the ratio is printed. On a
   machine whose cores are busy with other work, starting workers (a fresh interpreter each,
   importing numpy and Refplane) may save nothing; on free cores they divide the work.
   With small files the default runs in one process, because starting workers would cost more
   than they save; the figures for forcing ``--jobs 2`` there are printed.

Each side runs twice, alternately; the shortest time counts (the ``timeit`` documentation's
advice: the shortest run is the best estimate of the code's own cost under other load).
"""

from __future__ import annotations

import json
import pathlib
import subprocess
import sys
import tempfile
import time

import numpy as np
import pytest

from refplane.analysis.files import touchstone
from refplane.analysis.sweep import Sweep
from refplane.batch import default_jobs

pytestmark = pytest.mark.benchmark

N_FILES = 2000
N_POINTS = 201
LIMITS = ("vswr <= 1.5 over 100MHz:900MHz", "return_loss_db >= 12 over 0.2GHz:0.8GHz")


def _write_lot(root: pathlib.Path, count: int, points: int, ports: int) -> None:
    rng = np.random.default_rng(18)
    f = np.linspace(1e6, 1e9, points)
    for i in range(count):
        sub = root / f"lot{i // 500}"
        sub.mkdir(exist_ok=True)
        rho = 0.05 + 0.1 * rng.random() + 0.02 * rng.standard_normal(points)
        g = np.abs(rho) * np.exp(1j * rng.uniform(-np.pi, np.pi, points))
        if i % 10 == 0:
            g[points // 2] = 0.35                     # made to fail at 500.5 MHz
        s = np.zeros((points, ports, ports), complex)
        for k in range(ports):
            s[:, k, k] = g
        if ports > 1:
            s[:, 1, 0] = s[:, 0, 1] = 0.9
        touchstone.write(Sweep(f, s, 50.0, name=f"dut{i:04d}"), sub / f"dut{i:04d}.s{ports}p",
                         freq_unit="MHz", comments=("invented sweep for a benchmark",))


@pytest.fixture(scope="module")
def small_lot():
    with tempfile.TemporaryDirectory(prefix="refplane-check-speed-") as name:
        _write_lot(pathlib.Path(name), N_FILES, N_POINTS, 1)
        yield pathlib.Path(name)


@pytest.fixture(scope="module")
def large_lot():
    with tempfile.TemporaryDirectory(prefix="refplane-check-speed-large-") as name:
        _write_lot(pathlib.Path(name), 120, 20_001, 2)
        yield pathlib.Path(name)


def _check(folder, *extra) -> tuple[float, dict]:
    argv = [sys.executable, "-m", "refplane", "check", str(folder), "--json", *extra]
    for lim in LIMITS:
        argv += ["--limit", lim]
    start = time.perf_counter()
    proc = subprocess.run(argv, capture_output=True, text=True, timeout=900)
    elapsed = time.perf_counter() - start
    assert proc.returncode == 1, proc.stderr          # some files fail, none unreadable
    return elapsed, json.loads(proc.stdout)


def _skrf_read_all(folder) -> float:
    code = ("import pathlib, sys, warnings, skrf\nwarnings.simplefilter('ignore')\n"
            "files = sorted(pathlib.Path(sys.argv[1]).rglob('*.s1p'))\n"
            "[skrf.Network(str(p)) for p in files]\n")
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", code, str(folder)], check=True, timeout=900)
    return time.perf_counter() - start


def test_check_2000_small_files(small_lot):
    pytest.importorskip("skrf")
    default, forced, serial, reference = [], [], [], []
    out = None
    for _ in range(2):
        t, out = _check(small_lot)
        default.append(t)
        forced.append(_check(small_lot, "--jobs", "2")[0])
        serial.append(_check(small_lot, "--jobs", "1")[0])
        reference.append(_skrf_read_all(small_lot))
    best, best_ref = min(default), min(reference)
    summary = out["summary"]
    assert summary["files"] == N_FILES and summary["unreadable"] == 0
    assert summary["failed"] >= N_FILES // 10
    print(f"\nrefplane check, {N_FILES} files of {N_POINTS} points, 2 limits, {default_jobs()} core(s):")
    print(f"  default         : {best:.2f} s  ({N_FILES / best:.0f} files/s)")
    print(f"  --jobs 2        : {min(forced):.2f} s")
    print(f"  --jobs 1        : {min(serial):.2f} s")
    print(f"  scikit-rf read only, one process: {best_ref:.2f} s  (check/reference {best / best_ref:.2f}x)")
    assert best < 60.0
    assert best <= 2.0 * best_ref


def test_worker_processes_pay_on_large_files(large_lot):
    cores = default_jobs()
    parallel, serial = [], []
    for _ in range(2):
        parallel.append(_check(large_lot, "--jobs", str(max(cores, 2)))[0])
        serial.append(_check(large_lot, "--jobs", "1")[0])
    ratio = min(parallel) / min(serial)
    print(f"\nrefplane check, 120 files of 20001 points (2-port), {cores} core(s): "
          f"--jobs {max(cores, 2)} {min(parallel):.2f} s, --jobs 1 {min(serial):.2f} s ({ratio:.2f}x)")
    assert ratio <= 1.25
