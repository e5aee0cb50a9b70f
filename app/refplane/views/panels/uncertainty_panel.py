"""Uncertainty panel: what is known about the measurement's errors, so every reading carries its ±.

State the instrument's corrected performance as its data sheet gives it (effective directivity
and source match in dB, reflection tracking in ±dB), or pick a saved calibration whose
propagated uncertainty applies (or both: they add); say how trace noise is counted (estimated
from each sweep, none, or a level), and the uncertainties of the reference-plane offset.

Everything is the session's ``"uncertainty"`` tool record
(:class:`~refplane.session.tool_settings.UncertaintySettings`), saved with the session; the
marker table's ± and the chart's regions read the same record through
:mod:`refplane.session.uncertainty_view`. The panel previews the current marker's reading
with its ± (worked out on the window's worker facility).
"""

from __future__ import annotations

import os

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QFileDialog, QHBoxLayout, QLineEdit,
                               QPushButton, QSizePolicy, QVBoxLayout, QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.session import tool_jobs, uncertainty_view
from refplane.session.model import Session
from refplane.views.binding import bind
from refplane.views.panels import tool_widgets as tw
from refplane.views.workers import Workers

TOOL = "uncertainty"

NOISE = (("estimated from each sweep", "auto"), ("none", "none"), ("a level I give", "level"))
METHODS = (("automatic (linear; Monte Carlo where needed)", "auto"), ("linear", "linear"),
           ("Monte Carlo", "monte-carlo"))


def _spin(low: float, high: float, step: float, decimals: int, suffix: str) -> QDoubleSpinBox:
    spin = QDoubleSpinBox()
    spin.setRange(low, high)
    spin.setSingleStep(step)
    spin.setDecimals(decimals)
    spin.setSuffix(suffix)
    spin.setKeyboardTracking(False)
    return spin


