"""Starting the window: no display means a plain message and status 2, never a crash."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from refplane.views import demo
from refplane.views.launch import display_problem


def test_offscreen_needs_no_display():
    assert display_problem({"QT_QPA_PLATFORM": "offscreen"}, platform="linux") is None


def test_linux_without_display_is_explained():
    text = display_problem({}, platform="linux")
    assert "no display" in text and "refplane render" in text
    # An offscreen window is invisible and never exits: never offered for the window.
    assert "offscreen" not in text and "QT_QPA_PLATFORM" not in text


def test_xcb_forced_without_display_is_explained():
    text = display_problem({"QT_QPA_PLATFORM": "xcb"}, platform="linux")
    assert "DISPLAY is not set" in text


def test_unreachable_x_server_is_explained():
    text = display_problem({"DISPLAY": ":987"}, platform="linux")
    assert "no X server" in text


def hide_libraries(monkeypatch, *hidden):
    """Make the library lookup report ``hidden`` missing and everything else present."""
    from refplane.views import launch, xcb_needs

    monkeypatch.setattr(launch, "_x_server_reachable", lambda display: True)
    monkeypatch.setattr(xcb_needs, "find_library",
                        lambda soname, *rest: None if soname in hidden else f"/nowhere/{soname}")


def test_every_missing_xcb_library_is_named_in_one_message(monkeypatch):
    # Qt 6's xcb plugin links libxcb-icccm and libxcb-keysyms directly (its ELF header; checked
    # against readelf below). With them missing Qt itself aborts (status 134) blaming libxcb-cursor.
    hide_libraries(monkeypatch, "libxcb-icccm.so.4", "libxcb-keysyms.so.1")
    text = display_problem({"DISPLAY": ":0"}, platform="linux")
    assert "libxcb-icccm.so.4, libxcb-keysyms.so.1" in text
    # Debian's package names for them (Debian Policy §8.1 naming; from memory).
    assert "sudo apt install libxcb-icccm4 libxcb-keysyms1" in text
    assert "cursor" not in text  # the installed library is not blamed
    assert "refplane render" in text and "offscreen" not in text


def test_one_missing_library_reads_as_one(monkeypatch):
    hide_libraries(monkeypatch, "libxcb-cursor.so.0")
    text = display_problem({"DISPLAY": ":0"}, platform="linux")
    assert "needs a library that is not installed: libxcb-cursor.so.0." in text
    assert "apt install libxcb-cursor0" in text


def test_nothing_missing_means_no_problem(monkeypatch):
    hide_libraries(monkeypatch)
    assert display_problem({"DISPLAY": ":0"}, platform="linux") is None


def test_the_window_command_exits_2_naming_the_libraries(monkeypatch, capsys):
    from refplane.views.launch import run_window

    hide_libraries(monkeypatch, "libxcb-icccm.so.4", "libxcb-keysyms.so.1")
    monkeypatch.delenv("QT_QPA_PLATFORM", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    monkeypatch.setenv("DISPLAY", ":0")
    assert run_window([]) == 2
    err = capsys.readouterr().err
    assert err.count("refplane:") == 1 and "libxcb-icccm.so.4" in err and "libxcb-keysyms.so.1" in err


def test_other_systems_are_not_second_guessed():
    assert display_problem({}, platform="win32") is None
    assert display_problem({}, platform="darwin") is None


def test_command_without_display_exits_2_with_message():
    env = {k: v for k, v in os.environ.items()
           if k not in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM")}
    out = subprocess.run([sys.executable, "-m", "refplane"], env=env, capture_output=True, text=True,
                         timeout=60)
    assert out.returncode == 2
    assert "no display" in out.stderr and "refplane render" in out.stderr
    assert "Traceback" not in out.stderr


def test_demo_constant_is_one_name():
    assert demo.DEMO_SWEEP.endswith((".s1p", ".s2p"))
    path = demo.demo_path()
    if path is not None:
        from refplane.analysis.files.loading import read_sweep

        assert read_sweep(path).n_points > 10
    else:
        pytest.skip("the demo sweep is not in this checkout yet")


def test_start_up_leaves_the_tool_panels_and_session_files_unimported():
    # Start-up speed: the tool panels, hashing and JSON are imported when first used, not
    # when the window opens (the window benchmark's cold start depends on it). The panels
    # themselves still open: the tool-panel tests build each one.
    code = (
        "import sys\n"
        "from PySide6.QtWidgets import QApplication\n"
        "app = QApplication(sys.argv[:1])\n"
        "from refplane.views.main_window import MainWindow\n"
        "w = MainWindow()\n"
        "names = ['refplane.views.panels.antenna_panel', 'refplane.views.panels.cable_panel',\n"
        "         'refplane.views.panels.uncertainty_panel', 'refplane.views.panels.limits_panel',\n"
        "         'refplane.views.time_domain', 'hashlib', 'json']\n"
        "print(sorted(n for n in names if n in sys.modules))\n"
        "print(sorted(w.docks))\n"
    )
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env,
                         timeout=120)
    assert out.returncode == 0, out.stderr
    imported, docks = out.stdout.strip().splitlines()[-2:]
    assert imported == "[]"
    for title in ("Antenna", "Cable", "Uncertainty", "Limits", "Time domain"):
        assert repr(title) in docks


def test_the_modules_imported_before_qt_are_free_of_qt():
    # Start-up imports these before PySide6 (whose import hook would read each one's source):
    # they must not pull Qt in themselves, or the order would mean nothing.
    code = ("import sys\nfrom refplane.views import launch\nlaunch._import_before_qt()\n"
            "print(sorted(m for m in ('PySide6', 'pyqtgraph', 'shiboken6') if m in sys.modules))\n"
            "print(all(name in sys.modules for name in launch.BEFORE_QT))\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.split() == ["[]", "True"]
