"""The one link from the session to the views: resolve once per change, push the Scene to each view.

The session (plain Python, psygnal events) holds the user's work; ``session.scene()`` resolves
it into a frozen :class:`~refplane.session.scene.Scene`. A :class:`SceneController` listens to
the session's change events, asks for that Scene once per change and hands it to every
attached view through the view's ``set_scene(scene)``. Views draw only what they are given:
they never read the session to draw, and they compare parts of the new Scene with the last
one they drew by identity (resolve carries unchanged parts over), so a marker drag step moves
marker items and nothing else. User edits still go from a view straight to a session method;
the change comes back to every view through here.

Pushes are synchronous: the view that a drag step comes from, and every other view, show the
step in the same turn of the event loop, and code (tests included) that changes the session
finds the widgets already following it. Bursts are folded where that adds no lag:

- changes made while a push is running (a view writing back to the session from
  ``set_scene``, say) make one more push when it ends, not one each;
- inside ``with controller.held():`` changes only mark the Scene stale, and one push follows
  when the outermost block ends (opening a session file, which changes many things at once).

Heavy drawing that can wait a turn (the frequency plots' curves) is put off by the view
itself, once per burst.
"""

from __future__ import annotations

from contextlib import contextmanager
from typing import Iterator

from PySide6.QtCore import QObject

from refplane.views.binding import bind

#: The session events that change what is drawn (the ones that make ``Session.scene`` stale).
CHANGE_SIGNALS = (
    "tracesChanged", "traceChanged", "offsetsChanged", "overlaysChanged", "velocityFactorsChanged",
    "currentTraceChanged", "markersChanged", "markerMoving", "currentMarkerChanged", "bandChanging",
    "bandChanged", "displayChanged", "fitSettingsChanged", "calibrationChanged", "toolChanged",
    "memoryChanged",
)

#: A push that keeps starting new pushes (a view and the session disagreeing) stops after this many.
MAX_ROUNDS = 8


class SceneController(QObject):
    """Resolves the session once per change and pushes the frozen Scene to the attached views.

    Parameters
    ----------
    session : Session
        The user's work. Only its change events and ``scene()`` are used.
    parent : QObject, optional
        Owner; the controller lets go of the session's events when the owner is destroyed.

    Examples
    --------
    >>> controller = SceneController(session)      # doctest: +SKIP
    >>> controller.attach(chart)                   # chart.set_scene(...) now and on every change
    """

    def __init__(self, session, parent: QObject | None = None):
        super().__init__(parent)
        self.session = session
        self._views: list = []
        self._scene = None
        self._pushing = False
        self._again = False
        self._held = 0
        self._stale = False
        self.pushes = 0
        """How many pushes have run (each one resolve and one ``set_scene`` per view)."""
        for name in CHANGE_SIGNALS:
            signal = getattr(session, name, None)
            if signal is not None:
                bind(self, signal, self._on_change)

    # ----------------------------------------------------------------- views
    def attach(self, view, *, push: bool = True):
        """Give ``view`` every Scene from now on (and the current one at once, unless ``push`` is false).

        ``view`` needs a ``set_scene(scene)`` method; any object with one will do (the chart,
        the plots, panels, a test double). A view that is a QObject is let go when destroyed.
        Returns the view.
        """
        if not callable(getattr(view, "set_scene", None)):
            raise TypeError(f"{type(view).__name__} has no set_scene(scene) to take a Scene")
        if any(v is view for v in self._views):
            return view
        self._views.append(view)
        if isinstance(view, QObject):
            view.destroyed.connect(lambda *_a, v=view: self.detach(v))
        if push:
            view.set_scene(self.scene())
        return view

    def detach(self, view) -> None:
        """Stop giving ``view`` Scenes."""
        self._views = [v for v in self._views if v is not view]

    def views(self) -> list:
        """The attached views, in attaching order."""
        return list(self._views)

    # ----------------------------------------------------------------- scene
    def scene(self):
        """The Scene as of now: the one last pushed, or a fresh one when the session changed since."""
        if self._scene is None or self._stale:
            self._scene = self.session.scene()
            self._stale = False
        return self._scene

    def push(self) -> None:
        """Resolve (once: the session caches it) and give the Scene to every attached view now."""
        if self._pushing:
            self._again = True  # folded: one more push when the running one ends
            return
        self._pushing = True
        try:
            for _ in range(MAX_ROUNDS):
                self._again = False
                self._stale = True
                scene = self.scene()
                self.pushes += 1
                for view in list(self._views):
                    if _alive(view):
                        view.set_scene(scene)
                    else:
                        self.detach(view)
                if not self._again:
                    break
        finally:
            self._pushing = False

    @contextmanager
    def held(self) -> Iterator[None]:
        """Fold every change made inside the block into one push at its end."""
        self._held += 1
        try:
            yield
        finally:
            self._held -= 1
            if self._held == 0 and self._stale:
                self.push()

    def _on_change(self, *_args) -> None:
        self._stale = True
        if self._held:
            return
        self.push()


def _alive(view) -> bool:
    if not isinstance(view, QObject):
        return True
    from shiboken6 import isValid

    return isValid(view)


def controller_for(session, owner: QObject, controller: SceneController | None) -> SceneController:
    """``controller`` when given; otherwise a new one owned by ``owner`` (a view made on its own)."""
    return controller if controller is not None else SceneController(session, owner)
