"""Starting the window: check that a display can be used, then open the files (or the demo).

A Qt platform plugin that cannot start aborts the whole process (a core dump, not an
exception), so the check happens before any Qt object exists: environment variables
first, then, on Linux with X11, every library the xcb plugin needs (read from the plugin
itself, :mod:`refplane.views.xcb_needs`), and on request a short probe in a child process.
Without a display the advice is ``refplane render``: an offscreen window would be invisible.
"""

from __future__ import annotations

import gc
import os
import subprocess
import sys

NO_DISPLAY = (
    "refplane: no display is available to open the window{why}.\n"
    "  Start refplane from a desktop session (or with X11 forwarding over ssh).\n"
    "  To draw a chart to a picture without a display, use: refplane render FILE -o chart.png"
)
NO_XCB = (
    "refplane: the window cannot start: Qt's X11 support failed to load{why}.\n"
    "  To draw a chart to a picture without a window, use: refplane render FILE -o chart.png"
)
MISSING_XCB_LIBRARIES = (
    "refplane: the window cannot start: Qt's X11 support (its xcb platform plugin) needs "
    "{count} that {are} not installed: {names}.\n"
    "  On Debian or Ubuntu: sudo apt install {packages}\n"
    "  (on other systems, install the packages that hold these files)\n"
    "  To draw a chart to a picture without a window, use: refplane render FILE -o chart.png"
)


def missing_libraries_message(missing: list[str]) -> str:
    """One message naming every missing library and the packages that usually hold them."""
    from refplane.views.xcb_needs import debian_package

    packages = list(dict.fromkeys(debian_package(s) for s in missing))
    return MISSING_XCB_LIBRARIES.format(
        count="a library" if len(missing) == 1 else f"{len(missing)} libraries",
        are="is" if len(missing) == 1 else "are", names=", ".join(missing), packages=" ".join(packages))


_PROBE = ("import sys\n"
          "from PySide6.QtGui import QGuiApplication\n"
          "app = QGuiApplication(sys.argv[:1])\n"
          "print(app.platformName())\n")


def display_problem(env: dict[str, str] | None = None, platform: str | None = None,
                    probe: bool = False) -> str | None:
    """Why the window cannot open here, in plain words, or None when it can.

    Parameters
    ----------
    env : mapping, optional
        Environment to judge (default ``os.environ``).
    platform : str, optional
        ``sys.platform`` to judge (for tests).
    probe : bool
        On Linux with X11, also start Qt in a child process to see whether the plugin loads
        (slower; the window uses the quick checks only unless REFPLANE_PROBE_DISPLAY=1).
    """
    env = dict(os.environ if env is None else env)
    platform = platform or sys.platform
    qpa = env.get("QT_QPA_PLATFORM", "").split(":")[0].strip().lower()
    if qpa in ("offscreen", "minimal", "vnc", "eglfs", "linuxfb"):
        return None
    if not platform.startswith("linux"):
        return None  # Windows and macOS always have their own platform plugin
    has_x = bool(env.get("DISPLAY"))
    has_wayland = bool(env.get("WAYLAND_DISPLAY"))
    if qpa == "xcb" and not has_x:
        return NO_DISPLAY.format(why=" (QT_QPA_PLATFORM=xcb but DISPLAY is not set)")
    if qpa.startswith("wayland") and not has_wayland:
        return NO_DISPLAY.format(why=" (QT_QPA_PLATFORM=wayland but WAYLAND_DISPLAY is not set)")
    if not has_x and not has_wayland:
        return NO_DISPLAY.format(why=" (neither DISPLAY nor WAYLAND_DISPLAY is set)")
    if has_wayland and qpa != "xcb":
        return None
    # From here Qt will use X11 (the xcb plugin).
    if not _x_server_reachable(env.get("DISPLAY", "")):
        return NO_DISPLAY.format(why=f" (no X server answers on DISPLAY={env.get('DISPLAY')})")
    missing = _missing_xcb_libraries()
    if missing:
        return missing_libraries_message(missing)
    if probe:
        return _probe(env)
    return None


def _x_server_reachable(display: str) -> bool:
    # A local display ":N" has a socket /tmp/.X11-unix/XN; anything else (ssh forwarding,
    # a remote host) is left for Qt to try.
    host, _, rest = display.partition(":")
    number = rest.split(".")[0]
    if host in ("", "unix") and number.isdigit():
        return os.path.exists(f"/tmp/.X11-unix/X{number}") or _abstract_socket(number)
    return True


