"""Time-domain view: the current trace against distance along the line, its events, markers and a gate.

A dock with its own plot (:class:`refplane.views.plot_area.PlotView`): the impulse response
(ρ of each event at its peak), the step response (ρ seen up to each point) or the impedance
profile, against distance from the reference plane (round trip halved, at the velocity factor
given). The resolution and the alias-free range are written on the plot. Markers are
vertical lines to drag; each reads distance and ρ (and impedance in low-pass mode). The gate
is a span to drag; "Open the gated sweep as a trace" adds the trace with everything outside
the span removed, as a new trace.

Settings are the session's ``"time_domain"`` tool record
(:class:`~refplane.session.tool_settings.TimeDomainSettings`): mode, what is shown, window,
velocity factor, gate and marker distances. The transform runs as
:func:`refplane.session.tool_jobs.time_domain` on the window's worker facility; dragging a
marker or the gate changes only settings and redraws, without a new transform.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QHBoxLayout, QPushButton, QSizePolicy,
                               QVBoxLayout, QWidget)

from refplane.views.plot_area import discard
from refplane.analysis.errors import AnalysisError
from refplane.session import tool_jobs, tool_text
from refplane.session.model import Session
from refplane.views.binding import bind
from refplane.views.panels import tool_widgets as tw
from refplane.views.plot_area import PlotView
from refplane.views.workers import Workers

TOOL = "time_domain"

MODES = (("Low-pass (impulse, step, impedance)", "lowpass"), ("Band-pass (impulse magnitude, any sweep)", "bandpass"))
SHOWS = (("Impulse: ρ of each event", "impulse"), ("Step: ρ seen so far", "step"),
         ("Impedance along the line", "impedance"))
WINDOWS = (("Kaiser", "kaiser"), ("Hann", "hann"), ("Hamming", "hamming"), ("Blackman", "blackman"),
           ("Rectangular", "rectangular"))
#: The settings a new transform depends on (the rest only redraw).
TRANSFORM_FIELDS = ("mode", "window", "kaiser_beta", "vf")

MARKER_COLOUR = "#D55E00"
GATE_BRUSH = (0, 114, 178, 40)


class TimeDomainView(QWidget):
    """The current trace in the time domain, with markers and a gate."""

    #: Emitted on the UI thread after a transform was shown (True) or failed (False).
    responseShown = Signal(bool)

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self._job = 0
        self._ticket = None
        self.response = None          # the TimeResponse shown
        self._request = None
        self._transform_key = None
        self._plan = None             # GatePlan of the shown transform's sweep, port and window
        self._plan_key = None
        self._gate_job = 0
        self._gate_ticket = None
        self._overlay_trace: int | None = None   # the trace carrying the gated-sweep overlay
        self.gated = None             # the GatedSweep drawn as that overlay
        self._timer = tw.next_turn(self, self.refresh)

        # ---- controls (a narrow column left of the plot)
        controls = QWidget()
        column = QVBoxLayout(controls)
        column.setContentsMargins(4, 4, 4, 4)
        column.setSpacing(4)
        self.mode_combo, self.show_combo, self.window_combo = QComboBox(), QComboBox(), QComboBox()
        for combo, items in ((self.mode_combo, MODES), (self.show_combo, SHOWS), (self.window_combo, WINDOWS)):
            for label, key in items:
                combo.addItem(label, key)
            combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
            combo.setMinimumContentsLength(8)
            combo.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        self.beta_spin = QDoubleSpinBox()
        self.beta_spin.setRange(0.0, 20.0)
        self.beta_spin.setSingleStep(0.5)
        self.beta_spin.setDecimals(1)
        self.beta_spin.setPrefix("β ")
        self.beta_spin.setToolTip("Kaiser window β: higher lowers the sidelobes and widens each event")
        self.vf_spin = QDoubleSpinBox()
        self.vf_spin.setRange(0.05, 1.0)
        self.vf_spin.setDecimals(3)
        self.vf_spin.setSingleStep(0.01)
        self.vf_spin.setToolTip("Velocity factor of the line, for distances (solid PE coax about 0.66, foam "
                                "0.78–0.85: common practice)")
        for spin in (self.beta_spin, self.vf_spin):
            spin.setKeyboardTracking(False)
        window_row = QHBoxLayout()
        window_row.addWidget(self.window_combo, 1)
        window_row.addWidget(self.beta_spin)
        f = tw.form()
        f.addRow("Mode", self.mode_combo)
        f.addRow("Show", self.show_combo)
        f.addRow("Window", window_row)
        f.addRow("Velocity factor", self.vf_spin)
        column.addLayout(f)
        self.message = tw.note("")
        column.addWidget(self.message)
        self.summary = tw.note("")
        column.addWidget(self.summary)
        self.event_table = tw.table(["Event at", "ρ", "Return loss"])
        column.addWidget(self.event_table)
        self.marker_table = tw.table(["#", "Distance", "ρ", "Step ρ", "Z"])
        column.addWidget(self.marker_table)
        buttons = QHBoxLayout()
        self.add_marker_button = QPushButton("Add marker")
        self.clear_markers_button = QPushButton("Clear markers")
        buttons.addWidget(self.add_marker_button)
        buttons.addWidget(self.clear_markers_button)
        column.addLayout(buttons)
        gate_row = QHBoxLayout()
        self.gate_button = QPushButton("Set gate")
        self.gate_button.setToolTip("Put a gate span around the strongest event; drag its edges on the plot")
        self.clear_gate_button = QPushButton("No gate")
        gate_row.addWidget(self.gate_button)
        gate_row.addWidget(self.clear_gate_button)
        column.addLayout(gate_row)
        self.overlay_check = QCheckBox("Show the gated sweep on the chart")
        self.overlay_check.setToolTip("Draw the sweep with only the gate's span kept, dashed over its trace; "
                                      "it follows the gate as you drag it")
        column.addWidget(self.overlay_check)
        self.open_gated_button = QPushButton("Open the gated sweep as a trace")
        self.open_gated_button.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        column.addWidget(self.open_gated_button)
        self.gate_label = tw.note("")
        column.addWidget(self.gate_label)
        column.addWidget(tw.caution(tool_text.CABLE_CAUTION))
        column.addStretch(1)
        scroll = tw.scroll_column(controls)
        scroll.setMinimumWidth(290)
        scroll.setMaximumWidth(360)

        # ---- the plot
        self.plot = PlotView(background="w")
        self.plot.setMinimumWidth(200)
        self.plot.getAxis("bottom").setLabel("Distance", units="m")
        # ρ reads as a plain number, never "×0.001".
        self.plot.getAxis("left").enableAutoSIPrefix(False)
        self.curve = pg.PlotDataItem(pen=pg.mkPen("#0072B2", width=1.6), antialias=True)
        self.plot.addItem(self.curve)
        self.note_item = pg.TextItem("", color="#444", anchor=(1, 0))
        self.plot.addItem(self.note_item, ignoreBounds=True)
        self.gate_item = pg.LinearRegionItem(brush=pg.mkBrush(*GATE_BRUSH), movable=True)
        self.gate_item.setZValue(-5)
        self.gate_item.setVisible(False)
        self.plot.addItem(self.gate_item, ignoreBounds=True)
        self.marker_lines: list[pg.InfiniteLine] = []
        self.plot.getViewBox().sigRangeChanged.connect(lambda *_a: self._place_note())

        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(scroll)
        layout.addWidget(self.plot, 1)

        self._show_settings()
        self.mode_combo.currentIndexChanged.connect(lambda _i: self._set(mode=self.mode_combo.currentData()))
        self.show_combo.currentIndexChanged.connect(lambda _i: self._set(show=self.show_combo.currentData()))
        self.window_combo.currentIndexChanged.connect(lambda _i: self._set(window=self.window_combo.currentData()))
        self.beta_spin.valueChanged.connect(lambda v: self._set(kaiser_beta=round(v, 3)))
        self.vf_spin.valueChanged.connect(lambda v: self._set(vf=round(v, 6)))
        self.add_marker_button.clicked.connect(self.add_marker)
        self.clear_markers_button.clicked.connect(lambda: self._set(markers_m=()))
        self.gate_button.clicked.connect(self.set_gate_around_event)
        self.clear_gate_button.clicked.connect(lambda: self._set(gate_start_m=None, gate_stop_m=None))
        self.open_gated_button.clicked.connect(self.open_gated)
        self.gate_item.sigRegionChangeFinished.connect(self._gate_dragged)
        self.gate_item.sigRegionChanged.connect(self._gate_moving)
        self.overlay_check.toggled.connect(lambda on: self._set(gate_overlay=bool(on)))
        bind(self, state.toolChanged, self._on_tool)
        bind(self, state.displayChanged, self._on_display)
        self._on_display("theme")
        for signal in (state.currentTraceChanged, state.offsetsChanged, state.traceChanged):
            bind(self, signal, self._schedule)
        bind(self, state.tracesChanged, self._schedule)
        self.refresh()

    # ---------------------------------------------------------------- public
    @property
    def settings(self):
        """The session's time-domain settings."""
        return self.state.tool(TOOL)

    def target(self) -> tuple[int, int]:
        """(trace, port) transformed: the current trace, else the current marker's; trace −1 for none."""
        tid = self.state.current_trace
        if tid == -1 and self.state.current_marker != -1:
            tid = self.state.marker(self.state.current_marker).trace_id
        return (tid, self.state.trace(tid).port) if tid != -1 else (-1, 1)

    def refresh(self) -> int | None:
        """Transform the current trace now (off the UI thread); returns the job number."""
        self._timer.stop()
        if self._ticket is not None:
            self._ticket.cancel()
            self._ticket = None
        self._job += 1
        tid, port = self.target()
        s = self.settings
        self._transform_key = tuple(getattr(s, k) for k in TRANSFORM_FIELDS)
        if tid == -1:
            self._show(None, "Open a sweep of the cable or line to see it in the time domain.")
            return None
        request = tool_jobs.TimeRequest(job=self._job, trace_id=tid, sweep=self.state.displayed(tid), port=port,
                                        settings=s)
        self.message.setText("Working…")
        self._ticket = self.workers.submit(lambda _t: tool_jobs.time_domain(request),
                                           lambda r: self._on_done(request, r), name="Time domain…")
        return self._job

    def wait(self, msecs: int = 30000) -> bool:
        """Run any pending refresh and wait until its result is shown (tests)."""
        return tw.wait_for(self, msecs)

    def add_marker(self, distance_m: float | None = None) -> None:
        """Add a marker at ``distance_m`` (default: the strongest event, else the middle of the view)."""
        if distance_m is None:
            if self.response is not None and self.response.events:
                distance_m = self.response.events[0].distance_m
            else:
                (x0, x1), _ = self.plot.getViewBox().viewRange()
                distance_m = 0.5 * (x0 + x1)
        self._set(markers_m=tuple(self.settings.markers_m) + (float(distance_m),))

    def set_gate_around_event(self) -> None:
        """A gate two resolution cells either side of the strongest event (or the start of the line)."""
        td = self.response
        if td is None:
            return
        centre = td.events[0].distance_m if td.events else 0.0
        half = 2.0 * td.resolution_m
        self._set(gate_start_m=max(centre - half, 0.0), gate_stop_m=centre + half)

    def open_gated(self) -> None:
        """Add the trace gated to the settings' span as a new trace (off the UI thread)."""
        if self._request is None:
            return
        request = tool_jobs.TimeRequest(job=self._job, trace_id=self._request.trace_id, sweep=self._request.sweep,
                                        port=self._request.port, settings=self.settings)

        def done(result):
            if result.ok:
                g = result.value
                name = f"{request.sweep.name or 'trace'} gated {g.start_m:.3g}–{g.stop_m:.3g} m"
                self.state.add_sweep(g.sweep, name=name)
                self.gate_label.setText(f"Opened “{name}”.")
            else:
                self.gate_label.setText(result.message)

        self.workers.submit(lambda _t: tool_jobs.gated(request), done, name="Gating…")

    def marker_rows(self) -> list[list[str]]:
        """What the marker table shows."""
        return tw.rows_of(self.marker_table)

    def curve_data(self) -> tuple[np.ndarray, np.ndarray]:
        """The plotted curve (distance in metres, value)."""
        x, y = self.curve.getData()
        return (np.zeros(0), np.zeros(0)) if x is None else (x, y)

    # ---------------------------------------------------------------- edits → session
    def _set(self, **changes) -> None:
        try:
            self.state.set_tool(TOOL, **changes)
        except AnalysisError as exc:
            self.message.setText(str(exc))

    def _gate_dragged(self) -> None:
        lo, hi = self.gate_item.getRegion()
        if self.gate_item.isVisible() and hi > lo:
            self._set(gate_start_m=round(float(lo), 9), gate_stop_m=round(float(hi), 9))

    def _gate_moving(self) -> None:
        # Live: only the preview follows; the session takes the span when the drag ends.
        lo, hi = self.gate_item.getRegion()
        if self.gate_item.isVisible() and hi > lo:
            self._preview_gate(float(lo), float(hi))

    def _marker_dragged(self, index: int, line) -> None:
        markers = list(self.settings.markers_m)
        if index < len(markers):
            markers[index] = round(float(line.value()), 9)
            self._set(markers_m=tuple(markers))

    # ---------------------------------------------------------------- session → widgets
    def _on_tool(self, name: str) -> None:
        if name != TOOL:
            return
        self._show_settings()
        s = self.settings
        if tuple(getattr(s, k) for k in TRANSFORM_FIELDS) != self._transform_key:
            self._schedule()
        else:
            self._draw()

    def _schedule(self, *_args) -> None:
        self._timer.start()

    def _show_settings(self) -> None:
        s = self.settings

        put = tw.put

        for combo, value in ((self.mode_combo, s.mode), (self.show_combo, s.show), (self.window_combo, s.window)):
            i = combo.findData(value)
            if i >= 0 and i != combo.currentIndex():
                put(combo, combo.setCurrentIndex, i)
        for spin, value in ((self.beta_spin, s.kaiser_beta), (self.vf_spin, s.vf)):
            if abs(spin.value() - value) > 1e-9:
                put(spin, spin.setValue, value)
        self.beta_spin.setEnabled(s.window == "kaiser")
        if self.overlay_check.isChecked() != s.gate_overlay:
            put(self.overlay_check, self.overlay_check.setChecked, s.gate_overlay)
        # Step and impedance exist only in low-pass mode.
        model = self.show_combo.model()
        for row in (1, 2):
            model.item(row).setEnabled(s.mode == "lowpass")

    def _on_display(self, name: str) -> None:
        if name == "theme":
            from refplane.views.theme import THEMES

            self.set_theme(THEMES.get(self.state.display.theme, THEMES["light"]))

    def set_theme(self, theme) -> None:
        """Colour the plot like the window's other plots (background, axes, the note)."""
        self.plot.setBackground(theme.chart_bg)
        for name in ("left", "bottom"):
            axis = self.plot.getAxis(name)
            axis.setPen(pg.mkPen(theme.muted))
            axis.setTextPen(pg.mkPen(theme.text))
        self.note_item.setColor(theme.muted)

    # ---------------------------------------------------------------- results
    def _on_done(self, request, result) -> None:
        if request.job != self._job:
            return
        self._ticket = None
        if result.ok:
            self._request = request
            self._show(result.value, "")
        else:
            self._request = None
            self._show(None, result.message)

    def _show(self, td, message: str) -> None:
        self.response = td
        self.message.setText(message)
        self.message.setVisible(bool(message))
        self.summary.setText(tool_text.time_summary(td) if td is not None else "")
        tw.fill(self.event_table, tool_text.event_rows(td) if td is not None else [])
        self.open_gated_button.setEnabled(td is not None)
        self.gate_button.setEnabled(td is not None)
        self._draw()
        self._frame(td)
        self.responseShown.emit(td is not None)

    def _frame(self, td) -> None:
        """Show the line up to a little past its farthest event (the whole range when there is none)."""
        vb = self.plot.getViewBox()
        vb.enableAutoRange()
        if td is None or not td.events:
            return
        far = max(e.distance_m for e in td.events)
        x1 = min(float(td.distance_m[-1]), far * 1.3 + 10 * td.resolution_m)
        x0 = max(float(td.distance_m[0]), -0.05 * x1)
        vb.setXRange(x0, x1, padding=0.02)
        vb.enableAutoRange(axis=pg.ViewBox.YAxis)
        vb.setAutoVisible(y=True)

    def _draw(self) -> None:
        """Curve, note, gate and markers from the response and the settings."""
        td, s = self.response, self.settings
        if td is None:
            self.curve.setData([], [])
            self.note_item.setText("")
            self.gate_item.setVisible(False)
            self._drop_overlay()
            self._draw_markers([])
            tw.fill(self.marker_table, [])
            return
        x = td.distance_m
        show = s.show if td.mode == "lowpass" else "impulse"
        if show == "step" and td.step is not None:
            y, label, units = td.step, "Step response ρ", None
        elif show == "impedance" and td.impedance_ohm is not None:
            y = np.where(np.isfinite(td.impedance_ohm), td.impedance_ohm, np.nan)
            y = np.clip(y, 0.0, 10 * td.z0_ohm)   # an open reads ∞: keep the axis readable
            label, units = "Impedance", "Ω"
        else:
            y, label, units = td.impulse, ("Impulse ρ" if td.mode == "lowpass" else "Impulse |ρ|"), None
        self.curve.setData(x, y, connect="finite")
        self.plot.getAxis("left").setLabel(label, units=units)
        self.plot.getAxis("bottom").setLabel(f"Distance at velocity factor {td.velocity_factor:g}", units="m")
        self.note_item.setText(f"resolution {tool_text.si(td.resolution_m, 'm', 3)} · "
                               f"range {tool_text.si(td.range_m, 'm', 3)} · {td.window.label}")
        self._place_note()
        if s.gate_start_m is not None and s.gate_stop_m is not None:
            self.gate_item.blockSignals(True)
            self.gate_item.setRegion((s.gate_start_m, s.gate_stop_m))
            self.gate_item.blockSignals(False)
            self.gate_item.setVisible(True)
            self.gate_label.setText(f"Gate {tool_text.si(s.gate_start_m, 'm', 4)} to "
                                    f"{tool_text.si(s.gate_stop_m, 'm', 4)}")
            self._preview_gate(s.gate_start_m, s.gate_stop_m)
        else:
            self.gate_item.setVisible(False)
            self.gate_label.setText("No gate set.")
            self._drop_overlay()
        self._draw_markers(list(s.markers_m))
        tw.fill(self.marker_table, tool_text.time_marker_rows(td, s.markers_m))

    def _draw_markers(self, distances: list[float]) -> None:
        while len(self.marker_lines) > len(distances):
            line = self.marker_lines.pop()
            self.plot.getPlotItem().removeItem(line)
            discard(line)
        while len(self.marker_lines) < len(distances):
            k = len(self.marker_lines)
            line = pg.InfiniteLine(angle=90, movable=True, pen=pg.mkPen(MARKER_COLOUR, width=1.4),
                                   label=str(k + 1), labelOpts={"position": 0.92, "color": MARKER_COLOUR})
            line.sigPositionChangeFinished.connect(lambda ln, k=k: self._marker_dragged(k, ln))
            self.plot.addItem(line, ignoreBounds=True)
            self.marker_lines.append(line)
        for line, d in zip(self.marker_lines, distances):
            line.blockSignals(True)
            line.setValue(d)
            line.blockSignals(False)

    # ---------------------------------------------------------------- gate preview
    def _preview_gate(self, start_m: float, stop_m: float) -> None:
        """Work out the gated sweep for this span (superseding any still running) and overlay it."""
        import dataclasses

        req = self._request
        if req is None or not self.settings.gate_overlay:
            self._drop_overlay()
            return
        settings = dataclasses.replace(self.settings, gate_start_m=start_m, gate_stop_m=stop_m)
        key = (id(req.sweep), req.port, tool_jobs.window_text(settings))
        if key != self._plan_key:
            self._plan, self._plan_key = None, key
        if self._gate_ticket is not None:
            self._gate_ticket.cancel()
        self._gate_job += 1
        request = tool_jobs.GatePreviewRequest(job=self._gate_job, trace_id=req.trace_id, sweep=req.sweep,
                                               port=req.port, settings=settings, plan=self._plan)
        self._gate_ticket = self.workers.submit(lambda _t: tool_jobs.gate_preview(request),
                                                lambda r: self._on_gate_done(request, key, r), name="")

    def _on_gate_done(self, request, key, result) -> None:
        if request.job != self._gate_job:
            return
        self._gate_ticket = None
        if not result.ok:
            self.gate_label.setText(result.message)
            self._drop_overlay()
            return
        plan, gated = result.value
        if key == self._plan_key:
            self._plan = plan
        if request.trace_id not in self.state.trace_ids() or not self.settings.gate_overlay:
            return
        if self._overlay_trace not in (None, request.trace_id):
            self._drop_overlay()
        self.gated = gated
        self.state.set_overlay(request.trace_id, tool_jobs.GATE_OVERLAY, gated.sweep)
        self._overlay_trace = request.trace_id

    def _drop_overlay(self) -> None:
        if self._gate_ticket is not None:
            self._gate_ticket.cancel()
            self._gate_ticket = None
        self._gate_job += 1
        tid, self._overlay_trace = self._overlay_trace, None
        if tid is not None and tid in self.state.trace_ids():
            self.state.set_overlay(tid, tool_jobs.GATE_OVERLAY, None)

    def _place_note(self) -> None:
        (_x0, x1), (_y0, y1) = self.plot.getViewBox().viewRange()
        self.note_item.setPos(x1, y1)


def build(window) -> "TimeDomainView":
    """The time-domain view for ``window``; the first time, its dock is given more height."""
    view = TimeDomainView(window.state, workers=window.workers)
    # The plot wants more height than the marker table's strip; give it some when first shown.
    dock = window.docks["Time domain"]
    QTimer.singleShot(0, lambda: window.resizeDocks([dock], [300], Qt.Vertical))
    return view


def install(window):
    """Add the time-domain view as a dock beside the marker table, built when first shown."""
    return tw.install_lazily(window, "Time domain", lambda: build(window), beside="Markers",
                             area=Qt.BottomDockWidgetArea)
