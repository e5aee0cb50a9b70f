"""The frozen snapshot of everything drawn and read: made by :func:`~refplane.session.resolve.resolve`.

A :class:`Scene` holds arrays and text, never widgets. The chart, the plots, the marker
table, the render legend and the report all take what they show from one Scene, so what
they show cannot disagree, and a marker drag step computes each readout once.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from refplane.analysis.readings.impedance import Readout


@dataclass(frozen=True, eq=False)
class OverlayView:
    """A model curve drawn dashed over a trace."""

    name: str
    """The overlay's name ("fitted model")."""
    freq_hz: np.ndarray
    """Frequencies of the curve."""
    gamma: np.ndarray
    """Its reflection coefficient at those frequencies."""


@dataclass(frozen=True, eq=False)
class TraceView:
    """One trace as drawn: Γ arrays of the displayed and (when corrected) raw sweep, overlays."""

    id: int
    """The trace's id in the session."""
    name: str
    """Its name."""
    label: str
    """Its name with the reflection shown: "name · S11"."""
    colour: str
    """Colour as ``#rrggbb``."""
    visible: bool
    """Drawn when true."""
    port: int
    """1-based port whose reflection is drawn."""
    n_ports: int
    """Ports of the sweep."""
    z0_ohm: float
    """Reference impedance of that port."""
    freq_hz: np.ndarray
    """Swept frequencies (displayed sweep)."""
    gamma: np.ndarray
    """Reflection of the displayed sweep (offsets removed)."""
    raw_gamma: np.ndarray | None
    """Reflection as measured, when offsets change it (drawn faded); else None."""
    overlays: tuple[OverlayView, ...]
    """Model curves over the trace."""
    source: str | None
    """The file the sweep came from, if any."""
    record: object = field(repr=False, default=None)
    """The session's :class:`~refplane.session.model.Trace` this was made from (for reuse)."""
    sweep: object = field(repr=False, default=None)
    """The sweep drawn and read (``Session.viewed``: offsets removed, chart reference applied)."""


@dataclass(frozen=True, eq=False)
class MarkerView:
    """One marker: where it is, what it reads, and that reading as text."""

    id: int
    """The marker's id in the session."""
    number: int
    """Its number as shown (1, 2, …: placing order)."""
    trace_id: int
    """The trace it reads."""
    colour: str
    """Its trace's colour."""
    visible: bool
    """Shown when its trace is."""
    freq_hz: float
    """Frequency."""
    gamma: complex
    """Reflection at the marker (interpolated between swept points)."""
    readout: Readout
    """Every reading at the marker (one point)."""
    cells: Mapping[str, str]
    """The readings as display cells (label → text), as ``refplane read`` prints them."""
    summary: str
    """The reading in one line, for legends."""
    model_cells: Mapping[str, Mapping[str, str]]
    """Cells of each model overlay at the marker's frequency (overlay name → cells)."""
    u: Mapping[str, float | None] | None = None
    """Expanded uncertainties (k = 2) of the readings, keyed like the JSON point; None when off."""
    region: np.ndarray | None = None
    """The 95 % region of Γ at the marker as an (n, 2) polygon (re, im); None when off."""
    model_readouts: Mapping[str, Readout] = field(default_factory=dict)
    """Readings of each model overlay at the marker's frequency (overlay name → readout)."""
    key: tuple = field(repr=False, default=())
    """What the view was made from (for reuse)."""
    follows: str | None = None
    """The search the marker follows (``session.searches`` spec), if any."""
    follows_text: str = ""
    """That search in words ("best match"), empty when it follows none."""


@dataclass(frozen=True, eq=False)
class CurveView:
    """One curve of a frequency plot."""

    trace_id: int
    """The trace it belongs to."""
    label: str
    """What it shows ("R", "X", "RL S11")."""
    freq_hz: np.ndarray
    """Frequencies."""
    y: np.ndarray
    """Values (non-finite values are gaps)."""
    colour: str
    """Colour as ``#rrggbb``."""
    alpha: float
    """Opacity: 1 for the displayed trace, less for the faded raw one."""
    style: str
    """"solid", "dashed" (second curve of a pair) or "dotted" (model overlay)."""
    width: float
    """Line width in pixels."""


