"""Report sections from a session: what the window shows, as a document (File ▸ Report…,
``refplane report --session``)."""

from __future__ import annotations

from typing import Sequence


def session_sections(session, *, limits: Sequence = ()) -> list:
    """One report section per open trace: its displayed (corrected) sweep, its markers, the
    offsets applied, the fit sentence where a fitted curve is drawn, and ``limits``."""
    from refplane.analysis.lines.deembed import describe_offsets
    from refplane.report.build import sweep_report

    sections = []
    for t in session.traces():
        at = [m.freq_hz for m in session.markers(t.id)]
        notes = list(describe_offsets(t.offsets)) if t.offsets else []
        fit_model = None
        if session.fit.overlay_trace == t.id and session.fit.measurement == "reflection":
            fit_model = session.fit.model
        section = sweep_report(t.displayed, file=t.source, port=t.port, at_hz=at, limits=limits,
                               fit_model=fit_model, notes=notes)
        settings = session.tool("uncertainty")
        if at and getattr(settings, "enabled", False) and session.display.chart_z0_ohm is None:
            from dataclasses import replace

            from refplane.analysis.errors import AnalysisError
            from refplane.session.uncertainty_view import marker_u, sources_sentence

            try:
                us = tuple(marker_u(settings, t, f) for f in at)
                section = replace(section, marker_u=us, u_sources=sources_sentence(settings))
            except AnalysisError as exc:
                section = replace(section, warnings=section.warnings + (f"no uncertainty: {exc}",))
        sections.append(section)
    return sections
