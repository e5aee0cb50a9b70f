"""``resolve(session) -> Scene``: one pure pass from the user's work to everything drawn and read.

Parts whose inputs did not change are carried over from the previous scene (the session's
frozen records are compared by identity), so a marker drag step reads one marker and
nothing else, and a renamed trace costs no Γ arrays.
"""

from __future__ import annotations

from types import MappingProxyType

from refplane.session import present
from refplane.session.scene import (CurveView, DeltaView, MarkerView, OverlayView, PlotView, Scene,
                                    TraceView)

#: How many readouts resolve has computed (for the benchmark that shows a drag step reads once).
READOUT_COUNT = [0]


def _trace_view(t, previous: TraceView | None, session) -> TraceView:
    sweep = session.viewed(t.id)
    if previous is not None and previous.record is t and previous.sweep is sweep:
        return previous
    z0_chart = session.display.chart_z0_ohm
    gamma = sweep.reflection(t.port)
    raw = None
    if t.corrected:
        raw = t.raw.reflection(t.port)
        if z0_chart is not None:
            from refplane.analysis.readings.trace_math import chart_gamma

            raw = chart_gamma(raw, float(t.raw.z0_ohm[t.port - 1].real), z0_chart)
    if previous is not None and previous.record is not None and previous.sweep is sweep \
            and previous.port == t.port:
        gamma = previous.gamma  # only name, colour or visibility changed: keep the arrays
        raw = previous.raw_gamma
    overlays = tuple(OverlayView(name, ov.freq_hz, _on_chart(ov, z0_chart)) for name, ov in t.overlays.items())
    return TraceView(id=t.id, name=t.name, label=present.trace_label(t.name, t.port), colour=t.colour,
                     visible=t.visible, port=t.port, n_ports=sweep.n_ports,
                     z0_ohm=float(sweep.z0_ohm[t.port - 1].real), freq_hz=sweep.freq_hz, gamma=gamma,
                     raw_gamma=raw, overlays=overlays, source=t.source, record=t, sweep=sweep)


def _on_chart(one_port, z0_chart):
    """A 1-port sweep's Γ against the chart's reference impedance (its own when none is chosen)."""
    g = one_port.reflection(1)
    if z0_chart is None:
        return g
    from refplane.analysis.readings.trace_math import chart_gamma

    return chart_gamma(g, float(one_port.z0_ohm[0].real), z0_chart)


def _as_viewed(one_port, z0_chart):
    if z0_chart is None:
        return one_port
    from refplane.analysis.readings.trace_math import renormalize

    return renormalize(one_port, z0_chart)


def _read(sweep, freq_hz: float, port: int):
    from refplane.analysis.readings import read_points

    READOUT_COUNT[0] += 1
    return read_points(sweep, [freq_hz], port=port)


def _u_settings(session, z0_chart):
    """The uncertainty settings when the ± is on (and readings are on the files' own reference)."""
    try:
        settings = session.tool("uncertainty")
    except KeyError:
        return None
    # The engine works on the files' reference impedance; on a renormalised chart no ± is claimed.
    return settings if getattr(settings, "enabled", False) and z0_chart is None else None


def _marker_uncertainty(settings, t, freq_hz: float):
    """(u mapping for the cells, 95 % region of Γ as an (n, 2) array), or (None, None)."""
    if settings is None:
        return None, None
    from refplane.analysis.errors import AnalysisError
    from refplane.session.uncertainty_view import trace_uncertainty

    try:
        result = trace_uncertainty(settings, t, [float(freq_hz)])
    except AnalysisError:
        return None, None  # the panel says why; the cells stay plain rather than wrong
    if result is None:
        return None, None
    return result.json_point(0), result.region(0)


def _marker_view(m, number: int, t, previous: MarkerView | None, session) -> MarkerView:
    sweep = session.viewed(t.id)
    z0_chart = session.display.chart_z0_ohm
    u_settings = _u_settings(session, z0_chart)
    key = (m, sweep, t.port, number, t.colour, t.visible, tuple(t.overlays.items()), u_settings)
    if previous is not None and previous.key == key:
        return previous
    if previous is not None and previous.key[:3] == key[:3] and previous.key[6:] == key[6:]:
        readings = None  # number, colour or visibility changed: the reading stands
        readout, gamma, cells, summary, models, model_readouts = (
            previous.readout, previous.gamma, previous.cells, previous.summary, previous.model_cells,
            previous.model_readouts)
        u, region = previous.u, previous.region
    else:
        readings = _read(sweep, m.freq_hz, t.port)
        readout = readings.readout.at(0)
        gamma = complex(readings.gamma[0])
        u, region = _marker_uncertainty(u_settings, t, m.freq_hz)
        cells = MappingProxyType(present.readout_cells(readout, u))
        summary = present.summary_line(readout) if u is None else present.summary_line_with_u(readout, u)
        models, model_readouts = {}, {}
        from refplane.analysis.errors import AnalysisError

        for name, overlay in t.overlays.items():
            try:
                model_readouts[name] = _read(_as_viewed(overlay, z0_chart), m.freq_hz, 1).readout.at(0)
            except AnalysisError:
                continue  # the model does not reach this frequency
            models[name] = MappingProxyType(present.readout_cells(model_readouts[name]))
        models, model_readouts = MappingProxyType(models), MappingProxyType(model_readouts)
    follows_text = ""
    if m.follows is not None:
        from refplane.session.searches import describe

        follows_text = describe(m.follows)
    return MarkerView(id=m.id, number=number, trace_id=m.trace_id, colour=t.colour, visible=t.visible,
                      freq_hz=m.freq_hz, gamma=gamma, readout=readout, cells=cells, summary=summary,
                      model_cells=models, model_readouts=model_readouts, key=key,
                      u=MappingProxyType(u) if u is not None else None, region=region,
                      follows=m.follows, follows_text=follows_text)