def _abstract_socket(number: str) -> bool:
    try:
        with open("/proc/net/unix", encoding="utf-8", errors="replace") as handle:
            return f"@/tmp/.X11-unix/X{number}" in handle.read()
    except OSError:
        return False


def _missing_xcb_libraries() -> list[str]:
    # Read from the plugin's own ELF header, so every library it needs is checked, not one.
    from refplane.views.xcb_needs import missing_xcb_libraries

    try:
        return missing_xcb_libraries()
    except Exception:  # noqa: BLE001 - if we cannot tell, let Qt try
        return []


def _probe(env: dict[str, str]) -> str | None:
    """Start Qt in a child process; an abort there costs nothing here."""
    try:
        out = subprocess.run([sys.executable, "-c", _PROBE], env=env, capture_output=True,
                             text=True, timeout=20)
    except (OSError, subprocess.TimeoutExpired) as exc:
        return NO_DISPLAY.format(why=f" (checking the display failed: {exc})")
    if out.returncode == 0:
        return None
    text = out.stderr
    if "xcb" in text:
        missing = _missing_xcb_libraries()
        return missing_libraries_message(missing) if missing else NO_XCB.format(why="")
    last = next((ln for ln in reversed(text.strip().splitlines()) if ln.strip()), "")
    return NO_DISPLAY.format(why=f" ({last.strip()})" if last else "")


def run_window(files: list[str]) -> int:
    """Open the window on ``files``, or on the demo sweep when none are given; returns the exit status."""
    problem = display_problem(probe=os.environ.get("REFPLANE_PROBE_DISPLAY") == "1")
    if problem:
        print(problem, file=sys.stderr)
        return 2
    # Start-up creates a few hundred thousand objects that live as long as the program
    # (modules, classes, Qt wrappers). Python's cycle collector would scan them over and over
    # while they are made (about 50 ms here) and find almost nothing to free; hold it off
    # until the window is built, then freeze what was built so later collections skip it
    # (shorter collector pauses while markers are dragged, too).
    collector_was_on = gc.isenabled()
    gc.disable()
    try:
        _import_before_qt()
        app, window = _build_window(files)
    finally:
        gc.freeze()
        if collector_was_on:
            gc.enable()
    return int(app.exec())


#: Qt-free modules every window needs, imported before Qt (see :func:`_import_before_qt`).
BEFORE_QT = ("numpy", "refplane.session.model", "refplane.session.resolve",
             "refplane.session.jobs", "refplane.session.tools", "refplane.session.files",
             "refplane.session.plot_series", "refplane.analysis.files.loading",
             "refplane.analysis.files.touchstone", "refplane.analysis.lines.deembed")


def _import_before_qt() -> None:
    """Import the window's Qt-free modules (and numpy) before PySide6.

    Once PySide6 is imported, its import hook reads the source of every module imported after
    it, looking for its own feature switches; the analysis and session layers, psygnal and
    numpy never use them, and reading their sources cost about 30 ms of every start.
    """
    from importlib import import_module

    for name in BEFORE_QT:
        import_module(name)


def _build_window(files: list[str]):
    from PySide6.QtWidgets import QApplication

    from refplane.views import demo
    from refplane.views.icons import app_icon

    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setApplicationName("Refplane")
    app.setOrganizationName("Refplane")
    app.setWindowIcon(app_icon())
    import pyqtgraph as pg

    pg.setConfigOptions(antialias=True)
    from refplane.views.main_window import MainWindow

    path = None if files else demo.demo_path()
    if files:
        window = MainWindow(files=files)
    elif path is not None:
        window = MainWindow(files=[str(path)], markers_hz=demo.DEMO_MARKERS_HZ)
    else:
        window = MainWindow()
        window.statusBar().showMessage("Open a sweep with File ▸ Open, or drop files on the window.")
    screen = app.primaryScreen()
    if screen is not None and app.platformName() not in ("offscreen", "minimal"):
        # A virtual (offscreen) screen has no size a person sees; keep the window's own there.
        window.fit_to(screen.availableGeometry())
    window.show()
    return app, window
