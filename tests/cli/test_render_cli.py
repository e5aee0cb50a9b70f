"""``refplane render``: pictures of the requested size, legend from the readings path, status codes."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from refplane.analysis.readings.impedance import z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.analysis.files.touchstone import write
from refplane.cli import main


@pytest.fixture
def sweep_file(tmp_path):
    import numpy as np

    # Z = 75 + jω·9 nH against 50 Ω: a leaded 75 Ω resistor (common practice, references.md).
    f = np.linspace(1e6, 1e9, 201)
    s = z_to_gamma(75 + 2j * np.pi * f * 9e-9, 50.0)
    return str(write(Sweep(freq_hz=f, s=s.reshape(-1, 1, 1), z0_ohm=50.0, name="r75"), tmp_path / "r75.s1p"))


def _run(*args, env_extra=None):
    env = {k: v for k, v in os.environ.items() if k not in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM")}
    env.update(env_extra or {})
    return subprocess.run([sys.executable, "-m", "refplane", "render", *args], capture_output=True,
                          text=True, env=env, timeout=120)


@pytest.mark.needs_qt
def test_png_of_requested_size_without_a_display(sweep_file, tmp_path):
    out = tmp_path / "chart.png"
    result = _run(sweep_file, "--at", "470MHz", "-o", str(out), "--size", "640x720")
    assert result.returncode == 0, result.stderr
    assert result.stderr == ""
    from PySide6.QtGui import QImage

    image = QImage(str(out))
    assert (image.width(), image.height()) == (640, 720)


@pytest.mark.needs_qt
def test_svg_output(sweep_file, tmp_path):
    out = tmp_path / "chart.svg"
    assert main(["render", sweep_file, "--at", "470 MHz", "-o", str(out)]) == 0
    text = out.read_text()
    assert text.lstrip().startswith("<?xml") and "<svg" in text


@pytest.mark.needs_qt
def test_legend_lines_come_from_summary_line(qapp, sweep_file):
    from refplane.analysis.files.loading import read_sweep
    from refplane.analysis.readings import read_points
    from refplane.session.present import summary_line
    from refplane.views.render import ChartPicture
    from refplane.session.model import Session

    state = Session()
    sweep = read_sweep(sweep_file)
    tid = state.add_sweep(sweep)
    state.add_marker(tid, 470e6)
    picture = ChartPicture(state)
    expected = summary_line(read_points(sweep, [470e6]).readout.at(0))
    assert picture.legend_lines() == ["r75 · S11", f"1  {expected}"]
    # 75 Ω in series with 9 nH at 470 MHz: X = 26.58 Ω (closed form).
    assert "75.00 Ω + j26.58 Ω (L 9.000 nH)" in expected
    picture.deleteLater()


@pytest.mark.needs_qt
def test_existing_output_is_refused_unless_forced(sweep_file, tmp_path):
    out = tmp_path / "chart.png"
    out.write_bytes(b"keep me")
    result = _run(sweep_file, "-o", str(out))
    assert result.returncode == 2
    assert "refusing to overwrite" in result.stderr and len(result.stderr.strip().splitlines()) == 1
    assert out.read_bytes() == b"keep me"
    assert _run(sweep_file, "-o", str(out), "--force").returncode == 0
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize("args, words", [
    (["-o", "x.jpg"], "unknown picture type"),
    (["-o", "x.png", "--size", "12x12"], "64 to 8000"),
    (["-o", "x.png", "--size", "big"], "not a size"),
    (["-o", "x.png", "--at", "5GHz"], "outside the sweep"),
    (["-o", "x.png", "--port", "2"], "port 2 does not exist"),
    (["-o", "x.png", "--at", "fast"], "not a frequency"),
    (["-o", "x.png", "--vswr", "0.5"], "above 1"),
])
def test_bad_input_exits_2_with_one_line(sweep_file, tmp_path, args, words):
    args = [a if not a.startswith("x.") else str(tmp_path / a) for a in args]
    result = _run(sweep_file, *args)
    assert result.returncode == 2
    assert words in result.stderr and "Traceback" not in result.stderr
    assert not (tmp_path / "x.png").exists()


def test_unreadable_sweep_exits_2(tmp_path):
    bad = tmp_path / "bad.s1p"
    bad.write_text("# Hz S RI R 50\n1e6 0.1\n")
    result = _run(str(bad), "-o", str(tmp_path / "x.png"))
    assert result.returncode == 2
    assert "bad.s1p" in result.stderr and "line 2" in result.stderr
    assert _run(str(tmp_path / "missing.s1p"), "-o", str(tmp_path / "x.png")).returncode == 2


_BLOCK_QT = (
    "import sys, importlib.abc\n"
    "class B(importlib.abc.MetaPathFinder):\n"
    "    def find_spec(self, name, path=None, target=None):\n"
    "        if name.split('.')[0] in ('PySide6', 'shiboken6', 'pyqtgraph'):\n"
    "            raise ImportError('Qt cannot start here')\n"
    "sys.meta_path.insert(0, B())\n"
    "from refplane.cli import main\n"
    "sys.exit(main(sys.argv[1:]))\n")


@pytest.mark.parametrize("args, words", [
    (["-o", "x.png", "--at", "5GHz"], "outside the sweep"),
    (["-o", "x.png", "--port", "2"], "port 2 does not exist"),
    (["-o", "x.png", "--vswr", "0.5"], "above 1"),
    (["-o", "x.png", "--session", "none.refplane"], "leave out FILE"),
])
def test_input_is_checked_before_qt_is_touched(sweep_file, tmp_path, args, words):
    # Where Qt cannot even be imported, bad input still gives its one line and status 2.
    args = [a if not a.startswith("x.") else str(tmp_path / a) for a in args]
    result = subprocess.run([sys.executable, "-c", _BLOCK_QT, "render", sweep_file, *args],
                            capture_output=True, text=True, timeout=120)
    assert result.returncode == 2, result.stderr
    assert words in result.stderr and len(result.stderr.strip().splitlines()) == 1


def test_render_session_of_a_missing_sweep_is_one_line(tmp_path, sweep_file):
    from refplane.analysis.files.loading import read_sweep
    from refplane.session.files import save_session
    from refplane.session.model import Session

    s = Session()
    s.add_sweep(read_sweep(sweep_file))
    path = save_session(s, tmp_path / "bench.refplane")
    os.unlink(sweep_file)
    result = subprocess.run([sys.executable, "-c", _BLOCK_QT, "render", "--session", str(path),
                             "-o", str(tmp_path / "x.png")], capture_output=True, text=True, timeout=120)
    assert result.returncode == 2
    assert "r75.s1p is missing" in result.stderr and len(result.stderr.strip().splitlines()) == 1
