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


def test_xcb_forced_without_display_is_explained():
    text = display_problem({"QT_QPA_PLATFORM": "xcb"}, platform="linux")
    assert "DISPLAY is not set" in text


def test_unreachable_x_server_is_explained():
    text = display_problem({"DISPLAY": ":987"}, platform="linux")
    assert "no X server" in text


def test_missing_xcb_cursor_library_is_explained(monkeypatch, tmp_path):
    from refplane.views import launch

    monkeypatch.setattr(launch, "_x_server_reachable", lambda display: True)
    monkeypatch.setattr(launch, "_have_library", lambda name: name != "xcb-cursor")
    text = display_problem({"DISPLAY": ":0"}, platform="linux")
    assert "libxcb-cursor0" in text and "refplane render" in text


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
        from refplane.analysis.loading import read_sweep

        assert read_sweep(path).n_points > 10
    else:
        pytest.skip("the demo sweep is not in this checkout yet")
