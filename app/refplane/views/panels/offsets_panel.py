"""Reference-plane panel: remove a length of line from each port of the current trace.

Per port, the line is given as a delay or as a length with a velocity factor (the two are
linked: editing one updates the other), a loss in dB at a frequency, and an optional line
impedance. Up/Down keys and the mouse wheel over the delay or length field, and the slider,
move the delay in steps; the chart follows at once. "Find from open/short" estimates the line
from a trace of the bare cable ended in an open or a short (on a worker thread).
"Save corrected sweep…" writes the displayed sweep as Touchstone with the offsets recorded
in its header.

The panel assigns whole :class:`~refplane.analysis.lines.deembed.LineOffset` values to the model
through :meth:`Session.set_offsets`; it holds no RF maths (text is parsed by
:mod:`refplane.analysis.units`, delay ↔ length by ``LineOffset``).
"""

from __future__ import annotations

import os

from PySide6.QtCore import QEvent, QObject, Qt, Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QSizePolicy, QFileDialog, QFormLayout, QHBoxLayout, QLabel, QLineEdit,
                               QMessageBox, QPushButton, QSlider, QVBoxLayout, QWidget)

from refplane.views.binding import bind
from refplane.analysis.lines.deembed import LineOffset, check_velocity_factor, describe_offsets, with_port_offset
from refplane.analysis.errors import AnalysisError
from refplane.analysis.units import (format_frequency, format_si, parse_length, parse_loss,
                                     parse_resistance, parse_time)
from refplane.session import jobs
from refplane.session.jobs import EstimateRequest
from refplane.session.model import Session
from refplane.views.workers import Workers

#: Delay steps offered for keys, wheel and slider: (label, seconds).
STEPS = (("0.1 ps", 0.1e-12), ("1 ps", 1e-12), ("10 ps", 10e-12), ("100 ps", 100e-12))
#: The slider spans this many steps from zero.
SLIDER_STEPS = 1000

_SAFETY = ("Before connecting a long cable to the analyzer, discharge it (briefly join centre "
           "and shield); never measure a line a transmitter may still feed. Follow your "
           "equipment maker's guidance and local practice.")


class _StepFilter(QObject):
    """Turns Up/Down keys and the mouse wheel over a field into delay steps."""

    def __init__(self, panel: "OffsetsPanel"):
        super().__init__(panel)
        self.panel = panel

    def eventFilter(self, watched, event) -> bool:  # noqa: N802 - Qt's name
        kind = event.type()
        if kind == QEvent.KeyPress and event.key() in (Qt.Key_Up, Qt.Key_Down):
            steps = 1 if event.key() == Qt.Key_Up else -1
            if event.modifiers() & Qt.ShiftModifier:
                steps *= 10
            self.panel.step_delay(steps)
            return True
        if kind == QEvent.Wheel:
            notches = event.angleDelta().y() // 120
            if notches:
                self.panel.step_delay(notches)
            return True
        return False