def _trace_curves(t, key: str, cache: dict, session) -> tuple[CurveView, ...]:
    from refplane.session import plot_series

    sweep = session.viewed(t.id)
    memory = session.memory
    z0_chart = session.display.chart_z0_ohm
    cache_key = (id(t), key)
    hit = cache.get(cache_key)
    if hit is not None and hit[0] is t and hit[2] is sweep and hit[3] is memory:
        return hit[1]
    q = plot_series.BY_KEY[key]
    out = []
    if t.visible:
        sweeps = [(sweep, 1.0)]
        if t.corrected:
            sweeps.append((_as_viewed_n(t.raw, z0_chart), 0.3))
        mem = memory.sweep if memory is not None else None
        for s, alpha in sweeps:
            for curve in plot_series.curves(s, t.port, key, memory=mem):
                out.append(CurveView(t.id, curve.label, curve.freq_hz if curve.freq_hz is not None else s.freq_hz,
                                     curve.y, t.colour, alpha, "dashed" if curve.dashed else "solid",
                                     1.8 if alpha == 1.0 else 1.2))
        if not q.two_port and not q.needs_memory:
            for name, model in t.overlays.items():
                for curve in plot_series.curves(_as_viewed(model, z0_chart), 1, key):
                    out.append(CurveView(t.id, f"{name}: {curve.label}", model.freq_hz, curve.y, t.colour,
                                         1.0, "dotted", 1.4))
    result = tuple(out)
    cache[cache_key] = (t, result, sweep, memory)
    return result


def _as_viewed_n(sweep, z0_chart):
    if z0_chart is None:
        return sweep
    from refplane.analysis.readings.trace_math import renormalize

    return renormalize(sweep, z0_chart)


def _plot_view(traces, key: str, previous: PlotView | None, cache: dict, session) -> PlotView:
    from refplane.session import plot_series

    curves = tuple(c for t in traces for c in _trace_curves(t, key, cache, session))
    q = plot_series.BY_KEY[key]
    if q.needs_memory and session.memory is None:
        note = "store a trace first (Traces ▸ Store as memory)"
    elif q.needs_memory and traces and not curves:
        note = "the memory shares no frequencies with the traces"
    elif q.needs_memory:
        note = f"relative to {session.memory.name}"
    elif q.two_port and traces and not curves:
        note = "needs a two-port sweep"
    elif key == "r_x" and curves:
        note = "R solid, X dashed"
    else:
        note = ""
    bands = _plot_bands(traces, key, curves, session)
    if previous is not None and previous.quantity == key and previous.note == note \
            and len(previous.curves) == len(curves) \
            and all(a is b for a, b in zip(previous.curves, curves)) \
            and len(previous.bands) == len(bands) and all(a is b for a, b in zip(previous.bands, bands)):
        return previous
    return PlotView(quantity=key, curves=curves, note=note, bands=bands)


def _plot_bands(traces, key: str, curves, session) -> tuple:
    """Uncertainty bands of the plot's curves (empty unless the ± is on), reused while unchanged."""
    settings = _u_settings(session, session.display.chart_z0_ohm)
    if settings is None:
        return ()  # the ± is off: the bands' module is not even imported
    from refplane.session import plot_bands

    if key not in plot_bands.BAND_KEYS:
        return ()
    cache = getattr(session, "_band_cache", None)
    if cache is None:
        cache = {}
        try:
            session._band_cache = cache
        except AttributeError:
            pass
    alive = {id(t) for t in traces}
    # Forget gone traces and earlier settings (each entry holds arrays as long as the sweep).
    for k in [k for k in cache if k[0] not in alive or k[-1] != settings]:
        del cache[k]
    out = []
    for t in traces:
        own = tuple(c for c in curves if c.trace_id == t.id)
        bkey = (id(t), "bands", key, settings)
        hit = cache.get(bkey)
        if hit is not None and hit[0] is t and len(hit[1]) == len(own) \
                and all(a is b for a, b in zip(hit[1], own)):
            out.extend(hit[2])
            continue
        made = plot_bands.bands(settings, t, key, own, cache)
        cache[bkey] = (t, own, made)
        out.extend(made)
    return tuple(out)


