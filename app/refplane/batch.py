"""Checking many sweeps against limits: files and folders in, one decision per file out.

Used by ``refplane check`` and by :func:`refplane.api.check_files`. Qt-free: worker processes
import this module and the analysis layer only.

Each file is read, corrected with the calibration (if one is given), has the line offsets
removed (if any), and is tested against every limit (:mod:`refplane.analysis.limits`). A file
that cannot be read or checked is listed with its one-line reason; the batch goes on.
"""

from __future__ import annotations

import hashlib
import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterable, Sequence

from refplane.analysis.errors import AnalysisError
from refplane.analysis.limits import (
    Limit, LimitResult, LimitStatistics, evaluate_limits, limit_statistics, overall_decision,
)

#: Worker processes are started only when a batch holds about this much work (seconds in one
#: process, estimated from the files' count and size): each worker starts a fresh interpreter
#: and imports numpy and Refplane, which costs about half a second on a busy machine.
PARALLEL_WORK_S = 4.0
# Estimated cost of one file: a fixed part and a part per byte (measured on small and large
# Touchstone files on a 2-core machine, rounded up).
_S_PER_FILE = 0.0008
_S_PER_BYTE = 1.0 / 60e6


@dataclass(frozen=True)
class Preparation:
    """What is done to every sweep before it is read or checked.

    Attributes
    ----------
    port : int
        Port whose reflection the reflection readings use.
    calibration : Calibration or None
        Error terms to correct the sweep with first.
    interpolate : bool
        Allow the calibration's terms to be interpolated onto another frequency grid.
    offset : LineOffset or None
        A line to remove after calibration.
    offset_port : int, "all" or None
        Where the line sits: a port, every port, or (None) the port being read.
    uncertainty : dict
        Expanded uncertainty (k = 2) per quantity key, a scalar or one value per swept point.
    residual : ResidualTerms or None
        The instrument's corrected performance: the uncertainty engine then works out each
        reflection reading's expanded uncertainty at every swept point (linear propagation,
        trace noise estimated from the sweep) for the guard bands.
    """

    port: int = 1
    calibration: object | None = None
    interpolate: bool = False
    offset: object | None = None
    offset_port: int | str | None = None
    uncertainty: dict = field(default_factory=dict)
    residual: object | None = None

    def uncertainties_for(self, sweep, limits) -> dict:
        """Expanded uncertainties per limit quantity: those given, and the engine's where
        ``residual`` is set (reflection readings only; a quantity given by hand wins)."""
        u = dict(self.uncertainty)
        wanted = {lim.quantity for lim in limits} - set(u)
        if self.residual is None or not wanted:
            return u
        from refplane.analysis.uncertainty.propagate import U_KEYS
        from refplane.analysis.uncertainty.reading import UncertaintyOptions, uncertain_points

        keys = [q for q in wanted if q in U_KEYS]
        if not keys:
            return u
        result = uncertain_points(sweep, sweep.freq_hz, port=self.port,
                                  options=UncertaintyOptions(residual=self.residual, method="linear"))
        for q in keys:
            u[q] = getattr(result, q)
        return u

    def apply(self, sweep):
        """The sweep corrected and offset, with plain lines saying what was done.

        Returns
        -------
        (sweep, notes, warnings) : tuple
        """
        notes: list[str] = []
        warnings: list[str] = []
        if self.calibration is not None:
            from refplane.analysis.calibration.solve import correct

            corrected = correct(self.calibration, sweep, interpolate=self.interpolate)
            notes.append(f"calibration applied ({self.calibration.quality}): "
                         + "; ".join(self.calibration.description[:2] or ("saved error terms",)))
            warnings.extend(corrected.warnings)
            sweep = corrected.sweep
        if self.offset is not None:
            from refplane.analysis.lines.deembed import remove_offsets

            target = self.offset_port if self.offset_port is not None else self.port
            if target == "all":
                offsets = (self.offset,) * sweep.n_ports
            else:
                sweep.check_port(target)
                offsets = tuple(self.offset if p == target else None for p in range(1, sweep.n_ports + 1))
            notes.extend(f"port {p}: line removed: {o.describe()}"
                         for p, o in enumerate(offsets, start=1) if o is not None)
            sweep = remove_offsets(sweep, offsets)
        return sweep, tuple(notes), tuple(warnings)


