"""The user's work as one Qt-free, evented model: traces, markers, band and every display option.

The window, ``refplane render --session`` and saved session files all drive one
:class:`Session`. Views listen to its signals (psygnal, the evented-model library napari and
ndv use) and change it only through its methods; what they draw and print comes from the
frozen :class:`~refplane.session.scene.Scene` that :meth:`Session.scene` resolves once per
change and shares.

Records (:class:`Trace`, :class:`Marker`, :class:`DisplayOptions`, :class:`FitSettings`,
:class:`CalibrationInputs`) are frozen snapshots, replaced whole on every change.

Signals come in live/finished pairs where a drag is involved: ``markerMoving`` fires on
every step of a drag, ``markerMoved`` once when it ends (and on any programmatic move);
likewise ``bandChanging`` / ``bandChanged``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields, replace
from types import MappingProxyType
from typing import Mapping, Sequence

from psygnal import Signal

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Okabe & Ito's colour-blind-safe palette (Okabe and Ito, "Color Universal Design", 2008),
#: without its black, in the order traces take them. The yellow is last: on a white ground it
#: has the least contrast of all, so the light theme takes it only when every other is in use.
PALETTE = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#F0E442")
LOW_CONTRAST_ON_LIGHT = frozenset({"#F0E442"})

#: Plot quantities that may be drawn on a logarithmic y axis (they are positive and span decades).
LOG_Y_QUANTITIES = ("vswr", "z_mag", "memory_ratio")

#: Plot quantities a session may choose (keys of :data:`refplane.session.plot_series.BY_KEY`).
THEMES = ("light", "dark")


def _offsets_are_zero(offsets: Sequence[object]) -> bool:
    # Empty or all-zero offsets are the identity; this needs no de-embedding code at all.
    return all(getattr(o, "is_zero", False) for o in offsets)


def _apply_offsets(raw: Sweep, offsets: tuple) -> Sweep:
    if _offsets_are_zero(offsets):
        return raw
    from refplane.analysis.lines.deembed import remove_offsets

    return remove_offsets(raw, offsets)


@dataclass(frozen=True)
class Trace:
    """One open sweep as the session shows it (a snapshot; the model replaces it on change)."""

    id: int
    """Identifier, unique for the life of the model; never reused."""
    raw: Sweep
    """The sweep as read from its file (or as handed in), before any offsets."""
    offsets: tuple = ()
    """Per-port reference-plane offsets (``refplane.analysis.lines.deembed.LineOffset``); empty = none."""
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
    velocity_factors: tuple = ()
    """Velocity factor typed per port (``None`` where none is given); turns delay into length."""
    order: float = 0.0
    """Place in the trace list: the order in which files were named, whatever order they load in."""

    @property
    def corrected(self) -> bool:
        """True when offsets change the displayed sweep (the raw trace is then drawn faded)."""
        return self.displayed is not self.raw

    @property
    def source(self) -> str | None:
        """The file the raw sweep came from, if any."""
        return self.raw.source

    def velocity_factor(self, port: int) -> float | None:
        """The velocity factor typed for ``port`` (1-based), or ``None``."""
        return self.velocity_factors[port - 1] if port <= len(self.velocity_factors) else None


@dataclass(frozen=True)
class Marker:
    """A marker on one trace at one frequency."""

    id: int
    """Identifier, unique for the life of the model; never reused."""
    trace_id: int
    """The trace the marker reads."""
    freq_hz: float
    """Frequency in hertz, always inside the trace's sweep."""
    follows: str | None = None
    """A marker search (``session.searches`` spec, e.g. "best-match") the marker re-runs when its
    trace's data change (offsets edited, file reloaded, port changed); ``None`` stays put.
    Moving the marker by hand stops it following."""


@dataclass(frozen=True)
class Memory:
    """A stored trace (trace memory): a snapshot of one trace's reflection, kept as it was so a
    later state of the same device (corrected, tuned) can be shown relative to it."""

    sweep: Sweep
    """The stored reflection as a 1-port sweep (frequencies, Γ, reference impedance)."""
    name: str
    """What it was stored from ("before · S11")."""


