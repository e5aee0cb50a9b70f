"""Which shared libraries Qt's X11 platform plugin needs, and which of them this system lacks.

When the xcb plugin cannot be loaded, Qt aborts the whole process (status 134) and names
only libxcb-cursor, even when that one is installed and another is missing. So before any Qt
object exists the launcher reads what the plugin needs from its own ELF header (the
``DT_NEEDED`` entries, followed through every library found), looks each up the way the
system's dynamic loader does, and names the ones that are missing.

Nothing here imports Qt or loads a library; it reads files only.
"""

from __future__ import annotations

import glob
import importlib.util
import os
import re
import struct
from pathlib import Path

# ELF constants (System V ABI, "Dynamic Section"): program header and dynamic-entry types.
_PT_LOAD, _PT_DYNAMIC = 1, 2
_DT_NULL, _DT_NEEDED, _DT_STRTAB, _DT_RPATH, _DT_RUNPATH = 0, 1, 5, 15, 29

#: Used when the plugin file cannot be read: the libraries Qt 6.5+ documents for its X11
#: support ("Qt for X11 Requirements"; from memory), as the loader names them.
KNOWN_XCB_NEEDS = (
    "libxcb.so.1", "libX11-xcb.so.1", "libX11.so.6", "libxkbcommon.so.0", "libxkbcommon-x11.so.0",
    "libxcb-cursor.so.0", "libxcb-icccm.so.4", "libxcb-image.so.0", "libxcb-keysyms.so.1",
    "libxcb-randr.so.0", "libxcb-render-util.so.0", "libxcb-render.so.0", "libxcb-shape.so.0",
    "libxcb-shm.so.0", "libxcb-sync.so.1", "libxcb-util.so.1", "libxcb-xfixes.so.0", "libxcb-xkb.so.1",
)


class ElfInfo:
    """What the dynamic loader reads from one shared object: its needs and search paths."""

    def __init__(self, needed: list[str], rpath: list[str], runpath: list[str],
                 kind: tuple[int, int] | None):
        self.needed = needed
        self.rpath = rpath
        self.runpath = runpath
        # (ELF class, machine): a 64-bit x86 object needs 64-bit x86 libraries; None: any will do.
        self.kind = kind


def read_elf(path: str | os.PathLike) -> ElfInfo | None:
    """The ``DT_NEEDED``, ``DT_RPATH`` and ``DT_RUNPATH`` entries of an ELF shared object.

    Returns None for a file that is not a readable ELF object. Only the headers and the
    dynamic section are read, never the whole file.
    """
    try:
        with open(path, "rb") as f:
            ident = f.read(16)
            if len(ident) < 16 or ident[:4] != b"\x7fELF" or ident[4] not in (1, 2) or ident[5] not in (1, 2):
                return None
            is64, end = ident[4] == 2, "<" if ident[5] == 1 else ">"
            if is64:
                hdr = struct.unpack(end + "HHIQQQIHHHHHH", f.read(48))
                machine, phoff, phentsize, phnum = hdr[1], hdr[4], hdr[8], hdr[9]
                ph_fmt, dyn_fmt = end + "IIQQQQQQ", end + "qQ"
            else:
                hdr = struct.unpack(end + "HHIIIIIHHHHHH", f.read(36))
                machine, phoff, phentsize, phnum = hdr[1], hdr[4], hdr[8], hdr[9]
                ph_fmt, dyn_fmt = end + "IIIIIIII", end + "iI"
            loads, dynamic = [], None
            for i in range(phnum):
                f.seek(phoff + i * phentsize)
                raw = f.read(struct.calcsize(ph_fmt))
                fields = struct.unpack(ph_fmt, raw)
                if is64:
                    p_type, p_offset, p_vaddr, p_filesz = fields[0], fields[2], fields[3], fields[5]
                else:
                    p_type, p_offset, p_vaddr, p_filesz = fields[0], fields[1], fields[2], fields[4]
                if p_type == _PT_LOAD:
                    loads.append((p_vaddr, p_filesz, p_offset))
                elif p_type == _PT_DYNAMIC:
                    dynamic = (p_offset, p_filesz)
            if dynamic is None:
                return ElfInfo([], [], [], (ident[4], machine))
            f.seek(dynamic[0])
            data = f.read(dynamic[1])
            size = struct.calcsize(dyn_fmt)
            entries = []
            for pos in range(0, len(data) - size + 1, size):
                tag, val = struct.unpack_from(dyn_fmt, data, pos)
                if tag == _DT_NULL:
                    break
                entries.append((tag, val))
            strtab = next((v for t, v in entries if t == _DT_STRTAB), None)
            # The string table is given as an address in memory; the loadable segments map it to the file.
            base = next((addr - vaddr + off for vaddr, filesz, off in loads
                         for addr in [strtab] if strtab is not None and vaddr <= addr < vaddr + filesz), None)
            if base is None:
                return None

            def text(offset: int) -> str:
                f.seek(base + offset)
                chunk = f.read(4096)
                return chunk.split(b"\0", 1)[0].decode("utf-8", "replace")

            def paths(tag: int) -> list[str]:
                return [p for t, v in entries if t == tag for p in text(v).split(":") if p]

            needed = [text(v) for t, v in entries if t == _DT_NEEDED]
            return ElfInfo(needed, paths(_DT_RPATH), paths(_DT_RUNPATH), (ident[4], machine))
    except (OSError, struct.error, ValueError):
        return None


