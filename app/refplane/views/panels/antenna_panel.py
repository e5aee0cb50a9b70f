"""Antenna panel: resonances and usable bands, the feedline to the radio, matching networks.

Three parts on the current marker's trace (or the current trace when no marker is placed):

- *Resonance and bands*: every resonance (X through zero, with R and loaded Q), the best
  match, and each band at or below the chosen VSWR;
- *Feedline*: what the radio sees at the marker through a line of given length, velocity
  factor, loss and impedance, and the loss budget at the transmitter's power; the whole
  trace as the radio sees it can be opened as a new trace;
- *Matching at the marker*: every network the analysis designs (L, Pi, T, quarter-wave,
  stubs) with exact and standard part values, the voltage and current each part carries,
  the VSWR and 2:1 band with standard parts, and the Bode–Fano limit; the chosen network's
  path from the load to the centre is drawn on the chart; its parts copy as text.

The panel's settings are the session's ``"antenna"`` tool record
(:class:`~refplane.session.tool_settings.AntennaSettings`). The work runs as
:func:`refplane.session.tool_jobs.antenna` on the window's worker facility, again whenever the
marker, the offsets, the trace or the settings change; a newer request supersedes an older one.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import Signal
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QHBoxLayout, QLineEdit, QPushButton,
                               QSizePolicy, QVBoxLayout, QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.session import tool_jobs, tool_text
from refplane.session.model import Session
from refplane.views.binding import bind
from refplane.views.panels import tool_widgets as tw
from refplane.views.workers import Workers

TOOL = "antenna"

#: Preferred-number series offered for part values (IEC 60063).
SERIES = ("E12", "E24", "E96")


class AntennaPanel(QWidget):
    """Resonance, feedline and matching of the current marker's trace."""

    #: Emitted on the UI thread after results were shown.
    resultsShown = Signal()
    #: The chosen network's path on the chart as Γ (complex ndarray), or None when none is drawn.
    pathChanged = Signal(object)

    def __init__(self, state: Session, parent: QWidget | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self.workers = workers if workers is not None else Workers(self, threads=1)
        self._job = 0
        self._ticket = None
        self.results: tool_jobs.AntennaResults | None = None
        self.path_gamma: np.ndarray | None = None
        self._timer = tw.next_turn(self, self.refresh)

        content, column = tw.column_widget()
        self.message = tw.note("")
        column.addWidget(self.message)

        # ---- resonance and bands
        box, lay = tw.section("Resonance and usable bands")
        self.vswr_spin = QDoubleSpinBox()
        self.vswr_spin.setRange(1.05, 20.0)
        self.vswr_spin.setSingleStep(0.1)
        self.vswr_spin.setDecimals(2)
        self.vswr_spin.setSuffix(" : 1")
        self.vswr_spin.setToolTip("A band counts as usable where VSWR stays at or below this value.")
        f = tw.form()
        f.addRow("VSWR limit", self.vswr_spin)
        lay.addLayout(f)
        self.best_label = tw.note("", quiet=False)
        lay.addWidget(self.best_label)
        self.resonance_table = tw.table(["Resonance", "Kind", "R", "Loaded Q"])
        self.resonance_table.horizontalHeaderItem(3).setToolTip(
            "ω·|dZ/dω|/(2R) at the resonance (Yaghjian and Best 2005); not the marker table's X/R")
        lay.addWidget(self.resonance_table)
        self.band_table = tw.table(["From / to", "Centre / width"])
        lay.addWidget(self.band_table)
        column.addWidget(box)

        # ---- feedline
        box, lay = tw.section("Feedline to the radio")
        self.length_edit = QLineEdit()
        self.length_edit.setPlaceholderText("e.g. 20 m, 65 ft")
        self.vf_spin = QDoubleSpinBox()
        self.vf_spin.setRange(0.05, 1.0)
        self.vf_spin.setDecimals(3)
        self.vf_spin.setSingleStep(0.01)
        self.vf_spin.setToolTip("Velocity factor: about 0.66 for solid polyethylene coax, 0.78–0.85 for foam "
                                "(common practice). Also used for the lines and stubs of matching networks.")
        self.loss_edit = QLineEdit()
        self.loss_edit.setPlaceholderText("e.g. 1.2 dB @ 14 MHz (matched, whole length)")
        self.z0_edit = QLineEdit()
        self.z0_edit.setPlaceholderText("the port's reference")
        self.power_edit = QLineEdit()
        self.power_edit.setPlaceholderText("e.g. 100 W")
        self.power_edit.setToolTip("Power the transmitter puts into the line (and into a matching network).")
        self.toward_combo = QComboBox()
        self.toward_combo.addItem("at the antenna", "radio")
        self.toward_combo.addItem("at the radio end", "antenna")
        self.toward_combo.setToolTip("Where the trace was measured: at the antenna (the panel shows what "
                                     "the radio sees) or at the radio end (it shows the antenna)")
        self.toward_combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        self.toward_combo.setMinimumContentsLength(12)
        f = tw.form()
        f.addRow("Length", self.length_edit)
        f.addRow("Velocity factor", self.vf_spin)
        f.addRow("Loss", self.loss_edit)
        f.addRow("Line Z0", self.z0_edit)
        f.addRow("Power", self.power_edit)
        f.addRow("Trace taken", self.toward_combo)
        lay.addLayout(f)
        self.feed_table = tw.table(["At the marker", "Value"])
        lay.addWidget(self.feed_table)
        self.feed_note = tw.note("")
        lay.addWidget(self.feed_note)
        self.feed_trace_button = QPushButton("Open the far end as a trace")
        self.feed_trace_button.setToolTip("Add the whole sweep as seen at the other end of this feedline "
                                          "as a new trace.")
        lay.addWidget(self.feed_trace_button)
        column.addWidget(box)

        # ---- matching
        box, lay = tw.section("Matching at the marker")
        self.target_edit = QLineEdit()
        self.target_edit.setPlaceholderText("the port's reference")
        self.series_combo = QComboBox()
        for name in SERIES:
            self.series_combo.addItem(name, name)
        f = tw.form()
        f.addRow("Match to", self.target_edit)
        f.addRow("Part values", self.series_combo)
        lay.addLayout(f)
        self.match_heading = tw.note("", quiet=False)
        lay.addWidget(self.match_heading)
        self.network_combo = QComboBox()
        self.network_combo.setSizeAdjustPolicy(QComboBox.AdjustToMinimumContentsLengthWithIcon)
        self.network_combo.setMinimumContentsLength(14)
        self.network_combo.setSizePolicy(QSizePolicy.Ignored, QSizePolicy.Fixed)
        lay.addWidget(self.network_combo)
        self.parts_table = tw.table(["Part", "Exact / standard", "Stress"])
        self.parts_table.horizontalHeaderItem(2).setToolTip(
            "Peak voltage across and RMS current through the part at the power given")
        lay.addWidget(self.parts_table)
        self.network_label = tw.note("", quiet=False)
        lay.addWidget(self.network_label)
        self.bode_fano_label = tw.note("", quiet=False)
        lay.addWidget(self.bode_fano_label)
        self.notes_label = tw.note("")
        lay.addWidget(self.notes_label)
        row = QHBoxLayout()
        self.draw_check = QCheckBox("Path on the chart")
        self.copy_button = QPushButton("Copy parts")
        self.copy_button.setToolTip("Copy the chosen network's parts, stress and bands as text")
        row.addWidget(self.draw_check)
        row.addStretch(1)
        row.addWidget(self.copy_button)
        lay.addLayout(row)
        column.addWidget(box)

        column.addWidget(tw.caution(tool_text.ANTENNA_CAUTION))
        column.addStretch(1)

        outer = QVBoxLayout(self)
        outer.setContentsMargins(0, 0, 0, 0)
        outer.addWidget(tw.scroll_column(content))

        self._show_settings()
        # Without keyboard tracking a spin box reports a typed value once (Enter or leaving it),
        # arrows and the wheel at once.
        for spin in (self.vswr_spin, self.vf_spin):
            spin.setKeyboardTracking(False)
        self.vswr_spin.valueChanged.connect(lambda v: self._set(vswr_limit=round(v, 4)))
        self.vf_spin.valueChanged.connect(lambda v: self._set(feed_vf=round(v, 6)))
        self.length_edit.editingFinished.connect(self._length_typed)
        self.loss_edit.editingFinished.connect(self._loss_typed)
        self.z0_edit.editingFinished.connect(lambda: self._ohms_typed(self.z0_edit, "feed_line_z0_ohm"))
        self.target_edit.editingFinished.connect(lambda: self._ohms_typed(self.target_edit, "target_ohm"))
        self.power_edit.editingFinished.connect(self._power_typed)
        self.toward_combo.currentIndexChanged.connect(lambda _i: self._set(feed_toward=self.toward_combo.currentData()))
        self.series_combo.currentIndexChanged.connect(lambda _i: self._set(series=self.series_combo.currentData()))
        self.network_combo.currentIndexChanged.connect(self._network_chosen)
        self.draw_check.toggled.connect(lambda on: self._set(draw_path=bool(on)))
        self.copy_button.clicked.connect(self.copy_parts)
        self.feed_trace_button.clicked.connect(self.open_far_end)

        bind(self, state.toolChanged, self._on_tool)
        for signal in (state.markerMoved, state.currentMarkerChanged, state.offsetsChanged, state.traceChanged):
            bind(self, signal, self._schedule)
        for signal in (state.markersChanged, state.tracesChanged):
            bind(self, signal, self._schedule)
        bind(self, state.currentTraceChanged, self._schedule)
        self.refresh()

    # ---------------------------------------------------------------- public
    @property
    def settings(self):
        """The session's antenna settings."""
        return self.state.tool(TOOL)

    def target(self) -> tuple[int, int, float | None]:
        """(trace, port, marker frequency or None) the panel reads; trace −1 when there is none."""
        mid = self.state.current_marker
        if mid != -1:
            marker = self.state.marker(mid)
            trace = self.state.trace(marker.trace_id)
            return trace.id, trace.port, marker.freq_hz
        tid = self.state.current_trace
        if tid == -1:
            return -1, 1, None
        return tid, self.state.trace(tid).port, None

    def refresh(self) -> int | None:
        """Start the work for the current marker and settings now; returns the job number."""
        self._timer.stop()
        tid, port, freq = self.target()
        if self._ticket is not None:
            self._ticket.cancel()
            self._ticket = None
        self._job += 1
        if tid == -1:
            self._show(None)
            self._say("Open a sweep of the antenna (with the plane at its feedpoint) and place "
                                 "a marker.")
            return None
        request = tool_jobs.AntennaRequest(job=self._job, trace_id=tid, sweep=self.state.displayed(tid),
                                           port=port, freq_hz=freq, settings=self.settings)
        self._say("Working…")

        def work(ticket):
            return tool_jobs.antenna(request, cancelled=lambda: ticket.cancelled)

        self._ticket = self.workers.submit(work, lambda result: self._on_done(request, result),
                                           name="Antenna readings…")
        return self._job

    def wait(self, msecs: int = 30000) -> bool:
        """Run any pending refresh and wait until its results are shown (tests, closing)."""
        return tw.wait_for(self, msecs)

    def chosen_network(self):
        """(network, key) chosen in the list, or (None, "")."""
        match = self._match()
        if match is None or not match.networks:
            return None, ""
        keys = tool_text.network_keys(match.networks)
        key = self.settings.network if self.settings.network in keys else keys[0]
        return match.networks[keys.index(key)], key

    def parts_text(self) -> str:
        """The chosen network as text ("" when there is none)."""
        network, key = self.chosen_network()
        return "" if network is None else tool_text.parts_text(self._match(), network, key)

    def copy_parts(self) -> None:
        """Put :meth:`parts_text` on the clipboard."""
        text = self.parts_text()
        if text:
            QGuiApplication.clipboard().setText(text)

    def open_far_end(self) -> None:
        """Add the trace as seen at the other end of the feedline as a new trace (off the UI thread)."""
        tid, port, _f = self.target()
        if tid == -1:
            return
        sweep, settings = self.state.displayed(tid), self.settings
        if not settings.feed_length_m > 0:
            self.feed_note.setText("Give the feedline's length first.")
            return
        from refplane.session.jobs import guarded

        def work(_ticket):
            return guarded(lambda: tool_jobs.feedline_sweep(sweep, port, settings), what="work through the feedline")

        def done(result):
            if result.ok:
                self.state.add_sweep(result.value, name=result.value.name)
            else:
                self.feed_note.setText(result.message)

        self.workers.submit(work, done, name="Feedline…")

    def _say(self, text: str) -> None:
        # The message line takes room only when it has something to say.
        self.message.setText(text)
        self.message.setVisible(bool(text))

    # ---------------------------------------------------------------- edits → session
    def _set(self, **changes) -> None:
        try:
            self.state.set_tool(TOOL, **changes)
        except AnalysisError as exc:
            self._say(str(exc))

    def _length_typed(self) -> None:
        from refplane.analysis.units import parse_length

        text = self.length_edit.text().strip()
        try:
            length = parse_length(text) if text else 0.0
            if length < 0:
                raise AnalysisError("a feedline length must not be negative")
        except AnalysisError as exc:
            self.feed_note.setText(str(exc))
            return
        self._set(feed_length_m=length)

    def _loss_typed(self) -> None:
        from refplane.analysis.units import parse_loss

        text = self.loss_edit.text().strip().replace(" ", "")
        try:
            loss, ref = parse_loss(text) if text else (0.0, self.settings.feed_loss_ref_hz)
        except AnalysisError as exc:
            self.feed_note.setText(str(exc))
            return
        self._set(feed_loss_db=loss, feed_loss_ref_hz=ref)

    def _ohms_typed(self, edit: QLineEdit, field: str) -> None:
        from refplane.analysis.units import parse_resistance

        text = edit.text().strip()
        try:
            value = parse_resistance(text) if text else None
            if value is not None and not value > 0:
                raise AnalysisError(f"{text!r}: an impedance must be above zero ohms")
        except AnalysisError as exc:
            self._say(str(exc))
            return
        self._set(**{field: value})

    def _power_typed(self) -> None:
        from refplane.analysis.units import parse_quantity

        text = self.power_edit.text().strip()
        try:
            value = parse_quantity(text, "W", "power") if text else 0.0
            if value < 0:
                raise AnalysisError("a power must be zero or more watts")
        except AnalysisError as exc:
            self._say(str(exc))
            return
        self._set(power_w=value)

    def _network_chosen(self, index: int) -> None:
        key = self.network_combo.itemData(index)
        if key is not None:
            self._set(network=key)

    # ---------------------------------------------------------------- session → widgets
    def _on_tool(self, name: str) -> None:
        if name != TOOL:
            return
        self._show_settings()
        self._schedule()

    def _schedule(self, *_args) -> None:
        self._timer.start()

    def _show_settings(self) -> None:
        """Show the session's settings in the fields (signals held: nothing echoes back)."""
        from refplane.analysis.units import format_frequency

        s = self.settings

        put = tw.put

        if abs(self.vswr_spin.value() - s.vswr_limit) > 1e-9:
            put(self.vswr_spin, self.vswr_spin.setValue, s.vswr_limit)
        if abs(self.vf_spin.value() - s.feed_vf) > 1e-9:
            put(self.vf_spin, self.vf_spin.setValue, s.feed_vf)
        texts = (
            (self.length_edit, f"{s.feed_length_m:g} m" if s.feed_length_m else ""),
            (self.loss_edit, f"{s.feed_loss_db:g} dB @ {format_frequency(s.feed_loss_ref_hz)}"
             if s.feed_loss_db else ""),
            (self.z0_edit, f"{s.feed_line_z0_ohm:g} Ω" if s.feed_line_z0_ohm else ""),
            (self.target_edit, f"{s.target_ohm:g} Ω" if s.target_ohm else ""),
            (self.power_edit, f"{s.power_w:g} W" if s.power_w else ""),
        )
        for edit, text in texts:
            if edit.text() != text and not edit.hasFocus():
                put(edit, edit.setText, text)
        for combo, value in ((self.toward_combo, s.feed_toward), (self.series_combo, s.series)):
            i = combo.findData(value)
            if i >= 0 and i != combo.currentIndex():
                put(combo, combo.setCurrentIndex, i)
        if self.draw_check.isChecked() != s.draw_path:
            put(self.draw_check, self.draw_check.setChecked, s.draw_path)
        self._show_network()

    # ---------------------------------------------------------------- results
    def _on_done(self, request, result) -> None:
        if request.job != self._job:
            return  # superseded
        self._ticket = None
        if request.trace_id not in self.state.trace_ids():
            return
        self._show(result.value if result.ok else None, message="" if result.ok else result.message)

    def _match(self):
        r = self.results
        return r.match.value if r is not None and r.match.ok else None

    def _show(self, results, message: str = "") -> None:
        self.results = results
        self._say(message)
        if results is None:
            for t in (self.resonance_table, self.band_table, self.feed_table, self.parts_table):
                tw.fill(t, [])
            for label in (self.best_label, self.feed_note, self.match_heading, self.network_label,
                          self.bode_fano_label, self.notes_label):
                label.setText("")
            self.network_combo.clear()
            self._show_network()
            return
        res = results.resonance
        if res.ok:
            self.best_label.setText(tool_text.best_sentence(res.value, results.request.settings.vswr_limit))
            tw.fill(self.resonance_table, tool_text.resonance_rows(res.value))
            tw.fill(self.band_table, two_line(tool_text.band_rows(res.value)))
        else:
            self.best_label.setText(res.message)
            tw.fill(self.resonance_table, [])
            tw.fill(self.band_table, [])
        feed = results.feedline
        tw.fill(self.feed_table, tool_text.feedline_rows(feed.value) if feed.ok else [])
        self.feed_note.setText("" if feed.ok else feed.message)
        match = results.match
        if match.ok:
            m = match.value
            self.match_heading.setText(tool_text.match_heading(m))
            self.bode_fano_label.setText(tool_text.bode_fano_sentence(m))
            self.notes_label.setText("; ".join(m.notes))
            keys = tool_text.network_keys(m.networks)
            self.network_combo.blockSignals(True)
            self.network_combo.clear()
            for n, k in zip(m.networks, keys):
                self.network_combo.addItem(tool_text.network_label(n, k), k)
            self.network_combo.blockSignals(False)
        else:
            self.match_heading.setText(match.message)
            for label in (self.bode_fano_label, self.notes_label):
                label.setText("")
            self.network_combo.clear()
        self._show_network()
        self.resultsShown.emit()

    def _show_network(self) -> None:
        network, key = self.chosen_network()
        if network is None:
            tw.fill(self.parts_table, [])
            self.network_label.setText("")
            self.copy_button.setEnabled(False)
            self._set_path(None)
            return
        i = self.network_combo.findData(key)
        if i >= 0 and i != self.network_combo.currentIndex():
            self.network_combo.blockSignals(True)
            self.network_combo.setCurrentIndex(i)
            self.network_combo.blockSignals(False)
        self.network_combo.setToolTip(self.network_combo.currentText())
        # A line's or stub's impedance and far end go on a second line of its cell.
        tw.fill(self.parts_table, [[r[0].replace(" line ", " line\n", 1).replace(" stub ", " stub\n", 1)]
                                   + two_line([r[1:]])[0] for r in tool_text.part_rows(network)])
        self.network_label.setText(tool_text.network_sentence(network, self._match().series))
        self.copy_button.setEnabled(True)
        self._set_path(network.path_gamma if self.settings.draw_path else None)

    def _set_path(self, gamma) -> None:
        self.path_gamma = gamma
        self.pathChanged.emit(gamma)


def two_line(rows):
    """Pairs of cells stacked in one cell each ("a\nb"), so a table fits the side column."""
    return [[f"{row[i]}\n{row[i + 1]}" for i in range(0, len(row), 2)] for row in rows]


# ---------------------------------------------------------------- the chart's path item
def path_item(theme=None):
    """A chart item drawing a network's path (load → centre) as a thick dotted line with its ends marked."""
    import pyqtgraph as pg
    from PySide6.QtCore import Qt
    from PySide6.QtGui import QColor, QPen

    colour = QColor("#7a3db8")
    pen = QPen(colour, 2.4, Qt.DotLine)
    pen.setCosmetic(True)
    item = pg.PlotDataItem(pen=pen, symbol=None, antialias=True)
    item.setZValue(8)
    ends = pg.ScatterPlotItem(size=9, pen=pg.mkPen(colour, width=1.5), brush=pg.mkBrush(255, 255, 255, 200),
                              symbol="o")
    ends.setZValue(9)
    ends.setParentItem(item)

    def show(gamma) -> None:
        if gamma is None or len(gamma) == 0:
            item.setData([], [])
            ends.setData([], [])
            item.setVisible(False)
            return
        g = np.asarray(gamma, complex)
        item.setData(g.real, g.imag)
        ends.setData([g[0].real, g[-1].real], [g[0].imag, g[-1].imag])
        item.setVisible(True)

    item.show_path = show
    item.setVisible(False)
    return item


def build(window) -> "AntennaPanel":
    """The antenna panel for ``window``, with its matching path drawn on the chart."""
    panel = AntennaPanel(window.state, workers=window.workers)
    path = getattr(window, "_antenna_path", None)
    if path is None:
        path = window._antenna_path = path_item()
        window.chart.plot.addItem(path)
    panel.pathChanged.connect(path.show_path)
    path.show_path(panel.path_gamma)
    return panel


def install(window) -> object:
    """Add the antenna panel to the window's side column (built when first shown) and its path to the chart."""
    return tw.install_lazily(window, "Antenna", lambda: build(window))