@dataclass(frozen=True)
class DisplayOptions:
    """How the work is shown: plots, axes, chart grid and view, colours."""

    upper_plot: str = "return_loss"
    """Quantity of the upper frequency plot (a key of ``plot_series.BY_KEY``)."""
    lower_plot: str = "r_x"
    """Quantity of the lower frequency plot."""
    log_frequency: bool = False
    """Logarithmic frequency axis on both plots."""
    admittance_grid: bool = False
    """Draw the admittance grid behind the impedance grid."""
    vswr_circle: float | None = None
    """VSWR whose constant circle is drawn on the chart; ``None`` for none."""
    theme: str = "light"
    """Colour theme: "light" or "dark"."""
    chart_view: tuple[float, float, float, float] | None = None
    """Chart zoom as (x0, x1, y0, y1) in Γ units; ``None`` shows the whole chart."""
    delta_markers: tuple[int, int] | None = None
    """Markers (a, b) of the difference row b − a; ``None`` takes the last two placed."""
    chart_z0_ohm: float | None = None
    """Reference impedance the chart, plots and readings use (e.g. 75 Ω); ``None``: each file's own."""
    log_y: tuple[str, ...] = ()
    """Plot quantities drawn on a logarithmic y axis (only those in :data:`LOG_Y_QUANTITIES`)."""
    upper_view: tuple[float, float, float, float] | None = None
    """Upper plot zoom as (f0_hz, f1_hz, y0, y1) in the quantity's units; ``None`` fits the visible traces."""
    lower_view: tuple[float, float, float, float] | None = None
    """Lower plot zoom as (f0_hz, f1_hz, y0, y1); ``None`` fits the visible traces."""


@dataclass(frozen=True)
class FitSettings:
    """What the equivalent-circuit fit is asked to do, and which trace carries its curve."""

    band_text: str = ""
    """Band as typed ("100 MHz : 1 GHz"); empty fits the whole sweep."""
    model: str = "auto"
    """Model id, or "auto" for the simplest adequate one."""
    measurement: str = "reflection"
    """"reflection", "series" (through, S21) or "shunt" (through, S21)."""
    overlay_trace: int | None = None
    """The trace carrying the dashed fitted curve, if any."""


@dataclass(frozen=True)
class CalibrationInputs:
    """What the calibration dialog was given: standards' sweeps, their definitions, devices."""

    standards: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))
    """Role ("short", "open", "load", "through", "isolation") → sweep file."""
    definitions_file: str | None = None
    """Standards definition file; ``None`` for ideal standards."""
    saved_terms_file: str | None = None
    """Saved error terms in use instead of solving, if any."""
    devices: tuple[str, ...] = ()
    """Device sweep files to correct."""


def _pick_colour(in_use: set[str], theme: str) -> str:
    """The first palette colour no open trace uses (yellow last, and not first on white)."""
    order = [c for c in PALETTE if not (theme == "light" and c in LOW_CONTRAST_ON_LIGHT)]
    order += [c for c in PALETTE if c not in order]
    for colour in order:
        if colour.upper() not in in_use:
            return colour
    return order[len(in_use) % len(order)]


