"""The window's headless model: open traces, their offsets and overlays, markers, a band.

Every view (chart, plots, panels) observes one :class:`ViewState` through its Qt signals and
changes it only through its public methods; no view reaches into another. The model holds
no widgets, so tests drive it directly without a window.

Records (:class:`Trace`, :class:`Marker`) are frozen snapshots, replaced whole on every
change; read them with :meth:`ViewState.trace` / :meth:`ViewState.marker`.

Signals come in live/finished pairs where a drag is involved: ``markerMoving`` fires on
every step of a drag, ``markerMoved`` once when it ends (and on any programmatic move);
likewise ``bandChanging`` / ``bandChanged``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Mapping, Sequence

from PySide6.QtCore import QObject, Signal

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Okabe & Ito's colour-blind-safe palette (Okabe and Ito, "Color Universal Design", 2008),
#: without its black, in the order traces take them.
PALETTE = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442")


def _offsets_are_zero(offsets: Sequence[object]) -> bool:
    # Empty or all-zero offsets are the identity; this needs no de-embedding code at all.
    return all(getattr(o, "is_zero", False) for o in offsets)


def _apply_offsets(raw: Sweep, offsets: tuple) -> Sweep:
    if _offsets_are_zero(offsets):
        return raw
    # Imported lazily: the de-embedding module is optional until it is present.
    from refplane.analysis.deembed import remove_offsets

    return remove_offsets(raw, offsets)


@dataclass(frozen=True)
class Trace:
    """One open sweep as the window shows it (a snapshot; the model replaces it on change)."""

    id: int
    """Identifier, unique for the life of the model; never reused."""
    raw: Sweep
    """The sweep as read from its file (or as handed in), before any offsets."""
    offsets: tuple = ()
    """Per-port reference-plane offsets (``refplane.analysis.deembed.LineOffset``); empty = none."""
    displayed: Sweep | None = None
    """The sweep drawn and read: ``raw`` with ``offsets`` removed (``raw`` itself when none apply)."""
    name: str = ""
    """Label in lists and legends."""
    colour: str = PALETTE[0]
    """Colour as ``#rrggbb``."""
    visible: bool = True
    """Drawn on the chart and plots when true."""
    port: int = 1
    """1-based port whose reflection S_NN is drawn and read."""
    overlays: Mapping[str, Sweep] = field(default_factory=lambda: MappingProxyType({}))
    """Model curves drawn dashed over the trace: name → 1-port sweep."""

    @property
    def corrected(self) -> bool:
        """True when offsets change the displayed sweep (the raw trace is then drawn faded)."""
        return self.displayed is not self.raw

    @property
    def source(self) -> str | None:
        """The file the raw sweep came from, if any."""
        return self.raw.source


@dataclass(frozen=True)
class Marker:
    """A marker on one trace at one frequency."""

    id: int
    """Identifier, unique for the life of the model; never reused."""
    trace_id: int
    """The trace the marker reads."""
    freq_hz: float
    """Frequency in hertz, always inside the trace's sweep."""


