"""Work of the tool panels (antenna, cable, time domain) as requests and never-raising jobs.

Same pattern as :mod:`refplane.session.jobs`: a frozen request captured when the work was
asked for, a plain function returning a :class:`~refplane.session.jobs.JobResult`. The window
runs them on its worker facility; tests call them directly. Each result carries its request's
job number, so a panel drops results of requests it has since superseded.
"""

from __future__ import annotations

from dataclasses import dataclass

from refplane.analysis.sweep import Sweep
from refplane.session.jobs import JobResult, guarded


# ------------------------------------------------------------------------ antenna
@dataclass(frozen=True)
class AntennaRequest:
    """Everything the antenna panel's three readings need, captured at the time of asking."""

    job: int
    """Sequence number; a later request supersedes this one."""
    trace_id: int
    """The trace read."""
    sweep: Sweep
    """Its displayed sweep (offsets removed: the plane at the feedpoint)."""
    port: int
    """1-based port whose reflection is read."""
    freq_hz: float | None
    """The marker's frequency (feedline and matching need one), or None."""
    settings: object
    """The panel's :class:`~refplane.session.tool_settings.AntennaSettings`."""


@dataclass(frozen=True)
class AntennaResults:
    """The three parts of the antenna panel; each a result or a one-line reason."""

    request: AntennaRequest
    resonance: JobResult
    """``ResonanceReport`` of the whole trace at the settings' VSWR limit."""
    feedline: JobResult
    """``FeedlineResult`` at the marker, or not ok (no marker, no feedline, bad line)."""
    match: JobResult
    """``MatchResult`` at the marker, or not ok."""


def feedline_of(settings):
    """The ``LineOffset`` the antenna settings describe (AnalysisError when they cannot)."""
    from refplane.analysis.lines.deembed import LineOffset

    return LineOffset.from_length(settings.feed_length_m, settings.feed_vf, loss_db=settings.feed_loss_db,
                                  loss_ref_hz=settings.feed_loss_ref_hz, line_z0_ohm=settings.feed_line_z0_ohm)


def feedline_sweep(sweep: Sweep, port: int, settings) -> Sweep:
    """The trace as seen at the other end of the settings' feedline (a 1-port sweep, all points).

    With ``feed_toward == "radio"`` this is what the radio sees; with ``"antenna"``, the
    impedance at the antenna.
    """
    from refplane.analysis.antenna.feedline import toward_antenna, toward_radio
    from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma

    sweep.check_port(port)
    z_port = complex(sweep.z0_ohm[port - 1])
    work = toward_radio if settings.feed_toward == "radio" else toward_antenna
    result = work(sweep.freq_hz, gamma_to_z(sweep.reflection(port), z_port), feedline_of(settings),
                  z_ref_ohm=z_port.real)
    z = result.z_radio_ohm if settings.feed_toward == "radio" else result.z_antenna_ohm
    where = "at the radio" if settings.feed_toward == "radio" else "at the antenna"
    return Sweep(freq_hz=sweep.freq_hz, s=z_to_gamma(z, z_port.real).reshape(-1, 1, 1), z0_ohm=z_port.real,
                 name=f"{sweep.name or 'trace'} {where}")


def antenna(request: AntennaRequest, *, cancelled=lambda: False) -> JobResult:
    """Resonances and VSWR bands of the trace; feedline and matching networks at the marker.

    ``cancelled()`` is asked between the parts, so a superseded request stops early. The
    value is :class:`AntennaResults`; one part failing leaves the others standing.
    """
    from refplane.analysis.antenna.feedline import toward_antenna, toward_radio
    from refplane.analysis.antenna.matching import match_sweep
    from refplane.analysis.antenna.resonance import analyse
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.readings.impedance import gamma_to_z
    from refplane.analysis.readings.markers import gamma_at

    s = request.settings
    sweep, port, f = request.sweep, request.port, request.freq_hz
    skipped = JobResult(False, message="superseded")

    resonance = guarded(lambda: analyse(sweep, port, vswr_limits=(float(s.vswr_limit),)),
                        what="find resonances and bands")
    if cancelled():
        return JobResult(True, AntennaResults(request, resonance, skipped, skipped))

    def feed():
        if f is None:
            raise AnalysisError("Place a marker to see what the radio sees through the feedline.")
        if not s.feed_length_m > 0:
            raise AnalysisError("Give the feedline's length to see what the radio sees through it.")
        z_port = complex(sweep.z0_ohm[port - 1])
        z = gamma_to_z(gamma_at(sweep, f, port), z_port)
        work = toward_radio if s.feed_toward == "radio" else toward_antenna
        power = float(s.power_w) if s.power_w else None
        return work(f, z, feedline_of(s), z_ref_ohm=z_port.real, power_w=power)

    feedline = guarded(feed, what="work through the feedline")
    if cancelled():
        return JobResult(True, AntennaResults(request, resonance, feedline, skipped))

    def design():
        if f is None:
            raise AnalysisError("Place a marker at the frequency to match.")
        power = float(s.power_w) if s.power_w else None
        return match_sweep(sweep, f, port=port, target_ohm=s.target_ohm, series=s.series, power_w=power,
                           vf=s.feed_vf)

    match = guarded(design, what="design matching networks")
    return JobResult(True, AntennaResults(request, resonance, feedline, match))