def resolve(session, previous: Scene | None = None) -> Scene:
    """Everything the session shows, as a frozen :class:`Scene`.

    Parameters
    ----------
    session : Session
        The user's work.
    previous : Scene, optional
        The scene resolved before; parts whose inputs are unchanged are reused from it.
    """
    prev_traces = {t.id: t for t in previous.traces} if previous is not None else {}
    prev_markers = {m.id: m for m in previous.markers} if previous is not None else {}
    cache = getattr(session, "_curve_cache", None)
    if cache is None:
        cache = {}
        try:
            session._curve_cache = cache
        except AttributeError:  # a read-only stand-in: no reuse across calls
            pass
    records = session.traces()
    alive = {id(t) for t in records}
    for k in [k for k in cache if k[0] not in alive]:
        del cache[k]
    traces = tuple(_trace_view(t, prev_traces.get(t.id), session) for t in records)
    by_id = {t.id: t for t in records}
    markers = tuple(_marker_view(m, n, by_id[m.trace_id], prev_markers.get(m.id), session)
                    for n, m in enumerate(session.markers(), start=1))
    display = session.display
    prev_plots = previous.plots if previous is not None else (None, None)
    plots = (_plot_view(records, display.upper_plot, prev_plots[0], cache, session),
             _plot_view(records, display.lower_plot, prev_plots[1], cache, session))
    delta = _delta(markers, display.delta_markers)
    legend = tuple(present.legend_lines_of(traces, markers))
    return Scene(traces=traces, markers=markers, plots=plots, delta=delta, display=display,
                 band=session.band, current_trace=session.current_trace,
                 current_marker=session.current_marker, legend=legend, found=_found(markers, traces),
                 memory=_memory_view(session, previous), chart_z0_ohm=display.chart_z0_ohm,
                 limits=_limit_checks(session))


def _memory_view(session, previous):
    from refplane.session.scene import MemoryView

    memory = session.memory
    if memory is None:
        return None
    z0_chart = session.display.chart_z0_ohm
    old = previous.memory if previous is not None else None
    if old is not None and getattr(old, "_source", None) == (memory, z0_chart):
        return old
    view = MemoryView(name=memory.name, freq_hz=memory.sweep.freq_hz, gamma=_on_chart(memory.sweep, z0_chart))
    object.__setattr__(view, "_source", (memory, z0_chart))
    return view


def _found(markers, traces) -> tuple[str, ...]:
    """A sentence per VSWR band whose two edges are marked by following markers."""
    names = {t.id: t.label for t in traces}
    edges: dict[tuple[int, str], dict[str, float]] = {}
    for m in markers:
        if m.follows and m.follows.startswith("band-"):
            side, _, limit = m.follows.partition(":")
            edges.setdefault((m.trace_id, limit), {})[side] = m.freq_hz
    out = []
    for (tid, limit), sides in edges.items():
        if "band-low" in sides and "band-high" in sides and tid in names:
            out.append(present.vswr_band_sentence(names[tid], float(limit), sides["band-low"],
                                                  sides["band-high"]))
    return tuple(out)


def _delta(markers, pair) -> DeltaView | None:
    if len(markers) < 2:
        return None
    by_id = {m.id: m for m in markers}
    if pair is None or pair[0] not in by_id or pair[1] not in by_id:
        a, b = markers[-2], markers[-1]
    else:
        a, b = by_id[pair[0]], by_id[pair[1]]
    cells = present.delta_cells(a.readout, b.readout)
    return DeltaView(a=a.id, b=b.id, label=present.delta_label(a.number, b.number),
                     cells=MappingProxyType(cells))


def _limit_checks(session) -> tuple:
    """The limits record tested on the current trace, reused while nothing it reads changed."""
    try:
        settings = session.tool("limits")
    except KeyError:
        return ()
    if not settings.expressions:
        return ()
    from refplane.session import plot_limits

    trace = sweep = None
    tid = session.current_trace
    if tid != -1:
        trace = next((t for t in session.traces() if t.id == tid), None)
        sweep = session.viewed(tid) if trace is not None else None
    u_settings = _u_settings(session, session.display.chart_z0_ohm)
    key = (settings, trace, sweep, u_settings)
    cached = getattr(session, "_limit_cache", None)
    if cached is not None:
        (c_settings, c_trace, c_sweep, c_u), result = cached
        if c_settings == settings and c_trace is trace and c_sweep is sweep and c_u == u_settings:
            return result
    u_cache = getattr(session, "_band_cache", None)
    result = plot_limits.checks(settings.expressions, trace, sweep, u_settings=u_settings, u_cache=u_cache)
    try:
        session._limit_cache = (key, result)
    except AttributeError:
        pass
    return result