class ViewState(QObject):
    """Open traces, markers and the selected band, announcing each change by a signal.

    Examples
    --------
    >>> state = ViewState()                                   # doctest: +SKIP
    >>> tid = state.add_sweep(sweep)                          # doctest: +SKIP
    >>> mid = state.add_marker(tid, 470e6)                    # doctest: +SKIP
    >>> state.marker_cells(mid)["R"]                          # doctest: +SKIP
    '75.00 Ω'
    """

    tracesChanged = Signal()
    """A trace was added or removed (the list of ids changed)."""
    traceChanged = Signal(int)
    """A trace's name, colour, visibility, port or raw sweep changed."""
    offsetsChanged = Signal(int)
    """A trace's offsets (and so its displayed sweep) changed."""
    overlaysChanged = Signal(int)
    """A trace's model overlays changed."""
    currentTraceChanged = Signal(int)
    """The trace that panels act on changed (−1 for none)."""
    markersChanged = Signal()
    """A marker was added or removed, or markers moved with their traces' data."""
    markerMoving = Signal(int)
    """A marker's frequency changed (live: many per drag, and once per programmatic move).
    Views that show the position listen to this one."""
    markerMoved = Signal(int)
    """A marker's move finished (once per drag, and after every programmatic move); for work
    that should wait until the user lets go."""
    currentMarkerChanged = Signal(int)
    """The marker that keys and the table act on changed (−1 for none)."""
    bandChanging = Signal()
    """The selected band changed during a drag (live)."""
    bandChanged = Signal()
    """The selected band changed (finished, or set programmatically)."""

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self._traces: dict[int, Trace] = {}
        self._markers: dict[int, Marker] = {}
        self._next_trace = 1
        self._next_marker = 1
        self._colour_turn = 0
        self._current_trace = -1
        self._current_marker = -1
        self._band: tuple[float, float] | None = None

    # ------------------------------------------------------------------ traces
    def add_sweep(self, sweep: Sweep, *, name: str | None = None, port: int = 1,
                  colour: str | None = None) -> int:
        """Open ``sweep`` as a new trace and return its id (it becomes the current trace)."""
        sweep.check_port(port)
        tid = self._next_trace
        self._next_trace += 1
        if colour is None:
            colour = PALETTE[self._colour_turn % len(PALETTE)]
            self._colour_turn += 1
        self._traces[tid] = Trace(id=tid, raw=sweep, displayed=sweep,
                                  name=name if name is not None else sweep.name,
                                  colour=colour, port=port)
        self.tracesChanged.emit()
        self.set_current_trace(tid)
        return tid

    def remove_trace(self, trace_id: int) -> None:
        """Close a trace and the markers on it."""
        self._get(trace_id)
        del self._traces[trace_id]
        gone = [m for m in self._markers.values() if m.trace_id == trace_id]
        for m in gone:
            del self._markers[m.id]
        self.tracesChanged.emit()
        if gone:
            if self._current_marker in {m.id for m in gone}:
                self._set_current_marker(next(iter(self._markers), -1))
            self.markersChanged.emit()
        if self._current_trace == trace_id:
            self.set_current_trace(next(iter(self._traces), -1))

    def clear(self) -> None:
        """Close every trace."""
        for tid in list(self._traces):
            self.remove_trace(tid)

    def trace(self, trace_id: int) -> Trace:
        """The current snapshot of a trace (KeyError for an unknown id)."""
        return self._get(trace_id)

    def traces(self) -> list[Trace]:
        """Every open trace, in opening order."""
        return list(self._traces.values())

    def trace_ids(self) -> list[int]:
        """Ids of the open traces, in opening order."""
        return list(self._traces)

    def displayed(self, trace_id: int) -> Sweep:
        """The sweep drawn and read for a trace (offsets removed)."""
        return self._get(trace_id).displayed

    def set_name(self, trace_id: int, name: str) -> None:
        """Rename a trace."""
        self._update(trace_id, name=str(name))

    def set_colour(self, trace_id: int, colour: str) -> None:
        """Recolour a trace (``#rrggbb``)."""
        self._update(trace_id, colour=str(colour))

    def set_visible(self, trace_id: int, visible: bool) -> None:
        """Show or hide a trace."""
        self._update(trace_id, visible=bool(visible))

    def set_port(self, trace_id: int, port: int) -> None:
        """Choose which port's reflection (S11, S22, …) a trace draws and reads."""
        self._get(trace_id).raw.check_port(port)
        self._update(trace_id, port=int(port))

    def replace_sweep(self, trace_id: int, sweep: Sweep) -> None:
        """Swap in a new raw sweep (a reloaded file), keeping name, colour and offsets where they fit.

        Offsets are dropped if the port count changed; markers outside the new span are
        moved to its nearest end.
        """
        old = self._get(trace_id)
        offsets = old.offsets if len(old.offsets) in (0, sweep.n_ports) else ()
        port = old.port if old.port <= sweep.n_ports else 1
        displayed = _apply_offsets(sweep, offsets)
        self._traces[trace_id] = replace(old, raw=sweep, displayed=displayed, offsets=offsets, port=port)
        self.traceChanged.emit(trace_id)
        if offsets != old.offsets:
            self.offsetsChanged.emit(trace_id)
        # Readings of markers on this trace change with the data even when they stay put.
        if not self._clamp_markers(trace_id) and self.markers(trace_id):
            for m in self.markers(trace_id):
                self.markerMoving.emit(m.id)

    def set_offsets(self, trace_id: int, offsets: Sequence) -> None:
        """Set a trace's per-port reference-plane offsets (one ``LineOffset`` per port, or empty).

        Raises
        ------
        AnalysisError
            When the count does not match the sweep's ports, or de-embedding refuses them.
        """
        old = self._get(trace_id)
        offsets = tuple(offsets)
        if offsets and len(offsets) != old.raw.n_ports:
            raise AnalysisError(
                f"{len(offsets)} offsets given for a {old.raw.n_ports}-port sweep; give one per port")
        displayed = _apply_offsets(old.raw, offsets)
        self._traces[trace_id] = replace(old, offsets=offsets, displayed=displayed)
        self.offsetsChanged.emit(trace_id)
        if any(m.trace_id == trace_id for m in self._markers.values()):
            self.markersChanged.emit()

    def set_overlay(self, trace_id: int, name: str, sweep: Sweep | None) -> None:
        """Add or replace a dashed model overlay on a trace; ``None`` removes it."""
        old = self._get(trace_id)
        overlays = dict(old.overlays)
        if sweep is None:
            if name not in overlays:
                return
            del overlays[name]
        else:
            if sweep.n_ports != 1:
                raise AnalysisError("a model overlay must be a 1-port sweep")
            overlays[name] = sweep
        self._traces[trace_id] = replace(old, overlays=MappingProxyType(overlays))
        self.overlaysChanged.emit(trace_id)

    @property
    def current_trace(self) -> int:
        """Id of the trace panels act on, or −1."""
        return self._current_trace

    def set_current_trace(self, trace_id: int) -> None:
        """Choose the trace panels act on (−1 for none)."""
        if trace_id != -1:
            self._get(trace_id)
        if trace_id != self._current_trace:
            self._current_trace = trace_id
            self.currentTraceChanged.emit(trace_id)

    # ----------------------------------------------------------------- markers
    def add_marker(self, trace_id: int, freq_hz: float) -> int:
        """Place a marker on a trace at ``freq_hz`` (refused outside the sweep) and return its id."""
        self._check_inside(trace_id, freq_hz)
        mid = self._next_marker
        self._next_marker += 1
        self._markers[mid] = Marker(id=mid, trace_id=trace_id, freq_hz=float(freq_hz))
        self.markersChanged.emit()
        self._set_current_marker(mid)
        return mid

    def move_marker(self, marker_id: int, freq_hz: float, *, finished: bool = True) -> float:
        """Move a marker; during a drag pass ``finished=False``. Returns the frequency used.

        The frequency is clamped to the trace's span, so a drag past either end stops there.
        """
        m = self._marker(marker_id)
        f = self._clamp(m.trace_id, freq_hz)
        if f != m.freq_hz:
            self._markers[marker_id] = replace(m, freq_hz=f)
            self.markerMoving.emit(marker_id)
        if finished:
            self.markerMoved.emit(marker_id)
        return f

    def step_marker(self, marker_id: int, steps: int) -> float:
        """Move a marker by ``steps`` swept points (negative = down); returns the new frequency.

        From a position between two points, one step lands on the next point in that direction.
        """
        import numpy as np

        m = self._marker(marker_id)
        freq = self.displayed(m.trace_id).freq_hz
        if steps > 0:
            i = int(np.searchsorted(freq, m.freq_hz, side="right")) + steps - 1
        else:
            i = int(np.searchsorted(freq, m.freq_hz, side="left")) + steps
        i = min(max(i, 0), freq.size - 1)
        return self.move_marker(marker_id, float(freq[i]))

    def remove_marker(self, marker_id: int) -> None:
        """Delete a marker."""
        self._marker(marker_id)
        del self._markers[marker_id]
        self.markersChanged.emit()
        if self._current_marker == marker_id:
            self._set_current_marker(next(reversed(self._markers), -1) if self._markers else -1)

    def clear_markers(self) -> None:
        """Delete every marker."""
        if self._markers:
            self._markers.clear()
            self.markersChanged.emit()
            self._set_current_marker(-1)

    def marker(self, marker_id: int) -> Marker:
        """The current snapshot of a marker (KeyError for an unknown id)."""
        return self._marker(marker_id)

    def markers(self, trace_id: int | None = None) -> list[Marker]:
        """Every marker in placing order, or only those on ``trace_id``."""
        return [m for m in self._markers.values() if trace_id is None or m.trace_id == trace_id]

    @property
    def current_marker(self) -> int:
        """Id of the marker the arrow keys move, or −1."""
        return self._current_marker

    def set_current_marker(self, marker_id: int) -> None:
        """Choose the marker the arrow keys move (−1 for none)."""
        if marker_id != -1:
            self._marker(marker_id)
        self._set_current_marker(marker_id)

    def marker_readings(self, marker_id: int):
        """The marker's :class:`~refplane.analysis.readings.PointReadings` (one point)."""
        from refplane.analysis.readings import read_points

        m = self._marker(marker_id)
        t = self._get(m.trace_id)
        return read_points(t.displayed, [m.freq_hz], port=t.port)

    def marker_readout(self, marker_id: int):
        """The marker's single-point :class:`~refplane.analysis.impedance.Readout`."""
        return self.marker_readings(marker_id).readout.at(0)

    def marker_cells(self, marker_id: int) -> dict[str, str]:
        """The marker's display cells, exactly as ``refplane read`` prints them."""
        from refplane.analysis.readings import readout_cells

        return readout_cells(self.marker_readout(marker_id))

    def marker_model_cells(self, marker_id: int) -> dict[str, dict[str, str]]:
        """Display cells of each model overlay of the marker's trace at the marker's frequency.

        Keys are overlay names; an overlay that does not reach the marker's frequency is left out.
        """
        from refplane.analysis.errors import AnalysisError
        from refplane.analysis.readings import read_points, readout_cells

        m = self._marker(marker_id)
        out: dict[str, dict[str, str]] = {}
        for name, overlay in self._get(m.trace_id).overlays.items():
            try:
                out[name] = readout_cells(read_points(overlay, [m.freq_hz], port=1).readout.at(0))
            except AnalysisError:
                continue
        return out

    def marker_gamma(self, marker_id: int) -> complex:
        """The reflection coefficient at the marker (for drawing it on the chart)."""
        return complex(self.marker_readings(marker_id).gamma[0])

    # -------------------------------------------------------------------- band
    @property
    def band(self) -> tuple[float, float] | None:
        """The selected band (low_hz, high_hz), e.g. for fitting; ``None`` when none is chosen."""
        return self._band

    def set_band(self, band_hz: tuple[float, float] | None, *, finished: bool = True) -> None:
        """Select a band (low_hz, high_hz) or clear it with ``None``; pass ``finished=False`` while dragging."""
        if band_hz is not None:
            low, high = sorted((float(band_hz[0]), float(band_hz[1])))
            if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
                raise AnalysisError("a band needs two different finite frequencies")
            band_hz = (low, high)
        if band_hz != self._band:
            self._band = band_hz
            self.bandChanging.emit()
        if finished:
            self.bandChanged.emit()

    # ---------------------------------------------------------------- internal
    def _get(self, trace_id: int) -> Trace:
        try:
            return self._traces[trace_id]
        except KeyError:
            raise KeyError(f"no open trace with id {trace_id}") from None

    def _marker(self, marker_id: int) -> Marker:
        try:
            return self._markers[marker_id]
        except KeyError:
            raise KeyError(f"no marker with id {marker_id}") from None

    def _update(self, trace_id: int, **changes) -> None:
        old = self._get(trace_id)
        new = replace(old, **changes)
        if new != old:
            self._traces[trace_id] = new
            self.traceChanged.emit(trace_id)
            if "port" in changes and new.port != old.port and self.markers(trace_id):
                self.markersChanged.emit()

    def _check_inside(self, trace_id: int, freq_hz: float) -> None:
        from refplane.analysis.markers import check_inside

        check_inside(self._get(trace_id).displayed.freq_hz, freq_hz)

    def _clamp(self, trace_id: int, freq_hz: float) -> float:
        f = self._get(trace_id).displayed.freq_hz
        value = float(freq_hz)
        if not math.isfinite(value):
            raise AnalysisError("a marker frequency is not a finite number")
        return min(max(value, float(f[0])), float(f[-1]))

    def _clamp_markers(self, trace_id: int) -> bool:
        changed = False
        for m in self.markers(trace_id):
            f = self._clamp(trace_id, m.freq_hz)
            if f != m.freq_hz:
                self._markers[m.id] = replace(m, freq_hz=f)
                changed = True
        if changed:
            self.markersChanged.emit()
        return changed

    def _set_current_marker(self, marker_id: int) -> None:
        if marker_id != self._current_marker:
            self._current_marker = marker_id
            self.currentMarkerChanged.emit(marker_id)