@dataclass(frozen=True, eq=False)
class PlotView:
    """The curves of one frequency plot for its chosen quantity."""

    quantity: str
    """Key of the quantity (``plot_series.BY_KEY``)."""
    curves: tuple[CurveView, ...]
    """Every curve, in drawing order."""
    note: str
    """A short note beside the plot ("R solid, X dashed", "needs a two-port sweep")."""
    bands: tuple = ()
    """Shaded value ± expanded uncertainty around curves (``plot_bands.BandView``), when the ± is on."""


@dataclass(frozen=True, eq=False)
class DeltaView:
    """The difference row of the marker table (b − a)."""

    a: int
    """Marker id subtracted."""
    b: int
    """Marker id subtracted from."""
    label: str
    """"marker 2 − marker 1"."""
    cells: Mapping[str, str]
    """Cells of b − a (label → text)."""


@dataclass(frozen=True, eq=False)
class MemoryView:
    """The stored trace (trace memory) as drawn on the chart."""

    name: str
    """What it was stored from ("before · S11")."""
    freq_hz: np.ndarray
    """Its frequencies."""
    gamma: np.ndarray
    """Its reflection, against the chart's reference impedance."""


@dataclass(frozen=True, eq=False)
class Scene:
    """Everything the session shows, frozen: traces, markers, plots, legend, options."""

    traces: tuple[TraceView, ...]
    """Open traces in list order."""
    markers: tuple[MarkerView, ...]
    """Markers in placing order."""
    plots: tuple[PlotView, PlotView]
    """The upper and lower frequency plots."""
    delta: DeltaView | None
    """The difference row, when two or more markers exist."""
    display: object
    """The session's :class:`~refplane.session.model.DisplayOptions`."""
    band: tuple[float, float] | None
    """The selected band."""
    current_trace: int
    """The trace panels act on (−1 for none)."""
    current_marker: int
    """The marker keys move (−1 for none)."""
    legend: tuple[str, ...]
    """The legend of a picture as text lines."""
    found: tuple[str, ...] = ()
    """Sentences about what marker searches found (a VSWR band's edges, width and centre)."""
    memory: MemoryView | None = None
    """The stored trace, when one is stored."""
    chart_z0_ohm: float | None = None
    """The reference impedance chosen for the chart and readings; ``None``: each file's own."""
    limits: tuple = ()
    """The user's limits tested on the current trace (``plot_limits.LimitCheck``), in typed order."""

    def trace(self, trace_id: int) -> TraceView:
        """The view of a trace (KeyError for an unknown id)."""
        for t in self.traces:
            if t.id == trace_id:
                return t
        raise KeyError(f"no open trace with id {trace_id}")

    def marker(self, marker_id: int) -> MarkerView:
        """The view of a marker (KeyError for an unknown id)."""
        for m in self.markers:
            if m.id == marker_id:
                return m
        raise KeyError(f"no marker with id {marker_id}")

    def same_as(self, other: "Scene") -> bool:
        """True when both scenes show the same things (arrays compared by value)."""
        def arrays_equal(a, b):
            if a is None or b is None:
                return a is b
            return np.array_equal(np.asarray(a), np.asarray(b))

        if len(self.traces) != len(other.traces) or len(self.markers) != len(other.markers):
            return False
        for a, b in zip(self.traces, other.traces):
            if (a.name, a.label, a.colour, a.visible, a.port, a.z0_ohm) != (
                    b.name, b.label, b.colour, b.visible, b.port, b.z0_ohm):
                return False
            if not (arrays_equal(a.freq_hz, b.freq_hz) and arrays_equal(a.gamma, b.gamma)
                    and arrays_equal(a.raw_gamma, b.raw_gamma)):
                return False
            if [o.name for o in a.overlays] != [o.name for o in b.overlays]:
                return False
            if not all(arrays_equal(x.gamma, y.gamma) for x, y in zip(a.overlays, b.overlays)):
                return False
        for a, b in zip(self.markers, other.markers):
            if (a.number, a.freq_hz, dict(a.cells)) != (b.number, b.freq_hz, dict(b.cells)):
                return False
        if [p.quantity for p in self.plots] != [p.quantity for p in other.plots]:
            return False
        return (self.display == other.display and self.band == other.band
                and self.legend == other.legend)
