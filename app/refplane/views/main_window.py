"""The main window: lays out and wires the chart, plots and panels; holds no RF logic.

Adding panels later
-------------------
- :meth:`MainWindow.add_side_panel` puts any widget in a dock (left column by default) and
  lists it under View ▸ Panels; e.g. the reference-plane offsets panel and the fit panel::

      window.add_side_panel("Reference plane", OffsetsPanel(window.state))
      window.add_side_panel("Fit", FitPanel(window.state), area=Qt.RightDockWidgetArea)

  (by default a panel goes in the left column under "Traces"; ``area`` puts it elsewhere).

- :meth:`MainWindow.add_tool_action` adds an entry to the Tools menu (shown once it has an
  entry), e.g. a calibration dialog::

      window.add_tool_action("Calibrate from standards…", lambda: CalibrationDialog(window.state, window).open())

Panels take :attr:`MainWindow.state` (a :class:`~refplane.session.model.Session`) and talk
to the rest of the window only through it.
"""

from __future__ import annotations

import os
from importlib import import_module
from typing import Callable, Sequence

from PySide6.QtCore import QFileSystemWatcher, QRect, QSettings, Qt, QTimer
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import (QDockWidget, QFileDialog, QFrame, QInputDialog, QLabel, QMainWindow,
                               QMessageBox, QProgressBar, QPushButton, QScrollArea, QSplitter,
                               QWidget)

from refplane.views.binding import bind
from refplane.views.folders import in_last_folder, last_folder, remember_folder
from refplane.views.loader import SweepLoader
from refplane.views.workers import Workers
from refplane.views.panels.marker_table import MarkerTable
from refplane.views.panels.trace_list import TraceList
from refplane.views.plots import CompanionPlots
from refplane.views.scene_controller import SceneController
from refplane.views.panels.tool_widgets import install_lazily
from refplane.views.smith_chart import SmithChart
from refplane.session.model import Session
from refplane.views.theme import THEMES, Theme

MAX_RECENT = 8
#: The window's first size (pixels): room for the chart, both plots and the panels.
DEFAULT_SIZE = (1440, 900)
#: Sweeps up to this many points are drawn in the plots as soon as they arrive, so the next
#: paint shows them complete; longer ones are drawn a plot at a time to keep the window lively.
DRAW_AT_ONCE_POINTS = 20_000

#: The tool panels: dock title, the module whose ``build(window)`` makes the panel, and where
#: the dock goes (beside the reference-plane panel unless said otherwise).
TOOL_DOCKS = (
    ("Antenna", "refplane.views.panels.antenna_panel", {}),
    ("Cable", "refplane.views.panels.cable_panel", {}),
    ("Uncertainty", "refplane.views.panels.uncertainty_panel", {}),
    ("Limits", "refplane.views.panels.limits_panel", {}),
    ("Time domain", "refplane.views.time_domain",
     {"beside": "Markers", "area": Qt.BottomDockWidgetArea}),
)


def _settings() -> QSettings:
    return QSettings("Refplane", "Refplane")


def _scrolled(widget: QWidget) -> QScrollArea:
    """``widget`` in a frameless scroll area that scrolls up and down, never sideways.

    A side panel's own minimum height (or a long line of a fit result) would otherwise set the
    window's minimum size; in a scroll area it only sets how far the panel scrolls. Sideways
    the panel follows the dock's width (labels wrap), so no horizontal scroll bar appears.
    """
    area = QScrollArea()
    area.setObjectName("panel-scroll")
    area.setFrameShape(QFrame.NoFrame)
    area.setWidgetResizable(True)
    area.setHorizontalScrollBarPolicy(Qt.ScrollBarAlwaysOff)
    area.setWidget(widget)
    # The dock is as wide as the panel needs (its widest control), while its height may shrink.
    area.setMinimumWidth(widget.minimumSizeHint().width()
                         + area.verticalScrollBar().sizeHint().width())
    return area


