"""Reading sweep files off the UI thread, with cancel.

Small files are read on a thread of the window's :class:`~refplane.views.workers.Workers`.
Large files (above :data:`PROCESS_THRESHOLD_BYTES`) are read in a separate Python process
(:mod:`refplane.session.child_reader`, started with ``subprocess``; it imports no Qt): a text
parser holds the interpreter lock for long stretches, which would freeze the window even from
a thread, while a separate process leaves the window's thread free, and cancelling it really
stops the work. Results arrive on the UI thread through Qt signals.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from dataclasses import dataclass

from PySide6.QtCore import QObject, Signal

from refplane.session.jobs import JobResult, read
from refplane.views.workers import Ticket, Workers

#: Files larger than this are read in a child process (bytes).
PROCESS_THRESHOLD_BYTES = 4 * 1024 * 1024


@dataclass(frozen=True)
class LoadRequest:
    """One file to read."""

    path: str
    """The file."""
    reload_of: int | None = None
    """Trace id to replace with the result (a reload), or None to open a new trace."""
    order: float = 0.0
    """Where the new trace goes in the list: the order in which files were asked for."""


def read_file(path: str, ticket: Ticket) -> JobResult:
    """Read ``path``: here for small files, in a child process for large ones. Never raises."""
    try:
        size = os.path.getsize(path)
    except OSError:
        size = 0
    if size <= PROCESS_THRESHOLD_BYTES:
        return read(path)
    return _read_in_process(path, ticket)


def _read_in_process(path: str, ticket: Ticket) -> JobResult:
    from refplane.session import child_reader

    fd, out = tempfile.mkstemp(prefix="refplane-", suffix=".npz")
    os.close(fd)
    try:
        process = subprocess.Popen(
            [sys.executable, "-m", "refplane.session.child_reader", path, out],
            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        ticket.on_cancel(lambda: process.poll() is None and process.kill())
        _, err = process.communicate()
        if ticket.cancelled:
            return JobResult(False, message="cancelled")
        if process.returncode == 0:
            return JobResult(True, child_reader.load(out))
        lines = [ln for ln in (err or "").strip().splitlines() if ln.strip()]
        if process.returncode == 2 and lines:
            return JobResult(False, message=lines[-1])
        return JobResult(False, message=(f"{path}: the reader stopped unexpectedly (exit code "
                                         f"{process.returncode}){': ' + lines[-1] if lines else ''}"))
    except OSError as exc:
        return JobResult(False, message=f"{path}: could not start the reader ({exc.strerror or exc})")
    finally:
        try:
            os.unlink(out)
        except OSError:
            pass


class SweepLoader(QObject):
    """Queue of file reads; announces results on the UI thread.

    Signals
    -------
    loaded(LoadRequest, Sweep), failed(LoadRequest, str), busyChanged(bool, str)
    """

    loaded = Signal(object, object)
    failed = Signal(object, str)
    busyChanged = Signal(bool, str)

    def __init__(self, parent: QObject | None = None, workers: Workers | None = None):
        super().__init__(parent)
        self.workers = workers if workers is not None else Workers(self)
        self._tickets: dict[Ticket, LoadRequest] = {}
        self._order = 0.0

    @property
    def busy(self) -> bool:
        """True while any file is being read."""
        return bool(self._tickets)

    def load(self, path: str, *, reload_of: int | None = None) -> LoadRequest:
        """Start reading ``path`` (results come by signal); returns the request."""
        self._order += 1.0
        request = LoadRequest(os.fspath(path), reload_of, self._order)
        name = f"Reading {os.path.basename(request.path)}…"
        ticket = self.workers.submit(lambda t: read_file(request.path, t),
                                     lambda result, r=request: self._on_result(r, result), name=name)
        self._tickets[ticket] = request
        self.busyChanged.emit(True, self._describe())
        return request

    def cancel(self) -> None:
        """Stop every read in progress; their results are discarded."""
        for ticket in list(self._tickets):
            ticket.cancel()
            del self._tickets[ticket]
        self.busyChanged.emit(self.busy, self.describe())

    def wait(self, timeout_ms: int = 30000) -> None:
        """Block until every job has ended (for tests and shutdown)."""
        self.workers.wait(timeout_ms)

    def describe(self) -> str:
        """What is being read, in words for the status bar ("" when idle)."""
        return self._describe() if self.busy else ""

    def _describe(self) -> str:
        names = [os.path.basename(r.path) for r in self._tickets.values()]
        return f"Reading {names[0]}…" if len(names) == 1 else f"Reading {len(names)} files…"

    def _on_result(self, request: LoadRequest, result: JobResult) -> None:
        for ticket, r in list(self._tickets.items()):
            if r is request:
                del self._tickets[ticket]
        if result.ok:
            self.loaded.emit(request, result.value)
        else:
            self.failed.emit(request, result.message)
        self.busyChanged.emit(self.busy, self._describe() if self.busy else "")
