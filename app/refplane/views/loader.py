"""Reading sweep files off the UI thread, with cancel.

Small files are read in a worker thread. Large files (above :data:`PROCESS_THRESHOLD_BYTES`)
are read in a separate Python process (:mod:`refplane.views.child_reader`, started with
``subprocess``, so it does not depend on how the main program was started): a text parser
holds the interpreter lock for long stretches, which would freeze the window even from a
thread, while a separate process leaves the window's thread free, and cancelling it really
stops the work. Results arrive on the UI thread through Qt signals.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from dataclasses import dataclass

from PySide6.QtCore import QObject, QThread, Signal

#: Files larger than this are read in a child process (bytes).
PROCESS_THRESHOLD_BYTES = 4 * 1024 * 1024


def read_one(path: str):
    """Read one sweep; returns ("ok", sweep) or ("error", one-line message). Never raises."""
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.loading import read_sweep

    try:
        return "ok", read_sweep(path)
    except AnalysisError as exc:
        return "error", str(exc)
    except MemoryError:
        return "error", f"{path}: not enough memory to read this file"
    except OSError as exc:
        return "error", f"{path}: {exc.strerror or exc}"
    except Exception as exc:  # a reader bug must not take the window down
        return "error", f"{path}: could not be read ({type(exc).__name__}: {exc})"


@dataclass(frozen=True)
class LoadRequest:
    """One file to read."""

    path: str
    """The file."""
    reload_of: int | None = None
    """Trace id to replace with the result (a reload), or None to open a new trace."""


class _Job(QThread):
    result = Signal(object, str, object)  # request, status ("ok"/"error"/"cancelled"), payload

    def __init__(self, request: LoadRequest, parent: QObject | None = None):
        super().__init__(parent)
        self.request = request
        self._process: subprocess.Popen | None = None
        self._cancelled = False

    def cancel(self) -> None:
        self._cancelled = True
        process = self._process
        if process is not None and process.poll() is None:
            process.kill()

    def run(self) -> None:
        path = self.request.path
        try:
            try:
                size = os.path.getsize(path)
            except OSError:
                size = 0
            if size <= PROCESS_THRESHOLD_BYTES:
                status, payload = read_one(path)
            else:
                status, payload = self._read_in_process(path)
        except Exception as exc:  # noqa: BLE001 - the job must always report back
            status, payload = "error", f"{path}: could not be read ({type(exc).__name__}: {exc})"
        if self._cancelled:
            status, payload = "cancelled", None
        self.result.emit(self.request, status, payload)

    def _read_in_process(self, path: str):
        from refplane.views import child_reader

        fd, out = tempfile.mkstemp(prefix="refplane-", suffix=".npz")
        os.close(fd)
        try:
            self._process = subprocess.Popen(
                [sys.executable, "-m", "refplane.views.child_reader", path, out],
                stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
            if self._cancelled:
                self._process.kill()
            _, err = self._process.communicate()
            if self._cancelled:
                return "cancelled", None
            if self._process.returncode == 0:
                return "ok", child_reader.load(out)
            lines = [ln for ln in (err or "").strip().splitlines() if ln.strip()]
            if self._process.returncode == 2 and lines:
                return "error", lines[-1]
            return "error", (f"{path}: the reader stopped unexpectedly (exit code "
                             f"{self._process.returncode}){': ' + lines[-1] if lines else ''}")
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

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self._jobs: list[_Job] = []

    @property
    def busy(self) -> bool:
        """True while any file is being read."""
        return bool(self._jobs)

    def load(self, path: str, *, reload_of: int | None = None) -> None:
        """Start reading ``path`` (results come by signal)."""
        job = _Job(LoadRequest(os.fspath(path), reload_of), self)
        job.result.connect(self._on_result)
        self._jobs.append(job)
        self.busyChanged.emit(True, self._describe())
        job.start()

    def cancel(self) -> None:
        """Stop every read in progress; their results are discarded."""
        for job in list(self._jobs):
            job.cancel()

    def wait(self, timeout_ms: int = 30000) -> None:
        """Block until every job has ended (for tests and shutdown)."""
        for job in list(self._jobs):
            job.wait(timeout_ms)

    def describe(self) -> str:
        """What is being read, in words for the status bar ("" when idle)."""
        return self._describe() if self.busy else ""

    def _describe(self) -> str:
        names = [os.path.basename(j.request.path) for j in self._jobs]
        return f"Reading {names[0]}…" if len(names) == 1 else f"Reading {len(names)} files…"

    def _on_result(self, request: LoadRequest, status: str, payload) -> None:
        job = self.sender()
        if job in self._jobs:
            self._jobs.remove(job)
            job.wait()
            job.deleteLater()
        if status == "ok":
            self.loaded.emit(request, payload)
        elif status == "error":
            self.failed.emit(request, payload)
        self.busyChanged.emit(self.busy, self._describe() if self.busy else "")
