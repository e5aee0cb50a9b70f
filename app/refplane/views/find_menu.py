"""Markers ▸ Find: place markers where the current trace has its best match, its resonances,
its largest |Z|, or the edges of the band where VSWR stays below a value.

The same menu hangs under the marker table's Find button. Markers placed here follow their
search: when the trace's data change (offsets edited, file reloaded) they move to where the
search now finds it, until moved by hand. The sentence naming the placed markers reads the
Scene from the window's :class:`~refplane.views.scene_controller.SceneController` when one is
given (the Scene every view shows), else the session's own.
"""

from __future__ import annotations

from PySide6.QtWidgets import QInputDialog, QMenu, QWidget

from refplane.session.model import Session

#: (menu text, search, what to say when nothing is found)
SEARCHES = (
    ("Best match (minimum VSWR)", "best-match", "The trace is too short to search."),
    ("Resonances (X = 0)", "resonances", "No resonance: the reactance keeps one sign over this sweep."),
    ("Largest |Z|", "max-z", "The trace is too short to search."),
)
BAND_TEXT = "Band where VSWR ≤ …"


def fill_find_menu(menu: QMenu, state: Session, parent: QWidget, say, *,
                   trace_id: int | None = None, controller=None) -> QMenu:
    """Add the searches to ``menu``; ``say(text, passing)`` reports the outcome in a line of the
    window (``passing`` is true for news that need not stay on screen). With ``trace_id`` the
    search runs on that trace (made current first), else on the current trace. ``controller``
    (the window's SceneController) gives the Scene the outcome is worded from."""
    def on_trace(run):
        def go():
            if trace_id is not None and trace_id in state.trace_ids():
                state.set_current_trace(trace_id)
            return run()
        return go

    for text, what, nothing in SEARCHES:
        menu.addAction(text, on_trace(lambda w=what, n=nothing: run_search(state, w, say, nothing=n,
                                                                            controller=controller)))
    menu.addSeparator()
    menu.addAction(BAND_TEXT, on_trace(lambda: ask_band(state, parent, say, controller=controller)))
    return menu


def run_search(state: Session, what: str, say, *, vswr_limit: float = 2.0, nothing: str = "",
               controller=None) -> list[int]:
    """Run one search on the current trace and say what happened; returns the markers placed.

    The search is a session method (it places markers); the sentence names them from the
    controller's Scene when a ``controller`` is given.
    """
    from refplane.analysis.errors import AnalysisError

    tid = controller.scene().current_trace if controller is not None else state.current_trace
    if tid == -1:
        say("Open a sweep first: searches run on the current trace.")
        return []
    try:
        ids = state.find_markers(tid, what, vswr_limit=vswr_limit)
    except AnalysisError as exc:
        say(str(exc))
        return []
    if not ids:
        say(nothing or f"VSWR never gets down to {vswr_limit:g} on this trace.")
        return []
    scene = controller.scene() if controller is not None else state.scene()
    if what == "band":
        a, b = (scene.marker(i).number for i in ids)
        say(f"Placed markers {a} and {b} at the band's edges; they follow it when the data change.", True)
    else:
        found = ", ".join(f"marker {scene.marker(i).number} ({scene.marker(i).follows_text})" for i in ids)
        say(f"Placed {found}; it follows the search when the data change." if len(ids) == 1 else
            f"Placed {found}; they follow the search when the data change.", True)
    return ids


#: The VSWR limit asked last (2:1 is the usual first question; common practice).
_last_limit = [2.0]


def ask_band(state: Session, parent: QWidget, say, *, controller=None) -> list[int]:
    """Ask for the VSWR limit, then mark the band's two edges."""
    value, ok = QInputDialog.getDouble(parent, "Band where VSWR stays below a value",
                                       "VSWR limit (e.g. 2 for the 2:1 band):", _last_limit[0], 1.01, 100.0, 2)
    if not ok:
        return []
    _last_limit[0] = value
    return run_search(state, "band", say, vswr_limit=value, controller=controller)
