"""Cable panel: impedance, delay, velocity factor or length, and loss of a cable from an open and a short.

Choose the trace of the cable with its far end open and the trace with it shorted, and give
its length (the velocity factor follows) or its velocity factor (the length follows). The
work runs as :func:`refplane.session.tool_jobs.cable` on the window's worker facility
whenever the choice or the traces change. "Remove this cable from the current trace" hands
the found line (every term of the line model) to the reference-plane offsets of the current
trace's port; "Use its velocity factor for distances" sets the time-domain view's.

Settings are the session's ``"cable"`` tool record
(:class:`~refplane.session.tool_settings.CableSettings`); traces are remembered by name.
"""

from __future__ import annotations

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (QComboBox, QDoubleSpinBox, QLineEdit, QPushButton, QSizePolicy, QVBoxLayout,
                               QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.session import tool_jobs, tool_text
from refplane.session.model import Session
from refplane.views.binding import bind
from refplane.views.panels import tool_widgets as tw
from refplane.views.workers import Workers

TOOL = "cable"

#: What the user gives: (label, settings value).
KNOWN = (("its length", "length"), ("its velocity factor", "vf"), ("neither", "none"))


class CablePanel(QWidget):
    """Characterise a cable from an open and a short trace and hand it on."""

    #: Emitted on the UI thread after a result (True) or a failure (False) was shown.
    resultShown = Signal(bool)

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self._job = 0
        self.result = None
        self._result_for: tuple | None = None
        self._timer = tw.next_turn(self, self.refresh)

        content, column = tw.column_widget()
        column.addWidget(tw.note("Sweep the cable twice at the same frequencies: far end open, then "
                                 "shorted. Choose the two traces here."))
        self.open_combo, self.short_combo = QComboBox(), QComboBox()
        for combo in (self.open_combo, self.short_combo):
            combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
            combo.setMinimumContentsLength(10)
            combo.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        self.known_combo = QComboBox()
        for label, key in KNOWN:
            self.known_combo.addItem(label, key)
        self.length_edit = QLineEdit()
        self.length_edit.setPlaceholderText("e.g. 3 m, 10 ft")
        self.vf_spin = QDoubleSpinBox()
        self.vf_spin.setRange(0.05, 1.0)
        self.vf_spin.setDecimals(3)
        self.vf_spin.setSingleStep(0.01)
        self.vf_spin.setKeyboardTracking(False)
        self.vf_spin.setToolTip("Solid polyethylene coax is near 0.66, foam 0.78–0.85 (common practice).")
        self.band_edit = QLineEdit()
        self.band_edit.setPlaceholderText("whole sweep, or e.g. 10 MHz : 1 GHz")
        self.ref_edit = QLineEdit()
        self.ref_edit.setPlaceholderText("e.g. 1 GHz")
        f = tw.form()
        f.addRow("Far end open", self.open_combo)
        f.addRow("Far end shorted", self.short_combo)
        f.addRow("I know", self.known_combo)
        f.addRow("Length", self.length_edit)
        f.addRow("Velocity factor", self.vf_spin)
        f.addRow("Band", self.band_edit)
        f.addRow("Loss stated at", self.ref_edit)
        column.addLayout(f)
        self.message = tw.note("")
        column.addWidget(self.message)
        self.table = tw.table(["Cable (one way)", "Value"])
        column.addWidget(self.table)
        self.remove_button = QPushButton("Remove this cable from the current trace")
        self.remove_button.setToolTip("Set the reference-plane offset of the current trace's port to this cable "
                                      "(delay, both losses, its impedance)")
        self.vf_button = QPushButton("Use its velocity factor for distances")
        self.vf_button.setToolTip("Set the time-domain view's velocity factor to this cable's")
        for b in (self.remove_button, self.vf_button):
            b.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
            column.addWidget(b)
        column.addWidget(tw.caution(tool_text.CABLE_CAUTION))
        column.addStretch(1)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        outer.addWidget(tw.scroll_column(content))

        self._fill_traces()
        self._show_settings()
        self._show(None)
        self.open_combo.currentIndexChanged.connect(lambda _i: self._set(open_trace=self.open_combo.currentData() or ""))
        self.short_combo.currentIndexChanged.connect(
            lambda _i: self._set(short_trace=self.short_combo.currentData() or ""))
        self.known_combo.currentIndexChanged.connect(lambda _i: self._set(known=self.known_combo.currentData()))
        self.vf_spin.valueChanged.connect(lambda v: self._set(vf=round(v, 6)))
        self.length_edit.editingFinished.connect(self._length_typed)
        self.band_edit.editingFinished.connect(self._band_typed)
        self.ref_edit.editingFinished.connect(self._ref_typed)
        self.remove_button.clicked.connect(self.remove_from_current)
        self.vf_button.clicked.connect(self.use_velocity_factor)
        bind(self, state.toolChanged, self._on_tool)
        bind(self, state.tracesChanged, self._on_traces)
        bind(self, state.traceChanged, self._schedule)
        bind(self, state.offsetsChanged, self._schedule)
        bind(self, state.currentTraceChanged, lambda _t: self._enable())
        self.refresh()

    # ---------------------------------------------------------------- public
    @property
    def settings(self):
        """The session's cable settings."""
        return self.state.tool(TOOL)

    def trace_named(self, name: str) -> int:
        """Id of the first trace called ``name``, or −1."""
        for t in self.state.traces():
            if t.name == name:
                return t.id
        return -1

    def refresh(self) -> int | None:
        """Characterise the chosen pair now (off the UI thread); returns the job number."""
        self._timer.stop()
        self._job += 1
        s = self.settings
        o, sh = self.trace_named(s.open_trace), self.trace_named(s.short_trace)
        if o == -1 or sh == -1:
            self._show(None, "Choose the open and the shorted trace of the cable.")
            return None
        if o == sh:
            self._show(None, "Choose two different traces: one with the far end open, one shorted.")
            return None
        port = self.state.trace(o).port
        request = tool_jobs.CableRequest(job=self._job, open_sweep=self.state.displayed(o),
                                         short_sweep=self.state.displayed(sh), port=port, settings=s)
        self.message.setText("Working…")
        self.workers.submit(lambda _t: tool_jobs.cable(request), lambda r: self._on_done(request, r),
                            name="Characterising the cable…")
        return self._job

    def wait(self, msecs: int = 30000) -> bool:
        """Run any pending refresh and wait until its result is shown (tests)."""
        return tw.wait_for(self, msecs)

    def rows(self) -> list[list[str]]:
        """What the result table shows."""
        return tw.rows_of(self.table)

    def remove_from_current(self) -> None:
        """Set the current trace's offset at its port to the found cable."""
        from refplane.analysis.lines.deembed import with_port_offset

        tid = self.state.current_trace
        if self.result is None or tid == -1:
            return
        trace = self.state.trace(tid)
        try:
            offsets = with_port_offset(trace.offsets, trace.raw.n_ports, trace.port, self.result.offset())
            self.state.set_offsets(tid, offsets)
            if self.result.velocity_factor is not None:
                self.state.set_velocity_factor(tid, trace.port, self.result.velocity_factor)
        except AnalysisError as exc:
            self.message.setText(str(exc))
            return
        self.message.setText(f"The cable is now removed from {trace.name} (port {trace.port}); see the "
                             "Reference plane panel.")

    def use_velocity_factor(self) -> None:
        """Hand the found velocity factor to the time-domain view."""
        if self.result is not None and self.result.velocity_factor is not None:
            self.state.set_tool("time_domain", vf=round(float(self.result.velocity_factor), 6))

    # ---------------------------------------------------------------- edits → session
    def _set(self, **changes) -> None:
        try:
            self.state.set_tool(TOOL, **changes)
        except AnalysisError as exc:
            self.message.setText(str(exc))

    def _length_typed(self) -> None:
        from refplane.analysis.units import parse_length

        text = self.length_edit.text().strip()
        if not text:
            return
        try:
            value = parse_length(text)
            if not value > 0:
                raise AnalysisError("a cable's length must be above zero")
        except AnalysisError as exc:
            self.message.setText(str(exc))
            return
        self._set(length_m=value)

    def _band_typed(self) -> None:
        from refplane.analysis.units import parse_band

        text = self.band_edit.text().strip()
        try:
            if text:
                parse_band(text.replace(" ", ""))
        except AnalysisError as exc:
            self.message.setText(str(exc))
            return
        self._set(band_text=text)

    def _ref_typed(self) -> None:
        from refplane.analysis.units import parse_frequency

        text = self.ref_edit.text().strip()
        try:
            value = parse_frequency(text) if text else 1e9
            if not value > 0:
                raise AnalysisError("the loss reference frequency must be above zero")
        except AnalysisError as exc:
            self.message.setText(str(exc))
            return
        self._set(loss_ref_hz=value)

    # ---------------------------------------------------------------- session → widgets
    def _on_tool(self, name: str) -> None:
        if name == TOOL:
            self._show_settings()
            self._schedule()

    def _on_traces(self) -> None:
        self._fill_traces()
        self._schedule()

    def _schedule(self, *_args) -> None:
        self._timer.start()

    def _fill_traces(self) -> None:
        names = [t.name for t in self.state.traces()]
        s = self.settings
        for combo, chosen, guess in ((self.open_combo, s.open_trace, "open"),
                                     (self.short_combo, s.short_trace, "short")):
            combo.blockSignals(True)
            combo.clear()
            combo.addItem("—", "")
            for name in dict.fromkeys(names):
                combo.addItem(name, name)
            combo.setCurrentIndex(max(0, combo.findData(chosen)))
            combo.blockSignals(False)
        # A first guess from the names ("…open…", "…short…"), written to the session like a choice.
        changes = {}
        for field, guess in (("open_trace", "open"), ("short_trace", "short")):
            if not getattr(s, field) or getattr(s, field) not in names:
                hits = [n for n in names if guess in n.lower()]
                if len(hits) == 1:
                    changes[field] = hits[0]
        if changes:
            self._set(**changes)

    def _show_settings(self) -> None:
        from refplane.analysis.units import format_frequency

        s = self.settings

        put = tw.put

        for combo, value in ((self.open_combo, s.open_trace), (self.short_combo, s.short_trace),
                             (self.known_combo, s.known)):
            i = combo.findData(value)
            if i >= 0 and i != combo.currentIndex():
                put(combo, combo.setCurrentIndex, i)
        if abs(self.vf_spin.value() - s.vf) > 1e-9:
            put(self.vf_spin, self.vf_spin.setValue, s.vf)
        for edit, text in ((self.length_edit, f"{s.length_m:g} m"), (self.band_edit, s.band_text),
                           (self.ref_edit, format_frequency(s.loss_ref_hz))):
            if edit.text() != text and not edit.hasFocus():
                put(edit, edit.setText, text)
        self.length_edit.setEnabled(s.known == "length")
        self.vf_spin.setEnabled(s.known == "vf")

    # ---------------------------------------------------------------- results
    def _on_done(self, request, result) -> None:
        if request.job != self._job:
            return
        if result.ok:
            self._show(result.value, "")
        else:
            self._show(None, result.message)

    def _show(self, result, message: str = "") -> None:
        self.result = result
        self.message.setText(message)
        self.message.setVisible(bool(message))
        tw.fill(self.table, [list(r) for r in tool_text.cable_rows(result)] if result is not None else [])
        self._enable()
        self.resultShown.emit(result is not None)

    def _enable(self) -> None:
        self.remove_button.setEnabled(self.result is not None and self.state.current_trace != -1)
        self.vf_button.setEnabled(self.result is not None and self.result.velocity_factor is not None)


def build(window) -> "CablePanel":
    """The cable panel for ``window``."""
    return CablePanel(window.state, workers=window.workers)


def install(window):
    """Add the cable panel to the window's side column, built when first shown."""
    return tw.install_lazily(window, "Cable", lambda: build(window))