class Session:
    """The user's work: open traces, markers, the band and display options, with change events.

    Examples
    --------
    >>> session = Session()                                   # doctest: +SKIP
    >>> tid = session.add_sweep(sweep)                        # doctest: +SKIP
    >>> mid = session.add_marker(tid, 470e6)                  # doctest: +SKIP
    >>> session.scene().marker(mid).cells["R"]                # doctest: +SKIP
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
    velocityFactorsChanged = Signal(int)
    """The velocity factors typed for a trace's ports changed."""
    currentTraceChanged = Signal(int)
    """The trace that panels act on changed (−1 for none)."""
    markersChanged = Signal()
    """A marker was added or removed, or markers moved with their traces' data."""
    markerMoving = Signal(int)
    """A marker's frequency changed (live: many per drag, and once per programmatic move)."""
    markerMoved = Signal(int)
    """A marker's move finished (once per drag, and after every programmatic move)."""
    currentMarkerChanged = Signal(int)
    """The marker that keys and the table act on changed (−1 for none)."""
    bandChanging = Signal()
    """The selected band changed during a drag (live)."""
    bandChanged = Signal()
    """The selected band changed (finished, or set programmatically)."""
    displayChanged = Signal(str)
    """A display option changed; the argument names the field of :class:`DisplayOptions`."""
    fitSettingsChanged = Signal()
    """The fit settings changed."""
    calibrationChanged = Signal()
    """The calibration inputs changed."""
    toolChanged = Signal(str)
    """A tool panel's settings changed; the argument names the tool (see :mod:`session.tools`)."""
    memoryChanged = Signal()
    """A trace was stored as the memory, or the memory was cleared."""
    undoChanged = Signal()
    """What :meth:`undo` would undo changed."""

    def __init__(self, parent: object | None = None):
        # ``parent`` is accepted (and ignored) so code written for the old Qt model still runs.
        self._traces: dict[int, Trace] = {}
        self._markers: dict[int, Marker] = {}
        self._next_trace = 1
        self._next_marker = 1
        self._current_trace = -1
        self._current_marker = -1
        self._band: tuple[float, float] | None = None
        self._display = DisplayOptions()
        self._fit = FitSettings()
        self._calibration = CalibrationInputs()
        self._tools: dict[str, object] = {}
        self._memory: Memory | None = None
        self._viewed: dict[int, tuple] = {}
        self._scene = None
        self._last_scene = None
        self._unfollowed: set[int] = set()
        self._undo: list[tuple[str, object]] = []
        # Any change makes the cached Scene stale; it is resolved again when next asked for.
        for name in ("tracesChanged", "traceChanged", "offsetsChanged", "overlaysChanged",
                     "velocityFactorsChanged", "currentTraceChanged", "markersChanged",
                     "markerMoving", "currentMarkerChanged", "bandChanging", "bandChanged",
                     "displayChanged", "fitSettingsChanged", "calibrationChanged", "toolChanged",
                     "memoryChanged"):
            getattr(self, name).connect(self._stale, priority=1000)

    def _stale(self) -> None:
        self._scene = None

    # ------------------------------------------------------------------ scene
    def scene(self):
        """The frozen :class:`~refplane.session.scene.Scene` of the work as it is now.

        Resolved once per change and shared by every view; parts that did not change are
        carried over from the previous scene rather than computed again.
        """
        if self._scene is None:
            from refplane.session.resolve import resolve

            self._scene = resolve(self, previous=self._last_scene)
            self._last_scene = self._scene
        return self._scene

    # ------------------------------------------------------------------ traces
    def add_sweep(self, sweep: Sweep, *, name: str | None = None, port: int = 1,
                  colour: str | None = None, order: float | None = None) -> int:
        """Open ``sweep`` as a new trace and return its id (it becomes the current trace).

        ``order`` places it in the list (the order files were named in); by default it goes last.
        """
        sweep.check_port(port)
        tid = self._next_trace
        self._next_trace += 1
        if colour is None:
            colour = _pick_colour({t.colour.upper() for t in self._traces.values()}, self._display.theme)
        if order is None:
            order = max((t.order for t in self._traces.values()), default=0.0) + 1.0
        self._traces[tid] = Trace(id=tid, raw=sweep, displayed=sweep,
                                  name=name if name is not None else sweep.name,
                                  colour=colour, port=port, order=float(order),
                                  velocity_factors=(None,) * sweep.n_ports)
        self._sort()
        self.tracesChanged.emit()
        self.set_current_trace(tid)
        return tid

    def _sort(self) -> None:
        self._traces = dict(sorted(self._traces.items(), key=lambda kv: (kv[1].order, kv[0])))

    def remove_trace(self, trace_id: int, *, undoable: bool = True) -> None:
        """Close a trace and the markers on it (:meth:`undo` brings both back)."""
        t = self._get(trace_id)
        undo = self._trace_undo(t) if undoable else None
        del self._traces[trace_id]
        self._viewed.pop(trace_id, None)
        gone = [m for m in self._markers.values() if m.trace_id == trace_id]
        for m in gone:
            del self._markers[m.id]
        if self._fit.overlay_trace == trace_id:
            self._fit = replace(self._fit, overlay_trace=None)
        self.tracesChanged.emit()
        if gone:
            if self._current_marker in {m.id for m in gone}:
                self._set_current_marker(next(iter(self._markers), -1))
            self.markersChanged.emit()
        if self._current_trace == trace_id:
            self.set_current_trace(next(iter(self._traces), -1))
        if undo is not None:
            self._push_undo(f"close {t.name}", undo)

    def clear(self, *, undoable: bool = True) -> None:
        """Close every trace (one step of :meth:`undo` brings them all back)."""
        undos = [self._trace_undo(t) for t in self._traces.values()] if undoable else []
        for tid in list(self._traces):
            self.remove_trace(tid, undoable=False)
        if undos:
            def restore_all():
                for u in undos:
                    u()
            self._push_undo("close all traces", restore_all)

    # ------------------------------------------------------------------- undo
    #: How many steps :meth:`undo` can go back.
    UNDO_DEPTH = 50

    def _push_undo(self, text: str, restore) -> None:
        self._undo.append((text, restore))
        del self._undo[:-self.UNDO_DEPTH]
        self.undoChanged.emit()

    def forget_undo(self) -> None:
        """Drop every undo step (opening another session starts a new history)."""
        if self._undo:
            self._undo.clear()
            self.undoChanged.emit()

    def undo_text(self) -> str | None:
        """What :meth:`undo` would undo ("close before.s1p", "remove marker 3"), or None."""
        return self._undo[-1][0] if self._undo else None

    def undo(self) -> str | None:
        """Undo the last closing of traces or removal of markers; returns what was undone."""
        if not self._undo:
            return None
        text, restore = self._undo.pop()
        restore()
        self.undoChanged.emit()
        return text

    def _trace_undo(self, t: Trace):
        markers = [m for m in self._markers.values() if m.trace_id == t.id]
        carried_fit = self._fit.overlay_trace == t.id
        current = self._current_trace == t.id

        def restore():
            if t.id in self._traces:
                return
            self._traces[t.id] = t  # ids are never reused, so the old one is free
            self._sort()
            self.tracesChanged.emit()
            if carried_fit and self._fit.overlay_trace is None:
                self.set_fit(overlay_trace=t.id)
            self._restore_markers(markers)
            if current or self._current_trace == -1:
                self.set_current_trace(t.id)
        return restore

    def _restore_markers(self, markers) -> None:
        markers = [m for m in markers if m.trace_id in self._traces and m.id not in self._markers]
        if not markers:
            return
        for m in markers:
            self._markers[m.id] = m
        # Marker ids grow in placing order: sorting by id puts each back at its number.
        self._markers = dict(sorted(self._markers.items()))
        self.markersChanged.emit()
        self._set_current_marker(markers[-1].id)

    def trace(self, trace_id: int) -> Trace:
        """The current snapshot of a trace (KeyError for an unknown id)."""
        return self._get(trace_id)

    def traces(self) -> list[Trace]:
        """Every open trace, in list order."""
        return list(self._traces.values())

    def trace_ids(self) -> list[int]:
        """Ids of the open traces, in list order."""
        return list(self._traces)

    def displayed(self, trace_id: int) -> Sweep:
        """The sweep drawn and read for a trace (offsets removed)."""
        return self._get(trace_id).displayed

    def viewed(self, trace_id: int) -> Sweep:
        """The sweep as the window shows and reads it: :meth:`displayed`, referred to the chart's
        reference impedance when one is chosen (``display.chart_z0_ohm``)."""
        sweep = self._get(trace_id).displayed
        z0 = self._display.chart_z0_ohm
        if z0 is None:
            return sweep
        hit = self._viewed.get(trace_id)
        if hit is not None and hit[0] is sweep and hit[1] == z0:
            return hit[2]
        from refplane.analysis.readings.trace_math import renormalize

        try:
            viewed = renormalize(sweep, z0)
        except AnalysisError:
            viewed = sweep  # a complex port reference cannot be renormalised here: shown as measured
        self._viewed[trace_id] = (sweep, z0, viewed)
        return viewed

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
        vfs = old.velocity_factors if len(old.velocity_factors) == sweep.n_ports else (None,) * sweep.n_ports
        displayed = _apply_offsets(sweep, offsets)
        self._traces[trace_id] = replace(old, raw=sweep, displayed=displayed, offsets=offsets, port=port,
                                         velocity_factors=vfs)
        self.traceChanged.emit(trace_id)
        if offsets != old.offsets:
            self.offsetsChanged.emit(trace_id)
        # Readings of markers on this trace change with the data even when they stay put.
        if not self._clamp_markers(trace_id) and self.markers(trace_id):
            for m in self.markers(trace_id):
                self.markerMoving.emit(m.id)
        self._refollow(trace_id)

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
        self._refollow(trace_id)

    def set_velocity_factor(self, trace_id: int, port: int, vf: float | None) -> None:
        """Remember the velocity factor of the line at ``port`` of a trace (``None`` forgets it)."""
        old = self._get(trace_id)
        old.raw.check_port(port)
        if vf is not None:
            from refplane.analysis.lines.deembed import check_velocity_factor

            vf = check_velocity_factor(vf)
        vfs = list(old.velocity_factors) + [None] * (old.raw.n_ports - len(old.velocity_factors))
        if vfs[port - 1] == vf:
            return
        vfs[port - 1] = vf
        self._traces[trace_id] = replace(old, velocity_factors=tuple(vfs))
        self.velocityFactorsChanged.emit(trace_id)

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
    def add_marker(self, trace_id: int, freq_hz: float, *, follows: str | None = None) -> int:
        """Place a marker on a trace at ``freq_hz`` (refused outside the sweep) and return its id.

        ``follows`` names a marker search (:mod:`refplane.session.searches`) the marker re-runs
        whenever its trace's data change.
        """
        self._check_inside(trace_id, freq_hz)
        if follows is not None:
            from refplane.session.searches import parse

            parse(follows)
        mid = self._next_marker
        self._next_marker += 1
        self._markers[mid] = Marker(id=mid, trace_id=trace_id, freq_hz=float(freq_hz), follows=follows)
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
            # Moved by hand: it no longer follows its search (the table says so once the move ends).
            if m.follows is not None:
                self._unfollowed.add(marker_id)
            self._markers[marker_id] = replace(m, freq_hz=f, follows=None)
            self.markerMoving.emit(marker_id)
        if finished:
            self.markerMoved.emit(marker_id)
            if marker_id in self._unfollowed:
                self._unfollowed.discard(marker_id)
                self.markersChanged.emit()
        return f

    def unfollow_marker(self, marker_id: int) -> None:
        """Keep a marker where it is from now on (it stops following its search)."""
        m = self._marker(marker_id)
        if m.follows is not None:
            self._markers[marker_id] = replace(m, follows=None)
            self.markersChanged.emit()

    # ---------------------------------------------------------------- searches
    def find_markers(self, trace_id: int, what: str, *, vswr_limit: float = 2.0) -> list[int]:
        """Place markers that follow a search on a trace; returns their ids (empty: nothing found).

        ``what`` is "best-match" (minimum VSWR), "max-z" (largest |Z|), "resonances" (every
        zero of X, each marker following its own series or parallel resonance) or "band"
        (two markers at the edges of the stretch where VSWR ≤ ``vswr_limit``). A marker that
        already follows the same search on the trace is moved rather than duplicated.
        """
        from refplane.session import searches

        t = self._get(trace_id)
        if what == "resonances":
            from refplane.analysis.antenna.resonance import find_resonances

            counts = {"series": 0, "parallel": 0}
            specs = []
            for r in find_resonances(self.viewed(trace_id), t.port):
                counts[r.kind] += 1
                specs.append(f"{r.kind}-resonance:{counts[r.kind]}")
        elif what == "band":
            specs = list(searches.band_spec(vswr_limit))
        elif what in ("best-match", "max-z"):
            specs = [what]
        else:
            raise AnalysisError(f"unknown marker search {what!r}")
        found = [(spec, searches.run(self.viewed(trace_id), t.port, spec)) for spec in specs]
        if any(f is None for _spec, f in found):
            return []
        ids = []
        for spec, f in found:
            same = [m for m in self.markers(trace_id) if m.follows == spec]
            if same:
                self._markers[same[0].id] = replace(same[0], freq_hz=self._clamp(trace_id, f))
                self.markerMoving.emit(same[0].id)
                self.markerMoved.emit(same[0].id)
                ids.append(same[0].id)
            else:
                ids.append(self.add_marker(trace_id, self._clamp(trace_id, f), follows=spec))
        if ids:
            self._set_current_marker(ids[-1])
        return ids

    def _refollow(self, trace_id: int) -> None:
        """Run again the search of every following marker on a trace whose data changed."""
        following = [m for m in self.markers(trace_id) if m.follows is not None]
        if not following:
            return
        from refplane.session.searches import run

        t = self._get(trace_id)
        for m in following:
            f = run(self.viewed(trace_id), t.port, m.follows)
            if f is None:
                continue  # the feature went away (no band at this limit now): stay put
            f = self._clamp(trace_id, f)
            if f != m.freq_hz:
                self._markers[m.id] = replace(m, freq_hz=f)
                self.markerMoving.emit(m.id)
                self.markerMoved.emit(m.id)

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
        """Delete a marker (:meth:`undo` brings it back)."""
        m = self._marker(marker_id)
        number = list(self._markers).index(marker_id) + 1
        del self._markers[marker_id]
        self._forget_delta(marker_id)
        self.markersChanged.emit()
        if self._current_marker == marker_id:
            self._set_current_marker(next(reversed(self._markers), -1) if self._markers else -1)
        self._push_undo(f"remove marker {number}", lambda: self._restore_markers([m]))

    def clear_markers(self, *, undoable: bool = True) -> None:
        """Delete every marker (:meth:`undo` brings them back)."""
        if self._markers:
            gone = list(self._markers.values())
            self._markers.clear()
            self._forget_delta(None)
            self.markersChanged.emit()
            self._set_current_marker(-1)
            if undoable:
                self._push_undo("remove all markers", lambda: self._restore_markers(gone))

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

    # Readings, through the shared scene (so a view asking twice costs one computation).
    def marker_readout(self, marker_id: int):
        """The marker's single-point :class:`~refplane.analysis.readings.impedance.Readout`."""
        return self.scene().marker(marker_id).readout

    def marker_cells(self, marker_id: int) -> dict[str, str]:
        """The marker's display cells, exactly as ``refplane read`` prints them."""
        return dict(self.scene().marker(marker_id).cells)

    def marker_model_cells(self, marker_id: int) -> dict[str, dict[str, str]]:
        """Display cells of each model overlay of the marker's trace at the marker's frequency."""
        return {k: dict(v) for k, v in self.scene().marker(marker_id).model_cells.items()}

    def marker_gamma(self, marker_id: int) -> complex:
        """The reflection coefficient at the marker (for drawing it on the chart)."""
        return self.scene().marker(marker_id).gamma

    # ------------------------------------------------------------------ memory
    @property
    def memory(self) -> Memory | None:
        """The stored trace, or ``None``."""
        return self._memory

    def store_memory(self, trace_id: int) -> None:
        """Store a trace's reflection, as it is now shown, as the memory (replacing any)."""
        t = self._get(trace_id)
        v = self.viewed(trace_id)
        p = t.port
        one = Sweep(freq_hz=v.freq_hz.copy(), s=v.s[:, p - 1, p - 1].reshape(-1, 1, 1).copy(),
                    z0_ohm=v.z0_ohm[p - 1:p].copy(), name=f"memory of {t.name}")
        from refplane.session.present import trace_label

        self.set_memory(Memory(sweep=one, name=trace_label(t.name, p)))

    def set_memory(self, memory: Memory | None) -> None:
        """Set (or with ``None`` clear) the stored trace."""
        if memory is not None and memory.sweep.n_ports != 1:
            raise AnalysisError("a stored trace is a 1-port reflection")
        if memory is not self._memory:
            self._memory = memory
            self.memoryChanged.emit()

    def clear_memory(self) -> None:
        """Forget the stored trace."""
        self.set_memory(None)

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

    # ----------------------------------------------------------------- display
    @property
    def display(self) -> DisplayOptions:
        """The display options (a frozen snapshot)."""
        return self._display

    def set_display(self, **changes) -> None:
        """Change display options by name, e.g. ``set_display(log_frequency=True)``.

        Raises
        ------
        AnalysisError
            For an unknown option or a value it cannot take.
        """
        from refplane.session.plot_series import BY_KEY

        known = {f.name for f in fields(DisplayOptions)}
        for key, value in changes.items():
            if key not in known:
                raise AnalysisError(f"unknown display option {key!r}")
            if key in ("upper_plot", "lower_plot") and value not in BY_KEY:
                raise AnalysisError(f"unknown plot quantity {value!r}")
            if key == "theme" and value not in THEMES:
                raise AnalysisError(f"unknown theme {value!r}; use light or dark")
            if key == "vswr_circle" and value is not None and not (math.isfinite(value) and value > 1):
                raise AnalysisError("a VSWR circle needs a value above 1")
            if key == "chart_view" and value is not None:
                x0, x1, y0, y1 = (float(v) for v in value)
                if not all(math.isfinite(v) for v in (x0, x1, y0, y1)) or x1 <= x0 or y1 <= y0:
                    raise AnalysisError("a chart view needs x0 < x1 and y0 < y1")
                changes[key] = (x0, x1, y0, y1)
            if key == "delta_markers" and value is not None:
                changes[key] = (int(value[0]), int(value[1]))
            if key == "log_y":
                value = tuple(str(k) for k in (value or ()))
                bad = [k for k in value if k not in LOG_Y_QUANTITIES]
                if bad:
                    raise AnalysisError(f"{bad[0]!r} cannot be drawn on a log scale; "
                                        f"only {', '.join(LOG_Y_QUANTITIES)}")
                changes[key] = tuple(sorted(set(value)))
            if key in ("upper_view", "lower_view") and value is not None:
                f0, f1, y0, y1 = (float(v) for v in value)
                if not all(math.isfinite(v) for v in (f0, f1, y0, y1)) or f1 <= f0 or y1 <= y0:
                    raise AnalysisError("a plot view needs f0 < f1 and y0 < y1")
                changes[key] = (f0, f1, y0, y1)
            if key == "chart_z0_ohm" and value is not None:
                value = float(value)
                if not (math.isfinite(value) and value > 0):
                    raise AnalysisError("a chart reference impedance must be a positive number of ohms")
                changes[key] = value
        old = self._display
        new = replace(old, **{k: (bool(v) if k in ("log_frequency", "admittance_grid") else v)
                              for k, v in changes.items()})
        if new == old:
            return
        self._display = new
        for key in changes:
            if getattr(old, key) != getattr(new, key):
                self.displayChanged.emit(key)
        if old.chart_z0_ohm != new.chart_z0_ohm:
            # VSWR and return loss are read against the new reference: searches move.
            for tid in list(self._traces):
                self._refollow(tid)

    # -------------------------------------------------------------------- fit
    @property
    def fit(self) -> FitSettings:
        """The fit settings (a frozen snapshot)."""
        return self._fit

    def set_fit(self, **changes) -> None:
        """Change fit settings by name (``band_text``, ``model``, ``measurement``, ``overlay_trace``)."""
        if "measurement" in changes and changes["measurement"] not in ("reflection", "series", "shunt"):
            raise AnalysisError(f"unknown measurement {changes['measurement']!r}")
        new = replace(self._fit, **changes)
        if new != self._fit:
            self._fit = new
            self.fitSettingsChanged.emit()

    # ------------------------------------------------------------ calibration
    @property
    def calibration(self) -> CalibrationInputs:
        """The calibration inputs (a frozen snapshot)."""
        return self._calibration

    def set_calibration(self, **changes) -> None:
        """Change calibration inputs by name (``standards``, ``definitions_file``, ``saved_terms_file``, ``devices``)."""
        if "standards" in changes:
            changes["standards"] = MappingProxyType(dict(changes["standards"]))
        if "devices" in changes:
            changes["devices"] = tuple(changes["devices"])
        new = replace(self._calibration, **changes)
        if new != self._calibration:
            self._calibration = new
            self.calibrationChanged.emit()

    # ------------------------------------------------------------------ tools
    def tool(self, name: str):
        """The settings of a tool panel (its defaults until set); see :mod:`refplane.session.tools`."""
        from refplane.session import tools

        return self._tools.get(name) or tools.default(name)

    def tools(self) -> dict[str, object]:
        """Every tool's settings that differ from nothing set (name → frozen settings)."""
        return dict(self._tools)

    def set_tool(self, name: str, value=None, **changes) -> None:
        """Set a tool's settings: a whole value, or fields changed by name."""
        from refplane.session import tools

        if name not in tools.REGISTRY:
            raise AnalysisError(f"unknown tool {name!r}")
        new = value if value is not None else replace(self.tool(name), **changes)
        if not isinstance(new, tools.REGISTRY[name]):
            raise AnalysisError(f"settings of {name!r} must be a {tools.REGISTRY[name].__name__}")
        if new != self.tool(name) or name not in self._tools:
            self._tools[name] = new
            self.toolChanged.emit(name)

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
                self._refollow(trace_id)

    def _forget_delta(self, marker_id: int | None) -> None:
        pair = self._display.delta_markers
        if pair is not None and (marker_id is None or marker_id in pair):
            self._display = replace(self._display, delta_markers=None)

    def _check_inside(self, trace_id: int, freq_hz: float) -> None:
        from refplane.analysis.readings.markers import check_inside

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
