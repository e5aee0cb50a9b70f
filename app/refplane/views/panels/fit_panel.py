"""Equivalent-circuit fit of the current trace: band, model, Fit; the result in words and tables.

The fit runs as :func:`refplane.session.jobs.fit` on the window's worker facility (a fit of
every circuit takes a noticeable fraction of a second); the job also builds the model curve,
so the slots here only show what arrives. The model curve goes on the trace as a dashed
overlay named :data:`OVERLAY_NAME` through :meth:`Session.set_overlay`; the band, model and
measurement are session fields (:class:`~refplane.session.model.FitSettings`).

The band is typed ("100 MHz : 1 GHz") or follows the band selected in the window (the
frequency plot sets it by dragging); an empty band fits the whole sweep.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QFormLayout, QHBoxLayout, QHeaderView,
                               QLabel, QLineEdit, QPushButton, QTableWidget, QTableWidgetItem,
                               QVBoxLayout, QWidget)

from refplane.views.binding import bind
from refplane.analysis.errors import AnalysisError
from refplane.session import jobs
from refplane.session.jobs import FitRequest
from refplane.session.model import Session
from refplane.views.theme import quiet_label
from refplane.views.workers import Workers

#: Name of the dashed overlay the panel puts on the fitted trace.
OVERLAY_NAME = jobs.FIT_OVERLAY

#: The measurement choices: (label, session value).
MEASUREMENTS = (
    ("Reflection of the trace's port", "reflection"),
    ("Series through (part between ports, S21)", "series"),
    ("Shunt through (part to ground, S21)", "shunt"),
)


class FitPanel(QWidget):
    """Fit an equivalent circuit to the current trace and show parameters with ± errors."""

    #: Emitted on the UI thread when a fit has been shown (True) or has failed (False).
    fitFinished = Signal(bool)

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        from refplane.analysis.circuits.models import MODELS

        self.setObjectName("panel")
        self.state = state
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self._job = 0
        self._result_trace: int | None = None   # the trace the shown result was fitted to
        self._result_sweep = None               # ... and the sweep it was fitted from
        self._running: FitRequest | None = None
        self.result = None

        self.band_edit = QLineEdit()
        self.band_edit.setPlaceholderText("whole sweep, or e.g. 100 MHz : 1 GHz")
        self.band_edit.setClearButtonEnabled(True)
        self.band_edit.setToolTip("Fit only the points inside this band. Dragging a band on the "
                                  "frequency plot fills it in.")
        self.model_combo = QComboBox()
        self.model_combo.addItem("Automatic (simplest adequate)", "auto")
        for model in MODELS.values():
            self.model_combo.addItem(f"{model.id}: {model.name}", model.id)
        # Long model names must not widen the side column that holds the panel.
        self.model_combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        self.model_combo.setMinimumContentsLength(18)
        self.measurement_combo = QComboBox()
        self.measurement_combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        self.measurement_combo.setMinimumContentsLength(18)
        for label, kind in MEASUREMENTS:
            self.measurement_combo.addItem(label, kind)
        self.fit_button = QPushButton("Fit")
        self.clear_button = QPushButton("Remove curve")
        self.clear_button.setToolTip("Remove the dashed model curve from the trace")
        self.message = QLabel("")
        self.message.setObjectName("hint")
        quiet_label(self.message)
        self.message.setWordWrap(True)
        self.sentence = QLabel("")
        self.sentence.setWordWrap(True)
        self.sentence.setTextInteractionFlags(Qt.TextSelectableByMouse)
        self.params_table = self._table(["Part", "Value", "Std. error"])
        self.note = QLabel("")
        self.note.setObjectName("hint")
        quiet_label(self.note)
        self.note.setWordWrap(True)
        self.ranking_label = QLabel("")
        self.ranking_label.setWordWrap(True)
        self.ranking_table = self._table(["Model", "Parts", "Score gap (ΔAICc)", "Residual"])

        form = QFormLayout()
        form.addRow("Band", self.band_edit)
        form.addRow("Model", self.model_combo)
        form.addRow("Measured as", self.measurement_combo)
        buttons = QHBoxLayout()
        buttons.addWidget(self.fit_button)
        buttons.addWidget(self.clear_button)
        buttons.addStretch(1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        layout.addLayout(form)
        layout.addLayout(buttons)
        layout.addWidget(self.message)
        layout.addWidget(self.sentence)
        layout.addWidget(self.params_table, 1)
        layout.addWidget(self.note)
        layout.addWidget(self.ranking_label)
        layout.addWidget(self.ranking_table, 1)

        self._show_settings()
        self.fit_button.clicked.connect(self.fit)
        self.band_edit.returnPressed.connect(self.fit)
        self.band_edit.editingFinished.connect(lambda: self.state.set_fit(band_text=self.band_edit.text().strip()))
        self.model_combo.currentIndexChanged.connect(lambda _i: self.state.set_fit(model=self.model_combo.currentData()))
        self.measurement_combo.currentIndexChanged.connect(
            lambda _i: self.state.set_fit(measurement=self.measurement_combo.currentData()))
        self.clear_button.clicked.connect(self.remove_curve)
        bind(self, state.fitSettingsChanged, self._show_settings)
        bind(self, state.bandChanged, self._on_band)
        bind(self, state.tracesChanged, self._on_traces)
        bind(self, state.offsetsChanged, self._on_trace_data)
        bind(self, state.traceChanged, self._on_trace_data)
        self._on_band()
        self._show_result(None)

    @property
    def _fitted_trace(self) -> int | None:
        """The trace carrying the dashed curve (a session field)."""
        return self.state.fit.overlay_trace

    def _show_settings(self) -> None:
        """Show the session's fit settings in the fields (signals held: nothing echoes)."""
        fit = self.state.fit
        for widget, value in ((self.model_combo, fit.model), (self.measurement_combo, fit.measurement)):
            index = widget.findData(value)
            if index >= 0 and index != widget.currentIndex():
                widget.blockSignals(True)
                widget.setCurrentIndex(index)
                widget.blockSignals(False)
        if self.band_edit.text().strip() != fit.band_text:
            self.band_edit.blockSignals(True)
            self.band_edit.setText(fit.band_text)
            self.band_edit.blockSignals(False)

    # ---------------------------------------------------------------- public
    def fit(self) -> int | None:
        """Start a fit of the current trace with the panel's settings; returns the job number.

        Problems (no trace, a band that cannot be read) show in the panel's message line.
        """
        tid = self.state.current_trace
        if tid == -1:
            return self._fail("Open a sweep first.")
        try:
            band = self.band_hz()
        except AnalysisError as exc:
            return self._fail(str(exc))
        self.state.set_fit(band_text=self.band_edit.text().strip())
        trace = self.state.trace(tid)
        measurement = self.state.fit.measurement
        through = None if measurement == "reflection" else measurement
        self._job += 1
        request = FitRequest(job=self._job, trace_id=tid, sweep=trace.displayed, model=self.state.fit.model,
                             band_hz=band, port=1 if through else trace.port, through=through)
        self._running = request
        self.fit_button.setEnabled(False)
        self.message.setText("Fitting…")
        self.workers.submit(lambda _t: jobs.fit(request), lambda result: self._on_done(request, result),
                            name="Fitting…")
        return self._job

    def band_hz(self) -> tuple[float, float] | None:
        """The band typed in the panel, or None for the whole sweep."""
        from refplane.analysis.units import parse_band

        text = self.band_edit.text().strip()
        return parse_band(text) if text else None

    def remove_curve(self) -> None:
        """Remove the dashed model curve from the trace it was drawn on."""
        if self._fitted_trace is not None and self._fitted_trace in self.state.trace_ids():
            self.state.set_overlay(self._fitted_trace, OVERLAY_NAME, None)
        self.state.set_fit(overlay_trace=None)

    def wait(self, msecs: int = 30000) -> bool:
        """Wait for a running fit to end and its result to be shown (tests, closing the window)."""
        return self.workers.wait(msecs)

    def parameter_rows(self) -> list[list[str]]:
        """What the parameter table shows, row by row."""
        return self._rows(self.params_table)

    def ranking_rows(self) -> list[list[str]]:
        """What the ranking table shows, row by row."""
        return self._rows(self.ranking_table)

    # ---------------------------------------------------------------- slots
    def _on_done(self, request: FitRequest, job_result) -> None:
        if request.job != self._job:
            return  # superseded by a later request
        self._running = None
        self.fit_button.setEnabled(True)
        if not job_result.ok:
            self._fail(job_result.message)
            return
        payload = job_result.value
        if request.trace_id not in self.state.trace_ids():
            self._fail("The trace was closed before the fit ended.")
            return
        result, overlay = payload
        self.message.setText("" if overlay is not None else
                             "No curve is drawn for a through fit: the chart shows reflection.")
        self._show_result(result)
        self._result_trace, self._result_sweep = request.trace_id, request.sweep
        self.remove_curve()
        if overlay is not None:
            self.state.set_overlay(request.trace_id, OVERLAY_NAME, overlay)
            self.state.set_fit(overlay_trace=request.trace_id)
        self.fitFinished.emit(True)

    def _on_band(self) -> None:
        from refplane.analysis.units import format_frequency

        band = self.state.band
        if band is not None:
            self.state.set_fit(band_text=f"{format_frequency(band[0])} : {format_frequency(band[1])}")

    def _on_traces(self) -> None:
        ids = self.state.trace_ids()
        if self._result_trace is not None and self._result_trace not in ids:
            self._result_trace = self._result_sweep = None
            self._show_result(None)

    def _on_trace_data(self, trace_id: int) -> None:
        if self.result is not None and trace_id == self._result_trace:
            if trace_id not in self.state.trace_ids():
                return
            trace = self.state.trace(trace_id)
            moved_port = self.result.measurement == "reflection" and trace.port != self.result.port
            if trace.displayed is not self._result_sweep or moved_port:
                self.message.setText("The trace has changed since this fit (offsets, port or reload); "
                                     "press Fit again to refit it.")

    # ---------------------------------------------------------------- helpers
    def _fail(self, message: str) -> None:
        self.message.setText(message)
        self.fitFinished.emit(False)
        return None

    def _show_result(self, result) -> None:
        self.result = result
        if result is None:
            self.sentence.setText("Choose a band and a model, then Fit.")
            self.note.setText("")
            self._fill(self.params_table, [])
            self._fill(self.ranking_table, [])
            self.ranking_label.setText("")
            return
        from refplane.session import present

        self.sentence.setText(present.fit_sentence(result))
        self._fill(self.params_table, present.fit_parameter_rows(result))
        self.note.setText(present.SERIES_VS_FITTED_NOTE if result.measurement == "reflection" else "")
        chosen = "chosen automatically; " if result.automatic else ""
        self.ranking_label.setText(
            f"Other circuits tried ({chosen}the score weighs how well each fits against how many "
            "parts it needs; a gap above about 2 means clearly worse)")
        self._fill(self.ranking_table, present.fit_ranking_rows(result))

    @staticmethod
    def _table(headers: list[str]) -> QTableWidget:
        table = QTableWidget(0, len(headers))
        table.setHorizontalHeaderLabels(headers)
        table.setEditTriggers(QAbstractItemView.NoEditTriggers)
        table.verticalHeader().setVisible(False)
        table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        table.horizontalHeader().setStretchLastSection(True)
        return table

    @staticmethod
    def _fill(table: QTableWidget, rows) -> None:
        table.setRowCount(len(rows))
        for r, row in enumerate(rows):
            for c, text in enumerate(row):
                table.setItem(r, c, QTableWidgetItem(str(text)))

    @staticmethod
    def _rows(table: QTableWidget) -> list[list[str]]:
        return [[table.item(r, c).text() for c in range(table.columnCount())] for r in range(table.rowCount())]
