"""Requests and their results: read, fit, estimate a plane, calibrate, correct. Never raise.

Each job is a plain function taking a frozen request and returning a :class:`JobResult`:
``ok`` with a value, or not ok with one line saying why. The window runs them in its one
worker facility (:mod:`refplane.views.workers`); the command line and tests call them
directly. A fault in the analysis becomes a message, never a crash of the window.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Sequence

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep


@dataclass(frozen=True)
class JobResult:
    """What a job gives back: a value, or a one-line reason."""

    ok: bool
    """True when the job did its work."""
    value: object = None
    """The result (a sweep, a fit, an estimate, …) when ``ok``."""
    message: str = ""
    """One line saying what went wrong when not ``ok``."""

    @property
    def status(self) -> str:
        """"ok" or "error" (the words the window's older code used)."""
        return "ok" if self.ok else "error"


def guarded(work: Callable[[], object], *, what: str, file: str | None = None) -> JobResult:
    """Run ``work()``; any failure becomes a one-line :class:`JobResult`."""
    prefix = f"{file}: " if file else ""
    try:
        return JobResult(True, work())
    except AnalysisError as exc:
        return JobResult(False, message=str(exc))
    except MemoryError:
        return JobResult(False, message=f"{prefix}not enough memory to {what}")
    except OSError as exc:
        return JobResult(False, message=f"{prefix}{exc.strerror or exc}")
    except Exception as exc:  # noqa: BLE001 - a bug is reported, never fatal to the window
        return JobResult(False, message=f"{prefix}could not {what} ({type(exc).__name__}: {exc})")


# ------------------------------------------------------------------------- read
def read(path: str) -> JobResult:
    """Read one sweep file."""
    from refplane.analysis.files.loading import read_sweep

    return guarded(lambda: read_sweep(path), what="read this file", file=path)


def read_one(path: str):
    """Read one sweep; ("ok", sweep) or ("error", one-line message). Never raises."""
    result = read(path)
    return (result.status, result.value if result.ok else result.message)


# -------------------------------------------------------------------------- fit
#: Name of the dashed overlay a fit puts on its trace.
FIT_OVERLAY = "fitted model"


@dataclass(frozen=True)
class FitRequest:
    """Everything a fit needs, captured when it was asked for."""

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


def fit(request: FitRequest) -> JobResult:
    """Fit and build the model curve; the value is (FitResult, overlay sweep or None)."""
    def work():
        from refplane.analysis.circuits.fitting import fit_sweep

        result = fit_sweep(request.sweep, model=request.model, band_hz=request.band_hz,
                           port=request.port, through=request.through)
        overlay = None
        if result.measurement == "reflection":
            overlay = result.to_sweep(request.sweep.freq_hz, name=FIT_OVERLAY)
        return result, overlay

    return guarded(work, what="fit")


# ------------------------------------------------------------------ plane estimate
@dataclass(frozen=True)
class EstimateRequest:
    """A plane estimate to run off the UI thread."""

    job: int
    """Sequence number; a later request supersedes this one."""
    target_trace: int
    """Trace whose offset receives the result."""
    target_port: int
    """1-based port of that trace."""
    sweep: Sweep
    """The raw sweep of the bare line ended in the standard."""
    port: int
    """Port of ``sweep`` to use."""
    standard: str
    """"open" or "short"."""
    velocity_factor: float | None
    """For the reported length, if known."""


def estimate(request: EstimateRequest) -> JobResult:
    """Estimate the line from a bare line ended in an open or a short."""
    from refplane.analysis.lines.plane import estimate_plane

    return guarded(lambda: estimate_plane(request.sweep, standard=request.standard, port=request.port,
                                          velocity_factor=request.velocity_factor),
                   what="estimate the line")


# ------------------------------------------------------------------ calibration
def calibrate(solve: Callable[[], object]) -> JobResult:
    """Solve error terms with ``solve`` (built by the caller from standards and definitions)."""
    return guarded(solve, what="work out the error terms")


def correct(calibration, sweeps: Sequence[Sweep], *, interpolate: bool = False) -> list[JobResult]:
    """Correct each sweep with ``calibration``; one result per sweep, in order."""
    from refplane.analysis.calibration.solve import correct as apply

    return [guarded(lambda s=s: apply(calibration, s, interpolate=interpolate), what="correct the sweep")
            for s in sweeps]
