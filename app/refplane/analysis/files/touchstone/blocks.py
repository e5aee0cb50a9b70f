"""Blocks of a file's numbers parsed on a few threads, the results handed back in file order.

numpy releases the interpreter lock inside its bulk loops (comparisons, ``nonzero``, sorting,
gathers, arithmetic), which is where the bulk pass spends its time, so two threads keep two
cores busy. The main thread keeps reading, cleaning and checking in file order; the workers
only run a pure function on bytes. At most ``workers + 2`` blocks of text are held at once, so the
memory stays bounded whatever the file's size. A file of one block is parsed on the calling
thread: starting threads would cost more than it saves.

``concurrent.futures`` is not used: importing it takes about 15 ms, a noticeable part of the
``refplane read`` start-up.
"""

from __future__ import annotations

import os
import queue
import threading
from typing import Callable, Iterator

#: Worker threads: one per core, at most two (more gave nothing measurable on bigger
#: machines, whose memory bandwidth the passes already use).
WORKERS = max(1, min(2, os.cpu_count() or 1))


class Blocks:
    """Run ``parse`` on each added block; :meth:`results` yields the results in order.

    Use as a context manager, so the threads are stopped whatever happens. ``failed`` turns
    true as soon as any block's result is None, so the caller can stop reading early.
    """

    def __init__(self, parse: Callable[[bytes], object], workers: int = WORKERS):
        self.parse = parse
        self.workers = workers
        self.failed = False
        self._held: bytes | None = None  # the first block, until we know there is a second
        self._results: dict[int, object] = {}
        self._count = 0
        self._next = 0  # the first result not yet handed back
        self._jobs: queue.Queue | None = None
        self._threads: list[threading.Thread] = []
        self._cancel = False

    def __enter__(self) -> "Blocks":
        return self

    def __exit__(self, *exc) -> None:
        self._cancel = True
        self._stop()

    def add(self, body: bytes) -> None:
        """Queue one block (waits while the workers are ``workers`` blocks behind)."""
        if self.workers <= 1:
            self._store(self._count, body)
        elif self._count == 0:
            self._held = body
        else:
            if self._jobs is None:
                self._start()
                self._jobs.put((0, self._held))
                self._held = None
            self._jobs.put((self._count, body))
        self._count += 1

    def ready(self) -> Iterator[object]:
        """The results finished so far that are next in order (does not wait). Taking them
        while reading lets the caller release each block's result early."""
        while self._next in self._results:
            yield self._take()

    def results(self) -> Iterator[object]:
        """Every remaining result, in the order added, once all are done (an exception in a
        worker is raised here)."""
        if self._held is not None:
            self._store(0, self._held)
            self._held = None
        self._stop()
        while self._next < self._count:
            yield self._take()

    def _take(self) -> object:
        result = self._results.pop(self._next)
        self._next += 1
        if isinstance(result, BaseException):
            raise result
        return result

    def _store(self, index: int, body: bytes) -> None:
        try:
            result = self.parse(body)
        except Exception as exc:  # handed to the main thread by results()
            result = exc
        self._results[index] = result  # one dict store: atomic under the interpreter lock
        if result is None:
            self.failed = True

    def _start(self) -> None:
        # One waiting block: with one more in each worker's hands, the text held at once is
        # at most (workers + 2) blocks.
        self._jobs = queue.Queue(maxsize=1)
        for _ in range(self.workers):
            thread = threading.Thread(target=self._work, name="refplane-read", daemon=True)
            thread.start()
            self._threads.append(thread)

    def _work(self) -> None:
        while True:
            job = self._jobs.get()
            if job is None:
                return
            if not self._cancel:
                self._store(*job)

    def _stop(self) -> None:
        if not self._threads:
            return
        for _ in self._threads:
            self._jobs.put(None)
        for thread in self._threads:
            thread.join()
        self._threads.clear()