class MainWindow(QMainWindow):
    """Chart in the middle, frequency plots beside it, traces and markers in docks."""

    def __init__(self, state: Session | None = None, *, theme: str | None = None,
                 files: Sequence[str] = (), markers_hz: tuple[float, ...] = ()):
        """``files`` start reading at once (with ``markers_hz`` as in :meth:`open_files`)."""
        super().__init__()
        self.state = state if state is not None else Session()
        # One controller resolves the session once per change and hands the frozen Scene to
        # every view (chart, plots, panels that take one); the views send edits to the session.
        self.scene_controller = SceneController(self.state, self)
        # One worker facility for every job of the window: reads, fits, estimates.
        self.workers = Workers(self)
        # Start reading before the widgets are built: the worker reads while the window is
        # put together, and the result (delivered by the event loop) is there for the first paint.
        self._pending_markers: dict[str, tuple[float, ...]] = {}
        self._session_load = None  # a session being opened: its document and the sweeps read so far
        self.session_path: str | None = None
        self.loader = SweepLoader(self, workers=self.workers)
        self.loader.loaded.connect(self._on_loaded)
        self.loader.failed.connect(self._on_load_failed)
        if files:
            self.open_files(list(files), markers_hz=markers_hz)
        self.setWindowTitle("Refplane")
        self.setAcceptDrops(True)
        self.setDockOptions(QMainWindow.AnimatedDocks | QMainWindow.AllowTabbedDocks)
        settings = _settings()
        # A new session starts in the theme last chosen; a session handed in keeps its own.
        chosen = theme if theme in THEMES else None
        if chosen is None and state is None:
            saved = str(settings.value("theme", "light"))
            chosen = saved if saved in THEMES else "light"
        if chosen is not None:
            self.state.set_display(theme=chosen)
        self.theme: Theme = THEMES.get(self.state.display.theme, THEMES["light"])

        self.chart = SmithChart(self.state, theme=self.theme, controller=self.scene_controller)
        self.plots = CompanionPlots(self.state, theme=self.theme, controller=self.scene_controller)
        self.splitter = QSplitter(Qt.Horizontal)
        self.splitter.addWidget(self.chart)
        self.splitter.addWidget(self.plots)
        self.splitter.setStretchFactor(0, 1)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setChildrenCollapsible(False)
        self.setCentralWidget(self.splitter)

        self.trace_list = TraceList(self.state, controller=self.scene_controller)
        self.marker_table = MarkerTable(self.state, controller=self.scene_controller)
        self.docks: dict[str, QDockWidget] = {}
        self._panels_menu = None
        self._build_menus()
        # Traces (and panels added later) down the left; markers along the bottom, where a
        # column per marker has room.
        self.setCorner(Qt.BottomLeftCorner, Qt.LeftDockWidgetArea)
        traces = self._dock("Traces", self.trace_list, Qt.LeftDockWidgetArea)
        markers = self._dock("Markers", self.marker_table, Qt.BottomDockWidgetArea)
        self.resizeDocks([traces], [330], Qt.Horizontal)
        self.resizeDocks([markers], [230], Qt.Vertical)
        self._add_tool_panels()
        # Keep the side column narrow: the chart is what the window is for.
        self.resizeDocks([traces], [340], Qt.Horizontal)
        # A few traces fit in a short list; the panel under it gets the height.
        self.resizeDocks([traces], [150], Qt.Vertical)

        self.loader.busyChanged.connect(self._on_busy)
        self.watcher = QFileSystemWatcher(self)
        self.watcher.fileChanged.connect(self._on_file_changed)
        self._reload_timer: dict[str, QTimer] = {}
        self._build_status_bar()
        if self.loader.busy:
            self._on_busy(True, self.loader.describe())
        bind(self, self.state.tracesChanged, self._update_title)
        bind(self, self.state.tracesChanged, self._watch_files)
        self.apply_theme(self.theme, widgets=False)  # chart and plots were built in this theme
        self.resize(*DEFAULT_SIZE)

    def fit_to(self, available: QRect) -> None:
        """Shrink the window to fit ``available`` (a screen's free area) and centre it there.

        The default size suits a desktop monitor; on a laptop screen the window would run off
        the edge, with the right-hand plots out of reach.
        """
        margin_w, margin_h = 24, 48  # room for the window frame and title bar
        w = min(self.width(), max(640, available.width() - margin_w))
        h = min(self.height(), max(480, available.height() - margin_h))
        self.resize(w, h)
        if w < 1200:
            # On a narrow screen the side column gives up some width to the chart.
            self.resizeDocks([self.docks["Traces"]], [300], Qt.Horizontal)
        self.move(available.x() + max(0, (available.width() - w) // 2),
                  available.y() + max(0, (available.height() - h - margin_h // 2) // 2))

    # ================================================================ layout
    def _dock(self, title: str, widget: QWidget, area, *, scroll: bool = False) -> QDockWidget:
        dock = QDockWidget(title, self)
        dock.setObjectName(f"dock-{title}")
        dock.setWidget(_scrolled(widget) if scroll else widget)
        dock.setFeatures(QDockWidget.DockWidgetMovable | QDockWidget.DockWidgetClosable
                         | QDockWidget.DockWidgetFloatable)
        self.addDockWidget(area, dock)
        self.docks[title] = dock
        self._panels_menu.addAction(dock.toggleViewAction())
        return dock

    def _add_tool_panels(self) -> None:
        """The reference-plane and fit panels (tabbed under the trace list) and the calibration dialog."""
        from refplane.views.panels.offsets_panel import OffsetsPanel

        plane = self.add_side_panel("Reference plane", OffsetsPanel(self.state, workers=self.workers))
        # The fit panel starts behind the reference-plane tab: build it when first shown, so
        # start-up does not pay for a panel nobody has looked at yet.
        fit = self.add_side_panel("Fit", QWidget())
        fit.visibilityChanged.connect(self._build_fit_panel)
        self.tabifyDockWidget(plane, fit)
        plane.raise_()
        # The tool panels' modules are imported when a panel is first shown, not at start-up.
        for title, module, where in TOOL_DOCKS:
            install_lazily(self, title, lambda m=module: import_module(m).build(self), **where)
        self.add_tool_action("Calibrate from standards…", self._open_calibration, shortcut="Ctrl+K")

    def _build_fit_panel(self, visible: bool) -> None:
        if not visible:
            return  # a tab hidden at start-up: nothing to build (nor to import) yet
        from refplane.views.panels.fit_panel import FitPanel

        dock = self.docks["Fit"]
        if not isinstance(self.panel("Fit"), FitPanel):
            area = dock.widget()
            placeholder = area.takeWidget()
            area.setWidget(FitPanel(self.state, workers=self.workers))
            placeholder.deleteLater()

    def fit_panel(self):
        """The fit panel (built now if it has not been shown yet)."""
        self._build_fit_panel(True)
        return self.panel("Fit")

    def panel(self, title: str) -> QWidget:
        """The panel shown in the dock called ``title`` (inside its scroll area, if it has one)."""
        widget = self.docks[title].widget()
        return widget.widget() if isinstance(widget, QScrollArea) else widget

    def _open_calibration(self) -> None:
        from refplane.views.calibration_dialog import CalibrationDialog  # imported when first used

        CalibrationDialog(self.state, self, theme=self.theme).open()

    def add_side_panel(self, title: str, widget: QWidget, area=Qt.LeftDockWidgetArea) -> QDockWidget:
        """Add a panel in a dock, below the trace list unless ``area`` says otherwise; returns the dock.

        The panel appears under View ▸ Panels so it can be hidden and shown. Docks in the same
        area are stacked; drag a dock's title to tab or float it. The panel scrolls when the
        window is too small for it (a laptop screen), so it never makes the window larger.
        """
        return self._dock(title, widget, area, scroll=True)

    def add_tool_action(self, text: str, triggered: Callable[[], object], *,
                        shortcut: str | None = None) -> QAction:
        """Add an entry to the Tools menu (e.g. opening a calibration dialog); returns the action."""
        action = QAction(text, self)
        if shortcut:
            action.setShortcut(QKeySequence(shortcut))
        action.triggered.connect(lambda _checked=False: triggered())
        self.tools_menu.addAction(action)
        self.tools_menu.menuAction().setVisible(True)
        return action

    def _build_menus(self) -> None:
        bar = self.menuBar()
        file_menu = bar.addMenu("&File")
        self.open_action = file_menu.addAction("&Open sweeps…", self.ask_open)
        self.open_action.setShortcut(QKeySequence.Open)
        self.recent_menu = file_menu.addMenu("Open &recent")
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        self.reload_action = file_menu.addAction("Reload files when they change on disk")
        self.reload_action.setCheckable(True)
        self.reload_action.setChecked(_settings().value("reload_on_change", "false") == "true")
        self.reload_action.toggled.connect(
            lambda on: _settings().setValue("reload_on_change", "true" if on else "false"))
        file_menu.addSeparator()
        self.open_session_action = file_menu.addAction("Open session…", self.ask_open_session)
        self.save_session_action = file_menu.addAction("Save session", self.save_session_now)
        self.save_session_action.setShortcut(QKeySequence.Save)
        file_menu.addAction("Save session as…", self.ask_save_session)
        file_menu.addSeparator()
        file_menu.addAction("Report…", self.ask_report)
        file_menu.addAction("Save chart picture…", lambda: self.ask_export("chart"))
        file_menu.addAction("Save plots picture…", lambda: self.ask_export("plots"))
        file_menu.addAction("Export marker table…", self.ask_export_table)
        file_menu.addSeparator()
        file_menu.addAction("Close all traces", self.state.clear)
        quit_action = file_menu.addAction("&Quit", self.close)
        quit_action.setShortcut(QKeySequence.Quit)

        edit = bar.addMenu("&Edit")
        self.undo_action = edit.addAction("Undo", self.undo)
        self.undo_action.setShortcut(QKeySequence.Undo)
        bind(self, self.state.undoChanged, self._on_undo_changed)
        self._on_undo_changed()

        view = bar.addMenu("&View")
        self.admittance_action = view.addAction("Admittance grid")
        self.admittance_action.setCheckable(True)
        self.admittance_action.setChecked(self.state.display.admittance_grid)
        self.admittance_action.toggled.connect(self.chart.set_admittance_grid)
        self.vswr_action = view.addAction("Constant-VSWR circle…", self.ask_vswr)
        view.addAction("Reset chart view", self.chart.reset_view).setShortcut(QKeySequence("Ctrl+0"))
        self.chart_z0_action = view.addAction("Chart reference impedance…", self.ask_chart_z0)
        self.log_action = view.addAction("Log frequency axis")
        self.log_action.setCheckable(True)
        self.log_action.setChecked(self.state.display.log_frequency)
        self.log_action.toggled.connect(lambda on: self.state.set_display(log_frequency=on))
        bind(self, self.state.displayChanged, self._on_display_changed)
        theme_menu = view.addMenu("Theme")
        group = QActionGroup(self)
        self.theme_actions = {}
        for key, theme in THEMES.items():
            action = theme_menu.addAction(theme.name)
            action.setCheckable(True)
            action.setChecked(theme is self.theme)
            action.triggered.connect(lambda _c=False, t=theme, k=key: self.set_theme(k))
            group.addAction(action)
            self.theme_actions[key] = action
        self._panels_menu = view.addMenu("Panels")

        self._build_traces_menu(bar)

        markers = bar.addMenu("&Markers")
        markers.addAction("Add marker at a frequency…", self._focus_marker_entry).setShortcut(QKeySequence("Ctrl+M"))
        markers.addAction("Remove current marker", self._remove_current_marker)
        markers.addAction("Remove all markers", self.state.clear_markers)
        markers.addAction("Copy marker table", self.marker_table.copy_to_clipboard)
        markers.addSeparator()
        from refplane.views.find_menu import fill_find_menu

        self.find_menu = fill_find_menu(markers.addMenu("Find"), self.state, self, self._say_found,
                                        controller=self.scene_controller)

        self.tools_menu = bar.addMenu("&Tools")
        self.tools_menu.menuAction().setVisible(False)  # shown once a tool is added

        help_menu = bar.addMenu("&Help")
        help_menu.addAction("Working safely…", self.show_safety)
        help_menu.addAction("Using the window…", self.show_usage)
        help_menu.addAction("About Refplane…", self.show_about)

    def undo(self) -> None:
        """Edit ▸ Undo: bring back the last closed trace or removed markers."""
        done = self.state.undo()
        if done:
            self.statusBar().showMessage(f"Undone: {done}", 4000)

    def _on_undo_changed(self) -> None:
        text = self.state.undo_text()
        self.undo_action.setEnabled(text is not None)
        self.undo_action.setText(f"Undo {text}" if text else "Undo")

    def _build_traces_menu(self, bar) -> None:
        traces = bar.addMenu("T&races")
        self.store_memory_action = traces.addAction("Store current trace as memory", self.store_memory)
        self.store_memory_action.setShortcut(QKeySequence("Ctrl+Shift+M"))
        self.forget_memory_action = traces.addAction("Forget the memory", self.state.clear_memory)
        traces.addSeparator()
        self.relative_db_action = traces.addAction(
            "Show relative to memory (dB and degrees)",
            lambda: self.state.set_display(upper_plot="memory_db", lower_plot="memory_deg"))
        self.relative_ratio_action = traces.addAction(
            "Show divided by memory",
            lambda: self.state.set_display(upper_plot="memory_ratio", lower_plot="memory_deg"))
        self.plain_plots_action = traces.addAction(
            "Show return loss and R, X again",
            lambda: self.state.set_display(upper_plot="return_loss", lower_plot="r_x"))
        traces.addSeparator()
        self.close_trace_action = traces.addAction("Close current trace", self.close_current_trace)
        self.close_trace_action.setShortcut(QKeySequence("Ctrl+W"))
        self.traces_menu = traces
        bind(self, self.state.memoryChanged, self._on_memory_changed)
        bind(self, self.state.currentTraceChanged, lambda _tid: self._on_memory_changed())
        self._on_memory_changed()

    def _on_memory_changed(self) -> None:
        has_trace = self.state.current_trace != -1
        has_memory = self.state.memory is not None
        self.store_memory_action.setEnabled(has_trace)
        self.close_trace_action.setEnabled(has_trace)
        for action in (self.forget_memory_action, self.relative_db_action, self.relative_ratio_action):
            action.setEnabled(has_memory)
        if has_memory:
            self.forget_memory_action.setText(f"Forget the memory ({self.state.memory.name})")
        else:
            self.forget_memory_action.setText("Forget the memory")

    def store_memory(self) -> None:
        """Store the current trace as the memory (Traces ▸ Store current trace as memory)."""
        if self.state.current_trace == -1:
            self.statusBar().showMessage("Open a sweep first: the current trace is what is stored.", 5000)
            return
        self.state.store_memory(self.state.current_trace)
        self.statusBar().showMessage(
            f"Stored {self.state.memory.name} as the memory; Traces ▸ Show relative to memory compares "
            "the traces with it.", 8000)

    def close_current_trace(self) -> None:
        if self.state.current_trace != -1:
            self.state.remove_trace(self.state.current_trace)

    def ask_chart_z0(self) -> None:
        """Ask for the chart's reference impedance (blank: each file's own)."""
        from refplane.analysis.errors import AnalysisError
        from refplane.analysis.units import parse_resistance

        current = self.state.display.chart_z0_ohm
        text, ok = QInputDialog.getText(
            self, "Chart reference impedance",
            "Reference impedance of the chart, plots and readings, e.g. 75 Ω.\n"
            "Leave empty to use each file's own (usually 50 Ω).",
            text="" if current is None else f"{current:g} Ω")
        if not ok:
            return
        try:
            value = parse_resistance(text) if text.strip() else None
            self.state.set_display(chart_z0_ohm=value)
        except AnalysisError as exc:
            self.show_error("Not a reference impedance", str(exc))

    def _on_display_changed(self, name: str) -> None:
        d = self.state.display
        for action, value in ((self.log_action, d.log_frequency), (self.admittance_action, d.admittance_grid)):
            if action.isChecked() != value:
                action.blockSignals(True)
                action.setChecked(value)
                action.blockSignals(False)
        if name == "theme" and THEMES.get(d.theme) is not self.theme:
            self.theme = THEMES[d.theme]
            self.apply_theme(self.theme)
            self.theme_actions[d.theme].setChecked(True)

    def _build_status_bar(self) -> None:
        from PySide6.QtWidgets import QApplication

        from refplane.views.why_disabled import WhyDisabled

        self.why_disabled = WhyDisabled(self)
        app = QApplication.instance()
        if app is not None:
            app.installEventFilter(self.why_disabled)
        status = self.statusBar()
        self.progress = QProgressBar()
        self.progress.setRange(0, 0)  # the readers report no fraction: an honest "busy"
        self.progress.setMaximumWidth(160)
        self.progress.setVisible(False)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setVisible(False)
        self.cancel_button.clicked.connect(self.loader.cancel)
        self.busy_label = QLabel("")
        status.addPermanentWidget(self.busy_label)
        status.addPermanentWidget(self.progress)
        status.addPermanentWidget(self.cancel_button)

    # ================================================================= files
    def open_files(self, paths: list[str], *, markers_hz: tuple[float, ...] = ()) -> None:
        """Read files in the background; each becomes a trace (errors open a dialog).

        ``markers_hz`` places markers on each new trace once it has loaded (used for the demo).
        """
        from refplane.session.files import is_session_file

        for path in paths:
            path = os.fspath(path)
            if is_session_file(path):
                self.open_session(path)
                continue
            if markers_hz:
                self._pending_markers[path] = tuple(markers_hz)
            self.loader.load(path)

    def ask_open(self) -> None:
        from refplane.analysis.files.loading import SWEEP_PATTERNS

        folder = last_folder("sweeps")
        patterns = " ".join(SWEEP_PATTERNS)
        paths, _ = QFileDialog.getOpenFileNames(
            self, "Open sweeps", folder, f"Sweeps ({patterns});;Touchstone (*.s?p *.snp *.ts);;"
                                         "CSV (*.csv);;All files (*)")
        if paths:
            remember_folder("sweeps", paths[0])
            self.open_files(paths)

    def recent_files(self) -> list[str]:
        """Recently opened files, newest first."""
        value = _settings().value("recent_files", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def _remember(self, path: str) -> None:
        from refplane.views.demo import demo_path

        path = os.path.abspath(path)
        demo = demo_path()
        if demo is not None and path == os.path.abspath(demo):
            return  # the bundled demo is not one of the user's files: keep it out of the list
        files = [path] + [p for p in self.recent_files() if p != path]
        _settings().setValue("recent_files", files[:MAX_RECENT])

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        files = self.recent_files()
        for path in files:
            action = self.recent_menu.addAction(os.path.basename(path))
            action.setToolTip(path)
            action.setStatusTip(path)
            action.triggered.connect(lambda _c=False, p=path: self.open_files([p]))
        if not files:
            self.recent_menu.addAction("No recent files").setEnabled(False)
        else:
            self.recent_menu.addSeparator()
            self.recent_menu.addAction("Forget recent files",
                                       lambda: _settings().setValue("recent_files", []))

    def _on_loaded(self, request, sweep) -> None:
        if self._session_load is not None and request in self._session_load["requests"]:
            self._session_file_loaded(request, sweep)
            return
        if request.reload_of is not None and request.reload_of in self.state.trace_ids():
            self.state.replace_sweep(request.reload_of, sweep)
            self.statusBar().showMessage(f"Reloaded {os.path.basename(request.path)}", 4000)
            self._watch_files()
            return
        # Traces keep the order in which the files were named, whatever order the reads end in.
        # The trace and its markers reach the views as one Scene, not one per step.
        with self.scene_controller.held():
            tid = self.state.add_sweep(sweep, order=request.order)
            for f in self._pending_markers.pop(request.path, ()):
                if sweep.freq_hz[0] <= f <= sweep.freq_hz[-1]:
                    self.state.add_marker(tid, f)
        if sweep.n_points <= DRAW_AT_ONCE_POINTS:
            self.plots.flush()
        self._remember(request.path)
        self.statusBar().showMessage(
            f"Opened {os.path.basename(request.path)}: {sweep.n_points} points, {sweep.n_ports} port(s)", 5000)

    def _on_load_failed(self, request, message: str) -> None:
        if self._session_load is not None and request in self._session_load["requests"]:
            self._session_file_loaded(request, None, message)
            return
        # Several files that fail together make one dialog listing them all.
        self._failures.append(message)
        if len(self._failures) == 1:
            QTimer.singleShot(0, self._report_failures)

    _failures: list = []

    def _report_failures(self) -> None:
        if self.loader.busy:  # wait for the rest of the batch, then say it once
            QTimer.singleShot(100, self._report_failures)
            return
        failures, self._failures = self._failures, []
        if len(failures) == 1:
            self.show_error("This file could not be opened", failures[0])
        elif failures:
            self.show_error(f"{len(failures)} files could not be opened", "\n".join(failures))

    # ============================================================== sessions
    def ask_open_session(self) -> None:
        from refplane.session.files import SUFFIX

        folder = last_folder("sessions")
        path, _ = QFileDialog.getOpenFileName(self, "Open session", folder,
                                              f"Refplane sessions (*{SUFFIX});;All files (*)")
        if path:
            remember_folder("sessions", path)
            self.open_session(path)

    def ask_save_session(self) -> str | None:
        from refplane.session.files import SUFFIX

        suggested = self.session_path or in_last_folder("sessions", f"session{SUFFIX}")
        path, _ = QFileDialog.getSaveFileName(self, "Save session", suggested,
                                              f"Refplane sessions (*{SUFFIX})")
        if not path:
            return None
        path = self.with_ending(path, SUFFIX, (SUFFIX,))
        if path is None:
            return None
        remember_folder("sessions", path)
        # The save dialog (or with_ending) has asked before replacing an existing file, once.
        return self.save_session(path, overwrite=True)

    def ask_report(self) -> str | None:
        """File ▸ Report…: a document (HTML or PDF) of every open trace, its markers and fit."""
        if not self.state.traces():
            self.show_error("Nothing to report", "Open a sweep first.")
            return None
        path, _ = QFileDialog.getSaveFileName(self, "Write a report", "refplane-report.html",
                                              "Web page (*.html);;PDF document (*.pdf)")
        if not path:
            return None
        path = self.with_ending(path, ".html", (".html", ".htm", ".pdf"))
        if path is None:
            return None
        # The save dialog (or with_ending) has asked before replacing an existing file, once.
        return self.write_report(path, overwrite=True)

    def write_report(self, path: str, *, overwrite: bool = False) -> str | None:
        """Write the report of the current session; problems are shown, never raised."""
        from refplane.analysis.errors import AnalysisError
        from refplane.report.build import write_report
        from refplane.report.from_session import session_sections

        try:
            written = write_report(session_sections(self.state), path, overwrite=overwrite)
        except (AnalysisError, OSError) as exc:
            self.show_error("The report could not be written", str(exc))
            return None
        self.statusBar().showMessage(f"Wrote {written}", 5000)
        return str(written)

    def with_ending(self, path: str, ending: str, accepted: tuple[str, ...] | None) -> str | None:
        """The path a save dialog returned, with ``ending`` added when it lacks one it accepts.

        The dialog asked about replacing the name as typed; when adding the ending names another
        file that exists, ask about that one (once). None when the person says no.
        """
        lacks = (not os.path.splitext(path)[1]) if accepted is None else not path.lower().endswith(accepted)
        if not lacks:
            return path
        path += ending
        if os.path.exists(path) and not self.confirm_replace(path):
            return None
        return path

    def confirm_replace(self, path: str) -> bool:
        """Ask once before replacing ``path`` (a method so tests can answer for the person)."""
        answer = QMessageBox.question(self, "Replace the file?",
                                      f"{os.path.basename(path)} exists already in {os.path.dirname(path)}. "
                                      "Replace it?", QMessageBox.Yes | QMessageBox.No, QMessageBox.No)
        return answer == QMessageBox.Yes

    def save_session_now(self) -> str | None:
        """Save to the session's own file (File ▸ Save session), or ask where the first time."""
        if self.session_path is None:
            return self.ask_save_session()
        return self.save_session(self.session_path, overwrite=True)

    def save_session(self, path: str, *, overwrite: bool = False) -> str | None:
        """Write the whole session to ``path``; problems are shown, never raised."""
        from refplane.analysis.errors import AnalysisError
        from refplane.session.files import save_session

        try:
            written = save_session(self.state, path, overwrite=overwrite)
        except (AnalysisError, OSError) as exc:
            self.show_error("The session could not be saved", str(exc))
            return None
        self.session_path = str(written)
        self.statusBar().showMessage(f"Saved session {written}", 5000)
        return str(written)

    def open_session(self, path: str) -> None:
        """Open a session file: close what is open, read its sweeps off the UI thread, restore.

        A sweep file that changed since the session was saved is opened as it is now, with a
        note; a missing one is offered to be located or skipped.
        """
        from refplane.analysis.errors import AnalysisError
        from refplane.session.files import read_session

        try:
            doc = read_session(path)
        except AnalysisError as exc:
            self.show_error("This session could not be opened", str(exc))
            return
        files = list(doc.files)
        for i, f in enumerate(files):
            if f.status == "missing":
                located = self.ask_locate(f)
                if located:
                    from dataclasses import replace

                    files[i] = replace(f, path=located, status="changed")
        with self.scene_controller.held():  # one Scene for the views, not one per step
            self.state.clear(undoable=False)
            self.state.clear_markers(undoable=False)
            self.state.forget_undo()
        self.session_path = os.path.abspath(path)
        requests = {}
        self._session_load = {"doc": doc, "requests": requests, "sweeps": {}, "errors": [],
                              "files": files}
        for f in files:
            if f.path is not None:
                requests[self.loader.load(f.path)] = f.index
        if not requests:
            self._finish_session_load()

    def ask_locate(self, missing) -> str | None:
        """Ask where a missing sweep file went; None skips it (a method so tests can replace it)."""
        box = QMessageBox(QMessageBox.Question, "A sweep file is missing", missing.note(),
                          QMessageBox.NoButton, self)
        locate = box.addButton("Locate…", QMessageBox.AcceptRole)
        box.addButton("Skip it", QMessageBox.RejectRole)
        box.exec()
        if box.clickedButton() is not locate:
            return None
        path, _ = QFileDialog.getOpenFileName(self, f"Where is {os.path.basename(missing.recorded)}?",
                                              last_folder("sweeps"))
        if path:
            remember_folder("sweeps", path)
        return path or None

    def _session_file_loaded(self, request, sweep, error: str | None = None) -> None:
        load = self._session_load
        index = load["requests"][request]
        if sweep is not None:
            load["sweeps"][index] = sweep
        else:
            load["errors"].append(error)
        if len(load["sweeps"]) + len(load["errors"]) == len(load["requests"]):
            self._finish_session_load()

    def _finish_session_load(self) -> None:
        from refplane.analysis.errors import AnalysisError
        from refplane.session.files import SessionDocument, build_session

        load, self._session_load = self._session_load, None
        doc = load["doc"]
        doc = SessionDocument(path=doc.path, data=doc.data, files=tuple(load["files"]))
        try:
            with self.scene_controller.held():  # the views draw the restored work once
                _session, notes = build_session(doc, load["sweeps"], self.state)
        except AnalysisError as exc:
            self.show_error("This session could not be opened", str(exc))
            return
        self.plots.flush()
        self._refit_restored()
        problems = notes + load["errors"]
        if problems:
            self.show_error("The session was opened with some differences", "\n".join(problems))
        self.statusBar().showMessage(f"Opened session {os.path.basename(doc.path)}", 5000)

    def _refit_restored(self) -> None:
        """Fit the trace that carried the fitted curve again, so the fit panel shows its result
        (the session keeps the settings and the curve, not the fit's tables)."""
        owner = self.state.fit.overlay_trace
        if owner is None or owner not in self.state.trace_ids():
            return
        current = self.state.current_trace
        self.state.set_current_trace(owner)
        self.fit_panel().fit()  # same settings, same sweep: the same fit, off the UI thread
        self.state.set_current_trace(current if current in self.state.trace_ids() else owner)

    def _on_busy(self, busy: bool, text: str) -> None:
        self.progress.setVisible(busy)
        self.cancel_button.setVisible(busy)
        self.busy_label.setText(text)

    def _watch_files(self) -> None:
        wanted = {t.source for t in self.state.traces() if t.source and os.path.exists(t.source)}
        watched = set(self.watcher.files())
        if watched - wanted:
            self.watcher.removePaths(list(watched - wanted))
        if wanted - watched:
            self.watcher.addPaths(list(wanted - watched))

    def _on_file_changed(self, path: str) -> None:
        if not self.reload_action.isChecked():
            return
        # Editors and instruments write in bursts; wait for the writing to settle.
        timer = self._reload_timer.get(path)
        if timer is None:
            timer = self._reload_timer[path] = QTimer(self)
            timer.setSingleShot(True)
            timer.timeout.connect(lambda p=path: self._reload(p))
        timer.start(300)

    def _reload(self, path: str) -> None:
        for t in self.state.traces():
            if t.source and os.path.abspath(t.source) == os.path.abspath(path) and os.path.exists(path):
                self.loader.load(path, reload_of=t.id)

    # --------------------------------------------------------- drag and drop
    def dragEnterEvent(self, ev) -> None:
        from refplane.analysis.files.loading import is_sweep_file

        urls = ev.mimeData().urls() if ev.mimeData().hasUrls() else []
        if any(u.isLocalFile() and is_sweep_file(u.toLocalFile()) for u in urls):
            ev.acceptProposedAction()
        else:
            ev.ignore()

    def dropEvent(self, ev) -> None:
        paths = [u.toLocalFile() for u in ev.mimeData().urls() if u.isLocalFile()]
        if paths:
            self.open_files(paths)
            ev.acceptProposedAction()

    # ================================================================ export
    def ask_table_path(self) -> str | None:
        """Ask where to write the marker table (a method so tests can replace the dialog)."""
        path, _ = QFileDialog.getSaveFileName(self, "Export marker table",
                                              in_last_folder("tables", "markers.csv"),
                                              "CSV, comma-separated (*.csv)")
        if path:
            remember_folder("tables", path)
        return path or None

    def ask_export_table(self) -> None:
        """File ▸ Export marker table…: the table as CSV numbers, as Copy table puts them."""
        if not self.state.markers():
            self.statusBar().showMessage("No markers yet: place one (click a trace, or Markers ▸ Find) first.", 6000)
            return
        path = self.ask_table_path()
        if not path:
            return
        path = self.with_ending(path, ".csv", None)
        if path is None:
            return
        self.export_table(path, overwrite=True)  # the save dialog (or with_ending) has asked, once

    def export_table(self, path: str, *, overwrite: bool = False) -> str | None:
        """Write the marker table as CSV (units in the header row, plain numbers)."""
        from refplane.analysis.errors import AnalysisError
        from refplane.analysis.files.fileio import write_text_atomic

        try:
            written = write_text_atomic(path, self.marker_table.as_tsv(delimiter=","), overwrite=overwrite)
        except (AnalysisError, OSError) as exc:
            self.show_error("The marker table could not be written", str(exc))
            return None
        self.statusBar().showMessage(f"Wrote {written}", 5000)
        return str(written)

    def ask_save_path(self, title: str, suggested: str) -> str | None:
        """Ask where to save a picture (a method so tests can replace the dialog)."""
        path, _ = QFileDialog.getSaveFileName(self, title, in_last_folder("pictures", suggested),
                                              "PNG picture (*.png);;SVG drawing (*.svg)")
        if path:
            remember_folder("pictures", path)
        return path or None

    def ask_export(self, what: str) -> None:
        path = self.ask_save_path(f"Save {what} picture", f"refplane-{what}.png")
        if not path:
            return
        path = self.with_ending(path, ".png", None)
        if path is None:
            return
        try:
            # The file dialog has already asked before replacing an existing file.
            self.export(what, path, overwrite=True)
        except Exception as exc:  # noqa: BLE001 - any failure is reported, the window stays up
            self.show_error("The picture could not be saved", str(exc))
        else:
            self.statusBar().showMessage(f"Saved {path}", 5000)

    def export(self, what: str, path: str, *, size: tuple[int, int] | None = None,
               overwrite: bool = False):
        """Save the chart (``what="chart"``) or the plots (``"plots"``) as PNG or SVG.

        With ``size`` (width, height) the picture is drawn at that size in pixels by a twin
        of the widget on the same state; without it, at the widget's present size.
        """
        from refplane.views import export

        if what == "chart":
            # The chart picture is drawn from the session's scene, as `refplane render --session`
            # draws it: traces, markers and a legend of readings, no hover line or controls.
            from refplane.views.render import draw_session

            return draw_session(self.state, path, size=size or (self.chart.width(), self.chart.height() + 140),
                                overwrite=overwrite, theme=self.theme, scene=self.scene_controller.scene())
        if what == "plots":
            widget = self.plots
            for plot in self.plots.plots():
                plot.flush()
        else:
            raise ValueError(what)
        if size is None:
            return export.save_widget(widget, path, overwrite=overwrite, background=self.theme.chart_bg)
        twin = self._twin(what)
        try:
            twin.resize(*size)
            twin.setAttribute(Qt.WA_DontShowOnScreen, True)
            twin.show()
            from PySide6.QtWidgets import QApplication

            QApplication.processEvents()
            return export.save_widget(twin, path, overwrite=overwrite, background=self.theme.chart_bg)
        finally:
            twin.close()
            twin.deleteLater()

    def _twin(self, what: str) -> QWidget:
        # The twin takes the same Scenes, so it shows the same quantities, axes and band.
        return CompanionPlots(self.state, theme=self.theme, controller=self.scene_controller)

    # ================================================================= view
    def ask_vswr(self) -> None:
        current = self.chart.vswr or 2.0
        value, ok = QInputDialog.getDouble(self, "Constant-VSWR circle",
                                           "VSWR (1 hides the circle):", current, 1.0, 100.0, 2)
        if ok:
            self.chart.set_vswr_circle(None if value <= 1.0 else value)

    def set_theme(self, key: str) -> None:
        """Switch between the light and dark theme (a session option; also the default for new ones)."""
        _settings().setValue("theme", key)
        self.state.set_display(theme=key)

    def apply_theme(self, theme: Theme, *, widgets: bool = True) -> None:
        """Colour the window: the application's palette, and the chart and plots."""
        from PySide6.QtWidgets import QApplication

        from refplane.views import theme as theme_module

        app = QApplication.instance()
        if app is not None:
            theme_module.apply(app, theme)
        if widgets:
            self.chart.set_theme(theme)
            self.plots.set_theme(theme)

    def _focus_marker_entry(self) -> None:
        self.docks["Markers"].show()
        self.marker_table.entry.setFocus()

    def _say_found(self, text: str, passing: bool = False) -> None:
        """Report a search from the menu in the marker panel (news passes after a few seconds)."""
        self.docks["Markers"].show()
        self.marker_table._say(text, passing)

    def _remove_current_marker(self) -> None:
        if self.state.current_marker != -1:
            self.state.remove_marker(self.state.current_marker)

    def _update_title(self) -> None:
        names = [t.name for t in self.state.traces()]
        if not names:
            self.setWindowTitle("Refplane")
        elif len(names) == 1:
            self.setWindowTitle(f"{names[0]} — Refplane")
        else:
            self.setWindowTitle(f"{names[0]} and {len(names) - 1} more — Refplane")

    # ========================================================== messages
    def show_error(self, title: str, message: str) -> None:
        """Show a problem without blocking the window (tests replace this method)."""
        box = QMessageBox(QMessageBox.Warning, title, message, QMessageBox.Ok, self)
        box.setAttribute(Qt.WA_DeleteOnClose, True)
        box.setWindowModality(Qt.NonModal)
        box.open()
        self._last_error_box = box

    def show_safety(self) -> None:
        from refplane.views.help_text import SAFETY_HTML, SAFETY_TITLE

        QMessageBox.information(self, SAFETY_TITLE, SAFETY_HTML)

    def show_usage(self) -> None:
        """Help ▸ Using the window: a scrolling page sized to fit the screen (a message box of
        this length would run off a 768-pixel-high screen)."""
        from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout

        from refplane.views.help_text import USAGE_HTML

        dialog = getattr(self, "usage_dialog", None)
        if dialog is None:
            dialog = self.usage_dialog = QDialog(self)
            dialog.setWindowTitle("Using the window")
            browser = QTextBrowser(dialog)
            browser.setOpenExternalLinks(False)
            browser.setHtml(USAGE_HTML)
            buttons = QDialogButtonBox(QDialogButtonBox.Close, parent=dialog)
            buttons.rejected.connect(dialog.close)
            layout = QVBoxLayout(dialog)
            layout.addWidget(browser)
            layout.addWidget(buttons)
            screen = self.screen().availableGeometry() if self.screen() is not None else None
            w, h = 640, 620
            if screen is not None:
                w, h = min(w, screen.width() - 40), min(h, screen.height() - 80)
            dialog.resize(w, h)
        dialog.show()
        dialog.raise_()

    def show_about(self) -> None:
        from refplane import __version__

        QMessageBox.about(self, "About Refplane",
                          f"<b>Refplane {__version__}</b><p>Smith chart impedance analysis for saved "
                          "network-analyzer sweeps: markers, reference planes, offline calibration "
                          "and equivalent circuits.</p>")

    def closeEvent(self, ev) -> None:
        self.loader.cancel()
        self.workers.cancel_all()
        self.workers.wait(3000)
        super().closeEvent(ev)
