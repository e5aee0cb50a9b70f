"""Reading what Qt's X11 plugin needs from its ELF header, and finding libraries as the loader does.

Outside references: GNU binutils ``readelf -d`` lists an object's NEEDED and RUNPATH entries;
glibc's ``ldd`` lists every library the loader would load and marks the ones "not found";
ld.so(8) documents the search order (RPATH, LD_LIBRARY_PATH, RUNPATH, ld.so.cache/ld.so.conf,
the default folders) and $ORIGIN. Debian Policy §8.1 names shared-library packages (from memory).
"""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from refplane.views import xcb_needs
from refplane.views.xcb_needs import (ElfInfo, debian_package, find_library, loader_dirs,
                                      missing_libraries, read_elf, xcb_plugin_path)

PLUGIN = xcb_plugin_path()
needs_plugin = pytest.mark.skipif(PLUGIN is None, reason="PySide6 has no xcb plugin here")


@needs_plugin
@pytest.mark.skipif(shutil.which("readelf") is None, reason="binutils' readelf is not installed")
def test_needs_and_runpath_match_readelf():
    out = subprocess.run(["readelf", "-d", str(PLUGIN)], capture_output=True, text=True, check=True).stdout
    needed = re.findall(r"\(NEEDED\)\s+Shared library: \[(.+?)\]", out)
    runpath = re.findall(r"\(RUNPATH\)\s+Library runpath: \[(.+?)\]", out)
    info = read_elf(PLUGIN)
    assert info.needed == needed and "libxcb-icccm.so.4" in needed and "libxcb-keysyms.so.1" in needed
    assert info.runpath == [p for r in runpath for p in r.split(":")]


@needs_plugin
@pytest.mark.skipif(shutil.which("ldd") is None, reason="glibc's ldd is not installed")
def test_missing_libraries_match_ldd():
    out = subprocess.run(["ldd", str(PLUGIN)], capture_output=True, text=True).stdout
    not_found = {m for m in re.findall(r"^\s*(\S+) => not found", out, flags=re.M)}
    assert set(xcb_needs.missing_xcb_libraries()) == not_found


def test_not_an_elf_file_reads_as_none(tmp_path):
    (tmp_path / "text.so").write_text("not a library")
    assert read_elf(tmp_path / "text.so") is None
    assert read_elf(tmp_path / "absent.so") is None
    assert missing_libraries(tmp_path / "text.so") == []


@needs_plugin
def test_lookup_follows_origin_runpath_and_ld_library_path(tmp_path):
    # Any real ELF object serves as a library file; what matters is where it lies.
    (tmp_path / "lib").mkdir()
    shutil.copy(PLUGIN, tmp_path / "lib" / "libdemo.so.3")
    kind = read_elf(PLUGIN).kind
    via_runpath = ElfInfo([], [], ["$ORIGIN/lib"], kind)
    assert find_library("libdemo.so.3", via_runpath, str(tmp_path), env={}, system_dirs=[]) \
        == str(tmp_path / "lib" / "libdemo.so.3")
    plain = ElfInfo([], [], [], kind)
    assert find_library("libdemo.so.3", plain, str(tmp_path), env={}, system_dirs=[]) is None
    assert find_library("libdemo.so.3", plain, "/", env={"LD_LIBRARY_PATH": str(tmp_path / "lib")},
                        system_dirs=[]) is not None
    # A library of another kind (a 32-bit copy, say) is passed over, as the loader does.
    other = ElfInfo([], [], ["$ORIGIN/lib"], (1, 3))
    assert find_library("libdemo.so.3", other, str(tmp_path), env={}, system_dirs=[]) is None


def test_ld_so_conf_with_includes(tmp_path):
    (tmp_path / "conf.d").mkdir()
    (tmp_path / "conf.d" / "b.conf").write_text("/opt/b/lib\n")
    (tmp_path / "conf.d" / "a.conf").write_text("# comment\n/opt/a/lib  # trailing\n")
    (tmp_path / "ld.so.conf").write_text("include conf.d/*.conf\n/opt/top\n")
    dirs = loader_dirs(tmp_path / "ld.so.conf")
    assert dirs[:3] == ["/opt/a/lib", "/opt/b/lib", "/opt/top"]
    assert {"/lib", "/usr/lib"} <= set(dirs)  # the loader's built-in folders come last


@pytest.mark.parametrize("soname, package", [
    # Debian/Ubuntu package names of the libraries Qt's X11 support needs (from memory).
    ("libxcb-icccm.so.4", "libxcb-icccm4"),
    ("libxcb-keysyms.so.1", "libxcb-keysyms1"),
    ("libxcb-cursor.so.0", "libxcb-cursor0"),
    ("libxcb-render-util.so.0", "libxcb-render-util0"),
    ("libxkbcommon-x11.so.0", "libxkbcommon-x11-0"),   # name ends in a digit: a hyphen
    ("libX11-xcb.so.1", "libx11-xcb1"),
])
def test_debian_package_names(soname, package):
    assert debian_package(soname) == package


def test_without_the_plugin_the_documented_list_is_checked(monkeypatch):
    monkeypatch.setattr(xcb_needs, "xcb_plugin_path", lambda: None)
    monkeypatch.setattr(xcb_needs, "find_library",
                        lambda soname, *rest: None if soname == "libxcb-keysyms.so.1" else "/x")
    assert xcb_needs.missing_xcb_libraries() == ["libxcb-keysyms.so.1"]
