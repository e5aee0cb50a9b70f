"""Limits panel: type limits such as ``vswr <= 2 over 140MHz:150MHz`` and see each one decided.

Each limit is tested on the current trace (:mod:`refplane.session.plot_limits`, through
``analysis.limits``): the list says pass, FAIL or indeterminate with the worst frequency and the
margin, and the plot showing the limit's quantity draws it over its band, shaded in the
decision's colour. The limits are the session's ``"limits"`` tool record, saved with it.
What the list shows comes from the Scene handed to :meth:`LimitsPanel.set_scene`; typed and
removed limits go to the session's record.
"""

from __future__ import annotations

from PySide6.QtWidgets import (QHBoxLayout, QLineEdit, QListWidget, QListWidgetItem, QPushButton,
                               QVBoxLayout, QWidget)

from refplane.analysis.errors import AnalysisError
from refplane.session import plot_limits
from refplane.session.model import Session
from refplane.views.panels import tool_widgets as tw

TOOL = "limits"

#: A word per decision before each line, so the list does not lean on colour alone.
MARKS = {"pass": "✓", "fail": "✗", "indeterminate": "?", None: "–"}


class LimitsPanel(QWidget):
    """The session's limits: an entry line, the list with each decision, and a remove button."""

    def __init__(self, state: Session, parent: QWidget | None = None, *, controller=None):
        super().__init__(parent)
        self.setObjectName("panel")
        self.state = state
        self._scene = None
        self.entry = QLineEdit()
        self.entry.setPlaceholderText("vswr <= 2 over 140MHz:150MHz")
        self.entry.setToolTip(
            "QUANTITY <= or >= VALUE over F1:F2. Quantities: vswr, return_loss_db, r_ohm, x_ohm, "
            "z_mag_ohm, gamma_mag, gamma_deg, series_l_h, series_c_f, q, s21_db, s21_deg …")
        self.add_button = QPushButton("Add")
        self.error = tw.note("", quiet=False)
        self.error.setObjectName("caution")
        self.error.setVisible(False)
        self.list = QListWidget()
        self.list.setWordWrap(True)
        self.remove_button = QPushButton("Remove")
        self.remove_button.setToolTip("Forget the selected limit")
        self.trace_note = tw.note("")
        self.rule_note = tw.note("")
        row = QHBoxLayout()
        row.setContentsMargins(0, 0, 0, 0)
        row.addWidget(self.entry, 1)
        row.addWidget(self.add_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(6, 6, 6, 6)
        layout.setSpacing(4)
        layout.addWidget(tw.note("Type a limit and press Enter. Each is tested on the current trace "
                                 "and drawn on the plot that shows its quantity: green where it passes, "
                                 "red where it fails, orange dashed where the uncertainty leaves it open."))
        layout.addLayout(row)
        layout.addWidget(self.error)
        layout.addWidget(self.trace_note)
        layout.addWidget(self.list, 1)
        bottom = QHBoxLayout()
        bottom.setContentsMargins(0, 0, 0, 0)
        bottom.addWidget(self.remove_button)
        bottom.addStretch(1)
        layout.addLayout(bottom)
        layout.addWidget(self.rule_note)
        self.entry.returnPressed.connect(self.add_typed)
        self.add_button.clicked.connect(self.add_typed)
        self.remove_button.clicked.connect(self.remove_selected)
        self.list.currentRowChanged.connect(lambda _row: self._sync_buttons())
        from refplane.views.scene_controller import controller_for

        self.controller = controller_for(state, self, controller)
        self.controller.attach(self)

    def set_scene(self, scene) -> None:
        """Show the limits of ``scene`` when they, the current trace or the traces' labels changed."""
        old, self._scene = self._scene, scene
        if old is None or old.limits is not scene.limits or old.current_trace != scene.current_trace \
                or old.traces != scene.traces:
            self.refresh()

    # ------------------------------------------------------------------ edits
    def expressions(self) -> tuple[str, ...]:
        """The limits as typed, in order (one check per expression in the Scene)."""
        return tuple(check.text for check in self._scene.limits)

    def add_typed(self) -> bool:
        """Add the typed limit when it parses; otherwise say why in one line. Returns True when added."""
        text = " ".join(self.entry.text().split())
        if not text:
            return False
        try:
            plot_limits.parse(text)
        except AnalysisError as exc:
            self.error.setText(str(exc))
            self.error.setVisible(True)
            return False
        self.error.setVisible(False)
        if text not in self.expressions():
            self.state.set_tool(TOOL, expressions=self.expressions() + (text,))
        self.entry.clear()
        return True

    def remove_selected(self) -> None:
        row = self.list.currentRow()
        exprs = list(self.expressions())
        if 0 <= row < len(exprs):
            del exprs[row]
            self.state.set_tool(TOOL, expressions=tuple(exprs))

    # ----------------------------------------------------------------- showing
    def lines(self) -> list[str]:
        """The list's lines as shown (for tests)."""
        return [self.list.item(i).text() for i in range(self.list.count())]

    def refresh(self, *_args) -> None:
        """Fill the list and notes from the Scene given last."""
        scene = self._scene
        checks = scene.limits
        row = self.list.currentRow()
        self.list.clear()
        for check in checks:
            item = QListWidgetItem(f"{MARKS.get(check.decision, '–')} {check.sentence()}")
            item.setToolTip(check.result.rule if check.result is not None else check.sentence())
            self.list.addItem(item)
        if 0 <= row < self.list.count():
            self.list.setCurrentRow(row)
        tid = scene.current_trace
        if not checks:
            self.trace_note.setText("")
        elif tid == -1:
            self.trace_note.setText("No current trace: pick one in the trace list to test the limits.")
        else:
            self.trace_note.setText(f"Tested on {scene.trace(tid).label}.")
        rules = {c.result.rule for c in checks if c.result is not None}
        self.rule_note.setText("Rule: " + "; ".join(sorted(rules)) if rules else "")
        self._sync_buttons()

    def _sync_buttons(self) -> None:
        self.remove_button.setEnabled(0 <= self.list.currentRow() < self.list.count())


def build(window) -> "LimitsPanel":
    """The limits panel for ``window``, fed by the window's scene controller."""
    return LimitsPanel(window.state, controller=getattr(window, "scene_controller", None))


def install(window):
    """Add the limits panel to the window's side column, built when first shown."""
    return tw.install_lazily(window, "Limits", lambda: build(window))