# -------------------------------------------------------------------------- cable
@dataclass(frozen=True)
class CableRequest:
    """A cable characterisation from two sweeps of one cable."""

    job: int
    """Sequence number; a later request supersedes this one."""
    open_sweep: Sweep
    """The cable with its far end open (displayed sweep of the chosen trace)."""
    short_sweep: Sweep
    """The cable with its far end shorted."""
    port: int
    """1-based port read in both."""
    settings: object
    """The panel's :class:`~refplane.session.tool_settings.CableSettings`."""


def cable(request: CableRequest) -> JobResult:
    """Characterise the cable (``CableResult``); never raises."""
    def work():
        from refplane.analysis.lines.cable import characterise_cable
        from refplane.analysis.units import parse_band

        s = request.settings
        band = parse_band(s.band_text.replace(" ", "")) if s.band_text.strip() else None
        return characterise_cable(request.open_sweep, request.short_sweep, port=request.port,
                                  length_m=s.length_m if s.known == "length" else None,
                                  velocity_factor=s.vf if s.known == "vf" else None,
                                  band_hz=band, loss_ref_hz=s.loss_ref_hz)

    return guarded(work, what="characterise the cable")


# -------------------------------------------------------------------- time domain
@dataclass(frozen=True)
class TimeRequest:
    """A time-domain transform of one trace."""

    job: int
    """Sequence number; a later request supersedes this one."""
    trace_id: int
    """The trace transformed."""
    sweep: Sweep
    """Its displayed sweep."""
    port: int
    """1-based port whose reflection is transformed."""
    settings: object
    """The view's :class:`~refplane.session.tool_settings.TimeDomainSettings`."""


def window_text(settings) -> str:
    """The window as the analysis names it ("kaiser:6", "hann")."""
    return f"kaiser:{settings.kaiser_beta:g}" if settings.window == "kaiser" else settings.window


def time_domain(request: TimeRequest) -> JobResult:
    """The ``TimeResponse`` of the trace with the settings' mode, window and velocity factor."""
    from refplane.analysis.lines.time_domain import time_response

    s = request.settings
    return guarded(lambda: time_response(request.sweep, port=request.port, mode=s.mode, window=window_text(s),
                                         velocity_factor=s.vf), what="transform to the time domain")


def gated(request: TimeRequest) -> JobResult:
    """The trace with everything outside the settings' gate span removed (a ``GatedSweep``)."""
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.lines.time_domain import gate

    s = request.settings

    def work():
        if s.gate_start_m is None or s.gate_stop_m is None:
            raise AnalysisError("Set a gate span first (drag it on the time-domain plot).")
        return gate(request.sweep, s.gate_start_m, s.gate_stop_m, port=request.port, velocity_factor=s.vf,
                    window=window_text(s))

    return guarded(work, what="gate the sweep")


# -------------------------------------------------------------------- uncertainty
@dataclass(frozen=True)
class UncertaintyRequest:
    """The ± of one marker, for the uncertainty panel's preview."""

    job: int
    """Sequence number; a later request supersedes this one."""
    trace: object
    """The marker's :class:`~refplane.session.model.Trace` (raw sweep, offsets, port)."""
    freq_hz: float
    """The marker's frequency."""
    settings: object
    """The session's :class:`~refplane.session.tool_settings.UncertaintySettings`."""


def marker_uncertainty(request: UncertaintyRequest) -> JobResult:
    """The ``ReadoutUncertainty`` at the marker (value None when the ± is off), or a one-line reason."""
    from refplane.session.uncertainty_view import trace_uncertainty

    return guarded(lambda: trace_uncertainty(request.settings, request.trace, [request.freq_hz]),
                   what="work out the uncertainty")


#: Name of the dashed overlay showing the gated sweep on its trace while a gate is set.
GATE_OVERLAY = "time gate"


@dataclass(frozen=True)
class GatePreviewRequest:
    """The gated sweep for one gate position, while the gate is set or dragged."""

    job: int
    """Sequence number; a later request supersedes this one."""
    trace_id: int
    """The trace gated (its overlay shows the result)."""
    sweep: Sweep
    """Its displayed sweep."""
    port: int
    """1-based port."""
    settings: object
    """The view's :class:`~refplane.session.tool_settings.TimeDomainSettings` (gate span, window, vf)."""
    plan: object = None
    """A ``GatePlan`` prepared for this sweep, port and window, or None to prepare one."""


def gate_preview(request: GatePreviewRequest) -> JobResult:
    """(GatePlan, GatedSweep): the transform is prepared once and reused for every position of a drag."""
    def work():
        from refplane.analysis.lines.time_domain import prepare_gate

        s = request.settings
        plan = request.plan
        if plan is None:
            plan = prepare_gate(request.sweep, port=request.port, window=window_text(s))
        return plan, plan.apply(s.gate_start_m, s.gate_stop_m, velocity_factor=s.vf)

    return guarded(work, what="gate the sweep")