class OffsetsPanel(QWidget):
    """Line offsets per port of the current trace, with live stepping, estimate and save."""

    #: Emitted on the UI thread when an estimate has been applied (True) or failed (False).
    estimateFinished = Signal(bool)

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self._job = 0
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self.last_estimate = None
        self._estimate_for: tuple[int, int] | None = None  # (source trace, target trace) of the sentence
        # Dialog hooks, replaced in tests; each returns what the person chose.
        # ask_save_path returns the chosen path (its dialog has confirmed replacing an existing
        # file) or None; confirm asks once more before the original measurement is replaced.
        self.ask_save_path = self._ask_save_path
        self.confirm = self._confirm
        self.show_error = self._show_error

        self.trace_label = QLabel()
        # A long trace name wraps (or, without spaces, is cut) rather than widening the window;
        # its tooltip holds the whole name.
        self.trace_label.setWordWrap(True)
        self.trace_label.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Preferred)
        self.port_combo = QComboBox()
        self.port_combo.setToolTip("The port whose line is edited")
        self.delay_edit = QLineEdit()
        self.delay_edit.setPlaceholderText("e.g. 1.01 ns")
        self.delay_edit.setToolTip("One-way delay of the line to remove. Up/Down or the mouse "
                                   "wheel step it (Shift: ten steps).")
        self.length_edit = QLineEdit()
        self.length_edit.setPlaceholderText("e.g. 20 cm (needs a velocity factor)")
        self.length_edit.setToolTip("Physical length of the line; sets the delay through the velocity factor.")
        self.vf_edit = QLineEdit()
        self.vf_edit.setPlaceholderText("e.g. 0.66")
        self.vf_edit.setToolTip("Velocity factor of the line: about 0.66 for solid polyethylene, "
                                "0.78–0.85 for foam (typical values; check the cable's data sheet)")
        self.loss_edit = QLineEdit()
        self.loss_edit.setPlaceholderText("e.g. 0.4 dB @ 1 GHz")
        self.loss_edit.setToolTip("One-way loss of the line at a frequency; taken to grow as √f")
        self.dielectric_edit = QLineEdit()
        self.dielectric_edit.setPlaceholderText("e.g. 0.1 dB @ 1 GHz")
        self.dielectric_edit.setToolTip("One-way dielectric loss of the line at a frequency; taken to grow as f")
        self.skin_check = QCheckBox("Loss carries its skin-effect phase")
        self.skin_check.setToolTip("The √f conductor loss comes with an equal phase (the causal skin-effect "
                                   "model real cable follows). Untick for the loss alone.")
        self.z0_edit = QLineEdit()
        self.z0_edit.setPlaceholderText("same as the port's reference")
        self.z0_edit.setToolTip("Characteristic impedance of the line, e.g. 75 Ω; blank: the port's reference")
        self.step_combo = QComboBox()
        for label, _ in STEPS:
            self.step_combo.addItem(label)
        self.step_combo.setCurrentIndex(1)
        self.step_combo.setToolTip("Delay step for keys, wheel and slider")
        self.slider = QSlider(Qt.Horizontal)
        self.slider.setRange(0, SLIDER_STEPS)
        self.slider.setToolTip("Delay from zero to a thousand steps")
        self.reset_button = QPushButton("Reset port")
        self.reset_all_button = QPushButton("Reset all")

        self.standard_combo = QComboBox()
        self.standard_combo.addItem("open", "open")
        self.standard_combo.addItem("short", "short")
        self.source_combo = QComboBox()
        # Sized for a short name, not the longest one open: a long name must not widen the window.
        self.source_combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        self.source_combo.setMinimumContentsLength(14)
        self.source_combo.setToolTip("Trace of the bare cable or fixture ended in the standard")
        self.estimate_button = QPushButton("Find from open/short")
        self.estimate_label = QLabel()
        self.estimate_label.setWordWrap(True)
        self.save_button = QPushButton("Save corrected sweep…")
        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setObjectName("panelMessage")
        safety = QLabel(_SAFETY)
        safety.setWordWrap(True)
        safety.setObjectName("panelHint")

        form = QFormLayout()
        form.addRow("Trace", self.trace_label)
        form.addRow("Port", self.port_combo)
        form.addRow("Delay", self.delay_edit)
        form.addRow("Length", self.length_edit)
        form.addRow("Velocity factor", self.vf_edit)
        form.addRow("Loss", self.loss_edit)
        form.addRow("Dielectric loss", self.dielectric_edit)
        form.addRow("", self.skin_check)
        form.addRow("Line impedance", self.z0_edit)
        step_row = QHBoxLayout()
        step_row.addWidget(self.slider, 1)
        step_row.addWidget(self.step_combo)
        form.addRow("Adjust", step_row)
        resets = QHBoxLayout()
        resets.addWidget(self.reset_button)
        resets.addWidget(self.reset_all_button)
        estimate_form = QFormLayout()
        estimate_form.addRow("Bare line", self.source_combo)
        estimate_form.addRow("Ended in", self.standard_combo)
        layout = QVBoxLayout(self)
        layout.addLayout(form)
        layout.addLayout(resets)
        heading = QLabel("<b>Find the line from a measured open or short</b>")
        heading.setWordWrap(True)
        layout.addWidget(heading)
        layout.addLayout(estimate_form)
        layout.addWidget(self.estimate_button)
        layout.addWidget(self.estimate_label)
        layout.addWidget(safety)
        layout.addWidget(self.save_button)
        layout.addWidget(self.message)
        layout.addStretch(1)

        steps = _StepFilter(self)
        for edit in (self.delay_edit, self.length_edit):
            edit.installEventFilter(steps)
        self.delay_edit.editingFinished.connect(self._on_delay_edited)
        self.length_edit.editingFinished.connect(self._on_length_edited)
        self.vf_edit.editingFinished.connect(self._on_vf_edited)
        self.loss_edit.editingFinished.connect(self._on_loss_edited)
        self.z0_edit.editingFinished.connect(self._on_z0_edited)
        self.dielectric_edit.editingFinished.connect(self._on_dielectric_edited)
        self.skin_check.toggled.connect(
            lambda on: on != self.offset().skin_phase and self.set_offset(self.offset().with_changes(skin_phase=on)))
        self.port_combo.currentIndexChanged.connect(lambda _: self._refresh())
        self.step_combo.currentIndexChanged.connect(lambda _: self._refresh())
        self.slider.valueChanged.connect(self._on_slider)
        self.reset_button.clicked.connect(self.reset_port)
        self.reset_all_button.clicked.connect(self.reset_all)
        self.estimate_button.clicked.connect(self.start_estimate)
        self.save_button.clicked.connect(self.save_corrected)

        bind(self, state.currentTraceChanged, lambda _: self._on_trace_switched())
        bind(self, state.tracesChanged, self._on_traces_changed)
        bind(self, state.traceChanged, self._on_trace_changed)
        bind(self, state.offsetsChanged, self._on_offsets_changed)
        bind(self, state.velocityFactorsChanged, self._on_offsets_changed)
        self._on_traces_changed()

    # ------------------------------------------------------------------ what is edited
    @property
    def trace_id(self) -> int:
        """The trace the panel edits (the model's current trace), or −1."""
        tid = self.state.current_trace
        # While a trace is being closed the model may still name it as current.
        return tid if tid in self.state.trace_ids() else -1

    @property
    def port(self) -> int:
        """The 1-based port being edited."""
        return max(self.port_combo.currentIndex(), 0) + 1

    @property
    def step_s(self) -> float:
        """The delay step of keys, wheel and slider, in seconds."""
        return STEPS[max(self.step_combo.currentIndex(), 0)][1]

    def offset(self) -> LineOffset:
        """The line at the edited port (a zero line when none is set)."""
        if self.trace_id == -1:
            return LineOffset()
        offsets = self.state.trace(self.trace_id).offsets
        if self.port <= len(offsets) and offsets[self.port - 1] is not None:
            return offsets[self.port - 1]
        return LineOffset()

    def velocity_factor(self) -> float | None:
        """The velocity factor typed for this trace and port, if any (a session field)."""
        if self.trace_id == -1:
            return None
        return self.state.trace(self.trace_id).velocity_factor(self.port)

    # ------------------------------------------------------------------ changing the model
    def set_offset(self, offset: LineOffset) -> bool:
        """Give the edited port this line (the chart follows); False if the model refused it."""
        if self.trace_id == -1:
            return False
        trace = self.state.trace(self.trace_id)
        try:
            offsets = with_port_offset(trace.offsets, trace.raw.n_ports, self.port, offset)
            self.state.set_offsets(self.trace_id, offsets)
        except AnalysisError as exc:
            self._say(str(exc), error=True)
            self._refresh()
            return False
        self._say("")
        return True

    def step_delay(self, steps: float) -> None:
        """Move the edited port's delay by ``steps`` steps."""
        self.set_offset(self.offset().stepped(steps, self.step_s))

    def reset_port(self) -> None:
        """Remove the line from the edited port."""
        self.set_offset(LineOffset())

    def reset_all(self) -> None:
        """Remove the lines from every port of the trace."""
        if self.trace_id != -1:
            self.state.set_offsets(self.trace_id, ())
            self._say("")

    # ------------------------------------------------------------------ text fields
    def _parsed(self, parse, text: str, what: str):
        try:
            return parse(text)
        except AnalysisError as exc:
            self._say(f"{what}: {exc}", error=True)
            self._refresh_fields()
            return None

    def _on_delay_edited(self) -> None:
        text = self.delay_edit.text().strip()
        delay = 0.0 if not text else self._parsed(parse_time, text, "delay")
        if delay is not None and delay != self.offset().delay_s:
            self.set_offset(self.offset().with_changes(delay_s=delay))

    def _on_length_edited(self) -> None:
        text = self.length_edit.text().strip()
        if not text:
            return
        vf = self.velocity_factor()
        if vf is None:
            self._say("length: give the velocity factor first (e.g. 0.66)", error=True)
            self._refresh_fields()
            return
        length = self._parsed(parse_length, text, "length")
        if length is not None:
            self.set_offset(self.offset().with_length(length, vf))

    def _on_vf_edited(self) -> None:
        text = self.vf_edit.text().strip()
        if self.trace_id == -1:
            return
        if not text:
            self.state.set_velocity_factor(self.trace_id, self.port, None)
            self._refresh_fields()
            return
        try:
            vf = check_velocity_factor(text)
        except AnalysisError as exc:
            self._say(f"velocity factor: {exc}", error=True)
            self._refresh_fields()
            return
        self.state.set_velocity_factor(self.trace_id, self.port, vf)
        self._say("")
        self._refresh_fields()   # the length follows; the delay stays as it is

    def _on_loss_edited(self) -> None:
        text = self.loss_edit.text().strip()
        loss = (0.0, self.offset().loss_ref_hz) if not text else self._parsed(parse_loss, text, "loss")
        if loss is not None and loss != (self.offset().loss_db, self.offset().loss_ref_hz):
            self.set_offset(self.offset().with_changes(loss_db=loss[0], loss_ref_hz=loss[1]))

    def _on_dielectric_edited(self) -> None:
        text = self.dielectric_edit.text().strip()
        loss = (0.0, self.offset().loss_ref_hz) if not text else self._parsed(parse_loss, text, "dielectric loss")
        if loss is None:
            return
        # Stated at the conductor loss's frequency: the dielectric loss grows as f.
        value = loss[0] * self.offset().loss_ref_hz / loss[1]
        if value != self.offset().dielectric_loss_db:
            self.set_offset(self.offset().with_changes(dielectric_loss_db=value))

    def _on_z0_edited(self) -> None:
        text = self.z0_edit.text().strip()
        z0 = None if not text else self._parsed(parse_resistance, text, "line impedance")
        if text and z0 is None:
            return
        if z0 != self.offset().line_z0_ohm:
            self.set_offset(self.offset().with_changes(line_z0_ohm=z0))

    def _on_slider(self, value: int) -> None:
        self.set_offset(self.offset().with_changes(delay_s=0.0).stepped(value, self.step_s))

    # ------------------------------------------------------------------ estimate
    def start_estimate(self) -> None:
        """Estimate the line from the chosen trace and standard; the result lands on the edited port."""
        source = self.source_combo.currentData()
        if self.trace_id == -1 or source is None:
            self._say("open a trace of the bare line ended in an open or a short first", error=True)
            return
        src = self.state.trace(source)
        self._job += 1
        request = EstimateRequest(job=self._job, target_trace=self.trace_id, target_port=self.port,
                                  sweep=src.raw, port=src.port, standard=self.standard_combo.currentData(),
                                  velocity_factor=self.velocity_factor())
        self.estimate_button.setEnabled(False)
        self.estimate_label.setText("estimating…")
        self._estimate_for = (source, self.trace_id)
        self.workers.submit(lambda _t: jobs.estimate(request),
                            lambda result: self._on_estimate_done(request, result), name="Estimating the line…")

    def wait(self, msecs: int = 30000) -> bool:
        """Wait for a running estimate to end and be shown (tests)."""
        return self.workers.wait(msecs)

    def _on_estimate_done(self, request: EstimateRequest, result) -> None:
        from refplane.session.present import estimate_sentence

        self.estimate_button.setEnabled(self.trace_id != -1)
        if request.job != self._job:
            return
        if not result.ok:
            self.estimate_label.setText("")
            self._say(f"estimate: {result.message}", error=True)
            self.estimateFinished.emit(False)
            return
        est = result.value
        self.last_estimate = est
        self.estimate_label.setText(estimate_sentence(est))
        applied = False
        if request.target_trace in self.state.trace_ids():
            trace = self.state.trace(request.target_trace)
            if request.target_port <= trace.raw.n_ports:
                # Every term of the line the estimate found (its causal skin phase and
                # dielectric loss included); the line's impedance is the port's reference.
                found = est.offset()
                try:
                    self.state.set_offsets(request.target_trace, with_port_offset(
                        trace.offsets, trace.raw.n_ports, request.target_port, found))
                    applied = True
                except AnalysisError as exc:
                    self._say(str(exc), error=True)
        self.estimateFinished.emit(applied)

    # ------------------------------------------------------------------ save
    def save_corrected(self) -> str | None:
        """Write the displayed sweep as Touchstone, the offsets noted in its header; returns the path."""
        if self.trace_id == -1:
            return None
        from refplane.analysis.files import touchstone

        trace = self.state.trace(self.trace_id)
        n = trace.raw.n_ports
        folder = os.path.dirname(trace.source) if trace.source else ""
        suggested = os.path.join(folder, f"{trace.name or 'sweep'}_corrected.s{n}p")
        path = self.ask_save_path(suggested)
        if not path:
            return None
        exists = os.path.exists(path)
        same_as_source = (bool(trace.source) and exists and os.path.exists(trace.source)
                          and os.path.samefile(path, trace.source))
        if same_as_source and not self.confirm(
                "This is the original measurement. Replace it with the corrected sweep? "
                "The uncorrected data in it will be lost."):
            return None
        comments = tuple(trace.raw.comments) + (
            f"Refplane: corrected from {trace.source or trace.name}",) + describe_offsets(trace.offsets)
        try:
            # The save dialog has already asked before replacing an existing file.
            written = touchstone.write(trace.displayed, path, comments=comments, overwrite=exists)
        except (AnalysisError, OSError) as exc:
            self.show_error("Could not save the corrected sweep", str(exc))
            return None
        self._say(f"saved {written}")
        return str(written)

    def _ask_save_path(self, suggested: str) -> str | None:
        import os

        from refplane.views.folders import last_folder, remember_folder

        folder = last_folder("corrected")
        if folder:  # corrected sweeps go where the last one went, under the suggested name
            suggested = os.path.join(folder, os.path.basename(suggested))
        path, _ = QFileDialog.getSaveFileName(self, "Save corrected sweep", suggested,
                                              "Touchstone (*.s1p *.s2p *.s3p *.s4p *.snp)")
        if path:
            remember_folder("corrected", path)
        return path or None

    def _confirm(self, text: str) -> bool:
        answer = QMessageBox.question(self, "Replace the original file?", text,
                                      QMessageBox.Yes | QMessageBox.No, QMessageBox.No)
        return answer == QMessageBox.Yes

    def _show_error(self, title: str, text: str) -> None:
        QMessageBox.warning(self, title, text)

    # ------------------------------------------------------------------ following the model
    def _on_traces_changed(self) -> None:
        keep = self.source_combo.currentData()
        self.source_combo.blockSignals(True)
        self.source_combo.clear()
        for trace in self.state.traces():
            self.source_combo.addItem(trace.name or f"trace {trace.id}", trace.id)
        index = self.source_combo.findData(keep)
        if index < 0:
            index = self.source_combo.findData(self.state.current_trace)
        self.source_combo.setCurrentIndex(max(index, 0))
        self.source_combo.blockSignals(False)
        alive = set(self.state.trace_ids())
        if self._estimate_for is not None and not set(self._estimate_for) <= alive:
            # The sentence described a trace that is gone: say nothing rather than something stale.
            self._estimate_for = None
            self.estimate_label.setText("")
        if self.message.property("error") and self.trace_id == -1:
            self._say("")
        self._on_trace_switched()

    def _on_trace_switched(self) -> None:
        self._fill_ports()
        self._refresh()

    def _on_trace_changed(self, trace_id: int) -> None:
        if trace_id == self.trace_id:
            self._on_trace_switched()
        else:
            self._on_traces_changed()

    def _on_offsets_changed(self, trace_id: int) -> None:
        if trace_id == self.trace_id:
            self._refresh()

    def _fill_ports(self) -> None:
        keep = self.port_combo.currentIndex()
        n = self.state.trace(self.trace_id).raw.n_ports if self.trace_id != -1 else 0
        self.port_combo.blockSignals(True)
        self.port_combo.clear()
        for port in range(1, n + 1):
            self.port_combo.addItem(f"port {port}")
        if n:
            trace = self.state.trace(self.trace_id)
            self.port_combo.setCurrentIndex(keep if 0 <= keep < n else trace.port - 1)
        self.port_combo.blockSignals(False)

    def _refresh(self) -> None:
        enabled = self.trace_id != -1
        for widget in (self.port_combo, self.delay_edit, self.length_edit, self.vf_edit, self.loss_edit,
                       self.dielectric_edit, self.skin_check, self.z0_edit, self.slider, self.step_combo, self.reset_button,
                       self.reset_all_button, self.save_button, self.estimate_button):
            widget.setEnabled(enabled)
        # Said where a disabled control is pointed at: why it cannot act yet.
        self.setToolTip("" if enabled else "Open a sweep first: the panel edits the current trace")
        self.trace_label.setText(self.state.trace(self.trace_id).name if enabled else "no trace open")
        self.trace_label.setToolTip(self.trace_label.text())
        self._refresh_fields()

    def _refresh_fields(self) -> None:
        offset = self.offset()
        vf = self.velocity_factor()
        widgets = (self.delay_edit, self.length_edit, self.vf_edit, self.loss_edit, self.z0_edit, self.slider,
                   self.dielectric_edit, self.skin_check)
        for widget in widgets:
            widget.blockSignals(True)
        try:
            self.delay_edit.setText(format_si(offset.delay_s, "s", 5) if not offset.is_zero or offset.delay_s
                                    else "")
            self.vf_edit.setText(f"{vf:g}" if vf is not None else "")
            self.length_edit.setText(format_si(offset.length_m(vf), "m", 5)
                                     if vf is not None and offset.delay_s else "")
            self.loss_edit.setText(f"{offset.loss_db:g} dB @ {format_frequency(offset.loss_ref_hz)}"
                                   if offset.loss_db else "")
            self.z0_edit.setText(f"{offset.line_z0_ohm:g} Ω" if offset.line_z0_ohm is not None else "")
            self.dielectric_edit.setText(
                f"{offset.dielectric_loss_db:g} dB @ {format_frequency(offset.loss_ref_hz)}"
                if offset.dielectric_loss_db else "")
            self.skin_check.setChecked(offset.skin_phase)
            # The slider shows the delay in steps, pinned at its ends when the delay lies outside.
            steps = offset.delay_s / self.step_s
            self.slider.setValue(int(round(min(max(steps, 0), SLIDER_STEPS))))
        finally:
            for widget in widgets:
                widget.blockSignals(False)

    def _say(self, text: str, *, error: bool = False) -> None:
        self.message.setText(text)
        self.message.setProperty("error", error)