class UncertaintyPanel(QWidget):
    """The session's uncertainty settings, and the current marker's reading with its ±."""

    #: Emitted on the UI thread after the preview was shown.
    previewShown = Signal()

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self._job = 0
        self.uncertainty = None
        self._timer = tw.next_turn(self, self.refresh)

        content, column = tw.column_widget()
        self.enabled_check = QCheckBox("Show ± on every reading (k = 2, about 95 %)")
        column.addWidget(self.enabled_check)

        box, lay = tw.section("Instrument's corrected performance")
        self.residual_check = QCheckBox("Count it (from the data sheet)")
        lay.addWidget(self.residual_check)
        self.directivity_spin = _spin(0.0, 80.0, 1.0, 1, " dB")
        self.directivity_spin.setToolTip("Effective directivity after calibration: |D| = 10^(−dB/20)")
        self.match_spin = _spin(0.0, 80.0, 1.0, 1, " dB")
        self.match_spin.setToolTip("Effective source match after calibration: |M| = 10^(−dB/20)")
        self.tracking_spin = _spin(0.0, 3.0, 0.01, 3, " dB")
        self.tracking_spin.setPrefix("± ")
        self.tracking_spin.setToolTip("Reflection tracking: |T| = 10^(dB/20) − 1")
        f = tw.form()
        f.addRow("Directivity", self.directivity_spin)
        f.addRow("Source match", self.match_spin)
        f.addRow("Tracking", self.tracking_spin)
        lay.addLayout(f)
        column.addWidget(box)

        box, lay = tw.section("Saved calibration")
        self.cal_edit = QLineEdit()
        self.cal_edit.setReadOnly(True)
        self.cal_edit.setPlaceholderText("none")
        row = QHBoxLayout()
        self.cal_button = QPushButton("Choose…")
        self.cal_clear = QPushButton("None")
        row.addWidget(self.cal_button)
        row.addWidget(self.cal_clear)
        row.addStretch(1)
        lay.addWidget(self.cal_edit)
        lay.addLayout(row)
        self.cal_note = tw.note("Use when the sweeps read were corrected by that calibration: the "
                                "uncertainty propagated from its standards applies (port 1).")
        lay.addWidget(self.cal_note)
        column.addWidget(box)

        box, lay = tw.section("Trace noise and the plane")
        self.noise_combo = QComboBox()
        for label, key in NOISE:
            self.noise_combo.addItem(label, key)
        self.noise_edit = QLineEdit()
        self.noise_edit.setPlaceholderText("σ per axis, e.g. 0.001 or -60 dB")
        self.interp_check = QCheckBox("Count reading between swept points")
        self.delay_u_edit = QLineEdit()
        self.delay_u_edit.setPlaceholderText("e.g. 2 ps")
        self.loss_u_edit = QLineEdit()
        self.loss_u_edit.setPlaceholderText("e.g. 0.05 dB")
        self.z0_u_edit = QLineEdit()
        self.z0_u_edit.setPlaceholderText("e.g. 1 Ω")
        self.method_combo = QComboBox()
        for label, key in METHODS:
            self.method_combo.addItem(label, key)
        for combo in (self.noise_combo, self.method_combo):
            combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
            combo.setMinimumContentsLength(10)
            combo.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        f = tw.form()
        f.addRow("Trace noise", self.noise_combo)
        f.addRow("Noise level", self.noise_edit)
        f.addRow(self.interp_check)
        f.addRow("Offset delay ±", self.delay_u_edit)
        f.addRow("Offset loss ±", self.loss_u_edit)
        f.addRow("Line Z0 ±", self.z0_u_edit)
        f.addRow("Propagation", self.method_combo)
        lay.addLayout(f)
        lay.addWidget(tw.note("Offset ± are standard uncertainties (one σ) of the reference-plane "
                              "line of the port read."))
        column.addWidget(box)

        self.sources_label = tw.note("", quiet=False)
        column.addWidget(self.sources_label)
        self.preview = tw.note("", quiet=False)
        column.addWidget(self.preview)
        self.message = tw.note("")
        column.addWidget(self.message)
        column.addStretch(1)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        outer.addWidget(tw.scroll_column(content))

        self._show_settings()
        self.enabled_check.toggled.connect(lambda on: self._set(enabled=bool(on)))
        self.residual_check.toggled.connect(lambda on: self._set(use_residual=bool(on)))
        self.interp_check.toggled.connect(lambda on: self._set(interpolation=bool(on)))
        self.directivity_spin.valueChanged.connect(lambda v: self._set(directivity_db=round(v, 4)))
        self.match_spin.valueChanged.connect(lambda v: self._set(source_match_db=round(v, 4)))
        self.tracking_spin.valueChanged.connect(lambda v: self._set(tracking_db=round(v, 5)))
        self.noise_combo.currentIndexChanged.connect(lambda _i: self._set(noise=self.noise_combo.currentData()))
        self.method_combo.currentIndexChanged.connect(lambda _i: self._set(method=self.method_combo.currentData()))
        self.noise_edit.editingFinished.connect(self._noise_typed)
        self.delay_u_edit.editingFinished.connect(lambda: self._typed(self.delay_u_edit, "offset_delay_u_s", "s"))
        self.loss_u_edit.editingFinished.connect(lambda: self._typed(self.loss_u_edit, "offset_loss_u_db", "dB"))
        self.z0_u_edit.editingFinished.connect(lambda: self._typed(self.z0_u_edit, "offset_line_z0_u_ohm", "Ω"))
        self.cal_button.clicked.connect(self.ask_calibration)
        self.cal_clear.clicked.connect(lambda: self._set(calibration_file=""))
        bind(self, state.toolChanged, self._on_tool)
        for signal in (state.markerMoved, state.currentMarkerChanged, state.offsetsChanged, state.traceChanged):
            bind(self, signal, self._schedule)
        for signal in (state.markersChanged, state.tracesChanged):
            bind(self, signal, self._schedule)
        self.refresh()

    # ---------------------------------------------------------------- public
    @property
    def settings(self):
        """The session's uncertainty settings."""
        return self.state.tool(TOOL)

    def set_calibration_file(self, path: str) -> None:
        """Use the propagated uncertainty of the saved calibration at ``path`` (checked first)."""
        try:
            uncertainty_view.calibration_uncertainty(path)
        except AnalysisError as exc:
            self._say(str(exc))
            return
        self._set(calibration_file=os.path.abspath(path))

    def ask_calibration(self) -> None:
        """Ask for a saved calibration file."""
        path, _ = QFileDialog.getOpenFileName(self, "Saved calibration whose uncertainty applies", "",
                                              "Saved calibration (*.json);;All files (*)")
        if path:
            self.set_calibration_file(path)

    def refresh(self) -> int | None:
        """Work out the current marker's ± now (off the UI thread); returns the job number."""
        self._timer.stop()
        self._job += 1
        s = self.settings
        mid = self.state.current_marker
        if not s.enabled:
            self._preview(None, "")
            return None
        if mid == -1:
            self._preview(None, "Place a marker to see its reading with the ±.")
            return None
        marker = self.state.marker(mid)
        request = tool_jobs.UncertaintyRequest(job=self._job, trace=self.state.trace(marker.trace_id),
                                               freq_hz=marker.freq_hz, settings=s)
        readout = self.state.marker_readout(mid)
        self.workers.submit(lambda _t: tool_jobs.marker_uncertainty(request),
                            lambda r: self._on_done(request, readout, r), name="Uncertainty…")
        return self._job

    def wait(self, msecs: int = 30000) -> bool:
        """Run any pending refresh and wait until its result is shown (tests)."""
        return tw.wait_for(self, msecs)

    # ---------------------------------------------------------------- edits → session
    def _say(self, text: str) -> None:
        self.message.setText(text)
        self.message.setVisible(bool(text))

    def _set(self, **changes) -> None:
        try:
            self.state.set_tool(TOOL, **changes)
            self._say("")
        except AnalysisError as exc:
            self._say(str(exc))

    def _noise_typed(self) -> None:
        import math

        t = self.noise_edit.text().strip().lower().replace(" ", "")
        if not t:
            return
        try:
            value = 10 ** (-abs(float(t[:-2])) / 20) if t.endswith("db") else float(t)
            if not (math.isfinite(value) and value >= 0):
                raise ValueError
        except ValueError:
            self._say(f"{self.noise_edit.text()!r}: give the noise per axis as 0.001 or -60 dB")
            return
        self._set(noise_level=value, noise="level")

    def _typed(self, edit: QLineEdit, field: str, unit: str) -> None:
        from refplane.analysis.units import parse_quantity

        text = edit.text().strip()
        try:
            if not text:
                value = 0.0
            elif unit == "dB":
                t = text.lower().replace(" ", "")
                value = float(t[:-2] if t.endswith("db") else t)
            else:
                value = parse_quantity(text, unit)
            if not value >= 0:
                raise AnalysisError("an uncertainty must be at least 0")
        except (AnalysisError, ValueError) as exc:
            self._say(str(exc) if isinstance(exc, AnalysisError) else f"{text!r} is not a number")
            return
        self._set(**{field: value})

    # ---------------------------------------------------------------- session → widgets
    def _on_tool(self, name: str) -> None:
        if name == TOOL:
            self._show_settings()
            self._schedule()

    def _schedule(self, *_args) -> None:
        self._timer.start()

    def _show_settings(self) -> None:
        from refplane.analysis.units import format_si

        s = self.settings

        put = tw.put

        for check, value in ((self.enabled_check, s.enabled), (self.residual_check, s.use_residual),
                             (self.interp_check, s.interpolation)):
            if check.isChecked() != bool(value):
                put(check, check.setChecked, bool(value))
        for spin, value in ((self.directivity_spin, s.directivity_db), (self.match_spin, s.source_match_db),
                            (self.tracking_spin, s.tracking_db)):
            if abs(spin.value() - value) > 1e-9:
                put(spin, spin.setValue, value)
        for combo, value in ((self.noise_combo, s.noise), (self.method_combo, s.method)):
            i = combo.findData(value)
            if i >= 0 and i != combo.currentIndex():
                put(combo, combo.setCurrentIndex, i)
        texts = ((self.cal_edit, s.calibration_file),
                 (self.noise_edit, f"{s.noise_level:g}"),
                 (self.delay_u_edit, format_si(s.offset_delay_u_s, "s", 3) if s.offset_delay_u_s else ""),
                 (self.loss_u_edit, f"{s.offset_loss_u_db:g} dB" if s.offset_loss_u_db else ""),
                 (self.z0_u_edit, f"{s.offset_line_z0_u_ohm:g} Ω" if s.offset_line_z0_u_ohm else ""))
        for edit, text in texts:
            if edit.text() != text and not edit.hasFocus():
                put(edit, edit.setText, text)
        self.cal_edit.setToolTip(s.calibration_file)
        for w in (self.directivity_spin, self.match_spin, self.tracking_spin):
            w.setEnabled(s.use_residual)
        self.noise_edit.setEnabled(s.noise == "level")
        try:
            self.sources_label.setText(uncertainty_view.sources_sentence(s))
        except AnalysisError as exc:
            self.sources_label.setText(str(exc))

    # ---------------------------------------------------------------- results
    def _on_done(self, request, readout, result) -> None:
        if request.job != self._job:
            return
        if not result.ok:
            self._preview(None, result.message)
            return
        self._preview(result.value, "", readout)

    def _preview(self, u, message: str, readout=None) -> None:
        from refplane.session import present

        self.uncertainty = u
        if u is not None and readout is not None:
            methods = " and ".join(sorted(set(u.method)))
            self.preview.setText(f"Current marker — {present.summary_line_with_u(readout, u.json_point(0))} "
                                 f"[{methods}]")
        else:
            self.preview.setText("")
        self._say(message)
        self.previewShown.emit()


def build(window) -> "UncertaintyPanel":
    """The uncertainty panel for ``window``."""
    return UncertaintyPanel(window.state, workers=window.workers)


def install(window):
    """Add the uncertainty panel to the window's side column, built when first shown."""
    return tw.install_lazily(window, "Uncertainty", lambda: build(window))
