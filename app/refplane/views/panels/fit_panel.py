"""Equivalent-circuit fit of the current trace: band, model, Fit; the result in words and tables.

The fit runs in :func:`refplane.analysis.fitting.fit_sweep` on a worker thread of the
panel's own :class:`QThreadPool` (a fit of every circuit takes a noticeable fraction of a
second); the worker also builds the model curve, so the slots here only show what arrives.
The model curve goes on the trace as a dashed overlay named :data:`OVERLAY_NAME` through
:meth:`ViewState.set_overlay`.

The band is typed ("100 MHz : 1 GHz") or follows the band selected in the window (the
frequency plot sets it by dragging); an empty band fits the whole sweep.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import QObject, QRunnable, Qt, QThreadPool, Signal
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QFormLayout, QHBoxLayout, QHeaderView,
                               QLabel, QLineEdit, QPushButton, QTableWidget, QTableWidgetItem,
                               QVBoxLayout, QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep
from refplane.views.state import ViewState
from refplane.views.theme import quiet_label

#: Name of the dashed overlay the panel puts on the fitted trace.
OVERLAY_NAME = "fitted model"

#: The measurement choices: (label, through kind or None).
MEASUREMENTS = (
    ("Reflection of the trace's port", None),
    ("Series through (part between ports, S21)", "series"),
    ("Shunt through (part to ground, S21)", "shunt"),
)


@dataclass(frozen=True)
class FitRequest:
    """Everything a fit needs, captured on the UI thread."""

    job: int
    """Sequence number; results of superseded requests are dropped."""
    trace_id: int
    """The trace fitted."""
    sweep: Sweep
    """The trace's displayed (corrected) sweep."""
    model: str
    """Model id or "auto"."""
    band_hz: tuple[float, float] | None
    """Band, or None for the whole sweep."""
    port: int
    """The trace's port (reflection), or the driving port (through)."""
    through: str | None
    """"series", "shunt" or None."""


def run_fit(request: FitRequest):
    """Fit and build the overlay; returns ("ok", (result, overlay or None)) or ("error", message).

    Never raises: a fault in the analysis must not take the window down.
    """
    from refplane.analysis.fitting import fit_sweep

    try:
        result = fit_sweep(request.sweep, model=request.model, band_hz=request.band_hz,
                           port=request.port, through=request.through)
        overlay = None
        if result.measurement == "reflection":
            overlay = result.to_sweep(request.sweep.freq_hz, name=OVERLAY_NAME)
        return "ok", (result, overlay)
    except AnalysisError as exc:
        return "error", str(exc)
    except Exception as exc:  # pragma: no cover - a bug in the fit, reported rather than fatal
        return "error", f"the fit failed ({type(exc).__name__}: {exc})"


class _Signals(QObject):
    done = Signal(object, str, object)  # request, status, payload


class _FitJob(QRunnable):
    def __init__(self, request: FitRequest, signals: _Signals):
        super().__init__()
        self.request = request
        self.signals = signals

    def run(self) -> None:
        status, payload = run_fit(self.request)
        self.signals.done.emit(self.request, status, payload)


class FitPanel(QWidget):
    """Fit an equivalent circuit to the current trace and show parameters with ± errors."""

    #: Emitted on the UI thread when a fit has been shown (True) or has failed (False).
    fitFinished = Signal(bool)

    def __init__(self, state: ViewState, parent: QWidget | None = None):
        super().__init__(parent)
        from refplane.analysis.circuits import MODELS

        self.setObjectName("panel")
        self.state = state
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        # Not parented to the panel: a worker may still hold it while the panel closes.
        self._signals = _Signals()
        self._signals.done.connect(self._on_done)
        self._job = 0
        self._fitted_trace: int | None = None   # the trace carrying the dashed curve
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
        self.params_table = self._table(["Parameter", "Value", "Std. error"])
        self.ranking_label = QLabel("")
        self.ranking_table = self._table(["Model", "Parameters", "ΔAICc", "Residual"])

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
        layout.addWidget(self.ranking_label)
        layout.addWidget(self.ranking_table, 1)

        self.fit_button.clicked.connect(self.fit)
        self.band_edit.returnPressed.connect(self.fit)
        self.clear_button.clicked.connect(self.remove_curve)
        state.bandChanged.connect(self._on_band)
        state.tracesChanged.connect(self._on_traces)
        state.offsetsChanged.connect(self._on_trace_data)
        state.traceChanged.connect(self._on_trace_data)
        self._on_band()
        self._show_result(None)

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
        trace = self.state.trace(tid)
        through = self.measurement_combo.currentData()
        self._job += 1
        request = FitRequest(job=self._job, trace_id=tid, sweep=trace.displayed, model=self.model_combo.currentData(),
                             band_hz=band, port=1 if through else trace.port, through=through)
        self._running = request
        self.fit_button.setEnabled(False)
        self.message.setText("Fitting…")
        self.pool.start(_FitJob(request, self._signals))
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
        self._fitted_trace = None

    def wait(self, msecs: int = 30000) -> bool:
        """Wait for a running fit to end (for tests and for closing the window)."""
        return self.pool.waitForDone(msecs)

    def parameter_rows(self) -> list[list[str]]:
        """What the parameter table shows, row by row."""
        return self._rows(self.params_table)

    def ranking_rows(self) -> list[list[str]]:
        """What the ranking table shows, row by row."""
        return self._rows(self.ranking_table)

    # ---------------------------------------------------------------- slots
    def _on_done(self, request: FitRequest, status: str, payload) -> None:
        if request.job != self._job:
            return  # superseded by a later request
        self._running = None
        self.fit_button.setEnabled(True)
        if status != "ok":
            self._fail(payload)
            return
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
            self._fitted_trace = request.trace_id
        self.fitFinished.emit(True)

    def _on_band(self) -> None:
        from refplane.analysis.units import format_frequency

        band = self.state.band
        if band is not None:
            self.band_edit.setText(f"{format_frequency(band[0])} : {format_frequency(band[1])}")

    def _on_traces(self) -> None:
        ids = self.state.trace_ids()
        if self._fitted_trace is not None and self._fitted_trace not in ids:
            self._fitted_trace = None
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
            self._fill(self.params_table, [])
            self._fill(self.ranking_table, [])
            self.ranking_label.setText("")
            return
        from refplane.analysis.fitting import ranking_rows  # not needed (nor imported) at start-up

        self.sentence.setText(result.sentence())
        self._fill(self.params_table, result.table_rows())
        chosen = "chosen automatically; " if result.automatic else ""
        self.ranking_label.setText(f"Candidates by AICc ({chosen}lower is better)")
        self._fill(self.ranking_table, ranking_rows(result))

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