@dataclass(frozen=True, eq=False)
class FileCheck:
    """One file's outcome.

    Attributes
    ----------
    file : str
    decision : str
        "pass", "fail", "indeterminate" or "unreadable".
    results : tuple of LimitResult
        One per limit, in the order given (empty when unreadable).
    reason : str
        Why the file could not be checked (one line), else "".
    """

    file: str
    decision: str
    results: tuple[LimitResult, ...] = ()
    reason: str = ""

    @property
    def passed(self) -> bool | None:
        """True for pass, False for fail, None when indeterminate or unreadable."""
        return {"pass": True, "fail": False}.get(self.decision)

    def json(self) -> dict:
        """As ``refplane check --json`` lists it."""
        out = {"file": self.file, "pass": self.passed, "decision": self.decision,
               "limits": [r.json() for r in self.results]}
        if self.reason:
            out["reason"] = self.reason
        return out


@dataclass(frozen=True, eq=False)
class BatchResult:
    """The outcome of a batch: every file in order, statistics per limit, counts."""

    limits: tuple[Limit, ...]
    files: tuple[FileCheck, ...]
    statistics: tuple[LimitStatistics, ...]

    @property
    def summary(self) -> dict[str, int]:
        """Counts: files, passed, failed, indeterminate, unreadable."""
        count = {d: 0 for d in ("pass", "fail", "indeterminate", "unreadable")}
        for f in self.files:
            count[f.decision] += 1
        return {"files": len(self.files), "passed": count["pass"], "failed": count["fail"],
                "indeterminate": count["indeterminate"], "unreadable": count["unreadable"]}

    @property
    def exit_status(self) -> int:
        """0 when every file passed, 1 when any failed or is indeterminate, 2 when any was unreadable."""
        s = self.summary
        if s["unreadable"]:
            return 2
        return 1 if s["failed"] or s["indeterminate"] else 0

    def json(self) -> dict:
        """The whole batch as ``refplane check --json`` prints it."""
        return {"files": [f.json() for f in self.files], "summary": self.summary,
                "statistics": [s.json() for s in self.statistics]}


def collect_files(paths: Iterable[str | os.PathLike]) -> list[str]:
    """Expand folders (recursively, sorted) into the sweep files they hold; keep files as given.

    Raises
    ------
    AnalysisError
        For a path that does not exist, or when no file is found at all.
    """
    from refplane.analysis.files.loading import is_sweep_file

    out: list[str] = []
    for raw in paths:
        p = os.fspath(raw)
        if os.path.isdir(p):
            found = []
            for root, dirs, files in os.walk(p):
                dirs[:] = sorted(d for d in dirs if not d.startswith("."))
                found.extend(os.path.join(root, f) for f in files if is_sweep_file(f) and not f.startswith("."))
            out.extend(sorted(found))
        elif os.path.exists(p):
            out.append(p)
        else:
            raise AnalysisError("no such file or folder", file=p)
    if not out:
        raise AnalysisError("no sweep files (Touchstone .sNp/.ts or .csv) found in "
                            + ", ".join(os.fspath(p) for p in paths))
    return out


def sha256_of(path: str | os.PathLike) -> str:
    """The SHA-256 of a file's bytes, in hex."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def _one_line(exc: BaseException, path: str) -> str:
    if isinstance(exc, AnalysisError):
        text = str(exc)
        # The file is listed beside the reason already; do not say it twice.
        return text[len(path) + 2:] if text.startswith(path + ", ") or text.startswith(path + ": ") else text
    if isinstance(exc, OSError):
        return exc.strerror or str(exc)
    return f"{type(exc).__name__}: {exc}"


def check_file(path: str, limits: Sequence[Limit], prep: Preparation = Preparation()) -> FileCheck:
    """Read, prepare and check one file; never raises for a bad file (it is "unreadable")."""
    from refplane.analysis.files.loading import read_sweep

    try:
        sweep, _, _ = prep.apply(read_sweep(path))
        results = evaluate_limits(limits, sweep, port=prep.port, u=prep.uncertainties_for(sweep, limits))
    except (AnalysisError, OSError, UnicodeDecodeError, MemoryError) as exc:
        return FileCheck(path, "unreadable", reason=" ".join(_one_line(exc, path).split()))
    return FileCheck(path, overall_decision(results), results)


# Worker processes keep the limits and preparation once, not once per file.
_WORKER: dict = {}


def _init_worker(limits, prep) -> None:
    _WORKER["limits"], _WORKER["prep"] = limits, prep


def _check_chunk(paths: list[str]) -> list[FileCheck]:
    return [check_file(p, _WORKER["limits"], _WORKER["prep"]) for p in paths]


def estimated_work_s(files: Sequence[str]) -> float:
    """A rough estimate of the seconds one process needs to check ``files``."""
    size = 0
    for f in files:
        try:
            size += os.path.getsize(f)
        except OSError:
            pass
    return len(files) * _S_PER_FILE + size * _S_PER_BYTE


def default_jobs() -> int:
    """The processor cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


