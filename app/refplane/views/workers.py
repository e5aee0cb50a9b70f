"""The window's one facility for work off the UI thread: reads, fits, estimates.

Work is a plain function from :mod:`refplane.session.jobs` (which never raises); it runs on a
thread of a :class:`QThreadPool` and its :class:`~refplane.session.jobs.JobResult` comes back
to a callback on the UI thread. A :class:`Ticket` cancels it; work that can stop early (a
child process reading a big file) registers how to stop.
"""

from __future__ import annotations

import threading
from typing import Callable

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from refplane.session.jobs import JobResult


class Ticket:
    """One piece of submitted work: cancel it, or ask whether it was cancelled."""

    def __init__(self, name: str = ""):
        self.name = name
        """What the work is, in words (for the status bar)."""
        self._cancelled = threading.Event()
        self._stoppers: list[Callable[[], None]] = []
        self._lock = threading.Lock()

    @property
    def cancelled(self) -> bool:
        """True once :meth:`cancel` was called."""
        return self._cancelled.is_set()

    def cancel(self) -> None:
        """Ask the work to stop; its result will be dropped."""
        self._cancelled.set()
        with self._lock:
            stoppers = list(self._stoppers)
        for stop in stoppers:
            try:
                stop()
            except Exception:  # noqa: BLE001 - stopping is best effort
                pass

    def on_cancel(self, stop: Callable[[], None]) -> None:
        """Call ``stop`` when the work is cancelled (at once if it already was)."""
        with self._lock:
            self._stoppers.append(stop)
        if self.cancelled:
            stop()


class _Relay(QObject):
    # Lives on the UI thread: an emit from a pool thread is queued to it.
    finished = Signal(object, object)


class _Run(QRunnable):
    def __init__(self, work: Callable[[Ticket], JobResult], ticket: Ticket, relay: _Relay):
        super().__init__()
        self.work, self.ticket, self.relay = work, ticket, relay

    def run(self) -> None:
        try:
            result = self.work(self.ticket)
        except Exception as exc:  # noqa: BLE001 - jobs never raise; this is a last guard
            result = JobResult(False, message=f"the work failed ({type(exc).__name__}: {exc})")
        self.relay.finished.emit(self.ticket, result)


class Workers(QObject):
    """Runs jobs on pool threads and hands each result to its callback on the UI thread.

    Signals
    -------
    busyChanged(bool, str): work started or ended; the text names what is running.
    """

    busyChanged = Signal(bool, str)

    def __init__(self, parent: QObject | None = None, *, threads: int = 2):
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(threads)
        self._relay = _Relay()  # unparented: a pool thread may still emit while the window closes
        self._relay.finished.connect(self._on_finished)
        self._callbacks: dict[Ticket, Callable[[JobResult], None]] = {}

    @property
    def busy(self) -> bool:
        """True while any work is running or waiting."""
        return bool(self._callbacks)

    def describe(self) -> str:
        """What is running, in words ("" when idle)."""
        names = [t.name for t in self._callbacks if t.name]
        if not names:
            return ""
        return names[0] if len(names) == 1 else f"{len(names)} jobs running…"

    def submit(self, work: Callable[[Ticket], JobResult], done: Callable[[JobResult], None], *,
               name: str = "") -> Ticket:
        """Run ``work(ticket)`` off the UI thread; ``done(result)`` is called on the UI thread.

        A cancelled ticket's result is not delivered.
        """
        ticket = Ticket(name)
        self._callbacks[ticket] = done
        self.busyChanged.emit(True, self.describe())
        self.pool.start(_Run(work, ticket, self._relay))
        return ticket

    def cancel_all(self) -> None:
        """Cancel every running job."""
        for ticket in list(self._callbacks):
            ticket.cancel()

    def wait(self, msecs: int = 30000) -> bool:
        """Block until every job has ended, then deliver their results (tests, shutdown)."""
        done = self.pool.waitForDone(msecs)
        from PySide6.QtCore import QCoreApplication

        QCoreApplication.sendPostedEvents(self._relay)
        return done

    def _on_finished(self, ticket: Ticket, result: JobResult) -> None:
        done = self._callbacks.pop(ticket, None)
        if done is not None and not ticket.cancelled:
            done(result)
        self.busyChanged.emit(self.busy, self.describe())