def loader_dirs(conf: str | os.PathLike = "/etc/ld.so.conf") -> list[str]:
    """Folders the dynamic loader searches after LD_LIBRARY_PATH and an object's own paths:
    those in ld.so.conf (with its ``include`` lines) and the built-in defaults."""
    seen: list[str] = []

    def read(path: str, depth: int = 0) -> None:
        if depth > 8:
            return
        try:
            lines = Path(path).read_text(encoding="utf-8", errors="replace").splitlines()
        except OSError:
            return
        for line in lines:
            line = line.split("#", 1)[0].strip()
            if not line:
                continue
            if line.startswith("include"):
                pattern = line[len("include"):].strip()
                if not os.path.isabs(pattern):
                    pattern = os.path.join(os.path.dirname(path), pattern)
                for inc in sorted(glob.glob(pattern)):
                    read(inc, depth + 1)
            elif line.startswith("hwcap"):
                continue
            elif line not in seen:
                seen.append(line)

    read(os.fspath(conf))
    for default in ("/lib64", "/usr/lib64", "/lib", "/usr/lib"):
        if default not in seen:
            seen.append(default)
    return seen


def _expand(path: str, origin: str) -> str:
    # $ORIGIN (or ${ORIGIN}) is the folder of the object that names the path (ld.so(8)).
    return re.sub(r"\$(ORIGIN|\{ORIGIN\})", origin.replace("\\", "\\\\"), path)


def find_library(soname: str, info: ElfInfo, origin: str, env: dict[str, str] | None = None,
                 system_dirs: list[str] | None = None) -> str | None:
    """Where the loader would find ``soname`` for an object (``info``, in folder ``origin``),
    or None: its RPATH (when it has no RUNPATH), LD_LIBRARY_PATH, its RUNPATH, then the system
    folders — the order ld.so(8) documents. A library of another class or machine is skipped."""
    env = os.environ if env is None else env
    if "/" in soname:
        return soname if os.path.exists(soname) else None
    dirs = [] if info.runpath else [_expand(p, origin) for p in info.rpath]
    dirs += [p for p in env.get("LD_LIBRARY_PATH", "").split(":") if p]
    dirs += [_expand(p, origin) for p in info.runpath]
    dirs += loader_dirs() if system_dirs is None else system_dirs
    for folder in dirs:
        candidate = os.path.join(folder, soname)
        if os.path.exists(candidate):
            found = read_elf(candidate)
            if found is None or info.kind is None or found.kind == info.kind:
                return candidate
    return None


def xcb_plugin_path() -> Path | None:
    """The installed PySide6's xcb platform plugin, found without importing PySide6."""
    try:
        spec = importlib.util.find_spec("PySide6")
    except (ImportError, ValueError):
        return None
    if spec is None or not spec.submodule_search_locations:
        return None
    for root in spec.submodule_search_locations:
        plugin = Path(root) / "Qt" / "plugins" / "platforms" / "libqxcb.so"
        if plugin.exists():
            return plugin
    return None


def missing_libraries(start: str | os.PathLike, lookup=None) -> list[str]:
    """The libraries that ``start`` needs, directly or through the libraries it loads, that the
    loader would not find — in the order first met. ``lookup`` is :func:`find_library` (tests
    replace it to hide libraries)."""
    lookup = lookup or find_library
    top = read_elf(start)
    if top is None:
        return []
    system = loader_dirs()
    missing: list[str] = []
    seen: set[str] = set()
    todo = [(top, os.path.dirname(os.path.abspath(start)))]
    while todo:
        info, origin = todo.pop(0)
        for soname in info.needed:
            if soname in seen:
                continue
            seen.add(soname)
            where = lookup(soname, info, origin, None, system)
            if where is None:
                missing.append(soname)
                continue
            found = read_elf(where)
            if found is not None:
                todo.append((found, os.path.dirname(os.path.realpath(where))))
    return missing


def missing_xcb_libraries(lookup=None) -> list[str]:
    """The shared libraries Qt's X11 plugin needs that this system lacks (empty when none,
    or when there is no plugin to read; then the documented list is checked instead)."""
    plugin = xcb_plugin_path()
    if plugin is not None and read_elf(plugin) is not None:
        return missing_libraries(plugin, lookup)
    lookup = lookup or find_library
    anywhere = ElfInfo([], [], [], None)
    system = loader_dirs()
    return [s for s in KNOWN_XCB_NEEDS if lookup(s, anywhere, "", None, system) is None]


def debian_package(soname: str) -> str:
    """The Debian/Ubuntu package that usually holds a library, by the Debian Policy rule for
    naming shared-library packages (§8.1: libfoo.so.N is in libfooN; libfoo2.so.3 in libfoo2-3)."""
    name, _, version = soname.partition(".so.")
    if not version:
        return name.lower()
    version = version.split(".")[0]
    name = name.lower()
    return f"{name}-{version}" if name[-1:].isdigit() else f"{name}{version}"