def run_checks(files: Sequence[str], limits: Sequence[Limit], prep: Preparation = Preparation(), *,
               jobs: int | None = None, progress: Callable[[int, int], None] | None = None) -> BatchResult:
    """Check every file against every limit, in parallel processes when it pays.

    Parameters
    ----------
    files : sequence of str
        Sweep files (see :func:`collect_files` for folders).
    limits : sequence of Limit
    prep : Preparation
        Port, calibration, offsets and uncertainties applied to every sweep.
    jobs : int, optional
        Worker processes; default: one per available core when the batch is big enough to
        repay starting them (:data:`PARALLEL_WORK_S`), else the calling process. 1 runs in
        the calling process.
    progress : callable, optional
        Called as ``progress(done, total)`` as files finish.

    Returns
    -------
    BatchResult
        Files in the order given.
    """
    files = [os.fspath(f) for f in files]
    limits = tuple(limits)
    total = len(files)
    if jobs is None:
        jobs = default_jobs() if estimated_work_s(files) > PARALLEL_WORK_S else 1
    jobs = max(1, min(int(jobs), total or 1))
    checks: list[FileCheck | None] = [None] * total
    if jobs == 1:
        for i, p in enumerate(files):
            checks[i] = check_file(p, limits, prep)
            if progress:
                progress(i + 1, total)
    else:
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor, as_completed

        # Chunks large enough to amortise the hand-over, small enough to balance the load
        # and move the progress bar.
        size = max(1, min(64, math.ceil(total / (jobs * 8))))
        chunks = [(start, files[start:start + size]) for start in range(0, total, size)]
        # "spawn": workers start clean (no copied threads or Qt state from the caller).
        context = multiprocessing.get_context("spawn")
        done = 0
        with ProcessPoolExecutor(max_workers=jobs, mp_context=context, initializer=_init_worker,
                                 initargs=(limits, prep)) as pool:
            futures = {pool.submit(_check_chunk, chunk): start for start, chunk in chunks}
            for fut in as_completed(futures):
                start = futures[fut]
                for k, item in enumerate(fut.result()):
                    checks[start + k] = item
                done += len(fut.result())
                if progress:
                    progress(done, total)
    stats = batch_statistics(limits, checks)
    return BatchResult(limits, tuple(checks), stats)


def batch_statistics(limits: Sequence[Limit], checks: Sequence[FileCheck]) -> tuple[LimitStatistics, ...]:
    """Statistics per limit over the files that could be checked."""
    readable = [c for c in checks if c.results]
    return tuple(limit_statistics(lim, [c.results[i].worst_value for c in readable],
                                  [c.file for c in readable])
                 for i, lim in enumerate(limits))


def check_csv(batch: BatchResult) -> str:
    """The batch as CSV text, one row per file and limit, for a spreadsheet.

    Numbers are plain (ASCII minus, decimal point, no thousands separators, full
    precision); a value that does not exist is an empty cell. Units are in the
    header (frequency) or in the ``unit`` column (the limit's quantity).
    """
    import csv
    import io

    buf = io.StringIO()
    out = csv.writer(buf, lineterminator="\n")
    out.writerow(["file", "file decision", "limit", "quantity", "unit", "limit decision",
                  "worst frequency (Hz)", "worst value", "margin", "expanded uncertainty at worst (k=2)",
                  "reason"])
    for f in batch.files:
        if not f.results:
            out.writerow([f.file, f.decision, "", "", "", "", "", "", "", "", f.reason])
        for r in f.results:
            out.writerow([f.file, f.decision, r.limit.text, r.limit.quantity, r.limit.unit or "1", r.decision,
                          csv_number(r.worst_freq_hz), csv_number(r.worst_value), csv_number(r.margin),
                          csv_number(r.u_at_worst), ""])
    return buf.getvalue()


def csv_number(value) -> str:
    """A number as a spreadsheet reads it: ``-1.25``, ``8.5e+08``; empty for none, NaN or ∞."""
    if value is None:
        return ""
    value = float(value)
    if not math.isfinite(value):
        return ""
    # repr: the shortest text that reads back as the same number (full precision).
    return repr(value)


def write_check_csv(batch: BatchResult, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write :func:`check_csv` atomically (refusing to replace a file unless ``overwrite``)."""
    from refplane.analysis.files.fileio import write_text_atomic

    return write_text_atomic(path, check_csv(batch), overwrite=overwrite)
